#include "enumerate/detail/proof_start.hpp"

#include "enumerate/detail/kernel_lift.hpp"
#include "enumerate/detail/parallel_for.hpp"

namespace pleat::detail {

ProofStart start_proof(const Network& network, const ModularRowBasis& basis,
                       const std::vector<std::size_t>& scaling_pivots, const std::vector<ActivationPattern>& smooth,
                       bool checks_here, unsigned threads) {
  ProofStart start;
  // Task 0 the read-off, task 1 the rest; at one thread the rest waits for
  // the read-off, which may show that none of it is needed.
  parallel_for(threads > 1 ? 2 : 1, threads, [&](std::size_t task) {
    if (task == 0) {
      start.first_image = extra_directions_of_basis(basis, scaling_pivots);
      return;
    }
    start.check_scale.emplace(network);
    if (!checks_here) return;
    start.facts.generators.emplace(network, smooth);
    start.facts.live_terms.emplace(network, smooth);
    start.facts.check_order = lexicographic_order(smooth);
  });
  if (!start.first_image.rows.empty() && !start.check_scale) start.check_scale.emplace(network);
  return start;
}

}  // namespace pleat::detail
