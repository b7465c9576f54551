// The distributed walk with its ranks as threads of one process (an
// in-memory WalkTransport): the same regions in the same order, and the same
// summary, as walk_regions, for 1 to 4 ranks; the region codec gives back
// every field. The MPI transport itself is tested end to end (tests/mpi/).
#include "enumerate/distributed_walk.hpp"

#include "core/network_io.hpp"
#include "core/random_network.hpp"
#include "enumerate/region_codec.hpp"
#include "tests/support/thread_transport.hpp"

#include <gtest/gtest.h>

#include <thread>

namespace pleat {
namespace {

using test::Board;
using test::ThreadTransport;

std::string bytes_of(const Region& region) {
  ByteWriter out;
  put_region(out, region);
  return out.take();
}

struct Walked {
  WalkSummary summary;
  std::vector<std::string> regions;  // each delivered region's bytes, in order
};

Walked walk_alone(const Network& network, const Domain& domain, WalkOptions options) {
  Walked walked;
  const auto keep = options.on_region;
  options.on_region = [&](const Region& region) {
    walked.regions.push_back(bytes_of(region));
    return keep ? keep(region) : true;
  };
  walked.summary = walk_regions(network, domain, options);
  return walked;
}

// Rank 0 leads on this thread; ranks 1.. follow on their own threads.
Walked walk_across(std::size_t ranks, const Network& network, const Domain& domain, WalkOptions options) {
  Board board(ranks);
  std::vector<std::thread> followers;
  for (std::size_t r = 1; r < ranks; ++r)
    followers.emplace_back([&, r] {
      ThreadTransport transport(board, r);
      follow_distributed_walks(network, domain, transport, nullptr);
    });
  ThreadTransport leader(board, 0);
  Walked walked;
  const auto keep = options.on_region;
  options.on_region = [&](const Region& region) {
    walked.regions.push_back(bytes_of(region));
    return keep ? keep(region) : true;
  };
  walked.summary = lead_distributed_walk(network, domain, options, leader);
  finish_distributed_walks(leader);
  for (auto& thread : followers) thread.join();
  return walked;
}

void expect_same_walk(const Walked& alone, const Walked& across) {
  ASSERT_EQ(alone.regions.size(), across.regions.size());
  for (std::size_t i = 0; i < alone.regions.size(); ++i) EXPECT_EQ(alone.regions[i], across.regions[i]) << "region " << i;
  EXPECT_EQ(alone.summary.regions, across.summary.regions);
  EXPECT_EQ(alone.summary.bounded_regions, across.summary.bounded_regions);
  EXPECT_EQ(alone.summary.linear_regions, across.summary.linear_regions);
  EXPECT_EQ(alone.summary.regions_per_layer, across.summary.regions_per_layer);
  EXPECT_EQ(alone.summary.nonsmooth_regions, across.summary.nonsmooth_regions);
  EXPECT_EQ(alone.summary.facets, across.summary.facets);
  EXPECT_EQ(alone.summary.complete, across.summary.complete);
  EXPECT_EQ(alone.summary.stop_reason, across.summary.stop_reason);
  EXPECT_EQ(alone.summary.certified, across.summary.certified);
  EXPECT_EQ(alone.summary.counts.lp_queries, across.summary.counts.lp_queries);
  EXPECT_EQ(alone.summary.counts.filter_settled, across.summary.counts.filter_settled);
  EXPECT_EQ(alone.summary.counts.exact_fallbacks, across.summary.counts.exact_fallbacks);
  EXPECT_EQ(alone.summary.degenerate_crossings, across.summary.degenerate_crossings);
  EXPECT_EQ(alone.summary.patterns, across.summary.patterns);
}

Domain unit_box(std::size_t dim) { return make_box(RationalVector(dim, Rational(-1)), RationalVector(dim, Rational(1))); }

Network test_network(const std::string& name) {
  return read_network_file(std::string(PLEAT_SOURCE_DIR) + "/tests/data/" + name);
}

TEST(DistributedWalk, RandomNetworksGiveTheSameWalkForOneToFourRanks) {
  // 2 inputs (plane path), 3 inputs (space path) and 4 inputs (oracle path).
  for (const auto& architecture : std::vector<std::vector<std::size_t>>{{2, 6, 5, 1}, {3, 5, 4, 1}, {4, 4, 3, 2}}) {
    const Network network = random_network(architecture, 11);
    const Domain domain = unit_box(architecture[0]);
    WalkOptions options;
    options.threads = 2;
    const Walked alone = walk_alone(network, domain, options);
    ASSERT_TRUE(alone.summary.certified);
    ASSERT_GT(alone.summary.regions, 20u);
    for (std::size_t ranks = 1; ranks <= 4; ++ranks) {
      SCOPED_TRACE("inputs " + std::to_string(architecture[0]) + ", ranks " + std::to_string(ranks));
      expect_same_walk(alone, walk_across(ranks, network, domain, options));
    }
  }
}

TEST(DistributedWalk, DegenerateNetworksAndCertificatesAreTheSame) {
  // Coincident and concurrent hyperplanes branch crossings; dead neurons give
  // 'z' states and non-smooth regions; certificates travel too.
  for (const char* name : {"coincident2d.json", "concurrent2d.json", "five_coincident2d.json", "dead2d.json",
                           "fd_relu_output_hidden_middle.json", "zero_quadrant2d.json"}) {
    const Network network = test_network(name);
    const Domain domain = unit_box(network.input_dim);
    WalkOptions options;
    options.threads = 1;
    options.keep_certificates = true;
    const Walked alone = walk_alone(network, domain, options);
    for (std::size_t ranks : {2u, 3u}) {
      SCOPED_TRACE(std::string(name) + ", ranks " + std::to_string(ranks));
      expect_same_walk(alone, walk_across(ranks, network, domain, options));
    }
  }
}

TEST(DistributedWalk, MaxRegionsAndARequestedStopKeepTheSamePrefix) {
  const Network network = random_network({2, 6, 6, 1}, 3);
  const Domain domain = unit_box(2);
  WalkOptions capped;
  capped.threads = 1;
  capped.max_regions = 17;
  const Walked alone = walk_alone(network, domain, capped);
  ASSERT_EQ(alone.summary.stop_reason, StopReason::max_regions);
  expect_same_walk(alone, walk_across(3, network, domain, capped));

  WalkOptions asked;
  asked.threads = 1;
  std::size_t delivered = 0;
  asked.on_region = [&](const Region&) { return ++delivered < 9; };
  const Walked stopped_alone = walk_alone(network, domain, asked);
  delivered = 0;
  const Walked stopped_across = walk_across(4, network, domain, asked);
  ASSERT_EQ(stopped_alone.summary.stop_reason, StopReason::requested);
  EXPECT_FALSE(stopped_across.summary.certified);
  expect_same_walk(stopped_alone, stopped_across);
}

TEST(DistributedWalk, AnInterruptStopsEveryRankAndNothingIsCertified) {
  const Network network = random_network({2, 5, 1}, 4);
  std::atomic<bool> interrupted{true};
  WalkOptions options;
  options.threads = 1;
  options.interrupt = &interrupted;
  const Walked across = walk_across(3, network, unit_box(2), options);
  EXPECT_EQ(across.summary.stop_reason, StopReason::interrupted);
  EXPECT_FALSE(across.summary.complete);
  EXPECT_FALSE(across.summary.certified);
}

TEST(DistributedWalk, OwnersSpreadPatternsOverTheRanks) {
  // Every pattern of a walk has one owner; with 3 ranks each gets a share
  // (a hash that sent everything to one rank would fail here).
  const Network network = random_network({2, 8, 8, 1}, 5);
  WalkOptions options;
  options.threads = 1;
  const WalkSummary summary = walk_regions(network, unit_box(2), options);
  std::vector<std::size_t> owned(3, 0);
  for (const auto& pattern : summary.patterns) ++owned[owner_of_pattern(pattern, 3)];
  for (std::size_t count : owned) EXPECT_GT(count, summary.regions / 5);
  EXPECT_EQ(owner_of_pattern(summary.patterns.front(), 1), 0u);
}

TEST(RegionCodec, GivesBackEveryField) {
  const Network network = test_network("dead2d.json");
  WalkOptions options;
  options.threads = 1;
  options.keep_certificates = true;
  std::vector<Region> regions;
  options.on_region = [&](const Region& region) {
    regions.push_back(region);
    return true;
  };
  walk_regions(network, unit_box(2), options);
  ASSERT_FALSE(regions.empty());
  for (const Region& region : regions) {
    ByteWriter out;
    put_region(out, region);
    const std::string bytes = out.take();
    ByteReader in(bytes);
    const Region back = get_region(in);
    EXPECT_TRUE(in.at_end());
    EXPECT_EQ(back.id, region.id);
    EXPECT_EQ(back.pattern, region.pattern);
    EXPECT_EQ(back.interior.point, region.interior.point);
    EXPECT_EQ(back.bounded, region.bounded);
    EXPECT_EQ(back.affine.linear, region.affine.linear);
    EXPECT_EQ(back.affine.offset, region.affine.offset);
    EXPECT_EQ(back.nonsmooth_neurons, region.nonsmooth_neurons);
    ASSERT_EQ(back.facets.size(), region.facets.size());
    for (std::size_t f = 0; f < region.facets.size(); ++f) {
      EXPECT_EQ(back.facets[f].neighbor, region.facets[f].neighbor);
      EXPECT_EQ(back.facets[f].normal, region.facets[f].normal);
      EXPECT_EQ(back.facets[f].relative_interior.point, region.facets[f].relative_interior.point);
      EXPECT_EQ(back.facets[f].domain_side, region.facets[f].domain_side);
    }
    ASSERT_TRUE(back.certificates && region.certificates);
    EXPECT_EQ(back.certificates->cell.constraints, region.certificates->cell.constraints);
    EXPECT_EQ(back.certificates->classification.groups.size(), region.certificates->classification.groups.size());
    // Cut anywhere, the bytes are refused, never read past.
    ByteReader cut(std::string_view(bytes).substr(0, bytes.size() / 2));
    EXPECT_THROW(get_region(cut), std::runtime_error);
  }
  // Negative values, big numerators and denominators.
  ByteWriter out;
  const Rational big("-123456789012345678901234567890/98765432109876543210987");
  out.put_rational(big);
  out.put_rational(Rational(0));
  const std::string bytes = out.take();
  ByteReader in(bytes);
  EXPECT_EQ(in.get_rational(), big);
  EXPECT_EQ(in.get_rational(), Rational(0));
}

}  // namespace
}  // namespace pleat
