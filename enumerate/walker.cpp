#include "enumerate/walker.hpp"

#include "core/errors.hpp"
#include "enumerate/detail/crossing.hpp"
#include "enumerate/detail/integer_maps.hpp"
#include "enumerate/detail/pattern_store.hpp"
#include "enumerate/detail/prefix_pool.hpp"
#include "enumerate/detail/region_processor.hpp"
#include "enumerate/detail/walk_adjacency.hpp"
#include "enumerate/detail/walk_helpers.hpp"
#include "enumerate/detail/walk_pipeline.hpp"
#include "enumerate/detail/worker_pool.hpp"
#include "enumerate/pattern_cell.hpp"

#include <algorithm>
#include <chrono>
#include <cstdint>
#include <memory>
#include <optional>
#include <thread>

namespace pleat {

using detail::dot;
using detail::relu_layers;

std::optional<PatternCell> build_pattern_cell(const Network& network, const Domain& domain,
                                              const ActivationPattern& pattern) {
  if (pattern.states.size() != network.relu_neuron_count())
    throw usage_error("build_pattern_cell: pattern has the wrong number of neurons");
  return detail::cell_from_maps(network, domain, pattern, maps_on_pattern(network, pattern));
}

std::optional<ActivationPattern> region_pattern_at(const Network& network, const RationalVector& point) {
  if (point.size() != network.input_dim) throw usage_error("region_pattern_at: point has the wrong dimension");
  ActivationPattern pattern = pattern_around_point(network, point);
  for (NeuronState state : pattern.states)
    if (state == NeuronState::zero_at_point) return std::nullopt;  // on a bent hyperplane
  return pattern;
}

std::vector<ActivationPattern> patterns_across(const Network& network, const ActivationPattern& near_pattern,
                                               const PatternMaps& near_maps, const RationalVector& q,
                                               const RationalVector& direction, const RationalVector& facet_normal) {
  return detail::patterns_across_filtered(network, near_pattern, near_maps, nullptr, q, direction, facet_normal);
}

std::vector<ActivationPattern> patterns_across(const Network& network, const ActivationPattern& near_pattern,
                                               const RationalVector& q, const RationalVector& direction,
                                               const RationalVector& facet_normal) {
  return patterns_across(network, near_pattern, maps_on_pattern(network, near_pattern), q, direction, facet_normal);
}

namespace {

// For p(t) = sum_i a_i t^i not identically zero, a k >= 1 such that p has no
// root in (0, 2^-k]: with a_m the lowest nonzero coefficient and M the largest
// |a_i| above it, a root 0 < t < 1 has |a_m| <= M (t + t^2 + ...) = M t / (1 - t),
// so t >= |a_m| / (|a_m| + M). Exact.
std::size_t root_free_exponent(const RationalVector& coefficients) {
  std::size_t m = 0;
  while (coefficients[m] == 0) ++m;
  Rational largest_above = 0;
  for (std::size_t i = m + 1; i < coefficients.size(); ++i) largest_above = std::max(largest_above, Rational(abs(coefficients[i])));
  if (largest_above == 0) return 1;
  const Rational lowest = abs(coefficients[m]);
  const Rational ratio = lowest / (lowest + largest_above);  // in (0, 1)
  // ratio >= 2^(bits(num) - 1 - bits(den)) > 2^-k for k below.
  const std::size_t numerator_bits = mpz_sizeinbase(ratio.get_num_mpz_t(), 2);
  const std::size_t denominator_bits = mpz_sizeinbase(ratio.get_den_mpz_t(), 2);
  return denominator_bits + 2 - std::min(numerator_bits, denominator_bits + 1);
}

// The affine function normal . x + offset along the moment curve
// x(t) = centre + (t, t^2, ..., t^n), as the coefficients of a polynomial in t.
RationalVector along_moment_curve(const RationalVector& normal, const Rational& offset, const RationalVector& centre) {
  RationalVector coefficients{dot(normal, centre) + offset};
  coefficients.insert(coefficients.end(), normal.begin(), normal.end());
  return coefficients;
}

// A point of the domain off every bent hyperplane, for a domain of any size:
// on the moment curve x(t) = centre + (t, ..., t^n), every pre-activation is,
// layer by layer, a polynomial in t of degree <= n (the states below being
// constant for small t), which is identically zero (a 'z' neuron) or has no
// root in (0, 2^-k] for the k of root_free_exponent; the domain's constraints
// likewise stay positive. So t = 2^-k for the largest such k works. Exact.
RationalVector point_off_bent_hyperplanes(const Network& network, const Domain& domain, const RationalVector& centre) {
  std::size_t exponent = 1;
  for (const auto& side : domain.constraints)
    exponent = std::max(exponent, root_free_exponent(along_moment_curve(side.normal, side.offset, centre)));
  AffineMap post = identity_map(network.input_dim);
  for (std::size_t k = 0; k < relu_layers(network); ++k) {
    poll_stop();
    const AffineMap pre = compose_layer(network.layers[k], post);
    std::vector<NeuronState> states(pre.offset.size());
    for (std::size_t i = 0; i < states.size(); ++i) {
      const RationalVector polynomial = along_moment_curve(pre.linear.row(i), pre.offset[i], centre);
      const auto lowest = std::find_if(polynomial.begin(), polynomial.end(), [](const Rational& a) { return a != 0; });
      if (lowest == polynomial.end()) {
        states[i] = NeuronState::zero_on_region;
        continue;
      }
      states[i] = *lowest > 0 ? NeuronState::on : NeuronState::off;
      exponent = std::max(exponent, root_free_exponent(polynomial));
    }
    post = apply_states(pre, states);
  }
  Rational t = 1;
  mpz_mul_2exp(t.get_den_mpz_t(), t.get_den_mpz_t(), exponent);  // t = 2^-exponent
  RationalVector point = centre;
  Rational power = 1;
  for (auto& coordinate : point) coordinate += (power *= t);
  return point;
}

// region_pattern_at, decided first in integers (IntegerPatternEvaluator: the
// same signs, without a rational canonicalisation per operation): a point off
// every bent hyperplane has no zero there, and its pattern is then the one
// region_pattern_at gives; only a point with a zero takes the exact maps'
// path, which tells a 'z' neuron from a crossing. On 2,15,15,15,1 the start
// took 0.35-0.5 ms in rationals, before any walk thread has work.
std::optional<ActivationPattern> start_pattern_at(const Network& network, const IntegerPatternEvaluator& evaluator,
                                                  const RationalVector& point) {
  ActivationPattern pattern = evaluator.pattern_at(point);
  if (std::none_of(pattern.states.begin(), pattern.states.end(),
                   [](NeuronState state) { return state == NeuronState::zero_at_point; }))
    return pattern;
  return region_pattern_at(network, point);
}

ActivationPattern start_pattern(const Network& network, const Domain& domain) {
  const RationalVector centre = domain_centre(domain);
  const IntegerPatternEvaluator evaluator(network);
  // The centre may lie on a bent hyperplane; step off it along a fixed family
  // of directions with shrinking steps (kept so that the walks of earlier
  // versions start, and number their regions, as before), then, when those
  // steps all leave a small domain, along the moment curve, which always works.
  for (unsigned attempt = 0; attempt < 4096; ++attempt) {
    RationalVector point = centre;
    if (attempt > 0) {
      const Rational step(1, 8 * (attempt / 16 + 1) + attempt % 16);
      Rational coordinate = step;
      for (std::size_t i = 0; i < point.size(); ++i) {
        point[i] += coordinate;
        coordinate *= Rational(attempt % 7 + 2, 11);
      }
      // Stay inside the domain.
      bool inside = true;
      for (const auto& c : domain.constraints) inside = inside && dot(c.normal, point) + c.offset > 0;
      if (!inside) continue;
    }
    if (auto pattern = start_pattern_at(network, evaluator, point)) return *pattern;
  }
  if (auto pattern = region_pattern_at(network, point_off_bent_hyperplanes(network, domain, centre))) return *pattern;
  throw std::logic_error("walk: the moment-curve point lies on a bent hyperplane (a bug; please report)");
}

}  // namespace

ActivationPattern walk_start_pattern(const Network& network, const Domain& domain) {
  return start_pattern(network, domain);
}

WalkSummary walk_regions(const Network& network, const Domain& domain, const WalkOptions& options) {
  if (domain.dim != network.input_dim) throw usage_error("walk_regions: domain and network dimensions differ");
  using clock = std::chrono::steady_clock;
  const auto started = clock::now();
  auto elapsed = [&] { return std::chrono::duration<double>(clock::now() - started).count(); };
  const unsigned threads = options.threads ? options.threads : std::max(1u, std::thread::hardware_concurrency());
  const detail::RestingWorkerPool resting;  // certify's loop helpers sleep while the walk's threads run
  // The in-pool walk's other threads start first, so that their start-up
  // overlaps the set-up below (detail::WalkPipeline::start).
  std::optional<detail::WalkPipeline> in_pool;
  if (options.on_region_in_pool) {
    in_pool.emplace(threads, 2048 * std::size_t{threads});
    in_pool->start();
  }

  // Each worker's processor is built on that worker's thread, at its first
  // region (0.1 ms each on 2,15,15,15,1): built here one after the other, the
  // others' were serial work before the walk's first region.
  std::vector<std::unique_ptr<detail::RegionProcessor>> processors(threads);

  WalkSummary summary;
  // Every pattern met is stored once, packed (detail::PatternStore); levels
  // and neighbour lists hold its slots. Per region the walk keeps only its
  // packed pattern, its id and its union-find entry: the affine maps and
  // neighbour lists live only as long as the adjacency summary needs them.
  detail::PatternStore seen(network.relu_neuron_count());
  std::vector<std::uint32_t> id_of_slot;  // detail::no_region until delivered
  std::vector<std::uint32_t> region_slots;  // by region id
  detail::WalkAdjacency adjacency(
      [&](std::uint32_t slot) { return maps_on_pattern(network, seen.pattern(slot)).output; });
  const auto remember = [&](const ActivationPattern& pattern) {
    const auto inserted = seen.insert(pattern);
    if (inserted.second) id_of_slot.push_back(detail::no_region);
    return inserted;
  };
  // Polled between regions, and inside each region's exact work by the
  // workers (their StopScope), so one slow region cannot hold a stop back.
  const StopRequest stop(options.interrupt, options.time_limit_seconds, started);
  auto stop_requested = [&] { return stop.reason(); };
  std::vector<std::uint32_t> level;
  try {
    const StopScope scope(stop);
    level.push_back(remember(start_pattern(network, domain)).first);
  } catch (const Stopped& stopped) {
    summary.stop_reason = stopped.reason();  // stopped before the first region: nothing found
  }
  bool anomaly = false;  // a crossing candidate that turned out not to be a region

  // Delivers the region of the pattern at `slot` (in order): numbers it,
  // records its neighbours (new patterns join next_level, and the pipeline's
  // tasks when there is one), calls on_region and frees the record. Returns
  // false when the walk must stop (delivery_stop says why). made_elsewhere:
  // another thread processed it and frees its record (WalkPipeline::retire),
  // so the adjacency keeps a copy of its affine map made here, not the
  // map's own memory, which this thread would free, across processors.
  std::vector<std::uint32_t> next_level;
  std::vector<std::uint32_t> neighbors;
  StopReason delivery_stop = StopReason::none;
  detail::WalkPipeline* pipeline = nullptr;
  const auto deliver = [&](std::uint32_t slot, detail::Processed& processed, bool made_elsewhere = false) {
    if (!processed.is_region) {
      anomaly = true;
      return true;
    }
    if (options.max_regions && summary.regions >= options.max_regions) {
      delivery_stop = StopReason::max_regions;
      return false;
    }
    Region& region = processed.region;
    region.id = summary.regions++;
    summary.bounded_regions += region.bounded;
    summary.degenerate_crossings += processed.degenerate_crossings;
    if (!region.nonsmooth_neurons.empty())
      summary.nonsmooth_regions.emplace_back(region.pattern, region.nonsmooth_neurons);
    const auto id = static_cast<std::uint32_t>(region.id);
    id_of_slot[slot] = id;
    region_slots.push_back(slot);
    neighbors.clear();
    const auto add_neighbor = [&](const ActivationPattern& neighbor) {
      const auto [neighbor_slot, is_new] = remember(neighbor);
      if (std::find(neighbors.begin(), neighbors.end(), neighbor_slot) == neighbors.end())
        neighbors.push_back(neighbor_slot);
      if (!is_new) return;
      next_level.push_back(neighbor_slot);
      if (pipeline) pipeline->add(neighbor);  // its task number is its slot: both count patterns met
    };
    for (const auto& facet : region.facets) {
      if (!facet.neighbor) continue;
      add_neighbor(*facet.neighbor);
      for (const auto& other : facet.other_neighbors) add_neighbor(other);
    }
    const bool is_stop_asked = options.on_region && !options.on_region(region);
    adjacency.add_region(id, slot, neighbors, made_elsewhere ? AffineMap(region.affine) : std::move(region.affine),
                         id_of_slot);  // after on_region, which reads it
    if (!pipeline) processed = detail::Processed{};  // free the record now: a level can be large (the pipeline's: retire)
    if (is_stop_asked) {
      delivery_stop = StopReason::requested;
      return false;
    }
    return true;
  };
  // The next level in pattern order, once this one is delivered; false when
  // the walk ends there (complete, or a stop asked meanwhile).
  const auto start_next_level = [&] {
    if (StopReason reason = stop_requested(); reason != StopReason::none && !next_level.empty()) {
      summary.stop_reason = reason;
      return false;
    }
    std::sort(next_level.begin(), next_level.end(),
              [&](std::uint32_t a, std::uint32_t b) { return seen.less(a, b); });
    level = std::move(next_level);
    next_level.clear();
    adjacency.start_level(static_cast<std::uint32_t>(summary.regions));
    return !level.empty();
  };
  const auto process = [&](std::size_t worker, const ActivationPattern& pattern) {
    std::unique_ptr<detail::RegionProcessor>& processor = processors[worker];  // this worker's alone
    if (!processor)
      processor =
          std::make_unique<detail::RegionProcessor>(network, domain, options.keep_certificates, options.exact_only);
    detail::Processed processed = processor->process(pattern);
    if (options.prepare_region && processed.is_region) processed.region.prepared = options.prepare_region(processed.region);
    return processed;
  };

  adjacency.start_level(0);
  if (options.on_region_in_pool && !level.empty()) {
    // One run for the whole walk: a level's regions are processed while the
    // level before it is still being delivered, so no thread waits for a
    // level to end. At most one chunk's records are held at a time.
    detail::WalkPipeline& tasks = *in_pool;
    pipeline = &tasks;
    tasks.add(seen.pattern(level.front()));
    std::size_t position = 0;  // in level
    bool is_walk_done = false;
    const StopReason stopped = tasks.run(
        level.front(), stop,
        [&](std::size_t worker, detail::WalkTask& task) {
          task.processed = std::make_unique<detail::Processed>(process(worker, task.pattern));
        },
        [&](std::size_t index, detail::WalkTask& task) -> std::optional<std::size_t> {
          if (!deliver(static_cast<std::uint32_t>(index), *task.processed, task.worker != 0)) return std::nullopt;
          tasks.retire(task);
          if (++position < level.size()) return level[position];
          position = 0;
          if (!start_next_level()) {
            is_walk_done = summary.stop_reason == StopReason::none;
            return std::nullopt;
          }
          tasks.release_before(*std::min_element(level.begin(), level.end()));  // the levels before: delivered
          return level.front();
        },
        [&](std::size_t consumed, std::size_t added) {
          if (options.on_progress) options.on_progress(WalkProgress{consumed, added - consumed, elapsed()});
        },
        options.background);
    if (summary.stop_reason == StopReason::none) summary.stop_reason = delivery_stop;
    if (summary.stop_reason == StopReason::none && !is_walk_done) summary.stop_reason = stopped;
    level.clear();
  }

  // A level is processed in chunks, so that only one chunk's region records
  // are held at a time (a level of a large walk can hold 10^5 regions).
  const std::size_t chunk = 2048 * std::size_t{threads};
  std::optional<detail::PrefixPool> pool;  // its threads serve every level
  if (!level.empty()) pool.emplace(processors.size());
  while (!level.empty() && summary.stop_reason == StopReason::none) {
    for (std::size_t begin = 0; begin < level.size() && summary.stop_reason == StopReason::none; begin += chunk) {
      // Process the chunk in parallel; results are placed by index, so the
      // order of output does not depend on the thread count.
      const std::size_t end = std::min(level.size(), begin + chunk);
      std::vector<detail::Processed> results(end - begin);
      const std::size_t regions_before = summary.regions;
      const detail::PrefixRun run = pool->run(
          results.size(), stop,
          [&](std::size_t worker, std::size_t i) {
            results[i] = process(worker, seen.pattern(level[begin + i]));  // the store is not written meanwhile
          },
          [&](std::size_t finished) {
            if (options.on_progress)
              options.on_progress(WalkProgress{regions_before + finished, level.size() - begin - finished, elapsed()});
          });
      // Deliver the processed prefix, in order.
      for (std::size_t i = 0; delivery_stop == StopReason::none && i < run.prefix && deliver(level[begin + i], results[i]);
           ++i) {
      }
      summary.stop_reason = delivery_stop != StopReason::none ? delivery_stop : run.stopped;
    }
    if (summary.stop_reason == StopReason::none && !start_next_level()) break;
  }

  for (const auto& processor : processors)
    if (processor) summary.counts += processor->counts();  // (none: that worker processed no region)
  summary.complete = summary.stop_reason == StopReason::none;
  summary.facets = adjacency.facets();
  summary.linear_regions = adjacency.linear_regions();
  const bool all_neighbors_present = adjacency.all_neighbors_delivered();

  // Regions in pattern order: distinct prefixes per layer are runs of equal prefixes.
  std::sort(region_slots.begin(), region_slots.end(), [&](std::uint32_t a, std::uint32_t b) { return seen.less(a, b); });
  if (options.keep_patterns) {
    summary.patterns.reserve(region_slots.size());
    for (std::uint32_t slot : region_slots) summary.patterns.push_back(seen.pattern(slot));
  }
  for (std::size_t k = 0; k < network.depth(); ++k) {
    // A linear output layer adds no states: its prefix is the whole pattern.
    const std::size_t prefix_end = k < relu_layers(network)
                                       ? network.first_neuron_of_layer(k) + network.layers[k].width()
                                       : network.relu_neuron_count();
    std::size_t prefixes = region_slots.empty() ? 0 : 1;
    for (std::size_t i = 1; i < region_slots.size(); ++i)
      prefixes += seen.common_prefix(region_slots[i - 1], region_slots[i]) < prefix_end;
    summary.regions_per_layer.push_back(prefixes);
  }
  summary.certified = summary.complete && all_neighbors_present && !anomaly;
  summary.seconds = elapsed();
  return summary;
}

struct RegionWorker::Impl {
  Impl(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only)
      : processor(network, domain, keep_certificates, exact_only) {}
  detail::RegionProcessor processor;
};

RegionWorker::RegionWorker(const Network& network, const Domain& domain, bool keep_certificates, bool exact_only)
    : impl_(domain.dim == network.input_dim
                ? std::make_unique<Impl>(network, domain, keep_certificates, exact_only)
                : throw usage_error("RegionWorker: domain and network dimensions differ")) {}

RegionWorker::~RegionWorker() = default;

RegionWorker::Outcome RegionWorker::process(const ActivationPattern& pattern) {
  detail::Processed processed = impl_->processor.process(pattern);
  Outcome outcome;
  outcome.degenerate_crossings = processed.degenerate_crossings;
  if (processed.is_region) outcome.region = std::move(processed.region);
  return outcome;
}

lp::QueryCounts RegionWorker::counts() const { return impl_->processor.counts(); }

std::optional<Region> describe_region(const Network& network, const Domain& domain,
                                      const ActivationPattern& pattern, bool keep_certificates) {
  if (domain.dim != network.input_dim) throw usage_error("describe_region: domain and network dimensions differ");
  // The oracle path alone: the point is the Chebyshev-style centre of
  // lp::Oracle::find_centre, as `pleat inspect` has always printed it.
  detail::RegionProcessor processor(network, domain, keep_certificates, false, /*is_plane_path_allowed=*/false);
  detail::Processed processed = processor.process(pattern);
  if (!processed.is_region) return std::nullopt;
  return std::move(processed.region);
}

}  // namespace pleat
