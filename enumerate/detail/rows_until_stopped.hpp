// certify's points stage adds a batch's rows to its basis (functional_dimension.cpp).
// Internal to enumerate/ (not installed).
#pragma once

#include "core/rank.hpp"
#include "core/stop.hpp"

#include <algorithm>
#include <cstddef>
#include <vector>

namespace pleat::detail {

// ModularRowBasis::add_rows on `rows` until rank_limit, one chunk of add_rows'
// own size (48 rows, core/modular_basis.cpp) at a time, `stop` polled before
// each: the same basis, kept flags and count of rows considered as one call
// when no stop comes (the rows those after are untouched), and a stop acts
// within a chunk. One call for a batch's rows of 3,40,40,40,1 (D = 3481) ran
// up to a second past --time-limit. kept[k] is set exactly when rows[k]
// raised the rank.
inline std::size_t add_rows_until_stopped(ModularRowBasis& basis, const std::vector<ModularVector>& rows,
                                          std::size_t rank_limit, std::vector<bool>& kept,
                                          const ModularRowBasis::ParallelFor& parallel, const StopRequest& stop) {
  constexpr std::ptrdiff_t chunk_size = 48;
  kept.assign(rows.size(), false);
  std::vector<bool> chunk_kept;
  std::size_t considered = 0;
  for (std::size_t done = chunk_size; done == chunk_size && considered < rows.size() && !stop.is_requested();) {
    const auto from = rows.begin() + static_cast<std::ptrdiff_t>(considered);
    const std::vector<ModularVector> chunk(from, from + std::min(chunk_size, rows.end() - from));
    done = basis.add_rows(chunk, rank_limit, chunk_kept, parallel);
    for (std::size_t k = 0; k < done; ++k) kept[considered++] = chunk_kept[k];
  }
  return considered;
}

}  // namespace pleat::detail
