// The lift of the extra directions' hard rows over further primes
// (lift_rows_multimodular, declared in kernel_lift.hpp): their groups,
// equations and exact solves.
#include "enumerate/detail/kernel_lift.hpp"

#include "core/detail/flint_matrix.hpp"
#include "core/jacobian.hpp"
#include "enumerate/detail/padic_solve.hpp"
#include "enumerate/detail/parallel_for.hpp"

#include <flint/fmpz.h>
#include <flint/nmod_mat.h>
#include <flint/ulong_extras.h>

#include <algorithm>
#include <cmath>
#include <iterator>
#include <memory>
#include <optional>
#include <utility>

namespace pleat::detail {
namespace {

__extension__ typedef unsigned __int128 Wide;

using SparseRow = SparseRationalRows::Row;

// The columns of row j of the image outside its leading column that are
// nonzero modulo p: the support of E's row j over Q unless p divides one of
// its entries (the exact check would then reject the row solved on it).
std::vector<std::size_t> support_beyond_lead(const SparseModularRows& image, std::size_t j, std::size_t lead) {
  std::vector<std::size_t> support;
  for (const auto& [c, value] : image.rows[j])
    if (c != lead) support.push_back(c);
  return support;
}

// Hard rows of E lifted together (one row alone when sparse): the union U
// of their supports read modulo the walk's prime (each row is 0 at the other
// rows' leading columns), |U| kept rows independent modulo that prime on U,
// and the images of the rows' entries on U modulo each further prime used.
// The square system on U has one solution per row, and the true row (zero
// off its support) is it.
struct RowLift {
  std::vector<std::size_t> rows, leads;
  std::vector<std::size_t> support;
  std::vector<std::size_t> equations;  // indices into the kept rows
  std::unique_ptr<RationalReconstruction> images;  // rows x |U|
  std::optional<RationalMatrix> last;  // the previous reconstruction
  bool is_stable = false;
  // The square system [K_U | K_L] (|U| x (|U| + leads)) modulo each of the
  // first further primes, for the exact solve once those suffice.
  std::vector<ModularMatrix> systems;
  std::vector<std::uint64_t> system_primes;
};

// The kept rows modulo a prime at some columns only, r x (those columns):
// entry (r, c) is values(r, place[c]). Not r x D: that buffer, zeroed and
// mostly unused, cost as much as filling it (3 MB per prime on
// 2,15,15,15,15,1).
// Or the walk's own residues of the kept rows (D each), read in place.
struct KeptRowsAt {
  // rank rows of zeros at the columns `wanted` marks.
  KeptRowsAt(std::size_t rank, const std::vector<char>& wanted) : place(wanted.size(), 0) {
    std::size_t count = 0;
    for (std::size_t c = 0; c < wanted.size(); ++c)
      if (wanted[c]) place[c] = count++;
    values = ModularMatrix(rank, count);
  }
  // The walk's residues of every kept row, in place.
  explicit KeptRowsAt(const std::vector<KeptRows>& kept) {
    for (const KeptRows& region : kept)
      for (const ModularVector& residues : region.residues) full.push_back(residues.data());
  }
  ModularMatrix values;
  std::vector<std::size_t> place;  // of each wanted column among the wanted ones
  std::vector<const std::uint64_t*> full;  // the walk's residues, when read in place (values then empty)
  // Of each kept row among values' rows when only some were computed (the
  // others are not there to read), else empty (every row, in order).
  std::vector<std::size_t> row_place;
  std::size_t rows() const { return !full.empty() ? full.size() : row_place.empty() ? values.rows() : row_place.size(); }
  std::uint64_t at(std::size_t r, std::size_t c) const {
    return !full.empty() ? full[r][c] : values(row_place.empty() ? r : row_place[r], place[c]);
  }
};

// The kept rows modulo the network's prime at the columns `columns_needed`
// marks, only those of the regions with a row that `needed` marks (when
// given; the others are not computed, nor given room: late primes need few
// regions, and rank rows zeroed for each prime were fresh memory), from the
// layer inputs and signals those columns need (coefficient_rows_at); the
// regions on up to `threads` threads (each writes its own rows).
KeptRowsAt kept_rows_modulo(const ModularNetwork& network, const std::vector<KeptRows>& kept, std::size_t rank,
                            unsigned threads, const std::vector<char>* needed, const std::vector<char>& columns_needed) {
  std::vector<std::size_t> first_row(kept.size());  // of each needed region in out
  std::vector<std::size_t> regions;                  // the needed ones
  std::vector<std::size_t> row_place(needed ? rank : 0, rank);
  std::size_t r = 0, computed = 0;
  for (std::size_t k = 0; k < kept.size(); ++k) {
    bool is_needed = needed == nullptr;
    for (std::size_t i = 0; i < kept[k].rows.size() && !is_needed; ++i) is_needed = (*needed)[r + i] != 0;
    if (is_needed) {
      regions.push_back(k);
      first_row[k] = computed;
      for (std::size_t i = 0; i < kept[k].rows.size() && needed; ++i) row_place[r + i] = computed + i;
      computed += kept[k].rows.size();
    }
    r += kept[k].rows.size();
  }
  KeptRowsAt out(computed, columns_needed);
  out.row_place = std::move(row_place);
  parallel_for(regions.size(), threads, [&](std::size_t n) {
    poll_stop();
    const KeptRows& region = kept[regions[n]];
    coefficient_rows_at(network, region.pattern, region.rows, columns_needed, out.values, first_row[regions[n]],
                        &out.place);
  });
  return out;
}

// The kept rows modulo the walk's prime at the columns `wanted` marks: the
// residues the walk kept, read in place, when every region has them (a
// copy of the rank x |wanted| entries there cost a cache miss each, and
// the equations' choice reads only the rows it needs), else computed
// (kept_rows_modulo).
KeptRowsAt kept_rows_at(const ModularNetwork& walk_network, const std::vector<KeptRows>& kept, std::size_t rank,
                        unsigned threads, const std::vector<char>& wanted) {
  if (!std::all_of(kept.begin(), kept.end(), [](const KeptRows& k) { return k.residues.size() == k.rows.size(); }))
    return kept_rows_modulo(walk_network, kept, rank, threads, nullptr, wanted);
  return KeptRowsAt(kept);
}

// |columns| rows of `rows` (residues modulo p) independent on those columns:
// the first such rows from the last one back (each kept when it raises the
// rank of those before on the columns), stopping once there are enough:
// about |columns|^2 per row looked at instead of an elimination over every
// row; nullopt when there are not that many. Any such rows give the same
// solution (the system's only one). From the last: the walk keeps a row
// when it raises the rank, and the last kept rows are those that pin down
// the columns the extra directions live on (on 2,15,15,15,15,1 seed 1, 42
// such columns: 89 of the 495 kept rows looked at, against all 495 from the
// first; the lift 3.2 -> 2.7 ms).
std::optional<std::vector<std::size_t>> independent_rows(const KeptRowsAt& rows, const std::vector<std::size_t>& columns,
                                                         std::uint64_t prime) {
  ModularRowBasis chosen_rows(prime, columns.size());
  std::vector<std::size_t> chosen;
  ModularVector restricted(columns.size());
  for (std::size_t seen = 0; seen < rows.rows() && chosen.size() < columns.size(); ++seen) {
    const std::size_t r = rows.rows() - 1 - seen;  // from the last (see above)
    if (seen % 64 == 0) poll_stop();
    bool is_zero = true;
    for (std::size_t q = 0; q < columns.size(); ++q) {
      restricted[q] = rows.at(r, columns[q]);
      is_zero = is_zero && restricted[q] == 0;
    }
    if (!is_zero && chosen_rows.add_row(restricted)) chosen.push_back(r);
  }
  if (chosen.size() != columns.size()) return std::nullopt;
  return chosen;
}

// The rows' square system modulo the prime of `rows`: |U| x (|U| + leads),
// the equations' entries on U, then at the leads.
ModularMatrix row_system(const RowLift& lift, const KeptRowsAt& rows) {
  const std::size_t n = lift.support.size(), count = lift.leads.size();
  ModularMatrix system(n, n + count);
  for (std::size_t i = 0; i < n; ++i) {
    const std::size_t r = lift.equations[i];
    for (std::size_t m = 0; m < n; ++m) system(i, m) = rows.at(r, lift.support[m]);
    for (std::size_t j = 0; j < count; ++j) system(i, n + j) = rows.at(r, lift.leads[j]);
  }
  return system;
}

// The rows' entries on U modulo a prime: the solution of their square
// system there (1 at each lead), or nullopt when that system is singular
// modulo this prime (skip the prime for these rows).
std::optional<ModularMatrix> row_image(const ModularMatrix& system, std::uint64_t prime) {
  const std::size_t n = system.rows(), count = system.cols() - n;
  NmodMatrix square(n, n, prime), right(n, count, prime), solution(n, count, prime);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t m = 0; m < n; ++m)
      nmod_mat_entry(square.get(), static_cast<slong>(i), static_cast<slong>(m)) = system(i, m);
    for (std::size_t j = 0; j < count; ++j) {
      const std::uint64_t value = system(i, n + j);
      nmod_mat_entry(right.get(), static_cast<slong>(i), static_cast<slong>(j)) = value == 0 ? 0 : prime - value;
    }
  }
  poll_stop();
  if (!nmod_mat_solve(solution.get(), square.get(), right.get())) return std::nullopt;
  ModularMatrix image(count, n);
  for (std::size_t m = 0; m < n; ++m)
    for (std::size_t j = 0; j < count; ++j)
      image(j, m) = nmod_mat_entry(solution.get(), static_cast<slong>(m), static_cast<slong>(j));
  return image;
}

// FLINT's tables for reconstructing integers from their residues modulo
// fixed primes (fmpz_multi_CRT_ui), freed on every way out.
struct CrtTables {
  fmpz_comb_t comb;
  mutable fmpz_comb_temp_t scratch;
  explicit CrtTables(const std::vector<mp_limb_t>& primes) {
    fmpz_comb_init(comb, primes.data(), static_cast<slong>(primes.size()));
    fmpz_comb_temp_init(scratch, comb);
  }
  ~CrtTables() {
    fmpz_comb_temp_clear(scratch);
    fmpz_comb_clear(comb);
  }
  CrtTables(const CrtTables&) = delete;
  CrtTables& operator=(const CrtTables&) = delete;
};

// The rows solved exactly from their square system modulo the first further
// primes, whose product exceeds twice every scaled entry's bound (CheckScale:
// L^(d-1) times a block entry is an integer of absolute value at most
// L^(d-1) B_c): the symmetric residues are those integers, and
// solve_square_exactly (padic_solve.hpp) gives the rational solution. False when that system
// is singular over Q (the lift then fails: bounds, or the exact fallback).
bool solve_rows_exactly(RowLift& lift, const Integer& scale) {
  const std::size_t n = lift.support.size(), count = lift.leads.size();
  std::vector<std::uint64_t> scale_residues, inverses;  // L^(d-1) modulo each prime
  for (std::uint64_t prime : lift.system_primes) {
    scale_residues.push_back(mpz_fdiv_ui(scale.get_mpz_t(), prime));
    inverses.push_back(n_preinvert_limb(prime));
  }
  // Two primes below 2^63 (the usual case: the check's bound is passed
  // after two): Garner's formula in 128 bits, v = r0 + p0 t with t = (r1 -
  // r0) / p0 modulo p1, no multi-precision arithmetic per entry.
  const bool two_words = lift.systems.size() == 2 && lift.system_primes[0] < (std::uint64_t{1} << 63) &&
                         lift.system_primes[1] < (std::uint64_t{1} << 63);
  const std::uint64_t inverse_of_first =
      two_words ? n_invmod(lift.system_primes[0] % lift.system_primes[1], lift.system_primes[1]) : 0;
  FmpzMatrix square(n, n), right(n, count);
  FmpzValue entry;  // cleared also when poll_stop throws in the loop below
  fmpz* value = entry.get();
  // More primes: FLINT's multi-modular reconstruction with its tables built
  // once for these primes (fmpz_CRT_ui per entry and prime cost about half
  // the exact solve on 2,15,15,15,15,15,1, three primes); a zero entry (most
  // of the kept rows' entries) needs none.
  const std::vector<mp_limb_t> primes(lift.system_primes.begin(), lift.system_primes.end());
  std::vector<mp_limb_t> residues(primes.size());
  const std::optional<CrtTables> tables =
      two_words ? std::nullopt : std::optional<CrtTables>(std::in_place, primes);
  for (std::size_t i = 0; i < n; ++i) {
    poll_stop();
    for (std::size_t m = 0; m < n + count; ++m) {
      if (two_words) {
        const std::uint64_t p0 = lift.system_primes[0], p1 = lift.system_primes[1];
        const std::uint64_t r0 = n_mulmod2_preinv(lift.systems[0](i, m), scale_residues[0], p0, inverses[0]);
        const std::uint64_t r1 = n_mulmod2_preinv(lift.systems[1](i, m), scale_residues[1], p1, inverses[1]);
        const std::uint64_t difference = n_submod(r1, r0 % p1, p1);
        const std::uint64_t t = n_mulmod2_preinv(difference, inverse_of_first, p1, inverses[1]);
        const Wide product = static_cast<Wide>(p0) * p1;
        const Wide v = r0 + static_cast<Wide>(p0) * t;  // in [0, p0 p1)
        if (v > product / 2) {  // the symmetric residue: v - p0 p1
          const Wide negated = product - v;
          fmpz_neg_uiui(value, static_cast<std::uint64_t>(negated >> 64), static_cast<std::uint64_t>(negated));
        } else {
          fmpz_set_uiui(value, static_cast<std::uint64_t>(v >> 64), static_cast<std::uint64_t>(v));
        }
      } else {
        bool is_zero = true;
        for (std::size_t p = 0; p < primes.size(); ++p) {
          residues[p] = n_mulmod2_preinv(lift.systems[p](i, m), scale_residues[p], primes[p], inverses[p]);
          is_zero = is_zero && residues[p] == 0;
        }
        if (is_zero)
          fmpz_zero(value);
        else
          fmpz_multi_CRT_ui(value, residues.data(), tables->comb, tables->scratch, 1);  // the symmetric residue
      }
      if (m < n)
        fmpz_set(square.entry(i, m), value);
      else
        fmpz_neg(right.entry(i, m - n), value);
    }
  }
  poll_stop();
  const std::optional<RationalMatrix> solution = solve_square_exactly(square.get(), right.get());
  if (!solution) return false;
  RationalMatrix rows(count, n);
  for (std::size_t m = 0; m < n; ++m)
    for (std::size_t j = 0; j < count; ++j) rows(j, m) = (*solution)(m, j);
  lift.last = std::move(rows);
  lift.is_stable = true;
  return true;
}

// Adds the rows' image modulo a prime and reconstructs: stable once two
// reconstructions in a row agree (an early stop; the exact check decides).
void add_row_image(RowLift& lift, const ModularMatrix& image, std::uint64_t prime) {
  lift.images->add_image(image, prime);
  std::optional<RationalMatrix> reconstructed = lift.images->reconstruct();
  lift.is_stable = reconstructed && lift.last && *lift.last == *reconstructed;
  lift.last = std::move(reconstructed);
}

// Groups whose supports overlap merged where the union's system costs less
// than theirs (|U|^3 against the sum of |S|^3): rows that share most of
// their support (on 2,15,15,15,15,1 seed 1, three rows with 29 to 42
// columns, 29 of them common) then take one choice of equations and one
// solve. Each group merged into the first one before it that way.
std::vector<RowLift> merged_where_cheaper(std::vector<RowLift> groups) {
  auto cube = [](std::size_t n) { return std::pow(static_cast<double>(n), 3); };
  std::vector<RowLift> out;
  std::vector<std::size_t> joint;
  for (RowLift& group : groups) {
    bool is_merged = false;
    for (RowLift& into : out) {
      joint.clear();
      std::set_union(into.support.begin(), into.support.end(), group.support.begin(), group.support.end(),
                     std::back_inserter(joint));
      if (cube(joint.size()) >= cube(into.support.size()) + cube(group.support.size())) continue;
      into.rows.insert(into.rows.end(), group.rows.begin(), group.rows.end());
      into.leads.insert(into.leads.end(), group.leads.begin(), group.leads.end());
      into.support = joint;
      is_merged = true;
      break;
    }
    if (!is_merged) out.push_back(std::move(group));
  }
  return out;
}

// The groups lifted together: each row whose support has at most
// sparse_limit columns alone (merged_where_cheaper), the others in one
// group, and all in one group when the sparse rows' systems would cost more
// than half of one r x r solve (sum of |S|^3 against r^3 / 2).
std::vector<RowLift> row_groups(const SparseModularRows& image, const std::vector<std::size_t>& rows,
                                const std::vector<std::size_t>& leading, std::size_t rank, std::size_t sparse_limit) {
  std::vector<RowLift> alone;
  RowLift together;
  double alone_cost = 0;
  for (std::size_t row : rows) {
    RowLift lift;
    lift.rows = {row};
    lift.leads = {leading[row]};
    lift.support = support_beyond_lead(image, row, leading[row]);
    if (lift.support.size() <= sparse_limit) {
      alone_cost += std::pow(static_cast<double>(lift.support.size()), 3);
      alone.push_back(std::move(lift));
    } else {
      together.rows.push_back(row);
    }
  }
  if (alone_cost > std::pow(static_cast<double>(rank), 3) / 2) {
    alone.clear();
    together.rows = rows;
  }
  alone = merged_where_cheaper(std::move(alone));
  if (!together.rows.empty()) {
    std::vector<char> in_support(image.cols, 0);
    for (std::size_t row : together.rows) {
      together.leads.push_back(leading[row]);
      for (std::size_t c : support_beyond_lead(image, row, leading[row])) in_support[c] = 1;
    }
    for (std::size_t c = 0; c < image.cols; ++c)
      if (in_support[c]) together.support.push_back(c);
    alone.push_back(std::move(together));
  }
  return alone;
}

}  // namespace

std::optional<std::vector<SparseRationalRows::Row>> lift_rows_multimodular(
    const Network& network, const ModularNetwork& walk_network, const std::vector<KeptRows>& kept, std::size_t rank,
    const SparseModularRows& image, const std::vector<std::size_t>& rows, const std::vector<std::size_t>& leading,
    std::size_t sparse_limit, unsigned threads, const CheckScale* check_scale) {
  constexpr std::size_t max_primes = 4096;
  const std::size_t columns = image.cols;
  std::vector<RowLift> lifts = row_groups(image, rows, leading, rank, sparse_limit);
  // The kept rows modulo the walk's prime at the groups' supports only (what
  // picks each group's equations).
  std::vector<char> in_supports(columns, 0);
  for (const RowLift& lift : lifts)
    for (std::size_t c : lift.support) in_supports[c] = 1;
  const KeptRowsAt walk_rows = kept_rows_at(walk_network, kept, rank, threads, in_supports);
  std::vector<std::optional<std::vector<std::size_t>>> equations(lifts.size());
  parallel_for(lifts.size(), threads,
               [&](std::size_t i) { equations[i] = independent_rows(walk_rows, lifts[i].support, walk_network.prime); });
  for (std::size_t i = 0; i < lifts.size(); ++i) {
    if (!equations[i]) return std::nullopt;
    lifts[i].equations = std::move(*equations[i]);
    // Further primes only: an image modulo the walk's prime that is wrong
    // (an unlucky prime) would keep every reconstruction from settling.
    lifts[i].images = std::make_unique<RationalReconstruction>(lifts[i].rows.size(), lifts[i].support.size());
  }
  // With the check's scale: the product the further primes must exceed for
  // the exact solve (twice the largest scaled entry), and theirs so far.
  std::optional<Integer> exact_bound;
  if (check_scale)
    exact_bound = Integer(2 * *std::max_element(check_scale->scaled_bounds.begin(), check_scale->scaled_bounds.end()));
  // Primes are taken in batches of `threads`, each prime's kept rows and
  // images on its own thread (a batch of one: its regions and rows on every
  // thread). The images are then added in prime order to the rows still
  // open, so the reconstructions, and the prime at which each settles, are
  // those of one prime at a time: the same for any thread count. Before the
  // exact solve, batches of one: a prime costs only its kept rows then (no
  // images), no prime past the bound is reduced, and a batch of 2 on 2
  // threads measured slower than its primes one after the other
  // (2,15,15,15,1: 0.37-0.51 against 0.23-0.25 ms).
  const std::size_t batch = exact_bound ? 1 : std::max(1u, threads);
  Integer product = 1;
  for (std::size_t index = 0, used = 0; used < max_primes;) {
    poll_stop();
    std::vector<std::size_t> open;
    for (std::size_t i = 0; i < lifts.size(); ++i)
      if (!lifts[i].is_stable) open.push_back(i);
    if (open.empty()) break;
    std::vector<std::pair<std::uint64_t, ModularNetwork>> primes;
    for (; primes.size() < batch && used < max_primes; ++index) {
      const std::uint64_t prime = prime_sequence(index);
      if (prime == walk_network.prime) continue;
      std::optional<ModularNetwork> reduced = reduce_modulo(network, prime);
      if (!reduced) continue;  // the prime divides a denominator
      primes.emplace_back(prime, std::move(*reduced));
      ++used;
    }
    // The open rows' equations at their supports and leads: late primes
    // need few regions, and each region only those columns.
    std::vector<char> needed(rank, 0), columns_needed(columns, 0);
    for (std::size_t i : open) {
      for (std::size_t r : lifts[i].equations) needed[r] = 1;
      for (std::size_t c : lifts[i].support) columns_needed[c] = 1;
      for (std::size_t c : lifts[i].leads) columns_needed[c] = 1;
    }
    // With the exact solve to come (check_scale), no images: every group is
    // solved exactly once the further primes' product passes the bound, and
    // that p-adic solve stops as early as the solution is small, so an
    // elimination of each group's system modulo each prime before it (to
    // settle by reconstruction) costs as much or more (2,15,15,15,15,15,1:
    // the 265 x 265 system's twice, no group settled).
    std::vector<std::vector<std::optional<ModularMatrix>>> images(primes.size());
    std::vector<std::vector<ModularMatrix>> systems(primes.size());
    auto images_modulo = [&](std::size_t p, unsigned inner_threads) {
      const std::uint64_t prime = primes[p].first;
      const ModularNetwork& reduced = primes[p].second;
      const KeptRowsAt prime_rows = kept_rows_modulo(reduced, kept, rank, inner_threads, &needed, columns_needed);
      images[p].resize(open.size());
      systems[p].resize(open.size());
      parallel_for(open.size(), inner_threads, [&](std::size_t o) {
        systems[p][o] = row_system(lifts[open[o]], prime_rows);
        if (!exact_bound) images[p][o] = row_image(systems[p][o], prime);
      });
    };
    if (primes.size() == 1)
      images_modulo(0, threads);
    else
      parallel_for(primes.size(), threads, [&](std::size_t p) { images_modulo(p, 1); });
    for (std::size_t p = 0; p < primes.size(); ++p) {
      const std::uint64_t prime = primes[p].first;
      for (std::size_t o = 0; o < open.size(); ++o) {
        RowLift& lift = lifts[open[o]];
        if (lift.is_stable) continue;
        if (exact_bound) {
          lift.systems.push_back(std::move(systems[p][o]));
          lift.system_primes.push_back(prime);
        }
        if (images[p][o]) add_row_image(lift, *images[p][o], prime);
      }
      // Enough primes for the exact integer systems: the rows still open
      // (large entries, or a prime that hid one) solved exactly, each
      // group on its own thread. Where this happens depends on the primes
      // alone: the same for any thread count.
      product *= Integer(static_cast<unsigned long>(prime));
      if (exact_bound && product > *exact_bound) {
        std::vector<std::size_t> still_open;
        for (std::size_t i = 0; i < lifts.size(); ++i)
          if (!lifts[i].is_stable) still_open.push_back(i);
        // The largest systems first, so that the one that takes longest
        // (the rows with many nonzeros together) does not start last.
        std::stable_sort(still_open.begin(), still_open.end(), [&](std::size_t a, std::size_t b) {
          return lifts[a].support.size() > lifts[b].support.size();
        });
        std::vector<char> solved(still_open.size(), 0);
        parallel_for(still_open.size(), threads, [&](std::size_t o) {
          solved[o] = solve_rows_exactly(lifts[still_open[o]], check_scale->scale) ? 1 : 0;
        });
        if (std::find(solved.begin(), solved.end(), 0) != solved.end()) return std::nullopt;
        exact_bound.reset();
        break;
      }
    }
  }
  std::vector<SparseRow> out(image.rows.size());
  for (RowLift& lift : lifts) {
    if (!lift.is_stable) return std::nullopt;
    for (std::size_t j = 0; j < lift.rows.size(); ++j) {
      SparseRow& row = out[lift.rows[j]];
      row.emplace_back(lift.leads[j], Rational(1));
      for (std::size_t m = 0; m < lift.support.size(); ++m)
        if (sgn((*lift.last)(j, m)) != 0) row.emplace_back(lift.support[m], std::move((*lift.last)(j, m)));
      std::sort(row.begin(), row.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
    }
  }
  std::vector<SparseRow> ordered;
  for (std::size_t row : rows) ordered.push_back(std::move(out[row]));
  return ordered;
}

}  // namespace pleat::detail
