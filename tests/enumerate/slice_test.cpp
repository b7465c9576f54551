// A network restricted to a plane x[axis] = value: the restriction evaluates
// exactly like the network at the point with the value put back (checked at
// rational points, an exact identity), keeps the neurons' numbering (the
// patterns agree), and its domain is the section of the domain.
#include "enumerate/slice.hpp"

#include "core/evaluate.hpp"
#include "core/random_network.hpp"

#include <gtest/gtest.h>

namespace pleat {
namespace {

RationalVector with_value(const RationalVector& x, std::size_t axis, const Rational& value) {
  RationalVector out = x;
  out.insert(out.begin() + static_cast<std::ptrdiff_t>(axis), value);
  return out;
}

TEST(Slice, EvaluatesAsTheNetworkOnThePlane) {
  const Network network = random_network({3, 5, 4, 2}, 11);
  for (std::size_t axis = 0; axis < 3; ++axis) {
    const Rational value(-3, 7);
    const Network slice = restrict_to_slice(network, axis, value);
    EXPECT_EQ(slice.input_dim, 2u);
    EXPECT_EQ(slice.relu_neuron_count(), network.relu_neuron_count());
    for (long i = -3; i <= 3; ++i) {
      const RationalVector x{Rational(i, 5), Rational(2 * i + 1, 3)};
      const Evaluation cut = evaluate_exact(slice, x);
      const Evaluation whole = evaluate_exact(network, with_value(x, axis, value));
      EXPECT_EQ(cut.output, whole.output) << "axis " << axis << " point " << i;
      EXPECT_EQ(cut.pattern.states, whole.pattern.states) << "axis " << axis << " point " << i;
    }
  }
}

TEST(Slice, DomainIsTheSection) {
  const Domain box = make_box({Rational(-1), Rational(-2), Rational(0)}, {Rational(1), Rational(2), Rational(5)});
  const Domain cut = slice_domain(box, 1, Rational(1, 2));
  ASSERT_EQ(cut.kind, Domain::Kind::box);
  EXPECT_EQ(cut.lower, (RationalVector{Rational(-1), Rational(0)}));
  EXPECT_EQ(cut.upper, (RationalVector{Rational(1), Rational(5)}));
  EXPECT_THROW(slice_domain(box, 1, Rational(2)), input_error);  // on the box's side: no interior
  EXPECT_EQ(slice_domain(make_whole_space(3), 0, Rational(9)).kind, Domain::Kind::whole_space);
  // The simplex x, y, z > 0, x + y + z < 1 cut at z = 1/2: the triangle
  // x, y > 0, x + y < 1/2 (by hand); at z = 1 it is empty.
  std::vector<lp::Constraint> sides{{{Rational(1), Rational(0), Rational(0)}, Rational(0)},
                                    {{Rational(0), Rational(1), Rational(0)}, Rational(0)},
                                    {{Rational(0), Rational(0), Rational(1)}, Rational(0)},
                                    {{Rational(-1), Rational(-1), Rational(-1)}, Rational(1)}};
  const Domain simplex = make_polytope(3, sides);
  const Domain triangle = slice_domain(simplex, 2, Rational(1, 2));
  ASSERT_EQ(triangle.kind, Domain::Kind::polytope);
  ASSERT_EQ(triangle.constraints.size(), 3u);  // z > 0 holds on the whole plane: dropped
  EXPECT_EQ(triangle.constraints[2].normal, (RationalVector{Rational(-1), Rational(-1)}));
  EXPECT_EQ(triangle.constraints[2].offset, Rational(1, 2));
  EXPECT_THROW(slice_domain(simplex, 2, Rational(1)), input_error);
}

}  // namespace
}  // namespace pleat
