#include "enumerate/walk_check.hpp"

#include "core/jacobian.hpp"
#include "enumerate/pattern_cell.hpp"
#include "enumerate/walker.hpp"
#include "lp/checker.hpp"
#include "lp/oracle.hpp"

#include <algorithm>
#include <map>
#include <set>
#include <variant>

namespace pleat {
namespace {

struct Failure {
  std::string message;
};

[[noreturn]] void fail(const SavedRegion& saved, const std::string& what) {
  throw Failure{"line " + std::to_string(saved.line) + ": " + what};
}

// Integers with greatest common divisor 1 (the spec's form of a facet normal,
// which makes the written normal and offset unique).
bool is_primitive_integer_vector(const RationalVector& normal) {
  Integer divisor = 0;
  for (const auto& v : normal) {
    if (v.get_den() != 1) return false;
    mpz_gcd(divisor.get_mpz_t(), divisor.get_mpz_t(), v.get_num_mpz_t());
  }
  return divisor == 1;
}

bool closure_contains(const lp::Polyhedron& cell, const RationalVector& point) {
  return std::all_of(cell.constraints.begin(), cell.constraints.end(),
                     [&](const lp::Constraint& c) { return lp::slack(c, point) >= 0; });
}

// The open cone of a cell at a point q of its closure: the constraints that
// vanish at q, made homogeneous. The cell has interior next to q iff the cone does.
lp::Polyhedron tangent_cone_at(const lp::Polyhedron& cell, const RationalVector& q) {
  lp::Polyhedron cone{cell.dim, {}};
  for (const auto& c : cell.constraints)
    if (lp::slack(c, q) == 0) cone.constraints.push_back(lp::Constraint{c.normal, Rational(0)});
  return cone;
}

std::string facet_name(std::size_t index) { return "facet " + std::to_string(index); }

class WalkChecker {
 public:
  WalkChecker(const Network& network, const Domain& domain, const std::vector<SavedRegion>& regions)
      : network_(network), domain_(domain), regions_(regions) {}

  void run() {
    if (regions_.empty()) throw Failure{"no regions"};
    for (std::size_t i = 0; i < regions_.size(); ++i) {
      const SavedRegion& saved = regions_[i];
      if (saved.region.id != i)
        fail(saved, "id " + std::to_string(saved.region.id) + " is out of place: the region on this line is number " +
                        std::to_string(i) + " (ids are 0, 1, ... in file order)");
      if (!by_pattern_.emplace(saved.region.pattern, &saved).second)
        fail(saved, "pattern " + format_pattern(network_, saved.region.pattern) + " appears twice");
    }
    for (const auto& region : regions_) check_region(region);
    check_mutual_adjacency();
    check_start_region();
    check_walk_order();
  }

 private:
  void check_region(const SavedRegion& saved) {
    const Region& region = saved.region;
    const auto cell = build_pattern_cell(network_, domain_, region.pattern);
    if (!cell) fail(saved, "the pattern is inconsistent with the network's own maps");
    if (!lp::check_interior_point(cell->cell, region.interior))
      fail(saved, "the point is not strictly inside the region");
    if (!(cell->maps.output.linear == region.affine.linear) || cell->maps.output.offset != region.affine.offset)
      fail(saved, "the affine map differs from the network's map on the pattern");
    check_nonsmooth_neurons(saved);
    if (!region.certificates) fail(saved, "no certificate (write the walk with --certificates)");
    check_certificate_copy(saved, *cell);
    if (!lp::check_facet_classification(cell->cell, region.certificates->classification))
      fail(saved, "the classification of the region's constraints does not check");
    check_facets(saved, *cell);
    check_boundedness(saved, *cell);
  }

  void check_nonsmooth_neurons(const SavedRegion& saved) {
    const Region& region = saved.region;
    const bool has_zero = std::any_of(region.pattern.states.begin(), region.pattern.states.end(),
                                      [](NeuronState s) { return s == NeuronState::zero_on_region; });
    const std::vector<std::size_t> derived = has_zero ? nonsmooth_neurons(network_, region.pattern)
                                                      : std::vector<std::size_t>{};
    if (derived != region.nonsmooth_neurons)
      fail(saved, "\"nonsmooth_neurons\" differs from the neurons derived from the pattern");
  }

  // The certificate repeats the point and the cell's constraints: each must be
  // what the network and the pattern give.
  static void check_certificate_copy(const SavedRegion& saved, const PatternCell& cell) {
    if (saved.certificate_point != saved.region.interior.point)
      fail(saved, "the certificate's interior_point differs from the region's point");
    const RegionCertificates& certificate = *saved.region.certificates;
    const std::vector<lp::Constraint>& written = certificate.cell.constraints;
    if (written.size() != cell.cell.constraints.size() || certificate.constraint_neuron.size() != written.size())
      fail(saved, "the certificate lists " + std::to_string(written.size()) +
                      " constraints; the network and pattern give " + std::to_string(cell.cell.constraints.size()));
    for (std::size_t i = 0; i < cell.cell.constraints.size(); ++i)
      if (!(written[i] == cell.cell.constraints[i]) || certificate.constraint_neuron[i] != cell.constraint_neuron[i])
        fail(saved, "certificate constraint " + std::to_string(i) +
                        " differs from the one the network and pattern give");
  }

  void check_facets(const SavedRegion& saved, const PatternCell& cell) {
    const Region& region = saved.region;
    std::size_t facet_index = 0;
    bool touches_boundary = false;
    for (const auto& group : region.certificates->classification.groups) {
      if (!group.is_facet()) continue;
      if (facet_index >= region.facets.size()) fail(saved, "a facet certificate has no facet entry");
      const std::size_t index = facet_index++;
      const RegionFacet& facet = region.facets[index];
      const lp::Constraint& representative = cell.cell.constraints[group.constraints.front()];
      if (!lp::is_positive_multiple(lp::Constraint{facet.normal, facet.offset}, representative) ||
          !is_primitive_integer_vector(facet.normal))
        fail(saved, facet_name(index) + " is not its constraint's hyperplane as a primitive integer normal");
      if (facet.relative_interior.point != std::get<lp::FacetPoint>(group.verdict).point)
        fail(saved, facet_name(index) + " point differs from its certificate");
      std::vector<std::size_t> neurons;
      std::optional<std::size_t> side;
      for (std::size_t c : group.constraints) {
        if (cell.constraint_neuron[c] != no_index) neurons.push_back(cell.constraint_neuron[c]);
        else if (!side) side = cell.constraint_domain_side[c];
      }
      std::sort(neurons.begin(), neurons.end());
      if (facet.neurons != neurons)
        fail(saved, facet_name(index) + " names neurons that are not the ones whose hyperplane holds it");
      if (facet.domain_side != side)
        fail(saved, facet_name(index) + "'s \"side\" is not the domain constraint it lies on");
      if (side) {
        touches_boundary = true;
        if (facet.neighbor || !facet.other_neighbors.empty())
          fail(saved, "a facet on the domain boundary has a neighbour");
        continue;
      }
      check_neighbors(saved, cell, facet, index, representative);
    }
    if (facet_index != region.facets.size()) fail(saved, "more facets listed than certified");
    if (touches_boundary != region.touches_domain_boundary)
      fail(saved, std::string("\"touches_domain_boundary\" is ") + (region.touches_domain_boundary ? "true" : "false") +
                       " but " + (touches_boundary ? "a facet lies" : "no facet lies") + " on the domain boundary");
  }

  // The regions listed across an interior facet must be exactly those that
  // crossing at its point reaches (walker.hpp, patterns_across) and that have
  // interior next to that point.
  void check_neighbors(const SavedRegion& saved, const PatternCell& cell, const RegionFacet& facet,
                       std::size_t index, const lp::Constraint& representative) {
    const Region& region = saved.region;
    const std::string name = facet_name(index);
    if (!facet.neighbor) fail(saved, "interior " + name + " has no neighbour");
    std::vector<ActivationPattern> listed{*facet.neighbor};
    listed.insert(listed.end(), facet.other_neighbors.begin(), facet.other_neighbors.end());
    if (!std::is_sorted(listed.begin(), listed.end()) ||
        std::adjacent_find(listed.begin(), listed.end()) != listed.end())
      fail(saved, name + "'s neighbours are not distinct and in pattern order");

    RationalVector direction = representative.normal;
    for (auto& v : direction) v = -v;
    const RationalVector& point = facet.relative_interior.point;
    const std::vector<ActivationPattern> candidates =
        patterns_across(network_, region.pattern, cell.maps, point, direction, representative.normal);
    for (const auto& neighbor : listed) {
      const std::string label = format_pattern(network_, neighbor);
      if (neighbor == region.pattern) fail(saved, name + " names its own region as the neighbour across it");
      const auto found = by_pattern_.find(neighbor);
      if (found == by_pattern_.end()) fail(saved, "neighbour " + label + " is missing: the walk is incomplete");
      if (!std::binary_search(candidates.begin(), candidates.end(), neighbor))
        fail(saved, "neighbour " + label + " does not lie across " + name +
                         ": crossing at its point reaches " + describe(candidates));
      const SavedRegion& far = *found->second;
      const auto far_cell = build_pattern_cell(network_, domain_, neighbor);
      if (!far_cell) fail(saved, "neighbour " + label + " is inconsistent");
      if (!closure_contains(far_cell->cell, point))
        fail(saved, name + " point is outside the closure of neighbour " + label);
      // The neighbour is convex with the facet point in its closure, so its
      // interior lies on the far side exactly when its own point does.
      if (lp::slack(representative, far.region.interior.point) >= 0)
        fail(saved, "neighbour " + label + " (line " + std::to_string(far.line) + ") is not on the far side of " + name);
    }
    for (const auto& candidate : candidates)
      if (!std::binary_search(listed.begin(), listed.end(), candidate) && touches(candidate, point))
        fail(saved, "region " + format_pattern(network_, candidate) + " also lies across " + name +
                         " at its point but is not listed" +
                         (by_pattern_.count(candidate) ? "" : " (and is missing from the file)"));
    neighbors_named_[region.pattern].insert(listed.begin(), listed.end());
  }

  std::string describe(const std::vector<ActivationPattern>& patterns) const {
    std::string text;
    for (const auto& p : patterns) text += (text.empty() ? "" : ", ") + format_pattern(network_, p);
    return text.empty() ? "no region" : text;
  }

  // Whether a far-side candidate that the file leaves out has interior next
  // to q. A region of the file decides it exactly by its closure; any other
  // candidate needs a proof that its cell is empty next to q, which the LP
  // solver proposes and lp::check_emptiness confirms.
  bool touches(const ActivationPattern& candidate, const RationalVector& q) {
    const auto cell = build_pattern_cell(network_, domain_, candidate);
    if (!cell || !closure_contains(cell->cell, q)) return false;
    if (by_pattern_.count(candidate)) return true;  // a region (its point checked) with q in its closure
    const lp::Polyhedron cone = tangent_cone_at(cell->cell, q);
    if (cone.constraints.empty()) return true;
    const lp::CellVerdict verdict = oracle_.decide_open_cell(cone);
    const auto* empty = std::get_if<lp::EmptinessCertificate>(&verdict);
    return !empty || !lp::check_emptiness(cone, *empty);
  }

  void check_boundedness(const SavedRegion& saved, const PatternCell& cell) {
    const Region& region = saved.region;
    const std::optional<lp::BoundednessVerdict>& boundedness = region.certificates->boundedness;
    if (!boundedness) fail(saved, "no boundedness certificate");
    lp::Polyhedron neurons_only{cell.cell.dim, {}};
    for (std::size_t i = 0; i < cell.cell.constraints.size(); ++i)
      if (cell.constraint_neuron[i] != no_index) neurons_only.constraints.push_back(cell.cell.constraints[i]);
    bool checks = false;
    if (const auto* bounded = std::get_if<lp::BoundednessCertificate>(&*boundedness)) {
      // Neuron constraints come first in the cell, so the multipliers index
      // both; any weight on a domain side would not prove boundedness in R^n0.
      lp::BoundednessCertificate on_neurons = *bounded;
      for (std::size_t i = neurons_only.constraints.size(); i < on_neurons.multipliers.size(); ++i)
        if (on_neurons.multipliers[i] != 0) fail(saved, "the boundedness certificate uses a domain side");
      on_neurons.multipliers.resize(neurons_only.constraints.size());
      checks = region.bounded && lp::check_boundedness(neurons_only, on_neurons);
    } else {
      checks = !region.bounded &&
               lp::check_recession_direction(neurons_only, std::get<lp::RecessionDirection>(*boundedness));
    }
    if (!checks) fail(saved, "the boundedness certificate does not check (\"bounded\" is " +
                                  std::string(region.bounded ? "true" : "false") + ")");
  }

  // Adjacency is mutual: a region named across a facet names that region back.
  void check_mutual_adjacency() const {
    for (const auto& saved : regions_) {
      const Region& region = saved.region;
      const auto named = neighbors_named_.find(region.pattern);
      if (named == neighbors_named_.end()) continue;
      for (const auto& neighbor : named->second) {
        const auto back = neighbors_named_.find(neighbor);
        if (back == neighbors_named_.end() || !back->second.count(region.pattern))
          fail(saved, "neighbour " + format_pattern(network_, neighbor) + " (line " +
                           std::to_string(by_pattern_.at(neighbor)->line) +
                           ") does not name this region across any of its facets");
      }
    }
  }

  // The walk starts in the region at the domain's centre, or, when the
  // centre lies on a bent hyperplane, in the region at the first point of a
  // fixed sequence near it that lies off every bent hyperplane; that region's
  // closure need not hold the centre (the steps are not infinitesimal), so
  // the start is re-derived by the walker's own exact rule.
  void check_start_region() const {
    const SavedRegion& first = regions_.front();
    const ActivationPattern start = walk_start_pattern(network_, domain_);
    if (start != first.region.pattern)
      fail(first, "id 0 is not the region where the walk starts (" + format_pattern(network_, start) +
                      ": at the domain's centre, or next to it when the centre lies on a bent hyperplane)");
  }

  // Ids follow the walk: breadth-first from id 0 across the listed
  // neighbours, level by level, patterns sorted within a level.
  void check_walk_order() const {
    std::map<ActivationPattern, std::size_t> level{{regions_.front().region.pattern, 0}};
    std::vector<ActivationPattern> frontier{regions_.front().region.pattern};
    for (std::size_t depth = 1; !frontier.empty(); ++depth) {
      std::vector<ActivationPattern> next;
      for (const auto& pattern : frontier) {
        const auto named = neighbors_named_.find(pattern);
        if (named == neighbors_named_.end()) continue;
        for (const auto& neighbor : named->second)
          if (level.emplace(neighbor, depth).second) next.push_back(neighbor);
      }
      frontier = std::move(next);
    }
    for (std::size_t i = 0; i < regions_.size(); ++i) {
      const auto found = level.find(regions_[i].region.pattern);
      if (found == level.end()) fail(regions_[i], "the region is not reached from id 0 across listed neighbours");
      if (i == 0) continue;
      const std::size_t previous = level.at(regions_[i - 1].region.pattern);
      if (std::make_pair(previous, regions_[i - 1].region.pattern) >
          std::make_pair(found->second, regions_[i].region.pattern))
        fail(regions_[i], "id " + std::to_string(i) + " is out of the walk's order (breadth-first from id 0, " +
                              "patterns sorted within a level)");
    }
  }

  const Network& network_;
  const Domain& domain_;
  const std::vector<SavedRegion>& regions_;
  std::map<ActivationPattern, const SavedRegion*> by_pattern_;
  std::map<ActivationPattern, std::set<ActivationPattern>> neighbors_named_;
  lp::Oracle oracle_;
};

}  // namespace

WalkCheck check_saved_walk(const Network& network, const Domain& domain, const std::vector<SavedRegion>& regions) {
  WalkCheck result;
  result.regions = regions.size();
  try {
    WalkChecker(network, domain, regions).run();
    result.is_verified = true;
  } catch (const Failure& failure) {
    result.failure = failure.message;
  }
  return result;
}

}  // namespace pleat
