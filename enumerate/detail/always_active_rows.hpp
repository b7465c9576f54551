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
#include <map>
#include <optional>
#include <vector>

namespace pleat::detail {

// The shift and mix generators of the neurons on in every pattern of
// `smooth`, each less its scaling part (0 at Q; those where that part is
// found), at most 256: computed once for both uses below (on
// 2,15,15,15,15,1 seed 1, 0.4 ms each time). Exact; polls the current
// thread's stop request.
class AlwaysActiveGenerators {
 public:
  AlwaysActiveGenerators() = default;  // none
  AlwaysActiveGenerators(const Network& network, const std::vector<ActivationPattern>& smooth);
  const std::vector<std::map<std::size_t, Rational>>& reduced() const { return reduced_; }

 private:
  std::vector<std::map<std::size_t, Rational>> reduced_;  // column -> nonzero value
};

// Marks the rows of `candidate` (extra directions: each row's first entry
// its leading column) that annihilate every pattern of `smooth` provided the
// unmarked rows do, chosen among `heavy` (row indices, the ones worth
// sparing first), from the generators of smooth's neurons on in every
// pattern. Exact; polls the current thread's stop request.
std::vector<char> rows_proved_by_always_active(const AlwaysActiveGenerators& generators,
                                               const SparseRationalRows& candidate,
                                               const std::vector<std::size_t>& heavy);

// The same generators before the lift: rows of the extra directions E that
// follow from them and E's other rows, so that only the others are lifted.
// With L E's leading columns (read off its image modulo the walk's prime),
// a generator g' (0 at Q) has coordinates g'[L_j] on E's rows, exactly (E is
// the identity on L and 0 on Q). Rows B among the hard ones, costliest
// first, on which chosen generators' coordinates C are nonsingular, are then
// E_B = C_B^-1 (g' - C_rest E_rest): fill computes them from the other rows
// once those are lifted. Not proved here: the candidate is then checked as
// any other (rows_proved_by_always_active verifies the identities exactly).
class AlwaysActivePlan {
 public:
  // image: E modulo a prime (reduced row-echelon, one row per direction);
  // hard: the rows not yet known.
  AlwaysActivePlan() = default;  // no rows
  AlwaysActivePlan(const AlwaysActiveGenerators& generators, const SparseModularRows& image,
                   const std::vector<std::size_t>& hard);
  // B, increasing.
  const std::vector<std::size_t>& rows() const { return rows_; }
  // Sets the rows of B from the others (every other row set); false (B
  // left unset) when a row they need is missing.
  bool fill(std::vector<std::optional<SparseRationalRows::Row>>& rows) const;

 private:
  std::vector<std::size_t> rows_;
  std::vector<std::map<std::size_t, Rational>> generators_;    // chosen g', one per row of B
  std::vector<std::map<std::size_t, Rational>> coordinates_;   // their g'[L_j] by row j
  std::vector<std::vector<Rational>> inverse_;                 // C_B^-1 (|B| x |B|)
};

}  // namespace pleat::detail
