// The two triangular solves of an LU factorization modulo a word prime, for
// several right-hand sides at once: the p-adic solve's step per digit
// (padic_solve.cpp). Internal to enumerate/ (not installed).
#pragma once

#include <flint/nmod_mat.h>

#include <cstddef>
#include <cstdint>

namespace pleat::detail {

// x := U'^-1 D^-1 L^-1 x modulo p, with `triangles` n x n modulo p holding L
// strictly below its diagonal (L unit lower triangular) and U' strictly
// above it (U' unit upper triangular), its diagonal not read, and
// inverse_diagonal[i] = D_ii^-1 modulo p; x is n x m row-major (entry (i, c)
// at x[i m + c], in [0, p)), one column per right-hand side. The same values
// as FLINT's nmod_mat_solve_tril (unit), a product by D^-1 and
// nmod_mat_solve_triu (unit) in turn: exact residues either way. Here each
// row of the triangles is read once for every column (FLINT's classical
// solves go column by column, a dot product call per row and column: on
// 2,15,15,15,15,1 seed 1's 42 x 42 system with three columns lifted over 27
// digits, 0.6 ms), each sum of products kept in three words and reduced once.
void solve_triangles_modulo(const nmod_mat_struct* triangles, const std::uint64_t* inverse_diagonal,
                            std::uint64_t* x, std::size_t n, std::size_t m);

}  // namespace pleat::detail
