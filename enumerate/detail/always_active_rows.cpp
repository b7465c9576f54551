#include "enumerate/detail/always_active_rows.hpp"

#include "core/jacobian.hpp"
#include "core/stop.hpp"

#include <algorithm>
#include <map>
#include <optional>

namespace pleat::detail {
namespace {

using SparseVector = std::map<std::size_t, Rational>;  // column -> nonzero value

std::size_t weight_column(const Network& network, std::size_t k, std::size_t i, std::size_t j) {
  return network.parameter_offset(k) + i * network.layers[k].fan_in() + j;
}

std::size_t bias_column(const Network& network, std::size_t k, std::size_t i) {
  const Layer& layer = network.layers[k];
  return network.parameter_offset(k) + layer.width() * layer.fan_in() + i;
}

void add_to(SparseVector& vector, std::size_t column, const Rational& value) {
  if (value == 0) return;
  auto [place, is_new] = vector.try_emplace(column, value);
  if (is_new) return;
  place->second += value;
  if (place->second == 0) vector.erase(place);
}

// Appends value at a column beyond every column of out (0: nothing): the
// generators below are written in increasing column order, so no search.
void append_to(SparseVector& out, std::size_t column, const Rational& value) {
  if (value != 0) out.emplace_hint(out.end(), column, value);
}

// shift(a) of layer k (see the header).
SparseVector shift_direction(const Network& network, std::size_t k, std::size_t a) {
  SparseVector out;
  append_to(out, bias_column(network, k, a), Rational(1));
  const Layer& next = network.layers[k + 1];
  for (std::size_t o = 0; o < next.width(); ++o) append_to(out, bias_column(network, k + 1, o), -next.weights(o, a));
  return out;
}

// mix(a, b) of layer k (see the header).
SparseVector mix_direction(const Network& network, std::size_t k, std::size_t a, std::size_t b) {
  SparseVector out;
  const Layer& layer = network.layers[k];
  for (std::size_t j = 0; j < layer.fan_in(); ++j) append_to(out, weight_column(network, k, a, j), layer.weights(b, j));
  append_to(out, bias_column(network, k, a), layer.bias[b]);
  const Layer& next = network.layers[k + 1];
  for (std::size_t o = 0; o < next.width(); ++o)
    append_to(out, weight_column(network, k + 1, o, b), -next.weights(o, a));
  return out;
}

// Neuron n's scaling direction (core/jacobian.hpp's scaling_directions row).
SparseVector scaling_direction(const Network& network, std::size_t n) {
  std::size_t k = 0;
  while (n >= network.layers[k].width()) n -= network.layers[k++].width();
  return mix_direction(network, k, n, n);  // mix(n, n): n's own weights in, minus its own out
}

// The independent scaling directions (each written out only when a
// generator needs it: a generator's scaling part is a few of them, and
// writing all out, on 2,5,5,5,5,1 seed 1 twenty maps of rationals for four
// generators, was a third of the generators' cost) and, for each pivot
// column q in Q, those that are nonzero at q (at most two: a forest's
// incidence matrix, core/jacobian.hpp) with their values there.
struct ScalingPart {
  const Network& network;
  std::vector<std::size_t> neurons;  // the independent ones (ReLU neuron indices)
  std::vector<std::size_t> pivots;
  std::vector<std::vector<std::pair<std::size_t, Rational>>> at_pivot;
  std::vector<std::optional<SparseVector>> directions;  // of each neuron, once needed
  // The equations in the order they are solved (each with one unknown left
  // once the earlier ones are: leaf by leaf) and the unknown each solves:
  // the order depends on which entries are nonzero only, not on g, so it is
  // found once for every generator; empty with solvable false when it stalls.
  std::vector<std::pair<std::size_t, std::size_t>> order;  // (equation e, its entry solved for)
  bool solvable = true;

  ScalingPart(const Network& network_in, const ScalingStructure& structure);
  const SparseVector& direction(std::size_t n) {
    if (!directions[n]) directions[n] = scaling_direction(network, neurons[n]);
    return *directions[n];
  }
};

// Neuron n's scaling direction (mix(n, n)) is its incoming weights and bias
// as they are and its outgoing weights negated: at W_k[i,j] neuron i of
// layer k has W_k[i,j] and neuron j of layer k - 1 has -W_k[i,j], at b_k[i]
// neuron i has b_k[i] (zeros left out, as scaling_direction does).
ScalingPart::ScalingPart(const Network& network_in, const ScalingStructure& structure)
    : network(network_in), neurons(structure.independent_neurons), pivots(structure.pivot_columns),
      at_pivot(structure.pivot_columns.size()), directions(structure.independent_neurons.size()) {
  const std::size_t depth = network.depth();
  std::vector<std::size_t> first_neuron(depth, 0);  // of each hidden layer
  for (std::size_t k = 1; k < depth; ++k) first_neuron[k] = first_neuron[k - 1] + network.layers[k - 1].width();
  std::vector<std::size_t> place(first_neuron.back() + network.layers.back().width(), neurons.size());
  for (std::size_t n = 0; n < neurons.size(); ++n) place[neurons[n]] = n;
  auto add = [&](std::size_t e, std::size_t k, std::size_t i, const Rational& value) {
    if (k + 1 < depth && value != 0 && place[first_neuron[k] + i] < neurons.size())
      at_pivot[e].emplace_back(place[first_neuron[k] + i], value);
  };
  for (std::size_t e = 0; e < pivots.size(); ++e) {
    std::size_t k = 0;
    while (k + 1 < depth && pivots[e] >= network.parameter_offset(k + 1)) ++k;
    const Layer& layer = network.layers[k];
    const std::size_t offset = pivots[e] - network.parameter_offset(k), weights = layer.width() * layer.fan_in();
    if (offset >= weights) {
      add(e, k, offset - weights, layer.bias[offset - weights]);
    } else {
      const std::size_t i = offset / layer.fan_in(), j = offset % layer.fan_in();
      add(e, k, i, layer.weights(i, j));
      if (k > 0) add(e, k - 1, j, -layer.weights(i, j));
    }
    std::sort(at_pivot[e].begin(), at_pivot[e].end(),
              [](const auto& a, const auto& b) { return a.first < b.first; });
  }
  // Passes over the equations in order, each solved as soon as it has one
  // unknown left, until every amount is known (or a pass makes no progress).
  std::vector<char> is_known(neurons.size(), 0), is_done(pivots.size(), 0);
  for (std::size_t solved = 0; solved < neurons.size();) {
    bool progress = false;
    for (std::size_t e = 0; e < pivots.size(); ++e) {
      if (is_done[e]) continue;
      std::size_t unknowns = 0, unknown = 0;
      for (std::size_t a = 0; a < at_pivot[e].size(); ++a)
        if (!is_known[at_pivot[e][a].first]) {
          unknown = a;
          ++unknowns;
        }
      if (unknowns != 1) continue;
      order.emplace_back(e, unknown);
      is_known[at_pivot[e][unknown].first] = 1;
      is_done[e] = 1;
      ++solved;
      progress = true;
    }
    if (!progress) {
      solvable = false;
      order.clear();
      return;
    }
  }
}

// g minus the combination of the independent scaling directions that
// equals g on the pivot columns Q: 0 there. Solved equation by equation in
// the scaling part's order, each for its one unknown left; an amount is 0
// unless g or an amount already found is nonzero in its equation (most of
// them: a generator is nonzero at a few pivots), which costs no rational
// operation. nullopt when the order stalls.
std::optional<SparseVector> without_scaling_part(const SparseVector& g, ScalingPart& scaling) {
  if (!scaling.solvable) return std::nullopt;
  const std::size_t count = scaling.neurons.size();
  std::vector<Rational> amount(count);  // 0 until solved
  std::vector<char> is_nonzero(count, 0);
  Rational rest, product;
  for (const auto& [e, solved] : scaling.order) {
    const auto at_q = g.find(scaling.pivots[e]);
    bool is_zero = at_q == g.end();
    if (!is_zero) rest = at_q->second;
    const std::vector<std::pair<std::size_t, Rational>>& entries = scaling.at_pivot[e];
    for (std::size_t a = 0; a < entries.size(); ++a) {
      const std::size_t n = entries[a].first;
      if (a == solved || !is_nonzero[n]) continue;
      mpq_mul(product.get_mpq_t(), amount[n].get_mpq_t(), entries[a].second.get_mpq_t());
      if (is_zero) {
        mpq_neg(rest.get_mpq_t(), product.get_mpq_t());
        is_zero = false;
      } else {
        rest -= product;
      }
    }
    if (is_zero || rest == 0) continue;
    const std::size_t n = entries[solved].first;
    mpq_div(amount[n].get_mpq_t(), rest.get_mpq_t(), entries[solved].second.get_mpq_t());
    is_nonzero[n] = 1;
  }
  SparseVector out = g;
  for (std::size_t n = 0; n < count; ++n)
    if (is_nonzero[n])
      for (const auto& [c, value] : scaling.direction(n)) add_to(out, c, -amount[n] * value);
  for (std::size_t q : scaling.pivots)
    if (out.count(q)) return std::nullopt;
  return out;
}

// A sparse row as integers over one positive common denominator (not
// necessarily the least): the sums below then cost an integer
// multiply-add per entry, where a rational addition cost gcds of the
// lifted rows' ~750-bit entries (on 2,15,15,15,15,1 seed 1, the check of
// the generators and the plan's fill: 1.2 ms, mostly gcds).
struct CommonRow {
  std::vector<std::pair<std::size_t, Integer>> entries;  // columns increasing, nonzero
  Integer denominator = 1;
};

// value divides into `multiple`: multiple := lcm(multiple, value) unless
// value already divides it (one division, not a gcd, for the usual equal
// denominators).
void take_multiple(Integer& multiple, const Integer& value) {
  if (!mpz_divisible_p(multiple.get_mpz_t(), value.get_mpz_t()))
    mpz_lcm(multiple.get_mpz_t(), multiple.get_mpz_t(), value.get_mpz_t());
}

template <class Row>  // (column, Rational) pairs, columns increasing, nonzero
CommonRow common_row(const Row& row) {
  CommonRow out;
  for (const auto& [c, value] : row) take_multiple(out.denominator, value.get_den());
  out.entries.reserve(row.size());
  for (const auto& [c, value] : row) {
    Integer& numerator = out.entries.emplace_back(c, Integer()).second;
    mpz_divexact(numerator.get_mpz_t(), out.denominator.get_mpz_t(), value.get_den_mpz_t());
    numerator *= value.get_num();
  }
  return out;
}

// sum_t a_t R_t exactly (terms (a_t, R_t)), over the lcm M of the terms'
// a_t denominators times R_t's denominators: each entry sum_t (a_t M /
// (den(a_t) D_t)) num(a_t) n_t,c, a sum of integers. Zero entries left out.
CommonRow combination(const std::vector<std::pair<Rational, const CommonRow*>>& terms, std::size_t columns) {
  CommonRow out;
  Integer denominator, factor;
  for (const auto& [coefficient, row] : terms) {
    if (sgn(coefficient) == 0) continue;
    mpz_mul(denominator.get_mpz_t(), coefficient.get_den_mpz_t(), row->denominator.get_mpz_t());
    take_multiple(out.denominator, denominator);
  }
  // Scratch kept zero between calls (a vector of `columns` integers made
  // and freed per call was half of this function's time).
  thread_local std::vector<Integer> sums;
  thread_local std::vector<char> is_touched;
  thread_local std::vector<std::size_t> touched;
  for (std::size_t c : touched) {  // left over only by a call that threw
    is_touched[c] = 0;
    sums[c] = 0;
  }
  touched.clear();
  if (sums.size() < columns) {
    sums.resize(columns);
    is_touched.resize(columns, 0);
  }
  for (const auto& [coefficient, row] : terms) {
    if (sgn(coefficient) == 0) continue;
    mpz_mul(denominator.get_mpz_t(), coefficient.get_den_mpz_t(), row->denominator.get_mpz_t());
    mpz_divexact(factor.get_mpz_t(), out.denominator.get_mpz_t(), denominator.get_mpz_t());
    factor *= coefficient.get_num();
    for (const auto& [c, numerator] : row->entries) {
      if (!is_touched[c]) {
        is_touched[c] = 1;
        touched.push_back(c);
      }
      mpz_addmul(sums[c].get_mpz_t(), factor.get_mpz_t(), numerator.get_mpz_t());
    }
  }
  std::sort(touched.begin(), touched.end());
  for (std::size_t c : touched) {
    is_touched[c] = 0;
    if (sgn(sums[c]) != 0) mpz_swap(out.entries.emplace_back(c, Integer()).second.get_mpz_t(), sums[c].get_mpz_t());
  }
  touched.clear();
  return out;
}

// The candidate's rows over a common denominator each, made when first used.
class CommonRows {
 public:
  explicit CommonRows(std::size_t rows) : rows_(rows) {}
  template <class Row>
  const CommonRow& of(std::size_t r, const Row& row) {
    if (!rows_[r]) rows_[r] = common_row(row);
    return *rows_[r];
  }

 private:
  std::vector<std::optional<CommonRow>> rows_;
};

// g's coefficients on the candidate's rows (its values at their leading
// columns) when g equals that combination exactly, else nullopt.
std::optional<SparseVector> coefficients_on_rows(const SparseVector& g, const SparseRationalRows& candidate,
                                                 const std::vector<std::size_t>& row_of_lead, CommonRows& rows) {
  SparseVector coefficients;  // row -> coefficient
  for (const auto& [c, value] : g)
    if (row_of_lead[c] != static_cast<std::size_t>(-1)) coefficients.emplace(row_of_lead[c], value);
  // g - sum_j coefficient_j E_j, exactly: 0 everywhere?
  const CommonRow own = common_row(g);
  std::vector<std::pair<Rational, const CommonRow*>> terms{{Rational(1), &own}};
  for (const auto& [row, coefficient] : coefficients)
    terms.emplace_back(-coefficient, &rows.of(row, candidate.rows[row]));
  if (!combination(terms, candidate.cols).entries.empty()) return std::nullopt;
  return coefficients;
}

}  // namespace

AlwaysActiveGenerators::AlwaysActiveGenerators(const Network& network, const std::vector<ActivationPattern>& smooth) {
  std::vector<SparseVector>& reduced = reduced_;
  if (smooth.empty()) return;
  std::vector<std::vector<std::size_t>> always(network.depth());
  for (std::size_t k = 0, n = 0; k + 1 < network.depth(); ++k)
    for (std::size_t i = 0; i < network.layers[k].width(); ++i, ++n)
      if (std::all_of(smooth.begin(), smooth.end(), [&](const ActivationPattern& p) { return p.is_on(n); }))
        always[k].push_back(i);
  constexpr std::size_t max_generators = 256;  // beyond that, the check is cheaper than the proofs
  std::vector<SparseVector> generators;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k)
    for (std::size_t a : always[k]) {
      if (generators.size() < max_generators) generators.push_back(shift_direction(network, k, a));
      for (std::size_t b : always[k])
        if (a != b && generators.size() < max_generators) generators.push_back(mix_direction(network, k, a, b));
    }
  if (generators.empty()) return;
  ScalingPart scaling(network, scaling_structure(network));
  for (const SparseVector& g : generators) {
    poll_stop();
    if (std::optional<SparseVector> without = without_scaling_part(g, scaling)) reduced.push_back(std::move(*without));
  }
}

namespace {

// Rows (pivot columns, among `columns` in order) and the rows of `matrix`
// chosen for them: each chosen row, with the earlier pivots' columns
// cleared from the rows not chosen yet, leads the next, so the chosen rows
// restricted to the pivot columns are nonsingular. At most `limit` pivots.
std::pair<std::vector<std::size_t>, std::vector<std::size_t>> pivots(std::vector<std::vector<Rational>> matrix,
                                                                    std::size_t limit) {
  std::vector<std::size_t> columns, chosen;
  std::vector<char> is_chosen(matrix.size(), 0);
  const std::size_t width = matrix.empty() ? 0 : matrix.front().size();
  for (std::size_t h = 0; h < width && chosen.size() < limit; ++h) {
    std::optional<std::size_t> pivot;
    for (std::size_t g = 0; g < matrix.size() && !pivot; ++g)
      if (!is_chosen[g] && matrix[g][h] != 0) pivot = g;
    if (!pivot) continue;
    is_chosen[*pivot] = 1;
    columns.push_back(h);
    chosen.push_back(*pivot);
    for (std::size_t g = 0; g < matrix.size(); ++g) {
      if (is_chosen[g] || matrix[g][h] == 0) continue;
      const Rational factor = matrix[g][h] / matrix[*pivot][h];
      for (std::size_t c = 0; c < width; ++c) matrix[g][c] -= factor * matrix[*pivot][c];
    }
  }
  return {columns, chosen};
}

}  // namespace

std::vector<char> rows_proved_by_always_active(const AlwaysActiveGenerators& always_active,
                                               const SparseRationalRows& candidate,
                                               const std::vector<std::size_t>& heavy) {
  std::vector<char> proved(candidate.rows.size(), 0);
  if (heavy.empty()) return proved;
  const std::vector<SparseVector>& generators = always_active.reduced();
  if (generators.empty()) return proved;
  std::vector<std::size_t> row_of_lead(candidate.cols, static_cast<std::size_t>(-1));
  for (std::size_t r = 0; r < candidate.rows.size(); ++r)
    if (!candidate.rows[r].empty()) row_of_lead[candidate.rows[r].front().first] = r;
  // Each usable generator's coefficients on the heavy rows.
  std::vector<std::vector<Rational>> on_heavy;
  CommonRows rows(candidate.rows.size());
  for (const SparseVector& g : generators) {
    poll_stop();
    const std::optional<SparseVector> coefficients = coefficients_on_rows(g, candidate, row_of_lead, rows);
    if (!coefficients) continue;
    std::vector<Rational> row(heavy.size());
    bool touches = false;
    for (std::size_t h = 0; h < heavy.size(); ++h) {
      const auto found = coefficients->find(heavy[h]);
      if (found != coefficients->end()) {
        row[h] = found->second;
        touches = true;
      }
    }
    if (touches) on_heavy.push_back(std::move(row));
  }
  // Pivots in the heavy rows' order: the chosen rows on those columns are
  // nonsingular.
  for (std::size_t h : pivots(std::move(on_heavy), heavy.size()).first) proved[heavy[h]] = 1;
  return proved;
}

AlwaysActivePlan::AlwaysActivePlan(const AlwaysActiveGenerators& always_active, const SparseModularRows& image,
                                   const std::vector<std::size_t>& hard) {
  if (hard.empty()) return;
  const std::vector<SparseVector>& generators = always_active.reduced();
  if (generators.empty()) return;
  std::vector<std::size_t> row_of_lead(image.cols, static_cast<std::size_t>(-1));
  std::vector<std::size_t> entries(image.rows.size(), 0);  // nonzeros of each row modulo the prime
  for (std::size_t r = 0; r < image.rows.size(); ++r) {
    entries[r] = image.rows[r].size();
    if (!image.rows[r].empty()) row_of_lead[image.rows[r].front().first] = r;
  }
  std::vector<std::size_t> order = hard;  // costliest (most entries) first
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return entries[a] > entries[b]; });
  std::vector<SparseVector> coordinates(generators.size());
  std::vector<std::vector<Rational>> on_hard(generators.size(), std::vector<Rational>(order.size()));
  std::vector<std::size_t> place(image.rows.size(), static_cast<std::size_t>(-1));  // of a hard row in order
  for (std::size_t h = 0; h < order.size(); ++h) place[order[h]] = h;
  for (std::size_t g = 0; g < generators.size(); ++g)
    for (const auto& [c, value] : generators[g])
      if (row_of_lead[c] != static_cast<std::size_t>(-1)) {
        coordinates[g].emplace(row_of_lead[c], value);
        if (place[row_of_lead[c]] != static_cast<std::size_t>(-1)) on_hard[g][place[row_of_lead[c]]] = value;
      }
  constexpr std::size_t max_rows = 16;  // C_B^-1 exactly, |B|^3 rational operations
  const auto chosen_pivots = pivots(on_hard, max_rows);
  const std::vector<std::size_t>& columns = chosen_pivots.first;
  const std::vector<std::size_t>& chosen = chosen_pivots.second;
  const std::size_t count = columns.size();
  // C_B (chosen generators x B) inverted by Gauss-Jordan, exactly.
  std::vector<std::vector<Rational>> left(count, std::vector<Rational>(count));
  std::vector<std::vector<Rational>> right(count, std::vector<Rational>(count));
  for (std::size_t t = 0; t < count; ++t) {
    for (std::size_t s = 0; s < count; ++s) left[t][s] = on_hard[chosen[t]][columns[s]];
    right[t][t] = 1;
  }
  for (std::size_t s = 0; s < count; ++s) {
    std::size_t pivot = s;
    while (pivot < count && left[pivot][s] == 0) ++pivot;
    if (pivot == count) return;  // singular (not for pivots' choice): no plan
    std::swap(left[s], left[pivot]);
    std::swap(right[s], right[pivot]);
    const Rational scale = 1 / left[s][s];
    for (std::size_t c = 0; c < count; ++c) {
      left[s][c] *= scale;
      right[s][c] *= scale;
    }
    for (std::size_t t = 0; t < count; ++t) {
      if (t == s || left[t][s] == 0) continue;
      const Rational factor = left[t][s];
      for (std::size_t c = 0; c < count; ++c) {
        left[t][c] -= factor * left[s][c];
        right[t][c] -= factor * right[s][c];
      }
    }
  }
  // B in increasing row order, with C_B^-1's rows in the same order.
  std::vector<std::size_t> by_row(count);
  for (std::size_t s = 0; s < count; ++s) by_row[s] = s;
  std::sort(by_row.begin(), by_row.end(),
            [&](std::size_t a, std::size_t b) { return order[columns[a]] < order[columns[b]]; });
  for (std::size_t s : by_row) {
    rows_.push_back(order[columns[s]]);
    inverse_.push_back(right[s]);
  }
  for (std::size_t t : chosen) {
    generators_.push_back(generators[t]);
    coordinates_.push_back(std::move(coordinates[t]));
  }
}

bool AlwaysActivePlan::fill(std::vector<std::optional<SparseRationalRows::Row>>& rows) const {
  if (rows_.empty()) return true;
  std::vector<char> in_plan(rows.size(), 0);
  for (std::size_t b : rows_) in_plan[b] = 1;
  // R_t = g'_t - sum over the rows outside B of C[t, j] E_j (integers over
  // a common denominator: CommonRow).
  std::size_t columns = 0;
  for (const SparseVector& g : generators_)
    if (!g.empty()) columns = std::max(columns, g.rbegin()->first + 1);
  for (const auto& coordinates : coordinates_)
    for (const auto& [j, coefficient] : coordinates)
      if (!in_plan[j] && rows[j] && !rows[j]->empty()) columns = std::max(columns, rows[j]->back().first + 1);
  CommonRows common(rows.size());
  std::vector<CommonRow> rests;
  std::vector<std::pair<Rational, const CommonRow*>> terms;
  for (std::size_t t = 0; t < generators_.size(); ++t) {
    poll_stop();
    const CommonRow own = common_row(generators_[t]);
    terms.assign(1, {Rational(1), &own});
    for (const auto& [j, coefficient] : coordinates_[t]) {
      if (in_plan[j]) continue;
      if (!rows[j]) return false;
      terms.emplace_back(-coefficient, &common.of(j, *rows[j]));
    }
    rests.push_back(combination(terms, columns));
  }
  // E_s = sum_t C_B^-1[s, t] R_t, each entry then in lowest terms.
  for (std::size_t s = 0; s < rows_.size(); ++s) {
    poll_stop();
    terms.clear();
    for (std::size_t t = 0; t < rests.size(); ++t) terms.emplace_back(inverse_[s][t], &rests[t]);
    CommonRow sum = combination(terms, columns);
    SparseRationalRows::Row row;
    row.reserve(sum.entries.size());
    for (auto& [c, numerator] : sum.entries) {
      Rational& value = row.emplace_back(c, Rational()).second;
      mpz_swap(value.get_num_mpz_t(), numerator.get_mpz_t());  // not copied: sum is not read again
      mpz_set(value.get_den_mpz_t(), sum.denominator.get_mpz_t());
      value.canonicalize();
    }
    rows[rows_[s]] = std::move(row);
  }
  return true;
}

}  // namespace pleat::detail
