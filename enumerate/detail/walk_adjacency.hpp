// The walk's adjacency summary (interior facets as unordered region pairs,
// linear regions as a union-find over region ids), counted while the regions
// stream past instead of after keeping every region's affine map.
//
// A breadth-first walk meets each region's neighbours in its own level or the
// next (an unvisited neighbour joins the next level), so the affine maps of
// the current and previous level are the only ones kept. Whether two adjacent
// regions share one affine map is decided exactly, when the later of the two
// is added; a map that has left the window (possible only if the walk's
// neighbour lists were not symmetric) is recomputed exactly from its pattern.
#pragma once

#include "core/evaluate.hpp"

#include <cstddef>
#include <cstdint>
#include <deque>
#include <functional>
#include <unordered_map>
#include <utility>
#include <vector>

namespace pleat::detail {

inline constexpr std::uint32_t no_region = 0xffffffffu;

class WalkAdjacency {
 public:
  // recompute(slot): the exact affine map of the region stored at slot.
  explicit WalkAdjacency(std::function<AffineMap(std::uint32_t)> recompute);

  // Call before the first region of each level (first_id: its id).
  void start_level(std::uint32_t first_id);

  // Region `id` at `slot`, whose facets name the distinct pattern slots
  // `neighbours`; id_of_slot gives the id of every slot delivered so far
  // (no_region otherwise; `slot` included). Ids come in order 0, 1, 2, ...
  void add_region(std::uint32_t id, std::uint32_t slot, const std::vector<std::uint32_t>& neighbours,
                  AffineMap affine, const std::vector<std::uint32_t>& id_of_slot);

  std::size_t facets() const { return facets_; }
  std::size_t linear_regions();
  // True when every neighbour named so far was delivered as a region.
  bool all_neighbours_delivered() const { return pending_.empty(); }

 private:
  const AffineMap& map_of(std::uint32_t id, std::uint32_t slot, AffineMap& spare) const;
  void join_if_same_map(std::uint32_t a, std::uint32_t a_slot, std::uint32_t b);
  std::uint32_t find(std::uint32_t i);

  std::function<AffineMap(std::uint32_t)> recompute_;
  std::vector<std::uint32_t> parent_;  // union-find over region ids
  std::deque<AffineMap> maps_;         // ids first_kept_ .. parent_.size() - 1
  std::uint32_t first_kept_ = 0;
  std::uint32_t previous_level_first_ = 0;
  // Slot of a region not yet delivered -> (id, slot) of the earlier regions that named it.
  std::unordered_map<std::uint32_t, std::vector<std::pair<std::uint32_t, std::uint32_t>>> pending_;
  std::size_t facets_ = 0;
};

}  // namespace pleat::detail
