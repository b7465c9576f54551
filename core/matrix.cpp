// The one conversion of a whole matrix out of exact arithmetic.
#include "core/matrix.hpp"

namespace pleat {

DoubleMatrix to_double(const RationalMatrix& m) {
  DoubleMatrix out(m.rows(), m.cols());
  for (std::size_t r = 0; r < m.rows(); ++r)
    for (std::size_t c = 0; c < m.cols(); ++c) out(r, c) = to_double(m(r, c));
  return out;
}

}  // namespace pleat
