// Rational reconstruction, the fixed prime sequence and the incremental
// modular row basis (core/rank.hpp).
#include "core/rank.hpp"
#include "core/detail/flint_matrix.hpp"
#include "core/detail/wide_sum.hpp"
#include "core/stop.hpp"

#include <flint/fmpq.h>
#include <flint/fmpz.h>
#include <flint/nmod.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <functional>
#include <memory>
#include <mutex>
#include <string>
#include <utility>
#include <vector>

namespace pleat {
using namespace detail;

namespace {

// The current thread's stop request when one is installed and asks to stop
// (FLINT temporaries are cleared before Stopped is thrown).
const StopRequest* requested_stop() {
  const StopRequest* request = current_stop_request();
  return request != nullptr && request->is_requested() ? request : nullptr;
}

}  // namespace

struct RationalReconstruction::State {
  std::vector<fmpz> residues;  // row-major, each the CRT value in [0, modulus)
  fmpz_t modulus;
};

RationalReconstruction::RationalReconstruction(std::size_t rows, std::size_t cols)
    : rows_(rows), cols_(cols), state_(new State) {
  state_->residues.resize(rows * cols);
  for (fmpz& value : state_->residues) fmpz_init(&value);
  fmpz_init_set_ui(state_->modulus, 1);
}

RationalReconstruction::~RationalReconstruction() {
  for (fmpz& value : state_->residues) fmpz_clear(&value);
  fmpz_clear(state_->modulus);
  delete state_;
}

void RationalReconstruction::add_image(const ModularMatrix& image, std::uint64_t prime) {
  check_prime_range(prime, "RationalReconstruction::add_image");
  if (image.rows() != rows_ || image.cols() != cols_)
    throw usage_error("RationalReconstruction::add_image: the image's shape differs");
  if (primes_ == 0) {
    for (std::size_t r = 0; r < rows_; ++r)
      for (std::size_t c = 0; c < cols_; ++c) fmpz_set_ui(&state_->residues[r * cols_ + c], image(r, c));
  } else {
    fmpz_t combined;
    fmpz_init(combined);
    for (std::size_t r = 0; r < rows_; ++r) {
      if (const StopRequest* stop = requested_stop()) {
        fmpz_clear(combined);
        throw Stopped(stop->reason());
      }
      for (std::size_t c = 0; c < cols_; ++c) {
        fmpz* value = &state_->residues[r * cols_ + c];
        // Zero modulo everything so far and modulo this prime: stays zero.
        if (fmpz_is_zero(value) && image(r, c) == 0) continue;
        fmpz_CRT_ui(combined, value, state_->modulus, image(r, c), prime, 0);
        fmpz_swap(value, combined);
      }
    }
    fmpz_clear(combined);
  }
  fmpz_mul_ui(state_->modulus, state_->modulus, prime);
  ++primes_;
}

std::optional<RationalMatrix> RationalReconstruction::reconstruct() const {
  if (primes_ == 0) return std::nullopt;
  // Built row by row, polling the stop request between rows: millions of
  // entries when the kernel is large.
  RationalMatrix out(0, cols_);
  out.reserve_rows(rows_);
  fmpq_t value;
  fmpq_init(value);
  bool ok = true;
  for (std::size_t r = 0; r < rows_ && ok; ++r) {
    if (const StopRequest* stop = requested_stop()) {
      fmpq_clear(value);
      throw Stopped(stop->reason());
    }
    std::vector<Rational> row(cols_);
    for (std::size_t c = 0; c < cols_ && ok; ++c) {
      const fmpz* residue = &state_->residues[r * cols_ + c];
      if (fmpz_is_zero(residue)) continue;
      ok = fmpq_reconstruct_fmpz(value, residue, state_->modulus) != 0;
      if (ok) fmpq_get_mpq(row[c].get_mpq_t(), value);
    }
    out.append_row(std::move(row));
  }
  fmpq_clear(value);
  if (!ok) return std::nullopt;
  return out;
}

std::uint64_t prime_sequence(std::size_t index) {
  static std::mutex mutex;
  // The first 16 written out (tests/core/rank_test.cpp checks them against
  // n_nextprime): a certify run's lift and check take a few, and each
  // n_nextprime near 2^62 cost microseconds.
  static std::vector<std::uint64_t> primes = {
      4611686014132420697u, 4611686014132420771u, 4611686014132420777u, 4611686014132420801u,
      4611686014132420819u, 4611686014132420841u, 4611686014132420859u, 4611686014132420897u,
      4611686014132420907u, 4611686014132420991u, 4611686014132420999u, 4611686014132421009u,
      4611686014132421017u, 4611686014132421143u, 4611686014132421171u, 4611686014132421221u};
  const std::lock_guard lock(mutex);
  while (primes.size() <= index) primes.push_back(n_nextprime(primes.empty() ? primary_prime() : primes.back(), 1));
  return primes[index];
}

// ---- Incremental modular row basis ------------------------------------------

namespace {

__extension__ typedef unsigned __int128 Wide;  // GCC/Clang: exact 64 x 64 -> 128 products

// factor * value mod p by Shoup's method, given precomputed =
// floor(factor * 2^64 / p); valid for p < 2^63. Branch-free: the operands are
// random residues, so a branch would be mispredicted half the time.
inline std::uint64_t multiply_shoup(std::uint64_t factor, std::uint64_t value, std::uint64_t precomputed,
                                    std::uint64_t prime) {
  const auto quotient = static_cast<std::uint64_t>((static_cast<Wide>(precomputed) * value) >> 64);
  const std::uint64_t result = factor * value - quotient * prime;  // in [0, 2p)
  return result - (prime & (0 - static_cast<std::uint64_t>(result >= prime)));
}

// target[j] -= factor * source[j] (mod p) at one entry j.
inline void subtract_product(std::uint64_t& target, std::uint64_t source, std::uint64_t factor,
                             std::uint64_t precomputed, std::uint64_t prime) {
  const std::uint64_t product = multiply_shoup(factor, source, precomputed, prime);
  const std::uint64_t difference = target - product;
  target = difference + (prime & (0 - static_cast<std::uint64_t>(target < product)));
}

// target -= factor * source (mod p), entry by entry.
void subtract_multiple(ModularVector& target, const ModularVector& source, std::uint64_t factor,
                       std::uint64_t prime) {
  const std::uint64_t precomputed = n_mulmod_precomp_shoup(factor, prime);
  for (std::size_t j = 0; j < target.size(); ++j) subtract_product(target[j], source[j], factor, precomputed, prime);
}

// The same at source's nonzero entries only (their positions listed in
// nonzero): the other entries of target would lose factor * 0.
void subtract_multiple_at(ModularVector& target, const ModularVector& source, const std::vector<std::size_t>& nonzero,
                          std::uint64_t factor, std::uint64_t prime) {
  const std::uint64_t precomputed = n_mulmod_precomp_shoup(factor, prime);
  for (std::size_t j : nonzero) subtract_product(target[j], source[j], factor, precomputed, prime);
}

// Removes entry q by moving the last entry into its place: the free columns
// are stored in no particular order, and every stored row and the column
// list move alike, so no row is shifted.
template <typename T>
void drop_entry(std::vector<T>& values, std::size_t q) {
  values[q] = values.back();
  values.pop_back();
}

void scale(ModularVector& target, std::uint64_t factor, std::uint64_t prime) {
  const std::uint64_t precomputed = n_mulmod_precomp_shoup(factor, prime);
  for (std::uint64_t& value : target) value = multiply_shoup(factor, value, precomputed, prime);
}

}  // namespace

namespace {

std::uint64_t splitmix64(std::uint64_t& state) {
  std::uint64_t z = (state += 0x9e3779b97f4a7c15ull);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
  return z ^ (z >> 31);
}

}  // namespace

ModularRowBasis::ModularRowBasis(std::uint64_t prime, std::size_t columns)
    : prime_(prime), prime_inverse_(0), columns_(columns) {
  check_prime_range(prime, "ModularRowBasis");
  prime_inverse_ = n_preinvert_limb(prime);
  free_columns_.resize(columns);
  for (std::size_t c = 0; c < columns; ++c) free_columns_[c] = c;
  std::uint64_t state = 0x5c4ee45eedull;
  screen_random_.resize(columns);
  for (std::uint64_t& value : screen_random_) value = splitmix64(state) % prime;
  screen_ = screen_random_;  // no kept row yet: c everywhere
}

// screen_ at the pivots: -(kept row i . c) at pivot i (the free columns keep c).
void ModularRowBasis::write_screen_at_pivots() {
  for (std::size_t i = 0; i < pivot_columns_.size(); ++i)
    screen_[pivot_columns_[i]] = screen_along_[i] == 0 ? 0 : prime_ - screen_along_[i];
}

void ModularRowBasis::check_row(const ModularVector& row, const char* where) const {
  if (row.size() != columns_)
    throw usage_error(std::string(where) + ": the row has " + std::to_string(row.size()) +
                      " entries, the basis " + std::to_string(columns_) + " columns");
  for (std::uint64_t value : row)
    if (value >= prime_) throw usage_error(std::string(where) + ": entry is not a residue");
}

namespace {

// out[q] = base(q) - sum_k factors[k] * parts[k][q] (mod p) for q < count,
// each sum accumulated exactly in 192 bits (a 128-bit sum and a count of its
// wrap-arounds) and reduced once at the end: no reduction per product.
// Columns go kBlock at a time with their sums in registers, each block
// reading down the contributing parts (they stay in cache). out may be the
// storage base reads (each entry is read before it is written); no part may.
template <typename Base>
void subtract_combination(const std::vector<std::uint64_t>& factors, const std::vector<const std::uint64_t*>& parts,
                          std::size_t count, Base base, std::uint64_t* out, std::uint64_t prime,
                          std::uint64_t prime_inverse) {
  // The three-word reduction inline (FLINT's NMOD_RED3 macro; the function
  // n_lll_mod_preinv cost a third of add_rows' time where a sum has only a
  // few products). It wants the top word below p: wraps <= the number of
  // products, nonzero only when factors.size() * (p-1)^2 >= 2^128.
  nmod_t mod;
  mod.n = prime;
  mod.ninv = prime_inverse;
  mod.norm = static_cast<flint_bitcnt_t>(__builtin_clzll(prime));
  const auto subtract_sum = [&](std::size_t q, Wide sum, std::uint64_t wraps) {
    const std::uint64_t value = base(q);
    std::uint64_t subtrahend;
    NMOD_RED3(subtrahend, wraps, static_cast<std::uint64_t>(sum >> 64), static_cast<std::uint64_t>(sum), mod);
    out[q] = value >= subtrahend ? value - subtrahend : value + (prime - subtrahend);
  };
  // Up to `run` products add up below 2^128 (16 for p < 2^62): a run of them
  // goes into a plain 128-bit partial sum, and only the partial sums are
  // checked for wrapping around. The sum is exact either way.
  const Wide square = static_cast<Wide>(prime - 1) * (prime - 1);
  const std::size_t run =
      square == 0 ? 16 : static_cast<std::size_t>(std::min<Wide>(16, std::max<Wide>(1, ~Wide{0} / square)));
  constexpr std::size_t kBlock = 4;
  std::size_t q = 0;
  for (; q + kBlock <= count; q += kBlock) {
    Wide sums[kBlock] = {};
    std::uint64_t wraps[kBlock] = {};
    for (std::size_t first = 0; first < factors.size(); first += run) {
      const std::size_t last = std::min(factors.size(), first + run);
      Wide partial[kBlock] = {};
      for (std::size_t k = first; k < last; ++k) {
        const std::uint64_t factor = factors[k];
        const std::uint64_t* part = parts[k] + q;
        for (std::size_t b = 0; b < kBlock; ++b) partial[b] += static_cast<Wide>(factor) * part[b];
      }
      for (std::size_t b = 0; b < kBlock; ++b) {
        sums[b] += partial[b];
        wraps[b] += static_cast<std::uint64_t>(sums[b] < partial[b]);
      }
    }
    for (std::size_t b = 0; b < kBlock; ++b) subtract_sum(q + b, sums[b], wraps[b]);
  }
  for (; q < count; ++q) {
    Wide sum = 0;
    std::uint64_t wraps = 0;
    for (std::size_t k = 0; k < factors.size(); ++k) {
      const Wide product = static_cast<Wide>(factors[k]) * parts[k][q];
      sum += product;
      wraps += static_cast<std::uint64_t>(sum < product);
    }
    subtract_sum(q, sum, wraps);
  }
}

// subtract_combination with parts[k] nonzero only at the positions
// nonzeros[k] lists (every position when null): each nonzero product goes into its entry's exact sum
// (one 192-bit sum per entry, reduced once), the zero ones are skipped.
template <typename Base>
void subtract_sparse_combination(const std::vector<std::uint64_t>& factors,
                                 const std::vector<const std::uint64_t*>& parts,
                                 const std::vector<const std::vector<std::size_t>*>& nonzeros, std::size_t count,
                                 Base base, std::uint64_t* out, std::uint64_t prime, std::uint64_t prime_inverse) {
  std::vector<WideSum> sums(count);
  for (std::size_t k = 0; k < factors.size(); ++k) {
    const std::uint64_t factor = factors[k];
    const std::uint64_t* part = parts[k];
    if (nonzeros[k] == nullptr) {  // a dense part, not listed
      for (std::size_t q = 0; q < count; ++q) sums[q].add(factor, part[q]);
      continue;
    }
    for (std::size_t q : *nonzeros[k]) sums[q].add(factor, part[q]);
  }
  nmod_t mod;  // NMOD_RED3 inline, as in subtract_combination
  mod.n = prime;
  mod.ninv = prime_inverse;
  mod.norm = static_cast<flint_bitcnt_t>(__builtin_clzll(prime));
  for (std::size_t q = 0; q < count; ++q) {
    const std::uint64_t value = base(q);
    std::uint64_t subtrahend;
    NMOD_RED3(subtrahend, sums[q].high, static_cast<std::uint64_t>(sums[q].low >> 64),
              static_cast<std::uint64_t>(sums[q].low), mod);
    out[q] = value >= subtrahend ? value - subtrahend : value + (prime - subtrahend);
  }
}

// The positions of part's nonzero entries, increasing; false (and none
// listed) when more than half of its entries are nonzero: a dense row
// is not listed (keeping its list would cost as much as using the row).
bool list_nonzeros(const ModularVector& part, std::vector<std::size_t>& positions) {
  positions.resize(part.size());
  std::size_t count = 0;
  for (std::size_t q = 0; q < part.size(); ++q) {  // branch-free: zeros and nonzeros are mixed
    positions[count] = q;
    count += static_cast<std::size_t>(part[q] != 0);
  }
  positions.resize(count);
  if (count * 2 <= part.size()) return true;
  positions.clear();
  return false;
}

}  // namespace

ModularVector ModularRowBasis::residual(const ModularVector& row) const {
  // row minus sum_i row[pivot_i] * (kept row i) on the free columns: kept row
  // i is 1 at its own pivot and 0 at the others, so this clears every pivot
  // entry at once.
  std::vector<std::uint64_t> factors;
  std::vector<const std::uint64_t*> parts;
  std::vector<const std::vector<std::size_t>*> nonzeros;
  std::size_t products = 0;  // the nonzero products
  for (std::size_t i = 0; i < pivot_columns_.size(); ++i)
    if (const std::uint64_t factor = row[pivot_columns_[i]]; factor != 0) {
      factors.push_back(factor);
      parts.push_back(free_parts_[i].data());
      nonzeros.push_back(is_listed_[i] ? &nonzero_positions_[i] : nullptr);
      products += is_listed_[i] ? nonzero_positions_[i].size() : free_columns_.size();
    }
  ModularVector result(free_columns_.size());
  const auto base = [&](std::size_t q) { return row[free_columns_[q]]; };
  // Kept rows of a walk are sparse (a tenth nonzero on 2,15,15,15,1): then
  // only their nonzero products are summed, each into its entry's exact sum.
  // Dense ones go through the blocked sums (fewer loads per product).
  if (products * 4 < factors.size() * result.size())
    subtract_sparse_combination(factors, parts, nonzeros, result.size(), base, result.data(), prime_, prime_inverse_);
  else
    subtract_combination(factors, parts, result.size(), base, result.data(), prime_, prime_inverse_);
  return result;
}

bool ModularRowBasis::add_row(const ModularVector& row) {
  check_row(row, "ModularRowBasis::add_row");
  if (free_columns_.empty()) return false;
  ModularVector reduced = residual(row);
  // The pivot: the nonzero entry at the smallest column.
  std::size_t q = reduced.size();
  for (std::size_t k = 0; k < reduced.size(); ++k)
    if (reduced[k] != 0 && (q == reduced.size() || free_columns_[k] < free_columns_[q])) q = k;
  if (q == reduced.size()) return false;
  scale(reduced, n_invmod(reduced[q], prime_), prime_);
  // The new row's nonzero entries: kept rows are cleared at those only. A
  // walk's rows are sparse (on 2,15,15,15,1 a new row has about a tenth of
  // its entries nonzero), and clearing every entry was more than half of
  // add_row's time.
  std::vector<std::size_t> nonzero;
  for (std::size_t k = 0; k < reduced.size(); ++k)
    if (reduced[k] != 0) nonzero.push_back(k);
  // The screen follows (add_row_screened): kept row i loses part[q] times
  // the new row, so its product with c loses part[q] times the new row's.
  WideSum along_new;
  for (std::size_t k : nonzero) along_new.add(reduced[k], screen_random_[free_columns_[k]]);
  const std::uint64_t new_along = along_new.reduce(prime_, prime_inverse_);
  // Clear the new pivot column from the kept rows, then drop it from the
  // free columns of every stored row.
  // Each kept row's list of nonzero positions follows: rewritten for a row
  // cleared here; for the others only the last entry moves (to q, where they
  // are zero).
  // A dense row (rows of random entries, not a walk's) is cleared entry by
  // entry, and a dense kept row has no list to follow.
  const std::size_t last = reduced.size() - 1;
  const bool is_dense = nonzero.size() * 2 > reduced.size();
  std::vector<char> in_new(reduced.size(), 0);  // the new row's nonzero positions
  for (std::size_t k : nonzero) in_new[k] = 1;
  for (std::size_t i = 0; i < free_parts_.size(); ++i) {
    ModularVector& part = free_parts_[i];
    std::vector<std::size_t>& positions = nonzero_positions_[i];
    if (part[q] != 0) {
      const std::uint64_t lost = n_mulmod2_preinv(part[q], new_along, prime_, prime_inverse_);
      screen_along_[i] = n_submod(screen_along_[i], lost, prime_);
      if (is_dense)
        subtract_multiple(part, reduced, part[q], prime_);  // part[q] is now 0
      else
        subtract_multiple_at(part, reduced, nonzero, part[q], prime_);
      if (!is_listed_[i]) {
        drop_entry(part, q);
        continue;
      }
      // Its nonzeros: those outside the new row's (unchanged), then those of
      // the new row's positions that are nonzero now.
      // Branch-free: either outcome is common.
      std::size_t count = 0;
      for (std::size_t position : positions) {
        positions[count] = position;
        count += static_cast<std::size_t>(in_new[position] == 0);
      }
      positions.resize(count + nonzero.size());
      for (std::size_t k : nonzero) {
        positions[count] = k;
        count += static_cast<std::size_t>(part[k] != 0);
      }
      positions.resize(count);
      if (count * 2 > part.size()) {  // dense now: no longer listed
        positions.clear();
        is_listed_[i] = 0;
      }
    }
    if (is_listed_[i] && q != last && part[last] != 0) *std::find(positions.begin(), positions.end(), last) = q;
    drop_entry(part, q);
  }
  // The new row is 0 at its pivot in the free part it keeps: minus c there.
  screen_along_.push_back(n_submod(new_along, screen_random_[free_columns_[q]], prime_));
  pivot_columns_.push_back(free_columns_[q]);
  drop_entry(free_columns_, q);
  drop_entry(reduced, q);
  nonzero_positions_.emplace_back();
  is_listed_.push_back(list_nonzeros(reduced, nonzero_positions_.back()) ? 1 : 0);
  free_parts_.push_back(std::move(reduced));
  write_screen_at_pivots();
  return true;
}

// w . row with w = c at the free columns and -(kept row i . c) at pivot i:
// w . (kept row i) = -(row i . c) + (row i . c) = 0, so w is orthogonal to
// the span and w . row != 0 proves row outside it. For row outside it, w .
// row = c . (row's residual on the free columns), a nonzero linear form in
// the random c: zero with probability 1/p. w is kept written out (screen_),
// so the screen is one contiguous product: it was two gathers through the
// column lists, 17% of the walk's reduction (the serial stage of a 2-thread
// certify) on 2,15,15,15,1.
bool ModularRowBasis::passes_screen(std::span<const std::uint64_t> row) const {
  if (row.size() != columns_)
    throw usage_error("ModularRowBasis::passes_screen: the row has " + std::to_string(row.size()) +
                      " entries, the basis " + std::to_string(columns_) + " columns");
  WideSum sum;
  for (std::size_t column = 0; column < columns_; ++column) sum.add(screen_[column], row[column]);
  return sum.reduce(prime_, prime_inverse_) != 0;
}

bool ModularRowBasis::add_row_screened(const ModularVector& row) {
  return !free_columns_.empty() && passes_screen(row) && add_row(row);
}

namespace {

// body(0), ..., body(count - 1): through parallel when given, else in order.
void for_each_index(const ModularRowBasis::ParallelFor& parallel, std::size_t count,
                    const std::function<void(std::size_t)>& body) {
  if (parallel && count > 1) {
    parallel(count, body);
  } else {
    for (std::size_t i = 0; i < count; ++i) body(i);
  }
}

// v -= sum_j v[pivots[j]] * block[j] (mod p), one exact sum per entry: clears
// v at the block's pivot positions, since block row j is 1 at pivots[j] and 0
// at the others'.
void clear_at_pivots(ModularVector& v, const std::vector<ModularVector>& block, const std::vector<std::size_t>& pivots,
                     std::uint64_t prime, std::uint64_t prime_inverse) {
  std::vector<std::uint64_t> factors;
  std::vector<const std::uint64_t*> parts;
  for (std::size_t j = 0; j < block.size(); ++j)
    if (const std::uint64_t factor = v[pivots[j]]; factor != 0) {
      factors.push_back(factor);
      parts.push_back(block[j].data());
    }
  if (!factors.empty())
    subtract_combination(
        factors, parts, v.size(), [&](std::size_t q) { return v[q]; }, v.data(), prime, prime_inverse);
}

}  // namespace

std::size_t ModularRowBasis::add_rows(const std::vector<ModularVector>& rows, std::size_t rank_limit,
                                      std::vector<bool>& kept, const ParallelFor& parallel, const StopRequest* stop) {
  kept.assign(rows.size(), false);
  // Rows go in chunks. A chunk's residuals against the kept rows are
  // independent of each other (computed in parallel); then, in order, each is
  // reduced against the chunk's rows kept so far (the block: in reduced
  // echelon form among themselves, 0 at every older pivot) and kept when not
  // zero. The older kept rows are cleared at the block's pivots once, at the
  // chunk's end (fold_block). A row's reduction modulo the span is unique, so
  // this keeps exactly the rows, pivots and echelon form add_row would.
  constexpr std::size_t kChunk = 48;
  const std::size_t limit = std::min(rank_limit, columns_);
  std::size_t considered = 0;
  std::vector<ModularVector> block;
  std::vector<std::size_t> block_pivots;  // positions in free_columns_
  while (considered < rows.size() && rank() < limit && !(stop && stop->is_requested())) {
    const std::size_t start = considered, end = std::min(rows.size(), start + kChunk);
    for (std::size_t k = start; k < end; ++k) check_row(rows[k], "ModularRowBasis::add_rows");
    std::vector<ModularVector> reduced(end - start);
    for_each_index(parallel, end - start, [&](std::size_t i) { reduced[i] = residual(rows[start + i]); });
    for (; considered < end && rank() + block.size() < limit; ++considered) {
      ModularVector& row = reduced[considered - start];
      clear_at_pivots(row, block, block_pivots, prime_, prime_inverse_);  // against the block
      // The pivot: the nonzero entry at the smallest column.
      std::size_t q = row.size();
      for (std::size_t k = 0; k < row.size(); ++k)
        if (row[k] != 0 && (q == row.size() || free_columns_[k] < free_columns_[q])) q = k;
      if (q == row.size()) continue;
      scale(row, n_invmod(row[q], prime_), prime_);
      for (ModularVector& earlier : block)
        if (earlier[q] != 0) subtract_multiple(earlier, row, earlier[q], prime_);
      block.push_back(std::move(row));
      block_pivots.push_back(q);
      kept[considered] = true;
    }
    fold_block(block, block_pivots, parallel);
    block.clear();
    block_pivots.clear();
  }
  return considered;
}

void ModularRowBasis::fold_block(std::vector<ModularVector>& block, const std::vector<std::size_t>& block_pivots,
                                 const ParallelFor& parallel) {
  if (block.empty()) return;
  // Clear the block's pivot positions from every older kept row.
  for_each_index(parallel, free_parts_.size(), [&](std::size_t i) {
    clear_at_pivots(free_parts_[i], block, block_pivots, prime_, prime_inverse_);
  });
  for (std::size_t j = 0; j < block.size(); ++j) {
    pivot_columns_.push_back(free_columns_[block_pivots[j]]);
    free_parts_.push_back(std::move(block[j]));
  }
  // Drop the pivot positions, highest first, so that the entry drop_entry
  // moves into a dropped place is never one still to be dropped; then each
  // kept row's screen, its product with c on the free columns.
  std::vector<std::size_t> dropped = block_pivots;
  std::sort(dropped.begin(), dropped.end(), std::greater<>());
  for (std::size_t q : dropped) drop_entry(free_columns_, q);
  screen_along_.resize(free_parts_.size());
  nonzero_positions_.resize(free_parts_.size());
  is_listed_.resize(free_parts_.size());
  for_each_index(parallel, free_parts_.size(), [&](std::size_t i) {
    ModularVector& part = free_parts_[i];
    for (std::size_t q : dropped) drop_entry(part, q);
    is_listed_[i] = list_nonzeros(part, nonzero_positions_[i]) ? 1 : 0;
    WideSum along;
    for (std::size_t k = 0; k < free_columns_.size(); ++k) along.add(part[k], screen_random_[free_columns_[k]]);
    screen_along_[i] = along.reduce(prime_, prime_inverse_);
  });
  write_screen_at_pivots();
}

ModularMatrix ModularRowBasis::rows() const {
  ModularMatrix out(pivot_columns_.size(), columns_);
  for (std::size_t i = 0; i < pivot_columns_.size(); ++i) {
    out(i, pivot_columns_[i]) = 1;
    for (std::size_t q = 0; q < free_columns_.size(); ++q) out(i, free_columns_[q]) = free_parts_[i][q];
  }
  return out;
}

bool ModularRowBasis::contains(const ModularVector& row) const {
  check_row(row, "ModularRowBasis::contains");
  const ModularVector reduced = residual(row);
  return std::all_of(reduced.begin(), reduced.end(), [](std::uint64_t v) { return v == 0; });
}

}  // namespace pleat
