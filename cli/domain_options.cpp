#include "cli/domain_options.hpp"

#include "cli/common.hpp"
#include "core/domain_io.hpp"

namespace pleat::cli {

void add_domain_options(CLI::App& command, DomainOptions& options) {
  CLI::Option* box = add_number_list_option(
      command, "--box", options.box_text,
      "The open box (LO,HI)^n0 as LO,HI, or one interval per axis as L1,H1,L2,H2,... (exact numbers)");
  CLI::Option* file = command.add_option("--domain", options.domain_path,
                                         "A pleat-domain/1 file: the open polytope {x : normal.x + offset > 0}");
  box->excludes(file);
  file->excludes(box);
}

std::optional<BoxBounds> box_bounds(const RationalVector& numbers, std::size_t input_dim) {
  BoxBounds bounds;
  if (numbers.size() == 2) {
    bounds.lower.assign(input_dim, numbers[0]);
    bounds.upper.assign(input_dim, numbers[1]);
  } else if (numbers.size() == 2 * input_dim) {
    for (std::size_t i = 0; i < input_dim; ++i) {
      bounds.lower.push_back(numbers[2 * i]);
      bounds.upper.push_back(numbers[2 * i + 1]);
    }
  } else {
    return std::nullopt;
  }
  return bounds;
}

Domain make_domain(const DomainOptions& options, std::size_t input_dim) {
  if (!options.domain_path.empty()) {
    const PolytopeDocument document = read_domain_file(options.domain_path);
    if (document.input_dim != input_dim)
      throw input_error(options.domain_path + ": input_dim is " + std::to_string(document.input_dim) +
                        " but the network has " + count_of(input_dim, "input"));
    std::vector<lp::Constraint> constraints;
    for (const auto& [normal, offset] : document.constraints) constraints.push_back(lp::Constraint{normal, offset});
    try {
      return make_polytope(input_dim, std::move(constraints));
    } catch (const input_error& fault) {
      throw input_error(options.domain_path + ": " + fault.what());
    }
  }
  if (options.box_text.empty()) return make_whole_space(input_dim);
  const RationalVector numbers = parse_number_list(options.box_text, "--box");
  const std::optional<BoxBounds> bounds = box_bounds(numbers, input_dim);
  if (!bounds)
    throw input_error("--box: expected LO,HI or " + std::to_string(2 * input_dim) + " numbers (one interval per axis), got " +
                      std::to_string(numbers.size()));
  try {
    return make_box(bounds->lower, bounds->upper);
  } catch (const input_error& fault) {
    throw input_error(std::string("--box: ") + fault.what());
  }
}

}  // namespace pleat::cli
