// The first step of certify's proof after the walk: the extra directions
// modulo the walk's prime, and beside them what the proof needs from the
// network and the smooth regions alone. Internal to enumerate/ (not
// installed).
#pragma once

#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rank.hpp"
#include "enumerate/detail/always_active_rows.hpp"
#include "enumerate/detail/kernel_check.hpp"

#include <cstddef>
#include <optional>
#include <vector>

namespace pleat::detail {

// What the check and the lift need from the smooth patterns alone (for
// lift_and_prove_extra_directions): each member unset when not built yet.
struct SmoothFacts {
  std::optional<AlwaysActiveGenerators> generators;
  std::optional<LiveTerms> live_terms;
  std::optional<std::vector<std::size_t>> check_order;  // lexicographic_order
};

struct ProofStart {
  SparseModularRows first_image;          // extra_directions_of_basis
  std::optional<CheckScale> check_scale;  // set when first_image has rows
  SmoothFacts facts;                      // set when built beside the read-off
};

// The first image read off the walk's basis and the check's scale; the
// read-off needs the basis, the others the network and the smooth patterns
// only. At threads >= 2 those others are built on a second thread while the
// read-off runs (on 2,15,15,15,1 seed 1: the read-off 0.44 ms; the scale
// 0.12, the generators 0.07-0.14, the live terms' bitsets and the check's
// order about 0.08 ms each), and the smooth facts too when
// checks_here (the check runs here, not across processes); one thread does
// all in turn when the other comes late. At one thread, the scale once the
// read-off has rows, and no facts (the lift builds what it needs). The same
// values for any thread count.
ProofStart start_proof(const Network& network, const ModularRowBasis& basis,
                       const std::vector<std::size_t>& scaling_pivots, const std::vector<ActivationPattern>& smooth,
                       bool checks_here, unsigned threads);

}  // namespace pleat::detail
