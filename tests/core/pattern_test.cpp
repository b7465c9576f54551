// Activation pattern notation: format/parse round trip and faults by position.
#include "core/pattern.hpp"
#include "tests/support/network_builders.hpp"

#include <gtest/gtest.h>

#include <set>
#include <string>
#include <unordered_set>

namespace pleat {
namespace {

using test::zero_layer;

// Widths 2 -> 3 -> 2 -> 1: ReLU groups of 3 and 2.
Network network_32(Activation output = Activation::linear) {
  Network network;
  network.input_dim = 2;
  network.layers.push_back(zero_layer(3, 2, Activation::relu));
  network.layers.push_back(zero_layer(2, 3, Activation::relu));
  network.layers.push_back(zero_layer(1, 2, output));
  return network;
}

ActivationPattern make_pattern(std::initializer_list<NeuronState> states) { return ActivationPattern{states}; }

constexpr auto on = NeuronState::on;
constexpr auto off = NeuronState::off;
constexpr auto zero = NeuronState::zero_on_region;
constexpr auto point_zero = NeuronState::zero_at_point;

TEST(Pattern, FormatsLayersWithBars) {
  Network network = network_32();
  EXPECT_EQ(format_pattern(network, make_pattern({on, off, zero, off, on})), "10z|01");
  EXPECT_EQ(format_pattern(network, make_pattern({on, off, point_zero, off, on})), "10=|01");
  EXPECT_THROW(format_pattern(network, make_pattern({on, off})), usage_error);
}

TEST(Pattern, OutputReluIsALastGroup) {
  Network network = network_32(Activation::relu);
  EXPECT_EQ(format_pattern(network, make_pattern({on, off, on, off, on, on})), "101|01|1");
  EXPECT_EQ(parse_pattern(network, "101|01|1"), make_pattern({on, off, on, off, on, on}));
}

TEST(Pattern, RoundTripOverAllStates) {
  Network network = network_32();
  const NeuronState states[] = {off, on, zero, point_zero};
  // Every pattern with states from the four kinds in a few positions.
  for (NeuronState a : states)
    for (NeuronState b : states)
      for (NeuronState c : states) {
        ActivationPattern pattern = make_pattern({a, b, c, b, a});
        const std::string text = format_pattern(network, pattern);
        EXPECT_EQ(parse_pattern(network, text, true), pattern) << text;
      }
}

TEST(Pattern, SlashAcceptedOnInput) {
  Network network = network_32();
  EXPECT_EQ(parse_pattern(network, "101/01"), make_pattern({on, off, on, off, on}));
  EXPECT_EQ(format_pattern(network, parse_pattern(network, "101/01")), "101|01");
}

void expect_fault(const Network& network, const std::string& text, const std::string& detail,
                  bool allow_point_zero = false) {
  try {
    parse_pattern(network, text, allow_point_zero);
    ADD_FAILURE() << "accepted \"" << text << "\"";
  } catch (const input_error& error) {
    const std::string message = error.what();
    EXPECT_NE(message.find(detail), std::string::npos) << "message: " << message << "\nmissing: " << detail;
    EXPECT_NE(message.find("3|2"), std::string::npos) << "group sizes missing: " << message;
  }
}

TEST(Pattern, FaultsNamePositionAndGroupSizes) {
  Network network = network_32();
  expect_fault(network, "10=|01", "character 3: '='");
  expect_fault(network, "10x|01", "character 3: expected '0', '1' or 'z', found 'x'");
  expect_fault(network, "10|01", "character 3: group 1 has 2 states, expected 3");
  expect_fault(network, "1010|01", "character 4: expected '|' or '/' after 3 states, found '0'");
  expect_fault(network, "101|0", "character 6: group 2 ends after 1 states");
  expect_fault(network, "101|011", "character 7: group 2 is longer than 2 states");
  expect_fault(network, "101|01|1", "character 7: more groups");
  expect_fault(network, "101", "character 4: ends after group 1");
  expect_fault(network, "", "character 1");
  expect_fault(network, " 101|01", "character 1: expected");
  expect_fault(network, "101|01 ", "character 7");
  // A multibyte character is named whole (its first byte was, alone).
  expect_fault(network, "10\u2080|01", "character 3: expected '0', '1' or 'z', found '\u2080' (U+2080)");
  expect_fault(network, "101\u2502" "01", "character 4: expected '|' or '/' after 3 states, found '\u2502' (U+2502)");
}

TEST(Pattern, NoReluNeuronsMeansEmptyPattern) {
  Network network;
  network.input_dim = 2;
  network.layers.push_back(zero_layer(1, 2, Activation::linear));
  EXPECT_EQ(format_pattern(network, ActivationPattern{}), "");
  EXPECT_EQ(parse_pattern(network, ""), ActivationPattern{});
  EXPECT_THROW(parse_pattern(network, "1"), input_error);
}

TEST(Pattern, HashSeparatesPatterns) {
  Network network = network_32();
  std::unordered_set<ActivationPattern, PatternHash> seen;
  std::set<std::size_t> hashes;  // the hash itself must tell these 243 patterns apart
  const NeuronState states[] = {off, on, zero};
  std::size_t count = 0;
  for (NeuronState a : states)
    for (NeuronState b : states)
      for (NeuronState c : states)
        for (NeuronState d : states)
          for (NeuronState e : states) {
            ActivationPattern pattern = make_pattern({a, b, c, d, e});
            seen.insert(pattern);
            hashes.insert(PatternHash{}(pattern));
            ++count;
          }
  EXPECT_EQ(seen.size(), count);
  EXPECT_EQ(hashes.size(), count);
  EXPECT_EQ(PatternHash{}(parse_pattern(network, "101/01")), PatternHash{}(parse_pattern(network, "101|01")));
  EXPECT_TRUE(seen.contains(parse_pattern(network, "z10|01")));
}

}  // namespace
}  // namespace pleat
