// pleat import: an ONNX model (a fully connected ReLU network exported by a
// deep-learning framework) as an exact pleat network file.
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/formats/output_file.hpp"

#include "core/network_io.hpp"
#include "core/onnx_io.hpp"

#include <memory>
#include <string>

namespace pleat::cli {

namespace {

struct ImportOptions {
  std::string model_path;
  std::string output;
};

constexpr const char* import_help =
    "Reads an ONNX model and writes the network it computes in the pleat-network/1\n"
    "format. Recognised: Gemm (transA = 0; transB, alpha and beta honoured), MatMul\n"
    "followed by Add, Relu, and Identity, Flatten or Reshape that keep the feature\n"
    "vector. Input [features] or [batch, features]: batch 1, N or symbolic, features\n"
    "fixed. Weights (float32, float64, float16, bfloat16) become the exact rationals\n"
    "they represent: every float is a dyadic rational, so nothing is rounded.\n"
    "Anything else (convolutions, other activations, skip connections, several\n"
    "inputs, NaN or infinite weights) is refused with the node that caused it.\n"
    "meta.source records the file name, IR version, opset and producer.\n"
    "Every command that takes a network also reads a .onnx file directly.\n"
    "\nExamples:\n"
    "  pleat import model.onnx -o net.json\n"
    "  pleat walk model.onnx";

int run_import(const ImportOptions& options) {
  note_input_file(options.model_path);  // -o over the model is refused
  const Network network = read_onnx_file(options.model_path);
  write_output(options.output, write_network(network));
  return 0;
}

}  // namespace

void register_import(CommandTable& commands) {
  auto options = std::make_shared<ImportOptions>();
  CLI::App& command = commands.add(
      "import", "Read an ONNX model (fully connected ReLU layers) as an exact network file",
      import_help, [options] { return run_import(*options); });
  command.add_option("model", options->model_path, "ONNX model file")->required()->type_name("MODEL.onnx");
  command.add_option("-o,--output", options->output, "Write to FILE instead of standard output")
      ->type_name("FILE");
}

}  // namespace pleat::cli
