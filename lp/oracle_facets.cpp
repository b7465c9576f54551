// Query 2: facet classification (lp/oracle.hpp): the double filter's two
// warm row-generation LPs, or in 2-D the polygon's proposals, each proved exactly.
#include "lp/oracle.hpp"

#include "core/errors.hpp"
#include "core/filtered_sign.hpp"
#include "core/stop.hpp"
#include "lp/checker.hpp"
#include "lp/detail/double_rows.hpp"
#include "lp/detail/exact_linear.hpp"
#include "lp/detail/exact_lp.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/detail/glpk_lp.hpp"
#include "lp/detail/oracle_parts.hpp"
#include "lp/detail/working_rows.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <optional>
#include <stdexcept>
#include <string>

namespace pleat::lp {
namespace {

using namespace detail;

// The per-region double state for facet classification: two row-generation
// LPs kept warm across the region's candidates.
class FacetFilter {
 public:
  FacetFilter(const Polyhedron& cell, const DoubleRows& rows, const RationalVector& interior,
              double positive_slack, LazyIntegerRows& integer_rows)
      : cell_(cell),
        rows_(rows),
        positive_slack_(positive_slack),
        integer_rows_(integer_rows),
        screen_(rows, 1, false, false) {
    // LP1 (GLPK, one per region; row 0 and the objective rewritten per candidate j):
    //   minimise â_j . x  subject to  â_j . x >= -ĉ_j  (row 0),
    //                                 â_i . x >= -ĉ_i  (every i, by row generation),  x free.
    // The optimum v_j = min(â_j . x + ĉ_j) over the closed cell is >= 0.
    // v_j > 0: the hyperplane misses the closed cell, and the dual
    // (a_j = sum y_i a_i over the active rows, sum y_i c_i <= c_j by duality)
    // is the Motzkin certificate with equality multiplier -1.
    // v_j ~ 0: the hyperplane touches the cell; LP2 decides.
    std::vector<double> point(cell.dim);
    for (std::size_t k = 0; k < cell.dim; ++k) point[k] = to_double(interior[k]);
    screen_.add_nearest(point, 2 * cell.dim + 2);
  }

  std::optional<FacetVerdict> classify(const std::vector<std::size_t>& group) {
    const std::size_t j = group[0];
    const auto is_member = [&](std::size_t i) { return std::find(group.begin(), group.end(), i) != group.end(); };
    GlpkLP& lp = screen_.lp();
    lp.set_row(0, rows_.normal(j), cell_.dim);
    lp.set_row_lower(0, -rows_.offsets[j]);
    for (std::size_t k = 0; k < cell_.dim; ++k) lp.set_objective(k, rows_.normal(j)[k]);
    if (screen_.solve(is_member) == DoubleStatus::optimal) {
      const double minimum = lp.objective() + rows_.offsets[j];
      if (minimum > positive_slack_) {
        const std::vector<std::size_t> support = screen_.active_constraints();
        if (std::none_of(support.begin(), support.end(), is_member))
          if (std::optional<NonFacetCertificate> certificate = redundancy_on_support(cell_, j, support, &integer_rows_))
            return FacetVerdict{std::move(*certificate)};
      }
    }
    return classify_on_hyperplane(group, is_member);
  }

 private:
  void build_hyperplane_lp() {
    const std::size_t n = cell_.dim;
    // LP2 (GLPK, one per region, built on the first touching candidate;
    // row 0 rewritten per candidate j), variables (x, t):
    //   maximise t  subject to  â_j . x = -ĉ_j                    (row 0),
    //                           â_i . x - t >= -ĉ_i  (i outside j's group, by row
    //                                                 generation; the group's rows are freed),
    //                           t <= 1,  x free.
    // t* > 0: a point on j's hyperplane with every other constraint > 0, a facet.
    // t* <= 0: the mixed system has no solution; the active rows and row 0
    // carry the Motzkin multipliers (row 0's free in sign).
    hyperplane_.emplace(rows_, 1, true, true);
    hyperplane_->lp().set_column_upper(n, 1.0);
    hyperplane_->lp().set_objective(n, 1.0);
    for (std::size_t i : screen_.constraints()) hyperplane_->add(i);
  }

  template <class IsMember>
  std::optional<FacetVerdict> classify_on_hyperplane(const std::vector<std::size_t>& group,
                                                     const IsMember& is_member) {
    const std::size_t j = group[0];
    if (!hyperplane_) build_hyperplane_lp();
    GlpkLP& lp = hyperplane_->lp();
    lp.set_row(0, rows_.normal(j), cell_.dim);
    lp.set_row_fixed(0, -rows_.offsets[j]);
    for (std::size_t member : group)
      if (hyperplane_->contains(member)) lp.set_row_free(hyperplane_->lp_row(member));
    std::optional<FacetVerdict> verdict;
    if (hyperplane_->solve(is_member) == DoubleStatus::optimal) verdict = read_hyperplane_lp(group, is_member);
    for (std::size_t member : group)
      if (hyperplane_->contains(member)) lp.set_row_lower(hyperplane_->lp_row(member), -rows_.offsets[member]);
    return verdict;
  }

  template <class IsMember>
  std::optional<FacetVerdict> read_hyperplane_lp(const std::vector<std::size_t>& group,
                                                 const IsMember& is_member) const {
    const std::size_t n = cell_.dim;
    const GlpkLP& lp = hyperplane_->lp();
    const double radius = lp.objective();
    if (radius > positive_slack_) {
      std::vector<double> point(n);
      for (std::size_t k = 0; k < n; ++k) point[k] = lp.column_value(k);
      const Constraint& rep = cell_.constraints[group[0]];
      const std::size_t solved = largest_entry(rep.normal);
      // Rounding the other coordinates by < t/(16n) and solving for the
      // largest-|a_jk| one moves the point by < t/16 in max-norm.
      const double scale = 1.0 / static_cast<double>(n);
      for (double shrink : {scale / 16.0, scale / 1024.0, 0.0}) {
        RationalVector candidate = project_onto(rep, round_point(point, radius * shrink), solved);
        if (is_facet_point(cell_, group, candidate)) return FacetVerdict{FacetPoint{std::move(candidate)}};
      }
      return std::nullopt;
    }
    std::vector<std::size_t> support = hyperplane_->active_constraints();
    support.erase(std::remove_if(support.begin(), support.end(), is_member), support.end());
    if (std::optional<NonFacetCertificate> certificate = non_facet_on_support(cell_, group[0], support, &integer_rows_))
      return FacetVerdict{std::move(*certificate)};
    return std::nullopt;
  }

  const Polyhedron& cell_;
  const DoubleRows& rows_;
  double positive_slack_;
  LazyIntegerRows& integer_rows_;
  WorkingRows screen_;
  std::optional<WorkingRows> hyperplane_;
};

// ---- the 2-D path: the cell clipped as a polygon in double -----------------------

// What the polygon proposes for one constraint: a facet (the midpoint of its
// edge) or not (the two constraints whose lines meet at the polygon's vertex
// nearest its line). Proposals only; each is certified exactly or dropped.
struct PolygonProposal {
  enum class Kind { none, facet, non_facet } kind = Kind::none;
  std::array<double, 2> point{};            // facet: the edge's midpoint
  double margin = 0.0;                      // facet: the other constraints' least double slack there
  std::array<std::size_t, 2> support{};     // non-facet: the lines through the nearest vertex
};

// Clips a large box around the interior point by every constraint (rows scaled
// to 1-norm 1, so a slack is within a factor 2 of the max-norm distance to the
// line) and reads off, per constraint, an edge or the nearest vertex. A
// constraint whose only edge is shorter than kShortEdge, or lies beyond the box,
// gets a proposal the exact step rejects, and the general filter decides it.
std::vector<PolygonProposal> polygon_proposals(const DoubleRows& rows, const RationalVector& interior) {
  constexpr std::size_t box = static_cast<std::size_t>(-1);  // label of the box's own edges
  constexpr double kShortEdge = FilterTolerances::oracle_short_edge;
  const std::size_t m = rows.count;
  const std::array<double, 2> centre{to_double(interior[0]), to_double(interior[1])};
  // The slack of constraint i at centre + u, for u relative to the interior point.
  std::vector<double> slack_at_centre(m);
  double radius = 1.0;
  for (std::size_t i = 0; i < m; ++i) {
    slack_at_centre[i] = rows.offsets[i] + rows.normal(i)[0] * centre[0] + rows.normal(i)[1] * centre[1];
    radius = std::max(radius, 4.0 * slack_at_centre[i]);
  }
  radius = std::min(radius * 64.0, 1e12);
  const auto slack = [&](std::size_t i, const std::array<double, 2>& u) {
    return slack_at_centre[i] + rows.normal(i)[0] * u[0] + rows.normal(i)[1] * u[1];
  };
  struct Corner {
    std::array<double, 2> u;
    std::size_t edge;  // the constraint whose line the edge from this corner to the next lies on
  };
  std::vector<Corner> polygon{{{-radius, -radius}, box}, {{radius, -radius}, box},
                              {{radius, radius}, box},   {{-radius, radius}, box}};
  std::vector<Corner> clipped;
  std::vector<double> values;
  for (std::size_t i = 0; i < m && !polygon.empty(); ++i) {
    values.resize(polygon.size());
    for (std::size_t k = 0; k < polygon.size(); ++k) values[k] = slack(i, polygon[k].u);
    clipped.clear();
    for (std::size_t k = 0; k < polygon.size(); ++k) {
      const std::size_t next = (k + 1) % polygon.size();
      const double a = values[k];
      const double b = values[next];
      const auto crossing = [&] {
        const double t = a / (a - b);
        return std::array<double, 2>{polygon[k].u[0] + t * (polygon[next].u[0] - polygon[k].u[0]),
                                     polygon[k].u[1] + t * (polygon[next].u[1] - polygon[k].u[1])};
      };
      if (a >= 0) {
        clipped.push_back(polygon[k]);
        if (b < 0) clipped.push_back(Corner{crossing(), i});  // leaves: the edge runs along line i
      } else if (b >= 0) {
        clipped.push_back(Corner{crossing(), polygon[k].edge});  // re-enters on the old edge
      }
    }
    polygon.swap(clipped);
  }
  std::vector<PolygonProposal> proposals(m);
  if (polygon.size() < 3) return proposals;
  for (std::size_t k = 0; k < polygon.size(); ++k) {
    const Corner& from = polygon[k];
    const Corner& to = polygon[(k + 1) % polygon.size()];
    if (from.edge == box) continue;
    const double length = std::max(std::fabs(to.u[0] - from.u[0]), std::fabs(to.u[1] - from.u[1]));
    if (!(length > kShortEdge)) continue;
    PolygonProposal& proposal = proposals[from.edge];
    const std::array<double, 2> middle{(from.u[0] + to.u[0]) / 2, (from.u[1] + to.u[1]) / 2};
    double margin = std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < m; ++i)
      if (i != from.edge) margin = std::min(margin, slack(i, middle));
    if (proposal.kind == PolygonProposal::Kind::facet && proposal.margin >= margin) continue;
    proposal.kind = PolygonProposal::Kind::facet;
    proposal.point = {centre[0] + middle[0], centre[1] + middle[1]};
    proposal.margin = margin;
  }
  for (std::size_t j = 0; j < m; ++j) {
    if (proposals[j].kind == PolygonProposal::Kind::facet) continue;
    std::size_t nearest = 0;
    double least = std::numeric_limits<double>::infinity();
    for (std::size_t k = 0; k < polygon.size(); ++k) {
      const double value = slack(j, polygon[k].u);
      if (value < least) {
        least = value;
        nearest = k;
      }
    }
    const std::size_t before = polygon[(nearest + polygon.size() - 1) % polygon.size()].edge;
    const std::size_t after = polygon[nearest].edge;
    if (before == box || after == box || before == after || before == j || after == j) continue;
    proposals[j].kind = PolygonProposal::Kind::non_facet;
    proposals[j].support = {std::min(before, after), std::max(before, after)};
  }
  return proposals;
}

// The exact certificate of one polygon proposal, or nullopt when it fails.
// Without images (exact only) every sign is computed exactly. A non-facet
// proved with keep_certificate false carries an empty multiplier vector.
std::optional<FacetVerdict> certify_polygon_proposal(const Polyhedron& cell, const CellImages* images,
                                                     std::size_t j, const PolygonProposal& proposal,
                                                     bool keep_certificate) {
  if (proposal.kind == PolygonProposal::Kind::non_facet) {
    const std::size_t s1 = proposal.support[0];
    const std::size_t s2 = proposal.support[1];
    if (images && !keep_certificate) {
      if (const std::optional<bool> redundant = is_redundant_in_plane_filtered(*images, j, s1, s2)) {
        if (!*redundant) return std::nullopt;
        return FacetVerdict{NonFacetCertificate{Rational(-1), {}}};
      }
    }
    if (std::optional<NonFacetCertificate> certificate = redundancy_in_plane(cell, j, s1, s2)) {
      if (!keep_certificate) certificate->multipliers.clear();
      return FacetVerdict{std::move(*certificate)};
    }
    return std::nullopt;
  }
  if (proposal.kind != PolygonProposal::Kind::facet || !(proposal.margin > 0)) return std::nullopt;
  // Rounding by r in max-norm and solving line j for its largest-|a_jk|
  // coordinate (|â_jk| >= 1/2) moves the point by <= 2r; the other scaled
  // slacks stay above margin - 4r.
  if (!std::isfinite(proposal.point[0]) || !std::isfinite(proposal.point[1])) return std::nullopt;
  // A lone constraint has no other slack to keep: any margin will do.
  const double margin = std::min(proposal.margin, 1.0);
  const Constraint& rep = cell.constraints[j];
  const std::size_t solved = largest_entry(rep.normal);
  const std::vector<double> point{proposal.point[0], proposal.point[1]};
  for (double shrink : {1.0 / 16.0, 1.0 / 1024.0, 0.0}) {
    RationalVector candidate = project_onto(rep, round_point(point, margin * shrink), solved);
    const bool is_facet =
        images ? is_facet_point_filtered(cell, *images, j, candidate) : is_facet_point(cell, {j}, candidate);
    if (is_facet) return FacetVerdict{FacetPoint{std::move(candidate)}};
  }
  return std::nullopt;
}

}  // namespace

FacetClassification Oracle::classify_facets(const Polyhedron& cell, const InteriorPoint& interior,
                                            bool keep_non_facet_certificates) {
  detail::require_well_formed(cell, "classify_facets");
  if (interior.point.size() != cell.dim)
    throw usage_error("classify_facets: the given point is not strictly inside the cell");
  FacetClassification classification;
  if (cell.constraints.empty()) return classification;
  // The filter and the exact path work on one representative per class of
  // positive multiples (see reduce_to_representatives); each verdict is then
  // stated for the whole class.
  const Representatives representatives = reduce_to_representatives(cell);
  const Polyhedron& distinct = representatives.cell();
  const DoubleRows& rows = representatives.rows;
  const bool use_filter = rows.is_finite && !state_->tolerances.exact_only;
  // The precondition, checked exactly (filtered signs unless exact only).
  std::optional<CellImages> images;
  if (use_filter) images.emplace(distinct);
  if (!(images ? is_interior_filtered(distinct, *images, interior.point) : check_interior_point(cell, interior)))
    throw usage_error("classify_facets: the given point is not strictly inside the cell");
  // In the plane the clipped polygon proposes every verdict at once; the LP
  // filter (built only when needed) takes what the polygon's proposals leave.
  std::vector<PolygonProposal> proposals;
  if (use_filter && cell.dim == 2) proposals = polygon_proposals(rows, interior.point);
  LazyIntegerRows integer_rows_of_cell(distinct);
  std::optional<FacetFilter> filter;
  const Representatives& reduced = representatives;
  classification.groups.reserve(reduced.classes.size());
  for (std::size_t r = 0; r < reduced.classes.size(); ++r) {
    poll_stop();
    ++state_->counts.lp_queries;
    const std::vector<std::size_t> single{r};
    std::optional<FacetVerdict> verdict;
    if (!proposals.empty())
      verdict = certify_polygon_proposal(distinct, images ? &*images : nullptr, r, proposals[r],
                                         keep_non_facet_certificates);
    if (!verdict && use_filter) {
      if (!filter) filter.emplace(distinct, rows, interior.point, state_->tolerances.positive_slack, integer_rows_of_cell);
      verdict = filter->classify(single);
    }
    if (verdict) {
      ++state_->counts.filter_settled;
    } else {
      ++state_->counts.exact_fallbacks;
      verdict = classify_group_exactly(distinct, single, &integer_rows_of_cell);
    }
    if (auto* proof = std::get_if<NonFacetCertificate>(&*verdict)) {
      if (!keep_non_facet_certificates) {
        proof->multipliers.clear();
      } else if (reduced.has_duplicates) {
        proof->multipliers = expand_multipliers(proof->multipliers, reduced, cell.constraints.size());
      }
    }
    classification.groups.push_back(FacetGroup{reduced.classes[r], std::move(*verdict)});
  }
  return classification;
}

}  // namespace pleat::lp
