// Owners for cddlib's GMP objects and its process-wide lock. cddlib keeps
// global state (its number constants, set once), so every call runs under one
// mutex: hold a CddSession for as long as any cddlib call or object is live.
#pragma once

#include <cddlib/setoper.h>
#include <cddlib/cdd.h>

#include <cstddef>
#include <memory>
#include <mutex>
#include <type_traits>

namespace pleat::lp::detail {

// The process-wide lock around every cddlib call, and cddlib's one-time
// constant set-up (call it with the lock held).
std::mutex& cdd_mutex();
void ensure_cdd_constants();

// Holds the lock and makes sure the constants are set.
class CddSession {
 public:
  CddSession() : lock_(cdd_mutex()) { ensure_cdd_constants(); }

 private:
  std::lock_guard<std::mutex> lock_;
};

struct CddMatrixDeleter {
  void operator()(dd_MatrixPtr matrix) const { dd_FreeMatrix(matrix); }
};
struct CddPolyhedronDeleter {
  void operator()(dd_PolyhedraPtr polyhedron) const { dd_FreePolyhedra(polyhedron); }
};
struct CddLpDeleter {
  void operator()(dd_LPPtr lp) const { dd_FreeLPData(lp); }
};
using CddMatrix = std::unique_ptr<std::remove_pointer_t<dd_MatrixPtr>, CddMatrixDeleter>;
using CddPolyhedron = std::unique_ptr<std::remove_pointer_t<dd_PolyhedraPtr>, CddPolyhedronDeleter>;
using CddLp = std::unique_ptr<std::remove_pointer_t<dd_LPPtr>, CddLpDeleter>;

// A rows x columns matrix of GMP rationals (all zero). Precondition: a
// CddSession is held.
inline CddMatrix make_cdd_matrix(std::size_t rows, std::size_t columns) {
  CddMatrix matrix(dd_CreateMatrix(static_cast<dd_rowrange>(rows), static_cast<dd_colrange>(columns)));
  matrix->numbtype = dd_Rational;
  return matrix;
}

}  // namespace pleat::lp::detail
