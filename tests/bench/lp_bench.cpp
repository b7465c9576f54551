// Micro-benchmark of the lp queries on random cells: for each dimension and
// constraint count, many cells of a random hyperplane arrangement (the cell
// holding a random point near the origin, as the walker sees them), timing
// each query and reporting medians, queries per second and the share that
// needed the exact fallback. Usage: lp_bench [cells_per_row]
#include "lp/checker.hpp"
#include "lp/oracle.hpp"

#include <algorithm>
#include <ctime>
#include <cstdio>
#include <cstdlib>
#include <random>
#include <vector>

namespace {

using pleat::Rational;
using pleat::RationalVector;
using namespace pleat::lp;

Polyhedron arrangement_cell(std::mt19937& random, std::size_t dim, std::size_t count) {
  std::uniform_int_distribution<long> entry(-99, 99);
  std::uniform_int_distribution<long> offset(-400, 400);
  std::uniform_int_distribution<long> point(-20, 20);
  RationalVector inside(dim);
  for (Rational& value : inside) value = Rational(point(random), 7);
  Polyhedron cell{dim, {}};
  while (cell.constraints.size() < count) {
    Constraint c{RationalVector(dim), Rational(offset(random))};
    bool is_zero = true;
    for (Rational& value : c.normal) {
      value = entry(random);
      is_zero = is_zero && value == 0;
    }
    Rational value = c.offset;
    for (std::size_t k = 0; k < dim; ++k) value += c.normal[k] * inside[k];
    if (is_zero || value == 0) continue;
    if (value < 0) {  // orient every hyperplane so the point is inside
      for (Rational& v : c.normal) v = -v;
      c.offset = -c.offset;
    }
    cell.constraints.push_back(std::move(c));
  }
  return cell;
}

double median(std::vector<double> values) {
  if (values.empty()) return 0.0;
  std::sort(values.begin(), values.end());
  return values[values.size() / 2];
}

// CPU time of this thread, so other load on the machine does not count.
double thread_seconds() {
  timespec now{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &now);
  return static_cast<double>(now.tv_sec) + 1e-9 * static_cast<double>(now.tv_nsec);
}

template <class F>
double microseconds(F&& run) {
  const double start = thread_seconds();
  run();
  return 1e6 * (thread_seconds() - start);
}

}  // namespace

int main(int argc, char** argv) {
  const int cells = argc > 1 ? std::atoi(argv[1]) : 40;
  std::mt19937 random(2024);
  std::printf("lp_bench: %d random arrangement cells per row; times are medians over cells\n(thread CPU microseconds)\n", cells);
  std::printf("%3s %5s | %8s %8s | %9s %7s %8s %8s | %8s | %9s %8s\n", "dim", "cons", "open", "centre",
              "facets", "groups", "us/group", "facets#", "bounded", "queries/s", "exact%");
  for (std::size_t dim = 2; dim <= 6; ++dim) {
    for (std::size_t count : {20u, 50u, 100u, 200u}) {
      std::vector<double> open_times, centre_times, facet_times, per_group, facet_counts, bounded_times;
      Oracle oracle;
      double total_time = 0.0;
      for (int trial = 0; trial < cells; ++trial) {
        const Polyhedron cell = arrangement_cell(random, dim, count);
        CellVerdict open;
        open_times.push_back(microseconds([&] { open = oracle.decide_open_cell(cell); }));
        CellVerdict centre;
        centre_times.push_back(microseconds([&] { centre = oracle.find_centre(cell); }));
        if (!std::holds_alternative<InteriorPoint>(centre)) {
          std::fprintf(stderr, "unexpected empty cell\n");
          return 1;
        }
        FacetClassification facets;
        facet_times.push_back(microseconds(
            [&] { facets = oracle.classify_facets(cell, std::get<InteriorPoint>(centre)); }));
        per_group.push_back(facet_times.back() / static_cast<double>(facets.groups.size()));
        facet_counts.push_back(static_cast<double>(std::count_if(
            facets.groups.begin(), facets.groups.end(), [](const FacetGroup& g) { return g.is_facet(); })));
        bounded_times.push_back(microseconds([&] { (void)oracle.decide_boundedness(cell); }));  // timed only
        total_time += open_times.back() + centre_times.back() + facet_times.back() + bounded_times.back();
        if (trial == 0 && !check_facet_classification(cell, facets)) {
          std::fprintf(stderr, "classification failed the checker\n");
          return 1;
        }
      }
      const QueryCounts& counts = oracle.counts();
      std::printf("%3zu %5zu | %8.1f %8.1f | %9.1f %7zu %8.1f %8.1f | %8.1f | %9.0f %7.2f%%\n", dim, count,
                  median(open_times), median(centre_times), median(facet_times), count,
                  median(per_group), median(facet_counts), median(bounded_times),
                  static_cast<double>(counts.lp_queries) / (total_time * 1e-6),
                  100.0 * static_cast<double>(counts.exact_fallbacks) / static_cast<double>(counts.lp_queries));
    }
  }
  std::printf("queries/s counts every answered question (one per facet group) over all time spent;\n"
              "exact%% is the share of questions that needed cddlib's exact LP.\n");
  return 0;
}
