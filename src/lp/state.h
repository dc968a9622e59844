/* state.h - the state of one LP handle, shared by the files of src/lp/:
 * lp.c (storage and API), basis.c (working basis), simplex.c (phases).
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_LP_STATE_H
#define SURETY_LP_STATE_H

#include <stddef.h>
#include <stdint.h>

#include "lp/simplex.h"

/* 1: exact dual steepest-edge update (one more product with the k basic
 * columns per iteration); 0: dual Devex weights. */
#define SURETY_LP_DSE_EXACT 1

/* Variables are the n columns followed by the m row logicals s = A x. */
struct surety_lp {
    size_t n;          /* columns (fixed) */
    size_t m;          /* rows */
    size_t mcap;       /* rows allocated */
    double *A;         /* mcap x n row-major coefficients */
    uint32_t *ridx;    /* mcap x n: the nonzero columns of each row, first
                          rnz[i] of row i's n entries (sparse rows are
                          summed by index in the pivot row) */
    size_t *rnz;       /* mcap: nonzeros of each row */
    double *AT;        /* n x mcap: the same, column-major, columns stored
                          in slots: slot c < k holds the column at position
                          c of S, so A times a vector living on S is one
                          BLAS product over the first k slots */
    size_t *slot;      /* n: slot of column j in AT */
    size_t *atcol;     /* n: column in each slot (inverse of slot) */
    double *obj;       /* n: objective c, maximisation sense */
    double *cost;      /* n + mcap: cost in use (= -c, plus perturbation) */
    double *lb, *ub;   /* n + mcap: true bounds of columns then logicals */
    double *wlb, *wub; /* n + mcap: bounds in use (artificial ones added) */
    double *x;         /* n + mcap: values */
    double *d;         /* n + mcap: reduced costs, minimisation sense */
    signed char *stat; /* n + mcap: SURETY_LP_BASIC etc. */
    size_t k;          /* working basis size */
    size_t *colS;      /* n: column at each position of S */
    size_t *rowN;      /* n: row at each position of R_N */
    long *posS;        /* n: position in S, or -1 */
    long *posN;        /* mcap: position in R_N, or -1 */
    double *Kinv;      /* n x n, leading dimension n */
    int weights_stale; /* wgt must be recomputed (after set_basis,
                          del_rows or primal pivots) */
    int factored;      /* Kinv matches colS/rowN */
    int nupd;          /* updates since the last rebuild */
    int perturbed;     /* cost differs from -obj */
    int artificial;    /* some wlb/wub differ from lb/ub */
    double box;        /* current artificial bound distance */
    uint64_t rng;      /* perturbation stream (xorshift64*) */
    /* scratch */
    double *rho;   /* mcap: row of B^-1 */
    double *alpha; /* n + mcap: pivot row */
    double *dv;    /* n + mcap: change of basics per unit of entering */
    double *tmp;   /* 2 n + 3 mcap */
    double *wgt;   /* n + mcap: dual steepest-edge weight of a basic
                      variable, ||row of B^-1||^2 (>= 1e-12) */
    double *tau;   /* n + mcap: B^-1 rho */
    double *fl;    /* n + mcap: change of each variable by bound flips */
    double *X;     /* 3 n: structural parts of dv, tau, fl */
    double *Y;     /* 3 mcap: A X, column by column */
    size_t *cand;  /* n + mcap: ratio-test candidates */
    long iter_limit;
    long iters;
    surety_lp_stats stats; /* counters since creation */
    long bland_after;      /* degenerate primal steps before Bland's rule */
    double cutoff;         /* stop once the bound c^T x is <= cutoff (money) */
    surety_lp_status status;
    double objval;
};

#endif
