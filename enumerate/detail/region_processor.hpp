// One region of a walk, computed: its cell, interior point, facets with
// neighbours and boundedness, each proved exactly (the plane path for 2
// inputs, the space path for 3, lp::Oracle for every input size and whatever
// the fast paths cannot prove). One processor per thread.
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/walker.hpp"
#include "lp/oracle.hpp"

#include <cstddef>
#include <memory>

namespace pleat::detail {

struct Processed {
  Region region;
  bool is_region = false;
  std::size_t degenerate_crossings = 0;
};

class RegionProcessor {
 public:
  // is_plane_path_allowed false: lp::Oracle for every region (pleat inspect's centres).
  RegionProcessor(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only = false,
                  bool is_plane_path_allowed = true);
  ~RegionProcessor();
  RegionProcessor(const RegionProcessor&) = delete;
  RegionProcessor& operator=(const RegionProcessor&) = delete;

  // The region of the pattern (is_region false when its cell has no interior).
  // Throws usage_error for a pattern of the wrong size; Stopped when asked to stop.
  Processed process(const ActivationPattern& pattern);
  lp::QueryCounts counts() const;

 private:
  class Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace pleat::detail
