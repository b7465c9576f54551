#include "enumerate/functional_dimension.hpp"

#include "core/jacobian.hpp"
#include "core/rank.hpp"

#include <algorithm>
#include <chrono>
#include <set>

namespace pleat {
namespace {

RationalMatrix stack_rows(const std::vector<RationalMatrix>& blocks, std::size_t columns) {
  std::size_t total = 0;
  for (const auto& block : blocks) total += block.rows();
  RationalMatrix out(total, columns);
  std::size_t r = 0;
  for (const auto& block : blocks)
    for (std::size_t i = 0; i < block.rows(); ++i, ++r)
      for (std::size_t c = 0; c < columns; ++c) out(r, c) = block(i, c);
  return out;
}

__extension__ typedef unsigned __int128 Unsigned128;  // GCC/Clang; the product of two residues < 2^64

std::uint64_t mulmod(std::uint64_t a, std::uint64_t b, std::uint64_t p) {
  return static_cast<std::uint64_t>(static_cast<Unsigned128>(a) * b % p);
}

// True when every row of blocks (mod p) is orthogonal to every kernel row (mod p).
bool is_annihilated_mod(const ModularMatrix& blocks, const ModularMatrix& kernel, std::uint64_t p) {
  for (std::size_t r = 0; r < blocks.rows(); ++r)
    for (std::size_t k = 0; k < kernel.rows(); ++k) {
      std::uint64_t sum = 0;
      for (std::size_t c = 0; c < blocks.cols(); ++c)
        if (blocks(r, c) && kernel(k, c)) sum = (sum + mulmod(blocks(r, c), kernel(k, c), p)) % p;
      if (sum != 0) return false;
    }
  return true;
}

bool is_annihilated_exact(const RationalMatrix& blocks, const RationalMatrix& kernel) {
  for (std::size_t r = 0; r < blocks.rows(); ++r)
    for (std::size_t k = 0; k < kernel.rows(); ++k) {
      Rational sum = 0;
      for (std::size_t c = 0; c < blocks.cols(); ++c)
        if (blocks(r, c) != 0 && kernel(k, c) != 0) sum += blocks(r, c) * kernel(k, c);
      if (sum != 0) return false;
    }
  return true;
}

// Per-neuron activity over the walked regions, for naming mechanisms.
struct NeuronActivity {
  std::vector<char> ever_on, ever_not_on;
  explicit NeuronActivity(std::size_t n) : ever_on(n, 0), ever_not_on(n, 0) {}
  void record(const ActivationPattern& pattern) {
    for (std::size_t i = 0; i < pattern.states.size(); ++i)
      (pattern.states[i] == NeuronState::on ? ever_on : ever_not_on)[i] = 1;
  }
};

// Parameter index sets of one hidden neuron.
struct NeuronParameters {
  std::set<std::size_t> incoming;  // W_k[i,:] and b_k[i]
  std::set<std::size_t> bias;      // b_k[i]
  std::set<std::size_t> outgoing;  // W_{k+1}[:,i]
  std::set<std::size_t> next_biases;  // b_{k+1}[:]
};

std::vector<NeuronParameters> hidden_neuron_parameters(const Network& network) {
  std::vector<NeuronParameters> out;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    const Layer& next = network.layers[k + 1];
    const std::size_t offset = network.parameter_offset(k);
    const std::size_t next_offset = network.parameter_offset(k + 1);
    for (std::size_t i = 0; i < layer.width(); ++i) {
      NeuronParameters p;
      for (std::size_t j = 0; j < layer.fan_in(); ++j) p.incoming.insert(offset + i * layer.fan_in() + j);
      const std::size_t bias = offset + layer.width() * layer.fan_in() + i;
      p.incoming.insert(bias);
      p.bias.insert(bias);
      for (std::size_t o = 0; o < next.width(); ++o) {
        p.outgoing.insert(next_offset + o * next.fan_in() + i);
        p.next_biases.insert(next_offset + next.width() * next.fan_in() + o);
      }
      out.push_back(std::move(p));
    }
  }
  return out;
}

bool is_subset(const std::set<std::size_t>& support, const std::set<std::size_t>& allowed) {
  return std::includes(allowed.begin(), allowed.end(), support.begin(), support.end());
}

bool is_proportional_row(const Layer& layer, std::size_t a, std::size_t b) {
  // (W[a,:], b[a]) = lambda (W[b,:], b[b]) with lambda > 0.
  RationalVector ra = layer.weights.row(a), rb = layer.weights.row(b);
  ra.push_back(layer.bias[a]);
  rb.push_back(layer.bias[b]);
  std::optional<Rational> lambda;
  for (std::size_t c = 0; c < ra.size(); ++c) {
    if ((ra[c] == 0) != (rb[c] == 0)) return false;
    if (ra[c] == 0) continue;
    const Rational ratio = ra[c] / rb[c];
    if (lambda && *lambda != ratio) return false;
    lambda = ratio;
  }
  return lambda && *lambda > 0;
}

// Names the mechanism behind one extra kernel vector by its support.
void recognise_mechanism(const Network& network, const NeuronActivity& activity,
                         const std::vector<NeuronParameters>& parameters, ExtraKernelDirection& direction) {
  std::set<std::size_t> support;
  for (std::size_t c = 0; c < direction.vector.size(); ++c)
    if (direction.vector[c] != 0) support.insert(c);
  const std::size_t hidden = parameters.size();

  auto try_union = [&](auto&& qualifies, auto&& parameters_of, const char* name) {
    std::set<std::size_t> allowed;
    std::vector<std::size_t> neurons;
    for (std::size_t n = 0; n < hidden; ++n) {
      if (!qualifies(n)) continue;
      const std::set<std::size_t> own = parameters_of(n);
      bool touches = false;
      for (std::size_t c : own) touches = touches || support.contains(c);
      if (!touches) continue;
      allowed.insert(own.begin(), own.end());
      neurons.push_back(n);
    }
    if (neurons.empty() || !is_subset(support, allowed)) return false;
    direction.mechanism = name;
    direction.neurons = neurons;
    return true;
  };
  auto union_of = [&](std::size_t n, std::initializer_list<const std::set<std::size_t>*> parts) {
    std::set<std::size_t> all;
    for (const auto* part : parts) all.insert(part->begin(), part->end());
    (void)n;
    return all;
  };

  auto has_zero_outgoing = [&](std::size_t n) {
    // The neuron's layer and index within it, to read its outgoing weights.
    std::size_t layer = 0, index = n;
    while (index >= network.layers[layer].width()) index -= network.layers[layer++].width();
    const Layer& next = network.layers[layer + 1];
    for (std::size_t o = 0; o < next.width(); ++o)
      if (next.weights(o, index) != 0) return false;
    return true;
  };
  if (try_union(has_zero_outgoing, [&](std::size_t n) { return parameters[n].incoming; }, "zero-outgoing-weights"))
    return;
  if (try_union([&](std::size_t n) { return !activity.ever_on[n]; },
                [&](std::size_t n) { return union_of(n, {&parameters[n].incoming, &parameters[n].outgoing}); },
                "dead-neuron"))
    return;
  if (try_union([&](std::size_t n) { return !activity.ever_not_on[n]; },
                [&](std::size_t n) { return union_of(n, {&parameters[n].bias, &parameters[n].next_biases}); },
                "always-active-neuron"))
    return;
  // Duplicate neurons: same layer, positively proportional (w, b).
  std::vector<char> duplicated(hidden, 0);
  std::size_t first = 0;
  for (std::size_t k = 0; k + 1 < network.depth(); ++k) {
    const Layer& layer = network.layers[k];
    for (std::size_t a = 0; a < layer.width(); ++a)
      for (std::size_t b = a + 1; b < layer.width(); ++b)
        if (is_proportional_row(layer, a, b)) duplicated[first + a] = duplicated[first + b] = 1;
    first += layer.width();
  }
  try_union([&](std::size_t n) { return duplicated[n] != 0; },
            [&](std::size_t n) { return union_of(n, {&parameters[n].incoming, &parameters[n].outgoing}); },
            "duplicate-neurons");
}

}  // namespace

RationalMatrix extra_kernel_basis(const RationalMatrix& kernel, const RationalMatrix& scaling) {
  const RationalMatrix scaling_basis = row_space_basis_exact(scaling);
  std::vector<std::size_t> pivots;
  for (std::size_t r = 0; r < scaling_basis.rows(); ++r) {
    std::size_t c = 0;
    while (scaling_basis(r, c) == 0) ++c;
    pivots.push_back(c);
  }
  RationalMatrix reduced = kernel;
  for (std::size_t r = 0; r < reduced.rows(); ++r)
    for (std::size_t s = 0; s < pivots.size(); ++s) {
      const Rational factor = reduced(r, pivots[s]);
      if (factor == 0) continue;
      for (std::size_t c = 0; c < reduced.cols(); ++c) reduced(r, c) -= factor * scaling_basis(s, c);
    }
  return row_space_basis_exact(reduced);
}

std::size_t batch_functional_dimension(const Network& network, const std::vector<RationalVector>& points) {
  std::vector<RationalMatrix> blocks;
  for (std::size_t i = 0; i < points.size(); ++i) {
    try {
      blocks.push_back(parameter_jacobian_exact(network, points[i]));
    } catch (const input_error& fault) {
      throw input_error("point " + std::to_string(i) + ": " + fault.what());
    }
  }
  return rank_exact(stack_rows(blocks, network.parametric_dimension()));
}

FunctionalDimensionResult certify_functional_dimension(const Network& network, const Domain& domain,
                                                       const FunctionalDimensionOptions& options) {
  const auto started = std::chrono::steady_clock::now();
  FunctionalDimensionResult result;
  const std::size_t parameters = network.parametric_dimension();
  result.parametric_dimension = parameters;
  const RationalMatrix scaling = scaling_directions(network);
  result.scaling_bound = scaling_bound(network);

  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  ModularRowBasis basis(modular.prime, parameters);
  std::vector<ActivationPattern> contributing;
  std::vector<ActivationPattern> smooth;
  NeuronActivity activity(network.relu_neuron_count());

  WalkOptions walk_options = options.walk;
  walk_options.on_region = [&](const Region& region) {
    ++result.regions_walked;
    activity.record(region.pattern);
    if (!region.nonsmooth_neurons.empty()) return true;  // no smooth points: no rows
    smooth.push_back(region.pattern);
    const ModularMatrix rows = coefficient_blocks_mod(modular, region.pattern);
    bool rose = false;
    for (std::size_t r = 0; r < rows.rows(); ++r) rose = basis.add_row(rows.row(r)) || rose;
    if (rose) contributing.push_back(region.pattern);
    if (options.stop_at_scaling_bound && basis.rank() == result.scaling_bound) {
      result.early_stop = true;
      return false;
    }
    return true;
  };
  result.walk = walk_regions(network, domain, walk_options);
  result.walk_complete = result.walk.complete;
  result.nonsmooth_regions = result.walk.nonsmooth_regions;

  auto exact_rows_of = [&](const std::vector<ActivationPattern>& patterns) {
    std::vector<RationalMatrix> blocks;
    for (const auto& pattern : patterns) blocks.push_back(coefficient_blocks(network, pattern));
    return stack_rows(blocks, parameters);
  };

  if (result.early_stop) {
    // Lower: the kept rows' nonsingular minor mod p. Upper: the scaling kernel.
    result.lower_bound = result.upper_bound = result.scaling_bound;
    result.certified = true;
  } else if (result.walk.certified) {
    // Upper bound from an exact kernel of the contributing rows, checked
    // against every smooth region; a region that fails adds its rows.
    RationalMatrix rows = exact_rows_of(contributing);
    const ModularNetwork screen = reduce_modulo_some_prime(network, screening_prime());
    for (;;) {
      const RationalMatrix kernel = kernel_basis_exact(rows);
      const std::optional<ModularMatrix> kernel_mod = reduce_modulo(kernel, screen.prime);
      std::optional<ActivationPattern> failing;
      for (const auto& pattern : smooth) {
        if (kernel.rows() == 0) break;
        if (kernel_mod && !is_annihilated_mod(coefficient_blocks_mod(screen, pattern), *kernel_mod, screen.prime)) {
          failing = pattern;
          break;
        }
        if (!is_annihilated_exact(coefficient_blocks(network, pattern), kernel)) {
          failing = pattern;
          break;
        }
      }
      if (!failing) {
        result.kernel = kernel;
        break;
      }
      contributing.push_back(*failing);
      rows = exact_rows_of(contributing);
    }
    // kernel_basis_exact proves both sides: every kernel row annihilates the
    // rows exactly (rank <= D - k) and the rows' rank mod p is D - k (rank >= D - k).
    result.lower_bound = parameters - result.kernel.rows();
    result.upper_bound = parameters - result.kernel.rows();
    result.certified = result.lower_bound == result.upper_bound;
    if (options.keep_rows) result.rows = rows;
  } else {
    result.lower_bound = basis.rank();
    result.upper_bound = result.scaling_bound;
    result.certified = result.lower_bound == result.upper_bound;
  }
  if (result.certified) result.functional_dimension = result.lower_bound;
  if (options.keep_rows && result.rows.rows() == 0 && !contributing.empty()) result.rows = exact_rows_of(contributing);
  result.regions_contributing = contributing.size();

  if (result.kernel.rows() > 0) {
    const RationalMatrix extra = extra_kernel_basis(result.kernel, scaling);
    const auto neuron_parameters = hidden_neuron_parameters(network);
    for (std::size_t r = 0; r < extra.rows(); ++r) {
      ExtraKernelDirection direction{extra.row(r), "", {}};
      recognise_mechanism(network, activity, neuron_parameters, direction);
      result.extra_kernel.push_back(std::move(direction));
    }
  }
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return result;
}

}  // namespace pleat
