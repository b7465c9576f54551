#include "enumerate/detail/walk_adjacency.hpp"

#include <algorithm>

namespace pleat::detail {

WalkAdjacency::WalkAdjacency(std::function<AffineMap(std::uint32_t)> recompute) : recompute_(std::move(recompute)) {}

void WalkAdjacency::start_level(std::uint32_t first_id) {
  // Keep the previous level's maps (neighbours of this level's regions) and drop older ones.
  while (first_kept_ < previous_level_first_ && !maps_.empty()) {
    maps_.pop_front();
    ++first_kept_;
  }
  previous_level_first_ = first_id;
}

std::uint32_t WalkAdjacency::find(std::uint32_t i) {
  while (parent_[i] != i) i = parent_[i] = parent_[parent_[i]];
  return i;
}

const AffineMap& WalkAdjacency::map_of(std::uint32_t id, std::uint32_t slot, AffineMap& spare) const {
  if (id >= first_kept_) return maps_[id - first_kept_];
  spare = recompute_(slot);
  return spare;
}

// a was delivered before b (or is b); b's map is the last one kept.
void WalkAdjacency::join_if_same_map(std::uint32_t a, std::uint32_t a_slot, std::uint32_t b) {
  AffineMap spare;
  if (map_of(a, a_slot, spare) == maps_.back()) parent_[find(a)] = find(b);
}

void WalkAdjacency::add_region(std::uint32_t id, std::uint32_t slot, const std::vector<std::uint32_t>& neighbours,
                               AffineMap affine, const std::vector<std::uint32_t>& id_of_slot) {
  parent_.push_back(id);
  maps_.push_back(std::move(affine));
  for (std::uint32_t neighbour : neighbours) {
    const std::uint32_t other = id_of_slot[neighbour];
    if (other == no_region) {
      pending_[neighbour].emplace_back(id, slot);  // counted when it is delivered
      continue;
    }
    ++facets_;
    join_if_same_map(other, neighbour, id);
  }
  // Earlier regions that named this one; a pair both name was counted above.
  if (auto found = pending_.find(slot); found != pending_.end()) {
    for (const auto& [earlier, earlier_slot] : found->second) {
      if (std::find(neighbours.begin(), neighbours.end(), earlier_slot) != neighbours.end()) continue;
      ++facets_;
      join_if_same_map(earlier, earlier_slot, id);
    }
    pending_.erase(found);
  }
}

std::size_t WalkAdjacency::linear_regions() {
  std::size_t roots = 0;
  for (std::uint32_t i = 0; i < parent_.size(); ++i) roots += find(i) == i;
  return roots;
}

}  // namespace pleat::detail
