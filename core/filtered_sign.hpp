// Filtered signs (exact geometric predicates): the sign of a short sum of
// products of exact rationals, decided from their double images whenever a
// proved error bound allows it, and left undecided (nullopt) otherwise, for
// the caller to decide in exact arithmetic. A decided sign is exact.
//
// The bound. An image is GMP's conversion (truncation: relative error below
// eps = 2^-52), trusted only when the value is 0 (image 0) or its image lies
// in [2^-300, 2^300]; anything else becomes NaN and every filter below
// declines it. So a product of <= 3 images neither overflows nor underflows
// and is within theta = (1+eps)^3 (1+u)^2 - 1 < 8.01 u of the exact product
// (u = 2^-53); a recursive double sum of N such products adds at most
// gamma_(N-1) = (N-1) u / (1 - (N-1) u) times the sum of their magnitudes M
// (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., eq. 3.4,
// from memory). The computed sum is therefore within (N + 9) u M of the exact
// one; the filters require twice that margin (M itself computed in double).
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <optional>

namespace pleat {

// The filters' image of an exact value (see above): 0 for 0, the truncated
// double inside [2^-300, 2^300], NaN outside (never trusted).
double filter_image(const Rational& value);
double filter_image(const Integer& value);

// sign(sum_k a[k] x[k] + c) for images of exact a, x, c (n terms); nullopt
// when the filter cannot decide. Exact when it returns a value.
std::optional<int> filtered_affine_sign(const double* a, const double* x, std::size_t n, double c);

// sign(a0 b1 - a1 b0) from images; nullopt when undecided. Exact when decided.
std::optional<int> filtered_determinant_sign(double a0, double a1, double b0, double b1);

// sign of det [[a0, a1, a2], [b0, b1, b2], [c0, c1, c2]] from images; nullopt
// when undecided. Exact when decided.
std::optional<int> filtered_determinant_sign(const double* a, const double* b, const double* c);

// sign of the 4 x 4 determinant with rows a, b, c, d (4 images each); nullopt
// when undecided. Exact when decided. Its 24 products have four factors
// each: within (1+eps)^4 (1+u)^3 - 1 < 11.01 u, so the sum is within
// (N + 11) u M and the filter asks twice (N + 13) u M. It declines images
// outside [2^-240, 2^240] (other than 0), so no product leaves the normal range.
std::optional<int> filtered_determinant_sign(const double* a, const double* b, const double* c, const double* d);

}  // namespace pleat
