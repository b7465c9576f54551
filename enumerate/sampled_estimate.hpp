// The usual floating-point estimate of the functional dimension (double or
// float32 parameter Jacobians at random points, numerical rank from an SVD),
// beside the certified value on the same domain, with how many regions the
// sample touched. Shared by `pleat sample` and the Python module.
//
// What is floating point here and what is not: the points, the Jacobians and
// the ranks are double or float32 (an estimate, as training code computes
// it); each point's region is decided exactly (its double coordinates are
// dyadic rationals), and the certified value comes from
// certify_functional_dimension (exact).
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/rational.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/verdict.hpp"

#include <atomic>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace pleat {

// Where the points come from: the standard normal on R^n0, or uniform on an
// open box. The domain judged against is R^n0 or that box.
struct PointDistribution {
  bool is_box = false;
  RationalVector lower, upper;  // exact box, only when is_box
  std::string name;             // names the box in messages ("--dist"), only when is_box
};

// The open box (lower_i, upper_i) as a distribution. Throws input_error
// naming `what` and the axis when some lower_i >= upper_i. Whether points in
// double (or float32) can be drawn from it is checked when sampling starts.
PointDistribution box_distribution(RationalVector lower, RationalVector upper, std::string_view what);

// The domain a sample is judged against: R^n0 for the normal, else the box.
Domain distribution_domain(const PointDistribution& dist, std::size_t input_dim);

// Numerical ranks of one stacked Jacobian from its singular values.
struct NumericalRank {
  std::size_t customary = 0;  // sigma > sigma_max * max(M, N) * eps (numpy's matrix_rank default)
  std::size_t relative_1e6 = 0;
  std::size_t relative_1e10 = 0;
  double sigma_max = 0;
};

// The stacked Jacobian is K*nd x D doubles, held about three times over; a
// batch whose matrix would exceed 25 million entries (200 MB of doubles) is
// an input_error naming `what` (the option or argument), raised before
// anything is allocated. Precondition: network.validate() passes.
void check_batch_size(std::uint64_t batch, const Network& network, std::string_view what = "--batch");

struct SampleOptions {
  std::uint64_t batch = 0;
  std::uint64_t seed = 0;
  PointDistribution dist;  // standard normal by default
  bool is_float32 = false;  // parameters, points, Jacobian and SVD in float32
  // For the certifying walk (threads, time limit, interrupt, progress). The
  // time limit covers the walk only; the interrupt also stops the sampling
  // and the search for first_batch_reaching (not an SVD under way).
  WalkOptions walk;
  std::function<void(std::uint64_t drawn)> on_point;  // before each point is drawn
  // After the last point is drawn, before the singular values (e.g. to save the points).
  std::function<void(const std::vector<RationalVector>& points)> on_points_drawn;
};

struct SampleResult {
  std::size_t batch = 0;
  // Set when the interrupt arrived while points were drawn: no rank was
  // computed and nothing below is meaningful except drawn.
  bool interrupted_while_sampling = false;
  std::uint64_t drawn = 0;
  std::vector<RationalVector> points;  // the sampled points exactly (every double is a dyadic rational)
  NumericalRank rank;
  std::size_t regions_touched = 0;  // distinct regions the points fell in, decided exactly
  std::size_t points_on_bent_hyperplanes = 0;
  FunctionalDimensionResult certified;  // a full walk (no early stop: regions_total needs every region)
  // The smallest m <= batch whose first m points give the certified value
  // (customary tolerance); none when not certified or never reached.
  std::optional<std::size_t> first_batch_reaching;
  // Set when the interrupt arrived after a certified walk, during the search
  // for first_batch_reaching (a binary search over SVDs of prefixes): it is
  // then none, not known; the rest of the result stands.
  bool interrupted_while_searching = false;
  // Why the run was cut short, for every front end: the certifying walk's
  // reason, or interrupted while searching (with a certified value then).
  StopReason stop_reason() const {
    return interrupted_while_searching ? StopReason::interrupted : certified.stop_reason;
  }
  // consistent (equal), too_low (below) or impossible (above-impossible),
  // written with sample_word; none when neither certified nor outside the
  // proved bounds.
  std::optional<Verdict> verdict;
  double seconds = 0;
};

// Draws the points, ranks the stacked Jacobian, then certifies the domain.
// Preconditions: options.batch >= 1 and check_batch_size passed. The point
// stream: words from RandomStream(seed, 0), the generator of `pleat random`;
//   normal: Box-Muller, cosine branch, in double: u1 = ((w >> 11) + 1) / 2^53
//           in (0, 1], u2 = (w' >> 11) / 2^53 in [0, 1),
//           x = sqrt(-2 log u1) cos(2 pi u2); two words per coordinate.
//   box:    u = ((w >> 11) + 1/2) / 2^53 in (0, 1), x = lo + (hi - lo) u in
//           double; a coordinate that rounds onto or outside the exact open
//           interval is drawn again (every point lies strictly inside).
// Coordinates are drawn in axis order, points one after another, so the
// first m points of batch K are the points of batch m. float32 rounds each
// coordinate to float32. The step from words to doubles uses libm, so
// points may differ in the last bit between C libraries.
// Throws input_error when a point's Jacobian in the estimate's number type
// has an infinite or NaN entry (parameters beyond float64's or float32's range).
SampleResult run_sampled_estimate(const Network& network, const SampleOptions& options);

// The verdict of a sampled rank against what certify proved (see SampleResult::verdict).
std::optional<Verdict> sample_verdict(std::size_t rank, const FunctionalDimensionResult& certified);

}  // namespace pleat
