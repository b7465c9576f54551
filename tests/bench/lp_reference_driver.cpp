// Reads polyhedra from stdin and prints the lp queries' answers, for the
// cross-check in tests/reference/lp_vertex_enumeration_test.py. Input:
//   <cases>
//   then per case: <dim> <count>, then count lines "a_1 ... a_dim c" (rationals)
// Output per case, one line each:
//   case <k>
//   open interior|empty
//   centre <x_1> ... <x_dim>            (non-empty only; cap 1)
//   facets <representative indices>      (non-empty only)
//   groups <g>: <members> ...            (non-empty only)
//   bounded yes|no                       (non-empty only)
//   checked yes|no                       (every certificate through lp/checker.hpp)
#include "lp/checker.hpp"
#include "lp/oracle.hpp"

#include <iostream>
#include <string>

using namespace pleat;
using namespace pleat::lp;

int main() {
  std::size_t cases = 0;
  std::cin >> cases;
  Oracle oracle;
  for (std::size_t k = 0; k < cases; ++k) {
    Polyhedron cell;
    std::size_t count = 0;
    std::cin >> cell.dim >> count;
    for (std::size_t i = 0; i < count; ++i) {
      Constraint c;
      std::string text;
      for (std::size_t d = 0; d < cell.dim; ++d) {
        std::cin >> text;
        c.normal.push_back(Rational(text));
      }
      std::cin >> text;
      c.offset = Rational(text);
      c.offset.canonicalize();
      for (Rational& value : c.normal) value.canonicalize();
      cell.constraints.push_back(std::move(c));
    }
    if (!std::cin) {
      std::cerr << "lp_reference_driver: malformed input\n";
      return 2;
    }
    std::cout << "case " << k << "\n";
    bool is_checked = true;
    const CellVerdict open = oracle.decide_open_cell(cell);
    if (std::holds_alternative<EmptinessCertificate>(open)) {
      is_checked = check_emptiness(cell, std::get<EmptinessCertificate>(open));
      std::cout << "open empty\n";
      // find_centre must agree.
      is_checked = is_checked && std::holds_alternative<EmptinessCertificate>(oracle.find_centre(cell));
      std::cout << "checked " << (is_checked ? "yes" : "no") << "\n";
      continue;
    }
    is_checked = check_interior_point(cell, std::get<InteriorPoint>(open));
    std::cout << "open interior\n";
    const CellVerdict centre = oracle.find_centre(cell);
    if (!std::holds_alternative<InteriorPoint>(centre)) {
      std::cout << "centre none\nchecked no\n";
      continue;
    }
    const InteriorPoint& point = std::get<InteriorPoint>(centre);
    is_checked = is_checked && check_interior_point(cell, point);
    std::cout << "centre";
    for (const Rational& value : point.point) std::cout << " " << value.get_str();
    std::cout << "\n";
    const FacetClassification facets = oracle.classify_facets(cell, point);
    is_checked = is_checked && check_facet_classification(cell, facets);
    std::cout << "facets";
    for (const FacetGroup& group : facets.groups)
      if (group.is_facet()) std::cout << " " << group.constraints[0];
    std::cout << "\ngroups";
    for (const FacetGroup& group : facets.groups) {
      std::cout << " ";
      for (std::size_t m = 0; m < group.constraints.size(); ++m)
        std::cout << (m ? "," : "") << group.constraints[m];
    }
    std::cout << "\n";
    const BoundednessVerdict bounded = oracle.decide_boundedness(cell);
    if (std::holds_alternative<BoundednessCertificate>(bounded)) {
      is_checked = is_checked && check_boundedness(cell, std::get<BoundednessCertificate>(bounded));
      std::cout << "bounded yes\n";
    } else {
      is_checked = is_checked && check_recession_direction(cell, std::get<RecessionDirection>(bounded));
      std::cout << "bounded no\n";
    }
    std::cout << "checked " << (is_checked ? "yes" : "no") << "\n";
  }
  const QueryCounts& counts = oracle.counts();
  std::cout << "counts " << counts.lp_queries << " " << counts.filter_settled << " " << counts.exact_fallbacks
            << "\n";
  return 0;
}
