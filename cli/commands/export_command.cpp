// pleat export: a pleat network as an ONNX model (Gemm + Relu, float64).
#include "cli/command.hpp"
#include "cli/common.hpp"

#include "core/network_io.hpp"
#include "core/onnx_io.hpp"

#include <iostream>
#include <memory>
#include <string>

#ifndef PLEAT_VERSION
#define PLEAT_VERSION "unknown"
#endif

namespace pleat::cli {

namespace {

struct ExportOptions {
  std::string network_path;
  std::string output;
};

constexpr const char* export_help =
    "Writes the network as an ONNX model: one Gemm per layer (weights stored as\n"
    "W_k, n_k x n_(k-1), transB = 1) followed by a Relu where the layer has one;\n"
    "input \"input\" and output \"output\" of shape [N, width], all float64.\n"
    "A parameter float64 cannot hold exactly (1/3, 0.1) is rounded to the nearest\n"
    "float64 and named in a warning on standard error; when there is none, the\n"
    "file imports back to exactly the same network.\n"
    "\nExamples:\n"
    "  pleat export net.json -o model.onnx";

int run_export(const ExportOptions& options) {
  const Network network = read_network_input(options.network_path);
  const OnnxExport model = write_onnx_model(network, PLEAT_VERSION);
  write_output(options.output, model.bytes);
  if (!model.rounded_parameters.empty()) {
    std::cerr << "pleat: warning: " << model.rounded_parameters.size()
              << (model.rounded_parameters.size() == 1 ? " parameter is" : " parameters are")
              << " not a float64 and " << (model.rounded_parameters.size() == 1 ? "was" : "were")
              << " rounded to nearest in " << options.output << ":\n";
    for (const std::string& line : model.rounded_parameters) std::cerr << "  " << line << "\n";
  }
  return 0;
}

}  // namespace

void register_export(CommandTable& commands) {
  auto options = std::make_shared<ExportOptions>();
  CLI::App& command = commands.add(
      "export", "Write a network as an ONNX model (Gemm + Relu, float64 weights)", export_help,
      [options] { return run_export(*options); });
  command.add_option("network", options->network_path, "Network file (pleat-network/1 JSON or .onnx; - reads JSON from stdin)")
      ->required()
      ->type_name("NET.json");
  command.add_option("-o,--output", options->output, "The ONNX file to write")->required()->type_name("MODEL.onnx");
}

}  // namespace pleat::cli
