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

LiveTerms::LiveTerms(const Network& network, const std::vector<ActivationPattern>& patterns) : network_(&network) {
  const std::size_t depth = network.depth();
  first_.assign(depth + 1, 0);  // each layer's first parameter column
  first_neuron_.assign(depth + 1, 0);
  first_word_.assign(depth + 1, 0);  // together's words per layer
  std::vector<std::size_t>& first = first_;
  std::vector<std::size_t>& first_neuron = first_neuron_;
  std::vector<std::size_t>& first_word = first_word_;
  std::vector<std::size_t> widths(depth), fan_ins(depth);
  std::vector<char> has_relu(depth);
  for (std::size_t k = 0; k < depth; ++k) {
    const Layer& layer = network.layers[k];
    widths[k] = layer.width();
    fan_ins[k] = layer.fan_in();
    has_relu[k] = k + 1 < depth || network.has_output_relu() ? 1 : 0;
    first[k + 1] = network.parameter_offset(k) + layer.width() * (layer.fan_in() + 1);
    first_neuron[k + 1] = first_neuron[k] + layer.width();
    first_word[k + 1] = first_word[k] + layer.width() * ((layer.fan_in() + 63) / 64);
  }
  // together (words of layer k's neuron i from first_word[k]): the inputs of
  // layer k (bits) on in some pattern where neuron i is on; own: i on in
  // some pattern. From each neuron's patterns as bits (neuron_on_bits), then
  // a word AND per pair of neurons and 64 patterns: on 2,15,15,15,15,1 (1215
  // regions) a fifth of a pass that combined every neuron's inputs pattern
  // by pattern.
  std::vector<std::uint64_t>& together = together_;
  std::vector<char>& own = own_;
  together.assign(first_word[depth], 0);
  own.assign(first_neuron[depth], 0);
  std::size_t relu_neurons = 0;
  for (std::size_t k = 0; k < depth; ++k) relu_neurons += has_relu[k] ? widths[k] : 0;
  on_ = neuron_on_bits(relu_neurons, patterns);
  const NeuronOnBits& on = on_;
  const std::size_t words = on.words;
  const std::uint64_t* every = on.of(relu_neurons);  // every pattern (a neuron without ReLU)
  auto patterns_of = [&](std::size_t k, std::size_t i) {
    return has_relu[k] ? on.of(first_neuron[k] + i) : every;
  };
  auto meet = [&](const std::uint64_t* a, const std::uint64_t* b) {
    for (std::size_t w = 0; w < words; ++w)
      if ((a[w] & b[w]) != 0) return true;
    return false;
  };
  for (std::size_t k = 0; k < depth; ++k) {
    const std::size_t fan_in = fan_ins[k], row_words = (fan_in + 63) / 64;
    for (std::size_t i = 0; i < widths[k]; ++i) {
      const std::uint64_t* mine = patterns_of(k, i);
      own[first_neuron[k] + i] = static_cast<char>(meet(mine, every));
      if (!own[first_neuron[k] + i]) continue;
      std::uint64_t* word = together.data() + first_word[k] + i * row_words;
      for (std::size_t j = 0; j < fan_in; ++j)
        if (k == 0 || meet(mine, patterns_of(k - 1, j))) word[j / 64] |= std::uint64_t{1} << (j % 64);
    }
  }
}

std::vector<char> LiveTerms::of(const SparseRationalRows& vectors) const {
  const Network& network = *network_;
  const std::vector<std::size_t>&first = first_, &first_neuron = first_neuron_, &first_word = first_word_;
  const std::vector<std::uint64_t>& together = together_;
  const std::vector<char>& own = own_;
  std::vector<char> live(vectors.rows.size(), 0);
  for (std::size_t v = 0; v < vectors.rows.size(); ++v)
    for (const auto& [c, value] : vectors.rows[v]) {
      const std::size_t k = static_cast<std::size_t>(std::upper_bound(first.begin(), first.end(), c) - first.begin()) - 1;
      const std::size_t fan_in = network.layers[k].fan_in(), offset = c - first[k];
      const std::size_t weights = network.layers[k].width() * fan_in, words = (fan_in + 63) / 64;
      const std::size_t i = offset >= weights ? offset - weights : offset / fan_in, j = offset % fan_in;
      const bool is_live = offset >= weights
                               ? own[first_neuron[k] + i] != 0
                               : ((together[first_word[k] + i * words + j / 64] >> (j % 64)) & 1) != 0;
      if (is_live) {
        live[v] = 1;
        break;
      }
    }
  return live;
}

std::vector<char> live_on_some_pattern(const Network& network, const SparseRationalRows& vectors,
                                       const std::vector<ActivationPattern>& patterns) {
  return LiveTerms(network, patterns).of(vectors);
}

NeuronOnBits neuron_on_bits(std::size_t neurons, const std::vector<ActivationPattern>& patterns) {
  NeuronOnBits out;
  const std::size_t count = patterns.size();
  out.neurons = neurons;
  out.words = (count + 63) / 64;
  const std::size_t words = out.words;
  out.bits.assign((neurons + 1) * words, 0);
  for (std::size_t p = 0; p < count; ++p) {
    if (p % 64 == 0) poll_stop();
    const NeuronState* states = patterns[p].states.data();
    std::uint64_t* word = out.bits.data() + p / 64;
    for (std::size_t n = 0; n < neurons; ++n)  // no branch on the states
      word[n * words] |= static_cast<std::uint64_t>(states[n] == NeuronState::on) << (p % 64);
    word[neurons * words] |= std::uint64_t{1} << (p % 64);
  }
  return out;
}

AnnihilationCheck::LiveBits AnnihilationCheck::live_bits(const std::vector<ActivationPattern>& patterns,
                                                         const NeuronOnBits* given) const {
  LiveBits out;
  const std::size_t neurons = neuron_layer_.size();
  // Each neuron's patterns (bits), then always_on (every pattern): given, or built here.
  const bool fits = given && given->neurons == neurons && given->words == (patterns.size() + 63) / 64;
  const NeuronOnBits built = fits ? NeuronOnBits() : neuron_on_bits(neurons, patterns);
  const NeuronOnBits& on = fits ? *given : built;
  out.words = on.words;
  const std::size_t words = out.words;
  out.bits.assign(vector_count_ * words, 0);
  for (std::size_t v = 0; v < vector_count_; ++v) {
    std::uint64_t* live = out.bits.data() + v * words;
    for (std::size_t t = first_term_[v]; t < first_term_[v + 1]; ++t) {
      const std::uint64_t* own = on.of(term_neurons_[t].own);
      const std::uint64_t* input = on.of(term_neurons_[t].input);
      for (std::size_t w = 0; w < words; ++w) live[w] |= own[w] & input[w];
    }
  }
  return out;
}

std::vector<std::size_t> lexicographic_order(const std::vector<ActivationPattern>& patterns) {
  std::vector<std::size_t> order(patterns.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return states_before(patterns[a], patterns[b]); });
  return order;
}

std::optional<std::size_t> first_rejected_pattern(const AnnihilationCheck& check,
                                                  const std::vector<ActivationPattern>& patterns, unsigned threads,
                                                  const StopRequest& stop, bool& stopped,
                                                  const std::function<void(std::size_t, std::size_t)>& progress,
                                                  const std::vector<std::size_t>* sorted, const NeuronOnBits* on) {
  const std::vector<std::size_t> sorted_here = sorted ? std::vector<std::size_t>() : lexicographic_order(patterns);
  const std::vector<std::size_t>& order = sorted ? *sorted : sorted_here;
  const AnnihilationCheck::LiveBits live = check.live_bits(patterns, on);
  constexpr std::size_t run = 16;  // consecutive patterns per thread
  std::atomic<std::size_t> next{0}, done{0};
  std::atomic<std::size_t> first_rejected{patterns.size()};
  std::atomic<bool> halt{false};
  std::mutex error_mutex;
  std::exception_ptr error;
  // Progress about 64 times in all, and at most every 16 patterns (and at
  // the last pattern the reporting thread checks): a report may format
  // text, as the CLI's does, which cost a seventh of the check on
  // 2,5,5,5,5,1 (118 regions) when made for every pattern, as 118 / 64
  // still made it.
  const std::size_t report_every = std::max<std::size_t>(16, patterns.size() / 64);
  auto work = [&](bool reports) {
    const StopScope scope(stop);  // annihilates() polls it inside one pattern
    std::size_t reported = 0;
    try {
      for (std::size_t start; !halt && (start = next.fetch_add(run)) < patterns.size();)
        for (std::size_t position = start; position < std::min(start + run, patterns.size()) && !halt; ++position) {
          const std::size_t i = order[position];
          if (i > first_rejected.load()) continue;  // a smaller index already failed
          if (stop.is_requested()) {
            halt = true;
            break;
          }
          if (!check.annihilates(patterns[i], live, i)) {
            std::size_t current = first_rejected.load();
            while (i < current && !first_rejected.compare_exchange_weak(current, i)) {
            }
          }
          const std::size_t now = ++done;
          if (reports && progress && (now >= reported + report_every || now == patterns.size())) {
            progress(now, patterns.size());
            reported = now;
          }
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
