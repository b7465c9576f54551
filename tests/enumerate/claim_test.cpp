// Claim verdicts and the explanations beside certify's value (enumerate/claim),
// on results written by hand: the verdict follows from the bounds alone.
#include "enumerate/claim.hpp"

#include "core/network_io.hpp"

#include <gtest/gtest.h>

namespace pleat {
namespace {

FunctionalDimensionResult bounds(std::size_t lower, std::size_t upper, bool certified) {
  FunctionalDimensionResult result;
  result.parametric_dimension = 13;
  result.scaling_bound = 10;
  result.lower_bound = lower;
  result.upper_bound = upper;
  result.certified = certified;
  return result;
}

TEST(Claim, VerdictsFollowTheProvedBounds) {
  const FunctionalDimensionResult certified = bounds(9, 9, true);
  EXPECT_EQ(judge_claim(9, certified).verdict, Verdict::consistent);
  EXPECT_EQ(judge_claim(8, certified).verdict, Verdict::too_low);
  EXPECT_EQ(judge_claim(10, certified).verdict, Verdict::impossible);
  EXPECT_EQ(judge_claim(14, certified).reason, "exceeds the parametric dimension 13");
  const FunctionalDimensionResult open = bounds(7, 10, false);
  EXPECT_EQ(judge_claim(8, open).reason, "within the proved bounds [7, 10]");
  EXPECT_NE(judge_claim(11, open).reason.find("the scaling bound"), std::string::npos);
}

TEST(Claim, AtPointsTheExactRankDecides) {
  EXPECT_EQ(judge_claim_at_points(5, 5).verdict, Verdict::consistent);
  EXPECT_EQ(judge_claim_at_points(4, 5).verdict, Verdict::too_low);
  EXPECT_EQ(judge_claim_at_points(6, 5).verdict, Verdict::impossible);
}

TEST(Claim, MechanismGroupsCountDirectionsInFirstSeenOrder) {
  FunctionalDimensionResult result = bounds(7, 7, true);
  result.extra_kernel = {{{}, 0, Mechanism::dead_neuron, {2}}, {{}, 0, Mechanism::duplicate_neurons, {0, 1}}, {{}, 0, Mechanism::dead_neuron, {2}}};
  const std::vector<MechanismGroup> groups = mechanism_groups(result);
  ASSERT_EQ(groups.size(), 2u);
  EXPECT_EQ(groups[0].mechanism, Mechanism::dead_neuron);
  EXPECT_EQ(groups[0].directions, 2u);
  EXPECT_EQ(groups[1].neurons, (std::vector<std::size_t>{0, 1}));
}

TEST(Claim, PointsOutsideTheDomainAreNamed) {
  const Network network = parse_network(R"({"format": "pleat-network/1", "input_dim": 1, "layers": [
    {"weights": [["1"]], "bias": ["0"]}, {"weights": [["1"]], "bias": ["0"], "activation": "linear"}]})");
  const Domain box = make_box({Rational(-1)}, {Rational(1)});
  EXPECT_EQ(batch_point_pattern(network, box, {Rational(1, 2)}, "p0").states.size(), 1u);
  try {
    (void)batch_point_pattern(network, box, {Rational(1)}, "p1");
    FAIL() << "no error";
  } catch (const input_error& error) {
    // (1) is on the open box's boundary: "outside" would be false (it said so).
    EXPECT_EQ(std::string(error.what()), "p1: (1) lies on the boundary of the domain box:(-1,1), not strictly inside it");
  }
  try {
    (void)batch_point_pattern(network, box, {Rational(3, 2)}, "p0");
    FAIL() << "no error";
  } catch (const input_error& error) {
    EXPECT_EQ(std::string(error.what()).rfind("p0: (3/2) lies outside the domain", 0), 0u) << error.what();
  }
  EXPECT_THROW((void)batch_point_pattern(network, box, {Rational(0)}, "p0"), input_error);  // on the hyperplane
}

}  // namespace
}  // namespace pleat
