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

// shift(a) of layer k (see the header).
SparseVector shift_direction(const Network& network, std::size_t k, std::size_t a) {
  SparseVector out;
  add_to(out, bias_column(network, k, a), Rational(1));
  const Layer& next = network.layers[k + 1];
  for (std::size_t o = 0; o < next.width(); ++o) add_to(out, bias_column(network, k + 1, o), -next.weights(o, a));
  return out;
}

// mix(a, b) of layer k (see the header).
SparseVector mix_direction(const Network& network, std::size_t k, std::size_t a, std::size_t b) {
  SparseVector out;
  const Layer& layer = network.layers[k];
  for (std::size_t j = 0; j < layer.fan_in(); ++j) add_to(out, weight_column(network, k, a, j), layer.weights(b, j));
  add_to(out, bias_column(network, k, a), layer.bias[b]);
  const Layer& next = network.layers[k + 1];
  for (std::size_t o = 0; o < next.width(); ++o)
    add_to(out, weight_column(network, k + 1, o, b), -next.weights(o, a));
  return out;
}

// Neuron n's scaling direction (core/jacobian.hpp's scaling_directions row).
SparseVector scaling_direction(const Network& network, std::size_t n) {
  std::size_t k = 0;
  while (n >= network.layers[k].width()) n -= network.layers[k++].width();
  SparseVector out;
  const Layer& layer = network.layers[k];
  for (std::size_t j = 0; j < layer.fan_in(); ++j) add_to(out, weight_column(network, k, n, j), layer.weights(n, j));
  add_to(out, bias_column(network, k, n), layer.bias[n]);
  const Layer& next = network.layers[k + 1];
  for (std::size_t o = 0; o < next.width(); ++o)
    add_to(out, weight_column(network, k + 1, o, n), -next.weights(o, n));
  return out;
}

// g minus the combination of the independent scaling directions that
// equals g on the pivot columns Q: 0 there. The system on Q has at most
// two unknowns per equation (a forest's incidence matrix, core/jacobian.hpp),
// solved leaf by leaf; nullopt when that stalls.
std::optional<SparseVector> without_scaling_part(const SparseVector& g, const std::vector<SparseVector>& scaling,
                                                 const std::vector<std::size_t>& pivots) {
  const std::size_t count = scaling.size();
  std::vector<std::optional<Rational>> amount(count);
  std::vector<char> is_done(pivots.size(), 0);
  for (std::size_t solved = 0; solved < count;) {
    bool progress = false;
    for (std::size_t e = 0; e < pivots.size(); ++e) {
      if (is_done[e]) continue;
      const std::size_t q = pivots[e];
      const auto at_q = g.find(q);
      Rational rest = at_q == g.end() ? Rational(0) : at_q->second;
      std::optional<std::size_t> unknown;
      std::size_t unknowns = 0;
      for (std::size_t n = 0; n < count; ++n) {
        const auto entry = scaling[n].find(q);
        if (entry == scaling[n].end()) continue;
        if (amount[n]) {
          rest -= *amount[n] * entry->second;
        } else {
          unknown = n;
          ++unknowns;
        }
      }
      if (unknowns != 1) continue;
      amount[*unknown] = rest / scaling[*unknown].at(q);
      is_done[e] = 1;
      ++solved;
      progress = true;
    }
    if (!progress) return std::nullopt;
  }
  SparseVector out = g;
  for (std::size_t n = 0; n < count; ++n)
    for (const auto& [c, value] : scaling[n]) add_to(out, c, -*amount[n] * value);
  for (std::size_t q : pivots)
    if (out.count(q)) return std::nullopt;
  return out;
}

// g's coefficients on the candidate's rows (its values at their leading
// columns) when g equals that combination exactly, else nullopt.
std::optional<SparseVector> coefficients_on_rows(const SparseVector& g, const SparseRationalRows& candidate,
                                                 const std::vector<std::size_t>& row_of_lead) {
  SparseVector coefficients;  // row -> coefficient
  for (const auto& [c, value] : g)
    if (row_of_lead[c] != static_cast<std::size_t>(-1)) coefficients.emplace(row_of_lead[c], value);
  SparseVector residual = g;
  for (const auto& [row, coefficient] : coefficients)
    for (const auto& [c, value] : candidate.rows[row]) add_to(residual, c, -coefficient * value);
  if (!residual.empty()) return std::nullopt;
  return coefficients;
}

}  // namespace

std::vector<char> rows_proved_by_always_active(const Network& network, const std::vector<ActivationPattern>& smooth,
                                               const SparseRationalRows& candidate,
                                               const std::vector<std::size_t>& heavy) {
  std::vector<char> proved(candidate.rows.size(), 0);
  if (smooth.empty() || heavy.empty()) return proved;
  // Neurons on in every pattern, by hidden layer.
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
  if (generators.empty()) return proved;
  const ScalingStructure structure = scaling_structure(network);
  std::vector<SparseVector> scaling;
  for (std::size_t n : structure.independent_neurons) scaling.push_back(scaling_direction(network, n));
  std::vector<std::size_t> row_of_lead(candidate.cols, static_cast<std::size_t>(-1));
  for (std::size_t r = 0; r < candidate.rows.size(); ++r)
    if (!candidate.rows[r].empty()) row_of_lead[candidate.rows[r].front().first] = r;
  // Each usable generator's coefficients on the heavy rows.
  std::vector<std::vector<Rational>> on_heavy;
  for (const SparseVector& g : generators) {
    poll_stop();
    const std::optional<SparseVector> reduced = without_scaling_part(g, scaling, structure.pivot_columns);
    if (!reduced) continue;
    const std::optional<SparseVector> coefficients = coefficients_on_rows(*reduced, candidate, row_of_lead);
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
  // Pivots in the heavy rows' order: each chosen generator row, with the
  // earlier pivots' columns cleared from the rows not chosen yet, leads the
  // next; the chosen rows on the pivot columns are then nonsingular.
  std::vector<char> is_chosen(on_heavy.size(), 0);
  for (std::size_t h = 0; h < heavy.size(); ++h) {
    std::optional<std::size_t> pivot;
    for (std::size_t g = 0; g < on_heavy.size() && !pivot; ++g)
      if (!is_chosen[g] && on_heavy[g][h] != 0) pivot = g;
    if (!pivot) continue;
    is_chosen[*pivot] = 1;
    proved[heavy[h]] = 1;
    for (std::size_t g = 0; g < on_heavy.size(); ++g) {
      if (is_chosen[g] || on_heavy[g][h] == 0) continue;
      const Rational factor = on_heavy[g][h] / on_heavy[*pivot][h];
      for (std::size_t c = 0; c < heavy.size(); ++c) on_heavy[g][c] -= factor * on_heavy[*pivot][c];
    }
  }
  return proved;
}

}  // namespace pleat::detail
