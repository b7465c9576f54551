// The extra kernel directions of certify's proof after the walk: read modulo
// the walk's prime off its row basis, lifted to Q, and proved exactly on every
// smooth region (enumerate/detail/kernel_check.hpp). Internal to enumerate/
// (not installed).
//
// The walk leaves a modular row basis (prime p) of every smooth region's
// coefficient-block rows, rank r. Its kernel mod p, reduced modulo the
// scaling directions S, is the image of the extra directions E (the canonical
// basis of kernel / span(S)). E is lifted to Q (rational reconstruction from p
// alone for rows with small entries, the others from square systems of their
// supports' size modulo further primes) and then proved: every row of E
// annihilates every smooth region's rows exactly, S does so by construction
// (core/jacobian.hpp), so rank <= D - rank(S u E); and rank >= r (the basis'
// nonsingular minor). Equal: certified.
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/jacobian.hpp"
#include "core/pattern.hpp"
#include "core/rank.hpp"
#include "core/stop.hpp"
#include "enumerate/detail/kernel_check.hpp"

#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <utility>
#include <vector>

namespace pleat::detail {

// Which rows of which region rose the walk's rank: stacked in this order
// they are r rows whose images modulo the walk's prime are independent.
struct KeptRows {
  ActivationPattern pattern;
  std::vector<std::size_t> rows;
  // Those rows modulo the walk's prime (one per entry of rows, D residues
  // each) when the walk kept them, else empty: the lift then reads them here
  // instead of computing the region's rows again.
  std::vector<ModularVector> residues;
};

// The extra directions E modulo p: the canonical basis (reduced row-echelon,
// leading 1s) of the kernel vectors of `rows` that vanish at the columns
// scaling_pivots (Q, the pivot columns of the scaling directions' echelon
// form), a complement of the scaling directions in the kernel. Computed as
// the kernel of the rows without the columns Q, put back with zeros at Q:
// one elimination of rank x (D - |Q|).
ModularMatrix extra_directions_of_rows(const ModularMatrix& rows, const std::vector<std::size_t>& scaling_pivots,
                                       std::uint64_t prime);

// The same from the walk's basis itself (rows 1 at their pivot, 0 at the
// other pivots), cheaper when the kernel is smaller than the rank: its
// kernel read off directly (D - r vectors), put in reduced row-echelon form
// with the columns Q first; the rows led outside Q are E. Equal to
// extra_directions_of_rows(basis.rows(), ...), kept by nonzero entries. Its
// products and eliminations by nonzero entries (the sparse functions below).
SparseModularRows extra_directions_of_basis(const ModularRowBasis& basis,
                                            const std::vector<std::size_t>& scaling_pivots);

// The reduced row-echelon form modulo prime of rows (each `cols` residues)
// and the canonical basis of their kernel: the same matrices as
// row_space_basis_modulo and kernel_basis_modulo (both are unique), by
// Gauss-Jordan elimination that reads a pivot row at its nonzero entries
// only and skips rows that are zero at its column: the echelon form on the
// rows' nonzero entries alone (as the read-off reduces W), the kernel on one
// dense matrix reduced in place (as the read-off reduces its conditions).
// For the read-off's mostly-zero matrices, where FLINT's elimination costs
// their full size.
ModularMatrix reduced_echelon_of_sparse_rows(std::vector<ModularVector> rows, std::size_t cols, std::uint64_t prime);
ModularMatrix kernel_of_sparse_rows(const std::vector<ModularVector>& rows, std::size_t cols, std::uint64_t prime);

// The leading column of each row of an echelon matrix (its shape).
std::vector<std::size_t> echelon_shape(const ModularMatrix& echelon);

// Decides a candidate E on every smooth region elsewhere (across processes:
// enumerate/distributed_certify.hpp): true when proved; sets stopped when
// a stop cut it short.
using CandidateProof = std::function<bool(const RationalMatrix& candidate, bool& stopped)>;

// How far the lift of the extra directions got, for progress: 0 the walk's
// prime alone, 1 further primes (rows with large entries), 2 the exact
// p-adic solve (when the check rejected the first candidate).
using LiftProgress = std::function<void(std::size_t)>;

// Lifts E from its image modulo the walk's prime (first_image, from
// extra_directions_of_rows of the walk's basis; walk_network is theta modulo
// that prime) and proves it. Each row with small entries by rational
// reconstruction from that prime alone; each other row by itself, over
// further primes: its support S read modulo the walk's prime, |S| kept rows
// independent there on S, that square system read modulo further primes
// (the kept regions' blocks in word arithmetic), Chinese remaindered to
// integers and solved exactly (lift_rows_multimodular with the check's
// scale). The candidate is returned only once the check has proved it on
// every pattern of `smooth`; when the check
// rejects it, every row from one exact p-adic solve (solve_extra_directions)
// and that is checked the same way. Returns nullopt when stopped (stopped is
// set) or when nothing is proved (the walk's prime hid a row: bounds only).
// The result (E's rows by their nonzero entries) is the same for any thread
// count (E is unique: identity on L, zero on Q). lift_progress: 1 when
// further primes start, 2 for the exact solve. prove_elsewhere, when given,
// decides each candidate (as a dense matrix) instead of the check on
// `smooth` here. ready, when given, holds what was built from `smooth`
// already (proof_start.hpp); what it lacks is built here when needed.
struct SmoothFacts;
std::optional<SparseRationalRows> lift_and_prove_extra_directions(
    const Network& network, const ModularNetwork& walk_network, const std::vector<std::size_t>& scaling_pivots,
    const std::vector<KeptRows>& kept, std::size_t rank, const SparseModularRows& first_image,
    const std::vector<ActivationPattern>& smooth, const CheckScale& check_scale, unsigned threads,
    const StopRequest& stop, bool& stopped, const LiftProgress& lift_progress,
    const std::function<void(std::size_t, std::size_t)>& check_progress, const CandidateProof& prove_elsewhere = {},
    const SmoothFacts* ready = nullptr);

// The kept rows over Q: r x D, in the walk's order (each kept region's
// exact blocks, computed on up to `threads` threads). Exact.
RationalMatrix exact_kept_rows(const Network& network, const std::vector<KeptRows>& kept, std::size_t rank,
                               unsigned threads);

// Rows `wanted` (indices into L) of the candidate E over Q, in that order,
// from the exact kept rows K (r x D): with L the leading columns of the
// image of E modulo the walk's prime and N the columns outside Q and L (r of
// them when the shapes agree), K[:, N] is nonsingular modulo that prime,
// hence over Q, and the kernel vector with 1 at L_j, 0 at the rest of L and
// at Q has v_N = -K[:, N]^-1 K[:, L_j]. One exact solve of the square system
// for every wanted j at once (FLINT's Dixon p-adic lifting: one inverse
// modulo a prime, then lifting with an adaptive stop by rational
// reconstruction; a zero right-hand side needs no solve). nullopt when the
// shapes disagree or the system is singular. Not proved here: the caller
// checks it on every region.
std::optional<RationalMatrix> solve_extra_directions(const RationalMatrix& rows,
                                                     const std::vector<std::size_t>& scaling_pivots,
                                                     const std::vector<std::size_t>& leading,
                                                     const std::vector<std::size_t>& wanted);

// Rows `rows` of E (indices into the image's rows, each with a large entry)
// lifted over primes other than the walk's: a row whose support S (read
// modulo the walk's prime) has at most sparse_limit columns alone, from |S|
// kept rows independent on S; the others together on the union of their
// supports (all rows together when the sparse systems would cost more than
// half an r x r solve). Each group's square system is solved modulo every
// further prime (the kept regions its equations come from, in word
// arithmetic), Chinese remaindered and reconstructed, until two
// reconstructions in a row agree. The rows in the order given, or nullopt
// (no independent equations modulo the walk's prime, or no agreement within
// 4096 primes). Not proved. With check_scale, no reconstruction: once the
// further primes' product exceeds twice every scaled entry's bound
// (2 L^(d-1) max B_c: the kept rows' scaled entries are then exact integers
// by Chinese remaindering) every group is solved exactly instead (p-adic
// lifting, padic_solve.hpp), each group on its own thread; nullopt when one
// such system is singular over Q. The rows (their nonzero entries, columns increasing) in
// the order given, the same for any thread count.
std::optional<std::vector<SparseRationalRows::Row>> lift_rows_multimodular(
    const Network& network, const ModularNetwork& walk_network, const std::vector<KeptRows>& kept, std::size_t rank,
    const SparseModularRows& image, const std::vector<std::size_t>& rows, const std::vector<std::size_t>& leading,
    std::size_t sparse_limit, unsigned threads, const CheckScale* check_scale = nullptr);

// The fraction n / d with |n| <= 2^24, 0 < d <= 2^24 and gcd(n, d) = 1
// that is `residue` modulo `prime` (prime > 2^49: there is at most one), or
// nullopt: what FLINT's fmpq_reconstruct_fmpz_2 gives with those bounds, in
// word arithmetic (it took a multi-precision path per entry of E modulo the
// walk's prime). Exact.
std::optional<std::pair<std::int64_t, std::uint64_t>> small_fraction_modulo(std::uint64_t residue,
                                                                            std::uint64_t prime);

// Whether E vanishes at the columns Q and is in reduced row-echelon form
// with leading 1s: then S u E is independent whenever S restricted to Q is
// nonsingular. Exact.
bool is_echelon_off(const SparseRationalRows& extra, const std::vector<std::size_t>& columns);

}  // namespace pleat::detail
