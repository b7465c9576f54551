// Activation patterns: one state per neuron that feeds a ReLU (spec notation:
// '1' on, '0' off, 'z' identically zero on a region, '=' zero at one point;
// '|' between layers; '/' accepted on input).
#pragma once

#include "core/network.hpp"

#include <cstddef>
#include <cstdint>
#include <functional>
#include <string>
#include <string_view>
#include <vector>

namespace pleat {

enum class NeuronState : std::uint8_t { off = 0, on = 1, zero_on_region = 2, zero_at_point = 3 };

struct ActivationPattern {
  std::vector<NeuronState> states;  // indexed by neuron id (Network::relu_neuron_count())

  bool is_on(std::size_t neuron) const { return states[neuron] == NeuronState::on; }
  friend bool operator==(const ActivationPattern&, const ActivationPattern&) = default;
  friend auto operator<=>(const ActivationPattern&, const ActivationPattern&) = default;
};

// Spec notation, e.g. "10z|01". Precondition: states.size() == relu_neuron_count().
std::string format_pattern(const Network& network, const ActivationPattern& pattern);

// Reads '0', '1', 'z' (and '=' only when allow_point_zero), '|' or '/' between
// layers. Throws input_error naming the position of the first fault.
ActivationPattern parse_pattern(const Network& network, std::string_view text,
                                bool allow_point_zero = false);

struct PatternHash {
  std::size_t operator()(const ActivationPattern& pattern) const;
};

}  // namespace pleat
