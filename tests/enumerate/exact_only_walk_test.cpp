// The walk with every double proposal switched off (WalkOptions::exact_only:
// each LP query answered by the exact solver alone) must find the same region
// list as the default walk, whose answers the double filter and the planar
// polygon path propose. So the fast path is never the only one tested: a
// proposal path that dropped or invented a facet would change a neighbour, a
// facet normal or the pattern set here. Networks: every file of tests/data and
// data/ (degenerate by design), on R^n0 and on a box, and small random nets.
#include "core/network_io.hpp"
#include "core/random_network.hpp"
#include "enumerate/pattern_cell.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <string>
#include <vector>

namespace pleat {
namespace {

// What a region list promises (region lines without the points, which come
// from whichever solver answered and may differ).
struct RegionRecord {
  ActivationPattern pattern;
  bool bounded = false;
  bool touches_domain_boundary = false;
  AffineMap affine;
  std::vector<std::size_t> nonsmooth_neurons;
  struct Facet {
    std::vector<std::size_t> neurons;
    std::optional<std::size_t> domain_side;
    RationalVector normal;
    Rational offset;
    std::optional<ActivationPattern> neighbor;
    std::vector<ActivationPattern> other_neighbors;
    friend bool operator==(const Facet&, const Facet&) = default;
  };
  std::vector<Facet> facets;
  friend bool operator==(const RegionRecord&, const RegionRecord&) = default;
};

struct Walked {
  WalkSummary summary;
  std::vector<RegionRecord> regions;
};

Walked walk(const Network& network, const Domain& domain, bool exact_only) {
  Walked walked;
  WalkOptions options;
  options.threads = 1;
  options.exact_only = exact_only;
  // The first regions of each walk (the order is deterministic), so the exact
  // solver's share stays small; most networks here have fewer.
  options.max_regions = 12;
  options.on_region = [&](const Region& region) {
    RegionRecord record{region.pattern, region.bounded, region.touches_domain_boundary, region.affine,
                        region.nonsmooth_neurons, {}};
    for (const auto& f : region.facets)
      record.facets.push_back({f.neurons, f.domain_side, f.normal, f.offset, f.neighbor, f.other_neighbors});
    walked.regions.push_back(std::move(record));
    return true;
  };
  walked.summary = walk_regions(network, domain, options);
  return walked;
}

void expect_same_walk(const Network& network, const Domain& domain, const std::string& name) {
  SCOPED_TRACE(name);
  const Walked fast = walk(network, domain, false);
  const Walked exact = walk(network, domain, true);
  EXPECT_EQ(fast.summary.complete, exact.summary.complete);
  EXPECT_EQ(fast.summary.certified, exact.summary.certified);
  // The exact-only walk really asked no double filter.
  EXPECT_EQ(exact.summary.counts.filter_settled, 0u);
  EXPECT_EQ(exact.summary.counts.exact_fallbacks, exact.summary.counts.lp_queries);
  EXPECT_EQ(fast.summary.patterns, exact.summary.patterns);
  EXPECT_FALSE(fast.regions.empty());
  ASSERT_EQ(fast.regions.size(), exact.regions.size());
  for (std::size_t i = 0; i < fast.regions.size(); ++i)
    EXPECT_TRUE(fast.regions[i] == exact.regions[i]) << "region " << i << " differs";
  EXPECT_EQ(fast.summary.facets, exact.summary.facets);
  EXPECT_EQ(fast.summary.bounded_regions, exact.summary.bounded_regions);
  EXPECT_EQ(fast.summary.linear_regions, exact.summary.linear_regions);
}

Domain unit_box(std::size_t dim) {
  return make_box(RationalVector(dim, Rational(-1)), RationalVector(dim, Rational(1)));
}

std::vector<std::filesystem::path> network_files() {
  std::vector<std::filesystem::path> files;
  for (const char* folder : {"/tests/data", "/data"})
    for (const auto& entry : std::filesystem::directory_iterator(std::string(PLEAT_SOURCE_DIR) + folder))
      if (entry.path().extension() == ".json") files.push_back(entry.path());
  std::sort(files.begin(), files.end());
  return files;
}

TEST(ExactOnlyWalk, SameRegionListsOnEveryDataNetwork) {
  const auto files = network_files();
  ASSERT_GE(files.size(), 10u);
  for (const auto& file : files) {
    const Network network = read_network_file(file.string());
    expect_same_walk(network, make_whole_space(network.input_dim), file.filename().string() + " on R^n");
    expect_same_walk(network, unit_box(network.input_dim), file.filename().string() + " on (-1,1)^n");
  }
}

TEST(ExactOnlyWalk, SameRegionListsOnRandomNetworks) {
  for (const std::vector<std::size_t>& architecture :
       {std::vector<std::size_t>{2, 4, 4, 1}, {2, 6, 1}, {3, 3, 3, 1}, {1, 4, 4, 1}}) {
    const Network network = random_network(architecture, 7);
    expect_same_walk(network, make_whole_space(network.input_dim), "random " + std::to_string(architecture[0]) + "-d");
    expect_same_walk(network, unit_box(network.input_dim), "random on a box");
  }
}

// The walker builds its cells from fraction-free layer maps; they must equal
// core's maps_on_pattern exactly (same affine map, same constraints).
TEST(ExactOnlyWalk, WalkerCellsEqualCoreMaps) {
  const Network network = random_network({2, 5, 5, 1}, 3);
  const Domain domain = make_whole_space(2);
  WalkOptions options;
  options.threads = 1;
  options.keep_certificates = true;
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
  EXPECT_TRUE(walk_regions(network, domain, options).certified);
  EXPECT_GT(regions, 5u);
}

}  // namespace
}  // namespace pleat
