#include "core/filtered_sign.hpp"

#include <cmath>
#include <limits>

namespace pleat {
namespace {

constexpr double low_limit = 0x1p-300;
constexpr double high_limit = 0x1p300;
constexpr double unit_roundoff = 0x1p-53;

double trusted_or_nan(double image) {
  const double magnitude = std::fabs(image);
  if (magnitude >= low_limit && magnitude <= high_limit) return image;
  return std::numeric_limits<double>::quiet_NaN();
}

bool is_trusted(double image) {
  const double magnitude = std::fabs(image);
  return image == 0.0 || (magnitude >= low_limit && magnitude <= high_limit);
}

// The sign of a sum of `terms` products whose double values sum to `sum` and
// whose magnitudes sum to `magnitude` (see the header for the bound).
// extra: 9 for products of at most three images, 13 for four (see the header).
std::optional<int> decide(double sum, double magnitude, std::size_t terms, std::size_t extra = 9) {
  if (magnitude == 0.0) return 0;  // every product has a zero factor: exactly 0
  const double bound = 2.0 * static_cast<double>(terms + extra) * unit_roundoff * magnitude;
  if (sum > bound) return 1;
  if (sum < -bound) return -1;
  return std::nullopt;
}

}  // namespace

double filter_image(const Rational& value) {
  if (sgn(value) == 0) return 0.0;
  return trusted_or_nan(mpq_get_d(value.get_mpq_t()));
}

double filter_image(const Integer& value) {
  if (sgn(value) == 0) return 0.0;
  return trusted_or_nan(mpz_get_d(value.get_mpz_t()));
}

std::optional<int> filtered_affine_sign(const double* a, const double* x, std::size_t n, double c) {
  if (!is_trusted(c)) return std::nullopt;
  double sum = c;
  double magnitude = std::fabs(c);
  for (std::size_t k = 0; k < n; ++k) {
    if (!is_trusted(a[k]) || !is_trusted(x[k])) return std::nullopt;
    const double product = a[k] * x[k];
    sum += product;
    magnitude += std::fabs(product);
  }
  return decide(sum, magnitude, n + 1);
}

std::optional<int> filtered_determinant_sign(double a0, double a1, double b0, double b1) {
  if (!is_trusted(a0) || !is_trusted(a1) || !is_trusted(b0) || !is_trusted(b1)) return std::nullopt;
  const double left = a0 * b1;
  const double right = a1 * b0;
  return decide(left - right, std::fabs(left) + std::fabs(right), 2);
}

std::optional<int> filtered_determinant_sign(const double* a, const double* b, const double* c) {
  for (std::size_t k = 0; k < 3; ++k)
    if (!is_trusted(a[k]) || !is_trusted(b[k]) || !is_trusted(c[k])) return std::nullopt;
  // Six triple products (Leibniz), each of three images.
  const double products[6] = {a[0] * b[1] * c[2], a[1] * b[2] * c[0], a[2] * b[0] * c[1],
                              -a[2] * b[1] * c[0], -a[0] * b[2] * c[1], -a[1] * b[0] * c[2]};
  double sum = 0.0;
  double magnitude = 0.0;
  for (double product : products) {
    sum += product;
    magnitude += std::fabs(product);
  }
  return decide(sum, magnitude, 6);
}

std::optional<int> filtered_determinant_sign(const double* a, const double* b, const double* c, const double* d) {
  const double* rows[4] = {a, b, c, d};
  // Four factors: images within [2^-240, 2^240] keep every product normal.
  for (const double* row : rows)
    for (std::size_t k = 0; k < 4; ++k) {
      const double magnitude = std::fabs(row[k]);
      if (!is_trusted(row[k]) || (magnitude != 0.0 && (magnitude < 0x1p-240 || magnitude > 0x1p240)))
        return std::nullopt;
    }
  // Leibniz: 24 permutations of the columns, each a product of four images.
  static constexpr int permutations[24][4] = {
      {0, 1, 2, 3}, {0, 1, 3, 2}, {0, 2, 1, 3}, {0, 2, 3, 1}, {0, 3, 1, 2}, {0, 3, 2, 1},
      {1, 0, 2, 3}, {1, 0, 3, 2}, {1, 2, 0, 3}, {1, 2, 3, 0}, {1, 3, 0, 2}, {1, 3, 2, 0},
      {2, 0, 1, 3}, {2, 0, 3, 1}, {2, 1, 0, 3}, {2, 1, 3, 0}, {2, 3, 0, 1}, {2, 3, 1, 0},
      {3, 0, 1, 2}, {3, 0, 2, 1}, {3, 1, 0, 2}, {3, 1, 2, 0}, {3, 2, 0, 1}, {3, 2, 1, 0}};
  double sum = 0.0;
  double magnitude = 0.0;
  for (const auto& p : permutations) {
    int inversions = 0;
    for (int i = 0; i < 4; ++i)
      for (int j = i + 1; j < 4; ++j) inversions += p[i] > p[j];
    const double product = a[p[0]] * b[p[1]] * c[p[2]] * d[p[3]];
    sum += inversions % 2 ? -product : product;
    magnitude += std::fabs(product);
  }
  return decide(sum, magnitude, 24, 13);
}

}  // namespace pleat
