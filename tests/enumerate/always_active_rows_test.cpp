// Rows of certify's extra directions proved from neurons on in every region
// (enumerate/detail/always_active_rows.hpp). On the benchmark network
// 2,15,15,15,15,1 (seed 1: neurons on in every region in two layers, and
// dense extra directions with entries of hundreds of bits), some rows are
// proved that way; each of them does annihilate every smooth region (the
// check, a different method, on those rows alone); the same rows changed in
// one entry are never proved; and a network with no such neurons proves none.
#include "enumerate/detail/always_active_rows.hpp"

#include "core/jacobian.hpp"
#include "core/stop.hpp"
#include "core/random_network.hpp"
#include "core/rank.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <optional>
#include <vector>

namespace pleat::detail {
namespace {

struct Certified {
  std::vector<ActivationPattern> smooth;
  SparseRationalRows extra;
};

// The certified extra directions (the rows after the scaling ones in the
// kept kernel) and every smooth pattern.
Certified certified(const Network& network) {
  FunctionalDimensionOptions options;
  options.walk.threads = 1;
  options.keep_kernel = true;
  const FunctionalDimensionResult result =
      certify_functional_dimension(network, make_whole_space(network.input_dim), options);
  EXPECT_TRUE(result.certified);
  Certified out;
  RationalMatrix extra(0, result.kernel.cols());
  for (std::size_t r = result.kernel.rows() - result.extra_kernel.size(); r < result.kernel.rows(); ++r)
    extra.append_row(result.kernel.row(r));
  out.extra = SparseRationalRows::from_dense(extra);
  WalkOptions walk;
  walk.threads = 1;
  walk.on_region = [&](const Region& region) {
    if (region.nonsmooth_neurons.empty()) out.smooth.push_back(region.pattern);
    return true;
  };
  EXPECT_TRUE(walk_regions(network, make_whole_space(network.input_dim), walk).complete);
  return out;
}

std::vector<std::size_t> rows_with_at_least(const SparseRationalRows& rows, std::size_t entries) {
  std::vector<std::size_t> out;
  for (std::size_t r = 0; r < rows.rows.size(); ++r)
    if (rows.rows[r].size() >= entries) out.push_back(r);
  return out;
}

// certify's plan for the certified rows of 8 or more entries, from their
// image modulo the walk's prime.
AlwaysActivePlan plan_for(const Network& network, const Certified& state) {
  const std::uint64_t prime = primary_prime();
  ModularMatrix image(state.extra.rows.size(), state.extra.cols);
  for (std::size_t r = 0; r < state.extra.rows.size(); ++r)
    for (const auto& [c, value] : state.extra.rows[r]) image(r, c) = *reduce_modulo(value, prime);
  return AlwaysActivePlan(AlwaysActiveGenerators(network, state.smooth), SparseModularRows::from_dense(image),
                          rows_with_at_least(state.extra, 8));
}

TEST(AlwaysActiveRows, ProvedRowsAnnihilateEveryRegionAndChangedRowsAreNotProved) {
  const Network network = random_network({2, 15, 15, 15, 15, 1}, 1);
  const Certified state = certified(network);
  const std::vector<std::size_t> heavy = rows_with_at_least(state.extra, 8);
  const AlwaysActiveGenerators generators(network, state.smooth);
  const std::vector<char> proved = rows_proved_by_always_active(generators, state.extra, heavy);
  SparseRationalRows proved_rows{state.extra.cols, {}};
  for (std::size_t r = 0; r < proved.size(); ++r) {
    if (!proved[r]) continue;
    EXPECT_NE(std::find(heavy.begin(), heavy.end(), r), heavy.end()) << "row " << r << " was not offered";
    proved_rows.rows.push_back(state.extra.rows[r]);
  }
  ASSERT_GE(proved_rows.rows.size(), 1u);
  const CheckScale scale(network);
  const AnnihilationCheck check(network, proved_rows, scale);
  for (const ActivationPattern& pattern : state.smooth) ASSERT_TRUE(check.annihilates(pattern));
  // Each proved row changed in one entry (its last): not proved.
  for (std::size_t r = 0; r < proved.size(); ++r) {
    if (!proved[r]) continue;
    SparseRationalRows changed = state.extra;
    changed.rows[r].back().second += Rational(1, 3);
    EXPECT_FALSE(rows_proved_by_always_active(generators, changed, heavy)[r]) << "row " << r;
  }
}

// Before the lift: the plan's rows, computed from the generators and the
// other rows (fill), equal the certified rows exactly; with a row the plan
// needs missing, fill reports it.
TEST(AlwaysActiveRows, PlannedRowsFilledFromTheOthersEqualTheCertifiedRows) {
  const Network network = random_network({2, 15, 15, 15, 15, 1}, 1);
  const Certified state = certified(network);
  const AlwaysActivePlan plan = plan_for(network, state);
  ASSERT_GE(plan.rows().size(), 1u);
  std::vector<std::optional<SparseRationalRows::Row>> rows(state.extra.rows.begin(), state.extra.rows.end());
  for (std::size_t b : plan.rows()) rows[b].reset();
  std::vector<std::optional<SparseRationalRows::Row>> missing = rows;
  ASSERT_TRUE(plan.fill(rows));
  for (std::size_t r = 0; r < rows.size(); ++r) {
    ASSERT_TRUE(rows[r].has_value()) << "row " << r;
    EXPECT_EQ(*rows[r], state.extra.rows[r]) << "row " << r;
  }
  // A row outside the plan that its generators use, removed: no fill.
  for (std::size_t r = 0; r < missing.size(); ++r)
    if (missing[r] && missing[r]->size() > 1) {
      std::vector<std::optional<SparseRationalRows::Row>> without = missing;
      without[r].reset();
      if (!plan.fill(without)) return;  // reported
    }
  ADD_FAILURE() << "no row outside the plan is needed by its generators";
}

// certify spares the plan's filled rows B from the check by construction
// (extra_proof.cpp): each is a combination of generators (annihilating
// every region) and of the rows outside B, which are checked. So the rows
// outside B and the filled rows pass the check on every smooth region; and
// with a row outside B that the generators use changed in one entry before
// the fill, the check of the rows outside B (all certify checks of such a
// candidate) rejects a region, although the filled rows are then wrong too.
TEST(AlwaysActiveRows, FilledRowsFollowFromTheCheckedRowsAndAChangedOneIsRejected) {
  const Network network = random_network({2, 15, 15, 15, 15, 1}, 1);
  const Certified state = certified(network);
  const AlwaysActivePlan plan = plan_for(network, state);
  ASSERT_GE(plan.rows().size(), 1u);
  const CheckScale scale(network);
  std::vector<char> in_plan(state.extra.rows.size(), 0);
  for (std::size_t b : plan.rows()) in_plan[b] = 1;
  // Filled from the given rows: (the rows outside B, the filled rows B).
  auto filled = [&](const std::vector<std::optional<SparseRationalRows::Row>>& given) {
    std::vector<std::optional<SparseRationalRows::Row>> rows = given;
    for (std::size_t b : plan.rows()) rows[b].reset();
    EXPECT_TRUE(plan.fill(rows));
    std::pair<SparseRationalRows, SparseRationalRows> out{{state.extra.cols, {}}, {state.extra.cols, {}}};
    for (std::size_t r = 0; r < rows.size(); ++r) (in_plan[r] ? out.second : out.first).rows.push_back(*rows[r]);
    return out;
  };
  auto first_rejected = [&](const SparseRationalRows& rows) {
    const AnnihilationCheck check(network, rows, scale);
    bool stopped = false;
    return first_rejected_pattern(check, state.smooth, 1, StopRequest(), stopped, nullptr);
  };
  const std::vector<std::optional<SparseRationalRows::Row>> rows(state.extra.rows.begin(), state.extra.rows.end());
  const auto [outside, inside] = filled(rows);
  EXPECT_FALSE(first_rejected(outside).has_value());
  EXPECT_FALSE(first_rejected(inside).has_value());
  std::size_t changed = 0;
  for (std::size_t r = 0; r < rows.size() && changed < 3; ++r) {
    if (in_plan[r] || rows[r]->size() < 2) continue;
    std::vector<std::optional<SparseRationalRows::Row>> without = rows;
    for (std::size_t b : plan.rows()) without[b].reset();
    without[r].reset();
    if (plan.fill(without)) continue;  // not used by the plan's generators
    std::vector<std::optional<SparseRationalRows::Row>> wrong = rows;
    wrong[r]->back().second += Rational(1, 3);
    const auto [wrong_outside, wrong_inside] = filled(wrong);
    EXPECT_NE(wrong_inside.rows, inside.rows) << "row " << r;
    EXPECT_TRUE(first_rejected(wrong_outside).has_value()) << "row " << r;
    ++changed;
  }
  EXPECT_GE(changed, 1u);
}

// Every shift and mix generator of the neurons on in every region keeps
// its place (none is dropped for want of its scaling part), is 0 at the
// scaling pivots and, less that part, still annihilates every smooth
// region's rows.
TEST(AlwaysActiveRows, EveryGeneratorLosesItsScalingPartAndAnnihilatesEveryRegion) {
  const Network network = random_network({2, 15, 15, 15, 15, 1}, 1);
  const Certified state = certified(network);
  std::size_t expected = 0;
  for (std::size_t k = 0, n = 0; k + 1 < network.depth(); ++k) {
    std::size_t always_on = 0;
    for (std::size_t i = 0; i < network.layers[k].width(); ++i, ++n)
      always_on += std::all_of(state.smooth.begin(), state.smooth.end(),
                               [&](const ActivationPattern& pattern) { return pattern.is_on(n); });
    expected += always_on * always_on;  // a shift each, a mix for each ordered pair
  }
  ASSERT_GE(expected, 2u);
  const AlwaysActiveGenerators generators(network, state.smooth);
  ASSERT_EQ(generators.reduced().size(), std::min<std::size_t>(expected, 256));
  SparseRationalRows rows{network.parametric_dimension(), {}};
  for (const auto& generator : generators.reduced()) {
    for (std::size_t q : scaling_structure(network).pivot_columns) EXPECT_EQ(generator.count(q), 0u) << q;
    rows.rows.emplace_back(generator.begin(), generator.end());
  }
  const AnnihilationCheck check(network, rows, CheckScale(network));
  for (const ActivationPattern& pattern : state.smooth) ASSERT_TRUE(check.annihilates(pattern));
}

TEST(AlwaysActiveRows, NoNeuronOnInEveryRegionProvesNothing) {
  const Network network = random_network({2, 4, 3, 1}, 11);
  const Certified state = certified(network);
  std::vector<std::size_t> all(state.extra.rows.size());
  for (std::size_t r = 0; r < all.size(); ++r) all[r] = r;
  // A pattern with every neuron off joins the smooth ones: no neuron is on
  // in all of them.
  std::vector<ActivationPattern> with_all_off = state.smooth;
  with_all_off.push_back(ActivationPattern{std::vector<NeuronState>(network.relu_neuron_count(), NeuronState::off)});
  const std::vector<char> proved =
      rows_proved_by_always_active(AlwaysActiveGenerators(network, with_all_off), state.extra, all);
  EXPECT_EQ(std::count(proved.begin(), proved.end(), 1), 0);
}

}  // namespace
}  // namespace pleat::detail
