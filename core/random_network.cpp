// Reproducible random networks (derivation in the header).
#include "core/random_network.hpp"
#include "core/detail/json_tree.hpp"
#include "core/thread_caches.hpp"

#include <mpfr.h>
#include <nlohmann/json.hpp>

#include <memory>
#include <string>

namespace pleat {

namespace {

constexpr mpfr_prec_t working_precision = 128;
constexpr const char* generator_label = "pleat-random/1";

std::uint64_t splitmix64(std::uint64_t& state) {
  state += 0x9E3779B97F4A7C15ULL;
  std::uint64_t z = state;
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

std::uint64_t rotate_left(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

// An MPFR number at the working precision, freed on scope exit.
class Real {
 public:
  Real() {
    free_number_caches_at_thread_exit();  // mpfr_const_pi and mpfr_log cache per thread
    mpfr_init2(value_, working_precision);
  }
  ~Real() { mpfr_clear(value_); }
  Real(const Real&) = delete;
  Real& operator=(const Real&) = delete;
  mpfr_ptr get() { return value_; }
  mpfr_srcptr get() const { return value_; }

 private:
  mpfr_t value_;
};

// (word >> 11) + offset, divided by 2^53: exact in 128 bits.
void set_unit_uniform(Real& out, std::uint64_t word, unsigned offset) {
  const std::uint64_t top = (word >> 11) + offset;  // < 2^53 + 1, fits in 64 bits
  // Set via two halves so this does not depend on unsigned long being 64 bits.
  mpfr_set_ui(out.get(), static_cast<unsigned long>(top >> 32), MPFR_RNDN);
  mpfr_mul_2ui(out.get(), out.get(), 32, MPFR_RNDN);
  mpfr_add_ui(out.get(), out.get(), static_cast<unsigned long>(top & 0xFFFFFFFFULL), MPFR_RNDN);
  mpfr_div_2ui(out.get(), out.get(), 53, MPFR_RNDN);
}

// Standard normal by Box-Muller (cosine branch), two words.
void set_standard_normal(Real& out, RandomStream& stream) {
  Real u1, u2, radius, angle;
  set_unit_uniform(u1, stream.next_word(), 1);  // (0, 1]: log is finite
  set_unit_uniform(u2, stream.next_word(), 0);  // [0, 1)
  mpfr_log(radius.get(), u1.get(), MPFR_RNDN);
  mpfr_mul_si(radius.get(), radius.get(), -2, MPFR_RNDN);
  mpfr_sqrt(radius.get(), radius.get(), MPFR_RNDN);
  mpfr_const_pi(angle.get(), MPFR_RNDN);
  mpfr_mul_2ui(angle.get(), angle.get(), 1, MPFR_RNDN);
  mpfr_mul(angle.get(), angle.get(), u2.get(), MPFR_RNDN);
  mpfr_cos(angle.get(), angle.get(), MPFR_RNDN);
  mpfr_mul(out.get(), radius.get(), angle.get(), MPFR_RNDN);
}

// The exact decimal rational nearest to `value` with `digits` significant digits.
Rational round_to_decimal(const Real& value, int digits) {
  if (mpfr_zero_p(value.get())) return Rational(0);
  mpfr_exp_t exponent = 0;
  std::unique_ptr<char, void (*)(char*)> text(
      mpfr_get_str(nullptr, &exponent, 10, static_cast<std::size_t>(digits), value.get(),
                   MPFR_RNDN),
      mpfr_free_str);
  // value ~ 0.DIGITS * 10^exponent = DIGITS * 10^(exponent - digits).
  Rational result{Integer(text.get(), 10)};
  const long shift = static_cast<long>(exponent) - digits;
  Integer power;
  mpz_ui_pow_ui(power.get_mpz_t(), 10, static_cast<unsigned long>(shift < 0 ? -shift : shift));
  if (shift >= 0)
    result *= power;
  else
    result /= power;
  result.canonicalize();
  return result;
}

// sqrt(numerator / fan_in), rounded once per step.
void set_scale(Real& out, unsigned long numerator, std::size_t fan_in) {
  mpfr_set_ui(out.get(), numerator, MPFR_RNDN);
  mpfr_div_ui(out.get(), out.get(), static_cast<unsigned long>(fan_in), MPFR_RNDN);
  mpfr_sqrt(out.get(), out.get(), MPFR_RNDN);
}

struct Drawer {
  RandomStream stream;
  Initialization init;
  int digits;

  // One parameter of a layer with the given fan-in.
  Rational draw(std::size_t fan_in, bool is_bias) {
    Real value, scale;
    if (init == Initialization::he) {
      set_standard_normal(value, stream);
      set_scale(scale, is_bias ? 1 : 2, fan_in);
      mpfr_mul(value.get(), value.get(), scale.get(), MPFR_RNDN);
    } else {
      set_unit_uniform(value, stream.next_word(), 0);
      mpfr_mul_2ui(value.get(), value.get(), 1, MPFR_RNDN);  // exact
      mpfr_sub_ui(value.get(), value.get(), 1, MPFR_RNDN);    // exact
      set_scale(scale, 1, fan_in);
      mpfr_mul(value.get(), value.get(), scale.get(), MPFR_RNDN);
    }
    return round_to_decimal(value, digits);
  }

  Rational draw_bias(std::size_t fan_in) {
    for (;;) {
      Rational value = draw(fan_in, true);
      if (value != 0) return value;
    }
  }
};

std::string architecture_text(const std::vector<std::size_t>& architecture, char separator) {
  std::string text;
  for (std::size_t i = 0; i < architecture.size(); ++i) {
    if (i > 0) text += separator;
    text += std::to_string(architecture[i]);
  }
  return text;
}

}  // namespace

RandomStream::RandomStream(std::uint64_t seed, std::uint64_t sample) {
  std::uint64_t state = seed;
  state = splitmix64(state) ^ sample;
  for (std::uint64_t& word : state_) word = splitmix64(state);
  // An all-zero xoshiro state would be stuck at zero; four splitmix64 outputs
  // in a row are never all zero (splitmix64 is a bijection of distinct states).
}

std::uint64_t RandomStream::next_word() {
  const std::uint64_t result = rotate_left(state_[1] * 5, 7) * 9;
  const std::uint64_t t = state_[1] << 17;
  state_[2] ^= state_[0];
  state_[3] ^= state_[1];
  state_[1] ^= state_[2];
  state_[0] ^= state_[3];
  state_[2] ^= t;
  state_[3] = rotate_left(state_[3], 45);
  return result;
}

std::string_view initialization_name(Initialization init) {
  return init == Initialization::he ? "he" : "uniform";
}

Initialization parse_initialization(std::string_view text) {
  if (text == "he") return Initialization::he;
  if (text == "uniform") return Initialization::uniform;
  // Quoted as a JSON string: the text may come from a file (a survey's
  // header), and a newline in it must not print a line of its own.
  throw input_error("unknown initialization " + detail::escaped(std::string(text)) + " (expected he or uniform)");
}

Network random_network(const std::vector<std::size_t>& architecture, std::uint64_t seed,
                       std::uint64_t sample, Initialization init, int digits) {
  if (architecture.size() < 2)
    throw usage_error("random_network: the architecture needs an input width and at least one layer");
  for (std::size_t width : architecture)
    if (width == 0) throw usage_error("random_network: every width must be positive");
  if (digits < 1 || digits > 40)
    throw usage_error("random_network: digits must be between 1 and 40");

  Drawer drawer{RandomStream(seed, sample), init, digits};
  Network network;
  network.input_dim = architecture[0];
  for (std::size_t k = 1; k < architecture.size(); ++k) {
    const std::size_t fan_in = architecture[k - 1];
    Layer layer;
    layer.weights = RationalMatrix(architecture[k], fan_in);
    for (std::size_t r = 0; r < layer.weights.rows(); ++r)
      for (std::size_t c = 0; c < fan_in; ++c) layer.weights(r, c) = drawer.draw(fan_in, false);
    for (std::size_t r = 0; r < architecture[k]; ++r) layer.bias.push_back(drawer.draw_bias(fan_in));
    layer.activation = k + 1 == architecture.size() ? Activation::linear : Activation::relu;
    network.layers.push_back(std::move(layer));
  }

  network.name = "random " + architecture_text(architecture, '-') + " seed " +
                 std::to_string(seed) + " sample " + std::to_string(sample);
  nlohmann::ordered_json meta;
  meta["generator"] = generator_label;
  meta["architecture"] = architecture;
  meta["seed"] = seed;
  meta["sample"] = sample;
  meta["init"] = std::string(initialization_name(init));
  meta["digits"] = digits;
  network.meta_json = meta.dump();
  return network;
}

}  // namespace pleat
