// Plane and space cells' exact questions on their constraints' lines: no LP.
//
// In the plane, "is a_j . x + c_j = 0 a facet" asks whether an open interval of a
// line is non-empty. Parametrised by one coordinate, every other constraint is an
// affine function alpha_i s + beta_i of that coordinate s, so the answer is an exact
// comparison of at most m fractions, and the Motzkin certificate of a non-facet
// has support one constraint (a parallel one, non-positive on the line) or two
// (the two nearest bounds crossing). A non-empty open plane cell other than the
// plane has a facet, so "is the open cell empty" is the same question asked of
// each line in turn. In space, the facet question is the plane cell that the other
// constraints leave on the constraint's plane.
//
// On thin cells the double filter cannot decide (GLPK's tolerances are wider than
// the cell) and cddlib's exact simplex took 0.6-6 ms per such query; these take
// microseconds. The work is done on integer rows (each row times the least common
// multiple of its denominators: the same half-space), so no fraction is reduced
// on the way. Every verdict is checked exactly on the caller's rows before it is
// returned; an unexpected failure returns nullopt and the caller's cddlib path decides.
#include "lp/checker.hpp"
#include "lp/detail/exact_tools.hpp"
#include "lp/detail/integer_rows.hpp"
#include "lp/detail/oracle_parts.hpp"

#include <cstdlib>
#include <optional>
#include <span>
#include <vector>

namespace pleat::lp::detail {

namespace {

// Integer rows as the plane search sees them: a cell's own, or a reused buffer's
// first entries (the plane cell left on one constraint's plane).
using Rows = std::span<const IntegerRow>;

std::size_t largest_integer_entry(const std::vector<Integer>& normal) {
  std::size_t best = 0;
  for (std::size_t k = 1; k < normal.size(); ++k)
    if (mpz_cmpabs(normal[k].get_mpz_t(), normal[best].get_mpz_t()) > 0) best = k;
  return best;
}

// Row i restricted to row j's hyperplane, in the coordinates other than `solved`
// (x[solved] eliminated): sigma (a_js a_i - a_is a_j) over the free coordinates
// and offsets, sigma = sign(a_js); a positive multiple of row i's restriction.
// Written into `out`, whose integers keep their storage between calls.
void restrict_into(IntegerRow& out, const IntegerRow& row, const IntegerRow& rep, std::size_t solved) {
  const mpz_srcptr pivot = rep.normal[solved].get_mpz_t();
  const mpz_srcptr factor = row.normal[solved].get_mpz_t();
  out.normal.resize(row.normal.size() - 1);
  for (std::size_t k = 0, f = 0; k < row.normal.size(); ++k) {
    if (k == solved) continue;
    mpz_mul(out.normal[f].get_mpz_t(), pivot, row.normal[k].get_mpz_t());
    mpz_submul(out.normal[f].get_mpz_t(), factor, rep.normal[k].get_mpz_t());
    ++f;
  }
  mpz_mul(out.offset.get_mpz_t(), pivot, row.offset.get_mpz_t());
  mpz_submul(out.offset.get_mpz_t(), factor, rep.offset.get_mpz_t());
  out.scale = 1;
  if (mpz_sgn(pivot) < 0) {
    for (Integer& value : out.normal) mpz_neg(value.get_mpz_t(), value.get_mpz_t());
    mpz_neg(out.offset.get_mpz_t(), out.offset.get_mpz_t());
  }
}

bool is_zero(const std::vector<Integer>& values) {
  for (const Integer& value : values)
    if (sgn(value) != 0) return false;
  return true;
}

// What the other rows leave of row j's hyperplane when that hyperplane is a line
// (dim 2, rows[j] != 0): a point where every row outside j's group is positive,
// or the support of a Motzkin certificate (indices into rows).
struct LineInterval {
  std::optional<RationalVector> facet_point;
  std::vector<std::size_t> support;
};

// p / q with q > 0.
struct Fraction {
  Integer p, q;
  bool operator>(const Fraction& other) const { return p * other.q > other.p * q; }
};

// s in the open interval (low, high) (either may be absent: unbounded), with a
// short representation: the simplest rational in its middle half.
Rational short_inside(const std::optional<Fraction>& low, const std::optional<Fraction>& high) {
  auto rational = [](const Fraction& f) {
    Rational value(f.p, f.q);
    value.canonicalize();
    return value;
  };
  if (low && high) {
    const Rational lo = rational(*low), hi = rational(*high);
    const Rational quarter = (hi - lo) / 4;
    return simplest_between(lo + quarter, hi - quarter);
  }
  if (low) return simplest_between(rational(*low) + 1, rational(*low) + 2);
  if (high) return simplest_between(rational(*high) - 2, rational(*high) - 1);
  return Rational(0);
}

// is_member[i]: row i is in row j's group (a positive multiple of j); a positive
// multiple left out of is_member is recognised on the way.
LineInterval line_interval(Rows rows, std::size_t j, const std::vector<bool>& is_member) {
  const IntegerRow& rep = rows[j];
  const std::size_t solved = largest_integer_entry(rep.normal);
  const std::size_t free = 1 - solved;
  const mpz_srcptr pivot = rep.normal[solved].get_mpz_t();
  const bool is_flipped = sgn(rep.normal[solved]) < 0;
  // The tightest bound from each side: s > low (from `lower`), s < high (from
  // `upper`), each -beta / alpha kept as p / q with q > 0. Scratch integers are
  // reused: this loop runs for every line of every thin cell.
  std::optional<Fraction> low, high;
  std::size_t lower = 0, upper = 0;
  Integer alpha, beta, left, right;
  // sign of p / q - bound (q > 0).
  const auto compare = [&](const Integer& p, const Integer& q, const Fraction& bound) {
    mpz_mul(left.get_mpz_t(), p.get_mpz_t(), bound.q.get_mpz_t());
    mpz_mul(right.get_mpz_t(), bound.p.get_mpz_t(), q.get_mpz_t());
    return cmp(left, right);
  };
  for (std::size_t i = 0; i < rows.size(); ++i) {
    if (is_member[i]) continue;
    // Row i on the line as alpha s + beta (times |a_js|): restrict_into() without a row.
    const IntegerRow& row = rows[i];
    const mpz_srcptr factor = row.normal[solved].get_mpz_t();
    mpz_mul(alpha.get_mpz_t(), pivot, row.normal[free].get_mpz_t());
    mpz_submul(alpha.get_mpz_t(), factor, rep.normal[free].get_mpz_t());
    mpz_mul(beta.get_mpz_t(), pivot, row.offset.get_mpz_t());
    mpz_submul(beta.get_mpz_t(), factor, rep.offset.get_mpz_t());
    if (is_flipped) {
      mpz_neg(alpha.get_mpz_t(), alpha.get_mpz_t());
      mpz_neg(beta.get_mpz_t(), beta.get_mpz_t());
    }
    const int direction = sgn(alpha);
    if (direction == 0) {
      if (sgn(beta) > 0) continue;
      // Zero on the whole line and on the same side as j: a positive multiple of j.
      if (sgn(beta) == 0 && sgn(row.normal[solved]) == sgn(rep.normal[solved])) continue;
      return LineInterval{std::nullopt, {i}};  // parallel, non-positive on the whole line
    }
    // The bound -beta / alpha with a positive denominator: (-beta) / alpha or beta / (-alpha).
    if (direction > 0) {
      mpz_neg(beta.get_mpz_t(), beta.get_mpz_t());
      if (!low || compare(beta, alpha, *low) > 0) {
        if (!low) low.emplace();
        low->p.swap(beta);  // swaps, not copies: alpha and beta are rewritten next row
        low->q.swap(alpha);
        lower = i;
      }
    } else {
      mpz_neg(alpha.get_mpz_t(), alpha.get_mpz_t());
      if (!high || compare(beta, alpha, *high) < 0) {
        if (!high) high.emplace();
        high->p.swap(beta);
        high->q.swap(alpha);
        upper = i;
      }
    }
  }
  if (low && high && !(*high > *low)) return LineInterval{std::nullopt, {lower, upper}};
  RationalVector point(2);
  point[free] = short_inside(low, high);
  // x[solved] = -(c_j + a_jf s) / a_js.
  point[solved] = -(Rational(rep.offset) + Rational(rep.normal[free]) * point[free]) / Rational(rep.normal[solved]);
  return LineInterval{std::move(point), {}};
}

std::vector<bool> membership(std::size_t count, const std::vector<std::size_t>& group) {
  std::vector<bool> is_member(count, false);
  for (std::size_t member : group) is_member[member] = true;
  return is_member;
}

Rational row_slack(const IntegerRow& row, const RationalVector& x) {
  Rational value = row.offset;
  for (std::size_t k = 0; k < x.size(); ++k) value += row.normal[k] * x[k];
  return value;
}

// Every row's slack at the point times the point's common denominator (> 0, so
// the signs are the slacks' signs): integer products only.
std::vector<Integer> scaled_slacks(Rows rows, const ScaledPoint& x) {
  std::vector<Integer> slacks(rows.size());
  for (std::size_t i = 0; i < rows.size(); ++i) {
    slacks[i] = rows[i].offset * x.denominator;
    for (std::size_t k = 0; k < x.numerators.size(); ++k) slacks[i] += rows[i].normal[k] * x.numerators[k];
  }
  return slacks;
}

// From a point on row j's hyperplane where every other row is positive into the
// open cell: x0 + e a_j with e small enough that no row falling along a_j reaches
// zero (at most half way), then rounded to short coordinates within half the
// smallest slack-to-norm ratio (which keeps every slack positive). nullopt if a
// slack is not positive.
std::optional<RationalVector> step_inside(Rows rows, std::size_t j,
                                          const RationalVector& on_plane) {
  const std::vector<Integer>& a_j = rows[j].normal;
  const ScaledPoint start(on_plane);
  const Integer& d = start.denominator;
  // Slacks at the start times d, and each row's rate a_i . a_j along a_j.
  std::vector<Integer> slacks = scaled_slacks(rows, start);
  std::vector<Integer> along(rows.size());
  // e = min(1, min over falling rows of slack_i / (-2 a_i . a_j)) = limit.p / limit.q.
  Fraction limit{1, 1};
  Fraction candidate;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    for (std::size_t k = 0; k < a_j.size(); ++k)
      mpz_addmul(along[i].get_mpz_t(), rows[i].normal[k].get_mpz_t(), a_j[k].get_mpz_t());
    if (sgn(along[i]) >= 0) continue;
    if (sgn(slacks[i]) <= 0) return std::nullopt;
    candidate.p = slacks[i];
    mpz_mul(candidate.q.get_mpz_t(), along[i].get_mpz_t(), d.get_mpz_t());
    mpz_mul_si(candidate.q.get_mpz_t(), candidate.q.get_mpz_t(), -2);
    if (limit > candidate) std::swap(limit, candidate);
  }
  Rational step(limit.p, limit.q);
  step.canonicalize();
  RationalVector point(on_plane);
  for (std::size_t k = 0; k < a_j.size(); ++k) point[k] += step * a_j[k];
  // Every slack at the point, times d q for step = p / q, without forming the
  // point's own denominator: slack_i d q + p d (a_i . a_j), written over slacks.
  const Integer& p = step.get_num();
  const Integer& q = step.get_den();
  Integer p_d = p * d;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    mpz_mul(slacks[i].get_mpz_t(), slacks[i].get_mpz_t(), q.get_mpz_t());
    mpz_addmul(slacks[i].get_mpz_t(), p_d.get_mpz_t(), along[i].get_mpz_t());
  }
  // radius = half the least slack_i / |a_i|_1 = smallest.p / (2 d q smallest.q).
  std::optional<Fraction> smallest;
  Integer norm;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    if (sgn(slacks[i]) <= 0) return std::nullopt;
    norm = 0;
    for (const Integer& value : rows[i].normal) {
      if (sgn(value) >= 0) {
        norm += value;
      } else {
        norm -= value;
      }
    }
    // slack_i / norm below the smallest so far (cross-multiplied, no copies).
    if (!smallest || smallest->p * norm > slacks[i] * smallest->q) {
      if (!smallest) smallest.emplace();
      smallest->p.swap(slacks[i]);
      smallest->q.swap(norm);
    }
  }
  Rational radius(smallest->p, 2 * d * q * smallest->q);
  radius.canonicalize();
  RationalVector shortened = round_point(point, radius);
  for (const Integer& value : scaled_slacks(rows, ScaledPoint(shortened)))
    if (sgn(value) <= 0) return point;
  return shortened;
}

Integer determinant(const IntegerRow& first, const IntegerRow& second) {
  return first.normal[0] * second.normal[1] - first.normal[1] * second.normal[0];
}

// The Gordan multipliers the plane rows of support (two or three) carry, if any:
// y >= 0, not all zero, sum y_i a_i = 0 and sum y_i c_i <= 0, with y from 2x2
// determinants (Cramer). Exact, a few integer products.
std::optional<std::vector<Integer>> gordan_multipliers(Rows rows,
                                                       const std::vector<std::size_t>& support) {
  std::vector<Integer> y;
  if (support.size() == 2) {
    const IntegerRow& p = rows[support[0]];
    const IntegerRow& q = rows[support[1]];
    // Opposite directions: a_p = -lambda a_q with lambda > 0.
    if (sgn(determinant(p, q)) != 0) return std::nullopt;
    const std::size_t k = sgn(q.normal[0]) != 0 ? 0 : 1;
    if (sgn(p.normal[k]) == sgn(q.normal[k])) return std::nullopt;
    y = {abs(q.normal[k]), abs(p.normal[k])};
  } else if (support.size() == 3) {
    const IntegerRow& p = rows[support[0]];
    const IntegerRow& q = rows[support[1]];
    const IntegerRow& r = rows[support[2]];
    y = {determinant(q, r), determinant(r, p), determinant(p, q)};
    const bool is_nonpositive = sgn(y[0]) <= 0 && sgn(y[1]) <= 0 && sgn(y[2]) <= 0;
    if (is_nonpositive)
      for (Integer& value : y) value = -value;
    if (sgn(y[0]) < 0 || sgn(y[1]) < 0 || sgn(y[2]) < 0 || is_zero(y)) return std::nullopt;
  } else {
    return std::nullopt;
  }
  Integer total = 0;
  for (std::size_t s = 0; s < support.size(); ++s) total += y[s] * rows[support[s]].offset;
  if (sgn(total) > 0) return std::nullopt;
  return y;
}

// Integer multipliers (on integer rows) as multipliers on the caller's rows,
// divided by their common factor: row i is scale_i times the caller's row i.
RationalVector on_callers_rows(const std::vector<IntegerRow>& rows, const std::vector<std::size_t>& support,
                               const std::vector<Integer>& y) {
  std::vector<Integer> scaled(y.size());
  Integer content = 0;
  for (std::size_t s = 0; s < y.size(); ++s) {
    scaled[s] = y[s] * rows[support[s]].scale;
    mpz_gcd(content.get_mpz_t(), content.get_mpz_t(), scaled[s].get_mpz_t());
  }
  RationalVector multipliers(rows.size(), Rational(0));
  for (std::size_t s = 0; s < y.size(); ++s)
    if (sgn(content) != 0) multipliers[support[s]] = Rational(scaled[s] / content);
  return multipliers;
}

// 0, ..., count - 1 with the valid entries of try_first first.
std::vector<std::size_t> asking_order(std::size_t count, const std::vector<std::size_t>& try_first) {
  std::vector<std::size_t> order;
  order.reserve(count);
  std::vector<bool> is_listed(count, false);
  for (std::size_t j : try_first)
    if (j < count && !is_listed[j]) {
      is_listed[j] = true;
      order.push_back(j);
    }
  for (std::size_t j = 0; j < count; ++j)
    if (!is_listed[j]) order.push_back(j);
  return order;
}

// An open plane cell of integer rows: an interior point, or (when every line has
// failed) nullopt after offering each line's support, the line included, that
// carries Gordan multipliers y to is_empty_on(support, y) (which returns true once
// it has proved the cell empty with them; then the search stops and nullopt is
// returned too: the caller holds the proof).
template <typename EmptyOn>
std::optional<RationalVector> open_plane_cell(Rows rows, EmptyOn&& is_empty_on,
                                              const std::vector<std::size_t>& try_first = {}) {
  std::vector<bool> is_member(rows.size(), false);
  for (std::size_t j : asking_order(rows.size(), try_first)) {
    is_member[j] = true;
    LineInterval interval = line_interval(rows, j, is_member);
    is_member[j] = false;
    if (interval.facet_point) return step_inside(rows, j, *interval.facet_point);
    // The line's support with the line itself is often a Gordan support (Helly: an
    // empty open plane cell has an empty sub-cell of at most three constraints).
    interval.support.push_back(j);
    if (std::optional<std::vector<Integer>> y = gordan_multipliers(rows, interval.support))
      if (is_empty_on(interval.support, *y)) return std::nullopt;
  }
  return std::nullopt;
}

}  // namespace

std::optional<FacetVerdict> classify_group_on_line(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  return classify_group_on_line(cell, group, integer_rows(cell));
}

std::optional<FacetVerdict> classify_group_on_line(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                                   const std::vector<IntegerRow>& rows) {
  if (cell.dim != 2 || group.empty() || !is_well_formed(cell)) return std::nullopt;
  const LineInterval interval = line_interval(rows, group[0], membership(cell.constraints.size(), group));
  if (interval.facet_point) {
    if (!is_facet_point(cell, group, *interval.facet_point)) return std::nullopt;
    return FacetVerdict{FacetPoint{*interval.facet_point}};
  }
  std::optional<NonFacetCertificate> certificate = non_facet_on_support(cell, group[0], interval.support);
  if (certificate && check_non_facet(cell, group, *certificate)) return FacetVerdict{std::move(*certificate)};
  return std::nullopt;
}

std::optional<CellVerdict> decide_open_cell_on_lines(const Polyhedron& cell, const std::vector<std::size_t>& try_first) {
  if (cell.dim != 2 || cell.constraints.empty() || !is_well_formed(cell)) return std::nullopt;
  const std::vector<IntegerRow> rows = integer_rows(cell);
  std::optional<EmptinessCertificate> proof;
  const auto is_empty_on = [&](const std::vector<std::size_t>& support, const std::vector<Integer>& y) {
    proof = EmptinessCertificate{on_callers_rows(rows, support, y)};
    if (!check_emptiness(cell, *proof)) proof.reset();
    return proof.has_value();
  };
  if (std::optional<RationalVector> point = open_plane_cell(rows, is_empty_on, try_first)) {
    if (!is_interior(cell, *point)) return std::nullopt;
    return CellVerdict{InteriorPoint{std::move(*point)}};
  }
  if (proof) return CellVerdict{std::move(*proof)};
  return std::nullopt;  // no line's support carried the certificate: cddlib finds one
}

namespace {

// Row j's plane in a space cell of integer rows: a point on it where every row
// outside j's group is positive, or nullopt after offering Motzkin certificates
// to is_non_facet_on(support, y, mu) (mu a_j + sum_s y_s a_support[s] = 0 on the
// integer rows, y >= 0, mu c_j + sum y_s c_s <= 0), which returns true once one
// of them is accepted. is_member as in line_interval (positive multiples left
// out are recognised on the way).
//
// Row i restricted to the plane is sigma (a_js a_i - a_is a_j) (restrict_into()), so
// Gordan multipliers y on the plane give sum_i (y_i |a_js|) a_i = (sigma sum_i y_i a_is) a_j
// in space: a Motzkin certificate with the same support and no solve.
template <typename NonFacetOn>
std::optional<RationalVector> point_on_plane(const std::vector<IntegerRow>& rows, std::size_t j,
                                             const std::vector<bool>& is_member, NonFacetOn&& is_non_facet_on) {
  const IntegerRow& rep = rows[j];
  const std::size_t solved = largest_integer_entry(rep.normal);
  const Integer pivot_size = abs(rep.normal[solved]);
  const int sigma = sgn(rep.normal[solved]);
  const auto offer = [&](const std::vector<std::size_t>& support, const std::vector<Integer>& plane_y) {
    std::vector<Integer> y(plane_y.size());
    Integer mu = 0;
    for (std::size_t k = 0; k < support.size(); ++k) {
      y[k] = plane_y[k] * pivot_size;
      mu -= plane_y[k] * rows[support[k]].normal[solved];
    }
    if (sigma < 0) mu = -mu;
    return is_non_facet_on(support, y, mu);
  };
  // The plane cell the other rows leave on the plane (its first `count` rows of
  // a per-thread buffer reused between calls: these run for every constraint of
  // every thin cell); origin maps back.
  thread_local std::vector<IntegerRow> buffer;
  if (buffer.size() < rows.size()) buffer.resize(rows.size());
  std::size_t count = 0;
  std::vector<std::size_t> origin;
  origin.reserve(rows.size());
  for (std::size_t i = 0; i < rows.size(); ++i) {
    if (is_member[i]) continue;
    IntegerRow& on_plane = buffer[count];
    restrict_into(on_plane, rows[i], rep, solved);
    if (is_zero(on_plane.normal)) {
      if (sgn(on_plane.offset) > 0) continue;
      // Zero on the plane and on the same side as j: a positive multiple of j.
      if (sgn(on_plane.offset) == 0 && sgn(rows[i].normal[solved]) == sgn(rep.normal[solved])) continue;
      offer({i}, {Integer(1)});  // constant and non-positive on the plane
      return std::nullopt;
    }
    ++count;
    origin.push_back(i);
  }
  const Rows plane(buffer.data(), count);
  const auto on_support = [&](const std::vector<std::size_t>& support, const std::vector<Integer>& y) {
    std::vector<std::size_t> in_space;
    for (std::size_t k : support) in_space.push_back(origin[k]);
    return offer(in_space, y);
  };
  std::optional<RationalVector> inside =
      plane.empty() ? std::optional<RationalVector>(RationalVector(2, Rational(0))) : open_plane_cell(plane, on_support);
  if (!inside) return std::nullopt;
  RationalVector point(3);
  for (std::size_t k = 0, f = 0; k < 3; ++k)
    if (k != solved) point[k] = (*inside)[f++];
  point[solved] = 0;
  point[solved] = -row_slack(rep, point) / Rational(rep.normal[solved]);
  return point;
}

}  // namespace

std::optional<FacetVerdict> classify_group_on_plane(const Polyhedron& cell, const std::vector<std::size_t>& group) {
  return classify_group_on_plane(cell, group, integer_rows(cell));
}

std::optional<FacetVerdict> classify_group_on_plane(const Polyhedron& cell, const std::vector<std::size_t>& group,
                                                    const std::vector<IntegerRow>& rows) {
  if (cell.dim != 3 || group.empty() || !is_well_formed(cell)) return std::nullopt;
  const std::size_t j = group[0];
  std::optional<NonFacetCertificate> certificate;
  const auto is_non_facet_on = [&](std::vector<std::size_t> support, std::vector<Integer> y, const Integer& mu) {
    // The equality multiplier rides along as the last entry, then moves out.
    support.push_back(j);
    y.push_back(mu);
    RationalVector multipliers = on_callers_rows(rows, support, y);
    certificate = NonFacetCertificate{multipliers[j], std::move(multipliers)};
    certificate->multipliers[j] = 0;
    if (!check_non_facet(cell, group, *certificate)) certificate.reset();
    return certificate.has_value();
  };
  const std::optional<RationalVector> point =
      point_on_plane(rows, j, membership(cell.constraints.size(), group), is_non_facet_on);
  if (certificate) return FacetVerdict{std::move(*certificate)};
  if (!point || !is_facet_point(cell, group, *point)) return std::nullopt;
  return FacetVerdict{FacetPoint{*point}};
}

std::optional<CellVerdict> decide_open_cell_on_planes(const Polyhedron& cell,
                                                      const std::vector<std::size_t>& try_first) {
  if (cell.dim != 3 || cell.constraints.empty() || !is_well_formed(cell)) return std::nullopt;
  const std::vector<IntegerRow> rows = integer_rows(cell);
  std::optional<EmptinessCertificate> proof;
  std::vector<bool> is_member(rows.size(), false);
  for (std::size_t j : asking_order(rows.size(), try_first)) {
    // A Motzkin certificate of plane j's emptiness with mu >= 0 is a Gordan
    // certificate of the cell, j's multiplier mu (Helly: an empty open cell in
    // space has an empty sub-cell of at most four constraints).
    const auto is_empty_on = [&](std::vector<std::size_t> support, std::vector<Integer> y, const Integer& mu) {
      if (sgn(mu) < 0) return false;
      support.push_back(j);
      y.push_back(mu);
      proof = EmptinessCertificate{on_callers_rows(rows, support, y)};
      if (!check_emptiness(cell, *proof)) proof.reset();
      return proof.has_value();
    };
    is_member[j] = true;
    std::optional<RationalVector> on_plane = point_on_plane(rows, j, is_member, is_empty_on);
    is_member[j] = false;
    if (proof) return CellVerdict{std::move(*proof)};
    if (!on_plane) continue;
    std::optional<RationalVector> point = step_inside(rows, j, *on_plane);
    if (!point || !is_interior(cell, *point)) return std::nullopt;
    return CellVerdict{InteriorPoint{std::move(*point)}};
  }
  return std::nullopt;  // empty, but no plane's support carried the certificate: cddlib finds one
}

}  // namespace pleat::lp::detail
