/* simplex.c - dense bounded-variable dual simplex with a working-basis
 * inverse, bound-flipping Harris ratio test and a primal clean-up phase.
 * SPDX-License-Identifier: MIT */
#include "lp/simplex.h"

#include <assert.h>
#include <math.h>
#include <stdint.h>
#include <string.h>

#include "alloc.h"
#include "lp/dense.h"
#include "surety_config.h"

/* Method.
 *
 * Internally the LP is min cost^T x with cost = -c, and every row i gets
 * a logical variable s_i (index n + i) with A x - s = 0, rlo_i <= s_i <=
 * rhi_i, so the n + m variables have bounds and the basis has m members.
 * The algorithm is the dual simplex for bounded variables as laid out in
 * A. Koberstein, "The dual simplex method, techniques for a fast and
 * stable implementation", PhD thesis, Paderborn 2005 (ch. 3: pricing,
 * ratio test with bound flipping and Harris tolerances, updates; ch. 4:
 * dual phase 1 by artificial bounds; ch. 6: cost perturbation and
 * shifting), with the revised-simplex bookkeeping of V. Chvatal, Linear
 * Programming, Freeman 1983 (ch. 7-8) and I. Maros, Computational
 * Techniques of the Simplex Method, Kluwer 2003 (ch. 9-10).
 *
 * Working basis. With S the basic columns and R_N the rows whose logical
 * is nonbasic, |S| = |R_N| = k <= min(n, m), and ordering rows R_N first,
 *
 *     B = [ A(R_N,S)   0 ]      B^-1 = [ K^-1            0 ]
 *         [ A(R_B,S)  -I ],            [ A(R_B,S) K^-1   -I ],
 *
 * with K = A(R_N,S). Only the k x k matrix K^-1 is kept, explicitly, in
 * `Kinv` (row index = position in S, column index = position in R_N).
 * With thousands of rows and a few hundred columns this is the difference
 * between an m x m and an n x n inverse. Each basis change is one of four
 * rank-one or bordering updates of K^-1 (column swap, row swap, grow by
 * one, shrink by one; see pivot_update), and K^-1 is rebuilt by LU
 * (dgetrf/dgetri in dense.c) every REFACTOR_EVERY updates, after which
 * the primal and dual values are recomputed from scratch. */

#define FEAS_TOL 1e-9         /* primal feasibility, relative to 1+|bound| */
#define OPT_TOL 1e-9          /* dual feasibility of reduced costs */
#define PIVOT_TOL 1e-9        /* smallest acceptable |pivot| */
#define REFACTOR_EVERY 64     /* updates of K^-1 between LU rebuilds */
#define ARTIFICIAL_BOX 1e6    /* first artificial bound distance */
#define ARTIFICIAL_MAX 1e13   /* give up enlarging the box beyond this */
#define STALL_PERTURB 25      /* degenerate dual steps before perturbing */
#define MAX_ROUNDS 8          /* dual/primal alternations per solve */
#define DSE_EXACT 1           /* 1: exact steepest-edge update (one more
                                 pass over A per iteration); 0: dual Devex */

struct surety_lp {
    size_t n;       /* columns (fixed) */
    size_t m;       /* rows */
    size_t mcap;    /* rows allocated */
    double *A;      /* mcap x n row-major coefficients */
    double *AT;     /* n x mcap: the same, column-major, so that A times a
                       vector living on S (k of n columns) reads only
                       those k columns */
    double *obj;    /* n: objective c, maximisation sense */
    double *cost;   /* n + mcap: cost in use (= -c, plus perturbation) */
    double *lb, *ub;   /* n + mcap: true bounds of columns then logicals */
    double *wlb, *wub; /* n + mcap: bounds in use (artificial ones added) */
    double *x;      /* n + mcap: values */
    double *d;      /* n + mcap: reduced costs, minimisation sense */
    signed char *stat; /* n + mcap: SURETY_LP_BASIC etc. */
    size_t k;       /* working basis size */
    size_t *colS;   /* n: column at each position of S */
    size_t *rowN;   /* n: row at each position of R_N */
    long *posS;     /* n: position in S, or -1 */
    long *posN;     /* mcap: position in R_N, or -1 */
    double *Kinv;   /* n x n, leading dimension n */
    int factored;   /* Kinv matches colS/rowN */
    int nupd;       /* updates since the last rebuild */
    int perturbed;  /* cost differs from -obj */
    int artificial; /* some wlb/wub differ from lb/ub */
    double box;     /* current artificial bound distance */
    uint64_t rng;   /* perturbation stream (xorshift64*) */
    /* scratch */
    double *rho;    /* mcap: row of B^-1 */
    double *alpha;  /* n + mcap: pivot row */
    double *dv;     /* n + mcap: change of basics per unit of entering */
    double *tmp;    /* 2 (n + mcap) */
    double *wgt;    /* n + mcap: dual steepest-edge weight of a basic
                       variable, ||row of B^-1||^2 (>= 1e-12) */
    double *tau;    /* n + mcap: B^-1 rho */
    double *fl;     /* n + mcap: change of each variable by bound flips */
    double *X;      /* 3 n: structural parts of dv, tau, fl */
    double *Y;      /* 3 mcap: A X, column by column */
    size_t *cand;   /* n + mcap: ratio-test candidates */
    long iter_limit;
    long iters;
    double cutoff;  /* stop once the bound c^T x is <= cutoff (money) */
    surety_lp_status status;
    double objval;
};

/* ------------------------------------------------------------------ */
/* Small helpers                                                       */
/* ------------------------------------------------------------------ */

static int bad(double v)
{
    return isnan(v);
}

static double urand(surety_lp *lp)
{
    lp->rng ^= lp->rng >> 12;
    lp->rng ^= lp->rng << 25;
    lp->rng ^= lp->rng >> 27;
    return (double)((lp->rng * 2685821657736338717ULL) >> 11) * 0x1.0p-53;
}

static double ftol(double bound)
{
    return FEAS_TOL * (1.0 + fabs(bound));
}

static int boxed(const surety_lp *lp, size_t j)
{
    return isfinite(lp->wlb[j]) && isfinite(lp->wub[j]);
}

/* Value a nonbasic variable takes for its status. */
static double nonbasic_value(const surety_lp *lp, size_t j)
{
    switch (lp->stat[j]) {
    case SURETY_LP_AT_LOWER:
        return lp->wlb[j];
    case SURETY_LP_AT_UPPER:
        return lp->wub[j];
    default: {
        double v = lp->x[j];
        if (!isfinite(v))
            v = 0.0;
        if (v < lp->wlb[j])
            v = lp->wlb[j];
        if (v > lp->wub[j])
            v = lp->wub[j];
        return v;
    }
    }
}

static void axpy(size_t len, double f, const double *src, double *dst)
{
    surety_dense_axpy(len, f, src, dst);
}

/* y += f * column j of A (m entries). */
static void col_axpy(const surety_lp *lp, size_t j, double f, double *y)
{
    if (f != 0.0)
        axpy(lp->m, f, lp->AT + j * lp->mcap, y);
}

static int grow_rows(surety_lp *lp, size_t need)
{
    if (need <= lp->mcap)
        return 0;
    size_t cap = lp->mcap ? lp->mcap : 16;
    while (cap < need)
        cap *= 2;
    size_t n = lp->n, nv = n + cap;
    double *A = surety_xrealloc(lp->A, cap * n, sizeof *A);
    if (!A)
        return -1;
    lp->A = A;
#define GROW(field, count)                                                \
    do {                                                                  \
        void *p_ = surety_xrealloc(lp->field, (count), sizeof *lp->field); \
        if (!p_)                                                          \
            return -1;                                                    \
        lp->field = p_;                                                   \
    } while (0)
    GROW(cost, nv);
    GROW(lb, nv);
    GROW(ub, nv);
    GROW(wlb, nv);
    GROW(wub, nv);
    GROW(x, nv);
    GROW(d, nv);
    GROW(stat, nv);
    GROW(posN, cap);
    GROW(rho, cap);
    GROW(alpha, nv);
    GROW(dv, nv);
    GROW(tmp, 2 * nv);
    GROW(cand, nv);
    GROW(wgt, nv);
    GROW(tau, nv);
    GROW(fl, nv);
    GROW(Y, 3 * cap);
    for (size_t v = n + lp->mcap; v < nv; v++)
        lp->wgt[v] = 1.0;
#undef GROW
    double *AT = surety_xmalloc(cap * n, sizeof *AT);
    if (!AT)
        return -1;
    for (size_t j = 0; j < n; j++)
        if (lp->m > 0)
            memcpy(AT + j * cap, lp->AT + j * lp->mcap, lp->m * sizeof *AT);
    surety_xfree(lp->AT);
    lp->AT = AT;
    lp->mcap = cap;
    return 0;
}

/* ------------------------------------------------------------------ */
/* Working basis: factor, solves and updates                           */
/* ------------------------------------------------------------------ */

/* Falls back to the all-logical basis (K empty): always nonsingular.
 * Nonbasic columns keep or take a finite bound; the next prepare() fixes
 * signs. */
static void slack_basis(surety_lp *lp)
{
    size_t n = lp->n;
    for (size_t j = 0; j < n; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC)
            lp->stat[j] = isfinite(lp->lb[j])   ? SURETY_LP_AT_LOWER
                          : isfinite(lp->ub[j]) ? SURETY_LP_AT_UPPER
                                                : SURETY_LP_AT_ZERO;
        lp->posS[j] = -1;
    }
    for (size_t i = 0; i < lp->m; i++) {
        lp->stat[n + i] = SURETY_LP_BASIC;
        lp->posN[i] = -1;
        lp->wgt[n + i] = 1.0; /* B = -I: rows of B^-1 are unit vectors */
    }
    lp->k = 0;
    lp->factored = 1;
    lp->nupd = 0;
}

/* Rebuilds colS/rowN from the statuses and K^-1 by LU. Returns 0, or -1
 * when the basis is singular (then the all-logical basis is installed and
 * 1 is returned) and -2 when out of memory. */
static int refactor(surety_lp *lp)
{
    size_t n = lp->n, k = 0, kr = 0;
    for (size_t j = 0; j < n; j++) {
        lp->posS[j] = -1;
        if (lp->stat[j] == SURETY_LP_BASIC) {
            lp->posS[j] = (long)k;
            lp->colS[k++] = j;
        }
    }
    for (size_t i = 0; i < lp->m; i++) {
        lp->posN[i] = -1;
        if (lp->stat[n + i] != SURETY_LP_BASIC) {
            if (kr == n)
                break;
            lp->posN[i] = (long)kr;
            lp->rowN[kr++] = i;
        }
    }
    if (k != kr) {
        slack_basis(lp);
        return 1;
    }
    lp->k = k;
    double *M = lp->Kinv;
    for (size_t p = 0; p < k; p++) {
        const double *a = lp->A + lp->rowN[p] * n;
        for (size_t c = 0; c < k; c++)
            M[p * n + c] = a[lp->colS[c]];
    }
    double rcond = 1.0;
    int rc = surety_dense_invert(k, M, n, &rcond);
    if (rc < 0)
        return -2;
    if (rc > 0 || rcond < 1e-14) {
        slack_basis(lp);
        return 1;
    }
    lp->factored = 1;
    lp->nupd = 0;
    return 0;
}

/* dv := change of every basic variable (and of the entering one, = 1)
 * per unit increase of the nonbasic variable q, i.e. -B^-1 a_q. Columns
 * of S move so that the rows R_N keep their logicals fixed; the logicals
 * of R_B follow as A dv. Also used for alpha_q = -dv. */
static void ftran(surety_lp *lp, size_t q)
{
    size_t n = lp->n, k = lp->k, m = lp->m;
    double *dv = lp->dv, *w = lp->tmp;
    memset(dv, 0, n * sizeof *dv);
    if (q < n) {
        for (size_t p = 0; p < k; p++)
            w[p] = lp->A[lp->rowN[p] * n + q];
        double *wk = w + k;
        surety_dense_gemv(0, k, k, 1.0, lp->Kinv, n, w, 0.0, wk);
        for (size_t c = 0; c < k; c++)
            dv[lp->colS[c]] = -wk[c];
        dv[q] = 1.0;
    } else {
        size_t p = (size_t)lp->posN[q - n];
        for (size_t c = 0; c < k; c++)
            dv[lp->colS[c]] = lp->Kinv[c * n + p];
    }
    double *ds = dv + n;
    memset(ds, 0, m * sizeof *ds);
    for (size_t c = 0; c < k; c++)
        col_axpy(lp, lp->colS[c], dv[lp->colS[c]], ds);
    if (q < n)
        col_axpy(lp, q, 1.0, ds);
    for (size_t p = 0; p < k; p++)
        ds[lp->rowN[p]] = 0.0;
    if (q >= n)
        dv[q] = 1.0;
}

/* rho := row of B^-1 belonging to the basic variable r (an m-vector),
 * then alpha := rho^T [A, -I] over all variables (basic entries are
 * meaningless). */
static void btran_row(surety_lp *lp, size_t r)
{
    size_t n = lp->n, k = lp->k, m = lp->m;
    double *rho = lp->rho, *z = lp->tmp;
    memset(rho, 0, m * sizeof *rho);
    if (r < n) {
        const double *row = lp->Kinv + (size_t)lp->posS[r] * n;
        for (size_t p = 0; p < k; p++)
            rho[lp->rowN[p]] = row[p];
    } else {
        const double *a = lp->A + (r - n) * n;
        double *v = z + k;
        for (size_t c = 0; c < k; c++)
            v[c] = a[lp->colS[c]];
        surety_dense_gemv(1, k, k, 1.0, lp->Kinv, n, v, 0.0, z);
        for (size_t p = 0; p < k; p++)
            rho[lp->rowN[p]] = z[p];
        rho[r - n] = -1.0;
    }
    /* rho lives on R_N (and row r): k + 1 rows of A instead of m */
    double *al = lp->alpha;
    memset(al, 0, n * sizeof *al);
    for (size_t p = 0; p < k; p++) {
        double f = rho[lp->rowN[p]];
        if (f != 0.0)
            axpy(n, f, lp->A + lp->rowN[p] * n, al);
    }
    if (r >= n)
        axpy(n, -1.0, lp->A + (r - n) * n, al);
    for (size_t i = 0; i < m; i++)
        al[n + i] = -rho[i];
}

/* Basis change: q enters, r leaves. Needs dv from ftran(q) and, when r
 * is a logical, rho from btran_row(r). Updates K^-1 by one of:
 *  1. column q replaces column r in S (product-form eta update),
 *  2. row r replaces row i = q - n in R_N (eta update from the right),
 *  3. column q and row r join (bordering by the Schur complement),
 *  4. column r and row q - n leave (inverse of a principal deletion:
 *     E - f g^T / h).
 * Each is O(k^2) via BLAS dger (Chvatal 1983, ch. 7; Maros 2003, ch. 8,
 * for the eta and bordering formulas). */
static void pivot_update(surety_lp *lp, size_t q, size_t r)
{
    size_t n = lp->n, k = lp->k;
    double *M = lp->Kinv, *w = lp->tmp, *z = lp->tmp + n;
    if (r < n && q < n) {
        size_t c = (size_t)lp->posS[r];
        for (size_t cc = 0; cc < k; cc++)
            w[cc] = -lp->dv[lp->colS[cc]];
        double piv = w[c];
        double *row = z;
        for (size_t p = 0; p < k; p++)
            row[p] = M[c * n + p] / piv;
        w[c] = 0.0;
        surety_dense_ger(k, k, -1.0, w, row, M, n);
        memcpy(M + c * n, row, k * sizeof *row);
        lp->colS[c] = q;
        lp->posS[q] = (long)c;
        lp->posS[r] = -1;
    } else if (r >= n && q >= n) {
        size_t p = (size_t)lp->posN[q - n];
        for (size_t pp = 0; pp < k; pp++)
            z[pp] = lp->rho[lp->rowN[pp]];
        double piv = z[p];
        for (size_t c = 0; c < k; c++)
            w[c] = M[c * n + p] / piv;
        z[p] = 0.0;
        surety_dense_ger(k, k, -1.0, w, z, M, n);
        for (size_t c = 0; c < k; c++)
            M[c * n + p] = w[c];
        lp->rowN[p] = r - n;
        lp->posN[r - n] = (long)p;
        lp->posN[q - n] = -1;
    } else if (r >= n) {
        /* q < n enters, logical r leaves: grow. s = A_rq - v^T w, and
         * alpha_rq = -s. */
        for (size_t c = 0; c < k; c++)
            w[c] = -lp->dv[lp->colS[c]];
        for (size_t p = 0; p < k; p++)
            z[p] = lp->rho[lp->rowN[p]];
        double s = lp->dv[r];
        surety_dense_ger(k, k, 1.0 / s, w, z, M, n);
        for (size_t c = 0; c < k; c++)
            M[c * n + k] = -w[c] / s;
        for (size_t p = 0; p < k; p++)
            M[k * n + p] = -z[p] / s;
        M[k * n + k] = 1.0 / s;
        lp->colS[k] = q;
        lp->posS[q] = (long)k;
        lp->rowN[k] = r - n;
        lp->posN[r - n] = (long)k;
        lp->k = k + 1;
    } else {
        /* column r leaves, logical q enters: shrink. */
        size_t c = (size_t)lp->posS[r], p = (size_t)lp->posN[q - n];
        double h = M[c * n + p];
        for (size_t cc = 0; cc < k; cc++)
            w[cc] = M[cc * n + p];
        memcpy(z, M + c * n, k * sizeof *z);
        surety_dense_ger(k, k, -1.0 / h, w, z, M, n);
        size_t last = k - 1;
        if (c != last) {
            memcpy(M + c * n, M + last * n, k * sizeof *M);
            lp->colS[c] = lp->colS[last];
            lp->posS[lp->colS[c]] = (long)c;
        }
        if (p != last) {
            for (size_t cc = 0; cc < last; cc++)
                M[cc * n + p] = M[cc * n + last];
            lp->rowN[p] = lp->rowN[last];
            lp->posN[lp->rowN[p]] = (long)p;
        }
        lp->posS[r] = -1;
        lp->posN[q - n] = -1;
        lp->k = last;
    }
    lp->nupd++;
}

/* ------------------------------------------------------------------ */
/* Primal and dual values from scratch                                 */
/* ------------------------------------------------------------------ */

/* Nonbasic values from the statuses; basic columns from K x_S = s(R_N)
 * - A(R_N, nonbasic) x_N; basic logicals as A x. */
static void compute_primal(surety_lp *lp)
{
    size_t n = lp->n, m = lp->m, k = lp->k;
    double *x = lp->x, *t = lp->tmp, *rhs = lp->tmp + n + lp->mcap;
    for (size_t j = 0; j < n + m; j++)
        if (lp->stat[j] != SURETY_LP_BASIC)
            x[j] = nonbasic_value(lp, j);
    for (size_t c = 0; c < k; c++)
        x[lp->colS[c]] = 0.0;
    for (size_t p = 0; p < k; p++) {
        const double *a = lp->A + lp->rowN[p] * n;
        double sum = 0.0;
        for (size_t j = 0; j < n; j++)
            sum += a[j] * x[j];
        rhs[p] = x[n + lp->rowN[p]] - sum;
    }
    surety_dense_gemv(0, k, k, 1.0, lp->Kinv, n, rhs, 0.0, t);
    for (size_t c = 0; c < k; c++)
        x[lp->colS[c]] = t[c];
    surety_dense_gemv(0, m, n, 1.0, lp->A, n, x, 0.0, t);
    for (size_t i = 0; i < m; i++)
        if (lp->stat[n + i] == SURETY_LP_BASIC)
            x[n + i] = t[i];
}

/* y^T B = cost_B; d = cost - [A, -I]^T y. Basic logicals give y_i =
 * -cost_{n+i} on R_B; K^T y(R_N) = cost_S - A(R_B,S)^T y(R_B). The duals
 * y are left in rho. */
static void compute_dual(surety_lp *lp)
{
    size_t n = lp->n, m = lp->m, k = lp->k;
    double *y = lp->rho, *t = lp->tmp, *rhs = lp->tmp + n;
    int any = 0;
    for (size_t i = 0; i < m; i++) {
        y[i] = lp->posN[i] < 0 ? -lp->cost[n + i] : 0.0;
        any |= y[i] != 0.0;
    }
    if (any)
        surety_dense_gemv(1, m, n, 1.0, lp->A, n, y, 0.0, t);
    else
        memset(t, 0, n * sizeof *t);
    for (size_t c = 0; c < k; c++)
        rhs[c] = lp->cost[lp->colS[c]] - t[lp->colS[c]];
    double *yn = rhs + k;
    surety_dense_gemv(1, k, k, 1.0, lp->Kinv, n, rhs, 0.0, yn);
    for (size_t p = 0; p < k; p++)
        y[lp->rowN[p]] = yn[p];
    surety_dense_gemv(1, m, n, 1.0, lp->A, n, y, 0.0, t);
    for (size_t j = 0; j < n; j++)
        lp->d[j] = lp->stat[j] == SURETY_LP_BASIC ? 0.0 : lp->cost[j] - t[j];
    for (size_t i = 0; i < m; i++)
        lp->d[n + i] =
            lp->stat[n + i] == SURETY_LP_BASIC ? 0.0 : lp->cost[n + i] + y[i];
}

/* 1 when the nonbasic j's reduced cost has the sign its position needs. */
static int dual_ok(const surety_lp *lp, size_t j)
{
    if (lp->wlb[j] == lp->wub[j])
        return 1;
    switch (lp->stat[j]) {
    case SURETY_LP_AT_LOWER:
        return lp->d[j] >= -OPT_TOL;
    case SURETY_LP_AT_UPPER:
        return lp->d[j] <= OPT_TOL;
    case SURETY_LP_AT_ZERO:
        return fabs(lp->d[j]) <= OPT_TOL;
    default:
        return 1;
    }
}

/* After a rebuild the recomputed reduced costs may have drifted past the
 * tolerance: boxed variables move to the other bound (primal change),
 * others get their cost shifted so d_j = 0 (Koberstein 2005, sec. 6.2,
 * cost shifting). Returns 1 when some value moved. */
static int flip_boxed(surety_lp *lp)
{
    int moved = 0;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || dual_ok(lp, j))
            continue;
        if (boxed(lp, j) && lp->stat[j] != SURETY_LP_AT_ZERO) {
            lp->stat[j] = lp->d[j] > 0 ? SURETY_LP_AT_LOWER : SURETY_LP_AT_UPPER;
            moved = 1;
        }
    }
    return moved;
}

static void shift_costs(surety_lp *lp)
{
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || dual_ok(lp, j))
            continue;
        lp->cost[j] -= lp->d[j];
        lp->d[j] = 0.0;
        lp->perturbed = 1;
    }
}

static int repair_dual(surety_lp *lp)
{
    int moved = flip_boxed(lp);
    shift_costs(lp);
    return moved;
}

static int rebuild(surety_lp *lp)
{
    int rc = refactor(lp);
    if (rc < -1)
        return -1;
    compute_dual(lp);
    repair_dual(lp);
    compute_primal(lp);
    return rc;
}

/* ------------------------------------------------------------------ */
/* Set-up of a solve                                                   */
/* ------------------------------------------------------------------ */

/* Places every nonbasic variable at the bound its reduced cost asks for.
 * Where that bound is infinite, an artificial bound at distance `box`
 * stands in (Koberstein 2005, sec. 4.2, artificial bounding); a later
 * primal phase removes it. */
static void place_nonbasics(surety_lp *lp)
{
    size_t nv = lp->n + lp->m;
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC)
            continue;
        double l = lp->lb[j], u = lp->ub[j], dj = lp->d[j];
        if (l == u) {
            lp->stat[j] = SURETY_LP_AT_LOWER;
            continue;
        }
        if (dual_ok(lp, j) && lp->stat[j] != SURETY_LP_AT_ZERO &&
            isfinite(lp->stat[j] == SURETY_LP_AT_LOWER ? l : u))
            continue;
        if (dj > OPT_TOL) {
            lp->stat[j] = SURETY_LP_AT_LOWER;
            if (!isfinite(l)) {
                lp->wlb[j] = (isfinite(u) ? u : 0.0) - lp->box;
                lp->artificial = 1;
            }
        } else if (dj < -OPT_TOL) {
            lp->stat[j] = SURETY_LP_AT_UPPER;
            if (!isfinite(u)) {
                lp->wub[j] = (isfinite(l) ? l : 0.0) + lp->box;
                lp->artificial = 1;
            }
        } else if (lp->stat[j] == SURETY_LP_AT_ZERO) {
            continue;
        } else if (isfinite(l)) {
            lp->stat[j] = SURETY_LP_AT_LOWER;
        } else if (isfinite(u)) {
            lp->stat[j] = SURETY_LP_AT_UPPER;
        } else {
            lp->stat[j] = SURETY_LP_AT_ZERO;
            lp->x[j] = 0.0;
        }
    }
}

/* Drops the artificial bounds: variables resting on one become nonbasic
 * at their value (SURETY_LP_AT_ZERO), for the primal phase to move. */
static void drop_artificial(surety_lp *lp)
{
    size_t nv = lp->n + lp->m;
    for (size_t j = 0; j < nv; j++) {
        if (lp->wlb[j] == lp->lb[j] && lp->wub[j] == lp->ub[j])
            continue;
        if (lp->stat[j] == SURETY_LP_AT_LOWER && lp->wlb[j] != lp->lb[j])
            lp->stat[j] = SURETY_LP_AT_ZERO;
        if (lp->stat[j] == SURETY_LP_AT_UPPER && lp->wub[j] != lp->ub[j])
            lp->stat[j] = SURETY_LP_AT_ZERO;
        lp->wlb[j] = lp->lb[j];
        lp->wub[j] = lp->ub[j];
    }
    lp->artificial = 0;
}

/* Cost perturbation against stalling (Koberstein 2005, sec. 6.2.2):
 * each nonbasic cost moves by a small random amount in the direction
 * that makes its reduced cost more feasible, breaking dual ties. */
static void perturb(surety_lp *lp)
{
    size_t nv = lp->n + lp->m;
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || lp->wlb[j] == lp->wub[j])
            continue;
        double base = j < lp->n ? fabs(lp->obj[j]) : 0.0;
        double delta = (1e-7 + 1e-7 * base) * (0.5 + urand(lp));
        if (lp->stat[j] == SURETY_LP_AT_LOWER) {
            lp->cost[j] += delta;
            lp->d[j] += delta;
        } else if (lp->stat[j] == SURETY_LP_AT_UPPER) {
            lp->cost[j] -= delta;
            lp->d[j] -= delta;
        }
    }
    lp->perturbed = 1;
}

static void restore_cost(surety_lp *lp)
{
    for (size_t j = 0; j < lp->n; j++)
        lp->cost[j] = -lp->obj[j];
    for (size_t i = 0; i < lp->m; i++)
        lp->cost[lp->n + i] = 0.0;
    lp->perturbed = 0;
}

/* Largest primal infeasibility of a basic variable, 0 when feasible. */
static double infeas(const surety_lp *lp, size_t j, double *target)
{
    double v = lp->x[j];
    if (v < lp->wlb[j] - ftol(lp->wlb[j])) {
        *target = lp->wlb[j];
        return lp->wlb[j] - v;
    }
    if (v > lp->wub[j] + ftol(lp->wub[j])) {
        *target = lp->wub[j];
        return v - lp->wub[j];
    }
    return 0.0;
}

static int primal_feasible(const surety_lp *lp)
{
    double t;
    for (size_t j = 0; j < lp->n + lp->m; j++)
        if (lp->stat[j] == SURETY_LP_BASIC && infeas(lp, j, &t) > 0.0)
            return 0;
    return 1;
}

/* ------------------------------------------------------------------ */
/* Dual phase                                                          */
/* ------------------------------------------------------------------ */

/* Bound-flipping ratio test with Harris tolerances (Koberstein 2005,
 * sec. 3.1.4, algorithm "BFRT with Harris' tolerance"): candidates in
 * order of their dual ratio are passed, and flipped to their other bound,
 * while the primal infeasibility `slope` of the leaving row stays
 * positive; within each Harris group the largest |alpha| is preferred.
 * Sets *q to the entering variable (or -1) and returns the count of
 * flipped candidates, which are left in cand[0..flips-1]. */
static size_t ratio_test(surety_lp *lp, double sgn, double slope, long *q)
{
    size_t nv = lp->n + lp->m, nc = 0;
    size_t *cand = lp->cand;
    double amax = 0.0;
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || lp->wlb[j] == lp->wub[j])
            continue;
        double a = fabs(lp->alpha[j]);
        if (a > amax)
            amax = a;
    }
    double ptol = PIVOT_TOL * (amax > 1.0 ? amax : 1.0);
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || lp->wlb[j] == lp->wub[j])
            continue;
        double a = sgn * lp->alpha[j];
        if (fabs(a) <= ptol)
            continue;
        int s = lp->stat[j];
        if ((s == SURETY_LP_AT_LOWER && a > 0) ||
            (s == SURETY_LP_AT_UPPER && a < 0) || s == SURETY_LP_AT_ZERO)
            cand[nc++] = j;
    }
    *q = -1;
    size_t flips = 0;
    size_t lo = 0; /* cand[0..flips) flipped, cand[lo..nc) still open */
    lo = 0;
    while (lo < nc) {
        double tmax = INFINITY;
        for (size_t t = lo; t < nc; t++) {
            size_t j = cand[t];
            double r = (fabs(lp->d[j]) + OPT_TOL) / fabs(lp->alpha[j]);
            if (r < tmax)
                tmax = r;
        }
        /* Move the group with ratio <= tmax to the front of the open part. */
        size_t g = lo;
        double drop = 0.0;
        for (size_t t = lo; t < nc; t++) {
            size_t j = cand[t];
            if (fabs(lp->d[j]) / fabs(lp->alpha[j]) <= tmax) {
                cand[t] = cand[g];
                cand[g++] = j;
                if (lp->stat[j] == SURETY_LP_AT_ZERO || !boxed(lp, j))
                    drop = INFINITY;
                else
                    drop += fabs(lp->alpha[j]) * (lp->wub[j] - lp->wlb[j]);
            }
        }
        if (g < nc && slope - drop > 0.0) {
            /* the whole group can be passed: flip it */
            slope -= drop;
            for (size_t t = lo; t < g; t++)
                cand[flips++] = cand[t];
            lo = g;
            continue;
        }
        double best = -1.0;
        for (size_t t = lo; t < g; t++) {
            size_t j = cand[t];
            if (fabs(lp->alpha[j]) > best) {
                best = fabs(lp->alpha[j]);
                *q = (long)j;
            }
        }
        break;
    }
    return flips;
}

/* When the ratio test finds no entering variable the leaving row cannot
 * be repaired: the LP is infeasible, unless the proof leans on an
 * artificial bound; then the box is enlarged and 1 returned. */
static int enlarge_box(surety_lp *lp)
{
    if (!lp->artificial || lp->box >= ARTIFICIAL_MAX)
        return 0;
    int used = 0;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC)
            continue;
        if ((lp->wlb[j] != lp->lb[j] || lp->wub[j] != lp->ub[j]) &&
            fabs(lp->alpha[j]) > PIVOT_TOL)
            used = 1;
    }
    if (!used)
        return 0;
    double grow = 1e3;
    lp->box *= grow;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->wlb[j] != lp->lb[j])
            lp->wlb[j] = (isfinite(lp->ub[j]) ? lp->ub[j] : 0.0) - lp->box;
        if (lp->wub[j] != lp->ub[j])
            lp->wub[j] = (isfinite(lp->lb[j]) ? lp->lb[j] : 0.0) + lp->box;
    }
    compute_primal(lp);
    return 1;
}

/* Y(:,t) = A X(:,t) for the columns t in use (0: dv, 1: tau when exact
 * steepest edge, 2: flips), each X(:,t) living on S plus the entering
 * and the flipped columns, so only those columns of A are read. X and Y
 * hold their columns contiguously (n and mcap apart). */
static void slack_parts(surety_lp *lp, size_t q, size_t flips)
{
    size_t n = lp->n, m = lp->m, cap = lp->mcap;
    const double *X = lp->X;
    double *Y = lp->Y;
    memset(Y, 0, m * sizeof *Y);
    if (DSE_EXACT)
        memset(Y + cap, 0, m * sizeof *Y);
    if (flips)
        memset(Y + 2 * cap, 0, m * sizeof *Y);
    for (size_t c = 0; c < lp->k; c++) {
        size_t j = lp->colS[c];
        col_axpy(lp, j, X[j], Y);
        if (DSE_EXACT)
            col_axpy(lp, j, X[n + j], Y + cap);
        if (flips)
            col_axpy(lp, j, X[2 * n + j], Y + 2 * cap);
    }
    if (q < n)
        col_axpy(lp, q, X[q], Y);
    for (size_t t = 0; t < flips; t++)
        if (lp->cand[t] < n)
            col_axpy(lp, lp->cand[t], X[2 * n + lp->cand[t]], Y + 2 * cap);
}

/* The three columns a dual iteration needs, from one pass over A:
 *   dv  = -B^-1 a_q  (change of the basics per unit increase of x_q),
 *   tau = B^-1 rho   (for the steepest-edge update),
 *   fl  = change of every variable caused by the bound flips cand[0..flips)
 *         (the flipped variables themselves included).
 * Structural parts come from K^-1; the logicals of R_B follow as A times
 * the structural part: Y = A X with X n x 3. */
static void dual_columns(surety_lp *lp, size_t q, size_t flips)
{
    size_t n = lp->n, m = lp->m, k = lp->k;
    double *X = lp->X, *Y = lp->Y, *w = lp->tmp, *wk = lp->tmp + n;
    memset(X, 0, 3 * n * sizeof *X);
    if (q < n) {
        for (size_t p = 0; p < k; p++)
            w[p] = lp->A[lp->rowN[p] * n + q];
        surety_dense_gemv(0, k, k, 1.0, lp->Kinv, n, w, 0.0, wk);
        for (size_t c = 0; c < k; c++)
            X[lp->colS[c]] = -wk[c];
        X[q] = 1.0;
    } else {
        size_t p = (size_t)lp->posN[q - n];
        for (size_t c = 0; c < k; c++)
            X[lp->colS[c]] = lp->Kinv[c * n + p];
    }
    if (DSE_EXACT) {
        for (size_t p = 0; p < k; p++)
            w[p] = lp->rho[lp->rowN[p]];
        surety_dense_gemv(0, k, k, 1.0, lp->Kinv, n, w, 0.0, wk);
        for (size_t c = 0; c < k; c++)
            X[n + lp->colS[c]] = wk[c];
    }
    if (flips > 0) {
        /* K dx_S = ds(R_N) - A(R_N, flipped columns) dx_flipped */
        for (size_t p = 0; p < k; p++)
            w[p] = 0.0;
        for (size_t t = 0; t < flips; t++) {
            size_t j = lp->cand[t];
            double to = lp->stat[j] == SURETY_LP_AT_LOWER ? lp->wub[j]
                                                          : lp->wlb[j];
            lp->fl[j] = to - lp->x[j];
            if (j < n)
                X[2 * n + j] = lp->fl[j];
            else
                w[lp->posN[j - n]] += lp->fl[j];
        }
        for (size_t p = 0; p < k; p++) {
            const double *a = lp->A + lp->rowN[p] * n;
            double sum = 0.0;
            for (size_t j = 0; j < n; j++)
                sum += a[j] * X[2 * n + j];
            w[p] -= sum;
        }
        surety_dense_gemv(0, k, k, 1.0, lp->Kinv, n, w, 0.0, wk);
        for (size_t c = 0; c < k; c++)
            X[2 * n + lp->colS[c]] = wk[c];
    }
    slack_parts(lp, q, flips);
    for (size_t j = 0; j < n; j++) {
        lp->dv[j] = X[j];
        lp->tau[j] = X[n + j];
        if (flips > 0 && lp->stat[j] == SURETY_LP_BASIC)
            lp->fl[j] = X[2 * n + j];
    }
    for (size_t i = 0; i < m; i++) {
        int basic = lp->posN[i] < 0;
        lp->dv[n + i] = basic ? Y[i] : 0.0;
        lp->tau[n + i] = basic ? Y[lp->mcap + i] - lp->rho[i] : 0.0;
        if (flips > 0 && basic)
            lp->fl[n + i] = Y[2 * lp->mcap + i];
    }
    if (q >= n)
        lp->dv[q] = 1.0;
}

/* Dual simplex iterations until primal feasible (returns OPTIMAL for the
 * costs and bounds in use), infeasible, or a limit. Dual feasibility is
 * kept throughout. Pricing by dual steepest edge: the leaving variable
 * maximises infeasibility^2 / ||row of B^-1||^2, the weights updated by
 * the recurrence of J. J. Forrest and D. Goldfarb, "Steepest-edge simplex
 * algorithms for linear programming", Math. Programming 57 (1992)
 * 341-374, in the form of Koberstein 2005, sec. 3.3 (weights start at 1
 * where unknown, a common practice). */
static surety_lp_status dual_phase(surety_lp *lp, int allow_perturb)
{
    size_t n = lp->n;
    int stall = 0, retried = 0;
    for (;;) {
        size_t nv = n + lp->m;
        if (lp->nupd >= REFACTOR_EVERY) {
            if (rebuild(lp) < 0)
                return SURETY_LP_NUMERIC;
        }
        long r = -1;
        double best = 0.0, target = 0.0;
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] != SURETY_LP_BASIC)
                continue;
            double t, v = infeas(lp, j, &t);
            if (v > 0.0 && v * v > best * lp->wgt[j]) {
                best = v * v / lp->wgt[j];
                r = (long)j;
                target = t;
            }
        }
        if (r < 0)
            return SURETY_LP_OPTIMAL;
        if (lp->iters >= lp->iter_limit)
            return SURETY_LP_ITER_LIMIT;
        /* Every basis met here is dual feasible for the costs in use, so
         * with the true costs and bounds c^T x bounds the optimum from
         * above (weak duality) and only decreases. */
        if (lp->cutoff > -INFINITY && !lp->perturbed && !lp->artificial) {
            double v = 0.0;
            for (size_t j = 0; j < n; j++)
                v += lp->obj[j] * lp->x[j];
            if (v <= lp->cutoff)
                return SURETY_LP_CUTOFF;
        }
        double delta = lp->x[r] - target; /* > 0: leaves to its upper */
        double sgn = delta > 0 ? 1.0 : -1.0;
        btran_row(lp, (size_t)r);
        double beta_r = 0.0;
        for (size_t i = 0; i < lp->m; i++)
            beta_r += lp->rho[i] * lp->rho[i];
        lp->wgt[r] = beta_r;
        long q;
        size_t flips = ratio_test(lp, sgn, fabs(delta), &q);
        if (q < 0) {
            if (enlarge_box(lp))
                continue;
            if (lp->nupd > 0 && !retried) {
                retried = 1;
                if (rebuild(lp) < 0)
                    return SURETY_LP_NUMERIC;
                continue;
            }
            return SURETY_LP_INFEASIBLE;
        }
        dual_columns(lp, (size_t)q, flips);
        double arq_col = -lp->dv[r], arq_row = lp->alpha[q];
        if (fabs(arq_col - arq_row) > 1e-8 * (1.0 + fabs(arq_col)) ||
            fabs(arq_col) <= PIVOT_TOL) {
            /* The updated inverse has drifted: rebuild and price again. */
            if (lp->nupd > 0 && !retried) {
                retried = 1;
                if (rebuild(lp) < 0)
                    return SURETY_LP_NUMERIC;
                continue;
            }
            if (fabs(arq_col) <= PIVOT_TOL)
                return SURETY_LP_NUMERIC;
        }
        retried = 0;
        /* dual step; a slightly infeasible d_q (Harris) is shifted to 0 */
        double dq = lp->d[q];
        if ((lp->stat[q] == SURETY_LP_AT_LOWER && dq < 0) ||
            (lp->stat[q] == SURETY_LP_AT_UPPER && dq > 0) ||
            lp->stat[q] == SURETY_LP_AT_ZERO) {
            lp->cost[q] -= dq;
            dq = 0.0;
            if (lp->d[q] != 0.0)
                lp->perturbed = 1;
        }
        double thd = dq / arq_row;
        for (size_t j = 0; j < nv; j++)
            if (lp->stat[j] != SURETY_LP_BASIC)
                lp->d[j] -= thd * lp->alpha[j];
        lp->d[r] = -thd;
        lp->d[q] = 0.0;
        if (fabs(thd) <= 1e-12) {
            if (++stall >= STALL_PERTURB && allow_perturb && !lp->perturbed) {
                perturb(lp);
                stall = 0;
            }
        } else {
            stall = 0;
        }
        /* bound flips move the basics by fl */
        if (flips > 0) {
            for (size_t j = 0; j < nv; j++)
                if (lp->stat[j] == SURETY_LP_BASIC)
                    lp->x[j] += lp->fl[j];
            for (size_t t = 0; t < flips; t++) {
                size_t j = lp->cand[t];
                if (lp->stat[j] == SURETY_LP_AT_LOWER) {
                    lp->stat[j] = SURETY_LP_AT_UPPER;
                    lp->x[j] = lp->wub[j];
                } else {
                    lp->stat[j] = SURETY_LP_AT_LOWER;
                    lp->x[j] = lp->wlb[j];
                }
            }
        }
        /* primal step: x_r reaches its violated bound */
        double thp = (target - lp->x[r]) / lp->dv[r];
        for (size_t j = 0; j < nv; j++)
            if (lp->dv[j] != 0.0 &&
                (lp->stat[j] == SURETY_LP_BASIC || j == (size_t)q))
                lp->x[j] += thp * lp->dv[j];
        lp->x[r] = target;
        /* steepest-edge weights: alpha_iq / alpha_rq = dv_i / dv_r */
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] != SURETY_LP_BASIC || j == (size_t)r ||
                lp->dv[j] == 0.0)
                continue;
            double f = lp->dv[j] / lp->dv[r];
            double wj = DSE_EXACT
                            ? lp->wgt[j] - 2.0 * f * lp->tau[j] + f * f * beta_r
                            : lp->wgt[j];
            lp->wgt[j] = DSE_EXACT ? fmax(wj, fmax(f * f, 1e-12))
                                   : fmax(wj, f * f * beta_r);
        }
        lp->wgt[q] = fmax(beta_r / (arq_col * arq_col), 1e-12);
        lp->stat[q] = SURETY_LP_BASIC;
        lp->stat[r] = delta > 0 ? SURETY_LP_AT_UPPER : SURETY_LP_AT_LOWER;
        pivot_update(lp, (size_t)q, (size_t)r);
        lp->d[q] = 0.0;
        lp->iters++;
    }
}

/* ------------------------------------------------------------------ */
/* Primal phase                                                        */
/* ------------------------------------------------------------------ */

/* Primal simplex from a primal feasible basis (Chvatal 1983, ch. 8, for
 * bounded variables; Dantzig pricing, two-pass Harris ratio test).
 * Removes the dual infeasibilities left by artificial bounds, cost
 * shifts and perturbation; proves unboundedness. */
static surety_lp_status primal_phase(surety_lp *lp)
{
    size_t n = lp->n;
    compute_dual(lp);
    for (;;) {
        size_t nv = n + lp->m;
        if (lp->nupd >= REFACTOR_EVERY) {
            int rc = refactor(lp);
            if (rc < -1)
                return SURETY_LP_NUMERIC;
            compute_dual(lp);
            if (rc > 0) {
                /* singular: the all-logical basis replaced it; make it
                 * dual feasible and hand back to the dual phase */
                repair_dual(lp);
                compute_primal(lp);
                return SURETY_LP_UNSOLVED;
            }
            compute_primal(lp);
        }
        long q = -1;
        double best = 0.0, dir = 0.0;
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] == SURETY_LP_BASIC || dual_ok(lp, j))
                continue;
            double dj = lp->d[j], sj = dj < 0 ? 1.0 : -1.0;
            if (lp->stat[j] == SURETY_LP_AT_LOWER && dj > 0)
                continue;
            if (lp->stat[j] == SURETY_LP_AT_UPPER && dj < 0)
                continue;
            if (fabs(dj) > best) {
                best = fabs(dj);
                q = (long)j;
                dir = sj;
            }
        }
        if (q < 0)
            return SURETY_LP_OPTIMAL;
        if (lp->iters >= lp->iter_limit)
            return SURETY_LP_ITER_LIMIT;
        ftran(lp, (size_t)q);
        double amax = 0.0;
        for (size_t j = 0; j < nv; j++)
            if (lp->stat[j] == SURETY_LP_BASIC && fabs(lp->dv[j]) > amax)
                amax = fabs(lp->dv[j]);
        double ptol = PIVOT_TOL * (amax > 1.0 ? amax : 1.0);
        double tmax = INFINITY;
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] != SURETY_LP_BASIC)
                continue;
            double g = dir * lp->dv[j];
            if (g > ptol && isfinite(lp->wub[j])) {
                double t = (lp->wub[j] + ftol(lp->wub[j]) - lp->x[j]) / g;
                if (t < tmax)
                    tmax = t;
            } else if (g < -ptol && isfinite(lp->wlb[j])) {
                double t = (lp->wlb[j] - ftol(lp->wlb[j]) - lp->x[j]) / g;
                if (t < tmax)
                    tmax = t;
            }
        }
        long r = -1;
        double gbest = 0.0, theta = 0.0;
        if (isfinite(tmax)) {
            for (size_t j = 0; j < nv; j++) {
                if (lp->stat[j] != SURETY_LP_BASIC)
                    continue;
                double g = dir * lp->dv[j], t;
                if (g > ptol && isfinite(lp->wub[j]))
                    t = (lp->wub[j] - lp->x[j]) / g;
                else if (g < -ptol && isfinite(lp->wlb[j]))
                    t = (lp->wlb[j] - lp->x[j]) / g;
                else
                    continue;
                if (t <= tmax && fabs(g) > gbest) {
                    gbest = fabs(g);
                    r = (long)j;
                    theta = t > 0 ? t : 0.0;
                }
            }
        }
        double range = dir > 0 ? lp->wub[q] - lp->x[q] : lp->x[q] - lp->wlb[q];
        if (r < 0 && !isfinite(range))
            return SURETY_LP_UNBOUNDED;
        lp->iters++;
        if (r < 0 || range <= theta) {
            /* bound flip of the entering variable */
            for (size_t j = 0; j < nv; j++)
                if (lp->stat[j] == SURETY_LP_BASIC)
                    lp->x[j] += dir * range * lp->dv[j];
            lp->stat[q] = dir > 0 ? SURETY_LP_AT_UPPER : SURETY_LP_AT_LOWER;
            lp->x[q] = dir > 0 ? lp->wub[q] : lp->wlb[q];
            continue;
        }
        int to_upper = dir * lp->dv[r] > 0;
        for (size_t j = 0; j < nv; j++)
            if (lp->stat[j] == SURETY_LP_BASIC)
                lp->x[j] += dir * theta * lp->dv[j];
        lp->x[q] += dir * theta;
        lp->x[r] = to_upper ? lp->wub[r] : lp->wlb[r];
        if (r >= (long)n)
            btran_row(lp, (size_t)r);
        lp->stat[q] = SURETY_LP_BASIC;
        lp->stat[r] = to_upper ? SURETY_LP_AT_UPPER : SURETY_LP_AT_LOWER;
        lp->wgt[q] = 1.0;
        pivot_update(lp, (size_t)q, (size_t)r);
        compute_dual(lp);
    }
}

/* ------------------------------------------------------------------ */
/* Public interface                                                    */
/* ------------------------------------------------------------------ */

surety_lp *surety_lp_create(size_t n, const double *c, const double *lo,
                            const double *hi)
{
    if (n == 0)
        return NULL;
    for (size_t j = 0; j < n; j++) {
        double l = lo ? lo[j] : 0.0, u = hi ? hi[j] : INFINITY;
        if ((c && (bad(c[j]) || !isfinite(c[j]))) || bad(l) || bad(u) ||
            l > u || l == INFINITY || u == -INFINITY)
            return NULL;
    }
    surety_dense_single_thread();
    surety_lp *lp = surety_xcalloc(1, sizeof *lp);
    if (!lp)
        return NULL;
    lp->n = n;
    lp->obj = surety_xmalloc(n, sizeof *lp->obj);
    lp->colS = surety_xmalloc(n, sizeof *lp->colS);
    lp->rowN = surety_xmalloc(n, sizeof *lp->rowN);
    lp->posS = surety_xmalloc(n, sizeof *lp->posS);
    lp->Kinv = surety_xmalloc(n * n > 0 ? n : 1, n * sizeof *lp->Kinv);
    lp->X = surety_xmalloc(n, 3 * sizeof *lp->X);
    if (!lp->X || !lp->obj || !lp->colS || !lp->rowN || !lp->posS || !lp->Kinv ||
        grow_rows(lp, 16) < 0) {
        surety_lp_free(lp);
        return NULL;
    }
    for (size_t j = 0; j < n; j++) {
        lp->obj[j] = c ? c[j] : 0.0;
        lp->cost[j] = -lp->obj[j];
        lp->lb[j] = lp->wlb[j] = lo ? lo[j] : 0.0;
        lp->ub[j] = lp->wub[j] = hi ? hi[j] : INFINITY;
        lp->stat[j] = isfinite(lp->lb[j])   ? SURETY_LP_AT_LOWER
                      : isfinite(lp->ub[j]) ? SURETY_LP_AT_UPPER
                                            : SURETY_LP_AT_ZERO;
        lp->x[j] = 0.0;
        lp->posS[j] = -1;
        lp->wgt[j] = 1.0;
    }
    lp->factored = 1;
    lp->box = ARTIFICIAL_BOX;
    lp->rng = 0x9E3779B97F4A7C15ULL;
    lp->cutoff = -INFINITY;
    lp->status = SURETY_LP_UNSOLVED;
    return lp;
}

void surety_lp_free(surety_lp *lp)
{
    if (!lp)
        return;
    surety_xfree(lp->A);
    surety_xfree(lp->AT);
    surety_xfree(lp->obj);
    surety_xfree(lp->cost);
    surety_xfree(lp->lb);
    surety_xfree(lp->ub);
    surety_xfree(lp->wlb);
    surety_xfree(lp->wub);
    surety_xfree(lp->x);
    surety_xfree(lp->d);
    surety_xfree(lp->stat);
    surety_xfree(lp->colS);
    surety_xfree(lp->rowN);
    surety_xfree(lp->posS);
    surety_xfree(lp->posN);
    surety_xfree(lp->Kinv);
    surety_xfree(lp->rho);
    surety_xfree(lp->alpha);
    surety_xfree(lp->dv);
    surety_xfree(lp->tmp);
    surety_xfree(lp->cand);
    surety_xfree(lp->wgt);
    surety_xfree(lp->tau);
    surety_xfree(lp->fl);
    surety_xfree(lp->X);
    surety_xfree(lp->Y);
    surety_xfree(lp);
}

size_t surety_lp_ncols(const surety_lp *lp)
{
    return lp->n;
}

size_t surety_lp_nrows(const surety_lp *lp)
{
    return lp->m;
}

static int check_bounds(double lo, double hi)
{
    return bad(lo) || bad(hi) || lo > hi || lo == INFINITY ||
           hi == -INFINITY;
}

long surety_lp_add_row(surety_lp *lp, const double *a, double rlo,
                       double rhi)
{
    if (!lp || !a || check_bounds(rlo, rhi))
        return -1;
    size_t n = lp->n, i = lp->m;
    for (size_t j = 0; j < n; j++)
        if (!isfinite(a[j]))
            return -1;
    if (grow_rows(lp, i + 1) < 0)
        return -1;
    memcpy(lp->A + i * n, a, n * sizeof *a);
    for (size_t j = 0; j < n; j++)
        lp->AT[j * lp->mcap + i] = a[j];
    size_t v = n + i;
    lp->cost[v] = 0.0;
    lp->lb[v] = lp->wlb[v] = rlo;
    lp->ub[v] = lp->wub[v] = rhi;
    lp->stat[v] = SURETY_LP_BASIC;
    lp->d[v] = 0.0;
    lp->posN[i] = -1;
    double act = 0.0;
    for (size_t j = 0; j < n; j++)
        act += a[j] * lp->x[j];
    lp->x[v] = act;
    /* weight of the new basic logical: its row of B^-1 is
     * [A(i,S) K^-1, -1], so 1 + ||z||^2 with z = K^-T A(i,S)^T. */
    double beta = 1.0;
    if (lp->factored && lp->k > 0) {
        size_t k = lp->k;
        double *vv = lp->tmp, *z = lp->tmp + k;
        for (size_t c = 0; c < k; c++)
            vv[c] = a[lp->colS[c]];
        surety_dense_gemv(1, k, k, 1.0, lp->Kinv, n, vv, 0.0, z);
        for (size_t p = 0; p < k; p++)
            beta += z[p] * z[p];
    }
    lp->wgt[v] = beta;
    lp->m = i + 1;
    lp->status = SURETY_LP_UNSOLVED;
    return (long)i;
}

int surety_lp_set_col_bounds(surety_lp *lp, size_t j, double lo, double hi)
{
    if (!lp || j >= lp->n || check_bounds(lo, hi))
        return -1;
    lp->lb[j] = lp->wlb[j] = lo;
    lp->ub[j] = lp->wub[j] = hi;
    lp->status = SURETY_LP_UNSOLVED;
    return 0;
}

int surety_lp_set_row_bounds(surety_lp *lp, size_t i, double lo, double hi)
{
    if (!lp || i >= lp->m || check_bounds(lo, hi))
        return -1;
    lp->lb[lp->n + i] = lp->wlb[lp->n + i] = lo;
    lp->ub[lp->n + i] = lp->wub[lp->n + i] = hi;
    lp->status = SURETY_LP_UNSOLVED;
    return 0;
}

int surety_lp_set_obj(surety_lp *lp, size_t j, double c)
{
    if (!lp || j >= lp->n || !isfinite(c))
        return -1;
    lp->obj[j] = c;
    lp->status = SURETY_LP_UNSOLVED;
    return 0;
}

void surety_lp_set_iter_limit(surety_lp *lp, long limit)
{
    lp->iter_limit = limit;
}

void surety_lp_set_cutoff(surety_lp *lp, double cutoff)
{
    lp->cutoff = isnan(cutoff) ? -INFINITY : cutoff;
}

/* Expensive invariant check (meson -Dexpensive_checks=true, debug
 * builds): K^-1 is the inverse of A(R_N, S), the basic values satisfy
 * A x - s = 0, and basic reduced costs vanish. */
static void check_invariants(const surety_lp *lp)
{
    size_t n = lp->n, k = lp->k;
    double worst = 0.0;
    for (size_t p = 0; p < k; p++) {
        const double *a = lp->A + lp->rowN[p] * n;
        for (size_t p2 = 0; p2 < k; p2++) {
            double v = 0.0;
            for (size_t c = 0; c < k; c++)
                v += a[lp->colS[c]] * lp->Kinv[c * n + p2];
            worst = fmax(worst, fabs(v - (p == p2 ? 1.0 : 0.0)));
        }
    }
    assert(worst < 1e-6);
    for (size_t i = 0; i < lp->m; i++) {
        const double *a = lp->A + i * n;
        double v = 0.0, scale = 1.0;
        for (size_t j = 0; j < n; j++) {
            v += a[j] * lp->x[j];
            scale = fmax(scale, fabs(a[j] * lp->x[j]));
        }
        assert(fabs(v - lp->x[n + i]) <= 1e-7 * scale);
    }
    for (size_t j = 0; j < n + lp->m; j++)
        assert(lp->stat[j] != SURETY_LP_BASIC || lp->d[j] == 0.0);
    (void)worst;
}

static void finish(surety_lp *lp, surety_lp_status st)
{
    if (SURETY_EXPENSIVE_CHECKS && lp->factored &&
        (st == SURETY_LP_OPTIMAL || st == SURETY_LP_ITER_LIMIT))
        check_invariants(lp);
    lp->status = st;
    double v = 0.0;
    for (size_t j = 0; j < lp->n; j++)
        v += lp->obj[j] * lp->x[j];
    lp->objval = st == SURETY_LP_INFEASIBLE  ? -INFINITY
                 : st == SURETY_LP_UNBOUNDED ? INFINITY
                                             : v;
}

/* One solve: rebuild from the statuses, place the nonbasics by their
 * reduced costs (artificial bounds where needed), then alternate the dual
 * phase and, when costs were shifted or bounds were artificial, a clean-up
 * primal phase on the true costs and bounds. */
surety_lp_status surety_lp_solve(surety_lp *lp)
{
    if (!lp)
        return SURETY_LP_NUMERIC;
    long limit = lp->iter_limit > 0
                     ? lp->iter_limit
                     : 1000 + 20 * (long)(lp->n + lp->m);
    long saved_limit = lp->iter_limit;
    lp->iter_limit = limit;
    lp->iters = 0;
    lp->box = ARTIFICIAL_BOX;
    lp->artificial = 0;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        lp->wlb[j] = lp->lb[j];
        lp->wub[j] = lp->ub[j];
    }
    restore_cost(lp);
    surety_lp_status st = SURETY_LP_NUMERIC;
    if (!lp->factored || lp->nupd >= REFACTOR_EVERY)
        if (refactor(lp) < -1)
            goto done;
    compute_dual(lp);
    place_nonbasics(lp);
    compute_primal(lp);
    int round;
    for (round = 0; round < MAX_ROUNDS; round++) {
        st = dual_phase(lp, round < 2);
        if (st != SURETY_LP_OPTIMAL)
            break;
        if (!lp->perturbed && !lp->artificial)
            break;
        /* Back to the true costs and bounds: boxed variables whose reduced
         * cost changed sign move to their other bound; if that leaves the
         * basics feasible, the primal phase removes what dual
         * infeasibility remains, else the costs are shifted once more and
         * the dual phase resumes. */
        restore_cost(lp);
        drop_artificial(lp);
        compute_dual(lp);
        if (flip_boxed(lp))
            compute_primal(lp);
        if (!primal_feasible(lp)) {
            shift_costs(lp);
            continue;
        }
        st = primal_phase(lp);
        if (st == SURETY_LP_UNSOLVED)
            continue;
        if (st != SURETY_LP_OPTIMAL)
            break;
        compute_primal(lp);
        if (primal_feasible(lp))
            break;
    }
    if (round == MAX_ROUNDS)
        st = SURETY_LP_NUMERIC;
    if (st == SURETY_LP_OPTIMAL || st == SURETY_LP_ITER_LIMIT) {
        if (lp->perturbed)
            restore_cost(lp);
        compute_dual(lp);
    }
done:
    lp->iter_limit = saved_limit;
    finish(lp, st);
    return st;
}

surety_lp_status surety_lp_status_of(const surety_lp *lp)
{
    return lp->status;
}

double surety_lp_obj(const surety_lp *lp)
{
    return lp->objval;
}

long surety_lp_iterations(const surety_lp *lp)
{
    return lp->iters;
}

void surety_lp_get_x(const surety_lp *lp, double *x)
{
    memcpy(x, lp->x, lp->n * sizeof *x);
}

void surety_lp_get_row_activity(const surety_lp *lp, double *act)
{
    memcpy(act, lp->x + lp->n, lp->m * sizeof *act);
}

/* From d_{n+i} = cost_{n+i} + y_i with zero logical costs: y_i = d_{n+i}
 * for nonbasic rows and 0 for basic ones, in minimisation sense. */
void surety_lp_get_row_duals(const surety_lp *lp, double *y)
{
    for (size_t i = 0; i < lp->m; i++)
        y[i] = -lp->d[lp->n + i];
}

void surety_lp_get_redcosts(const surety_lp *lp, double *d)
{
    for (size_t j = 0; j < lp->n; j++)
        d[j] = -lp->d[j];
}

size_t surety_lp_get_basis(const surety_lp *lp, signed char *status)
{
    memcpy(status, lp->stat, (lp->n + lp->m) * sizeof *status);
    return lp->n + lp->m;
}

int surety_lp_set_basis(surety_lp *lp, const signed char *status,
                        size_t nrows)
{
    if (!lp || !status || nrows > lp->m)
        return -1;
    size_t n = lp->n, basic = 0;
    for (size_t j = 0; j < n + nrows; j++) {
        if (status[j] < SURETY_LP_BASIC || status[j] > SURETY_LP_AT_ZERO)
            return -1;
        basic += status[j] == SURETY_LP_BASIC;
    }
    if (basic != nrows)
        return -1;
    memcpy(lp->stat, status, (n + nrows) * sizeof *status);
    for (size_t i = nrows; i < lp->m; i++)
        lp->stat[n + i] = SURETY_LP_BASIC;
    /* a new reference framework for the steepest-edge weights */
    for (size_t j = 0; j < n + lp->m; j++)
        lp->wgt[j] = 1.0;
    lp->factored = 0;
    lp->status = SURETY_LP_UNSOLVED;
    return 0;
}
