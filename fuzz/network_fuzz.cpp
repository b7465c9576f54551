// Fuzzes the network reader (pleat-network/1 JSON, core/network_io.hpp).
// Besides "no crash, only input_error": whatever it accepts is a valid
// network, and its canonical document reads back as the same network.
#include "core/network_io.hpp"

#include <cstdint>
#include <cstdlib>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  pleat::Network network;
  try {
    network = pleat::parse_network(text);
  } catch (const pleat::input_error&) {
    return 0;
  }
  network.validate();
  if (pleat::parse_network(pleat::write_network(network)) != network) std::abort();
  return 0;
}
