// Reading and writing "pleat-network/1": exact literals, one clear message per
// fault starting with its JSON path, and the round trip.
#include "core/network_io.hpp"

#include <gtest/gtest.h>

#include <chrono>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

namespace pleat {
namespace {

// A valid 2 -> 3 -> 1 network (the spec's example with name and meta).
const std::string valid_document = R"({
  "format": "pleat-network/1",
  "input_dim": 2,
  "layers": [
    { "weights": [["1/2", "-3"], [0.25, 1], ["1e-3", "7"]],
      "bias":    ["0", -1, "5/4"] },
    { "weights": [["1", "-1", "2"]],
      "bias":    [0],
      "activation": "linear" }
  ],
  "name": "spec example",
  "meta": { "anything": [1.50, "x", {"y": null, "z": true}], "n": -0.0e+0 }
})";

Rational fraction(long numerator, long denominator) {
  Rational value(numerator, denominator);
  value.canonicalize();
  return value;
}

std::string with_layers(const std::string& input_dim, const std::string& layers) {
  return R"({"format": "pleat-network/1", "input_dim": )" + input_dim + R"(, "layers": )" + layers + "}";
}

// The message must start with `path` and contain every piece of `details`.
void expect_rejected(const std::string& document, const std::string& path,
                     const std::vector<std::string>& details = {}) {
  try {
    parse_network(document);
    ADD_FAILURE() << "accepted:\n" << document;
  } catch (const input_error& error) {
    const std::string message = error.what();
    EXPECT_EQ(message.rfind(path + ": ", 0), 0u) << "message: " << message << "\nexpected path: " << path;
    for (const auto& detail : details)
      EXPECT_NE(message.find(detail), std::string::npos) << "message: " << message << "\nmissing: " << detail;
  }
}

TEST(ParseNetwork, ReadsTheSpecExampleExactly) {
  Network network = parse_network(valid_document);
  ASSERT_EQ(network.depth(), 2u);
  EXPECT_EQ(network.input_dim, 2u);
  EXPECT_EQ(network.name, "spec example");
  EXPECT_EQ(network.layers[0].weights(0, 0), fraction(1, 2));
  EXPECT_EQ(network.layers[0].weights(1, 0), fraction(1, 4));
  EXPECT_EQ(network.layers[0].weights(2, 0), fraction(1, 1000));
  EXPECT_EQ(network.layers[0].bias[1], Rational(-1));
  EXPECT_EQ(network.layers[0].bias[2], fraction(5, 4));
  EXPECT_EQ(network.layers[0].activation, Activation::relu);  // default for a hidden layer
  EXPECT_EQ(network.layers[1].activation, Activation::linear);
  // Numbers in meta keep their literal text, byte for byte.
  EXPECT_EQ(network.meta_json, R"({"anything":[1.50,"x",{"y":null,"z":true}],"n":-0.0e+0})");
}

TEST(ParseNetwork, DefaultActivations) {
  Network network = parse_network(with_layers("1", R"([{"weights": [[1]], "bias": [0]}, {"weights": [[1]], "bias": [0]}])"));
  EXPECT_EQ(network.layers[0].activation, Activation::relu);
  EXPECT_EQ(network.layers[1].activation, Activation::linear);
  Network with_output_relu = parse_network(
      with_layers("1", R"([{"weights": [[1]], "bias": [0], "activation": "relu"}])"));
  EXPECT_TRUE(with_output_relu.has_output_relu());
}

TEST(ParseNetwork, LiteralsAreExactNotDoubles) {
  // A 30-digit integer overflows 64 bits (nlohmann passes it on as a float with
  // its text) and 1e-30 underflows nothing but is not a double: both must survive.
  const std::string big = "123456789012345678901234567891";
  Network network = parse_network(
      with_layers("1", "[{\"weights\": [[" + big + "]], \"bias\": [1e-30]}, {\"weights\": [[0.1]], \"bias\": [\"2/4\"]}]"));
  EXPECT_EQ(network.layers[0].weights(0, 0), Rational(Integer(big)));
  Rational tiny(Integer(1), Integer("1" + std::string(30, '0')));
  EXPECT_EQ(network.layers[0].bias[0], tiny);
  EXPECT_EQ(network.layers[1].weights(0, 0), fraction(1, 10));
  EXPECT_EQ(network.layers[1].bias[0], fraction(1, 2));

  const std::string written = write_network(network);
  EXPECT_NE(written.find("\"" + big + "\""), std::string::npos) << written;
  EXPECT_NE(written.find("\"1/1000000000000000000000000000000\""), std::string::npos) << written;
  EXPECT_EQ(parse_network(written), network);
}

TEST(ParseNetwork, LargeNegativeIntegersAndUnsigned) {
  // Just beyond int64 and uint64, and exactly at their limits.
  for (const std::string text : {"-9223372036854775808", "-9223372036854775809", "18446744073709551615",
                                 "18446744073709551616"}) {
    Network network = parse_network(with_layers("1", "[{\"weights\": [[" + text + "]], \"bias\": [0]}]"));
    EXPECT_EQ(network.layers[0].weights(0, 0), Rational(Integer(text))) << text;
  }
}

TEST(ParseNetwork, HugeExponentRejectedQuickly) {
  const auto start = std::chrono::steady_clock::now();
  expect_rejected(with_layers("1", R"([{"weights": [["1e999999"]], "bias": [0]}])"), "layers[0].weights[0][0]",
                  {"4000"});
  expect_rejected(with_layers("1", R"([{"weights": [[1e-999999]], "bias": [0]}])"), "layers[0].weights[0][0]",
                  {"4000"});
  expect_rejected(with_layers("1", R"([{"weights": [[1e999999]], "bias": [0]}])"), "layers[0].weights[0][0]");
  EXPECT_LT(std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count(), 0.1);
}

TEST(WriteNetwork, RoundTripIsExactAndCanonical) {
  Network network = parse_network(valid_document);
  const std::string written = write_network(network);
  Network again = parse_network(written);
  EXPECT_EQ(again, network);
  EXPECT_EQ(again.meta_json, network.meta_json);
  EXPECT_EQ(write_network(again), written);  // canonical: a fixed point
  EXPECT_NE(written.find("\"activation\": \"relu\""), std::string::npos) << written;  // written explicitly
  EXPECT_NE(written.find("[\"1/2\", \"-3\"]"), std::string::npos) << written;
  EXPECT_NE(written.find("\"5/4\""), std::string::npos) << written;
  EXPECT_NE(written.find("1.50"), std::string::npos) << written;  // meta literal kept
}

TEST(WriteNetwork, NameWithQuotesAndNoMeta) {
  Network network = parse_network(with_layers("1", R"([{"weights": [[1]], "bias": [0]}])"));
  network.name = "quote \" backslash \\ newline \n unicode \xc3\xa9";
  EXPECT_TRUE(network.meta_json.empty());
  const std::string written = write_network(network);
  EXPECT_EQ(written.find("\"meta\""), std::string::npos);
  EXPECT_EQ(parse_network(written), network);
}

TEST(WriteNetwork, BrokenMetaIsMisuse) {
  Network network = parse_network(with_layers("1", R"([{"weights": [[1]], "bias": [0]}])"));
  network.meta_json = "{not json";
  EXPECT_THROW(write_network(network), usage_error);
}

TEST(ParseNetwork, RejectsDuplicateKeysAnywhere) {
  expect_rejected(R"({"format": "pleat-network/1", "format": "pleat-network/1"})", "format", {"duplicate key"});
  expect_rejected(with_layers("1", R"([{"weights": [[1]], "bias": [0], "bias": [1]}])"), "layers[0].bias",
                  {"duplicate key"});
  expect_rejected(valid_document.substr(0, valid_document.size() - 1) + R"(, "meta": {})" + "}", "meta",
                  {"duplicate key"});
  std::string nested = valid_document;
  nested.replace(nested.find("\"z\": true"), 9, "\"z\": true, \"y\": 1");
  expect_rejected(nested, "meta.anything[2].y", {"duplicate key"});
}

TEST(ParseNetwork, RejectsTopLevelFaults) {
  expect_rejected("[1, 2]", "document", {"expected an object", "found an array"});
  expect_rejected(R"({"input_dim": 1, "layers": []})", "format", {"missing field"});
  expect_rejected(R"({"format": "pleat-network/2"})", "format", {"pleat-network/1", "pleat-network/2"});
  expect_rejected(R"({"format": 1})", "format", {"expected a string"});
  expect_rejected(R"({"format": "pleat-network/1", "input_dim": 1, "layers": [], "comment": "x"})", "comment",
                  {"unknown top-level key"});
  expect_rejected(R"({"format": "pleat-network/1", "layers": []})", "input_dim", {"missing field"});
  expect_rejected(R"({"format": "pleat-network/1", "input_dim": 1})", "layers", {"missing field"});
  expect_rejected(with_layers("1", "[]"), "layers", {"empty network"});
  expect_rejected(with_layers("1", "{}"), "layers", {"expected an array"});
  expect_rejected(R"({"format": "pleat-network/1", "input_dim": 1, "layers": [{"weights": [[1]], "bias": [0]}], "name": 3})",
                  "name", {"expected a string"});
}

TEST(ParseNetwork, RejectsBadInputDim) {
  const std::string layers = R"([{"weights": [[1]], "bias": [0]}])";
  for (const std::string bad : {"0", "-1", "1.5", "\"x\"", "true", "null", "[1]", "1e40"})
    expect_rejected(with_layers(bad, layers), "input_dim", {"expected a positive integer"});
  // Integers written other ways are still the integer.
  EXPECT_EQ(parse_network(with_layers("\"1\"", layers)).input_dim, 1u);
  EXPECT_EQ(parse_network(with_layers("1.0", layers)).input_dim, 1u);
}

TEST(ParseNetwork, RejectsShapeFaults) {
  // The input_dim does not match the first layer.
  expect_rejected(with_layers("3", R"([{"weights": [[1, 2]], "bias": [0]}])"), "layers[0].weights[0]",
                  {"expected 3 numbers, found 2", "input_dim is 3"});
  // A row of the second layer is short.
  expect_rejected(with_layers("2", R"([{"weights": [[1, 2], [3, 4], [5, 6]], "bias": [0, 0, 0]},
                                       {"weights": [[1, 2, 3], [1, 2, 3], [1, 2]], "bias": [0, 0, 0]}])"),
                  "layers[1].weights[2]", {"expected 3 numbers, found 2", "layers[0] has 3 neurons"});
  expect_rejected(with_layers("2", R"([{"weights": [[1, 2], [3, 4]], "bias": [0]}])"), "layers[0].bias",
                  {"expected 2 numbers, found 1"});
  expect_rejected(with_layers("2", R"([{"weights": [], "bias": []}])"), "layers[0].weights", {"no neurons"});
  expect_rejected(with_layers("2", R"([{"weights": [1, 2], "bias": [0]}])"), "layers[0].weights[0]",
                  {"expected an array"});
  expect_rejected(with_layers("2", R"([{"bias": [0]}])"), "layers[0].weights", {"missing field"});
  expect_rejected(with_layers("1", R"([{"weights": [[1]]}])"), "layers[0].bias", {"missing field"});
  expect_rejected(with_layers("1", R"([[1]])"), "layers[0]", {"expected an object"});
  expect_rejected(with_layers("1", R"([{"weights": [[1]], "bias": [0], "activaton": "relu"}])"),
                  "layers[0].activaton", {"unknown key"});
}

TEST(ParseNetwork, RejectsActivationFaults) {
  expect_rejected(with_layers("1", R"([{"weights": [[1]], "bias": [0], "activation": "tanh"}])"),
                  "layers[0].activation", {"unknown activation \"tanh\" (expected \"relu\" or \"linear\")"});
  expect_rejected(with_layers("1", R"([{"weights": [[1]], "bias": [0], "activation": "linear"},
                                       {"weights": [[1]], "bias": [0]}])"),
                  "layers[0].activation", {"hidden layer"});
  expect_rejected(with_layers("1", R"([{"weights": [[1]], "bias": [0], "activation": 1}])"), "layers[0].activation",
                  {"expected a string"});
}

TEST(ParseNetwork, RejectsNonNumbers) {
  const auto document = [](const std::string& entry) {
    return with_layers("2", "[{\"weights\": [[1, " + entry + "]], \"bias\": [0]}]");
  };
  for (const std::string bad : {"\"NaN\"", "\"Infinity\"", "\"-inf\"", "\"abc\"", "\" 1\"", "\"+1\"", "\"0x10\"",
                                "\"1e\"", "\"\"", "\"1.2.3\"", "true", "null", "[1]", "{}"})
    expect_rejected(document(bad), "layers[0].weights[0][1]");
  expect_rejected(document("\"1/0\""), "layers[0].weights[0][1]", {"zero denominator"});
  // Bare NaN and Infinity are not JSON at all: a syntax error at that place.
  expect_rejected(document("NaN"), "layers[0].weights[0][1]", {"malformed JSON"});
  expect_rejected(document("Infinity"), "layers[0].weights[0][1]", {"malformed JSON"});
}

TEST(ParseNetwork, MalformedJsonNamesThePosition) {
  expect_rejected("", "document", {"malformed JSON", "line 1, column 1"});
  expect_rejected("{\n  \"format\": \"pleat-network/1\",\n  \"input_dim\": 2,,\n}", "document",
                  {"malformed JSON", "line 3"});
  expect_rejected(with_layers("1", R"([{"weights": [[1]], "bias": [0]}])") + " trailing", "document",
                  {"malformed JSON"});
  expect_rejected(with_layers("1", R"([{"weights": [[1]], "bias": [0,]}])"), "layers[0].bias[1]",
                  {"malformed JSON"});
  // Deep nesting is refused where it happens (before the tree could exhaust the stack).
  std::string deepest = "document";
  for (int level = 0; level < 256; ++level) deepest += "[0]";
  expect_rejected(std::string(100000, '['), deepest, {"nesting deeper than 256"});
}

TEST(ReadNetworkFile, MissingFileIsNamed) {
  const std::filesystem::path missing = std::filesystem::temp_directory_path() / "pleat-no-such-file.json";
  try {
    read_network_file(missing);
    FAIL() << "read a missing file";
  } catch (const input_error& error) {
    EXPECT_EQ(std::string(error.what()).rfind(missing.string() + ": cannot open", 0), 0u) << error.what();
  }
}

TEST(ReadNetworkFile, ReadsAndPrefixesFaultsWithTheFileName) {
  const std::filesystem::path path =
      std::filesystem::temp_directory_path() / ("pleat-io-test-" + std::to_string(::testing::UnitTest::GetInstance()->random_seed()) + ".json");
  {
    std::ofstream out(path);
    out << valid_document;
  }
  EXPECT_EQ(read_network_file(path), parse_network(valid_document));
  {
    std::ofstream out(path);
    out << with_layers("1", "[]");
  }
  try {
    read_network_file(path);
    ADD_FAILURE() << "accepted an empty network";
  } catch (const input_error& error) {
    EXPECT_EQ(std::string(error.what()), path.string() + ": layers: empty network (no layers)");
  }
  std::filesystem::remove(path);
}

}  // namespace
}  // namespace pleat

namespace pleat {
namespace {

std::vector<std::size_t> widths_of(const Network& network) {
  std::vector<std::size_t> widths = {network.input_dim};
  for (const Layer& layer : network.layers) widths.push_back(layer.width());
  return widths;
}

// The example networks in data/ read, have the shapes data/README.md states,
// and survive write/read unchanged.
TEST(DataFiles, ReadAndRoundTrip) {
  const std::filesystem::path data = std::filesystem::path(PLEAT_SOURCE_DIR) / "data";
  const std::vector<std::pair<std::string, std::vector<std::size_t>>> expected = {
      {"fold2d.json", {2, 6, 5, 1}},
      {"ramp1d.json", {1, 5, 1}},
      {"sensor3d.json", {3, 6, 4, 1}},
      {"degenerate2d.json", {2, 4, 3, 1}}};
  for (const auto& [file, widths] : expected) {
    SCOPED_TRACE(file);
    Network network = read_network_file(data / file);
    EXPECT_EQ(widths_of(network), widths);
    EXPECT_FALSE(network.has_output_relu());
    EXPECT_FALSE(network.name.empty());
    EXPECT_NE(network.meta_json.find("\"scenario\""), std::string::npos);
    EXPECT_EQ(parse_network(write_network(network)), network);
  }
  // Decimals in the files are read as the decimals they spell.
  Network fold = read_network_file(data / "fold2d.json");
  EXPECT_EQ(fold.layers[0].weights(0, 0), parse_rational("-11/10"));
  EXPECT_EQ(fold.layers[0].weights(4, 0), parse_rational("1/20"));
  // degenerate2d: neurons 1 and 2 are copies (same row, same bias).
  Network degenerate = read_network_file(data / "degenerate2d.json");
  EXPECT_EQ(degenerate.layers[0].weights.row(1), degenerate.layers[0].weights.row(2));
  EXPECT_EQ(degenerate.layers[0].bias[1], degenerate.layers[0].bias[2]);
}

}  // namespace
}  // namespace pleat
