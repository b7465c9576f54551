// Exact and modular rank, and exact kernels, of rational matrices (the
// functional dimension's arithmetic). Functions on RationalMatrix are exact;
// everything modulo a prime is a lower bound of the rational rank only.
//
// Why a rank modulo p is a lower bound: a rational matrix whose entries have
// denominators prime to p maps entrywise into Z/p by a ring homomorphism, so
// every minor maps to the same minor of the reduced matrix. A minor that is
// zero over Q stays zero mod p; a minor that is nonzero mod p was nonzero over
// Q. Hence rank_p(M mod p) <= rank_Q(M), and the r accepted rows of a
// ModularRowBasis, restricted to its pivot columns, are an r x r minor that is
// nonsingular mod p and therefore over Q (the design's lower-bound certificate).
#pragma once

#include "core/matrix.hpp"
#include "core/rational.hpp"
#include "core/stop.hpp"

#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <span>
#include <vector>

namespace pleat {

// Rows of residues in [0, p): the modular image of a rational matrix.
using ModularMatrix = Matrix<std::uint64_t>;
using ModularVector = std::vector<std::uint64_t>;

// ---- Exact rank and kernel --------------------------------------------------

// The rank of M over Q. Exact. An empty matrix has rank 0. Rows are scaled
// to primitive integer vectors; a rank modulo a word prime that reaches
// min(rows, cols) is returned at once (it is a lower bound); otherwise FLINT's
// fmpz_mat_rank (up to 48 columns) or cols minus the size of the proven
// kernel_basis_exact decides.
std::size_t rank_exact(const RationalMatrix& matrix);

// Plain Gaussian elimination over GMP rationals. Slow and simple: kept only
// as a test oracle for rank_exact. Exact.
std::size_t rank_by_gauss_naive(const RationalMatrix& matrix);

// The canonical basis of the right kernel {v in Q^cols : M v = 0}: the unique
// reduced row-echelon form (columns in the matrix's column order, i.e. the
// parameter order for Jacobian rows) of any matrix whose rows span the kernel.
// Each row's leading entry is 1 and is the only nonzero entry of its column;
// leading columns increase down the rows. Two runs, or two generating sets of
// the same row space, give the identical matrix. Result: (cols - rank) x cols
// (0 x cols when the kernel is trivial). Exact.
// How: the kernel's leading columns and M's rank modulo a word prime, then
// one exact square solve (FLINT, Dixon lifting) for the other columns; the
// result is proven exactly (every row annihilates M, and rank mod p bounds
// the kernel's dimension from above; see rank.cpp). When the proof fails (an
// unlucky prime) it falls back to kernel_basis_by_rational_elimination.
RationalMatrix kernel_basis_exact(const RationalMatrix& matrix);

// The same canonical basis by exact rational elimination (FLINT fmpq_mat_rref
// on M, then on the kernel basis read off it). Slow when entries are large:
// kept as kernel_basis_exact's fallback and as its test oracle. Exact.
RationalMatrix kernel_basis_by_rational_elimination(const RationalMatrix& matrix);

// The reduced row-echelon form of M with the zero rows removed: the
// canonical basis of M's row space. Exact.
RationalMatrix row_space_basis_exact(const RationalMatrix& matrix);

// ---- Primes and reduction modulo p ------------------------------------------

// Fixed word-size primes: the walker's accumulator prime (the first prime
// above 2^62 - 2^32, so below 2^62) and a different screening prime (the
// first prime above 2^61 - 2^32).
// Any prime below 2^63 works with every function here.
std::uint64_t primary_prime();
std::uint64_t screening_prime();
// The smallest prime > after (for retrying when a denominator is divisible by
// the prime in use). Precondition: after < 2^63 (throws usage_error).
std::uint64_t next_prime_after(std::uint64_t after);

// value mod p as a residue in [0, p), or nullopt when p divides the
// denominator. Precondition: p is a prime >= 2 (not checked beyond p >= 2).
std::optional<std::uint64_t> reduce_modulo(const Rational& value, std::uint64_t prime);

// M mod p entrywise, or nullopt when p divides some denominator.
std::optional<ModularMatrix> reduce_modulo(const RationalMatrix& matrix, std::uint64_t prime);
// v mod p entrywise, or nullopt when p divides some denominator.
std::optional<ModularVector> reduce_modulo(const RationalVector& values, std::uint64_t prime);

// The rank of M mod p (FLINT nmod_mat_rank). A lower bound of the rank over Q
// of any rational matrix that reduces to M (see the top of this header).
std::size_t rank_modulo(const ModularMatrix& matrix, std::uint64_t prime);

// ---- Kernels modulo p and rational reconstruction ---------------------------

// The reduced row-echelon form of M mod p (leading 1s) with its zero rows
// removed: the canonical basis of M's row space mod p. Precondition: entries
// are residues (throws usage_error).
ModularMatrix row_space_basis_modulo(const ModularMatrix& matrix, std::uint64_t prime);

// The canonical basis of {v : M v = 0 mod p}: its reduced row-echelon form
// (leading 1s, leading columns increasing), cols(M) - rank_p(M) rows, from
// one elimination of M with its columns reversed. Same precondition.
ModularMatrix kernel_basis_modulo(const ModularMatrix& matrix, std::uint64_t prime);

// A rational matrix of a fixed shape recovered from its images modulo
// distinct primes: Chinese remaindering of the images, then rational
// reconstruction of each entry (numerator and denominator up to
// sqrt(product / 2)). Nothing here is proved: a reconstruction is a
// candidate the caller must verify exactly.
class RationalReconstruction {
 public:
  RationalReconstruction(std::size_t rows, std::size_t cols);
  ~RationalReconstruction();
  RationalReconstruction(const RationalReconstruction&) = delete;
  RationalReconstruction& operator=(const RationalReconstruction&) = delete;

  // Adds the image modulo a prime not used before (coprime to the others).
  // Precondition: image has the shape given at construction (usage_error).
  void add_image(const ModularMatrix& image, std::uint64_t prime);
  // The candidate, or nullopt when some entry has no reconstruction yet
  // (more primes needed).
  std::optional<RationalMatrix> reconstruct() const;
  std::size_t primes() const { return primes_; }
  std::size_t rows() const { return rows_; }
  std::size_t cols() const { return cols_; }

 private:
  struct State;
  std::size_t rows_, cols_, primes_ = 0;
  State* state_;
};

// Word-size primes below 2^62, decreasing from the primary prime's
// neighbourhood, for multi-modular work: prime_sequence(i) is the i-th of a
// fixed list (the same on every run), never equal to primary_prime() or
// screening_prime().
std::uint64_t prime_sequence(std::size_t index);

// ---- Incremental modular row basis ------------------------------------------

// The walker's lower-bound accumulator: the reduced row-echelon basis modulo a
// prime of the rows added so far. Each kept row is 1 at its pivot column and
// 0 at every other kept row's pivot, so only its entries at the free
// (non-pivot) columns are stored. Testing a row then costs at most rank x
// (columns - rank) multiply-adds (cheap near full rank, where most rows of a
// walk are dependent); keeping one costs the same again. Both skip zeros: a
// residual sums only the kept rows' nonzero products (each row's nonzero
// positions are kept listed) when they are sparse, and a new row is cleared
// from the kept rows at its own nonzero entries only. The rows of a walk
// are (a tenth of a kept row's entries nonzero on 2,15,15,15,1).
// rank() is the rank mod p of all rows ever added: a lower bound of their
// rank over Q when they are images of rational rows (top of this header).
class ModularRowBasis {
 public:
  // Precondition: prime is a prime in [2, 2^63) (throws usage_error if < 2
  // or too large; primality is not checked).
  ModularRowBasis(std::uint64_t prime, std::size_t columns);

  // Reduces row (residues in [0, p), size columns()) against the basis; keeps
  // it when independent. Returns true exactly when the rank rose.
  // Precondition: row.size() == columns() and every entry < p (throws
  // usage_error).
  bool add_row(const ModularVector& row);

  // add_row that first screens row in `columns` multiply-adds: its product
  // with a random vector w orthogonal mod p to every kept row. Nonzero proves
  // row independent (then add_row keeps it); zero skips it as dependent,
  // which is wrong for an independent row only when w happens to be
  // orthogonal to its residual too: probability 1/p over w (drawn once from
  // a fixed seed, so runs repeat exactly). A miss never makes rank() wrong as
  // a lower bound (every kept row is independent), only possibly lower than
  // the rank of all rows added. Cheap when most rows are dependent (a stalled
  // walk: add_row costs rank x (columns - rank) for each). Same precondition
  // as add_row, except that a skipped row's entries are not checked.
  bool add_row_screened(const ModularVector& row);

  // Runs body(0), ..., body(count - 1), possibly on several threads at once
  // (add_rows' bodies touch disjoint data); returns when all have run.
  using ParallelFor = std::function<void(std::size_t count, const std::function<void(std::size_t)>& body)>;

  // add_row on each of rows in order, until rank() reaches rank_limit;
  // kept[k] is set exactly when rows[k] raised the rank, and the rows
  // considered are returned (those after are untouched). The basis ends as
  // add_row one by one would leave it, but the rows' residuals are computed
  // a chunk at a time, and the new pivots cleared from the earlier kept rows
  // once per chunk with one exact sum per entry, both through parallel when
  // given (cheaper when most rows are independent, as from scattered points).
  // stop, when given, is polled before each chunk: once requested, the rows
  // considered so far are returned (a batch of thousands of long rows took
  // up to a second past a time limit). Same precondition as add_row for
  // every row considered.
  std::size_t add_rows(const std::vector<ModularVector>& rows, std::size_t rank_limit, std::vector<bool>& kept,
                       const ParallelFor& parallel = {}, const StopRequest* stop = nullptr);

  // The screen alone: false when w . row == 0 (row in the span, or the 1/p
  // miss above), true when row is certainly outside the span. Same
  // precondition as add_row (throws usage_error on a wrong length only).
  // Takes a row in place (a matrix's row: no copy; a ModularVector converts).
  bool passes_screen(std::span<const std::uint64_t> row) const;

  // True when row lies in the span mod p of the kept rows (the basis is not
  // changed). Same precondition as add_row.
  bool contains(const ModularVector& row) const;

  std::size_t rank() const { return pivot_columns_.size(); }
  std::size_t columns() const { return columns_; }
  std::uint64_t prime() const { return prime_; }
  // Pivot column of each kept row, in the order the rows were kept. The
  // original rows that add_row kept, restricted to these columns, form an
  // r x r minor that is nonsingular mod p (hence over Q): the certificate
  // behind rank().
  const std::vector<std::size_t>& pivot_columns() const { return pivot_columns_; }
  // rank() x columns() rows spanning the same space mod p as every row added
  // (the stored echelon form: 1 at its pivot, 0 at the other pivots).
  ModularMatrix rows() const;
  // The same rows without writing them out: the columns outside the pivots
  // (in no particular order) and kept row i at those columns.
  const std::vector<std::size_t>& free_columns() const { return free_columns_; }
  const ModularVector& free_part(std::size_t i) const { return free_parts_[i]; }
  // The positions in free_part(i) of all its nonzero entries, in no
  // particular order, when the row is listed (sparse: at most half nonzero
  // when last listed), else nullptr: read only those, not the whole part.
  const std::vector<std::size_t>* nonzero_positions(std::size_t i) const {
    return is_listed_[i] != 0 ? &nonzero_positions_[i] : nullptr;
  }

 private:
  // row minus its projection on the kept rows, on free_columns_ only (zero
  // exactly when row is in the span).
  ModularVector residual(const ModularVector& row) const;
  // add_rows' block (its rows kept since the last fold, and their pivot
  // positions in free_columns_) made kept rows; block is moved from.
  void fold_block(std::vector<ModularVector>& block, const std::vector<std::size_t>& block_pivots,
                  const ParallelFor& parallel);
  void check_row(const ModularVector& row, const char* where) const;
  void write_screen_at_pivots();

  std::uint64_t prime_;
  std::uint64_t prime_inverse_;          // FLINT's n_preinvert_limb(prime)
  std::size_t columns_;
  std::vector<std::size_t> pivot_columns_;
  std::vector<std::size_t> free_columns_;   // in no particular order
  std::vector<ModularVector> free_parts_;   // kept row i at free_columns_
  // The positions of kept row i's nonzero entries in free_parts_[i]
  // (residual sums only those products when the rows are sparse).
  // Only while at most half of them are nonzero: is_listed_[i] is 0
  // for a dense row (its list empty; residual then reads all of it).
  std::vector<std::vector<std::size_t>> nonzero_positions_;
  std::vector<char> is_listed_;
  // The screen w of add_row_screened: random c at the free columns and
  // -screen_along_[i] = -(kept row i . c) at kept row i's pivot.
  ModularVector screen_random_;             // c, one per column (fixed seed)
  ModularVector screen_along_;              // kept row i . c, mod p
  ModularVector screen_;                    // w itself, one per column: c, or -screen_along_[i] at pivot i
};

}  // namespace pleat
