// Dense row-major matrices over an exact or a double scalar. The arithmetic is
// in the type: RationalMatrix is exact, DoubleMatrix is a filter/estimate.
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <iterator>
#include <utility>
#include <vector>

namespace pleat {

template <class T>
class Matrix {
 public:
  Matrix() = default;
  // Zeros, value-initialised: for Rational one mpq_init an entry, where
  // copying a T(0) allocates the numerator's and the denominator's limbs
  // (a 3012 x 3441 matrix: 0.9 GB against 0.6 GB resident, measured).
  Matrix(std::size_t rows, std::size_t cols) : rows_(rows), cols_(cols), data_(rows * cols) {}

  std::size_t rows() const { return rows_; }
  std::size_t cols() const { return cols_; }
  bool empty() const { return rows_ == 0 || cols_ == 0; }

  // Precondition: r < rows(), c < cols() (unchecked, as for std::vector).
  T& operator()(std::size_t r, std::size_t c) { return data_[r * cols_ + c]; }
  const T& operator()(std::size_t r, std::size_t c) const { return data_[r * cols_ + c]; }

  // The row as a copy (rows are short: at most a few hundred entries).
  std::vector<T> row(std::size_t r) const {
    return std::vector<T>(data_.begin() + static_cast<std::ptrdiff_t>(r * cols_),
                          data_.begin() + static_cast<std::ptrdiff_t>((r + 1) * cols_));
  }
  void set_row(std::size_t r, const std::vector<T>& values) {
    for (std::size_t c = 0; c < cols_; ++c) (*this)(r, c) = values[c];
  }

  // Appends a row (precondition: values.size() == cols(), unchecked), so
  // that a large matrix can be built row by row between stop polls.
  void append_row(std::vector<T>&& values) {
    data_.insert(data_.end(), std::make_move_iterator(values.begin()), std::make_move_iterator(values.end()));
    ++rows_;
  }
  void reserve_rows(std::size_t rows) { data_.reserve(rows * cols_); }
  // Appends other's rows, moved, and leaves other empty (precondition:
  // other.cols() == cols(), unchecked).
  void append_rows(Matrix&& other) {
    data_.insert(data_.end(), std::make_move_iterator(other.data_.begin()), std::make_move_iterator(other.data_.end()));
    rows_ += other.rows_;
    other = Matrix();
  }

  friend bool operator==(const Matrix& a, const Matrix& b) {
    return a.rows_ == b.rows_ && a.cols_ == b.cols_ && a.data_ == b.data_;
  }

 private:
  std::size_t rows_ = 0;
  std::size_t cols_ = 0;
  std::vector<T> data_;
};

using RationalMatrix = Matrix<Rational>;
using DoubleMatrix = Matrix<double>;

// product(M, v) = M v. Precondition: v.size() == M.cols(); throws usage_error.
template <class T>
std::vector<T> product(const Matrix<T>& m, const std::vector<T>& v) {
  if (v.size() != m.cols()) throw usage_error("product: dimension mismatch");
  std::vector<T> out(m.rows(), T(0));
  for (std::size_t r = 0; r < m.rows(); ++r)
    for (std::size_t c = 0; c < m.cols(); ++c) out[r] += m(r, c) * v[c];
  return out;
}

// product(A, B) = A B. Precondition: A.cols() == B.rows(); throws usage_error.
template <class T>
Matrix<T> product(const Matrix<T>& a, const Matrix<T>& b) {
  if (a.cols() != b.rows()) throw usage_error("product: dimension mismatch");
  Matrix<T> out(a.rows(), b.cols());
  for (std::size_t i = 0; i < a.rows(); ++i)
    for (std::size_t k = 0; k < a.cols(); ++k) {
      if (a(i, k) == 0) continue;
      for (std::size_t j = 0; j < b.cols(); ++j) out(i, j) += a(i, k) * b(k, j);
    }
  return out;
}

DoubleMatrix to_double(const RationalMatrix& m);

}  // namespace pleat
