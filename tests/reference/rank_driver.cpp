// A line-oriented driver that exposes core/rank and core/jacobian to the
// Python reference check (rank_sympy_test.py). Not part of the product.
//
// Input on stdin, one request after another:
//   matrix R C          followed by R lines of C exact rationals
//   blocks PATH PATTERN a network file and a region pattern ("10z|1")
// Output per request, ending with the line "end":
//   matrix: "rank_exact r", "rank_naive r", "rank_mod r" (ModularRowBasis
//           with the primary prime, or "rank_mod none" when it divides a
//           denominator), "kernel k" and k rows
//   blocks: "rows R C" and R rows (coefficient blocks), "rank_exact r",
//           "rank_mod r" (coefficient_blocks_mod), "nonsmooth ids...",
//           "scaling K" and K rows (scaling_directions), "scaling_bound b"
// Rows are space-separated rationals in lowest terms ("-3/8", "7").
#include "core/jacobian.hpp"
#include "core/network_io.hpp"
#include "core/pattern.hpp"
#include "core/rank.hpp"

#include <iostream>
#include <sstream>
#include <string>

namespace {

using namespace pleat;

void print_matrix(const RationalMatrix& matrix) {
  for (std::size_t r = 0; r < matrix.rows(); ++r) {
    for (std::size_t c = 0; c < matrix.cols(); ++c)
      std::cout << (c ? " " : "") << format_rational(matrix(r, c));
    std::cout << '\n';
  }
}

std::size_t modular_rank(const ModularMatrix& matrix, std::uint64_t prime) {
  ModularRowBasis basis(prime, matrix.cols());
  for (std::size_t r = 0; r < matrix.rows(); ++r) basis.add_row(matrix.row(r));
  return basis.rank();
}

void answer_matrix(std::istream& in, std::size_t rows, std::size_t cols) {
  RationalMatrix matrix(rows, cols);
  std::string text;
  for (std::size_t r = 0; r < rows; ++r)
    for (std::size_t c = 0; c < cols; ++c) {
      if (!(in >> text)) throw input_error("matrix: too few entries");
      matrix(r, c) = parse_rational(text);
    }
  std::cout << "rank_exact " << rank_exact(matrix) << '\n';
  std::cout << "rank_naive " << rank_by_gauss_naive(matrix) << '\n';
  const auto reduced = reduce_modulo(matrix, primary_prime());
  if (reduced)
    std::cout << "rank_mod " << modular_rank(*reduced, primary_prime()) << '\n';
  else
    std::cout << "rank_mod none\n";
  const RationalMatrix kernel = kernel_basis_exact(matrix);
  std::cout << "kernel " << kernel.rows() << '\n';
  print_matrix(kernel);
}

void answer_blocks(const std::string& path, const std::string& pattern_text) {
  const Network network = read_network_file(path);
  const ActivationPattern pattern = parse_pattern(network, pattern_text);
  const RationalMatrix blocks = coefficient_blocks(network, pattern);
  std::cout << "rows " << blocks.rows() << ' ' << blocks.cols() << '\n';
  print_matrix(blocks);
  std::cout << "rank_exact " << rank_exact(blocks) << '\n';
  const ModularNetwork modular = reduce_modulo_some_prime(network, primary_prime());
  std::cout << "rank_mod " << modular_rank(coefficient_blocks_mod(modular, pattern), modular.prime)
            << '\n';
  std::cout << "nonsmooth";
  for (std::size_t neuron : nonsmooth_neurons(network, pattern)) std::cout << ' ' << neuron;
  std::cout << '\n';
  const RationalMatrix directions = scaling_directions(network);
  std::cout << "scaling " << directions.rows() << '\n';
  print_matrix(directions);
  std::cout << "scaling_bound " << scaling_bound(network) << '\n';
}

}  // namespace

int main() {
  try {
    std::string line;
    while (std::getline(std::cin, line)) {
      std::istringstream words(line);
      std::string command;
      if (!(words >> command)) continue;
      if (command == "matrix") {
        std::size_t rows = 0, cols = 0;
        words >> rows >> cols;
        answer_matrix(std::cin, rows, cols);
        if (rows * cols > 0) std::getline(std::cin, line);  // rest of the last entry line
      } else if (command == "blocks") {
        std::string path, pattern;
        words >> path >> pattern;
        answer_blocks(path, pattern);
      } else {
        throw input_error("unknown request: " + command);
      }
      std::cout << "end" << std::endl;
    }
  } catch (const std::exception& error) {
    std::cerr << "rank_driver: " << error.what() << '\n';
    return 1;
  }
  return 0;
}
