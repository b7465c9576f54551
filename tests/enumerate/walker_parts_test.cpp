// The walker's internal parts (enumerate/detail/): the 256-bit integers of
// the layer maps against GMP, the fixed-width tiers against core's exact maps,
// the packed seen-set against std::set, and the streamed adjacency summary
// (facets, linear regions) against one recomputed from every region kept.
#include "core/evaluate.hpp"
#include "core/random_network.hpp"
#include "enumerate/detail/integer_maps.hpp"
#include "enumerate/detail/pattern_store.hpp"
#include "enumerate/detail/prefix_pool.hpp"
#include "enumerate/detail/walk_adjacency.hpp"
#include "enumerate/pattern_cell.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <stdexcept>
#include <limits>
#include <map>
#include <numeric>
#include <random>
#include <set>

namespace pleat {
namespace {

Integer random_integer(std::mt19937_64& random, unsigned bits) {
  Integer value = 0;
  for (unsigned b = 0; b < bits; b += 32) value = (value << 32) + Integer(static_cast<unsigned long>(random() >> 32));
  value >>= (bits + 31) / 32 * 32 - bits;  // exactly `bits` random bits
  return random() % 2 ? value : Integer(-value);
}

TEST(Int256, RoundTripsThroughGmp) {
  std::mt19937_64 random(5);
  for (unsigned bits : {1u, 63u, 64u, 65u, 127u, 128u, 200u, 254u}) {
    for (int i = 0; i < 50; ++i) {
      const Integer value = random_integer(random, bits);
      Integer back;
      detail::set_integer(back, detail::to_int256(value));
      EXPECT_EQ(back, value) << bits << " bits";
    }
  }
  for (const Integer& value : {Integer(0), Integer(-1), Integer(1), Integer(-(Integer(1) << 63)), Integer(Integer(1) << 63)}) {
    Integer back;
    detail::set_integer(back, detail::to_int256(value));
    EXPECT_EQ(back, value);
  }
}

// Sums of products as compose_fixed forms them, signs and carries included.
TEST(Int256, AddProductMatchesGmp) {
  std::mt19937_64 random(11);
  for (int trial = 0; trial < 200; ++trial) {
    Integer expected = random_integer(random, 180);
    detail::Int256 acc = detail::to_int256(expected);
    for (int term = 0; term < 20; ++term) {
      const Integer x = random_integer(random, 1 + static_cast<unsigned>(random() % 190));
      auto weight = static_cast<std::int64_t>(random() >> (1 + random() % 60));
      if (random() % 2) weight = -weight;
      if (term == 0) weight = std::numeric_limits<std::int64_t>::min() + 1;  // the largest magnitude
      detail::add_product(acc, weight, detail::to_int256(x));
      expected += Integer(static_cast<long>(weight)) * x;
    }
    Integer got;
    detail::set_integer(got, acc);
    ASSERT_EQ(got, expected) << "trial " << trial;
  }
}

// Which tier the walker's maps take on each network, and that its cells and
// output maps equal core's maps_on_pattern on every region there.
void expect_cells_equal_core(const Network& network) {
  const Domain domain = make_whole_space(network.input_dim);
  WalkOptions options;
  options.threads = 1;
  options.keep_certificates = true;
  options.max_regions = 150;
  std::size_t regions = 0;
  options.on_region = [&](const Region& region) {
    const auto cell = build_pattern_cell(network, domain, region.pattern);
    EXPECT_TRUE(cell.has_value());
    if (!cell) return false;
    EXPECT_TRUE(region.affine == maps_on_pattern(network, region.pattern).output);
    EXPECT_TRUE(region.certificates->cell.constraints == cell->cell.constraints);
    ++regions;
    return true;
  };
  walk_regions(network, domain, options);
  EXPECT_GE(regions, 98u);  // every region of the smallest net (98), 150 of the others
}

TEST(WalkerParts, EveryIntegerTierGivesCoresMaps) {
  const Network shallow = random_network({2, 5, 5, 5, 1}, 1);
  const Network deep = random_network({2, 10, 10, 10, 10, 1}, 1);
  const Network deeper = random_network({2, 15, 15, 15, 15, 15, 15, 15, 15, 1}, 1);
  const auto shallow_layers = detail::integer_layers(shallow);
  const auto deep_layers = detail::integer_layers(deep);
  const auto deeper_layers = detail::integer_layers(deeper);
  EXPECT_TRUE(detail::wide_layers(shallow_layers).has_value());   // 128 bits
  EXPECT_FALSE(detail::wide_layers(deep_layers).has_value());     // 256 bits
  const auto deep_256 = detail::layers_256(deep_layers);
  ASSERT_TRUE(deep_256.has_value());
  // Its leading layers in 128 bits, the others in 256 (both halves walked below).
  EXPECT_GT(deep_256->low.map_denominator.size(), 0u);
  EXPECT_LT(deep_256->low.map_denominator.size(), deep_layers.size());
  EXPECT_FALSE(detail::layers_256(deeper_layers).has_value());    // GMP
  for (const Network* network : {&shallow, &deep, &deeper}) expect_cells_equal_core(*network);
}

TEST(PatternStore, InsertsOncePacksAndOrdersAsPatterns) {
  std::mt19937_64 random(3);
  const std::size_t neurons = 70;  // three words, the last partly used
  detail::PatternStore store(neurons);
  std::map<ActivationPattern, std::uint32_t> reference;
  for (int i = 0; i < 3000; ++i) {
    ActivationPattern pattern;
    for (std::size_t k = 0; k < neurons; ++k)
      pattern.states.push_back(static_cast<NeuronState>(k < 60 ? random() % 2 : random() % 3));  // repeats likely
    if (i % 3 == 0 && !reference.empty()) pattern = reference.begin()->first;
    const auto [slot, is_new] = store.insert(pattern);
    const auto found = reference.find(pattern);
    EXPECT_EQ(is_new, found == reference.end());
    if (found != reference.end()) EXPECT_EQ(slot, found->second);
    else reference.emplace(pattern, slot);
    EXPECT_EQ(store.pattern(slot), pattern);
  }
  EXPECT_EQ(store.size(), reference.size());
  for (auto a = reference.begin(); a != reference.end(); ++a) {
    auto b = std::next(a);
    if (b == reference.end()) break;
    EXPECT_TRUE(store.less(a->second, b->second));
    EXPECT_FALSE(store.less(b->second, a->second));
    const auto differ = std::mismatch(a->first.states.begin(), a->first.states.end(), b->first.states.begin());
    EXPECT_EQ(store.common_prefix(a->second, b->second),
              static_cast<std::size_t>(differ.first - a->first.states.begin()));
  }
}

// Facets and linear regions as the walker counted them before it streamed:
// every region's neighbours and affine map kept to the end.
TEST(WalkerParts, StreamedAdjacencyEqualsKeptRegions) {
  for (const std::vector<std::size_t>& architecture :
       {std::vector<std::size_t>{2, 10, 10, 10, 10, 1}, {3, 5, 5, 5, 5, 1}, {2, 5, 5, 5, 1}}) {
    const Network network = random_network(architecture, 1);
    std::map<ActivationPattern, std::size_t> id_of;
    std::vector<AffineMap> affine_of;
    std::vector<std::vector<ActivationPattern>> neighbors_of;
    WalkOptions options;
    options.threads = 2;
    options.on_region = [&](const Region& region) {
      id_of.emplace(region.pattern, region.id);
      affine_of.push_back(region.affine);
      neighbors_of.emplace_back();
      for (const auto& facet : region.facets) {
        if (facet.neighbor) neighbors_of.back().push_back(*facet.neighbor);
        for (const auto& other : facet.other_neighbors) neighbors_of.back().push_back(other);
      }
      return true;
    };
    const WalkSummary summary = walk_regions(network, make_whole_space(network.input_dim), options);
    std::set<std::pair<std::size_t, std::size_t>> pairs;
    std::vector<std::size_t> parent(affine_of.size());
    std::iota(parent.begin(), parent.end(), 0);
    const auto find = [&](std::size_t i) {
      while (parent[i] != i) i = parent[i];
      return i;
    };
    for (std::size_t id = 0; id < affine_of.size(); ++id)
      for (const auto& neighbor : neighbors_of[id]) {
        const std::size_t other = id_of.at(neighbor);
        pairs.emplace(std::min(id, other), std::max(id, other));
        if (affine_of[id] == affine_of[other]) parent[find(id)] = find(other);
      }
    std::size_t roots = 0;
    for (std::size_t i = 0; i < parent.size(); ++i) roots += find(i) == i;
    EXPECT_TRUE(summary.certified);
    EXPECT_EQ(summary.facets, pairs.size());
    EXPECT_EQ(summary.linear_regions, roots);
    EXPECT_EQ(summary.patterns.size(), id_of.size());
    std::set<std::vector<NeuronState>> first_layer;
    for (const auto& [pattern, id] : id_of)
      first_layer.emplace(pattern.states.begin(), pattern.states.begin() + static_cast<std::ptrdiff_t>(architecture[1]));
    EXPECT_EQ(summary.regions_per_layer.front(), first_layer.size());
  }
}

// Neighbour lists that are not symmetric, and a neighbour whose map has left
// the two-level window (recomputed from its slot): each adjacent pair counted
// once, maps compared exactly.
TEST(WalkAdjacency, CountsAsymmetricListsAndRecomputesEvictedMaps) {
  const auto map = [](int value) {
    AffineMap m{RationalMatrix(1, 1), RationalVector(1)};
    m.linear(0, 0) = value;
    return m;
  };
  std::vector<std::uint32_t> recomputed;
  detail::WalkAdjacency adjacency([&](std::uint32_t slot) {
    recomputed.push_back(slot);
    return map(slot == 2 ? 2 : 1);
  });
  std::vector<std::uint32_t> id_of_slot(5, detail::no_region);
  const auto add = [&](std::uint32_t id, std::vector<std::uint32_t> neighbors, int value) {
    id_of_slot[id] = id;  // slot == id here
    adjacency.add_region(id, id, neighbors, map(value), id_of_slot);
  };
  adjacency.start_level(0);
  add(0, {1, 2}, 1);
  adjacency.start_level(1);
  add(1, {0, 3}, 1);
  add(2, {}, 2);  // does not name 0 back
  adjacency.start_level(3);
  add(3, {1}, 1);
  adjacency.start_level(4);
  add(4, {0}, 1);  // 0 named only from here, two levels on: its map was dropped
  EXPECT_EQ(adjacency.facets(), 4u);  // {0,1} {0,2} {1,3} {0,4}
  EXPECT_EQ(adjacency.linear_regions(), 2u);  // {0,1,3,4} and {2}
  EXPECT_EQ(recomputed, (std::vector<std::uint32_t>{0}));
  EXPECT_TRUE(adjacency.all_neighbors_delivered());
  id_of_slot.resize(7, detail::no_region);
  add(5, {6}, 1);  // names a slot never delivered
  EXPECT_FALSE(adjacency.all_neighbors_delivered());
}

// One pool serves many runs (the walk's levels): every item processed once,
// consume called once per item, in order, while the workers go on; a consume
// that returns false halts the run right there.
TEST(PrefixPool, ServesManyRunsAndConsumesInOrder) {
  for (std::size_t workers : {1u, 2u, 3u}) {
    detail::PrefixPool pool(workers);
    for (std::size_t count : {0u, 1u, 2u, 3u, 97u, 500u}) {
      for (const bool halts : {false, true}) {
        const std::size_t halt_at = count / 2;
        std::vector<std::atomic<int>> processed(count);
        std::vector<std::size_t> consumed;
        std::atomic<bool> is_worker_in_range{true};
        const detail::PrefixRun run = pool.run(
            count, StopRequest(),
            [&](std::size_t worker, std::size_t item) {
              if (worker >= workers) is_worker_in_range = false;
              ++processed[item];
            },
            nullptr,
            [&](std::size_t item) {
              EXPECT_EQ(processed[item].load(), 1) << "consumed before it was processed";
              consumed.push_back(item);
              return !(halts && item == halt_at);
            });
        EXPECT_TRUE(is_worker_in_range);
        EXPECT_EQ(run.stopped, StopReason::none);
        EXPECT_EQ(run.consumed, consumed.size());
        for (std::size_t i = 0; i < consumed.size(); ++i) EXPECT_EQ(consumed[i], i);
        if (workers == 1 || count <= 1) {  // inline: consuming is left to the caller
          EXPECT_TRUE(consumed.empty());
          EXPECT_EQ(run.prefix, count);
        } else if (halts) {
          EXPECT_EQ(consumed.size(), halt_at + 1) << workers << " workers, " << count << " items";
          EXPECT_GE(run.prefix, halt_at + 1);
        } else {
          EXPECT_EQ(consumed.size(), count);
          EXPECT_EQ(run.prefix, count);
          for (std::size_t i = 0; i < count; ++i) EXPECT_EQ(processed[i].load(), 1);
        }
      }
    }
  }
}

// An item that throws ends its run with that exception and a stop inside an
// item cuts the prefix before it; the pool serves the next run as before.
TEST(PrefixPool, RethrowsAndStopsThenServesTheNextRun) {
  detail::PrefixPool pool(2);
  EXPECT_THROW(pool.run(
                   50, StopRequest(),
                   [](std::size_t, std::size_t item) {
                     if (item == 7) throw std::runtime_error("item 7");
                   },
                   nullptr),
               std::runtime_error);
  const detail::PrefixRun stopped = pool.run(
      50, StopRequest(),
      [](std::size_t, std::size_t item) {
        if (item == 9) throw Stopped(StopReason::time_limit);
      },
      nullptr);
  EXPECT_EQ(stopped.stopped, StopReason::time_limit);
  EXPECT_LE(stopped.prefix, 9u);
  std::atomic<std::size_t> items{0};
  const detail::PrefixRun whole = pool.run(50, StopRequest(), [&](std::size_t, std::size_t) { ++items; }, nullptr);
  EXPECT_EQ(whole.prefix, 50u);
  EXPECT_EQ(items.load(), 50u);
}

}  // namespace
}  // namespace pleat
