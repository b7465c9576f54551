// Naming the mechanism behind each extra kernel direction (dead neuron,
// always-active neuron, zero outgoing weights, duplicate neurons), for
// certify_functional_dimension. Internal to enumerate/ (not installed).
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "enumerate/detail/kernel_check.hpp"
#include "enumerate/functional_dimension.hpp"

#include <cstddef>
#include <functional>
#include <vector>

namespace pleat::detail {

// Per-neuron activity over the walked regions, for naming mechanisms.
struct NeuronActivity {
  std::vector<char> ever_on, ever_not_on;
  explicit NeuronActivity(std::size_t n) : ever_on(n, 0), ever_not_on(n, 0) {}
  void record(const ActivationPattern& pattern) {
    for (std::size_t i = 0; i < pattern.states.size(); ++i)
      (pattern.states[i] == NeuronState::on ? ever_on : ever_not_on)[i] = 1;
  }
};

// Each extra direction (a row of extra, its nonzero entries moved out of
// it into the dense vector) with its mechanism, named on up to `threads`
// threads in chunks (progress(done) between chunks, from the calling
// thread, which also polls the stop request). The same for any thread count; the names depend only on the
// vectors' supports, the network's parameters and the activity: the first
// of zero outgoing weights, dead neuron, always-active neuron and duplicate
// neurons whose neurons' parameters hold the whole support. Exact.
std::vector<ExtraKernelDirection> name_extra_directions(const Network& network, const NeuronActivity& activity,
                                                        SparseRationalRows&& extra, unsigned threads,
                                                        const std::function<void(std::size_t)>& progress);

}  // namespace pleat::detail
