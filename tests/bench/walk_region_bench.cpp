// Per-region and per-query micro-benchmarks of the walk (Google Benchmark):
// the whole walk on one thread (reported as time per region), one region's
// record from its pattern (describe_region), the cell's exact constraints
// (build_pattern_cell), and the lp queries on those cells. Networks are
// `pleat random` nets (He initialisation, 6 digits) of the grid.
// Run: build/tests/bench/walk_region_bench [--benchmark_filter=...]
#include "core/random_network.hpp"
#include "enumerate/walker.hpp"
#include "lp/oracle.hpp"

#include <benchmark/benchmark.h>

#include <cstddef>
#include <map>
#include <vector>

namespace {

using namespace pleat;

struct Net {
  std::vector<std::size_t> architecture;
  std::uint64_t seed;
};

// The grid: (inputs, width, hidden layers).
const std::vector<Net>& nets() {
  static const std::vector<Net> grid{
      {{2, 5, 5, 5, 1}, 1},       {{2, 10, 10, 10, 10, 1}, 1}, {{2, 15, 15, 15, 1}, 1},
      {{3, 5, 5, 5, 5, 1}, 1},    {{3, 10, 10, 10, 1}, 1},
      {{2, 15, 15, 15, 15, 15, 15, 1}, 1},  // deeper, as surveys use: 256-bit layer maps
  };
  return grid;
}

std::string net_name(const Net& net) {
  std::string name;
  for (std::size_t w : net.architecture) {
    if (!name.empty()) name += ',';
    name += std::to_string(w);
  }
  name += " seed ";
  name += std::to_string(net.seed);
  return name;
}

// The network, its domain and every region's pattern (from one walk), built once.
struct Walked {
  Network network;
  Domain domain;
  std::vector<ActivationPattern> patterns;
};

const Walked& walked(std::size_t index) {
  static std::map<std::size_t, Walked> cache;
  auto found = cache.find(index);
  if (found != cache.end()) return found->second;
  const Net& net = nets()[index];
  Walked w{random_network(net.architecture, net.seed), make_whole_space(net.architecture.front()), {}};
  WalkOptions options;
  options.threads = 1;
  w.patterns = walk_regions(w.network, w.domain, options).patterns;
  return cache.emplace(index, std::move(w)).first->second;
}

void walk_one_thread(benchmark::State& state) {
  const Net& net = nets()[static_cast<std::size_t>(state.range(0))];
  const Network network = random_network(net.architecture, net.seed);
  const Domain domain = make_whole_space(net.architecture.front());
  WalkOptions options;
  options.threads = 1;
  std::size_t regions = 0;
  for (auto _ : state) regions = walk_regions(network, domain, options).regions;
  state.SetLabel(net_name(net));
  state.counters["regions"] = static_cast<double>(regions);
  // Seconds per region, shown as us when the reader asks for it (see README).
  state.counters["per_region"] =
      benchmark::Counter(static_cast<double>(regions), benchmark::Counter::kIsIterationInvariantRate |
                                                           benchmark::Counter::kInvert);
}

void describe_each_region(benchmark::State& state) {
  const Walked& w = walked(static_cast<std::size_t>(state.range(0)));
  std::size_t next = 0;
  for (auto _ : state) {
    benchmark::DoNotOptimize(describe_region(w.network, w.domain, w.patterns[next]));
    next = (next + 1) % w.patterns.size();
  }
  state.SetLabel(net_name(nets()[static_cast<std::size_t>(state.range(0))]));
}

void build_each_cell(benchmark::State& state) {
  const Walked& w = walked(static_cast<std::size_t>(state.range(0)));
  std::size_t next = 0;
  for (auto _ : state) {
    benchmark::DoNotOptimize(build_pattern_cell(w.network, w.domain, w.patterns[next]));
    next = (next + 1) % w.patterns.size();
  }
  state.SetLabel(net_name(nets()[static_cast<std::size_t>(state.range(0))]));
}

// The lp queries alone, on the walk's own cells (built once, outside the timing).
struct Cells {
  std::vector<lp::Polyhedron> cells;
  std::vector<lp::InteriorPoint> interiors;
};

const Cells& cells_of(std::size_t index) {
  static std::map<std::size_t, Cells> cache;
  auto found = cache.find(index);
  if (found != cache.end()) return found->second;
  const Walked& w = walked(index);
  Cells cells;
  lp::Oracle oracle;
  for (const auto& pattern : w.patterns) {
    auto cell = build_pattern_cell(w.network, w.domain, pattern);
    auto centre = oracle.find_centre(cell->cell);
    cells.interiors.push_back(std::get<lp::InteriorPoint>(centre));
    cells.cells.push_back(std::move(cell->cell));
  }
  return cache.emplace(index, std::move(cells)).first->second;
}

void find_centre_each_cell(benchmark::State& state) {
  const Cells& cells = cells_of(static_cast<std::size_t>(state.range(0)));
  lp::Oracle oracle;
  std::size_t next = 0;
  for (auto _ : state) {
    benchmark::DoNotOptimize(oracle.find_centre(cells.cells[next]));
    next = (next + 1) % cells.cells.size();
  }
  state.SetLabel(net_name(nets()[static_cast<std::size_t>(state.range(0))]));
}

void classify_facets_each_cell(benchmark::State& state) {
  const Cells& cells = cells_of(static_cast<std::size_t>(state.range(0)));
  lp::Oracle oracle;
  std::size_t next = 0;
  for (auto _ : state) {
    benchmark::DoNotOptimize(oracle.classify_facets(cells.cells[next], cells.interiors[next]));
    next = (next + 1) % cells.cells.size();
  }
  state.SetLabel(net_name(nets()[static_cast<std::size_t>(state.range(0))]));
}

void decide_boundedness_each_cell(benchmark::State& state) {
  const Cells& cells = cells_of(static_cast<std::size_t>(state.range(0)));
  lp::Oracle oracle;
  std::size_t next = 0;
  for (auto _ : state) {
    benchmark::DoNotOptimize(oracle.decide_boundedness(cells.cells[next]));
    next = (next + 1) % cells.cells.size();
  }
  state.SetLabel(net_name(nets()[static_cast<std::size_t>(state.range(0))]));
}

void grid(benchmark::internal::Benchmark* bench) {
  for (std::size_t i = 0; i < nets().size(); ++i) bench->Arg(static_cast<long>(i));
}

BENCHMARK(walk_one_thread)->Apply(grid)->Unit(benchmark::kMillisecond)->MeasureProcessCPUTime();
BENCHMARK(describe_each_region)->Apply(grid)->Unit(benchmark::kMicrosecond);
BENCHMARK(build_each_cell)->Apply(grid)->Unit(benchmark::kMicrosecond);
BENCHMARK(find_centre_each_cell)->Apply(grid)->Unit(benchmark::kMicrosecond);
BENCHMARK(classify_facets_each_cell)->Apply(grid)->Unit(benchmark::kMicrosecond);
BENCHMARK(decide_boundedness_each_cell)->Apply(grid)->Unit(benchmark::kMicrosecond);

}  // namespace

BENCHMARK_MAIN();
