/* basis.h - the working basis of the dense simplex: K^-1 for
 * K = A(R_N, S), its LU rebuild and updates, and the solves through it.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_LP_BASIS_H
#define SURETY_LP_BASIS_H

#include <stddef.h>

typedef struct surety_lp surety_lp;

/* Rebuilds S, R_N and K^-1 from the statuses. Returns 0; 1 when the
 * basis was singular or malformed and the all-logical basis replaced it;
 * -2 when out of memory. */
int surety_basis_refactor(surety_lp *lp);

/* dv := -B^-1 a_q, the change of every basic variable per unit increase
 * of the nonbasic q (dv[q] = 1). */
void surety_basis_ftran(surety_lp *lp, size_t q);

/* rho := row of B^-1 of the basic variable r, alpha := rho^T [A, -I]. */
void surety_basis_btran_row(surety_lp *lp, size_t r);

/* In one pass over the basic columns: dv for the entering q, tau =
 * B^-1 rho (when exact steepest edge) and fl, the moves caused by the
 * bound flips of cand[0..flips). */
void surety_basis_dual_columns(surety_lp *lp, size_t q, size_t flips);

/* Basis change q in, r out; needs dv from ftran or dual_columns and, when
 * r is a logical, rho from btran_row. O(k^2). */
void surety_basis_pivot(surety_lp *lp, size_t q, size_t r);

/* Basic values from the nonbasic ones, from scratch. */
void surety_basis_primal(surety_lp *lp);

/* Duals y (left in rho) and reduced costs d from the costs in use. */
void surety_basis_dual(surety_lp *lp);

/* Exact dual steepest-edge weights ||row of B^-1||^2 of all basic
 * variables: O(m k^2) by one BLAS dgemm; all 1 when out of memory. */
void surety_basis_dse_weights(surety_lp *lp);

/* Asserts the invariants (expensive; for -Dexpensive_checks). */
void surety_basis_check(const surety_lp *lp);

#endif
