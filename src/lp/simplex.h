/* simplex.h - dense bounded-variable dual simplex (with a primal clean-up
 * phase) for the LP bounds of the branch and bound.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_SIMPLEX_H
#define SURETY_SIMPLEX_H

#include <stddef.h>

/* The problem, always in maximisation form:
 *
 *     max  c^T x   s.t.  rlo_i <= a_i^T x <= rhi_i  (i = 0..m-1),
 *                        lo_j  <= x_j     <= hi_j   (j = 0..n-1).
 *
 * An infinite bound is -INFINITY / +INFINITY; an equality row has
 * rlo == rhi. The column count n is fixed at creation; rows are appended
 * at any time (a cutting-plane loop adds them lazily) and bounds of
 * columns and rows may change between solves (branching). Each solve
 * starts from the basis left by the previous one, which stays dual
 * feasible under both kinds of change, so re-solves are short.
 *
 * Use in a branch and bound (columns x_ji in [0,1], rows per scenario):
 *   create with the columns; add the rows of the live scenarios;
 *   solve the root; save its basis with get_basis (n + m bytes).
 *   Per node: set_col_bounds for the node's fixings; set_basis of the
 *   parent (rows added since stay basic); set_cutoff(incumbent) to stop
 *   as soon as the node cannot win; solve; while a scenario row is
 *   violated, add_row and solve again (warm); del_rows drops rows that
 *   went slack, set_row_bounds(-INFINITY, INFINITY) switches one off.
 * Cost per dual iteration is O(m k + n k + k^2) with k <= min(n, m) the
 * number of basic columns, plus an O(k^3) LU every 64 basis changes.
 *
 * Handles are not thread-safe; distinct handles may be used from distinct
 * threads. All memory goes through alloc.h; nothing is printed. */
typedef struct surety_lp surety_lp;

typedef enum surety_lp_status {
    SURETY_LP_UNSOLVED = 0, /* no solve yet, or changed since */
    SURETY_LP_OPTIMAL = 1,
    SURETY_LP_INFEASIBLE = 2, /* no x satisfies rows and bounds */
    SURETY_LP_UNBOUNDED = 3,  /* feasible, objective unbounded above */
    SURETY_LP_ITER_LIMIT = 4, /* stopped by the iteration limit */
    SURETY_LP_NUMERIC = 5,    /* out of memory, or a basis stayed singular */
    SURETY_LP_CUTOFF = 6,     /* stopped early: optimum <= the cutoff */
} surety_lp_status;

/* Basis status of a variable (column j, or the row activity of row i,
 * listed after the n columns), as saved and restored by get/set_basis. */
enum {
    SURETY_LP_BASIC = 0,
    SURETY_LP_AT_LOWER = 1,
    SURETY_LP_AT_UPPER = 2,
    SURETY_LP_AT_ZERO = 3, /* nonbasic free (at 0) or between its bounds */
};

/* New LP with n >= 1 columns and no rows. c (objective, money), lo and hi
 * (column bounds) are arrays of n copied values; NULL means all 0 for c
 * and lo, all +INFINITY for hi. Returns NULL on bad input (n == 0,
 * lo > hi, NaN) or when out of memory. The caller frees the handle. */
surety_lp *surety_lp_create(size_t n, const double *c, const double *lo, const double *hi);

/* Releases the handle and all it owns; NULL is accepted. */
void surety_lp_free(surety_lp *lp);

size_t surety_lp_ncols(const surety_lp *lp);
size_t surety_lp_nrows(const surety_lp *lp);

/* Appends the row rlo <= a^T x <= rhi (a: n dense coefficients, copied).
 * Its activity enters the basis, so the current basis stays valid. Returns
 * the new row index, or -1 on bad input (rlo > rhi, NaN) or out of
 * memory. */
long surety_lp_add_row(surety_lp *lp, const double *a, double rlo, double rhi);

/* Deletes the `count` rows listed in rows[] (any order, repeats allowed);
 * the rows after them move down and keep their order, so row indices
 * change. The basis stays valid: a deleted row whose activity was
 * nonbasic takes a basic column's place, that column going to its
 * nearest bound. For dropping cuts or scenario rows that went slack.
 * Returns 0, or -1 on a bad index or out of memory (LP unchanged). */
int surety_lp_del_rows(surety_lp *lp, const size_t *rows, size_t count);

/* Changes the bounds of column j or row i. Returns 0, or -1 on a bad
 * index, lo > hi or NaN. */
int surety_lp_set_col_bounds(surety_lp *lp, size_t j, double lo, double hi);
int surety_lp_set_row_bounds(surety_lp *lp, size_t i, double lo, double hi);

/* Changes the objective coefficient of column j; the next solve may need
 * primal iterations. Returns 0 or -1 on a bad index or NaN. */
int surety_lp_set_obj(surety_lp *lp, size_t j, double c);

/* Simplex iterations allowed per solve (dual pivots and primal steps); <= 0
 * restores the default, which grows with the size. */
void surety_lp_set_iter_limit(surety_lp *lp, long limit);

/* Anti-cycling of the primal phase: after `steps` degenerate steps in a
 * row it follows Bland's smallest-index rule (0: from the first step;
 * < 0 restores the default, 50). The dual phase perturbs costs instead. */
void surety_lp_set_bland_after(surety_lp *lp, long steps);

/* A branch and bound prunes a node whose LP bound cannot beat the
 * incumbent: with a cutoff set, the dual simplex stops as soon as its
 * current value, an upper bound on the optimum, is <= cutoff, with status
 * SURETY_LP_CUTOFF and that bound as objective. -INFINITY (the default)
 * turns it off. An optimum reached first is still reported as optimal. */
void surety_lp_set_cutoff(surety_lp *lp, double cutoff);

/* Solves from the current basis. The result stays readable until the
 * next change. */
surety_lp_status surety_lp_solve(surety_lp *lp);

surety_lp_status surety_lp_status_of(const surety_lp *lp);

/* Objective c^T x of the last solve; -INFINITY when infeasible,
 * +INFINITY when unbounded, and the value at the current basis otherwise
 * (after an iteration limit it need not be feasible; after a cutoff it is
 * an upper bound on the optimum). */
double surety_lp_obj(const surety_lp *lp);

/* Iterations of the last solve. */
long surety_lp_iterations(const surety_lp *lp);

/* Copies the primal values x (n entries), the row activities a_i^T x
 * (m entries), the row duals (m entries) and the reduced costs (n
 * entries) of the last solve. Duals are in the maximisation sense:
 * the dual of row i is the gain in c^T x per unit increase of the
 * binding side of row i (>= 0 for a binding upper side), and the reduced
 * cost of column j is c_j - sum_i a_ij y_i. */
void surety_lp_get_x(const surety_lp *lp, double *x);
void surety_lp_get_row_activity(const surety_lp *lp, double *act);
void surety_lp_get_row_duals(const surety_lp *lp, double *y);
void surety_lp_get_redcosts(const surety_lp *lp, double *d);

/* Counters since creation, for the solver's statistics. */
typedef struct surety_lp_stats {
    long solves;            /* calls of surety_lp_solve */
    long dual_iterations;   /* dual simplex basis changes */
    long primal_iterations; /* primal clean-up steps (pivots and flips) */
    long bound_flips;       /* variables flipped by the dual ratio test */
    long refactors;         /* LU rebuilds of the working basis */
    long singular;          /* rebuilds that found the basis singular */
    long perturbations;     /* times the costs were perturbed (stalling) */
    long artificial;        /* solves that needed artificial bounds */
} surety_lp_stats;

void surety_lp_get_stats(const surety_lp *lp, surety_lp_stats *stats);

/* Copies the basis: n + m status values (SURETY_LP_BASIC etc.), columns
 * first then rows. Returns n + m. */
size_t surety_lp_get_basis(const surety_lp *lp, signed char *status);

/* Restores a basis saved with nrows <= m rows: rows added since then get
 * a basic activity, so a branch and bound can restore a parent's basis
 * after children added rows. Returns 0, or -1 when nrows > m or the
 * statuses do not form a basis (wrong count of basic variables). A basis
 * found singular at the next solve is replaced by the all-slack basis. */
int surety_lp_set_basis(surety_lp *lp, const signed char *status, size_t nrows);

#endif
