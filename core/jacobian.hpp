// Parameter Jacobians of a network on one activation pattern: exactly, modulo
// a word-size prime, and in double for sampled estimates; and the per-neuron
// scaling directions that every Jacobian row is orthogonal to.
//
// Parameters theta are in the spec's order (Network::parameter_offset: layer
// by layer, all of W_k row-major, then b_k); D = Network::parametric_dimension().
// On a pattern s, F(x) = A x + c with A, c polynomial in theta. With G_k the
// backward signal dF/dz_k (nd x n_k; it holds layer k's 0/1 pattern for ReLU
// layers, G_d = I for a linear output) and y_{k-1}(x) = P_{k-1} x + p_{k-1}
// the input of layer k on s (y_0 = x):
//   dF_o/dW_k[i,j] = G_k[o,i] y_{k-1}[j],   dF_o/db_k[i] = G_k[o,i].
// Neurons in state 'z' pass nothing forward and get a zero G column.
#pragma once

#include "core/evaluate.hpp"
#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rank.hpp"

#include <cstddef>
#include <cstdint>
#include <optional>
#include <vector>

namespace pleat {

// ---- Coefficient blocks (exact) ---------------------------------------------

// Row layout of the coefficient blocks: for output o, row
// o * (n0 + 1) holds dc_o/dtheta and row o * (n0 + 1) + 1 + t holds
// dA[o,t]/dtheta. These nd * (n0 + 1) rows span the same space as the
// Jacobians J(x) at n0 + 1 affinely independent points of the region
// (J(x)[o] = dc_o/dtheta + sum_t x_t dA[o,t]/dtheta).
std::size_t coefficient_row_of_offset(const Network& network, std::size_t output);
std::size_t coefficient_row_of_slope(const Network& network, std::size_t output, std::size_t input);

// The nd * (n0 + 1) x D coefficient blocks of F on the pattern. Valid for
// any pattern, realised or not (the formula only uses the states).
// Precondition: pattern.states.size() == relu_neuron_count() and no state is
// '=' (throws usage_error). Exact. Rows of a region that has a neuron in
// nonsmooth_neurons() must not be counted (spec: such a region has no smooth
// points); this function does not check that.
RationalMatrix coefficient_blocks(const Network& network, const ActivationPattern& pattern);

// The 'z' neurons of the pattern (ids in the spec's numbering, increasing)
// whose backward signal is nonzero: the column G_{k+1} W_{k+1}[:, i] of
// neuron (k, i), computed through the pattern as if that neuron alone were
// on (an output neuron's signal is e_o, always nonzero). A region with any
// such neuron has no smooth points and contributes no rows; one whose 'z'
// neurons all have zero signal is smooth. Same precondition as
// coefficient_blocks. Exact.
std::vector<std::size_t> nonsmooth_neurons(const Network& network, const ActivationPattern& pattern);

// ---- Modulo a prime ---------------------------------------------------------

// A network's parameters reduced modulo a prime, for computing coefficient
// blocks with word arithmetic only. Same layer shapes as the source network.
struct ModularNetwork {
  std::uint64_t prime = 0;
  std::size_t input_dim = 0;
  std::vector<ModularMatrix> weights;  // layer k: n_k x n_{k-1}, residues in [0, p)
  std::vector<ModularVector> bias;
  bool has_output_relu = false;
};

// theta mod p, or nullopt when p divides some parameter's denominator (pick
// another prime: next_prime_after). Precondition: prime is a prime in
// [2, 2^63) (throws usage_error when out of range).
std::optional<ModularNetwork> reduce_modulo(const Network& network, std::uint64_t prime);

// theta mod the first prime >= preferred_prime that divides no denominator.
// Precondition as for reduce_modulo.
ModularNetwork reduce_modulo_some_prime(const Network& network, std::uint64_t preferred_prime);

// coefficient_blocks(network, pattern) mod p, computed from theta mod p with
// word arithmetic only; equal entrywise to reducing the exact blocks mod p
// (the blocks are integer polynomials in theta). Their rank mod p is a lower
// bound of the exact blocks' rank (core/rank.hpp). Same precondition as
// coefficient_blocks, with network.relu_neuron_count() states.
ModularMatrix coefficient_blocks_mod(const ModularNetwork& network, const ActivationPattern& pattern);

// ---- Jacobians at points ----------------------------------------------------

// The nd x D Jacobian dF/dtheta at x. Preconditions: x.size() == input_dim
// (throws usage_error); x lies in a smooth region: no bent hyperplane passes
// through x (throws input_error naming the first such neuron), and every
// neuron identically zero around x ('z', pattern_around_point) has zero
// backward signal (throws input_error naming it otherwise); the 'z' neurons'
// columns are then 0. Exact.
RationalMatrix parameter_jacobian_exact(const Network& network, const RationalVector& x);

// The same in double, for the usual sampled estimate. A pre-activation that
// is exactly 0.0 counts as off (the ReLU derivative taken as 0 at 0, as
// automatic differentiation libraries do). Precondition: x.size() ==
// input_dim (throws usage_error). Not exact.
DoubleMatrix parameter_jacobian_double(const DoubleNetwork& network, const DoubleVector& x);

// ---- Scaling symmetry -------------------------------------------------------

// One row of length D per hidden neuron (k, i), in neuron-id order: +W_k[i,:]
// on its incoming weights, +b_k[i] on its bias, -W_{k+1}[:,i] on its outgoing
// weights, 0 elsewhere: the tangent of scaling the neuron by c > 0 and its
// outgoing weights by 1/c, which leaves F unchanged, so every coefficient-block
// and Jacobian row is orthogonal to it. Output neurons have none. Exact.
RationalMatrix scaling_directions(const Network& network);

// The rows of scaling_directions for the given hidden neurons only (ids
// increasing or not, each < hidden_neuron_count(); usage_error otherwise).
// Exact.
RationalMatrix scaling_directions(const Network& network, const std::vector<std::size_t>& neurons);

// The rank of the scaling directions S and a nonsingular square block of S,
// read off which parameters are zero: no elimination, O(D) time, exact.
//
// Why this is the rank: sum_n c_n s_n = 0 reads, parameter by parameter,
// (c_a - c_b) w = 0 on a weight w from hidden neuron b into hidden neuron a,
// and c_a w = 0 on a parameter w that only neuron a's direction touches (its
// bias, its first-layer weights, its weights into the output layer). So the
// columns of S are nonzero multiples of the columns of the incidence matrix of
// a graph G (vertices: the hidden neurons and one "ground" vertex, whose row
// is left out; one edge per nonzero parameter), and zero columns. A set of
// such columns is independent exactly when its edges form a forest (over any
// field), so rank(S) = H - (components of G without the ground vertex).
struct ScalingStructure {
  std::size_t rank = 0;
  // The lexicographically first rank(S) independent rows of S (the greedy
  // choice, as an elimination in row order would pick): every hidden neuron
  // but the largest one of each component of G without the ground vertex.
  std::vector<std::size_t> independent_neurons;
  // The lexicographically first rank(S) independent columns of S (parameter
  // indices, increasing): the pivot columns of S's reduced row-echelon form,
  // found greedily as a spanning forest of G (Kruskal in parameter order).
  // S restricted to independent_neurons x pivot_columns is nonsingular (the
  // incidence matrix of a spanning forest with one vertex of each tree left
  // out, columns scaled by nonzero weights).
  std::vector<std::size_t> pivot_columns;
};
ScalingStructure scaling_structure(const Network& network);

// D - rank(scaling_directions): an upper bound of the functional dimension
// (D - hidden neurons for generic parameters). Exact, O(D) (scaling_structure).
std::size_t scaling_bound(const Network& network);

}  // namespace pleat
