// Re-checking saved walks: a walk's own records verify, and each targeted
// edit (a region removed and its neighbours pointed at themselves, a neighbour
// that is not across its facet, swapped ids, a flipped flag, a changed copy of
// a certificate) is refused with the line that carries it.
#include "enumerate/walk_check.hpp"

#include "core/network_io.hpp"
#include "enumerate/walker.hpp"

#include <gtest/gtest.h>

#include <limits>

namespace pleat {
namespace {

// The records as `pleat walk --certificates` writes them, line 2 onwards.
std::vector<SavedRegion> saved_walk(const Network& network, const Domain& domain) {
  std::vector<SavedRegion> saved;
  WalkOptions options;
  options.threads = 1;
  options.keep_certificates = true;
  options.on_region = [&](const Region& region) {
    saved.push_back(SavedRegion{region.id + 2, region, region.interior.point});
    return true;
  };
  walk_regions(network, domain, options);
  return saved;
}

class WalkCheckTest : public ::testing::Test {
 protected:
  Network network = read_network_file(PLEAT_SOURCE_DIR "/data/fold2d.json");
  Domain box = make_box({Rational(-1), Rational(-1)}, {Rational(1), Rational(1)});
  std::vector<SavedRegion> regions = saved_walk(network, box);

  void expect_refused(const std::vector<SavedRegion>& edited, std::size_t line, const std::string& needle) {
    const WalkCheck check = check_saved_walk(network, box, edited);
    EXPECT_FALSE(check.is_verified);
    EXPECT_EQ(check.failure.rfind("line " + std::to_string(line) + ": ", 0), 0u) << check.failure;
    EXPECT_NE(check.failure.find(needle), std::string::npos) << check.failure;
  }
};

TEST_F(WalkCheckTest, TheWalksOwnRecordsVerify) {
  ASSERT_EQ(regions.size(), 52u);  // pleat walk data/fold2d.json --box -1,1 (README)
  const WalkCheck check = check_saved_walk(network, box, regions);
  EXPECT_TRUE(check.is_verified) << check.failure;
  EXPECT_EQ(check.regions, 52u);
}

// The attack that once printed "verified": delete a region, point every facet
// that named it at its own region, renumber.
TEST_F(WalkCheckTest, RegionRemovedAndFacetsPointedAtThemselvesIsRefused) {
  for (std::size_t removed : {std::size_t{0}, std::size_t{25}, regions.size() - 1}) {
    SCOPED_TRACE("removed " + std::to_string(removed));
    std::vector<SavedRegion> edited = regions;
    const ActivationPattern gone = edited[removed].region.pattern;
    edited.erase(edited.begin() + static_cast<std::ptrdiff_t>(removed));
    std::optional<std::size_t> first_line;
    for (std::size_t i = 0; i < edited.size(); ++i) {
      edited[i].region.id = i;
      edited[i].line = i + 2;
      for (auto& facet : edited[i].region.facets)
        if (facet.neighbor == gone) {
          facet.neighbor = edited[i].region.pattern;
          if (!first_line) first_line = edited[i].line;
        }
    }
    ASSERT_TRUE(first_line);
    expect_refused(edited, *first_line, "names its own region");
  }
}

TEST_F(WalkCheckTest, NeighborNotAcrossItsFacetIsRefused) {
  std::vector<SavedRegion> edited = regions;
  RegionFacet* facet = nullptr;
  for (auto& f : edited[3].region.facets)
    if (f.neighbor) facet = &f;
  ASSERT_NE(facet, nullptr);
  for (const auto& other : regions)
    if (other.region.pattern != *facet->neighbor && other.region.pattern != edited[3].region.pattern) {
      facet->neighbor = other.region.pattern;
      break;
    }
  expect_refused(edited, 5, "does not lie across");
}

TEST_F(WalkCheckTest, SwappedIdsAreRefused) {
  std::vector<SavedRegion> edited = regions;
  std::swap(edited[1].region.id, edited[2].region.id);
  expect_refused(edited, 3, "out of place");
}

TEST_F(WalkCheckTest, FlippedBoundaryFlagAndSideAreRefused) {
  std::size_t k = 0;
  while (!regions[k].region.touches_domain_boundary) ++k;
  std::vector<SavedRegion> flipped = regions;
  flipped[k].region.touches_domain_boundary = false;
  expect_refused(flipped, k + 2, "touches_domain_boundary");

  std::vector<SavedRegion> moved = regions;
  for (auto& facet : moved[k].region.facets)
    if (facet.domain_side) facet.domain_side = (*facet.domain_side + 1) % 4;
  expect_refused(moved, k + 2, "\"side\"");
}

TEST_F(WalkCheckTest, ChangedCertificateCopiesAreRefused) {
  std::vector<SavedRegion> point = regions;
  point[4].certificate_point[0] += 7;
  expect_refused(point, 6, "interior_point");

  std::vector<SavedRegion> constraint = regions;
  constraint[4].region.certificates->cell.constraints[0].offset += 1;
  expect_refused(constraint, 6, "certificate constraint 0");

  std::vector<SavedRegion> neurons = regions;
  for (auto& facet : neurons[4].region.facets)
    if (!facet.neurons.empty()) facet.neurons[0] += 1;
  expect_refused(neurons, 6, "names neurons");
}

}  // namespace
}  // namespace pleat
