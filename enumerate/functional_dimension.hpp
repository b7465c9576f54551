// Certified functional dimension of a network's parameter on a domain: the
// exact rank of the stacked parameter-Jacobian rows over every smooth region
// (shared/design.md, "Functional dimension").
//
// Lower bound: coefficient-block rows reduced modulo a word-size prime as the
// walk delivers regions (a rank mod p never exceeds the rank over Q). Upper
// bound: the scaling bound (every row is orthogonal to every hidden neuron's
// scaling direction), or, when the rank stays below it, an exact rational
// kernel basis checked against every region's exact rows. certified is true
// only when the two bounds meet and both are proved.
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace pleat {

// A kernel direction beyond the scaling ones, with the mechanism behind it
// when one is recognised ("dead-neuron", "always-active-neuron",
// "zero-outgoing-weights", "duplicate-neurons"; "" for none).
struct ExtraKernelDirection {
  RationalVector vector;  // length D, parameter order
  std::string mechanism;
  std::vector<std::size_t> neurons;
};

struct FunctionalDimensionOptions {
  WalkOptions walk;        // threads, limits, interrupt, progress (on_region is taken over)
  bool stop_at_scaling_bound = true;
  bool keep_rows = false;  // fill FunctionalDimensionResult::rows (exact rows of contributing regions)
};

struct FunctionalDimensionResult {
  std::size_t parametric_dimension = 0;
  std::size_t scaling_bound = 0;
  std::optional<std::size_t> functional_dimension;  // set only when certified
  std::size_t lower_bound = 0;
  std::size_t upper_bound = 0;
  bool certified = false;
  std::size_t regions_walked = 0;
  std::size_t regions_contributing = 0;
  bool walk_complete = false;
  bool early_stop = false;
  WalkSummary walk;
  std::vector<std::pair<ActivationPattern, std::vector<std::size_t>>> nonsmooth_regions;
  std::vector<ExtraKernelDirection> extra_kernel;
  RationalMatrix rows;    // with keep_rows: exact coefficient-block rows of the contributing regions
  RationalMatrix kernel;  // the exact kernel basis checked against every region (empty on early stop)
  double seconds = 0;
};

// Precondition: domain.dim == network.input_dim.
FunctionalDimensionResult certify_functional_dimension(const Network& network, const Domain& domain,
                                                       const FunctionalDimensionOptions& options);

// The exact batch functional dimension at given points: rank of the stacked
// exact Jacobians. Throws input_error naming the point (0-based) and neuron
// when a point lies on a bent hyperplane.
std::size_t batch_functional_dimension(const Network& network, const std::vector<RationalVector>& points);

// A canonical basis of span(kernel) modulo span(scaling): kernel rows reduced
// against the RREF of the scaling rows (their pivot columns cleared), then put
// in reduced row-echelon form. Depends only on the two spans. Exact.
RationalMatrix extra_kernel_basis(const RationalMatrix& kernel, const RationalMatrix& scaling);

}  // namespace pleat
