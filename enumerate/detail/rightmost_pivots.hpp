// The columns on which the batch rank's kept rows are nonsingular modulo a
// prime (enumerate/batch_dimension.cpp), found by an elimination that polls
// the stop. Internal to enumerate/ (not installed).
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

namespace pleat::detail {

// Columns on which integer rows are nonsingular modulo p, the rightmost such
// set: the pivots of the rows' echelon form with the columns reversed (the
// column rank profile read from the right; the later layers' parameters,
// whose solves were 2-3 times cheaper in the batch rank). Listed from the
// rightmost; as many as the rows' rank modulo p (fewer than the rows when p
// loses rank). Precondition: every row has the same length, prime is a
// prime in [2, 2^63).
//
// Eliminated column_block columns at a time (each block's pivots from an LU
// of its Schur complement, the columns after it updated a column_block at a
// time by one product), so that the current StopScope is polled (Stopped
// propagates) and on_block(done, total) hears the columns done before each
// step: one FLINT rref of the whole 569 x 1981 system (certify --points on
// 2,30,30,30,1 with 300 points) held off a stop for 0.5-1.3 s.
using PivotProgress = std::function<void(std::size_t done, std::size_t total)>;
std::vector<std::size_t> rightmost_pivots(const std::vector<std::vector<Integer>>& rows, std::uint64_t prime,
                                          const PivotProgress& on_block = {});

inline constexpr std::size_t pivot_column_block = 128;

}  // namespace pleat::detail
