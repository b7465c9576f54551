// A thin owner of one GLPK problem (double simplex, terminal output off).
// Thread safety (GLPK 5.0 docs, release notes of 4.61): a GLPK built with
// thread-local storage keeps one environment per thread, and its objects may
// only be touched by the thread that created them. So a GlpkLP lives inside
// one query call (created, used and deleted by the calling thread), and when
// glp_config("TLS") reports no TLS support every GlpkLP holds a global (recursive)
// mutex.
#pragma once

#include <cstddef>
#include <memory>
#include <mutex>
#include <vector>

struct glp_prob;

namespace pleat::lp::detail {

enum class DoubleStatus { optimal, infeasible, unbounded, failed };
enum class BasisStatus { basic, at_lower, at_upper, free_nonbasic, fixed };

class GlpkLP {
 public:
  // rows x columns, every column free, every row free, objective zero.
  GlpkLP(std::size_t rows, std::size_t columns, bool is_maximise);
  ~GlpkLP();
  GlpkLP(const GlpkLP&) = delete;
  GlpkLP& operator=(const GlpkLP&) = delete;

  // Appends count free rows; returns the index of the first.
  std::size_t add_rows(std::size_t count);
  std::size_t row_count() const;

  // Dense row: coefficients[k] for column k (zeros skipped).
  void set_row(std::size_t row, const double* coefficients, std::size_t count);
  void set_row_lower(std::size_t row, double lower);
  void set_row_fixed(std::size_t row, double value);
  void set_row_free(std::size_t row);
  void set_column_upper(std::size_t column, double upper);
  void set_column_bounds(std::size_t column, double lower, double upper);
  void set_objective(std::size_t column, double coefficient);

  // Warm-started from the previous basis (from the standard basis when the
  // previous one holds a column left without nonzeros); retries from a fresh
  // basis once.
  DoubleStatus solve();
  double objective() const;
  double column_value(std::size_t column) const;
  BasisStatus row_status(std::size_t row) const;
  BasisStatus column_status(std::size_t column) const;

 private:
  bool has_empty_basic_column() const;
  glp_prob* problem_;
  std::unique_lock<std::recursive_mutex> lock_;  // held only without thread-local GLPK
};

}  // namespace pleat::lp::detail
