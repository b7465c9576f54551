// The extra directions' lift and proof, step by step
// (lift_and_prove_extra_directions, declared in kernel_lift.hpp): small rows
// from the walk's prime alone, rows that follow from neurons on in every
// region, the other rows over further primes (lift_rows_multimodular), the
// check on every region, and the exact solve when the check rejects.
#include "enumerate/detail/kernel_lift.hpp"

#include "enumerate/detail/always_active_rows.hpp"
#include "enumerate/detail/parallel_for.hpp"
#include "enumerate/detail/proof_start.hpp"

#include <algorithm>
#include <cstdint>
#include <numeric>
#include <optional>
#include <utility>
#include <vector>

namespace pleat::detail {

std::optional<std::pair<std::int64_t, std::uint64_t>> small_fraction_modulo(std::uint64_t residue,
                                                                            std::uint64_t prime) {
  // The extended Euclidean algorithm on (prime, residue) keeps r_i = t_i
  // residue modulo prime, |t_(i+1)| <= prime / r_i < 2^39 while r_i > 2^24;
  // the first r_i <= 2^24 with its t_i is the fraction when there is one
  // (rational reconstruction: with 2 N D = 2^49 < prime it is unique).
  constexpr std::uint64_t bound = std::uint64_t{1} << 24;
  std::uint64_t r0 = prime, r1 = residue % prime;
  std::int64_t t0 = 0, t1 = 1;
  while (r1 > bound) {
    const std::uint64_t q = r0 / r1;
    const std::uint64_t r2 = r0 - q * r1;
    const std::int64_t t2 = t0 - static_cast<std::int64_t>(q) * t1;
    r0 = r1;
    r1 = r2;
    t0 = t1;
    t1 = t2;
  }
  const std::uint64_t d = t1 < 0 ? static_cast<std::uint64_t>(-t1) : static_cast<std::uint64_t>(t1);
  if (d == 0 || d > bound || std::gcd(r1, d) != 1) return std::nullopt;
  const auto n = static_cast<std::int64_t>(r1);
  return std::make_pair(t1 < 0 ? -n : n, d);
}

namespace {

using SparseRow = SparseRationalRows::Row;

// Rows of the image modulo p whose every entry is a fraction with numerator
// and denominator at most 2^24 in absolute value (small_fraction_modulo);
// nullopt for the others. A random residue passes that test with
// probability about 2^-14, so a row that passes by chance is rare, and the
// exact check catches it. Not proved. Rows on up to `threads` threads.
std::vector<std::optional<SparseRow>> small_rows_from_one_prime(const SparseModularRows& image, std::uint64_t prime,
                                                                unsigned threads) {
  std::vector<std::optional<SparseRow>> rows(image.rows.size());
  parallel_for(image.rows.size(), threads, [&](std::size_t r) {
    poll_stop();
    SparseRow row;
    for (const auto& [c, entry] : image.rows[r]) {
      const std::optional<std::pair<std::int64_t, std::uint64_t>> fraction = small_fraction_modulo(entry, prime);
      if (!fraction) return;
      Rational& value = row.emplace_back(c, Rational()).second;
      mpz_set_si(value.get_num_mpz_t(), fraction->first);
      mpz_set_ui(value.get_den_mpz_t(), fraction->second);  // in lowest terms, positive
    }
    rows[r] = std::move(row);
  });
  return rows;
}

// The rows worth sparing the check, costliest first: those with at least
// 8 entries, by entries times their largest entry's bits (the check's work
// grows with both: terms, and primes for their size).
std::vector<std::size_t> rows_by_check_cost(const SparseRationalRows& candidate) {
  std::vector<std::pair<std::size_t, std::size_t>> costs;  // (cost, row)
  for (std::size_t r = 0; r < candidate.rows.size(); ++r) {
    const SparseRow& row = candidate.rows[r];
    if (row.size() < 8) continue;
    std::size_t bits = 1;
    for (const auto& [c, value] : row)
      bits = std::max(bits, mpz_sizeinbase(value.get_num_mpz_t(), 2) + mpz_sizeinbase(value.get_den_mpz_t(), 2));
    costs.emplace_back(row.size() * bits, r);
  }
  std::sort(costs.begin(), costs.end(), [](const auto& a, const auto& b) { return a.first > b.first; });
  std::vector<std::size_t> rows;
  for (const auto& cost : costs) rows.push_back(cost.second);
  return rows;
}

}  // namespace

std::optional<SparseRationalRows> lift_and_prove_extra_directions(
    const Network& network, const ModularNetwork& walk_network, const std::vector<std::size_t>& scaling_pivots,
    const std::vector<KeptRows>& kept, std::size_t rank, const SparseModularRows& first_image,
    const std::vector<ActivationPattern>& smooth, const CheckScale& check_scale, unsigned threads,
    const StopRequest& stop, bool& stopped, const LiftProgress& lift_progress,
    const std::function<void(std::size_t, std::size_t)>& check_progress, const CandidateProof& prove_elsewhere,
    const SmoothFacts* ready) {
  // The generators of the neurons on in every region, once (when needed).
  std::optional<AlwaysActiveGenerators> always_active;
  auto generators = [&]() -> const AlwaysActiveGenerators& {
    if (ready && ready->generators) return *ready->generators;
    if (!always_active) always_active.emplace(network, smooth);
    return *always_active;
  };
  // The live terms' bitsets, once: built beside the read-off (ready), or
  // here at the first check; their neurons' bits serve the check's live
  // vectors too (neuron_on_bits).
  std::optional<LiveTerms> own_live_terms;
  auto live_terms = [&]() -> const LiveTerms& {
    if (ready && ready->live_terms) return *ready->live_terms;
    if (!own_live_terms) own_live_terms.emplace(network, smooth);
    return *own_live_terms;
  };
  // filled: the rows B the plan set (AlwaysActivePlan::fill) in this
  // candidate, else nullptr.
  auto is_proved = [&](const SparseRationalRows& candidate, const std::vector<std::size_t>* filled) {
    if (prove_elsewhere) return prove_elsewhere(candidate.dense(), stopped) && !stopped;
    // Rows proved from neurons on in every region, given the others: only
    // the others are checked region by region. The plan's rows are such
    // rows by construction: fill set E_s = sum_t C_B^-1[s, t] (g'_t - sum
    // over j outside B of C[t, j] E_j), exactly, with each g'_t a generator
    // less its scaling part (annihilating every region) and every E_j a row
    // of this candidate outside B: E_s annihilates every region where
    // those rows do, and they are all checked (or have no term on any
    // region). So B is spared without verifying the generators' identities
    // (rows_proved_by_always_active: 0.3 ms on 2,15,15,15,15,1 seed 1,
    // where it spared the same 10 rows; on the other benchmark networks
    // with filled rows it spared as many as there were, or none where they
    // had fewer than 8 entries and were not offered to it).
    std::vector<char> spared(candidate.rows.size(), 0);
    if (filled && !filled->empty()) {
      for (std::size_t b : *filled) spared[b] = 1;
    } else if (const std::vector<std::size_t> heavy = rows_by_check_cost(candidate); !heavy.empty()) {
      spared = rows_proved_by_always_active(generators(), candidate, heavy);
    }
    // Rows with no term on any region: 0 on every region's rows term by term.
    const std::vector<char> live = live_terms().of(candidate);
    SparseRationalRows checked{candidate.cols, {}};
    for (std::size_t r = 0; r < candidate.rows.size(); ++r)
      if (!spared[r] && live[r]) checked.rows.push_back(candidate.rows[r]);
    const AnnihilationCheck check(network, checked, check_scale, threads);
    const std::vector<std::size_t>* order = ready && ready->check_order ? &*ready->check_order : nullptr;
    return !first_rejected_pattern(check, smooth, threads, stop, stopped, check_progress, order,
                                   &live_terms().on_bits()) &&
           !stopped;
  };
  const std::vector<std::size_t> leading = first_image.leading_columns();
  // Small rows from the walk's prime alone (most extra directions of a
  // random network: one parameter no region depends on, or a few short
  // fractions); the others lifted row by row over further primes.
  std::vector<std::optional<SparseRow>> candidate_rows =
      small_rows_from_one_prime(first_image, walk_network.prime, threads);
  std::vector<std::size_t> hard;
  for (std::size_t j = 0; j < candidate_rows.size(); ++j)
    if (!candidate_rows[j]) hard.push_back(j);
  // Hard rows that follow from neurons on in every region and the other
  // rows are computed from those after the lift, not lifted.
  const AlwaysActivePlan plan =
      prove_elsewhere || hard.empty() ? AlwaysActivePlan() : AlwaysActivePlan(generators(), first_image, hard);
  std::erase_if(hard, [&](std::size_t j) { return std::binary_search(plan.rows().begin(), plan.rows().end(), j); });
  std::optional<SparseRationalRows> candidate;
  if (!hard.empty()) {
    if (lift_progress) lift_progress(1);
    if (auto lifted =
            lift_rows_multimodular(network, walk_network, kept, rank, first_image, hard, leading, rank / 4, threads,
                                   &check_scale))
      for (std::size_t h = 0; h < hard.size(); ++h) candidate_rows[hard[h]] = std::move((*lifted)[h]);
  }
  const bool filled = plan.fill(candidate_rows);  // false: a row is missing, and the exact solve below decides
  if (std::all_of(candidate_rows.begin(), candidate_rows.end(), [](const auto& row) { return row.has_value(); })) {
    candidate = SparseRationalRows{first_image.cols, {}};
    candidate->rows.reserve(candidate_rows.size());
    for (std::optional<SparseRow>& row : candidate_rows) candidate->rows.push_back(std::move(*row));
    if (is_proved(*candidate, filled ? &plan.rows() : nullptr)) return candidate;
    if (stopped || stop.is_requested()) {
      stopped = true;
      return std::nullopt;
    }
  }
  // A row read off p alone was wrong (a residue that looked small, an entry
  // divisible by p, an early stop too early): every row from one exact solve.
  if (lift_progress) lift_progress(2);
  std::vector<std::size_t> all(first_image.rows.size());
  for (std::size_t j = 0; j < all.size(); ++j) all[j] = j;
  const std::optional<RationalMatrix> solved =
      solve_extra_directions(exact_kept_rows(network, kept, rank, threads), scaling_pivots, leading, all);
  if (!solved) return std::nullopt;
  SparseRationalRows exact = SparseRationalRows::from_dense(*solved);
  if (exact == candidate) return std::nullopt;
  if (is_proved(exact, nullptr)) return exact;
  return std::nullopt;
}

}  // namespace pleat::detail
