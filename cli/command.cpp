// The subcommand table (see command.hpp).
#include "cli/command.hpp"

#include "core/rational.hpp"

namespace pleat::cli {

CLI::App& CommandTable::add(const std::string& name, const std::string& summary,
                            const std::string& help, Action action) {
  CLI::App* command = app_.add_subcommand(name, summary);
  command->footer(help);  // set explicitly: CLI11 would copy the top level's footer
  actions_.emplace_back(command, std::move(action));
  return *command;
}

int CommandTable::run_selected() const {
  for (const auto& [command, action] : actions_)
    if (command->parsed()) return action();
  throw usage_error("CommandTable::run_selected: no subcommand was chosen");
}

}  // namespace pleat::cli
