#include "enumerate/batch_dimension.hpp"

#include "core/jacobian.hpp"
#include "core/rank.hpp"
#include "enumerate/claim.hpp"
#include "core/detail/flint_matrix.hpp"
#include "enumerate/detail/check_basis.hpp"
#include "enumerate/detail/kernel_check.hpp"
#include "enumerate/detail/rightmost_pivots.hpp"
#include "enumerate/detail/span_proof.hpp"

#include <flint/nmod.h>

#include <algorithm>
#include <chrono>
#include <limits>
#include <map>
#include <thread>
#include <utility>

namespace pleat {
namespace {

// The vectors x~ = (x, 1) of one region's chosen points in echelon form (1 at
// each row's pivot, 0 there in every later row): decides exactly whether a
// new point's x~ is independent of the chosen ones'.
class AffineSpan {
 public:
  explicit AffineSpan(std::size_t inputs) : size_(inputs + 1) {}

  bool is_full() const { return rows_.size() == size_; }

  bool add_if_independent(const RationalVector& x) {
    if (is_full()) return false;
    RationalVector v(x);
    v.push_back(Rational(1));
    for (std::size_t i = 0; i < rows_.size(); ++i) {
      const Rational factor = v[pivots_[i]];
      if (factor == 0) continue;
      for (std::size_t c = 0; c < size_; ++c) v[c] -= factor * rows_[i][c];
    }
    const auto pivot = std::find_if(v.begin(), v.end(), [](const Rational& value) { return value != 0; });
    if (pivot == v.end()) return false;
    const Rational lead = *pivot;
    for (Rational& value : v) value /= lead;
    pivots_.push_back(static_cast<std::size_t>(pivot - v.begin()));
    rows_.push_back(std::move(v));
    return true;
  }

 private:
  std::size_t size_;
  std::vector<RationalVector> rows_;
  std::vector<std::size_t> pivots_;
};

struct TouchedRegion {
  ActivationPattern pattern;
  AffineSpan span;
  ModularMatrix blocks_modulo;
  RationalMatrix blocks;  // exact, filled when a rank is proved
};

struct ChosenPoint {
  std::size_t region = 0;
  const RationalVector* point = nullptr;
};

// The row times a positive rational: a primitive integer vector (same zero
// pattern, same orthogonality, the smallest entries).
std::vector<Integer> integer_row(const RationalVector& row) {
  std::vector<Integer> out;
  detail::primitive_integers(row.size(), [&](std::size_t i) -> const Rational& { return row[i]; }, out);
  return out;
}

// Kernel vectors as sparse integer vectors (each scaled by the lcm of its
// denominators), for exact dot products with integer rows.
using SparseIntegerRow = detail::IntegerEntries;

std::vector<SparseIntegerRow> sparse_integer_rows(const RationalMatrix& matrix) {
  std::vector<SparseIntegerRow> out;
  for (std::size_t r = 0; r < matrix.rows(); ++r) {
    const std::vector<Integer> scaled = integer_row(matrix.row(r));
    SparseIntegerRow sparse;
    for (std::size_t c = 0; c < scaled.size(); ++c)
      if (sgn(scaled[c]) != 0) sparse.emplace_back(c, scaled[c]);
    out.push_back(std::move(sparse));
  }
  return out;
}

bool is_annihilated(const RationalVector& row, const std::vector<SparseIntegerRow>& kernel) {
  const std::vector<Integer> scaled = integer_row(row);
  Integer sum;
  for (const SparseIntegerRow& vector : kernel) {
    sum = 0;
    for (const auto& [c, value] : vector) mpz_addmul(sum.get_mpz_t(), value.get_mpz_t(), scaled[c].get_mpz_t());
    if (sgn(sum) != 0) return false;
  }
  return true;
}

class BatchRanker {
 public:
  BatchRanker(const Network& network, unsigned threads, const BatchProgress& on_progress)
      : network_(network),
        threads_(threads ? threads : std::max(1u, std::thread::hardware_concurrency())),
        evaluator_(network),
        modular_(reduce_modulo_some_prime(network, primary_prime())),
        scaling_bound_(pleat::scaling_bound(network)),
        outputs_(network.output_dim()),
        blocks_per_region_(network.output_dim() * (network.input_dim + 1)),
        batch_basis_(modular_.prime, network.parametric_dimension()),
        region_basis_(modular_.prime, network.parametric_dimension()),
        on_progress_(on_progress) {}

  // Decides the point's region (input_error when it has none) and takes in
  // the rows it adds.
  void take_point(const Domain& domain, const RationalVector& point, const std::string& place) {
    const ActivationPattern pattern = batch_point_pattern(network_, domain, point, place, &evaluator_);
    const auto [found, is_new] = region_of_.try_emplace(pattern, regions_.size());
    if (is_new) add_region(pattern);
    TouchedRegion& region = regions_[found->second];
    if (!region.span.add_if_independent(point)) return;
    chosen_.push_back({found->second, &point});
    add_point_rows(region, point);
  }

  // The exact proofs of both ranks; polls the current StopScope.
  void prove(BatchDimension& result) {
    prove_regions(result.regions);
    result.batch.upper = std::min(result.batch.upper, result.regions.upper);
    prove_batch(result.batch);
  }

  // Proved bounds with `remaining` points not yet taken in.
  void bound(BatchDimension& result, std::size_t remaining) const {
    result.regions_touched = regions_.size();
    result.regions = {region_basis_.rank(),
                      std::min(scaling_bound_, blocks_per_region_ * (regions_.size() + remaining))};
    result.batch = {batch_basis_.rank(), std::min({scaling_bound_, outputs_ * (chosen_.size() + remaining),
                                                   result.regions.upper})};
  }

 private:
  void add_region(const ActivationPattern& pattern) {
    regions_.push_back({pattern, AffineSpan(network_.input_dim), coefficient_blocks_mod(modular_, pattern), {}});
    const ModularMatrix& blocks = regions_.back().blocks_modulo;
    for (std::size_t b = 0; b < blocks.rows(); ++b) region_kept_.push_back(region_basis_.add_row_screened(blocks.row(b)));
  }

  // J(x)[o] modulo p from the region's blocks modulo p; none (no lower bound
  // from them, still proved exactly) when p divides a coordinate's denominator.
  void add_point_rows(const TouchedRegion& region, const RationalVector& point) {
    const std::uint64_t prime = modular_.prime;
    std::vector<std::uint64_t> x;
    for (const Rational& value : point) {
      const auto residue = reduce_modulo(value, prime);
      if (!residue) {
        batch_kept_.insert(batch_kept_.end(), outputs_, false);
        return;
      }
      x.push_back(*residue);
    }
    nmod_t modulus;
    nmod_init(&modulus, prime);
    const std::size_t stride = network_.input_dim + 1;
    for (std::size_t o = 0; o < outputs_; ++o) {
      ModularVector row = region.blocks_modulo.row(o * stride);
      for (std::size_t t = 0; t < x.size(); ++t)
        for (std::size_t c = 0; c < row.size(); ++c)
          row[c] = nmod_add(row[c], nmod_mul(x[t], region.blocks_modulo(o * stride + 1 + t, c), modulus), modulus);
      batch_kept_.push_back(batch_basis_.add_row_screened(row));
    }
  }

  const RationalMatrix& exact_blocks(TouchedRegion& region) {
    poll_stop();
    if (region.blocks.rows() == 0) region.blocks = coefficient_blocks(network_, region.pattern);
    return region.blocks;
  }

  // J(x)[o] = B[o, offset] + sum_t x_t B[o, slope t], exactly.
  RationalVector batch_row(std::size_t k) {
    const ChosenPoint& chosen = chosen_[k / outputs_];
    const RationalMatrix& blocks = exact_blocks(regions_[chosen.region]);
    const std::size_t first = (k % outputs_) * (network_.input_dim + 1);
    RationalVector row = blocks.row(first);
    for (std::size_t t = 0; t < chosen.point->size(); ++t)
      for (std::size_t c = 0; c < row.size(); ++c) row[c] += (*chosen.point)[t] * blocks(first + 1 + t, c);
    return row;
  }

  RationalVector region_row(std::size_t k) {
    return exact_blocks(regions_[k / blocks_per_region_]).row(k % blocks_per_region_);
  }

  // The kept rows K scaled to integer rows (the same span and kernel), the
  // columns P on which they are nonsingular modulo p, hence over Q, and the
  // free columns that some kept row involves (the kernel candidate's
  // solves). No pivots when p loses rank (the caller's proof then fails).
  struct KeptSystem {
    std::vector<detail::IntegerRow> rows;
    std::vector<std::size_t> pivots;
    std::vector<std::size_t> free;    // the columns outside P
    std::vector<std::size_t> solved;  // indices into free
  };

  template <typename Row>
  KeptSystem kept_system(const std::vector<bool>& kept, Row&& row) {
    KeptSystem system;
    for (std::size_t k = 0; k < kept.size(); ++k)
      if (kept[k]) system.rows.push_back(integer_row(row(k)));
    system.pivots = detail::rightmost_pivots(system.rows, modular_.prime, [this](std::size_t done, std::size_t total) {
      if (on_progress_) on_progress_("pivots", done, total);
    });
    if (system.pivots.size() != system.rows.size()) {
      system.pivots.clear();
      return system;
    }
    std::vector<bool> is_pivot(network_.parametric_dimension(), false);
    for (std::size_t c : system.pivots) is_pivot[c] = true;
    for (std::size_t c = 0; c < is_pivot.size(); ++c) {
      if (is_pivot[c]) continue;
      system.free.push_back(c);
      const auto involves_c = [&](const detail::IntegerRow& r) { return sgn(r[c]) != 0; };
      if (std::any_of(system.rows.begin(), system.rows.end(), involves_c))
        system.solved.push_back(system.free.size() - 1);
    }
    return system;
  }

  // D - r independent vectors (identity on the free columns) that
  // annihilate the kept rows K when the solve is right: the vector of a free
  // column f is 1 at f, 0 at the other free columns and -K_P^-1 K_f at P
  // (no solve where K_f is zero). Not proved here: the caller checks that
  // they annihilate every row, which bounds the rank by r. The exact solves
  // (detail::SquareSolver: one LU for all, polling the stop) take 32 free columns at
  // a time, one chunk per next_chunk. The D - r vectors are written out only
  // by finish(), a row at a time between stop polls: on 2,30,30,30,1 with
  // 300 points they are 1392 x 1981 rationals, and allocating them up front
  // held off a stop for 0.2-1 s (more without tcmalloc, in the Python module)
  // even when the span proof then won the race.
  class KernelCandidate {
   public:
    KernelCandidate(const KeptSystem& system, std::size_t columns)
        : system_(system), square_(system.rows.size(), system.rows.size()), columns_(columns) {
      is_failed_ = system.pivots.size() != system.rows.size();
      if (is_failed_) return;
      const std::size_t rank = system.rows.size();
      for (std::size_t i = 0; i < rank; ++i)
        for (std::size_t j = 0; j < rank; ++j)
          fmpz_set_mpz(square_.entry(i, j), system.rows[i][system.pivots[j]].get_mpz_t());
    }

    bool is_done() const { return is_failed_ || first_ >= system_.solved.size(); }
    detail::SquareSolver& solver() { return solver_; }
    std::size_t solved() const { return first_; }
    std::size_t columns_left() const { return is_done() ? 0 : system_.solved.size() - first_; }

    void next_chunk(std::size_t most = chunk) { (void)solve_chunk(most, detail::SquareSolver::unlimited); }

    // The digits that solving the next free column took (it is then
    // solved), or nullopt when it needed more than most_digits (or the
    // solve failed: is_done()). The race's probe (is_proved_by_span).
    std::optional<std::size_t> probe_digits(std::size_t most_digits) {
      if (is_done() || !solve_chunk(1, most_digits)) return std::nullopt;
      return solver_.digits();
    }

    // The candidate after the remaining chunks; nullopt when a solve failed.
    std::optional<RationalMatrix> finish() {
      while (!is_done()) next_chunk();
      if (is_failed_) return std::nullopt;
      const auto& [rows, pivots, free, solved] = system_;
      RationalMatrix kernel(0, columns_);
      kernel.reserve_rows(free.size());
      std::size_t next_solved = 0;  // solved is increasing
      for (std::size_t j = 0; j < free.size(); ++j) {
        if (j % 32 == 0) poll_stop();
        RationalVector vector(columns_);
        vector[free[j]] = 1;
        if (next_solved < solved.size() && solved[next_solved] == j) {
          for (std::size_t p = 0; p < pivots.size(); ++p) vector[pivots[p]] = std::move(solutions_[next_solved][p]);
          ++next_solved;
        }
        kernel.append_row(std::move(vector));
      }
      return kernel;
    }

   private:
    // The next `most` free columns solved, the lifting given up after
    // most_digits: false when it was (the columns stay unsolved) or when
    // the solve failed (is_failed_).
    bool solve_chunk(std::size_t most, std::size_t most_digits) {
      poll_stop();  // solve_square_exactly's FLINT fallback polls nothing
      const auto& [rows, pivots, free, solved] = system_;
      const std::size_t rank = rows.size();
      const std::size_t width = std::min(most, solved.size() - first_);
      detail::FmpzMatrix right(rank, width);
      for (std::size_t i = 0; i < rank; ++i)
        for (std::size_t j = 0; j < width; ++j) {
          fmpz_set_mpz(right.entry(i, j), rows[i][free[solved[first_ + j]]].get_mpz_t());
          fmpz_neg(right.entry(i, j), right.entry(i, j));
        }
      const std::optional<RationalMatrix> solution = solver_.solve(right.get(), most_digits);
      if (!solution) {
        is_failed_ = !solver_.ran_out();
        return false;
      }
      for (std::size_t j = 0; j < width; ++j) {
        RationalVector& values = solutions_.emplace_back(rank);
        for (std::size_t p = 0; p < rank; ++p) values[p] = (*solution)(p, j);
      }
      first_ += width;
      return true;
    }

    static constexpr std::size_t chunk = 32;
    const KeptSystem& system_;
    detail::FmpzMatrix square_;
    detail::SquareSolver solver_{square_.get()};  // one LU for every chunk
    const std::size_t columns_;
    std::vector<RationalVector> solutions_;  // per solved free column: its values at the pivots P
    std::size_t first_ = 0;
    bool is_failed_ = false;
  };

  template <typename Row>
  std::size_t rank_of_every_row(std::size_t count, Row&& row) {
    RationalMatrix rows(0, network_.parametric_dimension());
    for (std::size_t k = 0; k < count; ++k) rows.append_row(row(k));
    return rank_exact(rows);
  }

  // Whether every kernel vector annihilates every coefficient-block row of
  // the patterns: certify's exact check (enumerate/detail/kernel_check.hpp).
  bool annihilates_blocks(const RationalMatrix& kernel, const std::vector<ActivationPattern>& patterns,
                          const char* phase) {
    if (patterns.empty() || kernel.rows() == 0) return true;
    if (!check_scale_) check_scale_.emplace(network_);
    const detail::AnnihilationCheck check(network_, kernel, *check_scale_, threads_);
    bool is_stopped = false;
    const auto rejected = detail::first_rejected_pattern(
        check, patterns, threads_, *current_stop_request(), is_stopped, [&](std::size_t done, std::size_t total) {
          if (on_progress_) on_progress_(phase, done, total);
        });
    if (is_stopped) throw Stopped(current_stop_request()->reason());
    return !rejected;
  }

  // Whether the rank is proved by showing every row the basis did not keep
  // a combination of the kept ones (detail::SpanProof, exact) instead of
  // by the kernel candidate. Both solve K_P's system, one right-hand side
  // per dependent row against one per solved free column, but the counts
  // alone do not tell which is cheaper: a dependent row's coefficients can
  // be as large as K_P's determinant where a kernel column's are small
  // (2,15,15,15,15,1, 1000 points: 25 000 bits against 1 000, the span
  // proof 13x slower at 0.61 dependent rows per column), or the reverse
  // (2,15,15,15,1, 300 points: the kernel 10x slower at 0.66; 2,30,30,30,1,
  // 566 points: a kernel column 1113 digits, a dependent row 26-52).
  // Measured there (100 to 5000 points, both forced): below 1/4 the span
  // proof was always faster, from 0.93 slower. Between, it is raced in
  // p-adic digits times columns (a digit of K_P's lifting costs about the
  // same for any column; deterministic, unlike seconds): one column of
  // each is lifted with a digit limit doubled from 16 until one side's
  // projection (its digits times its columns) is below the other's least
  // (the limit reached times its columns); the span proof, once taken, is
  // given up when its projection (the digits spent, plus the last chunk's
  // digits for every row left: later rows combine more) exceeds the
  // kernel's, the kernel's column lifted further (to the projection) when
  // it was not read off yet. The values proved do not depend on which
  // proof finishes.
  template <typename Row>
  bool is_proved_by_span(const std::vector<bool>& kept, const KeptSystem& system, Row&& row, const char* phase,
                         KernelCandidate& kernel) {
    const std::size_t dependent = kept.size() - system.rows.size(), columns = kernel.columns_left();
    if (system.pivots.size() != system.rows.size() || 4 * dependent >= 3 * columns) return false;
    std::vector<detail::IntegerRow> others;
    for (std::size_t k = 0; k < kept.size(); ++k)
      if (!kept[k]) others.push_back(integer_row(row(k)));
    detail::SpanProof span(system.rows, system.pivots, &kernel.solver());  // K_P's LU shared
    const bool is_raced = 4 * dependent >= columns && !others.empty();  // none below 1/4
    std::optional<std::size_t> kernel_digits;
    std::size_t kernel_limit = 16;
    // The kernel's least cost in digit-columns, its column lifted up to `least` first.
    const auto kernel_cost = [&](double least) {
      while (!kernel_digits && !kernel.is_done() &&
             static_cast<double>(kernel_limit) * static_cast<double>(columns) < least) {
        kernel_limit *= 2;
        kernel_digits = kernel.probe_digits(kernel_limit);
      }
      return static_cast<double>(kernel_digits.value_or(kernel_limit)) * static_cast<double>(columns);
    };
    if (is_raced) {
      kernel_digits = kernel.probe_digits(kernel_limit);
      std::optional<std::size_t> span_digits;
      for (std::size_t limit = 16;; limit *= 2) {
        if (kernel.is_done()) return false;
        if (!span_digits) span_digits = span.probe_digits(others[0], limit);
        const double span_least = static_cast<double>(span_digits.value_or(limit)) * static_cast<double>(dependent);
        const double kernel_least = kernel_cost(span_least);
        if (kernel_digits && kernel_least <= span_least) return false;
        if (span_digits && span_least <= kernel_least) break;
      }
    }
    double spent = 0;  // digit-columns
    std::size_t last_done = 0;
    return span.prove(others, [&](std::size_t done, std::size_t total) {
      if (on_progress_) on_progress_(phase, done, total);
      if (done == 0 || !is_raced) return true;
      const auto digits = static_cast<double>(span.digits());
      spent += digits * static_cast<double>(done - last_done);
      last_done = done;
      const double projection = spent + digits * static_cast<double>(total - done);
      return projection <= kernel_cost(projection) || kernel.is_done();
    });
  }

  // The regions' rank is the kept rows' count when the other rows are in
  // their span, or the kernel candidate annihilates every region's blocks,
  // whichever is cheaper; when not (an unlucky prime: a row independent over
  // Q but not modulo p), rank_exact of every block row.
  void prove_regions(RankBounds& bounds) {
    if (bounds.is_exact()) return;
    const auto row = [this](std::size_t k) { return region_row(k); };
    const KeptSystem system = kept_system(region_kept_, row);
    KernelCandidate kernel(system, network_.parametric_dimension());
    bool is_proved = is_proved_by_span(region_kept_, system, row, "regions", kernel);
    if (!is_proved) {
      const auto candidate = kernel.finish();
      std::vector<ActivationPattern> patterns;
      for (const TouchedRegion& region : regions_) patterns.push_back(region.pattern);
      is_proved = candidate && annihilates_blocks(*candidate, patterns, "regions");
    }
    if (is_proved)
      bounds.upper = bounds.lower;
    else
      bounds.lower = bounds.upper = rank_of_every_row(region_kept_.size(), row);
  }

  // The same for the chosen points' rows (every point's rows are in their
  // span: J(x) is linear in x~ within a region). With kernel vectors: in a
  // region whose chosen points' x~ span Q^(n0+1) their rows span its
  // blocks, so the blocks are checked (certify's check); in the others each
  // chosen row is checked exactly.
  void prove_batch(RankBounds& bounds) {
    if (bounds.is_exact()) return;
    const auto row = [this](std::size_t k) { return batch_row(k); };
    const KeptSystem system = kept_system(batch_kept_, row);
    KernelCandidate candidate(system, network_.parametric_dimension());
    if (is_proved_by_span(batch_kept_, system, row, "batch", candidate)) {
      bounds.upper = bounds.lower;
      return;
    }
    const auto kernel = candidate.finish();
    bool is_proved = kernel.has_value();
    if (is_proved) {
      std::vector<ActivationPattern> spanned;
      for (const TouchedRegion& region : regions_)
        if (region.span.is_full()) spanned.push_back(region.pattern);
      is_proved = annihilates_blocks(*kernel, spanned, "batch");
    }
    const std::vector<SparseIntegerRow> sparse = is_proved ? sparse_integer_rows(*kernel) : std::vector<SparseIntegerRow>{};
    for (std::size_t k = 0; k < batch_kept_.size() && is_proved; ++k) {
      if (on_progress_ && k % 64 == 0) on_progress_("batch", k, batch_kept_.size());
      if (regions_[chosen_[k / outputs_].region].span.is_full()) continue;
      is_proved = is_annihilated(batch_row(k), sparse);
    }
    if (is_proved)
      bounds.upper = bounds.lower;
    else
      bounds.lower = bounds.upper = rank_of_every_row(batch_kept_.size(), row);
  }

  const Network& network_;
  const unsigned threads_;
  std::optional<detail::CheckScale> check_scale_;
  const IntegerPatternEvaluator evaluator_;
  const ModularNetwork modular_;
  const std::size_t scaling_bound_;
  const std::size_t outputs_;
  const std::size_t blocks_per_region_;
  ModularRowBasis batch_basis_;
  ModularRowBasis region_basis_;
  std::map<ActivationPattern, std::size_t> region_of_;
  std::vector<TouchedRegion> regions_;
  std::vector<ChosenPoint> chosen_;
  std::vector<bool> batch_kept_;   // per chosen point, one per output
  std::vector<bool> region_kept_;  // per region, one per block row
  BatchProgress on_progress_;
};

}  // namespace

BatchDimension batch_dimension(const Network& network, const Domain& domain, const std::vector<RationalVector>& points,
                               const std::function<std::string(std::size_t)>& place, const StopRequest& stop,
                               unsigned threads, const BatchProgress& on_progress) {
  const StopScope scope(stop);
  BatchDimension result;
  result.points = points.size();
  BatchRanker ranker(network, threads, on_progress);
  try {
    for (; result.points_checked < points.size(); ++result.points_checked) {
      poll_stop();
      if (on_progress && result.points_checked % 64 == 0) on_progress("points", result.points_checked, points.size());
      ranker.take_point(domain, points[result.points_checked], place(result.points_checked));
    }
    ranker.bound(result, 0);
    ranker.prove(result);
  } catch (const Stopped& stopped) {
    // Stopped while proving: the bounds stand as they are.
    if (result.points_checked < points.size()) ranker.bound(result, points.size() - result.points_checked);
    result.stop_reason = stopped.reason();
  }
  return result;
}

FunctionalDimensionResult certify_result_not_started(const Network& network, StopReason reason) {
  FunctionalDimensionResult result;
  result.parametric_dimension = network.parametric_dimension();
  result.scaling_bound = scaling_bound(network);
  result.upper_bound = result.scaling_bound;
  result.stop_reason = reason;
  return result;
}

}  // namespace pleat
