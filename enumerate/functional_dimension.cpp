#include "enumerate/functional_dimension.hpp"

#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "enumerate/detail/contributing_rows.hpp"
#include "enumerate/detail/extra_naming.hpp"
#include "enumerate/distributed_certify.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/detail/kernel_check.hpp"
#include "enumerate/detail/kernel_lift.hpp"
#include "enumerate/detail/parallel_for.hpp"
#include "enumerate/detail/point_region.hpp"
#include "enumerate/detail/proof_start.hpp"
#include "enumerate/detail/ray_reach.hpp"
#include "enumerate/detail/reach_forecast.hpp"
#include "enumerate/detail/row_backlog.hpp"
#include "enumerate/interior_points.hpp"
#include "enumerate/line_sweep.hpp"

#include <algorithm>
#include <any>
#include <chrono>
#include <cmath>
#include <deque>
#include <functional>
#include <limits>
#include <map>
#include <memory>
#include <optional>
#include <set>
#include <unordered_set>
#include <thread>

namespace pleat {
namespace {

using detail::KeptRows;
using detail::parallel_for;
using detail::PointRegion;
using detail::PointVerdict;
using detail::rational_from_vector;
using detail::region_of_point;

}  // namespace

RationalMatrix extra_kernel_basis(const RationalMatrix& kernel, const RationalMatrix& scaling) {
  const RationalMatrix scaling_basis = row_space_basis_exact(scaling);
  std::vector<std::size_t> pivots;
  for (std::size_t r = 0; r < scaling_basis.rows(); ++r) {
    std::size_t c = 0;
    while (scaling_basis(r, c) == 0) ++c;
    pivots.push_back(c);
  }
  RationalMatrix reduced = kernel;
  for (std::size_t r = 0; r < reduced.rows(); ++r)
    for (std::size_t s = 0; s < pivots.size(); ++s) {
      const Rational factor = reduced(r, pivots[s]);
      if (factor == 0) continue;
      for (std::size_t c = 0; c < reduced.cols(); ++c) reduced(r, c) -= factor * scaling_basis(s, c);
    }
  return row_space_basis_exact(reduced);
}

namespace {

RationalMatrix stack_matrices(const RationalMatrix& top, const RationalMatrix& bottom) {
  RationalMatrix out(top.rows() + bottom.rows(), top.cols());
  for (std::size_t r = 0; r < top.rows(); ++r) out.set_row(r, top.row(r));
  for (std::size_t r = 0; r < bottom.rows(); ++r) out.set_row(top.rows() + r, bottom.row(r));
  return out;
}

}  // namespace

std::optional<std::size_t> first_region_not_annihilated(const Network& network, const RationalMatrix& vectors,
                                                        const std::vector<ActivationPattern>& patterns,
                                                        unsigned threads) {
  if (vectors.cols() != network.parametric_dimension())
    throw usage_error("first_region_not_annihilated: the vectors need one entry per parameter");
  if (vectors.rows() == 0) return std::nullopt;
  const detail::AnnihilationCheck check(network, vectors, detail::CheckScale(network), std::max(1u, threads));
  bool stopped = false;
  return detail::first_rejected_pattern(check, patterns, std::max(1u, threads), StopRequest(), stopped, {});
}

FunctionalDimensionResult certify_functional_dimension(const Network& network, const Domain& domain,
                                                       const FunctionalDimensionOptions& options) {
  const auto started = std::chrono::steady_clock::now();
  const StopRequest stop(options.walk.interrupt, options.walk.time_limit_seconds);
  FunctionalDimensionResult result;
  const std::size_t parameters = network.parametric_dimension();
  result.parametric_dimension = parameters;
  // The scaling directions' rank and pivot columns from the network's zero
  // pattern (no elimination: cheap even for thousands of layers).
  const ScalingStructure scaling = scaling_structure(network);
  result.scaling_bound = parameters - scaling.rank;
  auto report = [&](const char* phase, std::size_t done, std::size_t total) {
    if (options.on_phase) options.on_phase(CertifyProgress{phase, done, total, stop.elapsed_seconds()});
  };

  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  ModularRowBasis basis(modular.prime, parameters);
  std::vector<KeptRows> kept;
  detail::SpareRows spare_rows(parameters);  // kept rows' copies; topped up by the drain's second thread
  std::vector<ActivationPattern> smooth;
  detail::NeuronActivity activity(network.relu_neuron_count());
  // The rows (coefficient_blocks_mod) of the regions the first two batches found when the points
  // give up before eliminating any: the walk takes them instead of computing them again. Read only in the walk.
  std::map<ActivationPattern, ModularMatrix> rows_for_walk;

  // Rows are added screened (core/rank.hpp): most are dependent, and a
  // dependent row then costs one dot product. An independent row the screen
  // misses (probability 1/p) leaves the rank a lower bound still; the kernel
  // read off the basis then fails the exact check after the walk, so the
  // result would be bounds, never a wrong certified value.
  // interior: the region's exact interior point, recorded as a witness when
  // the region's rows raise the rank (nullptr: none recorded).
  // rows: the region's coefficient_blocks_mod when already computed (by the
  // walk's worker, WalkOptions::prepare_region), else null.
  auto add_region_rows = [&](const ActivationPattern& pattern, const RationalVector* interior,
                             const ModularMatrix* rows_ready = nullptr) {
    KeptRows region{pattern, {}, {}};
    if (options.across) {  // the rows its owner kept: the same rows stay (distributed_certify.hpp)
      for (const auto& [r, row] : options.across->region_rows())
        if (basis.add_row_screened(row)) {
          region.rows.push_back(r);
          region.residues.push_back(row);
          options.across->row_kept(row);
        }
    } else {
      if (const auto ready = rows_for_walk.find(pattern); !rows_ready && ready != rows_for_walk.end())
        rows_ready = &ready->second;
      const ModularMatrix computed = rows_ready ? ModularMatrix() : coefficient_blocks_mod(modular, pattern);
      const ModularMatrix& rows = rows_ready ? *rows_ready : computed;
      // add_row_screened, screened in place (most rows are dependent): only a row that passes is copied out.
      for (std::size_t r = 0; r < rows.rows(); ++r)
        if (basis.rank() < basis.columns() && basis.passes_screen({&rows(r, 0), rows.cols()}))
          if (ModularVector row = spare_rows.copy(&rows(r, 0)); basis.add_row(row)) {
            region.rows.push_back(r);
            region.residues.push_back(std::move(row));
          }
    }
    if (region.rows.empty()) return;
    kept.push_back(std::move(region));
    if (interior) result.witness_points.push_back(*interior);
  };
  const unsigned threads =
      options.walk.threads ? options.walk.threads : std::max(1u, std::thread::hardware_concurrency());
  const detail::LoopThreads loop_threads(threads);  // every parallel loop's threads below, started once

  // Points first: rows of the regions that exact interior points land in.
  // Batches are drawn in order and their patterns decided in parallel, then
  // their rows added in point order, so the result does not depend on the
  // thread count (batches of a fixed size, so the points drawn before a
  // stall, and the lines after it, are too). Stalls after `patience` points
  // without a rise in rank.
  std::set<ActivationPattern> seen_by_points;
  // Adds the rows of each point's region the first time a point lands in it
  // (rows computed in parallel for every smooth region not seen before its
  // batch), in point order, and keeps those that raise the rank, until the
  // rank meets the bound or a stop: the points after that one are not
  // counted. By add_rows (core/rank.hpp: the rows add_row would keep, cheaper
  // when most raise the rank, on every thread). Returns, for each point
  // counted, whether its rows raised the rank.
  auto keep_rows_of_points = [&](const std::vector<PointRegion>& point_regions, const std::vector<ModularMatrix>& rows,
                                 const std::vector<RationalVector>& points) {
    std::vector<ModularVector> candidates;
    std::vector<std::size_t> first_row(points.size() + 1, 0);  // point i's rows: [first_row[i], first_row[i + 1])
    std::set<const ActivationPattern*, decltype([](const ActivationPattern* a, const ActivationPattern* b) {
               return *a < *b;
             })>
        in_batch;
    for (std::size_t i = 0; i < points.size(); ++i) {
      first_row[i] = candidates.size();
      const PointRegion& region = point_regions[i];
      if (region.verdict == PointVerdict::smooth && !seen_by_points.contains(region.pattern) &&
          in_batch.insert(&region.pattern).second)
        for (std::size_t r = 0; r < rows[i].rows(); ++r) candidates.push_back(rows[i].row(r));
    }
    first_row[points.size()] = candidates.size();
    std::vector<bool> rose;
    if (basis.rank() >= result.scaling_bound) return rose;
    std::vector<bool> kept_rows;
    const std::size_t considered = basis.add_rows(
        candidates, result.scaling_bound, kept_rows,
        [&](std::size_t count, const std::function<void(std::size_t)>& body) { parallel_for(count, threads, body); },
        &stop);  // a stop acts between chunks of rows, not after the batch
    std::size_t counted = points.size();  // cut short (at the bound, by a stop): to the last row's point
    if (considered < candidates.size())
      counted = considered == 0 ? 0
                                : static_cast<std::size_t>(std::upper_bound(first_row.begin(), first_row.end(),
                                                                            considered - 1) - first_row.begin());
    rose.assign(counted, false);
    for (std::size_t i = 0; i < counted; ++i) {
      const PointRegion& region = point_regions[i];
      if (region.verdict != PointVerdict::smooth || !seen_by_points.insert(region.pattern).second) continue;
      KeptRows kept_region{region.pattern, {}, {}};
      for (std::size_t c = first_row[i]; c < first_row[i + 1]; ++c)
        if (kept_rows[c]) {
          kept_region.rows.push_back(c - first_row[i]);
          kept_region.residues.push_back(std::move(candidates[c]));
        }
      if (kept_region.rows.empty()) continue;
      kept.push_back(std::move(kept_region));
      result.witness_points.push_back(points[i]);
      rose[i] = true;
    }
    return rose;
  };
  // Set when the points gave up on the geometric forecast (ReachForecast):
  // the rank flattened far below the bound, so the lines are skipped too.
  bool points_far_below = false;
  auto rows_from_points = [&] {
    InteriorPointSource source(domain, options.points_seed);
    const IntegerPatternEvaluator evaluator(network);
    const std::size_t patience = std::max<std::size_t>(64, result.scaling_bound / 2);
    const std::size_t budget = 4 * result.scaling_bound + 256;
    constexpr std::size_t batch = 32;
    std::size_t since_rise = 0;
    detail::ReachForecast forecast(8, basis.rank(), domain.dim <= 2);
    const StopScope scope(stop);
    struct Batch {
      std::vector<RationalVector> points = std::vector<RationalVector>(batch);
      std::vector<PointRegion> regions = std::vector<PointRegion>(batch);
      std::vector<ModularMatrix> rows = std::vector<ModularMatrix>(batch);
    };
    std::size_t drawn = 0;  // points drawn before this batch (the nudges' seeds)
    // Rows are computed for the regions not seen before (nor in `before`'s
    // regions when given: those are seen by the time this batch goes in),
    // once a region.
    auto draw = [&](const Batch* before = nullptr) {
      std::set<ActivationPattern> earlier;
      if (before)
        for (const PointRegion& region : before->regions) earlier.insert(region.pattern);
      Batch b;
      for (RationalVector& point : b.points) point = source.next();
      parallel_for(batch, threads, [&](std::size_t i) {
        b.regions[i] = region_of_point(network, evaluator, b.points[i]);
        for (unsigned attempt = 0; attempt < 8 && b.regions[i].verdict == PointVerdict::on_bent_hyperplane; ++attempt) {
          // A nudge drawn from the point's own generator: the same for any thread count.
          InteriorPointSource nudges(domain, options.points_seed ^ (0x9e3779b97f4a7c15ull * (drawn + i + 1)));
          b.points[i] = nudges.nudge(b.points[i], attempt);
          b.regions[i] = region_of_point(network, evaluator, b.points[i]);
        }
      });
      // Rows only at the first point of the batch in each such region (only
      // those are read: keep_rows_of_points, new_rows).
      std::vector<std::size_t> first_in_region;
      for (std::size_t i = 0; i < batch; ++i)
        if (b.regions[i].verdict == PointVerdict::smooth && !seen_by_points.contains(b.regions[i].pattern) &&
            earlier.insert(b.regions[i].pattern).second)
          first_in_region.push_back(i);
      parallel_for(first_in_region.size(), threads, [&](std::size_t k) {
        b.rows[first_in_region[k]] = coefficient_blocks_mod(modular, b.regions[first_in_region[k]].pattern);
      });
      drawn += batch;
      return b;
    };
    // On a plane, when the first batch cannot reach the bound alone (the
    // second is drawn then in any case), both are drawn before any row is
    // eliminated; when even every row of their new regions, and a rest
    // decaying at their ratio, falls short (detail::candidate_rows_fall_short),
    // or finishing on points is dearer than the walk they would spare
    // (detail::PlanarPointsCost, also after each batch), or a neuron past the
    // first hidden layer has one state at all their points (a value below the
    // bound proposed: detail::deeper_neuron_stable_at), the walk runs at once
    // and takes their regions' rows (rows_for_walk).
    std::deque<Batch> held;
    if (domain.dim <= 2 && options.give_up_early) {
      std::set<ActivationPattern> found;
      auto new_rows = [&](const Batch& b) {
        std::size_t count = 0;
        for (std::size_t i = 0; i < batch; ++i)
          if (b.regions[i].verdict == PointVerdict::smooth && found.insert(b.regions[i].pattern).second)
            count += b.rows[i].rows();
        return count;
      };
      held.push_back(draw());
      const std::size_t first = new_rows(held[0]);
      if (basis.rank() + first < result.scaling_bound) {
        held.push_back(draw(&held[0]));
        const std::size_t rows = first + new_rows(held[1]);  // the most the rank can rise
        if (detail::candidate_rows_fall_short(basis.rank(), first, rows - first, result.scaling_bound, domain.dim) ||
            (domain.dim == 2 &&
             (detail::planar_points_dearer_at_start(basis.rank(), rows, result.scaling_bound, parameters, 2 * batch,
                                                    found.size()) ||
              (network.relu_layer_count() >= 2 && detail::deeper_neuron_stable_at({held[0].regions, held[1].regions},
                                                                                  network.first_neuron_of_layer(1)))))) {
          points_far_below = true;
          result.points_drawn = drawn;  // drawn and decided; none of their rows kept
          for (Batch& b : held)
            for (std::size_t i = 0; i < batch; ++i)
              if (b.rows[i].rows() > 0) rows_for_walk.emplace(std::move(b.regions[i].pattern), std::move(b.rows[i]));
          return;
        }
      }
    }
    detail::PlanarPointsCost cost(result.scaling_bound, parameters, batch);  // on a plane
    while (basis.rank() < result.scaling_bound && since_rise < patience && result.points_drawn < budget) {
      if (stop.is_requested()) return;
      Batch b = held.empty() ? draw() : std::move(held.front());
      if (!held.empty()) held.pop_front();
      for (const bool rose : keep_rows_of_points(b.regions, b.rows, b.points)) {
        ++result.points_drawn;
        since_rise = rose ? 0 : since_rise + 1;
      }
      report("points", basis.rank(), result.scaling_bound);
      if (!forecast.reachable(basis.rank(), result.scaling_bound, result.points_drawn, budget, batch) &&
          options.give_up_early) {
        points_far_below = forecast.decayed();
        return;
      }
      if (domain.dim == 2 && options.give_up_early &&
          cost.dearer_than_walk(result.points_drawn, basis.rank(), seen_by_points.size(), since_rise))
        return;
    }
  };

  // Then lines: each sweeps every linear piece it crosses (line_sweep.hpp),
  // reaching the thin and far regions random points miss. A batch of lines
  // is swept and its new points decided exactly in parallel, then their rows
  // added in line order (batches of a fixed size: the same for any thread
  // count). Stalls after line_patience lines without a rise in rank.
  auto rows_from_lines = [&] {
    InteriorPointSource source(domain, options.points_seed ^ 0x5bd1e995ull);
    const IntegerPatternEvaluator evaluator(network);
    const DoubleNetwork double_network = to_double(network);
    constexpr std::size_t lines_per_batch = 4;
    constexpr std::size_t points_per_line = 1 << 14;
    constexpr std::size_t line_patience = 64;
    const std::size_t line_budget = 64 + result.scaling_bound;
    std::unordered_set<std::string> proposed;
    std::size_t lines = 0, since_rise = 0;
    detail::ReachForecast forecast(2, basis.rank());
    const StopScope scope(stop);
    while (basis.rank() < result.scaling_bound && since_rise < line_patience && lines < line_budget) {
      if (stop.is_requested()) return;
      // Each line through a random interior point, both ways along a random direction.
      std::vector<std::pair<DoubleVector, DoubleVector>> rays;
      for (std::size_t l = 0; l < lines_per_batch; ++l) {
        const DoubleVector base = to_double(source.next());
        const DoubleVector other = to_double(source.next());
        DoubleVector direction(base.size());
        for (std::size_t i = 0; i < base.size(); ++i) direction[i] = other[i] - base[i];
        DoubleVector backward = direction;
        for (double& value : backward) value = -value;
        rays.emplace_back(base, direction);
        rays.emplace_back(base, backward);
      }
      std::vector<std::vector<SweptPoint>> swept(rays.size());
      parallel_for(rays.size(), threads, [&](std::size_t r) {
        const auto& [base, direction] = rays[r];
        swept[r] = sweep_line(double_network, base, direction, detail::ray_reach(domain, base, direction), points_per_line);
      });
      std::vector<RationalVector> points;
      for (auto& ray : swept)
        for (SweptPoint& point : ray)
          if (proposed.insert(std::move(point.pattern)).second) points.push_back(rational_from_vector(point.point));
      std::vector<PointRegion> regions(points.size());
      std::vector<ModularMatrix> rows(points.size());
      parallel_for(points.size(), threads, [&](std::size_t i) {
        if (placement_in(domain, points[i]) != Placement::inside) return;
        regions[i] = region_of_point(network, evaluator, points[i]);
        if (regions[i].verdict == PointVerdict::smooth && !seen_by_points.contains(regions[i].pattern))
          rows[i] = coefficient_blocks_mod(modular, regions[i].pattern);
      });
      const std::size_t rank_before = basis.rank();
      result.points_drawn += keep_rows_of_points(regions, rows, points).size();
      lines += lines_per_batch;
      since_rise = basis.rank() > rank_before ? 0 : since_rise + lines_per_batch;
      report("lines", basis.rank(), result.scaling_bound);
      if (!forecast.reachable(basis.rank(), result.scaling_bound, lines, line_budget, lines_per_batch) &&
          options.give_up_early)
        return;
    }
  };

  // The walk's rows wait here for the basis (at most 64 MB of them), so that
  // the walk's in-order delivery does not wait for the basis. A stop at the
  // bound closes it at the region whose rows met the bound (stopped_at): the
  // walk stops at its next delivery, and is reported as if it had stopped there.
  std::optional<detail::RegionsSoFar> stopped_at;
  detail::RowBacklog backlog(
      [&](const detail::PendingRows& pending, const detail::RegionsSoFar& at) {
        add_region_rows(pending.pattern, &pending.interior, pending.rows.get());
        if (options.stop_at_scaling_bound && basis.rank() == result.scaling_bound) stopped_at = at;
        return !stopped_at;
      },
      std::size_t{64} << 20);
  detail::RegionsSoFar delivered;
  WalkOptions walk_options = options.walk;
  walk_options.on_region = [&](const Region& region) {
    if (backlog.is_closed()) return false;  // the rank met the bound at a region delivered before
    ++delivered.regions;
    delivered.bounded += region.bounded;
    activity.record(region.pattern);
    if (!region.nonsmooth_neurons.empty()) {  // no smooth points: no rows
      ++delivered.nonsmooth;
      return true;
    }
    if (!options.across) smooth.push_back(region.pattern);  // across: each owner keeps its own
    if (seen_by_points.contains(region.pattern)) {
      // its rows are in the basis already
    } else if (const auto* rows = std::any_cast<std::shared_ptr<const ModularMatrix>>(&region.prepared)) {
      // Made on this thread, which frees it too (RowBacklog::push); reduced by
      // walk_options.background, in this order.
      backlog.push(region.pattern, region.interior.point, *rows, delivered);
    } else {
      add_region_rows(region.pattern, &region.interior.point);
      // (Only here is the rank read: the backlog's reduction may be writing it.)
      if (options.stop_at_scaling_bound && basis.rank() == result.scaling_bound) {
        result.early_stop = true;
        return false;
      }
    }
    return true;
  };
  if (!options.across) {
    // The rows' reduction (the basis, serial) on the walk's background thread,
    // while the others go on walking: the kept rows are the same (on_region
    // still runs in order), only the threads doing the work differ (reduced in
    // on_region, the basis held back the delivery, which finds the next
    // regions to process). A region's rows modulo p are formed there too while
    // that thread keeps up: formed where the region was processed, its 3 x D
    // words crossed processors to be reduced and their memory crossed back
    // (2,15,15,15,1 at 2 threads: 41 ms of walk thread time, 35 so, 28 at one).
    // Once rows_behind entries wait, the processing thread forms them: only the
    // reduction is serial (2,30,30,30,1: most of its walk). Not sooner: waiting
    // rows are new memory, a page fault a page (10 us on our virtual machine),
    // and those left at the walk's end are formed on a second thread (reduce_all).
    // seen_by_points and rows_for_walk are not written in the walk: workers read them.
    constexpr std::size_t rows_behind = 512;
    walk_options.prepare_region = [&](const Region& region) -> std::any {
      if (!region.nonsmooth_neurons.empty() || seen_by_points.contains(region.pattern)) return {};
      if (backlog.queued() < rows_behind) return std::shared_ptr<const ModularMatrix>();
      const auto ready = rows_for_walk.find(region.pattern);
      return std::make_shared<const ModularMatrix>(
          ready != rows_for_walk.end() ? ready->second : coefficient_blocks_mod(modular, region.pattern));
    };
    walk_options.on_region_in_pool = true;
    walk_options.background = [&] { return backlog.reduce_one(); };
  }
  const bool tries_points = options.stop_at_scaling_bound && options.points_first;
  if (tries_points) {
    const double points_started = stop.elapsed_seconds();
    try {
      rows_from_points();
      if (options.sweep_lines && !points_far_below && basis.rank() < result.scaling_bound && !stop.is_requested() &&
          (domain.dim != 2 || !options.give_up_early ||
           detail::planar_lines_may_pay(result.points_drawn, seen_by_points.size())))
        rows_from_lines();
    } catch (const Stopped&) {
      // bounds below
    }
    result.points_seconds = stop.elapsed_seconds() - points_started;
  }
  if (tries_points && basis.rank() == result.scaling_bound) {
    result.early_stop = true;
    result.certified_by_points = true;
  } else if (tries_points && stop.is_requested()) {
    result.stop_reason = stop.reason();
  } else {
    // The limit counts from the start of certify, not of the walk.
    if (options.walk.time_limit_seconds > 0)
      walk_options.time_limit_seconds = std::max(1e-9, options.walk.time_limit_seconds - stop.elapsed_seconds());
    if (options.across)
      result.walk = options.across->walk(network, domain, walk_options, modular.prime, basis.rows(), seen_by_points);
    else
      result.walk = options.walker ? options.walker(network, domain, walk_options)
                                   : walk_regions(network, domain, walk_options);
    // What the walk's threads left; after a stop (time limit, Ctrl-C), dropped from the first entry not reduced.
    std::optional<detail::RegionsSoFar> cut_at;
    const auto form = [&](const detail::PendingRows& pending, ModularMatrix& rows) {  // as add_region_rows would
      if (rows_for_walk.contains(pending.pattern)) return false;
      rows = coefficient_blocks_mod(modular, pending.pattern);
      spare_rows.top_up();
      return true;
    };
    if (!backlog.reduce_all(stop, threads, form) && !stopped_at) cut_at = backlog.last_reduced();
    if (stopped_at || cut_at) {  // the walk as on_region would have stopped it, reducing each region's rows itself
      const detail::RegionsSoFar& at = stopped_at ? *stopped_at : *cut_at;
      result.early_stop = stopped_at.has_value();
      smooth.resize(at.regions - at.nonsmooth);  // (activity is read only after a full walk)
      detail::restate_walk_at(result.walk, at);
      if (cut_at) result.walk.stop_reason = stop.reason();
    }
    result.regions_walked = stopped_at ? stopped_at->regions : cut_at ? cut_at->regions : delivered.regions;
    result.walk_complete = result.walk.complete;
    result.nonsmooth_regions = result.walk.nonsmooth_regions;
    result.stop_reason = result.early_stop ? StopReason::none : result.walk.stop_reason;
  }
  // Proved whatever happens next: the kept rows' nonsingular minor, the scaling kernel.
  result.lower_bound = basis.rank();
  result.upper_bound = result.scaling_bound;

  bool stopped = false;
  auto stop_now = [&] {
    if (StopReason reason = stop.reason(); reason != StopReason::none) {
      result.stop_reason = reason;
      stopped = true;
    }
    return stopped;
  };

  // Lifts the extra directions, proves them on every smooth region, names
  // their mechanisms (lift_and_prove_extra_directions). The walk's basis
  // holds every smooth region's rows modulo its prime, so the first image is
  // the kernel of all of them modulo p.
  auto prove_by_extra_directions = [&] {
    // The scaling directions' pivot columns Q: S restricted to its
    // independent rows and Q is nonsingular over Q (core/jacobian.hpp).
    const std::vector<std::size_t>& scaling_pivots = scaling.pivot_columns;
    report("kernel", 0, 0);
    const detail::ProofStart start =
        detail::start_proof(network, basis, scaling_pivots, smooth, !options.across, threads);
    const detail::SparseModularRows& first_image = start.first_image;
    detail::SparseRationalRows extra{parameters, {}};
    if (!first_image.rows.empty()) {
      const detail::CheckScale& check_scale = *start.check_scale;
      const auto check_progress = [&](std::size_t done, std::size_t total) { report("check", done, total); };
      detail::CandidateProof across_proof;
      if (options.across)
        across_proof = [&](const RationalMatrix& candidate, bool& is_stopped) {
          return options.across->annihilates_every_region(candidate, threads, stop, is_stopped, check_progress);
        };
      auto proved = detail::lift_and_prove_extra_directions(
          network, modular, scaling_pivots, kept, basis.rank(), first_image, smooth, check_scale, threads, stop,
          stopped, [&](std::size_t step) { report("kernel", step, 0); }, check_progress, across_proof,
          &start.facts);
      if (stopped)
        result.stop_reason = stop.reason() != StopReason::none || !options.across ? stop.reason()
                                                                                  : options.across->stop_reason();
      if (!proved) return;  // stopped, or nothing proved: bounds only
      extra = std::move(*proved);
    }
    if (stop_now()) return;
    // Proved: S and E annihilate every smooth region's rows exactly.
    // Independent: E is echelon and vanishes on Q (checked exactly here).
    if (!detail::is_echelon_off(extra, scaling_pivots)) return;
    result.lower_bound = basis.rank();
    result.upper_bound = std::min(result.scaling_bound, parameters - scaling.rank - extra.rows.size());
    if (options.keep_kernel)
      result.kernel = stack_matrices(scaling_directions(network, scaling.independent_neurons), extra.dense());
    const std::size_t extra_count = extra.rows.size();
    result.extra_kernel = detail::name_extra_directions(network, activity, std::move(extra), threads, [&](std::size_t done) {
      report("naming", done, extra_count);
    });
    result.certified = result.lower_bound == result.upper_bound;
  };

  if (result.early_stop) {
    result.certified = true;
  } else if (result.walk.certified && !stop_now()) {
    // The kernel's elimination, read-off and lifting poll the request too
    // (core/rank.cpp): a stop there leaves the bounds proved above.
    try {
      const StopScope scope(stop);
      prove_by_extra_directions();
    } catch (const Stopped& stopped_here) {
      result.stop_reason = stopped_here.reason();
      stopped = true;
    }
  } else {
    // A walk cut short or with an anomaly: the two proved bounds only.
    result.certified = result.lower_bound == result.upper_bound && result.stop_reason == StopReason::none;
  }
  if (result.certified) result.functional_dimension = result.lower_bound;
  // Certified at the scaling bound without the kernel proof (early stop):
  // the kernel is then exactly the span of the independent scaling directions.
  if (result.certified && options.keep_kernel && result.kernel.rows() == 0 &&
      result.upper_bound == result.scaling_bound)
    result.kernel = scaling_directions(network, scaling.independent_neurons);
  result.regions_contributing = kept.size();
  if (options.keep_rows && !kept.empty()) {
    // A Ctrl-C that stopped the run leaves its rows formed whole (documented);
    // one while they are formed ends them (not the value): the first rows_regions.
    const std::atomic<bool>* interrupt = result.stop_reason == StopReason::interrupted ? nullptr : options.walk.interrupt;
    const auto rows_progress = [&](std::size_t done, std::size_t total) { report("rows", done, total); };
    result.rows = detail::contributing_rows(network, kept, interrupt, result.rows_regions, rows_progress,
                                            options.on_region_rows);  // when set, handed on and none kept
    // Cut short by the interrupt, not by on_region_rows wanting no more.
    result.rows_interrupted = result.rows_regions < kept.size() && interrupt && interrupt->load();
  }
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return result;
}

std::string_view mechanism_word(Mechanism mechanism) {
  switch (mechanism) {
    case Mechanism::none: return "";
    case Mechanism::dead_neuron: return "dead-neuron";
    case Mechanism::always_active_neuron: return "always-active-neuron";
    case Mechanism::zero_outgoing_weights: return "zero-outgoing-weights";
    case Mechanism::duplicate_neurons: return "duplicate-neurons";
  }
  return "";
}

}  // namespace pleat
