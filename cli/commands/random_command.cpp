// pleat random: a reproducible random network in the file format.
#include "cli/command.hpp"
#include "cli/common.hpp"

#include "core/network_io.hpp"
#include "core/random_network.hpp"

#include <memory>
#include <string>

namespace pleat::cli {

namespace {

struct RandomOptions {
  std::string architecture;
  std::uint64_t seed = 0;
  std::uint64_t sample = 0;
  std::string init = "he";
  std::uint64_t digits = 6;
  std::string output;
};

constexpr const char* random_help =
    "The same arguments write the same file, byte for byte, on every machine: the\n"
    "numbers come from a fixed generator (splitmix64 and xoshiro256**), normals from\n"
    "Box-Muller with correctly rounded MPFR functions, and every parameter is rounded\n"
    "to DIGITS significant decimal digits and stored as that exact rational.\n"
    "--sample I picks the I-th network of the stream of seed S (surveys use this).\n"
    "Inits: he = weights N(0, 2/fan_in), biases N(0, 1/fan_in), never 0;\n"
    "       uniform = weights and biases U(-1/sqrt(fan_in), 1/sqrt(fan_in)).\n"
    "Hidden layers are ReLU, the output layer linear.\n"
    "\nExamples:\n"
    "  pleat random --arch 2,8,8,1 --seed 7 -o net.json\n"
    "  pleat random --arch 3,5,5,1 --seed 1 --sample 4 --init uniform --digits 3";

int run_random(const RandomOptions& options) {
  const std::vector<std::size_t> architecture = parse_width_list(options.architecture, "--arch");
  if (architecture.size() < 2)
    throw input_error("--arch: give the input width and at least one layer, e.g. 2,8,1");
  check_parameter_count(architecture, "--arch");
  if (options.digits < 1 || options.digits > 40)
    throw input_error("--digits: expected 1 to 40, got " + std::to_string(options.digits));
  const Network network = random_network(architecture, options.seed, options.sample,
                                         parse_initialization(options.init),
                                         static_cast<int>(options.digits));
  write_output(options.output, write_network(network));
  return 0;
}

}  // namespace

void register_random(CommandTable& commands) {
  auto options = std::make_shared<RandomOptions>();
  CLI::App& command = commands.add(
      "random", "Write a reproducible random network (same arguments, same file everywhere)",
      random_help, [options] { return run_random(*options); });
  command.add_option("--arch", options->architecture,
                     "Layer widths, input first: 2,8,8,1 is 2 inputs, two hidden layers of 8, 1 output")
      ->required()
      ->type_name("WIDTHS");
  add_unsigned_option(command, "--seed", options->seed, "Seed of the generator (0 .. 2^64-1)")->required();
  add_unsigned_option(command, "--sample", options->sample,
                      "Which network of the seed's stream (default 0)");
  command.add_option("--init", options->init, "Initialization: he (default) or uniform")
      ->check(CLI::IsMember({"he", "uniform"}))
      ->type_name("NAME");
  add_unsigned_option(command, "--digits", options->digits,
                      "Significant decimal digits per parameter, 1 to 40 (default 6)");
  command.add_option("-o,--output", options->output, "Write to FILE instead of standard output")
      ->type_name("FILE");
}

}  // namespace pleat::cli
