#include "enumerate/detail/integer_check.hpp"

#include "core/stop.hpp"
#include "enumerate/detail/thread_state.hpp"

#include <algorithm>
#include <array>
#include <atomic>
#include <type_traits>

namespace pleat::detail {
namespace {

__extension__ typedef unsigned __int128 Wide;

// value modulo 2^128 (two's complement for a negative value).
Wide wide_residue(const Integer& value) {
  const mpz_srcptr z = value.get_mpz_t();
  static_assert(sizeof(mp_limb_t) == 8, "64-bit GMP limbs");
  const Wide magnitude = (static_cast<Wide>(mpz_getlimbn(z, 1)) << 64) | mpz_getlimbn(z, 0);
  return sgn(value) < 0 ? -magnitude : magnitude;
}

// value modulo 2^(64 n), n limbs appended to out (two's complement).
void append_limbs(const Integer& value, std::size_t n, std::vector<std::uint64_t>& out) {
  const mpz_srcptr z = value.get_mpz_t();
  const std::size_t first = out.size();
  for (std::size_t i = 0; i < n; ++i) out.push_back(mpz_getlimbn(z, static_cast<mp_size_t>(i)));
  if (sgn(value) >= 0) return;
  std::uint64_t carry = 1;  // -x = ~x + 1
  for (std::size_t i = first; i < out.size(); ++i) {
    out[i] = ~out[i] + carry;
    carry = carry && out[i] == 0 ? 1 : 0;
  }
}

// From this many limbs GMP's assembly products (mpn_addmul_1, mpn_submul_1:
// about 1.5 cycles a limb) beat the loops below despite the calls.
constexpr std::size_t mpn_from_limbs = 4;

static_assert(std::is_same_v<mp_limb_t, std::uint64_t>, "64-bit GMP limbs");

// acc += e F modulo 2^(64 n) by GMP's products: acc -= e |F| for a negative
// F. The limbs carried out of the top are dropped, which is the reduction
// modulo 2^(64 n) (e 2^64 high modulo 2^(64 n) needs e's low n - 1 limbs).
inline void add_product_by_mpn(std::uint64_t* acc, const std::uint64_t* e, std::size_t n, Wide f) {
  if (f == 0) return;
  const bool negative = (f >> 127) != 0;
  const Wide magnitude = negative ? -f : f;
  const auto low = static_cast<mp_limb_t>(magnitude), high = static_cast<mp_limb_t>(magnitude >> 64);
  const auto size = static_cast<mp_size_t>(n);
  if (negative) {
    if (low != 0) mpn_submul_1(acc, e, size, low);
    if (high != 0) mpn_submul_1(acc + 1, e, size - 1, high);
  } else {
    if (low != 0) mpn_addmul_1(acc, e, size, low);
    if (high != 0) mpn_addmul_1(acc + 1, e, size - 1, high);
  }
}

// acc += e F modulo 2^(64 n): e n limbs (two's complement), F the exact
// integer |F| < 2^127 in two's complement modulo 2^128. Sign-extended, F is
// its 128 bits as unsigned minus 2^128 when negative.
[[gnu::always_inline]] inline void add_product(std::uint64_t* acc, const std::uint64_t* e, std::size_t n, Wide f) {
  if (n >= mpn_from_limbs) {
    add_product_by_mpn(acc, e, n, f);
    return;
  }
  const auto low = static_cast<std::uint64_t>(f), high = static_cast<std::uint64_t>(f >> 64);
  std::uint64_t carry = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const Wide t = static_cast<Wide>(e[i]) * low + acc[i] + carry;
    acc[i] = static_cast<std::uint64_t>(t);
    carry = static_cast<std::uint64_t>(t >> 64);
  }
  if (n < 2 || high == 0) return;
  carry = 0;
  for (std::size_t i = 0; i + 1 < n; ++i) {
    const Wide t = static_cast<Wide>(e[i]) * high + acc[i + 1] + carry;
    acc[i + 1] = static_cast<std::uint64_t>(t);
    carry = static_cast<std::uint64_t>(t >> 64);
  }
  if ((high >> 63) == 0 || n < 3) return;
  std::uint64_t borrow = 0;  // acc -= e 2^128
  for (std::size_t i = 0; i + 2 < n; ++i) {
    const std::uint64_t before = acc[i + 2];
    const std::uint64_t after = before - e[i] - borrow;
    borrow = (before < e[i] || (before == e[i] && borrow)) ? 1 : 0;
    acc[i + 2] = after;
  }
}

// X_{k+1}[i] = L^(k+1) b_k[i] + sum_j (L W_k[i,j]) X_k[j] (offset, then
// the n0 slopes) at the rows i given, the sums over the inputs j given
// (modulo 2^128). Inputs: n0 when known at compile time (1 to 3: the
// slopes' sums then stay in registers), else 0 (n0 read at run time).
template <std::size_t Inputs>
void layer_inputs(const Wide* weights, std::size_t fan_in, const Wide* bias, const std::vector<std::size_t>& rows,
                  const std::vector<std::size_t>& inputs, const Wide* in_offset, const Wide* in_linear, Wide* offset,
                  Wide* linear, std::size_t n0_at_run_time) {
  const std::size_t n0 = Inputs > 0 ? Inputs : n0_at_run_time;
  for (std::size_t i : rows) {
    const Wide* row = weights + i * fan_in;
    Wide sum = bias[i];
    if constexpr (Inputs > 0) {
      std::array<Wide, Inputs> slopes{};
      for (std::size_t j : inputs) {
        const Wide w = row[j];
        sum += w * in_offset[j];
        for (std::size_t t = 0; t < Inputs; ++t) slopes[t] += w * in_linear[j * Inputs + t];
      }
      for (std::size_t t = 0; t < Inputs; ++t) linear[i * Inputs + t] = slopes[t];
    } else {
      Wide* slopes = linear + i * n0;
      for (std::size_t j : inputs) {
        const Wide w = row[j];
        sum += w * in_offset[j];
        for (std::size_t t = 0; t < n0; ++t) slopes[t] += w * in_linear[j * n0 + t];
      }
    }
    offset[i] = sum;
  }
}

}  // namespace

// One thread's layer inputs X_k (offset: one per input; linear: n0 slopes
// per input) and signals H_k (nd x width_k), modulo 2^128, and which
// neurons pass; buffers reused from one region to the next.
struct IntegerCheck::Factors {
  std::vector<std::vector<Wide>> offset, linear, signal;
  std::vector<std::vector<std::size_t>> passing;
  // computed[k][i]: X_k[i] holds its value (else it is 0); and, for the
  // first layer recomputed, the rows that were not computed before.
  std::vector<std::vector<char>> computed;
  std::vector<char> wanted;
  std::vector<std::size_t> fresh;
  std::vector<std::uint64_t> sums;  // (n0 + 1) accumulators of n limbs
  std::vector<std::uint64_t> group;  // a group's S (Run::group_end), n limbs
  std::vector<std::size_t> rows;    // the passing neurons whose X_{forward_to} a term reads
  std::vector<std::size_t> signal_rows;  // the passing neurons whose H_{backward_to} a term reads
};

bool IntegerCheck::applies(const CheckScale& check_scale) {
  return std::all_of(check_scale.scaled_bounds.begin(), check_scale.scaled_bounds.end(),
                     [](const Integer& bound) { return mpz_sizeinbase(bound.get_mpz_t(), 2) <= 127; });
}

IntegerCheck::IntegerCheck(const Network& network, const CheckScale& check_scale, const std::vector<Entries>& vectors,
                           const std::vector<Integer>& bounds)
    : depth_(network.depth()), n0_(network.input_dim), nd_(network.output_dim()),
      output_relu_(network.has_output_relu()) {
  static std::atomic<std::uint64_t> checks{0};
  id_ = ++checks;
  const Integer& lcm = check_scale.lcm;
  Integer power = 1;  // L^k
  const Integer one = 1;
  // L^k L value = L^k (L / den) num, an integer, modulo 2^128 (`power`
  // L^k's residue). With L below 2^128, L / den is a word division and the
  // products are taken modulo 2^128 as they are: the same residue as GMP's
  // exact product (used when L is larger), without an allocation per
  // parameter.
  const bool lcm_fits = mpz_sizeinbase(lcm.get_mpz_t(), 2) <= 128;
  const Wide lcm_word = wide_residue(lcm);
  auto scaled = [&](const Rational& value, const Integer& power_k) {
    if (lcm_fits) return wide_residue(power_k) * (lcm_word / wide_residue(value.get_den())) * wide_residue(value.get_num());
    Integer out;
    mpz_divexact(out.get_mpz_t(), lcm.get_mpz_t(), value.get_den_mpz_t());
    out *= value.get_num();
    out *= power_k;
    return wide_residue(out);
  };
  struct Role {
    std::size_t layer, neuron, input;
  };
  std::vector<Role> roles;  // of each column
  for (std::size_t k = 0; k < depth_; ++k) {
    const Layer& layer = network.layers[k];
    widths_.push_back(layer.width());
    powers_.push_back(wide_residue(power));
    const Integer next_power = power * lcm;
    weights_.emplace_back();
    for (std::size_t i = 0; i < layer.width(); ++i)
      for (std::size_t j = 0; j < layer.fan_in(); ++j) {
        weights_.back().push_back(scaled(layer.weights(i, j), one));
        roles.push_back({k, i, j});
      }
    biases_.emplace_back();
    for (std::size_t i = 0; i < layer.width(); ++i) {
      biases_.back().push_back(scaled(layer.bias[i], power));
      roles.push_back({k, i, bias});
    }
    if (k + 1 < depth_ || output_relu_) neuron_layer_.insert(neuron_layer_.end(), layer.width(), k);
    power = next_power;
  }
  backward_to_ = depth_;
  for (std::size_t v = 0; v < vectors.size(); ++v) {
    // A column whose bound is 0 is 0 on every pattern: no term.
    Entries entries;
    for (const auto& [c, value] : vectors[v])
      if (sgn(check_scale.scaled_bounds[c]) != 0) entries.emplace_back(c, value);
    if (entries.empty()) continue;
    for (const auto& [c, value] : entries) {
      if (roles[c].input != bias) forward_to_ = std::max(forward_to_, roles[c].layer);
      backward_to_ = std::min(backward_to_, roles[c].layer);
    }
    if (entries.size() == 1) {
      const Role& role = roles[entries.front().first];
      units_.push_back({v, role.layer, role.neuron, role.input});
      continue;
    }
    Vector vector{v, mpz_sizeinbase(bounds[v].get_mpz_t(), 2) / 64 + 1, {}};
    most_limbs_ = std::max(most_limbs_, vector.limbs);
    for (const auto& [c, value] : entries) {
      const Role& role = roles[c];
      if (vector.runs.empty() || vector.runs.back().layer != role.layer || vector.runs.back().neuron != role.neuron)
        vector.runs.push_back({role.layer, role.neuron, terms_.size(), terms_.size()});
      terms_.push_back({role.input, limbs_.size()});
      append_limbs(value, vector.limbs, limbs_);
      ++vector.runs.back().last;
    }
    vector.one_input = std::all_of(vector.runs.begin(), vector.runs.end(), [&](const Run& run) {
      const Run& first = vector.runs.front();
      return run.last - run.first == 1 && run.layer == first.layer && terms_[run.first].input != bias &&
             terms_[run.first].input == terms_[first.first].input;
    });
    auto is_single_weight = [&](const Run& run) { return run.last - run.first == 1 && terms_[run.first].input != bias; };
    for (std::size_t r = 0; r < vector.runs.size() && !vector.one_input;) {
      std::size_t end = r + 1;
      if (is_single_weight(vector.runs[r]))
        while (end < vector.runs.size() && is_single_weight(vector.runs[end]) &&
               vector.runs[end].layer == vector.runs[r].layer &&
               terms_[vector.runs[end].first].input == terms_[vector.runs[r].first].input)
          ++end;
      if (end - r >= 2) vector.runs[r].group_end = end;
      r = end;
    }
    if (vector.one_input) {
      vector.memo = memo_signals_;
      memo_signals_ += vector.runs.size() + 1;  // the signals, then whether they are set
    }
    for (Run& run : vector.runs)
      if (run.last - run.first >= 2 && run.layer + 1 < depth_) {
        run.slot = cached_runs_++;
        run.cache = cache_limbs_;
        cache_limbs_ += (n0_ + 1) * vector.limbs;
      }
    vectors_.push_back(std::move(vector));
  }
  // The inputs of layer forward_to that a term reads (X_{forward_to} feeds no later layer).
  read_last_.assign(forward_to_ > 0 ? widths_[forward_to_ - 1] : 0, 0);
  for (const Vector& vector : vectors_)
    for (const Run& run : vector.runs)
      if (run.layer == forward_to_ && forward_to_ > 0)
        for (std::size_t e = run.first; e < run.last; ++e)
          if (terms_[e].input != bias) read_last_[terms_[e].input] = 1;
  for (const Unit& unit : units_)
    if (unit.layer == forward_to_ && forward_to_ > 0 && unit.input != bias) read_last_[unit.input] = 1;
  // The neurons of layer backward_to whose signal a term reads (H_{backward_to} feeds no earlier layer).
  read_first_.assign(backward_to_ < depth_ ? widths_[backward_to_] : 0, 0);
  for (const Vector& vector : vectors_)
    for (const Run& run : vector.runs)
      if (run.layer == backward_to_) read_first_[run.neuron] = 1;
  for (const Unit& unit : units_)
    if (unit.layer == backward_to_) read_first_[unit.neuron] = 1;
}

void IntegerCheck::compute_factors(const ActivationPattern& pattern, Factors& factors, std::size_t reuse_below) const {
  factors.passing.resize(depth_);
  factors.offset.resize(depth_);
  factors.linear.resize(depth_);
  factors.signal.resize(depth_);
  factors.computed.resize(depth_);
  // The layers below reuse_below have the last pattern's states: their
  // passing neurons too. Branch-free: on and off are mixed.
  for (std::size_t k = 0, neuron = 0; k < depth_; ++k) {
    const bool has_relu = k + 1 < depth_ || output_relu_;
    if (k >= reuse_below) {
      std::vector<std::size_t>& passing = factors.passing[k];
      passing.resize(widths_[k]);
      std::size_t count = 0;
      for (std::size_t i = 0; i < widths_[k]; ++i) {
        passing[count] = i;
        count += !has_relu || pattern.states[neuron + i] == NeuronState::on ? 1 : 0;
      }
      passing.resize(count);
    }
    neuron += has_relu ? widths_[k] : 0;
  }
  // X_0: the input itself (offset 0, slopes the identity).
  factors.offset[0].assign(n0_, 0);
  factors.linear[0].assign(n0_ * n0_, 0);
  for (std::size_t t = 0; t < n0_; ++t) factors.linear[0][t * n0_ + t] = 1;
  // X_{k+1}[i] = L^(k+1) b_k[i] + sum_j (L W_k[i,j]) X_k[j] at the passing
  // i; in the last layer computed, X_{forward_to}, only at the i a term reads.
  for (std::size_t k = reuse_below; k < forward_to_; ++k) {
    std::vector<Wide>& offset = factors.offset[k + 1];
    std::vector<Wide>& linear = factors.linear[k + 1];
    std::vector<char>& computed = factors.computed[k + 1];
    const std::vector<std::size_t>* rows = &factors.passing[k];
    if (k + 1 == forward_to_) {
      factors.rows.clear();
      for (std::size_t i : factors.passing[k])
        if (read_last_[i]) factors.rows.push_back(i);
      rows = &factors.rows;
    }
    if (k == reuse_below && k > 0 && computed.size() == widths_[k]) {
      // X_k and layer k - 1's states are the last pattern's (reuse_below):
      // a row computed for it has the same value now. Only the rows newly
      // wanted are computed, and those no longer wanted set to 0.
      factors.fresh.clear();
      std::vector<char>& wanted = factors.wanted;
      wanted.assign(widths_[k], 0);
      for (std::size_t i : *rows) wanted[i] = 1;
      for (std::size_t i = 0; i < widths_[k]; ++i) {
        if (computed[i] && !wanted[i]) {
          offset[i] = 0;
          std::fill(linear.begin() + static_cast<std::ptrdiff_t>(i * n0_),
                    linear.begin() + static_cast<std::ptrdiff_t>((i + 1) * n0_), Wide{0});
        } else if (!computed[i] && wanted[i]) {
          factors.fresh.push_back(i);
        }
        computed[i] = wanted[i];
      }
      rows = &factors.fresh;
    } else {
      offset.assign(widths_[k], 0);
      linear.assign(widths_[k] * n0_, 0);
      computed.assign(widths_[k], 0);
      for (std::size_t i : *rows) computed[i] = 1;
    }
    if (k == 0) {  // from the input itself: offset L b_0[i], slopes L W_0[i,:], no products
      for (std::size_t i : *rows) {
        offset[i] = biases_[0][i];
        for (std::size_t t = 0; t < n0_; ++t) linear[i * n0_ + t] = weights_[0][i * n0_ + t];
      }
      continue;
    }
    auto layer = [&]<std::size_t Inputs>() {
      layer_inputs<Inputs>(weights_[k].data(), widths_[k - 1], biases_[k].data(), *rows, factors.passing[k - 1],
                           factors.offset[k].data(), factors.linear[k].data(), offset.data(), linear.data(), n0_);
    };
    switch (n0_) {
      case 1: layer.template operator()<1>(); break;
      case 2: layer.template operator()<2>(); break;
      case 3: layer.template operator()<3>(); break;
      default: layer.template operator()<0>();
    }
  }
  // H_{d-1} = I at the passing outputs; H_k[o,i] = sum_m H_{k+1}[o,m] (L W_{k+1}[m,i]) at the passing i;
  // in the last layer computed, H_{backward_to}, only at the i a term reads (the others stay 0, unread).
  for (std::size_t k = depth_; k-- > backward_to_;) {
    std::vector<Wide>& signal = factors.signal[k];
    signal.assign(nd_ * widths_[k], 0);
    if (k + 1 == depth_) {
      for (std::size_t o : factors.passing[k]) signal[o * widths_[k] + o] = 1;
      continue;
    }
    const std::vector<Wide>& next = factors.signal[k + 1];
    const std::size_t next_width = widths_[k + 1], width = widths_[k];
    const std::vector<std::size_t>* rows = &factors.passing[k];
    if (k == backward_to_) {
      factors.signal_rows.clear();
      for (std::size_t i : factors.passing[k])
        if (read_first_[i]) factors.signal_rows.push_back(i);
      rows = &factors.signal_rows;
    }
    for (std::size_t o = 0; o < nd_; ++o)
      for (std::size_t i : *rows) {
        Wide sum = 0;
        for (std::size_t m : factors.passing[k + 1]) sum += next[o * next_width + m] * weights_[k + 1][m * width + i];
        signal[o * width + i] = sum;
      }
  }
}

// M_t = sum over the run's terms of e_c X_k[j]_t, and e_c L^k on the offset
// at the bias, modulo 2^(64 n). Every X_k[j]_t and L^k a term reads is
// exact in 128 bits: its column's bound B_c = max H times max X (or L^k) is
// positive (kept) and below 2^127, and max H is a positive integer.
void IntegerCheck::run_sums(const Run& run, std::size_t n, const Wide* offsets, const Wide* linear,
                            std::uint64_t* m) const {
  std::fill(m, m + (n0_ + 1) * n, std::uint64_t{0});
  for (std::size_t e = run.first; e < run.last; ++e) {
    const Term& term = terms_[e];
    const std::uint64_t* limbs = limbs_.data() + term.limbs;
    if (term.input == bias) {
      add_product(m, limbs, n, powers_[run.layer]);
      continue;
    }
    const Wide* slopes = linear + term.input * n0_;
    if (offsets[term.input] == 0 && std::all_of(slopes, slopes + n0_, [](Wide x) { return x == 0; })) continue;
    add_product(m, limbs, n, offsets[term.input]);
    for (std::size_t t = 0; t < n0_; ++t) add_product(m + (t + 1) * n, limbs, n, slopes[t]);
  }
}

bool IntegerCheck::annihilates(const ActivationPattern& pattern, const std::vector<char>& live) const {
  // This thread's factors, and its runs' sums M_t (Run) with the call
  // (generation) each was computed at and the last call that changed each
  // layer's inputs.
  struct Reuse {
    std::uint64_t id = 0;
    Factors factors;
    std::vector<NeuronState> last;
    std::uint64_t generation = 0;
    std::vector<std::uint64_t> computed, changed, runs;
    std::vector<Wide> passed;  // the one-input vectors' signals at their last pass (Vector::memo)
  };
  Reuse& reuse = thread_state<Reuse>();
  if (reuse.id != id_) {
    reuse.id = id_;
    reuse.last.clear();
    reuse.generation = 1;
    reuse.computed.assign(cached_runs_, 0);  // before every change: computed when first needed
    reuse.changed.assign(depth_ + 1, 1);
    reuse.runs.assign(cache_limbs_, 0);
    reuse.passed.assign(nd_ * memo_signals_, 0);  // none set
  }
  // The layer inputs before the first neuron that differs from the last
  // pattern's are still valid.
  std::size_t same = 0;
  if (reuse.last.size() == pattern.states.size()) {
    std::size_t n = 0;
    while (n < reuse.last.size() && reuse.last[n] == pattern.states[n]) ++n;
    same = n < neuron_layer_.size() ? neuron_layer_[n] : depth_;
  }
  reuse.last.clear();  // invalid until the factors are complete
  ++reuse.generation;
  for (std::size_t k = same + 1; k <= depth_; ++k) reuse.changed[k] = reuse.generation;  // X_k recomputed
  poll_stop();
  Factors& factors = reuse.factors;
  compute_factors(pattern, factors, same);
  factors.group.resize(most_limbs_);
  reuse.last = pattern.states;
  const std::size_t n0 = n0_;
  for (std::size_t o = 0; o < nd_; ++o) {
    for (const Unit& unit : units_) {
      if (!live[unit.index]) continue;
      const Wide h = factors.signal[unit.layer][o * widths_[unit.layer] + unit.neuron];
      if (h == 0) continue;  // every F = h x is 0 modulo 2^128, hence 0
      if (unit.input == bias) {
        if (h * powers_[unit.layer] != 0) return false;
        continue;
      }
      if (h * factors.offset[unit.layer][unit.input] != 0) return false;
      for (std::size_t t = 0; t < n0; ++t)
        if (h * factors.linear[unit.layer][unit.input * n0 + t] != 0) return false;
    }
    for (const Vector& vector : vectors_) {
      if (!live[vector.index]) continue;
      const std::size_t n = vector.limbs;
      std::vector<std::uint64_t>& sums = factors.sums;
      if (vector.one_input) {
        // N_t = X_k[j]_t S (Vector::one_input): N_t at the first t with
        // X_k[j]_t != 0 decides. Each product h x is the exact F of its
        // column, as below.
        const Run& first = vector.runs.front();
        const std::size_t j = terms_[first.first].input;
        const Wide* slopes = factors.linear[first.layer].data() + j * n0;
        Wide x = factors.offset[first.layer][j];
        for (std::size_t t = 0; x == 0 && t < n0; ++t) x = slopes[t];
        if (x == 0) continue;  // X_k[j] = 0: every N_t is 0
        // The signals of this vector's last pass: S = 0 (Vector::memo).
        Wide* passed = reuse.passed.data() + o * memo_signals_ + vector.memo;
        const std::size_t runs = vector.runs.size();
        bool is_passed = passed[runs] != 0;
        for (std::size_t r = 0; r < runs && is_passed; ++r)
          is_passed = passed[r] == factors.signal[vector.runs[r].layer][o * widths_[vector.runs[r].layer] + vector.runs[r].neuron];
        if (is_passed) continue;
        passed[runs] = 0;  // set again only once these signals pass
        sums.assign(n, 0);
        for (std::size_t r = 0; r < runs; ++r) {
          const Run& run = vector.runs[r];
          const Wide h = factors.signal[run.layer][o * widths_[run.layer] + run.neuron];
          passed[r] = h;
          if (h != 0) add_product(sums.data(), limbs_.data() + terms_[run.first].limbs, n, h * x);
        }
        if (std::any_of(sums.begin(), sums.end(), [](std::uint64_t limb) { return limb != 0; })) return false;
        passed[runs] = 1;
        continue;
      }
      sums.assign((n0 + 1) * n, 0);
      for (std::size_t r = 0; r < vector.runs.size(); ++r) {
        const Run& run = vector.runs[r];
        if (run.group_end != 0) {
          // X_k[j]_t S (Run::group_end): S modulo 2^(64 n) from the exact
          // signals (each below 2^127, as h below), then one product per t
          // with the exact X_k[j]_t (as in run_sums).
          const std::size_t j = terms_[run.first].input;
          const Wide* slopes = factors.linear[run.layer].data() + j * n0;
          const Wide x = factors.offset[run.layer][j];
          const std::size_t end = run.group_end;
          r = end - 1;
          if (x == 0 && std::all_of(slopes, slopes + n0, [](Wide value) { return value == 0; })) continue;
          std::uint64_t* s = factors.group.data();
          std::fill(s, s + n, std::uint64_t{0});
          for (std::size_t g = &run - vector.runs.data(); g < end; ++g) {
            const Run& single = vector.runs[g];
            const Wide h = factors.signal[single.layer][o * widths_[single.layer] + single.neuron];
            if (h != 0) add_product(s, limbs_.data() + terms_[single.first].limbs, n, h);
          }
          if (std::all_of(s, s + n, [](std::uint64_t limb) { return limb == 0; })) continue;
          add_product(sums.data(), s, n, x);
          for (std::size_t t = 0; t < n0; ++t) add_product(sums.data() + (t + 1) * n, s, n, slopes[t]);
          continue;
        }
        const Wide h = factors.signal[run.layer][o * widths_[run.layer] + run.neuron];
        if (h == 0) continue;
        const Wide* offsets = factors.offset[run.layer].data();
        const Wide* linear = factors.linear[run.layer].data();
        if (run.last - run.first >= 2 && run.layer + 1 < depth_) {
          std::uint64_t* m = reuse.runs.data() + run.cache;
          if (reuse.computed[run.slot] < reuse.changed[run.layer]) {
            run_sums(run, n, offsets, linear, m);
            reuse.computed[run.slot] = reuse.generation;
          }
          // h M_t: h is exact in 128 bits (|H| <= its bound <= B_c < 2^127 at the run's bias column).
          for (std::size_t t = 0; t <= n0; ++t) add_product(sums.data() + t * n, m + t * n, n, h);
          continue;
        }
        for (std::size_t e = run.first; e < run.last; ++e) {
          const Term& term = terms_[e];
          const std::uint64_t* limbs = limbs_.data() + term.limbs;
          if (term.input == bias) {
            add_product(sums.data(), limbs, n, h * powers_[run.layer]);
            continue;
          }
          // An input neuron off on the region (about half of them): X_k[j] is 0, no term.
          const Wide* slopes = linear + term.input * n0;
          if (offsets[term.input] == 0 && std::all_of(slopes, slopes + n0, [](Wide x) { return x == 0; })) continue;
          add_product(sums.data(), limbs, n, h * offsets[term.input]);
          for (std::size_t t = 0; t < n0; ++t) add_product(sums.data() + (t + 1) * n, limbs, n, h * slopes[t]);
        }
      }
      if (std::any_of(sums.begin(), sums.end(), [](std::uint64_t limb) { return limb != 0; })) return false;
    }
  }
  return true;
}

}  // namespace pleat::detail
