// Fuzzes the domain readers: a pleat-domain/1 file (--domain) and the --box
// text, each followed by what every walk does next (the exact emptiness
// check of make_domain, then a point strictly inside).
#include "cli/domain_options.hpp"
#include "core/domain_io.hpp"
#include "fuzz/fuzz_support.hpp"

#include <algorithm>
#include <cstdint>
#include <cstdlib>
#include <string>

namespace {

// The interior point must satisfy every side strictly (exact).
void check_centre(const pleat::Domain& domain) {
  const pleat::RationalVector centre = pleat::domain_centre(domain);
  if (centre.size() != domain.dim) std::abort();
  for (const auto& side : domain.constraints) {
    pleat::Rational value = side.offset;
    for (std::size_t i = 0; i < centre.size(); ++i) value += side.normal[i] * centre[i];
    if (value <= 0) std::abort();
  }
}

void fuzz_domain_file(const pleat::fuzz::InputFile& file, std::string_view text) {
  std::size_t input_dim = 0;
  try {
    input_dim = pleat::parse_domain(text).input_dim;
  } catch (const pleat::input_error&) {
    return;
  }
  try {
    check_centre(pleat::cli::make_domain({.box_text = "", .domain_path = file.path()}, input_dim));
  } catch (const pleat::input_error&) {
  }
}

// As --box for a network of 1, 2 and 3 inputs.
void fuzz_box_text(const std::string& text) {
  for (std::size_t input_dim = 1; input_dim <= 3; ++input_dim) {
    try {
      check_centre(pleat::cli::make_domain({.box_text = text, .domain_path = ""}, input_dim));
    } catch (const pleat::input_error&) {
    }
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  const pleat::fuzz::InputFile file(data, size);
  fuzz_domain_file(file, text);
  if (!text.empty() && std::none_of(text.begin(), text.end(), [](char c) { return c == '\0' || c == '\n'; }))
    fuzz_box_text(text);
  return 0;
}
