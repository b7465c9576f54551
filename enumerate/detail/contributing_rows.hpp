// The exact rows certify --rows-out writes: the coefficient blocks of the
// regions that contributed, stacked in order (enumerate/functional_dimension.cpp,
// after the value is settled). Internal to enumerate/ (not installed).
#pragma once

#include "core/jacobian.hpp"
#include "core/matrix.hpp"
#include "core/network.hpp"

#include <atomic>
#include <cstddef>
#include <functional>
#include <utility>
#include <vector>

namespace pleat::detail {

// The blocks' rows, stacked in order (moved, not copied). Each block is freed
// once its rows are moved, so the rows are held about once, not twice.
inline RationalMatrix stack_rows(std::vector<RationalMatrix>&& blocks, std::size_t columns) {
  std::size_t total = 0;
  for (const auto& block : blocks) total += block.rows();
  RationalMatrix out(0, columns);
  out.reserve_rows(total);
  for (auto& block : blocks) out.append_rows(std::move(block));
  return out;
}

// The rows of the first of `kept` (their patterns) in order, until interrupt
// (polled between regions; null: never) is set; `formed` says how many
// regions. Exact. With `take` set, each region's rows are given to it as they
// are formed instead, none kept (the result has no rows), until it returns
// false (it wants no more: none are formed after that region).
template <class Kept>
RationalMatrix contributing_rows(const Network& network, const std::vector<Kept>& kept,
                                 const std::atomic<bool>* interrupt, std::size_t& formed,
                                 const std::function<void(std::size_t done, std::size_t total)>& report,
                                 const std::function<bool(const RationalMatrix&)>& take = {}) {
  std::vector<RationalMatrix> blocks;
  formed = 0;
  for (std::size_t i = 0; i < kept.size() && !(interrupt && interrupt->load()); ++i) {
    RationalMatrix block = coefficient_blocks(network, kept[i].pattern);
    const bool wants_more = !take || take(block);
    if (!take) blocks.push_back(std::move(block));
    formed = i + 1;
    report(i + 1, kept.size());
    if (!wants_more) break;
  }
  return stack_rows(std::move(blocks), network.parametric_dimension());
}

}  // namespace pleat::detail
