#include "enumerate/detail/check_basis.hpp"

#include "core/stop.hpp"

#include <flint/nmod.h>

#include <algorithm>
#include <cstdint>

namespace pleat::detail {
namespace {

// Entries beyond this many bits make a row worth combining (below, the
// check's products take one or two words whatever the row).
constexpr std::size_t large_bits = 64;

std::size_t bits(const Integer& value) { return mpz_sizeinbase(value.get_mpz_t(), 2); }

// The row's entry at a column, or nullptr for 0.
const Integer* entry_at(const IntegerEntries& row, std::size_t column) {
  const auto at = std::lower_bound(row.begin(), row.end(), column,
                                   [](const auto& entry, std::size_t c) { return entry.first < c; });
  return at != row.end() && at->first == column ? &at->second : nullptr;
}

// a row - b pivot, divided by its entries' gcd.
IntegerEntries combination(const Integer& a, const IntegerEntries& row, const Integer& b, const IntegerEntries& pivot) {
  IntegerEntries out;
  out.reserve(row.size() + pivot.size());
  auto i = row.begin(), j = pivot.begin();
  while (i != row.end() || j != pivot.end()) {
    Integer value;
    std::size_t column;
    if (j == pivot.end() || (i != row.end() && i->first < j->first)) {
      column = i->first;
      value = a * (i++)->second;
    } else if (i == row.end() || j->first < i->first) {
      column = j->first;
      value = -b * (j++)->second;
    } else {
      column = i->first;
      value = a * (i++)->second - b * (j++)->second;
    }
    if (sgn(value) != 0) out.emplace_back(column, std::move(value));
  }
  Integer content = 0;
  for (const auto& [column, value] : out) mpz_gcd(content.get_mpz_t(), content.get_mpz_t(), value.get_mpz_t());
  if (content > 1)
    for (auto& [column, value] : out) mpz_divexact(value.get_mpz_t(), value.get_mpz_t(), content.get_mpz_t());
  return out;
}

bool has_large_entry(const IntegerEntries& row) {
  return std::any_of(row.begin(), row.end(), [](const auto& entry) { return bits(entry.second) > large_bits; });
}

// Residues modulo a word prime propose which rows to combine (a proposal
// only: every combination is made in exact integers, and kept only when it
// costs less).
constexpr std::uint64_t proposal_prime = (std::uint64_t{1} << 61) - 1;

const nmod_t proposal_modulus = [] {
  nmod_t modulus;
  nmod_init(&modulus, proposal_prime);
  return modulus;
}();

std::uint64_t multiply_modulo(std::uint64_t x, std::uint64_t y) { return nmod_mul(x, y, proposal_modulus); }

// A row's entries and their inverses modulo the proposal prime (0 for 0),
// in its column order: the inverses from one inversion (each prefix
// product's inverse unwound entry by entry).
struct Residues {
  std::vector<std::uint64_t> values, inverses;
  explicit Residues(const IntegerEntries& row) : inverses(row.size(), 0) {
    std::vector<std::uint64_t> prefix;  // products of the nonzero residues before each
    std::uint64_t product = 1;
    for (const auto& [column, value] : row) {
      values.push_back(mpz_fdiv_ui(value.get_mpz_t(), proposal_prime));
      prefix.push_back(product);
      if (values.back() != 0) product = multiply_modulo(product, values.back());
    }
    std::uint64_t inverse = n_invmod(product, proposal_prime);  // of every nonzero residue's product so far
    for (std::size_t e = values.size(); e-- > 0;) {
      if (values[e] == 0) continue;
      inverses[e] = multiply_modulo(inverse, prefix[e]);
      inverse = multiply_modulo(inverse, values[e]);
    }
  }
};

// The combination of rows a and b proposed: the ratio a_c / b_c (modulo the
// prime) shared by the most columns c of both, and one such column; count
// 0 when no ratio is shared by two columns.
struct Proposal {
  std::size_t count = 0, column = 0;
  std::uint64_t ratio = 0;
};

Proposal propose(const IntegerEntries& a, const Residues& a_residues, const IntegerEntries& b,
                 const Residues& b_residues) {
  std::vector<std::pair<std::uint64_t, std::size_t>> ratios;  // (ratio, column)
  for (std::size_t i = 0, j = 0; i < a.size() && j < b.size();) {
    if (a[i].first < b[j].first) {
      ++i;
    } else if (b[j].first < a[i].first) {
      ++j;
    } else {
      if (a_residues.values[i] != 0 && b_residues.values[j] != 0)
        ratios.emplace_back(multiply_modulo(a_residues.values[i], b_residues.inverses[j]), a[i].first);
      ++i;
      ++j;
    }
  }
  std::sort(ratios.begin(), ratios.end());
  Proposal best;
  for (std::size_t first = 0, next; first < ratios.size(); first = next) {
    for (next = first; next < ratios.size() && ratios[next].first == ratios[first].first;) ++next;
    if (next - first >= 2 && next - first > best.count) best = {next - first, ratios[first].second, ratios[first].first};
  }
  return best;
}

}  // namespace

std::size_t check_cost(const IntegerEntries& row) {
  std::size_t largest = 0;
  for (const auto& [column, value] : row) largest = std::max(largest, bits(value));
  return row.size() * (largest + 64);
}

void lower_check_cost(std::vector<IntegerEntries>& rows) {
  std::vector<std::size_t> heavy;  // rows with a large entry, and another entry
  for (std::size_t r = 0; r < rows.size(); ++r)
    if (rows[r].size() >= 2 && has_large_entry(rows[r])) heavy.push_back(r);
  const std::size_t n = heavy.size();
  if (n < 2 || n > max_heavy_rows_lowered) return;  // the limit: check_basis.hpp
  std::vector<std::size_t> cost;
  std::vector<Residues> residues;
  for (std::size_t r : heavy) {
    cost.push_back(check_cost(rows[r]));
    residues.emplace_back(rows[r]);
  }
  // proposals[h * n + g]: row h combined with row g (count 0 once refused).
  std::vector<Proposal> proposals(n * n);
  auto propose_pair = [&](std::size_t h, std::size_t g) {
    if (g != h) proposals[h * n + g] = propose(rows[heavy[h]], residues[h], rows[heavy[g]], residues[g]);
  };
  for (std::size_t h = 0; h < n; ++h)
    for (std::size_t g = 0; g < n; ++g) propose_pair(h, g);
  Integer common, a, b;
  while (true) {
    poll_stop();
    // The proposal that cancels the most columns (the first pair with that many).
    const auto best = std::max_element(proposals.begin(), proposals.end(),
                                       [](const Proposal& x, const Proposal& y) { return x.count < y.count; });
    if (best->count == 0) return;
    const std::size_t row = static_cast<std::size_t>(best - proposals.begin()) / n,
                      other = static_cast<std::size_t>(best - proposals.begin()) % n;
    // (other's entry / gcd) row - (row's entry / gcd) other is 0 at the column.
    const Integer& at_row = *entry_at(rows[heavy[row]], best->column);
    const Integer& at_other = *entry_at(rows[heavy[other]], best->column);
    mpz_gcd(common.get_mpz_t(), at_row.get_mpz_t(), at_other.get_mpz_t());
    mpz_divexact(a.get_mpz_t(), at_other.get_mpz_t(), common.get_mpz_t());
    mpz_divexact(b.get_mpz_t(), at_row.get_mpz_t(), common.get_mpz_t());
    IntegerEntries candidate = combination(a, rows[heavy[row]], b, rows[heavy[other]]);
    const std::size_t candidate_cost = check_cost(candidate);
    if (candidate_cost >= cost[row]) {
      best->count = 0;  // refused
      continue;
    }
    rows[heavy[row]] = std::move(candidate);
    cost[row] = candidate_cost;
    residues[row] = Residues(rows[heavy[row]]);
    for (std::size_t g = 0; g < n; ++g) {
      propose_pair(row, g);
      propose_pair(g, row);
    }
  }
}

}  // namespace pleat::detail
