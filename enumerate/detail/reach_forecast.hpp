// When certify's no-walk path gives up (enumerate/functional_dimension.cpp's
// points and lines phases). Internal to enumerate/ (not installed).
#pragma once

#include <cstddef>
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

}  // namespace pleat::detail
