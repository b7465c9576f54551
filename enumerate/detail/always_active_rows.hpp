// Rows of certify's extra directions proved without the per-region check,
// from neurons that are on in every smooth region. Internal to enumerate/
// (not installed).
//
// For neurons a, b of hidden layer k that are on in a region R, these
// directions annihilate R's coefficient-block rows exactly (the pattern's
// affine map does not change to first order: a polynomial identity in the
// parameters with the pattern fixed):
//   shift(a):  b_k[a] += 1, b_{k+1} -= W_{k+1}[:,a]
//              (z_{k+1} gains W_{k+1}[:,a] y_k[a]' - W_{k+1}[:,a] = 0, a on);
//   mix(a, b): W_k[a,:] += W_k[b,:], b_k[a] += b_k[b], W_{k+1}[:,b] -= W_{k+1}[:,a]
//              (z_k[a] gains z_k[b]; z_{k+1} gains W_{k+1}[:,a] (y_k'[a] -
//              y_k[b]) = W_{k+1}[:,a] (z_k[b] - z_k[b]) = 0, a and b on).
// Each such generator g, minus its scaling part (g' = g - sum a_n S_n with
// g' 0 at the scaling pivots Q), is checked to equal sum_j g'[L_j] E_j
// exactly (L the candidate's leading columns). When the coefficients of some
// generators on a set B of rows form a nonsingular matrix, each row of B is
// a combination of those g' (annihilating every region where the neurons
// are on), the scaling directions and the rows outside B: it annihilates
// every region where the rows outside B do. Exact.
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "enumerate/detail/kernel_check.hpp"

#include <cstddef>
#include <vector>

namespace pleat::detail {

// Marks the rows of `candidate` (extra directions: each row's first entry
// its leading column) that annihilate every pattern of `smooth` provided the
// unmarked rows do, chosen among `heavy` (row indices, the ones worth
// sparing first). Only neurons on in every pattern of smooth are used.
// Exact; polls the current thread's stop request.
std::vector<char> rows_proved_by_always_active(const Network& network, const std::vector<ActivationPattern>& smooth,
                                               const SparseRationalRows& candidate,
                                               const std::vector<std::size_t>& heavy);

}  // namespace pleat::detail
