// Activation pattern notation (spec: network-format.md, "Activation pattern
// notation").
#include "core/pattern.hpp"

#include <string>

namespace pleat {
namespace {

char state_char(NeuronState state) {
  switch (state) {
    case NeuronState::off: return '0';
    case NeuronState::on: return '1';
    case NeuronState::zero_on_region: return 'z';
    case NeuronState::zero_at_point: return '=';
  }
  throw usage_error("format_pattern: invalid neuron state");
}

// "3|2" for messages: the number of states expected in each group.
std::string group_sizes(const Network& network) {
  std::string sizes;
  for (std::size_t k = 0; k < network.relu_layer_count(); ++k) {
    if (k > 0) sizes += '|';
    sizes += std::to_string(network.layers[k].width());
  }
  return sizes;
}

[[noreturn]] void fail_at(std::string_view text, std::size_t position, const std::string& message,
                          const Network& network) {
  throw input_error("pattern \"" + std::string(text) + "\", character " + std::to_string(position + 1) + ": " +
                    message + " (expected groups of " + group_sizes(network) + ")");
}

}  // namespace

std::string format_pattern(const Network& network, const ActivationPattern& pattern) {
  if (pattern.states.size() != network.relu_neuron_count())
    throw usage_error("format_pattern: pattern has " + std::to_string(pattern.states.size()) +
                      " states, network has " + std::to_string(network.relu_neuron_count()) + " ReLU neurons");
  std::string text;
  text.reserve(pattern.states.size() + network.relu_layer_count());
  std::size_t neuron = 0;
  for (std::size_t k = 0; k < network.relu_layer_count(); ++k) {
    if (k > 0) text += '|';
    for (std::size_t j = 0; j < network.layers[k].width(); ++j) text += state_char(pattern.states[neuron++]);
  }
  return text;
}

ActivationPattern parse_pattern(const Network& network, std::string_view text, bool allow_point_zero) {
  ActivationPattern pattern;
  pattern.states.reserve(network.relu_neuron_count());
  std::size_t position = 0;
  const std::size_t groups = network.relu_layer_count();
  for (std::size_t k = 0; k < groups; ++k) {
    if (k > 0) {
      if (position == text.size()) fail_at(text, position, "ends after group " + std::to_string(k), network);
      if (text[position] != '|' && text[position] != '/')
        fail_at(text, position, "expected '|' or '/' after " + std::to_string(network.layers[k - 1].width()) +
                                    " states, found " + quoted_character(text.substr(position)),
                network);
      ++position;
    }
    for (std::size_t j = 0; j < network.layers[k].width(); ++j, ++position) {
      if (position == text.size())
        fail_at(text, position, "group " + std::to_string(k + 1) + " ends after " + std::to_string(j) + " states",
                network);
      switch (text[position]) {
        case '0': pattern.states.push_back(NeuronState::off); break;
        case '1': pattern.states.push_back(NeuronState::on); break;
        case 'z': pattern.states.push_back(NeuronState::zero_on_region); break;
        case '=':
          if (!allow_point_zero)
            fail_at(text, position, "'=' (zero at a point) is not allowed here; expected '0', '1' or 'z'", network);
          pattern.states.push_back(NeuronState::zero_at_point);
          break;
        case '|':
        case '/':
          fail_at(text, position,
                  "group " + std::to_string(k + 1) + " has " + std::to_string(j) + " states, expected " +
                      std::to_string(network.layers[k].width()),
                  network);
        default:
          fail_at(text, position,
                  std::string("expected '0', '1'") + (allow_point_zero ? ", 'z' or '='" : " or 'z'") + ", found " +
                      quoted_character(text.substr(position)),
                  network);
      }
    }
  }
  if (position != text.size()) {
    const bool is_separator = text[position] == '|' || text[position] == '/';
    fail_at(text, position,
            is_separator ? "more groups than the network's " + std::to_string(groups)
                         : "group " + std::to_string(groups) + " is longer than " +
                               std::to_string(groups == 0 ? 0 : network.layers[groups - 1].width()) + " states",
            network);
  }
  return pattern;
}

std::size_t PatternHash::operator()(const ActivationPattern& pattern) const {
  // FNV-1a over the states, 64-bit (offset basis and prime from the FNV specification).
  std::uint64_t hash = 14695981039346656037ull;
  for (NeuronState state : pattern.states) {
    hash ^= static_cast<std::uint8_t>(state);
    hash *= 1099511628211ull;
  }
  hash ^= pattern.states.size();
  return static_cast<std::size_t>(hash);
}

}  // namespace pleat
