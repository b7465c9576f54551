// pleat eval: the exact output and activation pattern of a network at a point.
#include "cli/command.hpp"
#include "cli/common.hpp"

#include "core/network_io.hpp"
#include "core/evaluate.hpp"
#include "core/pattern.hpp"

#include <memory>
#include <string>

namespace pleat::cli {

namespace {

struct EvalOptions {
  std::string network_path;
  std::string point;
  bool is_json = false;
};

constexpr const char* eval_help =
    "The activation pattern of a point has one character per neuron that feeds a\n"
    "ReLU: 1 when its pre-activation (the value entering the ReLU) is positive, 0 when\n"
    "negative, = when exactly zero (the point lies on that neuron's bent hyperplane), z\n"
    "when identically zero on the whole region around the point (e.g. a neuron with\n"
    "bias 0 whose inputs are all off); layers are separated by '|'. The points with one\n"
    "pattern (and no '=') form an activation region, on which the network is a single\n"
    "affine map.\n"
    "Coordinates are exact: 0.5, -1/3 and 1e-3 are the rationals they spell.\n"
    "--json prints {\"format\": \"pleat-eval/1\", \"point\", \"pattern\", \"output\",\n"
    "\"output_double\", \"preactivations\" (every layer's, output layer last),\n"
    "\"zero_neurons\" (pre-activation 0 at the point: '=' and 'z'),\n"
    "\"identically_zero_neurons\" ('z' only)}, rationals as strings in lowest terms.\n"
    "\nExamples:\n"
    "  pleat eval data/fold2d.json --at 0.5,-1/3\n"
    "  pleat eval net.json --at=-1/3,2 --json";

std::vector<std::size_t> neurons_in_state(const ActivationPattern& pattern, NeuronState state) {
  std::vector<std::size_t> neurons;
  for (std::size_t i = 0; i < pattern.states.size(); ++i)
    if (pattern.states[i] == state) neurons.push_back(i);
  return neurons;
}

std::vector<std::size_t> zero_neurons(const ActivationPattern& pattern) {
  std::vector<std::size_t> neurons;
  for (std::size_t i = 0; i < pattern.states.size(); ++i)
    if (pattern.states[i] == NeuronState::zero_at_point || pattern.states[i] == NeuronState::zero_on_region)
      neurons.push_back(i);
  return neurons;
}

std::string neuron_list_text(const std::vector<std::size_t>& neurons) {
  std::string text;
  for (std::size_t i = 0; i < neurons.size(); ++i)
    text += (i > 0 ? ", " : "") + std::to_string(neurons[i]);
  return text;
}

int run_eval(const EvalOptions& options) {
  const Network network = read_network_input(options.network_path);
  const RationalVector point = parse_point(options.point, network.input_dim, "--at");
  const Evaluation result = evaluate_exact(network, point);
  const ActivationPattern around = pattern_around_point(network, point);  // 'z' where identically zero
  const std::string pattern = format_pattern(network, around);
  const std::vector<std::size_t> zeros = zero_neurons(around);
  const std::vector<std::size_t> crossings = neurons_in_state(around, NeuronState::zero_at_point);
  const std::vector<std::size_t> identically_zero = neurons_in_state(around, NeuronState::zero_on_region);

  if (options.is_json) {
    Json document;
    document["format"] = "pleat-eval/1";
    document["point"] = rational_list_json(point);
    document["pattern"] = pattern;
    document["output"] = rational_list_json(result.output);
    document["output_double"] = double_list_json(to_double(result.output));
    Json preactivations = Json::array();
    for (const RationalVector& layer : result.preactivation)
      preactivations.push_back(rational_list_json(layer));
    document["preactivations"] = preactivations;
    document["zero_neurons"] = zeros;
    document["identically_zero_neurons"] = identically_zero;
    write_output("", json_text(document));
    return 0;
  }
  std::string text;
  text += "point    " + format_rational_list(point) + "\n";
  text += "pattern  " + pattern + "\n";
  text += "output   " + format_rational_list(result.output) + "   ~ " +
          format_double_list(to_double(result.output)) + "\n";
  if (!crossings.empty())
    text += "on the bent hyperplane of neuron" + std::string(crossings.size() > 1 ? "s " : " ") +
            neuron_list_text(crossings) + " (pre-activation exactly 0, written '=')\n";
  if (!identically_zero.empty())
    text += "neuron" + std::string(identically_zero.size() > 1 ? "s " : " ") + neuron_list_text(identically_zero) +
            (identically_zero.size() > 1 ? " are" : " is") +
            " identically zero on the region around the point (written 'z')\n";
  write_output("", text);
  return 0;
}

}  // namespace

void register_eval(CommandTable& commands) {
  auto options = std::make_shared<EvalOptions>();
  CLI::App& command = commands.add(
      "eval", "Evaluate a network exactly at a point: its output and activation pattern",
      eval_help, [options] { return run_eval(*options); });
  command.add_option("network", options->network_path, "Network file (pleat-network/1 JSON or .onnx; - reads JSON from stdin)")
      ->required()
      ->type_name("NET.json");
  add_number_list_option(command, "--at", options->point,
                         "The point, comma-separated exact numbers: 0.5,-1/3")
      ->required();
  command.add_flag("--json", options->is_json, "Print one JSON document (format pleat-eval/1)");
}

}  // namespace pleat::cli
