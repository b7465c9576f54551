// The pieces of certify's lift of the extra kernel directions
// (enumerate/detail/kernel_lift.hpp): the exact p-adic solve of the kept rows'
// square system and the row-by-row multi-modular lift must both give the
// canonical extra directions of the exact kernel of every smooth region's
// rows (kernel_basis_exact, then extra_kernel_basis: independent exact
// elimination), and the lift must not prove an altered candidate.
#include "enumerate/detail/kernel_lift.hpp"

#include "enumerate/detail/check_basis.hpp"
#include "enumerate/detail/integer_check.hpp"

#include "core/jacobian.hpp"
#include "core/network_io.hpp"
#include "core/random_network.hpp"
#include "core/rank.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/walker.hpp"

#include <flint/fmpq.h>
#include <flint/fmpz.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <optional>
#include <random>
#include <string>
#include <utility>
#include <vector>

namespace pleat {
namespace {

// The degenerate example with its weights scaled by 10^-12 and shifted by
// 1/7: extra directions with entries far beyond one prime's reach.
Network scaled_degenerate(const char* scale = "1000000000000") {
  Network network = read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json");
  const Rational tiny(1, Integer(scale));
  for (Layer& layer : network.layers)
    for (std::size_t r = 0; r < layer.weights.rows(); ++r)
      for (std::size_t c = 0; c < layer.weights.cols(); ++c)
        layer.weights(r, c) = layer.weights(r, c) * tiny + Rational(1, 7);
  return network;
}

// What certify keeps after its walk: every smooth pattern, the modular row
// basis of their rows and which rows raised its rank.
struct WalkState {
  std::vector<ActivationPattern> smooth;
  std::vector<detail::KeptRows> kept;
  ModularNetwork modular;
  std::size_t rank = 0;
  ModularMatrix first_image;
};

WalkState walk_state(const Network& network) {
  WalkState state;
  state.modular = reduce_modulo_some_prime(network, primary_prime());
  ModularRowBasis basis(state.modular.prime, network.parametric_dimension());
  WalkOptions options;
  options.threads = 1;
  options.on_region = [&](const Region& region) {
    if (!region.nonsmooth_neurons.empty()) return true;
    state.smooth.push_back(region.pattern);
    const ModularMatrix rows = coefficient_blocks_mod(state.modular, region.pattern);
    detail::KeptRows kept{region.pattern, {}, {}};
    for (std::size_t r = 0; r < rows.rows(); ++r)
      if (basis.add_row(rows.row(r))) kept.rows.push_back(r);
    if (!kept.rows.empty()) state.kept.push_back(std::move(kept));
    return true;
  };
  EXPECT_TRUE(walk_regions(network, make_whole_space(network.input_dim), options).complete);
  state.rank = basis.rank();
  const std::vector<std::size_t>& pivots = scaling_structure(network).pivot_columns;
  state.first_image = detail::extra_directions_of_rows(basis.rows(), pivots, state.modular.prime);
  // Read off the basis directly: the same image (what certify uses).
  EXPECT_EQ(detail::extra_directions_of_basis(basis, pivots).dense(), state.first_image);
  return state;
}

// Each pattern's exact coefficient blocks, in the patterns' order.
std::vector<RationalMatrix> exact_blocks(const Network& network, const std::vector<ActivationPattern>& patterns) {
  std::vector<RationalMatrix> blocks;
  for (const ActivationPattern& pattern : patterns) blocks.push_back(coefficient_blocks(network, pattern));
  return blocks;
}

// The patterns sorted by their states (the order the kernel check's groups take).
std::vector<ActivationPattern> sorted_by_states(std::vector<ActivationPattern> patterns) {
  std::sort(patterns.begin(), patterns.end(),
            [](const ActivationPattern& a, const ActivationPattern& b) { return a.states < b.states; });
  return patterns;
}

// The first region (index into blocks) on which some vector's exact product
// with the region's rows is not zero, from rational arithmetic alone.
std::optional<std::size_t> first_region_not_annihilated_exactly(const std::vector<RationalMatrix>& blocks,
                                                                const RationalMatrix& vectors) {
  for (std::size_t p = 0; p < blocks.size(); ++p)
    for (std::size_t v = 0; v < vectors.rows(); ++v)
      for (std::size_t r = 0; r < blocks[p].rows(); ++r) {
        Rational sum = 0;
        for (std::size_t c = 0; c < vectors.cols(); ++c) sum += blocks[p](r, c) * vectors(v, c);
        if (sum != 0) return p;
      }
  return std::nullopt;
}

// The exact first region (first_region_not_annihilated_exactly), after
// expecting the check to name the same one in both of its arithmetics.
std::optional<std::size_t> expect_check_names_first_exact_region(const Network& network,
                                                                  const detail::CheckScale& scale,
                                                                  const std::vector<ActivationPattern>& smooth,
                                                                  const std::vector<RationalMatrix>& blocks,
                                                                  const RationalMatrix& vectors,
                                                                  const std::string& label) {
  const std::optional<std::size_t> expected = first_region_not_annihilated_exactly(blocks, vectors);
  for (const auto arithmetic : {detail::CheckArithmetic::fastest, detail::CheckArithmetic::primes}) {
    const detail::AnnihilationCheck check(network, vectors, scale, 1, arithmetic);
    bool stopped = false;
    EXPECT_EQ(detail::first_rejected_pattern(check, smooth, 1, StopRequest(), stopped, {}), expected) << label;
  }
  return expected;
}

RationalMatrix exact_extra_directions(const Network& network, const std::vector<ActivationPattern>& smooth) {
  RationalMatrix rows(0, network.parametric_dimension());
  for (const ActivationPattern& pattern : smooth) {
    const RationalMatrix blocks = coefficient_blocks(network, pattern);
    for (std::size_t r = 0; r < blocks.rows(); ++r) rows.append_row(blocks.row(r));
  }
  return extra_kernel_basis(kernel_basis_exact(rows), scaling_directions(network));
}

TEST(KernelLift, ExactSolveAndMultiModularLiftGiveTheExactKernelsExtraDirections) {
  const Network network = scaled_degenerate();
  const WalkState state = walk_state(network);
  const RationalMatrix expected = exact_extra_directions(network, state.smooth);
  ASSERT_GT(expected.rows(), 0u);
  ASSERT_EQ(state.first_image.rows(), expected.rows());

  const std::vector<std::size_t>& pivots = scaling_structure(network).pivot_columns;
  std::vector<std::size_t> every_row(expected.rows());
  for (std::size_t j = 0; j < every_row.size(); ++j) every_row[j] = j;
  const auto solved =
      detail::solve_extra_directions(detail::exact_kept_rows(network, state.kept, state.rank, 1), pivots,
                                     detail::echelon_shape(state.first_image), every_row);
  ASSERT_TRUE(solved.has_value());
  EXPECT_EQ(*solved, expected);

  for (unsigned threads : {1u, 2u}) {
    bool stopped = false;
    std::size_t furthest = 0;
    const auto lifted = detail::lift_and_prove_extra_directions(
        network, state.modular, pivots, state.kept, state.rank,
        detail::SparseModularRows::from_dense(state.first_image), state.smooth,
        detail::CheckScale(network), threads, StopRequest(), stopped,
        [&](std::size_t step) { furthest = std::max(furthest, step); }, {});
    ASSERT_TRUE(lifted.has_value());
    EXPECT_FALSE(stopped);
    EXPECT_EQ(lifted->dense(), expected);
    // No exact solve: the hard rows from further primes, or from the
    // neurons on in every region and the other rows (always_active_rows).
    EXPECT_LE(furthest, 1u);
  }
}

// Rows lifted alone (each from its own support's square system) and all
// rows lifted together (one system on the union of their supports) give the
// same rows, those of the exact kernel, on the scaled example and on random
// networks; with 1 thread and with 2; by reconstruction alone and with the
// exact solve once the primes' product passes the check's scaled bound
// (fraction-free for small systems, Dixon for the systems of all rows).
TEST(KernelLift, RowsAloneAndTogetherGiveTheExactRows) {
  // Scaled by 10^-40, the systems need three further primes before the
  // exact solve (their integers rebuilt by fmpz_multi_CRT_ui).
  for (const Network& network : {scaled_degenerate(), scaled_degenerate("10000000000000000000000000000000000000000"),
                                 random_network({2, 6, 5, 1}, 21), random_network({2, 5, 5, 5, 1}, 2)}) {
    const WalkState state = walk_state(network);
    const detail::CheckScale check_scale(network);
    const RationalMatrix expected = exact_extra_directions(network, state.smooth);
    ASSERT_GT(expected.rows(), 0u);
    std::vector<std::size_t> rows(expected.rows());
    for (std::size_t j = 0; j < rows.size(); ++j) rows[j] = j;
    const std::vector<std::size_t> leads = detail::echelon_shape(state.first_image);
    for (std::size_t sparse_limit : {std::size_t{0}, state.rank}) {
      for (unsigned threads : {1u, 2u})
        for (const detail::CheckScale* scale : {static_cast<const detail::CheckScale*>(nullptr), &check_scale}) {
          const auto lifted = detail::lift_rows_multimodular(network, state.modular, state.kept, state.rank,
                                                             detail::SparseModularRows::from_dense(state.first_image),
                                                             rows, leads, sparse_limit, threads,
                                                             scale);
          ASSERT_TRUE(lifted.has_value());
          ASSERT_EQ(lifted->size(), expected.rows());
          const detail::SparseRationalRows expected_rows = detail::SparseRationalRows::from_dense(expected);
          for (std::size_t j = 0; j < rows.size(); ++j) EXPECT_EQ((*lifted)[j], expected_rows.rows[j]) << j;
        }
    }
  }
}

// A wrong image (one residue changed) leads the row-by-row lift to a wrong
// candidate; the check rejects it and the exact solve gives the true one.
TEST(KernelLift, WrongImageFallsBackToTheExactSolve) {
  const Network network = scaled_degenerate();
  WalkState state = walk_state(network);
  const RationalMatrix expected = exact_extra_directions(network, state.smooth);
  const std::vector<std::size_t> leads = detail::echelon_shape(state.first_image);
  std::size_t row = 0, column = 0;
  for (std::size_t r = 0; r < state.first_image.rows() && column == 0; ++r)
    for (std::size_t c = leads[r] + 1; c < state.first_image.cols(); ++c)
      if (state.first_image(r, c) != 0) {
        row = r;
        column = c;
        break;
      }
  ASSERT_NE(column, 0u);
  state.first_image(row, column) = (state.first_image(row, column) + 1) % state.modular.prime;
  bool stopped = false;
  std::size_t furthest = 0;
  const auto lifted = detail::lift_and_prove_extra_directions(
      network, state.modular, scaling_structure(network).pivot_columns, state.kept, state.rank,
      detail::SparseModularRows::from_dense(state.first_image),
      state.smooth, detail::CheckScale(network), 1, StopRequest(), stopped,
      [&](std::size_t step) { furthest = std::max(furthest, step); }, {});
  ASSERT_TRUE(lifted.has_value());
  EXPECT_EQ(lifted->dense(), expected);
  EXPECT_EQ(furthest, 2u);
}

// The check (products from layer inputs and backward signals modulo primes,
// enumerate/detail/kernel_check.cpp) names the same first region as exact
// products with coefficient_blocks, for each exact extra direction and for
// each one changed in one entry, on random networks, one with two outputs,
// and networks with a ReLU on the output.
TEST(KernelCheck, FirstRejectedRegionEqualsTheExactProductsOne) {
  // One, two, three and four inputs: the check's sums are fixed arrays for
  // one to three inputs, a buffer for more.
  std::vector<Network> networks = {random_network({2, 4, 3, 1}, 11), random_network({2, 3, 3, 2}, 14),
                                   random_network({3, 4, 3, 1}, 15), random_network({1, 4, 3, 1}, 16),
                                   random_network({4, 3, 3, 1}, 19)};
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json"));
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/tests/data/fd_relu_output_hidden_middle.json"));
  networks.push_back(scaled_degenerate());
  std::size_t compared = 0;
  for (const Network& network : networks) {
    const WalkState state = walk_state(network);
    const RationalMatrix extra = exact_extra_directions(network, state.smooth);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    auto exact_first = [&](const RationalVector& vector) -> std::optional<std::size_t> {
      for (std::size_t p = 0; p < blocks.size(); ++p)
        for (std::size_t r = 0; r < blocks[p].rows(); ++r) {
          Rational sum = 0;
          for (std::size_t c = 0; c < vector.size(); ++c) sum += blocks[p](r, c) * vector[c];
          if (sum != 0) return p;
        }
      return std::nullopt;
    };
    for (std::size_t j = 0; j < extra.rows(); ++j)
      for (std::size_t c = 0; c < extra.cols(); c += 3) {
        RationalVector vector = extra.row(j);
        if (c > 0) vector[c] += Rational(1, 3);
        RationalMatrix one(0, extra.cols());
        one.append_row(RationalVector(vector));
        EXPECT_EQ(first_region_not_annihilated(network, one, state.smooth), exact_first(vector));
        ++compared;
      }
  }
  EXPECT_GT(compared, 20u);
}

// The check computes, per prime, only the layer inputs and backward signals
// its vectors' columns need (enumerate/detail/kernel_check.cpp), over the
// neurons that pass on each region. Vectors supported in one layer (a unit
// vector at every column, alone and beside one with entries of hundreds of
// bits, so that later primes check it alone), and a pair spanning the first
// and the last layer, name the same first region as exact products with
// coefficient_blocks; so do the same vectors in a network with two outputs
// and one with a ReLU on its output.
TEST(KernelCheck, VectorsInOneLayerNameTheExactProductsFirstRegion) {
  std::vector<Network> networks = {random_network({2, 4, 3, 3, 1}, 31), random_network({2, 3, 3, 2}, 14)};
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json"));
  std::size_t compared = 0, rejected = 0;
  for (const Network& network : networks) {
    const WalkState state = walk_state(network);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    auto exact_first = [&](const RationalMatrix& vectors) { return first_region_not_annihilated_exactly(blocks, vectors); };
    const std::size_t columns = network.parametric_dimension();
    const Rational huge(Integer("1") << 300, 3);  // about 300 bits: several primes beyond the first
    for (std::size_t c = 0; c < columns; ++c) {
      RationalMatrix unit(1, columns);
      unit(0, c) = 1;
      RationalMatrix with_large = unit;
      RationalVector large(columns, Rational(0));
      large[c] = huge;
      if (c + 1 < columns) large[c + 1] = 1;
      with_large.append_row(std::move(large));
      for (const RationalMatrix& vectors : {unit, with_large}) {
        const auto first = first_region_not_annihilated(network, vectors, state.smooth);
        EXPECT_EQ(first, exact_first(vectors)) << "column " << c;
        rejected += first.has_value();
        ++compared;
      }
    }
    RationalMatrix ends(1, columns);  // the first parameter and the last
    ends(0, 0) = huge;
    ends(0, columns - 1) = 1;
    EXPECT_EQ(first_region_not_annihilated(network, ends, state.smooth), exact_first(ends));
  }
  EXPECT_GT(compared, 60u);
  EXPECT_GT(rejected, 40u);
}

// A vector whose every term goes through a neuron that is not on (its own
// neuron, or the neuron its weight reads) passes a pattern without
// arithmetic (AnnihilationCheck::has_live_term); the others are decided
// modulo primes. On every smooth pattern, one at a time, the check answers
// as exact products with coefficient_blocks do, for pairs of columns (a
// weight and the next column: same neuron or the next one, often one dead
// on the pattern and one not) with small and with large values (later
// primes), on a network with two outputs and one with a ReLU on its
// output; some answers are each way.
TEST(KernelCheck, VectorsThroughNeuronsThatAreOffPassOnlyWhereTheProductsVanish) {
  std::vector<Network> networks = {random_network({2, 4, 3, 3, 1}, 31), random_network({2, 3, 3, 2}, 14)};
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json"));
  std::size_t passed = 0, rejected = 0;
  for (const Network& network : networks) {
    const WalkState state = walk_state(network);
    const detail::CheckScale scale(network);
    const std::size_t columns = network.parametric_dimension();
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    for (std::size_t c = 0; c + 1 < columns; c += 2)
      for (const Rational& large : {Rational(1), Rational(Integer("1") << 300, 7)}) {
        RationalMatrix vectors(1, columns);
        vectors(0, c) = large;
        vectors(0, c + 1) = Rational(-2, 3);
        for (const auto arithmetic : {detail::CheckArithmetic::fastest, detail::CheckArithmetic::primes}) {
          const detail::AnnihilationCheck check(network, vectors, scale, 1, arithmetic);
          for (std::size_t p = 0; p < state.smooth.size(); ++p) {
            bool vanishes = true;
            for (std::size_t r = 0; r < blocks[p].rows() && vanishes; ++r)
              vanishes = blocks[p](r, c) * vectors(0, c) + blocks[p](r, c + 1) * vectors(0, c + 1) == 0;
            EXPECT_EQ(check.annihilates(state.smooth[p]), vanishes) << "column " << c << " pattern " << p;
            (vanishes ? passed : rejected) += 1;
          }
        }
      }
  }
  EXPECT_GT(passed, 100u);
  EXPECT_GT(rejected, 100u);
}

// The premises of the check's bound (detail::CheckScale): on every smooth
// region of networks with decimal and sevenths' denominators, L^(d-1) times
// every coefficient-block entry is an integer and |entry| <= B_c, and the
// scale is no larger than that (with L^(d-2) some entry is not an integer).
TEST(KernelCheck, TheScaleClearsEveryEntrysDenominatorAndTheBoundsHold) {
  for (const Network& network : {random_network({2, 4, 3, 1}, 11), random_network({2, 3, 3, 2}, 14),
                                 random_network({2, 3, 3, 3, 1}, 41), scaled_degenerate()}) {
    const detail::CheckScale check_scale(network);
    const WalkState state = walk_state(network);
    Integer lcm = 1;
    for (const Layer& layer : network.layers) {
      for (std::size_t r = 0; r < layer.weights.rows(); ++r)
        for (std::size_t c = 0; c < layer.weights.cols(); ++c)
          mpz_lcm(lcm.get_mpz_t(), lcm.get_mpz_t(), layer.weights(r, c).get_den_mpz_t());
      for (const Rational& b : layer.bias) mpz_lcm(lcm.get_mpz_t(), lcm.get_mpz_t(), b.get_den_mpz_t());
    }
    Integer expected = 1;
    for (std::size_t k = 1; k < network.depth(); ++k) expected *= lcm;
    EXPECT_EQ(check_scale.scale, expected);
    const Rational smaller(check_scale.scale, lcm);
    bool smaller_fails = false;
    for (const ActivationPattern& pattern : state.smooth) {
      const RationalMatrix blocks = coefficient_blocks(network, pattern);
      for (std::size_t r = 0; r < blocks.rows(); ++r)
        for (std::size_t c = 0; c < blocks.cols(); ++c) {
          const Rational scaled = blocks(r, c) * Rational(check_scale.scale);
          ASSERT_EQ(scaled.get_den(), 1) << "row " << r << " column " << c;
          EXPECT_LE(abs(scaled), Rational(check_scale.scaled_bounds[c]));
          smaller_fails = smaller_fails || Rational(blocks(r, c) * smaller).get_den() != 1;
        }
    }
    EXPECT_TRUE(smaller_fails);
  }
}

// The check's bounds are the largest entries of each column of the blocks of
// the network of |theta| with every neuron on (coefficient_blocks, exact
// rationals), times L^(d-1): computed from the layers' factors in integers,
// the same numbers, on networks with one and two outputs, a ReLU on the
// output, decimal and sevenths' denominators and depth one; in 128-bit
// words where every value stays below 2^127 and in GMP integers where one
// does not (weights scaled by 10^-30: L^2 alone is about 2^206).
TEST(KernelCheck, TheBoundsAreTheLargestEntriesOfTheAbsoluteNetworksBlocks) {
  Network relu_output = random_network({3, 4, 2}, 5);
  relu_output.layers.back().activation = Activation::relu;
  for (const Network& network : {random_network({2, 4, 3, 1}, 11), random_network({2, 3, 3, 2}, 14),
                                 random_network({3, 5, 1}, 3), random_network({2, 1}, 8), relu_output,
                                 random_network({2, 5, 5, 5, 5, 1}, 1), scaled_degenerate(),
                                 scaled_degenerate("1000000000000000000000000000000")}) {
    Network absolute = network;
    for (Layer& layer : absolute.layers) {
      for (std::size_t r = 0; r < layer.weights.rows(); ++r)
        for (std::size_t c = 0; c < layer.weights.cols(); ++c) layer.weights(r, c) = abs(layer.weights(r, c));
      for (Rational& b : layer.bias) b = abs(b);
    }
    ActivationPattern all_on;
    all_on.states.assign(network.relu_neuron_count(), NeuronState::on);
    const RationalMatrix blocks = coefficient_blocks(absolute, all_on);
    const detail::CheckScale check_scale(network);
    ASSERT_EQ(check_scale.scaled_bounds.size(), blocks.cols());
    for (std::size_t c = 0; c < blocks.cols(); ++c) {
      Rational largest = 0;
      for (std::size_t r = 0; r < blocks.rows(); ++r) largest = std::max(largest, blocks(r, c));
      EXPECT_EQ(Rational(check_scale.scaled_bounds[c]), largest * Rational(check_scale.scale)) << "column " << c;
    }
  }
}

// The lift's rows modulo further primes come from the check's factors at the
// columns its open rows use (detail::coefficient_rows_at): equal there to
// coefficient_blocks_mod on every smooth region, for every row and for
// column sets within one layer, across layers, and every column, on a
// network with two outputs and one with a ReLU on its output; the other
// entries are left as they were.
TEST(KernelCheck, RowsAtSomeColumnsEqualTheModularBlocks) {
  std::vector<Network> networks = {random_network({2, 4, 3, 3, 1}, 31), random_network({3, 3, 3, 2}, 14)};
  networks.push_back(read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json"));
  std::size_t compared = 0;
  for (const Network& network : networks) {
    const ModularNetwork modular = reduce_modulo_some_prime(network, prime_sequence(3));
    const std::size_t columns = network.parametric_dimension();
    std::vector<std::vector<char>> column_sets;
    for (std::size_t k = 0; k < network.depth(); ++k) {  // one layer's parameters
      std::vector<char> wanted(columns, 0);
      const std::size_t end = k + 1 < network.depth() ? network.parameter_offset(k + 1) : columns;
      for (std::size_t c = network.parameter_offset(k); c < end; ++c) wanted[c] = 1;
      column_sets.push_back(wanted);
    }
    std::vector<char> every_third(columns, 0), all(columns, 1);
    for (std::size_t c = 1; c < columns; c += 3) every_third[c] = 1;
    column_sets.push_back(every_third);
    column_sets.push_back(all);
    for (const ActivationPattern& pattern : walk_state(network).smooth) {
      const ModularMatrix blocks = coefficient_blocks_mod(modular, pattern);
      std::vector<std::size_t> rows(blocks.rows());
      for (std::size_t r = 0; r < rows.size(); ++r) rows[r] = r;
      for (const std::vector<char>& wanted : column_sets) {
        ModularMatrix out(rows.size() + 1, columns);
        for (std::size_t r = 0; r < out.rows(); ++r)
          for (std::size_t c = 0; c < columns; ++c) out(r, c) = 7;
        detail::coefficient_rows_at(modular, pattern, rows, wanted, out, 1);
        for (std::size_t c = 0; c < columns; ++c) {
          EXPECT_EQ(out(0, c), 7u);
          for (std::size_t r = 0; r < rows.size(); ++r)
            EXPECT_EQ(out(r + 1, c), wanted[c] ? blocks(r, c) : 7u) << "row " << r << " column " << c;
        }
        ++compared;
      }
    }
  }
  EXPECT_GT(compared, 30u);
}

// Each thread keeps the layer inputs of the last pattern it checked, per
// prime, and reuses those of the layers where the next pattern agrees
// (detail::AnnihilationCheck::annihilates); in integers, the first layer
// recomputed keeps the rows it had computed and computes only those newly
// on (IntegerCheck::compute_factors). Two checks used one after the other
// and in turn on one thread, over the patterns in walk order, sorted and
// reversed, answer each pattern as exact products with coefficient_blocks
// do: the exact extra directions pass everywhere, the same changed in one
// entry (a weight of each layer past the first, whose rows read that
// layer's inputs) fail exactly where the products are not zero. A row kept
// where it should have been recomputed or set to 0 would misplace them.
TEST(KernelCheck, ReusedLayerInputsGiveEachPatternsOwnAnswer) {
  const Network network = random_network({2, 4, 3, 3, 1}, 31);
  const WalkState state = walk_state(network);
  const RationalMatrix extra = exact_extra_directions(network, state.smooth);
  ASSERT_GT(extra.rows(), 0u);
  const detail::CheckScale scale(network);
  for (std::size_t k = 1; k < network.depth(); ++k) {
    for (std::size_t i : {std::size_t{0}, network.layers[k].width() - 1}) {
      // Changed at W_k[i,0] and W_k[i,1]: G times layer k's inputs 0 and 1.
      RationalMatrix altered = extra;
      altered(0, network.parameter_offset(k) + i * network.layers[k].fan_in()) += Rational(1, 3);
      altered(0, network.parameter_offset(k) + i * network.layers[k].fan_in() + 1) -= Rational(2, 7);
      auto annihilated = [&](const ActivationPattern& pattern) {
        const RationalMatrix blocks = coefficient_blocks(network, pattern);
        for (std::size_t r = 0; r < blocks.rows(); ++r) {
          Rational sum = 0;
          for (std::size_t c = 0; c < blocks.cols(); ++c) sum += blocks(r, c) * altered(0, c);
          if (sum != 0) return false;
        }
        return true;
      };
      std::size_t rejected = 0;
      // In fixed-width integers (this network's bounds allow them) and modulo primes.
      for (const auto arithmetic : {detail::CheckArithmetic::fastest, detail::CheckArithmetic::primes}) {
        const detail::AnnihilationCheck exact(network, extra, scale, 1, arithmetic),
            wrong(network, altered, scale, 1, arithmetic);
        std::vector<ActivationPattern> order = state.smooth;
        for (int pass = 0; pass < 3; ++pass) {
          if (pass == 1)
            std::sort(order.begin(), order.end(),
                      [](const ActivationPattern& a, const ActivationPattern& b) { return a.states < b.states; });
          if (pass == 2) std::reverse(order.begin(), order.end());
          for (const ActivationPattern& pattern : order) {  // one check after the other
            const bool expected = annihilated(pattern);
            EXPECT_EQ(wrong.annihilates(pattern), expected) << "layer " << k << " neuron " << i;
            rejected += expected ? 0 : 1;
          }
          for (const ActivationPattern& pattern : order) EXPECT_TRUE(exact.annihilates(pattern));
          for (const ActivationPattern& pattern : order) {  // in turn
            EXPECT_TRUE(exact.annihilates(pattern));
            EXPECT_EQ(wrong.annihilates(pattern), annihilated(pattern)) << "layer " << k << " neuron " << i;
          }
        }
      }
      EXPECT_GT(rejected, 6u) << "layer " << k << " neuron " << i;
    }
  }
}

// A pattern equal to the last annihilated one at every neuron the vectors'
// products read takes its answer (AnnihilationCheck::annihilates): vectors
// in the last layers, where regions differing in other neurons of the last
// hidden layer follow each other. Each unit vector, and each extra
// direction changed at one column of the last two layers, gives every
// pattern, in lexicographic order and in reverse, its exact products'
// answer, in integers and modulo primes; a skip that missed a neuron the
// products read would pass a pattern where they are not 0.
TEST(KernelCheck, PatternsAgreeingOnTheNeuronsTheProductsReadShareTheirAnswer) {
  for (const Network& network : {random_network({2, 5, 5, 5, 1}, 1), random_network({2, 4, 4, 2}, 3),
                                 read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json")}) {
    const WalkState state = walk_state(network);
    const RationalMatrix extra = exact_extra_directions(network, state.smooth);
    const detail::CheckScale scale(network);
    const std::vector<ActivationPattern> order = sorted_by_states(state.smooth);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, order);
    const std::size_t columns = network.parametric_dimension();
    const std::size_t from = network.parameter_offset(network.depth() - 2);
    std::size_t rejected = 0, passed = 0;
    for (std::size_t c = from; c < columns; ++c) {
      std::vector<RationalMatrix> vectors(1, RationalMatrix(1, columns));
      vectors[0](0, c) = 1;
      for (std::size_t j = 0; j < extra.rows(); ++j) {
        RationalMatrix changed(1, columns);
        for (std::size_t k = 0; k < columns; ++k) changed(0, k) = extra(j, k);
        changed(0, c) += Rational(1, 3);
        vectors.push_back(changed);
      }
      for (const RationalMatrix& vector : vectors)
        for (const auto arithmetic : {detail::CheckArithmetic::fastest, detail::CheckArithmetic::primes}) {
          const detail::AnnihilationCheck check(network, vector, scale, 1, arithmetic);
          for (int pass = 0; pass < 2; ++pass)
            for (std::size_t q = 0; q < order.size(); ++q) {
              const std::size_t p = pass == 0 ? q : order.size() - 1 - q;
              bool expected = true;
              for (std::size_t r = 0; r < blocks[p].rows() && expected; ++r) {
                Rational sum = 0;
                for (std::size_t k = 0; k < columns; ++k) sum += blocks[p](r, k) * vector(0, k);
                expected = sum == 0;
              }
              EXPECT_EQ(check.annihilates(order[p]), expected) << "column " << c << " pattern " << p;
              (expected ? passed : rejected) += 1;
            }
        }
    }
    EXPECT_GT(rejected, 20u);
    EXPECT_GT(passed, 20u);
    // A vector in the last two layers' columns that annihilates one region
    // (its blocks' kernel there), checked there and then at each other
    // region: a region that differs in an earlier layer's neurons has other
    // inputs to the last layers, and the products are then not 0.
    std::size_t other_answers = 0;
    for (std::size_t p = 0; p < order.size(); p += 3) {
      RationalMatrix late(blocks[p].rows(), columns - from);
      for (std::size_t r = 0; r < late.rows(); ++r)
        for (std::size_t k = from; k < columns; ++k) late(r, k - from) = blocks[p](r, k);
      const RationalMatrix kernel = kernel_basis_exact(late);
      if (kernel.rows() == 0) continue;
      RationalMatrix vector(1, columns);
      for (std::size_t k = from; k < columns; ++k) vector(0, k) = kernel(kernel.rows() - 1, k - from);
      for (const auto arithmetic : {detail::CheckArithmetic::fastest, detail::CheckArithmetic::primes}) {
        const detail::AnnihilationCheck check(network, vector, scale, 1, arithmetic);
        for (std::size_t q = 0; q < order.size(); ++q) {
          EXPECT_TRUE(check.annihilates(order[p]));
          bool expected = true;
          for (std::size_t r = 0; r < blocks[q].rows() && expected; ++r) {
            Rational sum = 0;
            for (std::size_t k = 0; k < columns; ++k) sum += blocks[q](r, k) * vector(0, k);
            expected = sum == 0;
          }
          EXPECT_EQ(check.annihilates(order[q]), expected) << "regions " << p << " then " << q;
          other_answers += expected ? 0 : 1;
        }
      }
    }
    EXPECT_GT(other_answers, 5u);
  }
}

// The check takes its products in fixed-width integers when every scaled
// bound is below 2^127 (detail::IntegerCheck), else modulo primes; forced
// to primes (CheckArithmetic::primes) it takes them modulo primes anyway.
// Both name the same first region as exact products with coefficient_blocks
// for the exact extra directions and for each changed in one entry, by a
// small and by a large amount (entries of hundreds of bits: many limbs, many
// primes), on networks where the integers apply (decimal denominators,
// sevenths, two outputs, a ReLU on the output) and where they do not
// (denominators of 10^40 and more).
TEST(KernelCheck, IntegersAndPrimesNameTheExactProductsFirstRegion) {
  std::vector<std::pair<Network, bool>> networks = {
      {random_network({2, 4, 3, 3, 1}, 31), true}, {random_network({2, 3, 3, 2}, 14), true},
      {read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json"), true},
      {scaled_degenerate(), true}, {scaled_degenerate("10000000000000000000000000000000000000000"), false}};
  std::size_t compared = 0, rejected = 0;
  for (const auto& [network, integers] : networks) {
    const detail::CheckScale scale(network);
    EXPECT_EQ(detail::IntegerCheck::applies(scale), integers);
    const WalkState state = walk_state(network);
    const RationalMatrix extra = exact_extra_directions(network, state.smooth);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    auto exact_first = [&](const RationalMatrix& vectors) { return first_region_not_annihilated_exactly(blocks, vectors); };
    const Rational large(Integer("1") << 500, 3);
    for (std::size_t j = 0; j < extra.rows(); ++j)
      for (std::size_t c = 0; c < extra.cols(); c += 2)
        for (const Rational& change : {Rational(0), Rational(1, 3), large}) {
          if (change == 0 && c > 0) continue;
          RationalMatrix vectors = extra;
          vectors(j, c) += change;
          const std::optional<std::size_t> expected = exact_first(vectors);
          for (const auto arithmetic : {detail::CheckArithmetic::fastest, detail::CheckArithmetic::primes}) {
            const detail::AnnihilationCheck check(network, vectors, scale, 2, arithmetic);
            bool stopped = false;
            EXPECT_EQ(detail::first_rejected_pattern(check, state.smooth, 2, StopRequest(), stopped, {}), expected)
                << "row " << j << " column " << c;
            EXPECT_EQ(check.primes() == 0, integers && arithmetic == detail::CheckArithmetic::fastest);
          }
          rejected += expected.has_value();
          ++compared;
        }
  }
  EXPECT_GT(compared, 100u);
  EXPECT_GT(rejected, 50u);
}

// Kernel vectors whose primitive integer entries take many limbs (the
// integer check's products by GMP's mpn functions from 4 limbs): an extra
// direction plus a huge multiple (about 2^300) of a scaling direction is
// still in the kernel and must pass on every region with both arithmetics; the same
// changed by 1/3 in one entry must name the exact products' first region.
TEST(KernelCheck, ManyLimbKernelCombinationsPassAndChangedOnesNameTheExactFirstRegion) {
  std::size_t passed = 0, rejected = 0;
  for (const Network& network : {random_network({2, 4, 3, 3, 1}, 31), random_network({2, 3, 3, 2}, 14)}) {
    const detail::CheckScale scale(network);
    ASSERT_TRUE(detail::IntegerCheck::applies(scale));
    const WalkState state = walk_state(network);
    const RationalMatrix extra = exact_extra_directions(network, state.smooth);
    const RationalMatrix scaling = scaling_directions(network);
    ASSERT_GE(extra.rows(), 1u);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    const Rational huge(Integer("1") << 300, 7);
    for (std::size_t j = 0; j < extra.rows(); ++j) {
      RationalMatrix combination(1, extra.cols());
      const std::size_t s = j % scaling.rows();
      for (std::size_t c = 0; c < extra.cols(); ++c) combination(0, c) = extra(j, c) + huge * scaling(s, c);
      for (std::size_t c = 0; c < extra.cols(); c += 3) {
        RationalMatrix vectors = combination;
        if (c > 0) vectors(0, c) += Rational(1, 3);
        const std::optional<std::size_t> expected =
            expect_check_names_first_exact_region(network, scale, state.smooth, blocks, vectors,
                                                  "row " + std::to_string(j) + " column " + std::to_string(c));
        if (c == 0) {
          EXPECT_FALSE(expected.has_value());
        }
        (expected ? rejected : passed) += 1;
      }
    }
  }
  EXPECT_GT(passed, 1u);
  EXPECT_GT(rejected, 10u);
}

// Two kernel vectors sharing a huge part up to a factor (an extra direction
// plus 2^300/7 times a scaling direction, another scaling direction plus 3
// times that): the check
// takes combinations of them with that part cancelled (check_basis.hpp),
// and must still pass them on every region, and name the exact products'
// first region once either is changed in one entry.
TEST(KernelCheck, VectorsSharingAHugePartPassAndChangedOnesNameTheExactFirstRegion) {
  std::size_t rejected = 0, combined = 0;
  for (const Network& network : {random_network({2, 4, 3, 3, 1}, 31), random_network({2, 3, 3, 2}, 14)}) {
    const detail::CheckScale scale(network);
    const WalkState state = walk_state(network);
    const RationalMatrix extra = exact_extra_directions(network, state.smooth);
    const RationalMatrix scaling = scaling_directions(network);
    ASSERT_GE(extra.rows(), 1u);
    ASSERT_GE(scaling.rows(), 2u);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    const Rational huge(Integer("1") << 300, 7);
    RationalMatrix pair(2, extra.cols());
    for (std::size_t c = 0; c < extra.cols(); ++c) {
      pair(0, c) = extra(0, c) + huge * scaling(0, c);
      pair(1, c) = scaling(1, c) + 3 * huge * scaling(0, c);
    }
    // The cheaper basis cancels the shared part.
    std::vector<detail::IntegerEntries> integers(2);
    for (std::size_t r = 0; r < 2; ++r) {
      std::vector<Integer> values;
      detail::primitive_integers(pair.cols(), [&](std::size_t c) -> const Rational& { return pair(r, c); }, values);
      for (std::size_t c = 0; c < values.size(); ++c)
        if (sgn(values[c]) != 0) integers[r].emplace_back(c, values[c]);
    }
    const std::size_t cost_before = detail::check_cost(integers[0]) + detail::check_cost(integers[1]);
    detail::lower_check_cost(integers);
    combined += detail::check_cost(integers[0]) + detail::check_cost(integers[1]) < cost_before;
    for (std::size_t r = 0; r < 2; ++r)
      for (std::size_t c = 0; c < pair.cols(); c += 3) {
        RationalMatrix vectors = pair;
        if (c > 0) vectors(r, c) += Rational(1, 3);
        const std::optional<std::size_t> expected =
            expect_check_names_first_exact_region(network, scale, state.smooth, blocks, vectors,
                                                  "vector " + std::to_string(r) + " column " + std::to_string(c));
        if (c == 0) {
          EXPECT_FALSE(expected.has_value());
        }
        rejected += expected.has_value();
      }
  }
  EXPECT_EQ(combined, 2u);
  EXPECT_GT(rejected, 10u);
}

// Vectors whose terms are all weights of one layer at one input, W_k[i, j]
// for several neurons i and one j (the integer check decides them at one
// component of X_k[j], integer_check.hpp): neurons 0 and 3 of the second
// hidden layer always on together (3's weights and bias twice 0's), so
// W_2[0,3] W_1[0,j] - W_2[0,0] W_1[3,j] passes on every region, and the
// same changed by 1/3 in one entry, and every pair and triple of neurons at
// every input of both hidden layers, must name the exact products' first region.
TEST(KernelCheck, VectorsAtOneInputPassAndChangedOnesNameTheExactFirstRegion) {
  Network network = random_network({2, 4, 4, 1}, 5);
  Layer& middle = network.layers[1];
  for (std::size_t j = 0; j < middle.fan_in(); ++j) middle.weights(3, j) = 2 * middle.weights(0, j);
  middle.bias[3] = 2 * middle.bias[0];
  const detail::CheckScale scale(network);
  ASSERT_TRUE(detail::IntegerCheck::applies(scale));
  const WalkState state = walk_state(network);
  const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
  const std::size_t columns = network.parametric_dimension();
  auto weight = [&](std::size_t k, std::size_t i, std::size_t j) {
    return network.parameter_offset(k) + i * network.layers[k].fan_in() + j;
  };
  std::size_t passed = 0, rejected = 0;
  auto expect_exact = [&](const RationalMatrix& vector, const std::string& label) {
    (expect_check_names_first_exact_region(network, scale, state.smooth, blocks, vector, label) ? rejected : passed) +=
        1;
  };
  const Rational& out0 = network.layers[2].weights(0, 0);
  const Rational& out3 = network.layers[2].weights(0, 3);
  for (std::size_t j = 0; j < middle.fan_in(); ++j)
    for (const Rational& change : {Rational(0), Rational(1, 3)}) {
      RationalMatrix vector(1, columns);
      vector(0, weight(1, 0, j)) = out3 + change;
      vector(0, weight(1, 3, j)) = -out0;
      expect_exact(vector, "duplicate pair at input " + std::to_string(j) + (change == 0 ? "" : " changed"));
      if (change == 0) {
        EXPECT_FALSE(first_region_not_annihilated_exactly(blocks, vector).has_value()) << "input " << j;
      }
    }
  for (std::size_t k = 0; k < 2; ++k)
    for (std::size_t j = 0; j < network.layers[k].fan_in(); ++j)
      for (std::size_t a = 0; a < 4; ++a)
        for (std::size_t b = a + 1; b < 4; ++b) {
          RationalMatrix vector(1, columns);
          vector(0, weight(k, a, j)) = network.layers[k + 1].weights(0, b);
          vector(0, weight(k, b, j)) = -network.layers[k + 1].weights(0, a);
          const std::string label =
              "layer " + std::to_string(k) + " input " + std::to_string(j) + " neurons " + std::to_string(a) + "," + std::to_string(b);
          expect_exact(vector, label);
          vector(0, weight(k, (b + 1) % 4 == a ? (b + 2) % 4 : (b + 1) % 4, j)) = Rational(5, 7);
          expect_exact(vector, label + " and a third");
        }
  EXPECT_GE(passed, 4u);
  EXPECT_GT(rejected, 30u);
}

// Exact products of one vector (a row) with a pattern's coefficient rows,
// at its nonzero columns only: all 0?
bool annihilates_exactly(const RationalMatrix& blocks, const RationalMatrix& vector) {
  std::vector<std::size_t> nonzero;
  for (std::size_t c = 0; c < vector.cols(); ++c)
    if (sgn(vector(0, c)) != 0) nonzero.push_back(c);
  for (std::size_t r = 0; r < blocks.rows(); ++r) {
    Rational sum = 0;
    for (std::size_t c : nonzero) sum += blocks(r, c) * vector(0, c);
    if (sum != 0) return false;
  }
  return true;
}

// Vectors with several weights W_{k+1}[o, b] of one layer at one input b
// besides other terms (the integer check's groups, Run::group_end: X[b]
// times the sum of their signals): mix(a, b) of layer k
// (always_active_rows.hpp) annihilates a region where a and b are both on
// or both off, and not one where one of them is; the same changed in one
// entry of its group passes fewer. Each pattern's answer, in sorted order
// one after the other, must be the exact products'.
TEST(KernelCheck, GroupsAtOneInputAnswerEachPatternAsTheExactProducts) {
  const Network network = random_network({2, 4, 4, 4, 1}, 7);
  const detail::CheckScale scale(network);
  ASSERT_TRUE(detail::IntegerCheck::applies(scale));
  const WalkState state = walk_state(network);
  const std::vector<ActivationPattern> order = sorted_by_states(state.smooth);
  const std::vector<RationalMatrix> blocks = exact_blocks(network, order);
  const std::size_t columns = network.parametric_dimension();
  auto weight = [&](std::size_t k, std::size_t i, std::size_t j) {
    return network.parameter_offset(k) + i * network.layers[k].fan_in() + j;
  };
  auto bias = [&](std::size_t k, std::size_t i) {
    return network.parameter_offset(k) + network.layers[k].width() * network.layers[k].fan_in() + i;
  };
  std::size_t passed = 0, rejected = 0, changed_rejected = 0;
  for (std::size_t k = 0; k < 2; ++k)
    for (std::size_t a = 0; a < 4; ++a)
      for (std::size_t b = 0; b < 4; ++b) {
        if (a == b) continue;
        const Layer& layer = network.layers[k];
        const Layer& next = network.layers[k + 1];
        RationalMatrix mix(1, columns);
        for (std::size_t j = 0; j < layer.fan_in(); ++j) mix(0, weight(k, a, j)) = layer.weights(b, j);
        mix(0, bias(k, a)) = layer.bias[b];
        for (std::size_t o = 0; o < next.width(); ++o) mix(0, weight(k + 1, o, b)) = -next.weights(o, a);
        for (const Rational& change : {Rational(0), Rational(1, 3)}) {
          RationalMatrix vector = mix;
          vector(0, weight(k + 1, 2, b)) += change;
          const detail::AnnihilationCheck check(network, vector, scale, 1, detail::CheckArithmetic::fastest);
          const std::string label = "layer " + std::to_string(k) + " mix " + std::to_string(a) + "," +
                                    std::to_string(b) + (change == 0 ? "" : " changed");
          for (std::size_t p = 0; p < order.size(); ++p) {
            const bool expected = annihilates_exactly(blocks[p], vector);
            EXPECT_EQ(check.annihilates(order[p]), expected) << label << " pattern " << p;
            (expected ? passed : change == 0 ? rejected : changed_rejected) += 1;
          }
        }
      }
  EXPECT_GT(passed, 20u);
  EXPECT_GT(rejected, 20u);
  EXPECT_GT(changed_rejected, rejected);
}

// A one-input vector's pass is kept with the signals it passed at
// (IntegerCheck: Vector::memo): W_0[a, j] and W_0[b, j] with e = (H_0[b],
// -H_0[a]) read off region A's exact rows annihilate A, and not a region B
// where a and b are on as on A but the next layer is not (H_0 differs). A
// key of a's and b's states alone would pass such a B; the check, asked
// about A and then each region in turn, must answer each as the exact
// products do, and such regions must be among them.
TEST(KernelCheck, OneInputVectorsPassedOnARegionAreCheckedAgainWhereTheirSignalsDiffer) {
  const Network network = random_network({2, 4, 4, 1}, 11);
  const detail::CheckScale scale(network);
  ASSERT_TRUE(detail::IntegerCheck::applies(scale));
  const WalkState state = walk_state(network);
  const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
  const std::size_t columns = network.parametric_dimension();
  std::size_t coarse = 0, checked = 0;
  for (std::size_t first = 0; first < state.smooth.size(); ++first)
    for (std::size_t a = 0; a < 4; ++a)
      for (std::size_t b = a + 1; b < 4; ++b)
        for (std::size_t j = 0; j < 2; ++j) {
          const ActivationPattern& pass = state.smooth[first];
          if (!pass.is_on(a) || !pass.is_on(b)) continue;
          const std::size_t ca = a * 2 + j, cb = b * 2 + j;  // W_0[a, j], W_0[b, j]
          RationalMatrix vector(1, columns);
          for (std::size_t r = 0; r < blocks[first].rows(); ++r)
            if (sgn(blocks[first](r, ca)) != 0) {
              vector(0, ca) = blocks[first](r, cb);
              vector(0, cb) = -blocks[first](r, ca);
              break;
            }
          if (sgn(vector(0, ca)) == 0) continue;
          ASSERT_TRUE(annihilates_exactly(blocks[first], vector));
          const detail::AnnihilationCheck check(network, vector, scale, 1, detail::CheckArithmetic::fastest);
          for (std::size_t p = 0; p < state.smooth.size(); ++p) {
            EXPECT_TRUE(check.annihilates(pass));
            const bool expected = annihilates_exactly(blocks[p], vector);
            EXPECT_EQ(check.annihilates(state.smooth[p]), expected) << "region " << first << " then " << p;
            ++checked;
            const ActivationPattern& other = state.smooth[p];
            if (!expected && other.is_on(a) && other.is_on(b)) ++coarse;
          }
        }
  EXPECT_GT(checked, 100u);
  EXPECT_GT(coarse, 5u);
}

// Which vectors have a term on each pattern, for all patterns at once
// (AnnihilationCheck::live_bits, what first_rejected_pattern reads): one
// parameter's unit vector, and pairs, checked with the bits at each pattern
// must answer as the exact products do (a bit wrongly 0 passes a pattern
// where the column is not 0), and as the check without the bits; the same
// with the neurons' bits LiveTerms built (neuron_on_bits, shared by both).
TEST(KernelCheck, LiveBitsAnswerEachPatternAsTheExactProducts) {
  std::size_t rejected = 0;
  for (const Network& network : {random_network({2, 4, 3, 3, 1}, 31),
                                 read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json"),
                                 read_network_file(PLEAT_SOURCE_DIR "/tests/data/dead2d.json")}) {
    const WalkState state = walk_state(network);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    const detail::CheckScale scale(network);
    const detail::LiveTerms live_terms(network, state.smooth);
    const std::size_t columns = network.parametric_dimension();
    for (std::size_t c = 0; c < columns; ++c)
      for (const std::size_t other : {c, (c + 7) % columns}) {
        RationalMatrix vector(1, columns);
        vector(0, c) = 1;
        if (other != c) vector(0, other) = Rational(-2, 3);
        for (const auto arithmetic : {detail::CheckArithmetic::fastest, detail::CheckArithmetic::primes}) {
          const detail::AnnihilationCheck with_bits(network, vector, scale, 1, arithmetic),
              without(network, vector, scale, 1, arithmetic);
          const detail::AnnihilationCheck::LiveBits live = with_bits.live_bits(state.smooth);
          const detail::AnnihilationCheck::LiveBits shared = with_bits.live_bits(state.smooth, &live_terms.on_bits());
          EXPECT_EQ(shared.bits, live.bits) << "column " << c;
          for (std::size_t p = 0; p < state.smooth.size(); ++p) {
            const bool expected = annihilates_exactly(blocks[p], vector);
            EXPECT_EQ(with_bits.annihilates(state.smooth[p], live, p), expected) << "column " << c << " pattern " << p;
            EXPECT_EQ(with_bits.annihilates(state.smooth[p], shared, p), expected) << "column " << c << " pattern " << p;
            EXPECT_EQ(without.annihilates(state.smooth[p]), expected) << "column " << c << " pattern " << p;
            rejected += expected ? 0 : 1;
          }
        }
      }
  }
  EXPECT_GT(rejected, 100u);
}

// The vectors the check need not look at (live_on_some_pattern): a vector
// with one or two entries is live exactly when one of its terms has its
// neuron and its input neuron on in one smooth region (read off the
// patterns here term by term), and a vector that is not live has exact
// products 0 with every region's rows.
TEST(KernelCheck, VectorsLiveOnNoRegionAnnihilateEveryRegion) {
  std::size_t not_live = 0, live = 0;
  for (const Network& network : {random_network({2, 4, 3, 3, 1}, 31), random_network({2, 3, 3, 2}, 14),
                                 read_network_file(PLEAT_SOURCE_DIR "/tests/data/output_relu2d.json"),
                                 read_network_file(PLEAT_SOURCE_DIR "/data/degenerate2d.json"),
                                 read_network_file(PLEAT_SOURCE_DIR "/tests/data/dead2d.json")}) {
    const WalkState state = walk_state(network);
    const std::vector<RationalMatrix> blocks = exact_blocks(network, state.smooth);
    const std::size_t columns = network.parametric_dimension();
    // Each parameter's neuron and input neuron (none: -1).
    std::vector<std::pair<long, long>> neurons;
    for (std::size_t k = 0, first = 0; k < network.depth(); first += network.layers[k].width(), ++k) {
      const Layer& layer = network.layers[k];
      const bool has_relu = k + 1 < network.depth() || network.has_output_relu();
      const long previous = k == 0 ? -1 : static_cast<long>(first - network.layers[k - 1].width());
      for (std::size_t i = 0; i < layer.width(); ++i)
        for (std::size_t j = 0; j < layer.fan_in(); ++j)
          neurons.emplace_back(has_relu ? static_cast<long>(first + i) : -1, k == 0 ? -1 : previous + static_cast<long>(j));
      for (std::size_t i = 0; i < layer.width(); ++i) neurons.emplace_back(has_relu ? static_cast<long>(first + i) : -1, -1);
    }
    auto term_live = [&](std::size_t c) {
      for (const ActivationPattern& p : state.smooth)
        if ((neurons[c].first < 0 || p.is_on(static_cast<std::size_t>(neurons[c].first))) &&
            (neurons[c].second < 0 || p.is_on(static_cast<std::size_t>(neurons[c].second))))
          return true;
      return false;
    };
    detail::SparseRationalRows vectors{columns, {}};
    for (std::size_t c = 0; c < columns; ++c) vectors.rows.push_back({{c, Rational(1)}});
    for (std::size_t c = 0; c + 7 < columns; c += 5) vectors.rows.push_back({{c, Rational(2)}, {c + 7, Rational(-1, 3)}});
    const std::vector<char> found = detail::live_on_some_pattern(network, vectors, state.smooth);
    for (std::size_t v = 0; v < vectors.rows.size(); ++v) {
      bool expected = false;
      for (const auto& [c, value] : vectors.rows[v]) expected = expected || term_live(c);
      EXPECT_EQ(found[v] != 0, expected) << "vector " << v;
      if (found[v]) {
        ++live;
        continue;
      }
      ++not_live;
      RationalMatrix dense(1, columns);
      for (const auto& [c, value] : vectors.rows[v]) dense(0, c) = value;
      EXPECT_FALSE(first_region_not_annihilated_exactly(blocks, dense).has_value()) << "vector " << v;
    }
  }
  EXPECT_GT(not_live, 10u);
  EXPECT_GT(live, 20u);
}

// The read-off's eliminations by nonzero entries give FLINT's: the reduced
// row-echelon form and the canonical kernel basis of random matrices modulo
// the walk's prime, mostly zero, half zero and dense, of full rank and with
// rows that are combinations of the others (and all zero), wide and tall.
TEST(KernelLift, SparseEliminationsEqualTheDenseOnes) {
  const std::uint64_t prime = primary_prime();
  std::mt19937_64 random(7);
  std::size_t deficient = 0;
  for (const auto& [rows, cols] : std::vector<std::pair<std::size_t, std::size_t>>{{5, 9}, {12, 30}, {30, 12}, {40, 100}})
    for (const double density : {0.0, 0.05, 0.5, 1.0})
      for (const bool dependent : {false, true}) {
        std::vector<ModularVector> matrix(rows, ModularVector(cols, 0));
        for (ModularVector& row : matrix)
          for (std::uint64_t& entry : row)
            if (std::uniform_real_distribution<double>(0, 1)(random) < density) entry = random() % prime;
        if (dependent)  // row 1 = row 0 + row 2, the last row = row 0 (residues below 2^62: no overflow)
          for (std::size_t c = 0; c < cols; ++c) {
            matrix[1][c] = (matrix[0][c] + matrix[2][c]) % prime;
            matrix.back()[c] = matrix[0][c];
          }
        ModularMatrix dense(rows, cols);
        for (std::size_t r = 0; r < rows; ++r)
          for (std::size_t c = 0; c < cols; ++c) dense(r, c) = matrix[r][c];
        const ModularMatrix echelon = detail::reduced_echelon_of_sparse_rows(matrix, cols, prime);
        EXPECT_EQ(echelon, row_space_basis_modulo(dense, prime)) << rows << "x" << cols << " " << density;
        EXPECT_EQ(detail::kernel_of_sparse_rows(matrix, cols, prime), kernel_basis_modulo(dense, prime))
            << rows << "x" << cols << " " << density;
        deficient += echelon.rows() < std::min(rows, cols);
      }
  EXPECT_GT(deficient, 8u);
}

// The check's order of regions (states_before) is std::vector's < on their
// states, equal lengths or not, the empty pattern first.
TEST(KernelCheck, StatesBeforeIsTheStatesLexicographicOrder) {
  using S = NeuronState;
  const std::vector<ActivationPattern> patterns = {
      {{}}, {{S::off}}, {{S::on}}, {{S::off, S::on}}, {{S::on, S::off}}, {{S::zero_at_point}},
      {{S::on, S::zero_on_region, S::off}}, {{S::on, S::off, S::zero_at_point}}, {{S::on, S::off, S::off}}};
  for (const ActivationPattern& a : patterns)
    for (const ActivationPattern& b : patterns)
      EXPECT_EQ(detail::states_before(a, b), a.states < b.states) << a.states.size() << " " << b.states.size();
}

// The word-size read-off of E's small entries gives exactly what FLINT's
// fmpq_reconstruct_fmpz_2 gives with bounds 2^24 both ways: on residues of
// fractions at and just beyond the bounds, small integers of both signs,
// 0, p - 1 and random residues (most of which have no such fraction).
TEST(KernelLift, SmallFractionModuloEqualsFlintsReconstruction) {
  const std::uint64_t prime = primary_prime();
  const std::int64_t bound = std::int64_t{1} << 24;
  std::vector<std::uint64_t> residues = {0, 1, 2, prime - 1, prime - 2, static_cast<std::uint64_t>(bound),
                                         static_cast<std::uint64_t>(bound) + 1, prime - static_cast<std::uint64_t>(bound),
                                         prime - static_cast<std::uint64_t>(bound) - 1};
  std::mt19937_64 random(7);
  auto residue_of = [&](std::int64_t n, std::int64_t d) { return *reduce_modulo(Rational(Integer(n), Integer(d)), prime); };
  for (std::int64_t n : {std::int64_t{0}, std::int64_t{1}, -std::int64_t{1}, bound, -bound, bound + 1, -bound - 1, bound - 1})
    for (std::int64_t d : {std::int64_t{1}, std::int64_t{2}, std::int64_t{3}, bound, bound + 1, bound - 1})
      residues.push_back(residue_of(n, d));
  for (int i = 0; i < 20000; ++i) {
    const auto n = static_cast<std::int64_t>(random() % (2 * static_cast<std::uint64_t>(bound) + 5)) - bound - 2;
    const auto d = static_cast<std::int64_t>(random() % (static_cast<std::uint64_t>(bound) + 3)) + 1;
    residues.push_back(residue_of(n, d));
    residues.push_back(random() % prime);
  }
  fmpz_t residue, modulus, limit;
  fmpq_t value;
  fmpz_init(residue);
  fmpz_init_set_ui(modulus, prime);
  fmpz_init_set_ui(limit, static_cast<std::uint64_t>(bound));
  fmpq_init(value);
  std::size_t found = 0;
  for (std::uint64_t r : residues) {
    fmpz_set_ui(residue, r);
    const bool flint = fmpq_reconstruct_fmpz_2(value, residue, modulus, limit, limit) != 0;
    const auto ours = detail::small_fraction_modulo(r, prime);
    ASSERT_EQ(ours.has_value(), flint) << r;
    if (!flint) continue;
    ++found;
    EXPECT_EQ(fmpz_get_si(fmpq_numref(value)), ours->first) << r;
    EXPECT_EQ(fmpz_get_ui(fmpq_denref(value)), ours->second) << r;
  }
  fmpq_clear(value);
  fmpz_clear(limit);
  fmpz_clear(modulus);
  fmpz_clear(residue);
  EXPECT_GT(found, 20000u);  // the fractions' residues, most of them within the bounds
}

// The check's progress: about 64 reports in all but never more often than
// every 16 regions, the last one at the last region: on 2,5,5,5,5,1 seed 1's
// 118 regions, 8 reports (a report per region cost a seventh of that check
// in the command line's text).
TEST(KernelCheck, ProgressIsReportedAtMostEverySixteenRegionsAndAtTheLast) {
  const Network network = random_network({2, 5, 5, 5, 5, 1}, 1);
  const WalkState state = walk_state(network);
  ASSERT_GE(state.smooth.size(), 100u);
  const detail::SparseRationalRows nothing{network.parametric_dimension(), {{}}};  // annihilates every region
  const detail::AnnihilationCheck check(network, nothing, detail::CheckScale(network));
  std::vector<std::pair<std::size_t, std::size_t>> reports;
  bool stopped = false;
  EXPECT_FALSE(detail::first_rejected_pattern(check, state.smooth, 1, StopRequest(), stopped,
                                              [&](std::size_t done, std::size_t total) {
                                                reports.emplace_back(done, total);
                                              }));
  ASSERT_FALSE(reports.empty());
  EXPECT_LE(reports.size(), state.smooth.size() / 16 + 1);
  EXPECT_EQ(reports.back(), std::make_pair(state.smooth.size(), state.smooth.size()));
  for (std::size_t r = 1; r + 1 < reports.size(); ++r) EXPECT_GE(reports[r].first, reports[r - 1].first + 16);
}

}  // namespace
}  // namespace pleat
