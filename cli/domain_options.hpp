// --box and --domain, shared by every command that walks a domain.
#pragma once

#include "enumerate/domain.hpp"

#include <CLI/CLI.hpp>

#include <optional>
#include <string>

namespace pleat::cli {

struct DomainOptions {
  std::string box_text;     // "LO,HI" or "L1,H1,L2,H2,..."
  std::string domain_path;  // a pleat-domain/1 file
};

// An axis-aligned box's corners from LO,HI (the same interval on every axis) or
// L1,H1,...,Ln,Hn (one per axis); nullopt for any other count of numbers.
struct BoxBounds {
  RationalVector lower, upper;
};
std::optional<BoxBounds> box_bounds(const RationalVector& numbers, std::size_t input_dim);

// Declares --box and --domain (mutually exclusive) on the command.
void add_domain_options(CLI::App& command, DomainOptions& options);

// R^n when neither option was given. Throws input_error naming the option
// or file for a malformed box, a wrong dimension, or an empty polytope.
Domain make_domain(const DomainOptions& options, std::size_t input_dim);

}  // namespace pleat::cli
