// Another basis of the vectors the kernel check takes, with smaller entries
// (kernel_check.hpp). Internal to enumerate/ (not installed).
//
// The check proves that every vector of a set annihilates every region's
// rows. That holds exactly when every vector of their span over Q does, so
// any basis of the span may be checked instead. Extra directions in reduced
// row-echelon form often share one part with large entries up to a factor
// (on random 2,15,15,15,15,1 seed 1, three directions of 30 to 43 entries
// share a tail of 600-bit entries), and the check's products cost every
// entry's words in every region: combinations of those rows cancel the
// shared part once, before any region is checked.
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <utility>
#include <vector>

namespace pleat::detail {

// A vector's nonzero integer entries (column, value), columns increasing.
using IntegerEntries = std::vector<std::pair<std::size_t, Integer>>;

// What one vector costs the check, in the same units for every vector:
// its entries times its largest entry's bits plus a word (every product
// takes that vector's words, a word at least).
std::size_t check_cost(const IntegerEntries& row);

// More rows with large entries than this are left as they are: the search
// weighs every pair of them (measured: on a batch rank's 338 dense kernel
// vectors of 2,15,15,15,1 it cost 26 of 37 s; certify's extra directions
// are a few).
inline constexpr std::size_t max_heavy_rows_lowered = 64;

// Replaces rows by combinations that span the same space over Q and cost
// the check less (check_cost): only elementary row operations, each row
// replaced by a nonzero multiple of itself plus a multiple of another row
// (then divided by its entries' gcd), so the span is the same exactly
// whichever replacements the greedy search below makes. Rows with entries
// beyond 64 bits only: for each of their large columns, largest first, the
// cheapest row with an entry there that has not served yet cancels that
// entry from every other such row, where the result costs less. Rows may
// become empty (the rows were dependent). Exact; deterministic (the same
// rows for any thread count); polls the current thread's stop request.
// Does nothing when more than max_heavy_rows_lowered rows have large entries.
void lower_check_cost(std::vector<IntegerEntries>& rows);

}  // namespace pleat::detail
