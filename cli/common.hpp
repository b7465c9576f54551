// Helpers every pleat subcommand shares: reading inputs with clean messages,
// exact number lists on the command line, printing rationals, JSON output.
// Everything here throws pleat::input_error (exit code 2) for bad input, with
// a message that names the option or file; nothing prints on its own except
// write_output.
#pragma once

#include "core/network.hpp"
#include "core/rational.hpp"
#include "core/stop.hpp"

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include <cstddef>
#include <cstdint>
#include <limits>
#include <string>
#include <string_view>
#include <vector>

namespace pleat::cli {

using Json = nlohmann::ordered_json;  // keys stay in the order written

// ---- Inputs -----------------------------------------------------------------

// "0.5,-1/3,1e-3" -> exact rationals (the network format's number grammar).
// `what` names the option in messages: "--at: item 2 ('1/0'): zero denominator".
RationalVector parse_number_list(std::string_view text, std::string_view what);

// parse_number_list plus a check that there are `dimension` coordinates.
RationalVector parse_point(std::string_view text, std::size_t dimension, std::string_view what);

// A plain decimal integer 0 .. 2^64-1 (no sign, no hex, no octal: "010" is 10).
std::uint64_t parse_unsigned(std::string_view text, std::string_view what);

// "2,8,8,1" -> {2, 8, 8, 1}; every entry a positive decimal integer.
std::vector<std::size_t> parse_width_list(std::string_view text, std::string_view what);

// Ten million parameters is about 100 MB of text and far past any network
// that can be walked: an architecture with more (counted without overflow)
// is an input_error naming `what`, raised before anything is allocated.
inline constexpr double max_parameters = 1e7;
void check_parameter_count(const std::vector<std::size_t>& architecture, std::string_view what);

// ---- Options ----------------------------------------------------------------

// Declares an option whose value is a comma-separated list of numbers that may
// start with a minus sign (`--at -1/3,2`, `--at=-1/3,2`, `--box -2,2`). The
// value is kept as text for parse_number_list/parse_point. Declare such
// options only through this helper: it takes exactly one following token
// whatever it looks like (a std::vector option would stop at "-1/3").
CLI::Option* add_number_list_option(CLI::App& command, const std::string& name,
                                    std::string& text, const std::string& description);

// Declares an option taking a plain unsigned integer in [minimum, maximum]
// (parsed by parse_unsigned when the command line is read, so the message
// names the option and the range: "--digits: expected 1 to 40, got 0").
CLI::Option* add_unsigned_option(CLI::App& command, const std::string& name,
                                 std::uint64_t& value, const std::string& description,
                                 std::uint64_t minimum = 0,
                                 std::uint64_t maximum = std::numeric_limits<std::uint64_t>::max());

// More worker threads than this is a mistake (each holds an LP solver and
// its own caches), not a request: --threads takes 0 (all cores) to 1024.
inline constexpr std::uint64_t max_threads = 1024;
CLI::Option* add_threads_option(CLI::App& command, std::uint64_t& value, const std::string& description);

// A time limit in seconds: a finite decimal number above 0 and at most 10^9
// (about 31 years). Leaving the option out means no limit; 0, a negative
// number, nan and inf are refused with a message naming the option.
inline constexpr double max_seconds = 1e9;
double parse_seconds(std::string_view text, std::string_view what);
CLI::Option* add_seconds_option(CLI::App& command, const std::string& name, double& value,
                                const std::string& description);

// ---- Printing ---------------------------------------------------------------

// ["7/4", "-1"]: exact, in lowest terms, quoted as in the JSON output.
std::string format_rational_list(const RationalVector& values);

// For people: the exact rational with a decimal view beside it,
// "-1234567/98765 (≈ -12.4999)" (6 significant digits); integers as they are.
std::string format_rational_readable(const Rational& value);

// The shortest decimal that reads back as the same double ("1.75", "-0.1").
std::string format_double(double value);

// [1.75, -0.1]
std::string format_double_list(const DoubleVector& values);

// ---- JSON -------------------------------------------------------------------

Json rational_json(const Rational& value);             // "-3/8"
Json rational_list_json(const RationalVector& values);  // ["-3/8", "1"]
Json double_list_json(const DoubleVector& values);      // [-0.375, 1.0]
Json stop_reason_json(StopReason reason);               // null for none, else "time-limit", ...

// Pretty (2-space indent) or compact, always ending with a newline.
std::string json_text(const Json& document, bool is_pretty = true);

// "1 input", "2 inputs": a count with its noun in the right number (plural:
// singular + "s" unless given).
std::string count_of(std::size_t count, std::string_view singular, std::string_view plural = {});

// ---- Input ------------------------------------------------------------------

// read_network_any (JSON, or ONNX by name), noting the file as this command's
// input: no output of the command may then be written over it (output_file.hpp).
Network read_network_input(const std::string& path);

// ---- Output -----------------------------------------------------------------

// Writes text to `path`, or to standard output when path is "" or "-".
// A file that cannot be opened is an input_error naming it and the system's
// reason; one that cannot be written (or standard output) an output_error
// (cli/formats/output_file.hpp). A regular file is replaced whole
// (write_whole_file): a failed write leaves an earlier file as it was.
void write_output(const std::string& path, std::string_view text);

}  // namespace pleat::cli
