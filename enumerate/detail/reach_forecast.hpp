// When certify's no-walk path gives up (enumerate/functional_dimension.cpp's
// points and lines phases). Internal to enumerate/ (not installed).
#pragma once

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <utility>
#include <vector>

namespace pleat::detail {

// Whether a phase of the no-walk path can still reach the scaling bound
// (speed only: the walk that follows decides). False ends the phase early on
// networks below their bound, where every point drawn is overhead before the
// walk. Never false while the rank is within 1/16 of the bound: networks at
// their bound rise steeply to near it, then find their last few rows slowly,
// and for them (more inputs: a walk can be far dearer) the points are the
// point. Further off, two forecasts, either of which ends the phase:
// - the rate of the last `window` batches kept up for the rest of the
//   budget falls short (ranks fall off: the recent rate is the optimistic
//   guess);
// - the rise decays geometrically and its sum falls short: with g1 the rise
//   over the last two batches and g0 over the two before, the rest of the
//   rise at ratio g1/g0 per two batches is g1 * ratio / (1 - ratio); the
//   phase ends when even twice that misses by 16 rows or more. Below their
//   bound the rank flattens that way within a few batches (2,10,10,10,1,
//   seed 1: 79 128 176 184 192 after five batches of 32 points, 231 to
//   reach; it stops there, not after 735 points and 12 lines), while at
//   their bound every network we tried was within 1/16 of it or 16 rows by
//   the fourth batch (3,6,6,6,1 seed 1: 89 of 97).
// - planar (a domain of at most 2 inputs), the same geometric forecast from
//   the second batch on, on the last two batches' rises alone, counted once
//   (of 47 planar networks at their bound, 1 to 120 wide, 1 to 4 hidden
//   layers, it gave up on 3: 45 45 and 34 38 of 66, 34 42 of 61 with one
//   input, each walked in about the time its points took). There the
//   walk is cheap (each cell's polygon is clipped directly, no LP: walking
//   2,15,15,15,1 seed 1 to its end costs about what its points cost), while
//   the points' rows, scattered over the domain, are eliminated at a dense
//   rate (about twice the walk's for the same rank) and leave a denser basis
//   for the walk. One batch's rise is too noisy a forecast where a walk is
//   dear (3,6,6,6,1 seed 2, at its bound: 77 78 78 86 ...), not on a plane:
//   networks at their bound there (2,100,1: 96 189 285) keep rising. The
//   first two batches are judged before any row is eliminated
//   (candidate_rows_fall_short, below).
class ReachForecast {
 public:
  // start: the rank before the phase's first batch.
  ReachForecast(std::size_t window, std::size_t start, bool planar = false)
      : window_(window), planar_(planar), history_{start} {}
  // The rank after a batch; used and budget in the phase's units (points or
  // lines), batch_size units per batch.
  bool reachable(std::size_t rank, std::size_t bound, std::size_t used, std::size_t budget, std::size_t batch_size) {
    history_.push_back(rank);
    const std::size_t deficit = bound - rank;
    if (16 * deficit < bound) return true;
    if (deficit >= 16 && (decays_short_of(deficit) || (planar_ && last_rise_decays_short_of(deficit)))) {
      decayed_ = true;
      return false;
    }
    if (history_.size() <= window_ + 1) return true;
    const std::size_t gain = rank - history_[history_.size() - 1 - window_];
    const std::size_t remaining = budget > used ? budget - used : 0;
    return gain * remaining >= deficit * window_ * batch_size;
  }
  // True when the phase ended on the geometric forecast: far below the bound.
  bool decayed() const { return decayed_; }
  // Whether a rise decaying at ratio g1/g0 per step from g1 on, counted
  // `margin` times, misses the deficit by `slack` rows or more (never when
  // not decaying).
  static bool falls_short(double g1, double g0, std::size_t deficit, double margin = 2, double slack = 16) {
    if (g1 >= g0) return false;  // not decaying (also 0 and 0: no forecast)
    const double ratio = g1 / g0;
    return margin * g1 * ratio / (1 - ratio) + slack <= static_cast<double>(deficit);
  }

 private:
  bool decays_short_of(std::size_t deficit) const {
    const std::size_t k = history_.size() - 1;  // batches so far
    if (k < 4) return false;
    const double g1 = static_cast<double>(history_[k] - history_[k - 2]);
    const double g0 = static_cast<double>(history_[k - 2] - history_[k - 4]);
    return falls_short(g1, g0, deficit);
  }
  // The geometric forecast on the last batch's rise g1 and the one before's
  // g0 (from the second batch on).
  bool last_rise_decays_short_of(std::size_t deficit) const {
    const std::size_t k = history_.size() - 1;  // batches so far
    if (k < 2) return false;
    return falls_short(static_cast<double>(history_[k] - history_[k - 1]),
                       static_cast<double>(history_[k - 1] - history_[k - 2]), deficit, 1);
  }

  std::size_t window_;
  bool planar_;
  std::vector<std::size_t> history_;
  bool decayed_ = false;
};

// Before eliminating any row (on a plane): whether the points can reach the
// bound when rank stands now, first and second rows come with the new
// regions of two batches (an upper bound on their rise: each row raises the
// rank at most once), and the regions found later bring a rest decaying at
// ratio second/first per batch. Below their bound, deep networks find their
// large regions first (2,15,15,15,1 seed 1: 90 then 57 rows, 496 to reach);
// wide ones at their bound keep finding new regions (2,100,1: 96 and 96).
// No 16-row allowance here: first and second already count every row of
// the new regions, more than the rank rises (2,10,10,10,1 seed 1: 81 and 51
// rows, 79 and 49 of rank; the rest forecast 87 where 99 are missing). On
// one input it is kept: there networks at their bound rise slowly at first
// (1,30,1 samples 2 and 3: 38 and 6 rows of 61) and giving up cost 14 times
// their points (1.1 -> 15.6 ms).
inline bool candidate_rows_fall_short(std::size_t rank, std::size_t first, std::size_t second, std::size_t bound,
                                      std::size_t inputs) {
  const std::size_t most = rank + first + second;
  return most < bound && ReachForecast::falls_short(static_cast<double>(second), static_cast<double>(first),
                                                    bound - most, 1, inputs < 2 ? 16 : 0);
}

// On a plane (2 inputs), the points phase against the walk, in the walk's own
// unit: a region visited (about 200 ns per parameter: 21 us on 2,8,8,1, 48 us
// on 2,10,10,10,1, 82 us on 2,100,1, 150 us on 2,15,15,15,1). Finishing on
// points costs the points still to draw (half a region each: the exact
// decision and a new region's rows) and every missing row eliminated densely
// (the points' rows, scattered over the plane, fill the reduced echelon form:
// about 4 ns x rank x free columns a row, rank x (columns - rank) / (50 x
// columns) regions: 2.7 a row at rank 300 of 556 columns); the walk costs
// the regions the points' landings suggest (regions_estimate, low by about
// 4x: 100 of about 450 on 2,10,10,10,1 after 160 points, 1365 of 5051 on
// 2,100,1 after 128, 20 of 155 on 2,8,8,1 after 32). The points go on only
// while finishing on them is forecast to cost less than that estimate (a
// quarter of the walk, about): giving up costs a network at its bound only
// its walk, which stops at the bound and is cheap on a plane, while going on
// costs one below it, most of the study grid's 2-input samples, every point
// before the walk that follows anyway. Lines (a second walk, on a plane) are
// swept only while the points have seen fewer than half the estimate.
// (2,5,5,5,1 samples 11 and 26, at their bound, are walked now: 1.5-2 ms.)

// How many regions of equal area n random points landing in `seen` distinct
// ones suggest: the R >= seen with R (1 - exp(-n / R)) = seen (unequal areas
// make it low, above); n squared when every point found a region of its own.
inline double regions_estimate(std::size_t points, std::size_t seen) {
  const double n = static_cast<double>(points), d = static_cast<double>(seen);
  if (seen >= points) return n * n;
  double low = d, high = n * n;
  for (int step = 0; step < 60; ++step) {
    const double mid = (low + high) / 2;
    (mid * -std::expm1(-n / mid) < d ? low : high) = mid;
  }
  return (low + high) / 2;
}

// Whether finishing on points from rank to bound (`points_per_row` points a
// row, `columns` parameters) is forecast dearer than `regions` regions.
inline bool points_dearer_than_walk(std::size_t rank, std::size_t bound, std::size_t columns, double points_per_row,
                                    double regions) {
  const double p = static_cast<double>(columns);
  double cost = 0.5 * points_per_row * static_cast<double>(bound - std::min(rank, bound));
  for (std::size_t r = rank; r < bound && cost <= regions; ++r)
    cost += static_cast<double>(r) * (p - static_cast<double>(r)) / (50 * p);
  return cost > regions;
}

// The comparison before any row is eliminated: the first two batches'
// `rows` (their new regions'), all raising the rank, from `seen` regions.
inline bool planar_points_dearer_at_start(std::size_t rank, std::size_t rows, std::size_t bound, std::size_t columns,
                                          std::size_t points, std::size_t seen) {
  return points_dearer_than_walk(rank + rows, bound, columns,
                                 static_cast<double>(points) / static_cast<double>(std::max<std::size_t>(rows, 1)),
                                 regions_estimate(points, seen));
}

// Whether lines may still pay on a plane: the points saw under half the regions estimated.
inline bool planar_lines_may_pay(std::size_t points, std::size_t seen) {
  return regions_estimate(points, seen) >= 2 * static_cast<double>(seen);
}

// The comparison after each batch of the points phase (from the second on),
// at the rise over the last two batches (none: a row per batch after the
// point that last raised the rank).
class PlanarPointsCost {
 public:
  PlanarPointsCost(std::size_t bound, std::size_t columns, std::size_t batch)
      : bound_(bound), columns_(columns), batch_(batch) {}
  // After a batch: points counted, rank, distinct regions they found, points
  // since the last rise.
  bool dearer_than_walk(std::size_t points, std::size_t rank, std::size_t seen, std::size_t since_rise) {
    after_.emplace_back(points, rank);
    if (after_.size() < 3 || rank >= bound_) return false;
    const auto [points_then, rank_then] = after_[after_.size() - 3];
    const double points_per_row = rank > rank_then ? static_cast<double>(points - points_then) /
                                                         static_cast<double>(rank - rank_then)
                                                   : static_cast<double>(since_rise + batch_);
    return points_dearer_than_walk(rank, bound_, columns_, points_per_row, regions_estimate(points, seen));
  }

 private:
  std::size_t bound_, columns_, batch_;
  std::vector<std::pair<std::size_t, std::size_t>> after_{{0, 0}};  // (points, rank) before and after each batch
};

}  // namespace pleat::detail
