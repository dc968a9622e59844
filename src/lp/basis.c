/* basis.c - the working basis of the dense simplex: explicit K^-1,
 * rebuilt by LU and updated by rank-one and bordering formulas.
 * SPDX-License-Identifier: MIT */
#include "lp/basis.h"

#include <assert.h>
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "lp/dense.h"
#include "lp/state.h"

/* Working basis. With S the basic columns and R_N the rows whose logical
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
 * one, shrink by one; see surety_basis_pivot), and K^-1 is rebuilt by LU
 * (dgetrf/dgetri in dense.c) every REFACTOR_EVERY updates (simplex.c),
 * after which the primal and dual values are recomputed from scratch.
 * Eliminating the logical columns first is the usual reduction of a
 * basis to its structural kernel (Maros 2003, ch. 8, from memory); keeping
 * the kernel's inverse explicit suits dense A and small k. */

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

/* al += f * row i of A: by index when the row is sparse (a quarter or
 * less of its entries nonzero; the scenario rows of the solver's LP
 * bound have a few percent), else one BLAS axpy. */
static void row_axpy(const surety_lp *lp, size_t i, double f, double *al)
{
    size_t n = lp->n, nz = lp->rnz[i];
    const double *a = lp->A + i * n;
    if (4 * nz > n) {
        axpy(n, f, a, al);
        return;
    }
    const uint32_t *ix = lp->ridx + i * n;
    for (size_t t = 0; t < nz; t++)
        al[ix[t]] += f * a[ix[t]];
}

/* Row i of A times v (n entries), by index when the row is sparse. */
static double row_dot(const surety_lp *lp, size_t i, const double *v)
{
    size_t n = lp->n, nz = lp->rnz[i];
    const double *a = lp->A + i * n;
    double sum = 0.0;
    if (4 * nz > n) {
        for (size_t j = 0; j < n; j++)
            sum += a[j] * v[j];
        return sum;
    }
    const uint32_t *ix = lp->ridx + i * n;
    for (size_t t = 0; t < nz; t++)
        sum += a[ix[t]] * v[ix[t]];
    return sum;
}

/* y += f * column j of A (m entries). */
static void col_axpy(const surety_lp *lp, size_t j, double f, double *y)
{
    if (f != 0.0)
        axpy(lp->m, f, lp->AT + lp->slot[j] * lp->mcap, y);
}

/* Moves column j of A into slot s of AT (swapping with the column there),
 * O(m). Keeps the invariant atcol[c] = colS[c] for c < k when called for
 * each change of S. */
static void place_column(surety_lp *lp, size_t j, size_t s)
{
    size_t s0 = lp->slot[j];
    if (s0 == s)
        return;
    double *a = lp->AT + s0 * lp->mcap, *b = lp->AT + s * lp->mcap;
    for (size_t i = 0; i < lp->m; i++) {
        double t = a[i];
        a[i] = b[i];
        b[i] = t;
    }
    size_t other = lp->atcol[s];
    lp->atcol[s] = j;
    lp->slot[j] = s;
    lp->atcol[s0] = other;
    lp->slot[other] = s0;
}

/* y = A(:, S) v(S) over the first k slots of AT, v indexed by column. */
static void times_basic(surety_lp *lp, const double *v, double *y)
{
    size_t k = lp->k;
    double *vs = lp->tmp + 2 * lp->n;
    for (size_t c = 0; c < k; c++)
        vs[c] = v[lp->colS[c]];
    surety_dense_gemv(1, k, lp->m, 1.0, lp->AT, lp->mcap, vs, 0.0, y);
}

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
int surety_basis_refactor(surety_lp *lp)
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
    for (size_t c = 0; c < k; c++)
        place_column(lp, lp->colS[c], c);
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
    lp->stats.refactors++;
    if (rc > 0 || rcond < 1e-14) {
        lp->stats.singular++;
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
void surety_basis_ftran(surety_lp *lp, size_t q)
{
    size_t n = lp->n, k = lp->k;
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
    times_basic(lp, dv, ds);
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
void surety_basis_btran_row(surety_lp *lp, size_t r)
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
            row_axpy(lp, lp->rowN[p], f, al);
    }
    if (r >= n)
        row_axpy(lp, r - n, -1.0, al);
    for (size_t i = 0; i < m; i++)
        al[n + i] = -rho[i];
}

/* Basis change: q enters, r leaves. Needs dv from surety_basis_ftran(q) and, when r
 * is a logical, rho from surety_basis_btran_row(r). Updates K^-1 by one of:
 *  1. column q replaces column r in S (product-form eta update),
 *  2. row r replaces row i = q - n in R_N (eta update from the right),
 *  3. column q and row r join (bordering by the Schur complement),
 *  4. column r and row q - n leave (inverse of a principal deletion:
 *     E - f g^T / h).
 * Each is O(k^2) via BLAS dger (Chvatal 1983, ch. 7; Maros 2003, ch. 8,
 * for the eta and bordering formulas). */
void surety_basis_pivot(surety_lp *lp, size_t q, size_t r)
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
        place_column(lp, q, c);
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
        place_column(lp, q, k);
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
            place_column(lp, lp->colS[c], c);
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

/* Nonbasic values from the statuses; basic columns from K x_S = s(R_N)
 * - A(R_N, nonbasic) x_N; basic logicals as A x. */
void surety_basis_primal(surety_lp *lp)
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
void surety_basis_dual(surety_lp *lp)
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
    /* y lives on R_N unless logical costs are perturbed: then a full
     * product, else only the k rows of R_N */
    if (any) {
        surety_dense_gemv(1, m, n, 1.0, lp->A, n, y, 0.0, t);
    } else {
        memset(t, 0, n * sizeof *t);
        for (size_t p = 0; p < k; p++)
            if (yn[p] != 0.0)
                axpy(n, yn[p], lp->A + lp->rowN[p] * n, t);
    }
    for (size_t j = 0; j < n; j++)
        lp->d[j] = lp->stat[j] == SURETY_LP_BASIC ? 0.0 : lp->cost[j] - t[j];
    for (size_t i = 0; i < m; i++)
        lp->d[n + i] = lp->stat[n + i] == SURETY_LP_BASIC ? 0.0 : lp->cost[n + i] + y[i];
}

/* Y(:,t) = A X(:,t) for the columns t in use (0: dv, 1: tau when exact
 * steepest edge, 2: flips), each X(:,t) living on S plus the entering
 * and the flipped columns, so only those columns of A are read: the basic
 * ones as one BLAS product each over the first k slots of AT. X and Y
 * hold their columns contiguously (n and mcap apart). */
static void slack_parts(surety_lp *lp, size_t q, size_t flips)
{
    size_t n = lp->n, cap = lp->mcap;
    const double *X = lp->X;
    double *Y = lp->Y;
    times_basic(lp, X, Y);
    if (SURETY_LP_DSE_EXACT)
        times_basic(lp, X + n, Y + cap);
    if (flips)
        times_basic(lp, X + 2 * n, Y + 2 * cap);
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
void surety_basis_dual_columns(surety_lp *lp, size_t q, size_t flips)
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
    if (SURETY_LP_DSE_EXACT) {
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
            double to = lp->stat[j] == SURETY_LP_AT_LOWER ? lp->wub[j] : lp->wlb[j];
            lp->fl[j] = to - lp->x[j];
            if (j < n)
                X[2 * n + j] = lp->fl[j];
            else
                w[lp->posN[j - n]] += lp->fl[j];
        }
        for (size_t p = 0; p < k; p++)
            w[p] -= row_dot(lp, lp->rowN[p], X + 2 * n);
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

/* Expensive invariant check (meson -Dexpensive_checks=true, debug
 * builds): the column copy AT matches A with S in its first k slots,
 * K^-1 is the inverse of A(R_N, S), the basic values satisfy A x - s = 0,
 * and basic reduced costs vanish. */
void surety_basis_check(const surety_lp *lp)
{
    size_t n = lp->n, k = lp->k;
    double worst = 0.0;
    for (size_t s = 0; s < n; s++) {
        assert(lp->slot[lp->atcol[s]] == s);
        assert(s >= k || lp->atcol[s] == lp->colS[s]);
        for (size_t i = 0; i < lp->m; i++)
            assert(lp->AT[s * lp->mcap + i] == lp->A[i * n + lp->atcol[s]]);
    }
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

/* Rows of B^-1 (see the block form above): a basic column at position c
 * has [K^-1(c,:), 0], a basic logical of row i in R_B has
 * [A(i,S) K^-1, -e_i]; Z = A(:,S) K^-1 comes from the first k slots of AT
 * in one product. */
void surety_basis_dse_weights(surety_lp *lp)
{
    size_t n = lp->n, m = lp->m, k = lp->k;
    for (size_t c = 0; c < k; c++) {
        double w = 0.0;
        for (size_t p = 0; p < k; p++)
            w += lp->Kinv[c * n + p] * lp->Kinv[c * n + p];
        lp->wgt[lp->colS[c]] = fmax(w, 1e-12);
    }
    double *Z = k > 0 ? surety_xmalloc(m, k * sizeof *Z) : NULL;
    if (Z)
        surety_dense_gemm(1, m, k, k, lp->AT, lp->mcap, lp->Kinv, n, Z, k);
    for (size_t i = 0; i < m; i++) {
        if (lp->posN[i] >= 0)
            continue;
        double w = 1.0;
        if (Z)
            for (size_t p = 0; p < k; p++)
                w += Z[i * k + p] * Z[i * k + p];
        lp->wgt[n + i] = w;
    }
    surety_xfree(Z);
}
