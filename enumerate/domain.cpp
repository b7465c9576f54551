#include "enumerate/domain.hpp"

#include "lp/oracle.hpp"

#include <sstream>
#include <variant>

namespace pleat {

std::string Domain::describe() const {
  std::ostringstream out;
  switch (kind) {
    case Kind::whole_space:
      out << "R^" << dim;
      break;
    case Kind::box:
      out << "box:";
      for (std::size_t i = 0; i < dim; ++i) {
        if (i) out << "x";
        out << "(" << format_rational(lower[i]) << "," << format_rational(upper[i]) << ")";
      }
      break;
    case Kind::polytope:
      out << "polytope:" << constraints.size() << " constraints";
      break;
  }
  return out.str();
}

Placement placement_in(const Domain& domain, const RationalVector& point) {
  Placement placement = Placement::inside;
  for (const auto& side : domain.constraints) {
    Rational value = side.offset;
    for (std::size_t i = 0; i < point.size(); ++i) value += side.normal[i] * point[i];
    if (value < 0) return Placement::outside;
    if (value == 0) placement = Placement::on_boundary;
  }
  return placement;
}

Domain make_whole_space(std::size_t dim) {
  if (dim == 0) throw usage_error("make_whole_space: dimension must be positive");
  Domain domain;
  domain.dim = dim;
  return domain;
}

Domain make_box(const RationalVector& lower, const RationalVector& upper) {
  if (lower.empty() || lower.size() != upper.size()) throw usage_error("make_box: bounds of different sizes");
  Domain domain;
  domain.kind = Domain::Kind::box;
  domain.dim = lower.size();
  domain.lower = lower;
  domain.upper = upper;
  for (std::size_t i = 0; i < domain.dim; ++i) {
    if (!(lower[i] < upper[i]))
      throw input_error("axis " + std::to_string(i) + " has lower bound " + format_rational_brief(lower[i]) +
                        " not below upper bound " + format_rational_brief(upper[i]));
    // x_i - lower_i > 0 and upper_i - x_i > 0.
    lp::Constraint above{RationalVector(domain.dim, Rational(0)), -lower[i]};
    above.normal[i] = 1;
    lp::Constraint below{RationalVector(domain.dim, Rational(0)), upper[i]};
    below.normal[i] = -1;
    domain.constraints.push_back(std::move(above));
    domain.constraints.push_back(std::move(below));
  }
  return domain;
}

Domain make_polytope(std::size_t dim, std::vector<lp::Constraint> constraints) {
  if (dim == 0) throw usage_error("make_polytope: dimension must be positive");
  for (std::size_t i = 0; i < constraints.size(); ++i) {
    if (constraints[i].normal.size() != dim)
      throw input_error("constraints[" + std::to_string(i) + "].normal: expected " + std::to_string(dim) +
                        " numbers, found " + std::to_string(constraints[i].normal.size()));
    bool is_zero = true;
    for (const auto& v : constraints[i].normal) is_zero = is_zero && v == 0;
    if (is_zero) throw input_error("constraints[" + std::to_string(i) + "].normal: the normal is zero");
  }
  Domain domain;
  domain.kind = Domain::Kind::polytope;
  domain.dim = dim;
  domain.constraints = std::move(constraints);
  lp::Oracle oracle;
  auto verdict = oracle.decide_open_cell(lp::Polyhedron{dim, domain.constraints});
  if (!std::holds_alternative<lp::InteriorPoint>(verdict))
    throw input_error("domain: the polytope has empty interior (it must be full-dimensional)");
  return domain;
}

RationalVector domain_centre(const Domain& domain) {
  switch (domain.kind) {
    case Domain::Kind::whole_space:
      return RationalVector(domain.dim, Rational(0));
    case Domain::Kind::box: {
      RationalVector centre(domain.dim);
      for (std::size_t i = 0; i < domain.dim; ++i) centre[i] = (domain.lower[i] + domain.upper[i]) / 2;
      return centre;
    }
    case Domain::Kind::polytope: {
      lp::Oracle oracle;
      auto verdict = oracle.find_centre(lp::Polyhedron{domain.dim, domain.constraints});
      if (auto* point = std::get_if<lp::InteriorPoint>(&verdict)) return point->point;
      throw input_error("domain: the polytope has empty interior (it must be full-dimensional)");
    }
  }
  return {};
}

}  // namespace pleat
