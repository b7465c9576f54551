// How pleat's subcommands plug into the executable.
//
// Each subcommand lives in its own file cli/commands/<name>_command.cpp and defines
//   void register_<name>(CommandTable& commands);
// which declares its options on the CLI::App that commands.add() returns and
// hands over the action to run. To add a subcommand, write that file and add
// two lines to cli/main.cpp (the declaration and the call); nothing else.
//
// An action runs only after the whole command line parsed; it returns the
// exit code (0 success, 1 a failure of the run itself). Bad input and misuse
// are thrown as pleat::input_error / pleat::usage_error and main turns them
// into "pleat: <message>" on stderr with exit code 2.
#pragma once

#include <CLI/CLI.hpp>

#include <functional>
#include <string>
#include <utility>
#include <vector>

namespace pleat::cli {

using Action = std::function<int()>;

class CommandTable {
 public:
  explicit CommandTable(CLI::App& app) : app_(app) {}

  // A new subcommand `name`. `summary` is its line in `pleat --help`; `help`
  // (shown by `pleat <name> --help` under the options) should say what the
  // concept is and give an example.
  CLI::App& add(const std::string& name, const std::string& summary, const std::string& help,
                Action action);

  // Runs the action of the subcommand chosen on the command line.
  // Precondition: app.parse() succeeded and exactly one subcommand was chosen.
  int run_selected() const;

 private:
  CLI::App& app_;
  std::vector<std::pair<CLI::App*, Action>> actions_;
};

}  // namespace pleat::cli
