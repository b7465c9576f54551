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
#include "enumerate/detail/walk_pipeline.hpp"
#include "enumerate/pattern_cell.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <stdexcept>
#include <limits>
#include <map>
#include <mutex>
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
// by a worker of the pool.
TEST(PrefixPool, ServesManyRuns) {
  for (std::size_t workers : {1u, 2u, 3u}) {
    detail::PrefixPool pool(workers);
    for (std::size_t count : {0u, 1u, 2u, 3u, 97u, 500u}) {
      std::vector<std::atomic<int>> processed(count);
      std::atomic<bool> is_worker_in_range{true};
      const detail::PrefixRun run = pool.run(
          count, StopRequest(),
          [&](std::size_t worker, std::size_t item) {
            if (worker >= workers) is_worker_in_range = false;
            ++processed[item];
          },
          nullptr);
      EXPECT_TRUE(is_worker_in_range);
      EXPECT_EQ(run.stopped, StopReason::none);
      EXPECT_EQ(run.prefix, count);
      for (std::size_t i = 0; i < count; ++i) EXPECT_EQ(processed[i].load(), 1);
    }
  }
}

// A walk-shaped run of detail::WalkPipeline: each consumed task adds two
// children until `total` tasks exist, levels are consumed in the reverse of
// the order their tasks were added (as a walk sorts each level). Records
// what was consumed, in order.
struct PipelineRun {
  std::vector<std::size_t> consumed;
  StopReason stopped = StopReason::none;
  bool is_worker_in_range = true;
  bool is_consumed_unprocessed = false;
};

PipelineRun run_tree_pipeline(std::size_t workers, std::size_t window, std::size_t total, std::size_t halt_after,
                              const std::function<void(std::size_t task)>& on_process = nullptr) {
  PipelineRun out;
  detail::WalkPipeline pipeline(workers, window);
  std::vector<std::size_t> level{pipeline.add(ActivationPattern{{NeuronState::on}})};
  std::vector<std::size_t> next_level;
  std::size_t added = 1, position = 0;
  std::mutex processed_mutex;
  std::vector<int> processed(total, 0);
  out.stopped = pipeline.run(
      level.front(), StopRequest(),
      [&](std::size_t worker, detail::WalkTask& task) {
        if (worker >= workers) out.is_worker_in_range = false;
        const std::size_t index = task.pattern.states.size() - 1;  // the pattern encodes its task's number
        if (on_process) on_process(index);
        task.processed = std::make_unique<detail::Processed>();
        task.processed->degenerate_crossings = index;
        const std::lock_guard lock(processed_mutex);
        ++processed[index];
      },
      [&](std::size_t index, detail::WalkTask& task) -> std::optional<std::size_t> {
        {
          const std::lock_guard lock(processed_mutex);
          if (processed[index] != 1 || task.processed->degenerate_crossings != index)
            out.is_consumed_unprocessed = true;
        }
        out.consumed.push_back(index);
        if (out.consumed.size() == halt_after) return std::nullopt;
        for (int child = 0; child < 2 && added < total; ++child, ++added) {
          ActivationPattern pattern{std::vector<NeuronState>(added + 1, NeuronState::off)};
          next_level.push_back(pipeline.add(std::move(pattern)));
        }
        if (++position < level.size()) return level[position];
        level.assign(next_level.rbegin(), next_level.rend());
        next_level.clear();
        position = 0;
        if (level.empty()) return std::nullopt;
        pipeline.release_before(*std::min_element(level.begin(), level.end()));
        return level.front();
      },
      nullptr);
  return out;
}

// The tasks are consumed in the order asked for, each once and only after
// it was processed, for any thread count and window; a consume that ends the
// run ends it right there.
TEST(WalkPipeline, ConsumesInTheOrderAskedForAnyThreadCount) {
  const PipelineRun reference = run_tree_pipeline(1, 1, 300, 0);
  ASSERT_EQ(reference.consumed.size(), 300u);
  EXPECT_EQ(reference.consumed[1], 2u);  // level 1 reversed: task 2 before task 1
  std::vector<std::size_t> sorted = reference.consumed;
  std::sort(sorted.begin(), sorted.end());
  for (std::size_t i = 0; i < sorted.size(); ++i) EXPECT_EQ(sorted[i], i);
  for (std::size_t workers : {1u, 2u, 3u}) {
    for (std::size_t window : {1u, 4u, 1000u}) {
      for (std::size_t halt_after : {0u, 1u, 77u}) {
        const PipelineRun run = run_tree_pipeline(workers, window, 300, halt_after);
        const std::size_t expected = halt_after ? halt_after : 300;
        EXPECT_EQ(run.consumed, std::vector<std::size_t>(reference.consumed.begin(),
                                                         reference.consumed.begin() + static_cast<long>(expected)))
            << workers << " workers, window " << window;
        EXPECT_EQ(run.stopped, StopReason::none);
        EXPECT_TRUE(run.is_worker_in_range);
        EXPECT_FALSE(run.is_consumed_unprocessed);
      }
    }
  }
}

// A task that throws ends the run with that exception; Stopped inside a task
// stops the run with its reason, leaving that task (and everything consumed
// after it) out: what was consumed is a prefix of the whole order.
TEST(WalkPipeline, RethrowsAndStops) {
  const PipelineRun whole = run_tree_pipeline(1, 1, 200, 0);
  for (std::size_t workers : {1u, 2u, 3u}) {
    EXPECT_THROW(run_tree_pipeline(workers, 8, 200, 0,
                                   [](std::size_t task) {
                                     if (task == 57) throw std::runtime_error("task 57");
                                   }),
                 std::runtime_error);
    const PipelineRun stopped = run_tree_pipeline(workers, 8, 200, 0, [](std::size_t task) {
      if (task == 91) throw Stopped(StopReason::time_limit);
    });
    EXPECT_EQ(stopped.stopped, StopReason::time_limit);
    const auto at = std::find(whole.consumed.begin(), whole.consumed.end(), 91u) - whole.consumed.begin();
    EXPECT_LE(stopped.consumed.size(), static_cast<std::size_t>(at));
    EXPECT_EQ(stopped.consumed, std::vector<std::size_t>(whole.consumed.begin(),
                                                         whole.consumed.begin() + static_cast<long>(stopped.consumed.size())));
    EXPECT_FALSE(stopped.is_consumed_unprocessed);
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
