#include "enumerate/detail/region_processor.hpp"

#include "core/errors.hpp"
#include "core/jacobian.hpp"
#include "enumerate/detail/crossing.hpp"
#include "enumerate/detail/integer_maps.hpp"
#include "enumerate/detail/walk_helpers.hpp"
#include "enumerate/pattern_cell.hpp"
#include "lp/plane_cell.hpp"
#include "lp/space_cell.hpp"

#include <algorithm>
#include <array>
#include <span>
#include <variant>

namespace pleat::detail {
namespace {

// Scales (normal, offset) by one positive factor so that the normal becomes a
// primitive integer vector.
void make_primitive(RationalVector& normal, Rational& offset) {
  Integer denominators_lcm = 1;
  for (const auto& v : normal) mpz_lcm(denominators_lcm.get_mpz_t(), denominators_lcm.get_mpz_t(), v.get_den_mpz_t());
  Integer numerators_gcd = 0;
  for (const auto& v : normal) {
    Integer scaled = v.get_num() * (denominators_lcm / v.get_den());
    mpz_gcd(numerators_gcd.get_mpz_t(), numerators_gcd.get_mpz_t(), scaled.get_mpz_t());
  }
  const Rational factor = Rational(denominators_lcm) / Rational(numerators_gcd);
  for (auto& v : normal) v *= factor;
  offset *= factor;
}

// The open cone of a candidate's cell at a point q of its closure: the
// constraints that vanish at q, made homogeneous. The candidate touches q with
// interior iff this cone has interior.
lp::Polyhedron tangent_cone_at(const lp::Polyhedron& cell, const RationalVector& q) {
  lp::Polyhedron cone{cell.dim, {}};
  for (const auto& c : cell.constraints)
    if (dot(c.normal, q) + c.offset == 0) cone.constraints.push_back(lp::Constraint{c.normal, Rational(0)});
  return cone;
}


// A region's exact rational maps and their double images, for the rare
// crossings the integer maps cannot decide (fast paths only: never exact-only).
struct RationalMaps {
  PatternMaps maps;
  MapImages images;
};

}  // namespace

class RegionProcessor::Impl {
 public:
  Impl(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only,
       bool is_plane_path_allowed)
      : network_(network),
        domain_(domain),
        keep_certificates_(keep_certificates),
        exact_only_(exact_only),
        layers_(integer_layers(network)),
        oracle_(lp::FilterTolerances{.exact_only = exact_only}) {
    const std::size_t n = network.input_dim;
    is_plane_path_ = n == 2 && !exact_only && is_plane_path_allowed;
    is_space_path_ = n == 3 && !exact_only && is_plane_path_allowed;
    if (!is_plane_path_ && !is_space_path_) return;
    layer_maps_.emplace(network, layers_);
    for (const lp::Constraint& side : domain.constraints) {
      // Scaled by the denominators' lcm: the same half-space with integer coefficients.
      Integer scale = 1;
      for (const Rational& value : side.normal) mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), value.get_den_mpz_t());
      mpz_lcm(scale.get_mpz_t(), scale.get_mpz_t(), side.offset.get_den_mpz_t());
      const auto scaled = [&](const Rational& value) { return Integer(value.get_num() * (scale / value.get_den())); };
      if (n == 2) {
        domain_rows_.push_back(lp::PlaneRow{scaled(side.normal[0]), scaled(side.normal[1]), scaled(side.offset)});
      } else {
        domain_space_rows_.push_back(
            lp::SpaceRow{{scaled(side.normal[0]), scaled(side.normal[1]), scaled(side.normal[2])}, scaled(side.offset)});
      }
    }
  }

  Processed process(const ActivationPattern& pattern) {
    if (pattern.states.size() != network_.relu_neuron_count())
      throw usage_error("build_pattern_cell: pattern has the wrong number of neurons");
    if (is_plane_path_)
      if (std::optional<Processed> result = process_in_plane(pattern)) return std::move(*result);
    if (is_space_path_)
      if (std::optional<Processed> result = process_in_space(pattern)) return std::move(*result);
    return process_with_oracle(pattern);
  }

  lp::QueryCounts counts() const {
    lp::QueryCounts total = oracle_.counts();
    total += plane_counts_;
    return total;
  }

 private:
  // The general path: rational cell, lp::Oracle queries (any dimension).
  Processed process_with_oracle(const ActivationPattern& pattern) {
    Processed result;
    auto cell = build_cell(pattern);
    if (!cell) return result;
    auto centre = oracle_.find_centre(cell->cell, Rational(1));
    auto* interior = std::get_if<lp::InteriorPoint>(&centre);
    if (!interior) return result;
    result.is_region = true;
    Region& region = result.region;
    region.pattern = pattern;
    region.interior = *interior;
    region.affine = cell->maps.output;
    lp::FacetClassification classification = oracle_.classify_facets(cell->cell, *interior, keep_certificates_);
    std::optional<MapImages> images;
    region.facets.reserve(static_cast<std::size_t>(std::count_if(
        classification.groups.begin(), classification.groups.end(), [](const lp::FacetGroup& g) { return g.is_facet(); })));
    for (const auto& group : classification.groups) {
      if (!group.is_facet()) continue;
      region.facets.push_back(make_facet(*cell, pattern, group, images, result.degenerate_crossings));
      if (region.facets.back().domain_side) region.touches_domain_boundary = true;
    }
    std::optional<lp::BoundednessVerdict> boundedness = decide_boundedness(*cell, region.bounded);
    if (has_zero_on_region(pattern)) region.nonsmooth_neurons = nonsmooth_neurons(network_, pattern);
    if (keep_certificates_)
      region.certificates = RegionCertificates{cell->cell, cell->constraint_neuron, std::move(classification),
                                               std::move(boundedness)};
    return result;
  }

  // ---- the plane path (2 inputs, not exact only) -----------------------------
  //
  // Integer layer maps (fraction-free, buffers reused between regions), the
  // cell as integer rows, lp::describe_plane_cell (polygon proposes, exact
  // signs prove), crossings decided on the integer maps. Whatever it cannot
  // prove (nullopt) goes to process_with_oracle, which decides everything.

  // Row i of a pre-activation map as a cell row, negated for a neuron that is off.
  static void set_row(lp::PlaneRow& row, const IntegerMap& pre, std::size_t i, bool negate) {
    row.a0 = pre.linear[i * 2];
    row.a1 = pre.linear[i * 2 + 1];
    row.c = pre.offset[i];
    if (!negate) return;
    for (Integer* value : {&row.a0, &row.a1, &row.c}) mpz_neg(value->get_mpz_t(), value->get_mpz_t());
  }
  static void set_row(lp::SpaceRow& row, const IntegerMap& pre, std::size_t i, bool negate) {
    for (std::size_t c = 0; c < 3; ++c) row.a[c] = pre.linear[i * 3 + c];
    row.c = pre.offset[i];
    if (!negate) return;
    for (Integer* value : {&row.a[0], &row.a[1], &row.a[2], &row.c}) mpz_neg(value->get_mpz_t(), value->get_mpz_t());
  }

  // The cell's rows (neurons, then domain sides) from pre_, as cell_from_maps
  // builds them; false when the pattern is inconsistent with its maps.
  template <class Row>
  bool build_rows(const ActivationPattern& pattern, std::vector<Row>& rows, const std::vector<Row>& domain_rows) {
    std::size_t count = 0;
    row_neuron_.clear();
    for (std::size_t k = 0; k < relu_layers(network_); ++k) {
      const IntegerMap& pre = (*pre_)[k];
      const std::size_t first = network_.first_neuron_of_layer(k);
      for (std::size_t i = 0; i < pre.rows; ++i) {
        const NeuronState state = pattern.states[first + i];
        const bool zero_linear = is_zero_linear(pre, i);
        const bool identically_zero = zero_linear && sgn(pre.offset[i]) == 0;
        if (state == NeuronState::zero_at_point) throw usage_error("build_pattern_cell: '=' is not a region state");
        if (state == NeuronState::zero_on_region) {
          if (!identically_zero) return false;
          continue;
        }
        if (identically_zero) return false;
        const int sign = state == NeuronState::on ? 1 : -1;
        if (zero_linear) {
          if (sign * sgn(pre.offset[i]) > 0) continue;
          return false;
        }
        if (rows.size() <= count) rows.resize(count + 1);
        set_row(rows[count++], pre, i, sign < 0);
        row_neuron_.push_back(first + i);
      }
    }
    neuron_rows_ = count;
    rows.resize(count);
    rows.insert(rows.end(), domain_rows.begin(), domain_rows.end());
    return true;
  }

  std::optional<Processed> process_in_plane(const ActivationPattern& pattern) {
    pre_ = &layer_maps_->compute(pattern);
    if (!build_rows(pattern, rows_, domain_rows_)) return Processed{};  // not a region (as process_with_oracle says)
    if (rows_.empty()) return std::nullopt;  // the whole plane: the general path
    std::optional<lp::PlaneCell> plane = lp::describe_plane_cell(rows_);
    if (!plane) return std::nullopt;
    Processed result;
    Region& region = result.region;
    region.pattern = pattern;
    // Boundedness on the neuron rows (as a subset of R^2): proved with the
    // polygon when they are all the rows (no domain sides).
    std::optional<bool> bounded = false;
    if (neuron_rows_ > 0) {
      bounded = neuron_rows_ == rows_.size() && plane->bounded
                    ? plane->bounded
                    : lp::is_plane_cell_bounded(std::span<const lp::PlaneRow>(rows_.data(), neuron_rows_));
      if (!bounded) return std::nullopt;
    }
    region.bounded = *bounded;
    region.interior.point = plane->interior;
    region.affine = output_map(pattern);
    std::optional<RationalMaps> rational_maps;  // only for degenerate crossings
    // Reserved: RegionFacet's move is not noexcept (gmpxx), so growth would copy.
    region.facets.reserve(static_cast<std::size_t>(
        std::count_if(plane->groups.begin(), plane->groups.end(), [](const lp::PlaneGroup& g) { return g.is_facet; })));
    for (lp::PlaneGroup& group : plane->groups) {
      if (!group.is_facet) continue;
      const lp::PlaneRow& row = rows_[group.rows.front()];
      const std::array<const Integer*, 2> normal{&row.a0, &row.a1};
      RegionFacet facet =
          integer_facet(pattern, group.rows, facet_point_of(group), normal, row.c, rational_maps, result.degenerate_crossings);
      if (facet.domain_side) region.touches_domain_boundary = true;
      region.facets.push_back(std::move(facet));
    }
    if (has_zero_on_region(pattern)) region.nonsmooth_neurons = nonsmooth_neurons(network_, pattern);
    if (keep_certificates_ && !attach_plane_certificates(pattern, *plane, region)) return std::nullopt;
    // Counted as the general path counts: the centre, one per group, boundedness.
    const std::uint64_t queries = 1 + plane->groups.size() + (neuron_rows_ > 0 && !keep_certificates_ ? 1 : 0);
    plane_counts_.lp_queries += queries;
    plane_counts_.filter_settled += queries;
    result.is_region = true;
    return result;
  }

  // ---- the space path (3 inputs, not exact only) ----------------------------
  //
  // As the plane path, with lp::describe_space_cell (a clipped polytope
  // proposes, exact signs and determinants prove); boundedness comes with it.

  std::optional<Processed> process_in_space(const ActivationPattern& pattern) {
    pre_ = &layer_maps_->compute(pattern);
    if (!build_rows(pattern, space_rows_, domain_space_rows_)) return Processed{};  // not a region
    if (space_rows_.empty()) return std::nullopt;  // the whole space: the general path
    std::optional<lp::SpaceCell> space = lp::describe_space_cell(space_rows_, neuron_rows_);
    if (!space || (neuron_rows_ > 0 && !space->bounded)) return std::nullopt;
    Processed result;
    Region& region = result.region;
    region.pattern = pattern;
    region.bounded = neuron_rows_ > 0 && *space->bounded;
    region.interior.point = space->interior;
    region.affine = output_map(pattern);
    std::optional<RationalMaps> rational_maps;  // only for degenerate crossings
    region.facets.reserve(static_cast<std::size_t>(
        std::count_if(space->groups.begin(), space->groups.end(), [](const lp::SpaceGroup& g) { return g.is_facet; })));
    for (lp::SpaceGroup& group : space->groups) {
      if (!group.is_facet) continue;
      const lp::SpaceRow& row = space_rows_[group.rows.front()];
      const std::array<const Integer*, 3> normal{&row.a[0], &row.a[1], &row.a[2]};
      RegionFacet facet =
          integer_facet(pattern, group.rows, facet_point_of(group), normal, row.c, rational_maps, result.degenerate_crossings);
      if (facet.domain_side) region.touches_domain_boundary = true;
      region.facets.push_back(std::move(facet));
    }
    if (has_zero_on_region(pattern)) region.nonsmooth_neurons = nonsmooth_neurons(network_, pattern);
    if (keep_certificates_ && !attach_space_certificates(pattern, *space, region)) return std::nullopt;
    // Counted as the general path counts: the centre, one per group, boundedness.
    const std::uint64_t queries = 1 + space->groups.size() + (neuron_rows_ > 0 && !keep_certificates_ ? 1 : 0);
    plane_counts_.lp_queries += queries;
    plane_counts_.filter_settled += queries;
    result.is_region = true;
    return result;
  }

  // With --certificates: the rational cell and the certificates of the space
  // path's verdicts (the same points, multipliers from its supports).
  bool attach_space_certificates(const ActivationPattern& pattern, const lp::SpaceCell& space, Region& region) {
    return attach_fast_path_certificates(pattern, space_rows_.size(), space.groups, region,
                                         [](const lp::Polyhedron& cell, const lp::SpaceGroup& group) {
                                           return lp::space_redundancy_certificate(cell, group.rows.front(),
                                                                                   group.support);
                                         });
  }

  // The network's output map on the region, exact.
  AffineMap output_map(const ActivationPattern& pattern) const {
    const IntegerMap& last = pre_->back();
    if (!layers_.back().is_relu) return to_rational_map(last);
    IntegerMap out = last;
    const std::size_t first = network_.relu_neuron_count() - last.rows;
    for (std::size_t r = 0; r < out.rows; ++r) {
      if (pattern.states[first + r] == NeuronState::on) continue;
      for (std::size_t c = 0; c < out.cols; ++c) out.linear[r * out.cols + c] = 0;
      out.offset[r] = 0;
    }
    return to_rational_map(out);
  }

  // By neuron id: the neurons of the facet group's rows (they vanish at its point).
  const std::vector<char>& vanishing_at(const std::vector<std::size_t>& group_rows) {
    vanishing_.assign(network_.relu_neuron_count(), 0);
    for (std::size_t c : group_rows)
      if (c < neuron_rows_) vanishing_[row_neuron_[c]] = 1;
    return vanishing_;
  }

  // A facet group's exact point for its RegionFacet: moved out of the group
  // unless the certificates, attached afterwards, still read it.
  template <class Group>
  RationalVector facet_point_of(Group& group) const {
    return keep_certificates_ ? group.point : std::move(group.point);
  }

  // A facet of the integer-row paths: its neurons or domain side, its
  // primitive normal, and the neighbour across it at `point`. normal and
  // offset are the group representative's row.
  RegionFacet integer_facet(const ActivationPattern& pattern, const std::vector<std::size_t>& group_rows,
                            RationalVector point, std::span<const Integer* const> normal, const Integer& offset,
                            std::optional<RationalMaps>& rational_maps, std::size_t& degenerate_crossings) {
    RegionFacet facet;
    for (std::size_t c : group_rows) {
      if (c < neuron_rows_) facet.neurons.push_back(row_neuron_[c]);
      else if (!facet.domain_side) facet.domain_side = c - neuron_rows_;
    }
    std::sort(facet.neurons.begin(), facet.neurons.end());
    Integer divisor = 0;
    for (const Integer* value : normal) mpz_gcd(divisor.get_mpz_t(), divisor.get_mpz_t(), value->get_mpz_t());
    for (const Integer* value : normal) facet.normal.push_back(Rational(*value / divisor));
    facet.offset = Rational(offset, divisor);
    facet.offset.canonicalize();
    facet.relative_interior.point = std::move(point);
    if (facet.domain_side) return facet;
    std::vector<ActivationPattern> candidates;
    if (std::optional<ActivationPattern> far = pattern_across_in_integers(network_, *pre_, pattern, vanishing_at(group_rows), normal)) {
      candidates.push_back(std::move(*far));
    } else {
      if (!rational_maps) {  // once per region, for all its degenerate crossings
        PatternMaps maps = maps_on_pattern_fraction_free(layers_, network_.input_dim, pattern);
        MapImages images = map_images(network_, maps);
        rational_maps = RationalMaps{std::move(maps), std::move(images)};
      }
      RationalVector row_normal, direction;
      for (const Integer* value : normal) {
        row_normal.push_back(Rational(*value));
        direction.push_back(Rational(-*value));
      }
      candidates = patterns_across_filtered(network_, pattern, rational_maps->maps, &rational_maps->images,
                                            facet.relative_interior.point, direction, row_normal);
    }
    name_neighbors(facet, std::move(candidates), degenerate_crossings);
    return facet;
  }

  // With --certificates: the rational cell and the certificates of the plane
  // path's verdicts (the same points, multipliers from its supports).
  bool attach_plane_certificates(const ActivationPattern& pattern, const lp::PlaneCell& plane, Region& region) {
    return attach_fast_path_certificates(pattern, rows_.size(), plane.groups, region,
                                         [](const lp::Polyhedron& cell, const lp::PlaneGroup& group) {
                                           return lp::plane_redundancy_certificate(cell, group.rows.front(),
                                                                                   group.support[0], group.support[1]);
                                         });
  }

  // Shared by the plane and space paths: the rational cell of the pattern
  // (row_count rows, in the fast path's order), a facet point per facet group,
  // certify_non_facet's multipliers per other group, and the boundedness
  // certificate, which must agree with the fast path's verdict. False when
  // any of it cannot be given (the caller then takes the oracle path).
  template <class Group, class CertifyNonFacet>
  bool attach_fast_path_certificates(const ActivationPattern& pattern, std::size_t row_count,
                                     const std::vector<Group>& groups, Region& region,
                                     CertifyNonFacet&& certify_non_facet) {
    std::optional<PatternCell> cell = build_cell(pattern);
    if (!cell || cell->cell.constraints.size() != row_count) return false;
    lp::FacetClassification classification;
    for (const Group& group : groups) {
      if (group.is_facet) {
        classification.groups.push_back(lp::FacetGroup{group.rows, lp::FacetPoint{group.point}});
        continue;
      }
      std::optional<lp::NonFacetCertificate> certificate = certify_non_facet(cell->cell, group);
      if (!certificate) return false;
      classification.groups.push_back(lp::FacetGroup{group.rows, std::move(*certificate)});
    }
    bool bounded = false;
    std::optional<lp::BoundednessVerdict> boundedness = decide_boundedness(*cell, bounded);
    if (bounded != region.bounded) return false;
    region.certificates = RegionCertificates{std::move(cell->cell), std::move(cell->constraint_neuron),
                                             std::move(classification), std::move(boundedness)};
    return true;
  }

  static bool has_zero_on_region(const ActivationPattern& pattern) {
    return std::any_of(pattern.states.begin(), pattern.states.end(),
                       [](NeuronState s) { return s == NeuronState::zero_on_region; });
  }

  // Boundedness as a subset of R^n0: the neuron constraints only.
  std::optional<lp::BoundednessVerdict> decide_boundedness(const PatternCell& cell, bool& bounded) {
    lp::Polyhedron neurons_only{cell.cell.dim, {}};
    for (std::size_t i = 0; i < cell.cell.constraints.size(); ++i)
      if (cell.constraint_neuron[i] != no_index) neurons_only.constraints.push_back(cell.cell.constraints[i]);
    if (neurons_only.constraints.empty()) {  // all of R^n0: any direction recedes
      bounded = false;
      RationalVector direction(cell.cell.dim, Rational(0));
      direction[0] = 1;
      return lp::BoundednessVerdict{lp::RecessionDirection{direction}};
    }
    auto verdict = oracle_.decide_boundedness(neurons_only);
    bounded = std::holds_alternative<lp::BoundednessCertificate>(verdict);
    return verdict;
  }

  RegionFacet make_facet(const PatternCell& cell, const ActivationPattern& pattern, const lp::FacetGroup& group,
                         std::optional<MapImages>& images, std::size_t& degenerate_crossings) {
    RegionFacet facet;
    for (std::size_t c : group.constraints) {
      if (cell.constraint_neuron[c] != no_index) facet.neurons.push_back(cell.constraint_neuron[c]);
      else if (!facet.domain_side) facet.domain_side = cell.constraint_domain_side[c];
    }
    std::sort(facet.neurons.begin(), facet.neurons.end());
    const lp::Constraint& representative = cell.cell.constraints[group.constraints.front()];
    facet.normal = representative.normal;
    facet.offset = representative.offset;
    make_primitive(facet.normal, facet.offset);
    facet.relative_interior = std::get<lp::FacetPoint>(group.verdict);
    if (facet.domain_side) return facet;  // the far side is outside the domain

    RationalVector direction = representative.normal;
    for (auto& v : direction) v = -v;
    // The maps' double images, once per region, unless every sign must be exact.
    if (!exact_only_ && !images) images = map_images(network_, cell.maps);
    name_neighbors(facet, patterns_across_filtered(network_, pattern, cell.maps, images ? &*images : nullptr,
                                                    facet.relative_interior.point, direction, representative.normal),
                    degenerate_crossings);
    return facet;
  }

  // The facet's neighbour(s) from the far-side candidates at its point: of
  // several (a degenerate crossing, counted), those with interior next to it.
  void name_neighbors(RegionFacet& facet, std::vector<ActivationPattern> candidates,
                       std::size_t& degenerate_crossings) {
    if (candidates.size() > 1) {
      ++degenerate_crossings;
      candidates = keep_touching(candidates, facet.relative_interior.point);
    }
    if (!candidates.empty()) {
      facet.neighbor = candidates.front();
      facet.other_neighbors.assign(candidates.begin() + 1, candidates.end());
    }
  }

  // Of several far-side candidates at q, those whose cell has interior next to q.
  std::vector<ActivationPattern> keep_touching(const std::vector<ActivationPattern>& candidates,
                                               const RationalVector& q) {
    std::vector<ActivationPattern> kept;
    for (const auto& candidate : candidates) {
      auto cell = build_cell(candidate);
      if (!cell) continue;
      lp::Polyhedron cone = tangent_cone_at(cell->cell, q);
      if (cone.constraints.empty() ||
          std::holds_alternative<lp::InteriorPoint>(oracle_.decide_open_cell(cone)))
        kept.push_back(candidate);
    }
    return kept;
  }

  // build_pattern_cell, with the maps computed fraction-free.
  std::optional<PatternCell> build_cell(const ActivationPattern& pattern) const {
    if (pattern.states.size() != network_.relu_neuron_count())
      throw usage_error("build_pattern_cell: pattern has the wrong number of neurons");
    return cell_from_maps(network_, domain_, pattern,
                          maps_on_pattern_fraction_free(layers_, network_.input_dim, pattern));
  }

  const Network& network_;
  const Domain& domain_;
  bool keep_certificates_;
  bool exact_only_;  // no double filter anywhere, the signs at crossings included
  std::vector<IntegerLayer> layers_;
  lp::Oracle oracle_;
  // The plane path's state (buffers reused between regions).
  bool is_plane_path_ = false;
  std::vector<lp::PlaneRow> domain_rows_;  // the domain's sides as integer rows
  std::optional<PatternLayerMaps> layer_maps_;  // the fast paths' integer maps
  const std::vector<IntegerMap>* pre_ = nullptr;  // this region's pre-activation maps (in layer_maps_)
  std::vector<lp::PlaneRow> rows_;         // this region's cell: neurons, then domain sides
  std::vector<std::size_t> row_neuron_;    // neuron id per neuron row
  std::size_t neuron_rows_ = 0;
  std::vector<char> vanishing_;            // by neuron id: in the facet being crossed
  // The space path's state (3 inputs).
  bool is_space_path_ = false;
  std::vector<lp::SpaceRow> domain_space_rows_;
  std::vector<lp::SpaceRow> space_rows_;
  lp::QueryCounts plane_counts_;
};

RegionProcessor::RegionProcessor(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only,
                                 bool is_plane_path_allowed)
    : impl_(std::make_unique<Impl>(network, domain, keep_certificates, exact_only, is_plane_path_allowed)) {}
RegionProcessor::~RegionProcessor() = default;
Processed RegionProcessor::process(const ActivationPattern& pattern) { return impl_->process(pattern); }
lp::QueryCounts RegionProcessor::counts() const { return impl_->counts(); }

}  // namespace pleat::detail
