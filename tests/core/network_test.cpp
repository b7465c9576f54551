// Neuron numbering, parameter order and invariants of the network model.
#include "core/network.hpp"
#include "tests/support/network_builders.hpp"

#include <gtest/gtest.h>

#include <string>
#include <vector>

namespace pleat {
namespace {

using test::zero_layer;

// Widths 2 -> 3 -> 1, linear output.
Network small_network() {
  Network network;
  network.input_dim = 2;
  network.layers.push_back(zero_layer(3, 2, Activation::relu));
  network.layers.push_back(zero_layer(1, 3, Activation::linear));
  return network;
}

TEST(Network, CountsForWidths231) {
  Network network = small_network();
  EXPECT_NO_THROW(network.validate());
  // D = (2+1)*3 + (3+1)*1 = 13, counted by hand.
  EXPECT_EQ(network.parametric_dimension(), 13u);
  EXPECT_EQ(network.depth(), 2u);
  EXPECT_EQ(network.output_dim(), 1u);
  EXPECT_FALSE(network.has_output_relu());
  EXPECT_EQ(network.hidden_neuron_count(), 3u);
  EXPECT_EQ(network.relu_neuron_count(), 3u);
  EXPECT_EQ(network.relu_layer_count(), 1u);
  EXPECT_EQ(network.parameter_offset(0), 0u);
  EXPECT_EQ(network.parameter_offset(1), 9u);
  EXPECT_EQ(network.parameter_offset(2), 13u);
  EXPECT_EQ(network.first_neuron_of_layer(1), 3u);
}

TEST(Network, OutputReluJoinsTheNumbering) {
  Network network = small_network();
  network.layers.back().activation = Activation::relu;
  EXPECT_NO_THROW(network.validate());
  EXPECT_TRUE(network.has_output_relu());
  EXPECT_EQ(network.hidden_neuron_count(), 3u);
  EXPECT_EQ(network.relu_neuron_count(), 4u);
  EXPECT_EQ(network.relu_layer_count(), 2u);
  // Neurons 0-2 are the hidden layer's, neuron 3 the output ReLU's.
  EXPECT_EQ(network.layer_of_neuron(0), 0u);
  EXPECT_EQ(network.layer_of_neuron(2), 0u);
  EXPECT_EQ(network.layer_of_neuron(3), 1u);
}

TEST(Network, ParameterNamesInOrder) {
  Network network = small_network();
  std::vector<std::string> names;
  for (std::size_t i = 0; i < network.parametric_dimension(); ++i) names.push_back(network.parameter_name(i));
  const std::vector<std::string> expected = {"W1[0,0]", "W1[0,1]", "W1[1,0]", "W1[1,1]", "W1[2,0]",
                                             "W1[2,1]", "b1[0]",   "b1[1]",   "b1[2]",   "W2[0,0]",
                                             "W2[0,1]", "W2[0,2]", "b2[0]"};
  EXPECT_EQ(names, expected);
  EXPECT_THROW(network.parameter_name(13), usage_error);
}

TEST(Network, ParameterNameWideLayer) {
  Network network;
  network.input_dim = 5;
  network.layers.push_back(zero_layer(4, 5, Activation::relu));
  network.layers.push_back(zero_layer(2, 4, Activation::linear));
  // W2 starts at (5+1)*4 = 24; W2[0,3] is 24 + 3, W2[1,3] is 24 + 4 + 3.
  EXPECT_EQ(network.parameter_name(27), "W2[0,3]");
  EXPECT_EQ(network.parameter_name(31), "W2[1,3]");
  EXPECT_EQ(network.parameter_name(23), "b1[3]");
  EXPECT_EQ(network.parameter_name(20), "b1[0]");
  EXPECT_EQ(network.parameter_name(19), "W1[3,4]");
}

void expect_invalid(const Network& network, const std::string& prefix) {
  try {
    network.validate();
    FAIL() << "validate() accepted a broken network; expected " << prefix;
  } catch (const input_error& error) {
    EXPECT_EQ(std::string(error.what()).rfind(prefix, 0), 0u) << error.what();
  }
}

TEST(Network, ValidateNamesTheBrokenInvariant) {
  Network network = small_network();
  network.input_dim = 0;
  expect_invalid(network, "input_dim:");

  network = small_network();
  network.layers.clear();
  expect_invalid(network, "layers: empty network");

  network = small_network();
  network.layers[1].weights = RationalMatrix(1, 2);
  expect_invalid(network, "layers[1].weights: expected 3 columns, found 2");

  network = small_network();
  network.layers[0].bias.pop_back();
  expect_invalid(network, "layers[0].bias:");

  network = small_network();
  network.layers[0].activation = Activation::linear;
  expect_invalid(network, "layers[0].activation:");

  network = small_network();
  network.layers[0] = zero_layer(0, 2, Activation::relu);
  expect_invalid(network, "layers[0].weights: layer has no neurons");
}

}  // namespace
}  // namespace pleat
