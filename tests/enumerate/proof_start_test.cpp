// The first step of certify's proof after the walk
// (enumerate/detail/proof_start.hpp): at any thread count, on a pool as
// certify lends it, the first image equals the read-off of the walk's basis
// on one thread, the check's scale equals CheckScale's, and what is built
// from the smooth patterns beside the read-off (the always-active
// generators, the live terms, the check's order) equals what the lift and
// the check build when they ask.
#include "enumerate/detail/proof_start.hpp"

#include "enumerate/detail/kernel_lift.hpp"
#include "enumerate/detail/parallel_for.hpp"

#include "core/jacobian.hpp"
#include "core/network_io.hpp"
#include "core/random_network.hpp"
#include "core/rank.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <string>
#include <vector>

namespace pleat {
namespace {

struct Walked {
  std::vector<ActivationPattern> smooth;
  ModularRowBasis basis;
};

Walked walk_into_basis(const Network& network) {
  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  Walked walked{{}, ModularRowBasis(modular.prime, network.parametric_dimension())};
  WalkOptions options;
  options.threads = 1;
  options.on_region = [&](const Region& region) {
    if (!region.nonsmooth_neurons.empty()) return true;
    walked.smooth.push_back(region.pattern);
    const ModularMatrix rows = coefficient_blocks_mod(modular, region.pattern);
    for (std::size_t r = 0; r < rows.rows(); ++r) walked.basis.add_row(rows.row(r));
    return true;
  };
  EXPECT_TRUE(walk_regions(network, make_whole_space(network.input_dim), options).complete);
  return walked;
}

TEST(ProofStart, SameImageScaleAndSmoothFactsForAnyThreadCount) {
  std::size_t never_live = 0;  // columns: the live terms' equality must see both kinds
  std::size_t generators = 0;  // and the generators' equality some
  for (const Network& network : {random_network({2, 5, 5, 5, 1}, 2), random_network({2, 6, 6, 6, 1}, 23),
                                 random_network({2, 15, 15, 15, 1}, 1),
                                 read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json")}) {
    const Walked walked = walk_into_basis(network);
    const std::vector<std::size_t>& pivots = scaling_structure(network).pivot_columns;
    const ModularMatrix expected_image = detail::extra_directions_of_rows(walked.basis.rows(), pivots,
                                                                          walked.basis.prime());
    ASSERT_GT(expected_image.rows(), 0u);
    const detail::CheckScale expected_scale(network);
    const detail::AlwaysActiveGenerators expected_generators(network, walked.smooth);
    generators += expected_generators.reduced().size();
    // Each column's own unit vector: the live terms of every column.
    detail::SparseRationalRows every_column{network.parametric_dimension(), {}};
    for (std::size_t c = 0; c < every_column.cols; ++c) every_column.rows.push_back({{c, Rational(1)}});
    const std::vector<char> expected_live = detail::live_on_some_pattern(network, every_column, walked.smooth);
    never_live += static_cast<std::size_t>(std::count(expected_live.begin(), expected_live.end(), 0));
    ASSERT_NE(std::count(expected_live.begin(), expected_live.end(), 1), 0);
    // The check's order: the states' lexicographic order as std::vector's < gives it.
    std::vector<std::size_t> expected_order(walked.smooth.size());
    for (std::size_t i = 0; i < expected_order.size(); ++i) expected_order[i] = i;
    std::sort(expected_order.begin(), expected_order.end(),
              [&](std::size_t a, std::size_t b) { return walked.smooth[a].states < walked.smooth[b].states; });
    for (unsigned threads : {1u, 2u, 3u}) {
      for (bool checks_here : {true, false}) {
        const std::string label = std::to_string(threads) + " threads" + (checks_here ? "" : ", checked elsewhere");
        const detail::LoopThreads loop_threads(threads);  // a pool lent, as in certify
        const detail::ProofStart start =
            detail::start_proof(network, walked.basis, pivots, walked.smooth, checks_here, threads);
        EXPECT_EQ(start.first_image.dense(), expected_image) << label;
        ASSERT_TRUE(start.check_scale.has_value()) << label;
        EXPECT_EQ(start.check_scale->scaled_bounds, expected_scale.scaled_bounds) << label;
        EXPECT_EQ(start.check_scale->scale, expected_scale.scale) << label;
        EXPECT_EQ(start.check_scale->lcm, expected_scale.lcm) << label;
        // Built beside the read-off only with a second thread, and only for a check here.
        const detail::SmoothFacts& facts = start.facts;
        const bool is_built = threads > 1 && checks_here;
        ASSERT_EQ(facts.generators.has_value(), is_built) << label;
        ASSERT_EQ(facts.live_terms.has_value(), is_built) << label;
        ASSERT_EQ(facts.check_order.has_value(), is_built) << label;
        if (!is_built) continue;
        EXPECT_EQ(facts.generators->reduced(), expected_generators.reduced()) << label;
        EXPECT_EQ(facts.live_terms->of(every_column), expected_live) << label;
        EXPECT_EQ(*facts.check_order, expected_order) << label;
      }
    }
  }
  EXPECT_GT(never_live, 0u);
  EXPECT_GT(generators, 0u);
}

}  // namespace
}  // namespace pleat
