// The kernel check's loop over regions (first_rejected_pattern, declared in
// kernel_check.hpp): in the patterns' lexicographic order, in runs per
// thread, on the certify call's worker pool when there is one; and the
// vectors it need not check on any region (live_on_some_pattern).
#include "enumerate/detail/kernel_check.hpp"

#include "enumerate/detail/worker_pool.hpp"
#include "enumerate/detail/worker_thread.hpp"

#include <algorithm>
#include <atomic>
#include <cstdint>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace pleat::detail {

std::vector<char> live_on_some_pattern(const Network& network, const SparseRationalRows& vectors,
                                       const std::vector<ActivationPattern>& patterns) {
  const std::size_t depth = network.depth();
  std::vector<std::size_t> first(depth + 1, 0);  // each layer's first parameter column
  std::vector<std::size_t> first_neuron(depth, 0);
  for (std::size_t k = 0, neuron = 0; k < depth; ++k) {
    first[k + 1] = network.parameter_offset(k) + network.layers[k].width() * (network.layers[k].fan_in() + 1);
    first_neuron[k] = neuron;
    neuron += network.layers[k].width();
  }
  auto has_relu = [&](std::size_t k) { return k + 1 < depth || network.has_output_relu(); };
  // together[k][i]: the inputs of layer k (bits) on in some pattern where
  // neuron i of layer k is on; own[k][i]: i on in some pattern.
  std::vector<std::vector<std::vector<std::uint64_t>>> together(depth);
  std::vector<std::vector<char>> own(depth);
  std::vector<std::uint64_t> inputs;
  for (std::size_t k = 0; k < depth; ++k) {
    const std::size_t words = (network.layers[k].fan_in() + 63) / 64;
    together[k].assign(network.layers[k].width(), std::vector<std::uint64_t>(words, 0));
    own[k].assign(network.layers[k].width(), 0);
  }
  for (const ActivationPattern& pattern : patterns) {
    poll_stop();
    for (std::size_t k = 0; k < depth; ++k) {
      const std::size_t fan_in = network.layers[k].fan_in();
      inputs.assign((fan_in + 63) / 64, 0);
      for (std::size_t j = 0; j < fan_in; ++j)
        if (k == 0 || pattern.is_on(first_neuron[k - 1] + j)) inputs[j / 64] |= std::uint64_t{1} << (j % 64);
      for (std::size_t i = 0; i < network.layers[k].width(); ++i) {
        if (has_relu(k) && !pattern.is_on(first_neuron[k] + i)) continue;
        own[k][i] = 1;
        for (std::size_t w = 0; w < inputs.size(); ++w) together[k][i][w] |= inputs[w];
      }
    }
  }
  std::vector<char> live(vectors.rows.size(), 0);
  for (std::size_t v = 0; v < vectors.rows.size(); ++v)
    for (const auto& [c, value] : vectors.rows[v]) {
      const std::size_t k = static_cast<std::size_t>(std::upper_bound(first.begin(), first.end(), c) - first.begin()) - 1;
      const std::size_t fan_in = network.layers[k].fan_in(), offset = c - first[k];
      const std::size_t weights = network.layers[k].width() * fan_in;
      const bool is_live = offset >= weights
                               ? own[k][offset - weights] != 0
                               : ((together[k][offset / fan_in][(offset % fan_in) / 64] >> (offset % fan_in % 64)) & 1) != 0;
      if (is_live) {
        live[v] = 1;
        break;
      }
    }
  return live;
}

std::optional<std::size_t> first_rejected_pattern(const AnnihilationCheck& check,
                                                  const std::vector<ActivationPattern>& patterns, unsigned threads,
                                                  const StopRequest& stop, bool& stopped,
                                                  const std::function<void(std::size_t, std::size_t)>& progress) {
  std::vector<std::size_t> order(patterns.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return states_before(patterns[a], patterns[b]); });
  constexpr std::size_t run = 16;  // consecutive patterns per thread
  std::atomic<std::size_t> next{0}, done{0};
  std::atomic<std::size_t> first_rejected{patterns.size()};
  std::atomic<bool> halt{false};
  std::mutex error_mutex;
  std::exception_ptr error;
  auto work = [&](bool reports) {
    const StopScope scope(stop);  // annihilates() polls it inside one pattern
    try {
      for (std::size_t start; !halt && (start = next.fetch_add(run)) < patterns.size();)
        for (std::size_t position = start; position < std::min(start + run, patterns.size()) && !halt; ++position) {
          const std::size_t i = order[position];
          if (i > first_rejected.load()) continue;  // a smaller index already failed
          if (stop.is_requested()) {
            halt = true;
            break;
          }
          if (!check.annihilates(patterns[i])) {
            std::size_t current = first_rejected.load();
            while (i < current && !first_rejected.compare_exchange_weak(current, i)) {
            }
          }
          ++done;
          if (reports && progress) progress(done.load(), patterns.size());
        }
    } catch (...) {
      const std::lock_guard lock(error_mutex);
      if (!error) error = std::current_exception();
      halt = true;
    }
  };
  threads = static_cast<unsigned>(std::max<std::size_t>(1, std::min<std::size_t>(threads, patterns.size())));
  // On the current worker pool's threads when there is one (a wake-up, not
  // a thread start), else on threads started here; the caller reports.
  if (WorkerPool* lent = current_worker_pool(); lent && threads > 1) {
    const std::thread::id caller = std::this_thread::get_id();
    lent->run(threads - 1, [&] { work(std::this_thread::get_id() == caller); });
  } else {
    std::vector<std::thread> pool;
    for (unsigned t = 1; t < threads; ++t) pool.push_back(start_worker_thread([&] { work(false); }, t - 1));
    work(true);
    for (auto& thread : pool) thread.join();
  }
  if (error) std::rethrow_exception(error);
  if (halt && stop.is_requested()) {
    stopped = true;
    return std::nullopt;
  }
  if (first_rejected.load() < patterns.size()) return first_rejected.load();
  return std::nullopt;
}

}  // namespace pleat::detail
