// The pleat executable: parses the command line, runs one subcommand, and
// turns errors into "pleat: <message>" and an exit code (2 bad input or
// usage, 1 any other failure). Never a stack trace.
#include "cli/command.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/process_group.hpp"
#include "core/errors.hpp"
#include "core/rational.hpp"

#include <CLI/CLI.hpp>

#include <cstdint>
#include <exception>
#include <iostream>
#include <string>

#ifndef PLEAT_VERSION
#define PLEAT_VERSION "unknown"
#endif

namespace pleat::cli {
// Every subcommand, defined in cli/commands/<name>_command.cpp (see command.hpp).
// To add one: declare it here and call it in register_all_commands.
void register_random(CommandTable& commands);
void register_eval(CommandTable& commands);
void register_walk(CommandTable& commands);
void register_certify(CommandTable& commands);
void register_sample(CommandTable& commands);
void register_verify(CommandTable& commands);
void register_survey(CommandTable& commands);
void register_inspect(CommandTable& commands);
void register_draw(CommandTable& commands);
void register_import(CommandTable& commands);
void register_export(CommandTable& commands);
void register_track(CommandTable& commands);
void register_report(CommandTable& commands);

namespace {

void register_all_commands(CommandTable& commands) {
  register_random(commands);
  register_eval(commands);
  register_walk(commands);
  register_certify(commands);
  register_sample(commands);
  register_verify(commands);
  register_survey(commands);
  register_inspect(commands);
  register_draw(commands);
  register_import(commands);
  register_export(commands);
  register_track(commands);
  register_report(commands);
}

constexpr const char* description =
    "pleat: the activation regions of a small ReLU network, found exactly.\n"
    "A ReLU network is piecewise affine: the on/off pattern of its neurons splits the\n"
    "input space into activation regions, on each of which the network is one affine\n"
    "map x -> A x + c (neighbouring regions with the same map form one linear region).\n"
    "pleat computes with exact rational numbers, so what it prints carries no rounding error.";

constexpr const char* top_level_help =
    "Examples:\n"
    "  pleat random --arch 2,8,8,1 --seed 7 -o net.json   # a reproducible random network\n"
    "  pleat eval net.json --at 0.5,-1/3                  # exact output and pattern at a point\n"
    "Run 'pleat COMMAND --help' for what one command does.";

std::string help_hint(const CLI::App& app) {
  std::string command = "pleat";
  for (const CLI::App* sub : app.get_subcommands()) command += " " + sub->get_name();
  return "Run '" + command + " --help' for usage.";
}

int run(int argc, char** argv) {
  CLI::App app{description, "pleat"};
  app.set_version_flag("--version", std::string("pleat ") + PLEAT_VERSION, "Print the version and exit");
  app.require_subcommand(0, 1);
  app.get_formatter()->column_width(34);
  CommandTable commands(app);
  register_all_commands(commands);
  app.footer(top_level_help);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& error) {
    if (error.get_exit_code() == 0) return app.exit(error);  // --help, --version
    std::cerr << "pleat: " << error.what() << "\n" << help_hint(app) << "\n";
    return 2;
  }
  if (app.get_subcommands().empty()) {
    std::cerr << app.help() << "\npleat: no command given\n";
    return 2;
  }
  // In an MPI job, a command that does not run across processes runs on rank 0 alone.
  if (is_follower_process() && !runs_across_processes(app.get_subcommands().front()->get_name())) return 0;
  return commands.run_selected();
}

}  // namespace
}  // namespace pleat::cli

namespace {

// The length of the well-formed UTF-8 sequence at text[at] of a character
// from U+00A0 on (no overlong form, no surrogate, at most U+10FFFF); 0 when
// there is none: a byte of another encoding, a cut sequence, or a C1 control
// U+0080..U+009F (U+009B is a terminal's one-character escape sequence).
std::size_t printable_utf8_length(const std::string& text, std::size_t at) {
  const auto byte = [&](std::size_t i) { return static_cast<unsigned char>(text[i]); };
  const unsigned char lead = byte(at);
  const std::size_t length = lead >= 0xc2 && lead <= 0xdf ? 2 : lead >= 0xe0 && lead <= 0xef ? 3
                             : lead >= 0xf0 && lead <= 0xf4                                   ? 4
                                                                                              : 0;
  if (length == 0 || at + length > text.size()) return 0;
  std::uint32_t code = lead & (0x7f >> length);
  for (std::size_t i = 1; i < length; ++i) {
    if ((byte(at + i) & 0xc0) != 0x80) return 0;
    code = (code << 6) | (byte(at + i) & 0x3f);
  }
  const std::uint32_t least[] = {0, 0, 0x80, 0x800, 0x10000};
  if (code < least[length] || code > 0x10ffff || (code >= 0xd800 && code <= 0xdfff) || code < 0xa0) return 0;
  return length;
}

// An error message may quote text from an input file or the command line;
// its control characters (an escape sequence could move the cursor and
// overwrite what was printed before) are shown as \xHH, and so is every byte
// that is not part of well-formed UTF-8 (a file in another encoding) or is a
// C1 control. Newlines and tabs stay.
std::string printable(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (std::size_t at = 0; at < text.size();) {
    const auto byte = static_cast<unsigned char>(text[at]);
    if (byte >= 0x80) {
      if (const std::size_t length = printable_utf8_length(text, at)) {
        out.append(text, at, length);
        at += length;
        continue;
      }
    }
    if ((byte < 0x20 && byte != '\n' && byte != '\t') || byte >= 0x7f) {
      constexpr char digits[] = "0123456789abcdef";
      out += "\\x";
      out += digits[byte >> 4];
      out += digits[byte & 0xf];
    } else {
      out += static_cast<char>(byte);
    }
    ++at;
  }
  return out;
}

}  // namespace

int main(int argc, char** argv) {
  pleat::cli::keep_standard_output_errors();  // "cannot write to standard output (REASON)" says the real reason
  // Joins the MPI job when mpirun or srun started pleat (cli/process_group.hpp).
  pleat::cli::ProcessGroupSession group(argc, argv);
  try {
    const int status = pleat::cli::run(argc, argv);
    // A result that never reached standard output (a full disk, /dev/full,
    // a closed pipe) is a failure, not a success with nothing printed.
    pleat::cli::check_standard_output();
    return status;
  } catch (const pleat::cli::output_error& error) {
    return group.fail(printable(error.what()), 1);
  } catch (const pleat::limit_error& error) {
    return group.fail(printable(error.what()), 1);
  } catch (const pleat::input_error& error) {
    return group.fail(printable(error.what()), 2);
  } catch (const pleat::usage_error& error) {
    return group.fail(printable(error.what()), 2);
  } catch (const std::exception& error) {
    return group.fail(printable(std::string("internal error: ") + error.what()), 1);
  } catch (...) {
    return group.fail("internal error (unknown exception)", 1);
  }
}
