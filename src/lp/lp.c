/* lp.c - the LP handle: storage of rows and bounds, changes between
 * solves, results and bases. The algorithm is in simplex.c and basis.c.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "lp/basis.h"
#include "lp/dense.h"
#include "lp/simplex.h"
#include "lp/state.h"

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
    uint32_t *ridx = surety_xrealloc(lp->ridx, cap * n, sizeof *ridx);
    if (!ridx)
        return -1;
    lp->ridx = ridx;
#define GROW(field, count)                                                                         \
    do {                                                                                           \
        void *p_ = surety_xrealloc(lp->field, (count), sizeof *lp->field);                         \
        if (!p_)                                                                                   \
            return -1;                                                                             \
        lp->field = p_;                                                                            \
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
    GROW(rnz, cap);
    GROW(rho, cap);
    GROW(alpha, nv);
    GROW(dv, nv);
    GROW(tmp, 2 * nv + cap);
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

surety_lp *surety_lp_create(size_t n, const double *c, const double *lo, const double *hi)
{
    if (n == 0)
        return NULL;
    for (size_t j = 0; j < n; j++) {
        double l = lo ? lo[j] : 0.0, u = hi ? hi[j] : INFINITY;
        if ((c && (isnan(c[j]) || !isfinite(c[j]))) || isnan(l) || isnan(u) || l > u ||
            l == INFINITY || u == -INFINITY)
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
    lp->slot = surety_xmalloc(n, sizeof *lp->slot);
    lp->atcol = surety_xmalloc(n, sizeof *lp->atcol);
    lp->Kinv = surety_xmalloc(n * n > 0 ? n : 1, n * sizeof *lp->Kinv);
    lp->X = surety_xmalloc(n, 3 * sizeof *lp->X);
    if (!lp->X || !lp->slot || !lp->atcol || !lp->obj || !lp->colS || !lp->rowN || !lp->posS ||
        !lp->Kinv || grow_rows(lp, 16) < 0) {
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
        lp->slot[j] = lp->atcol[j] = j;
    }
    lp->factored = 1;
    lp->rng = 0x9E3779B97F4A7C15ULL;
    lp->cutoff = -INFINITY;
    lp->bland_after = 50;
    lp->status = SURETY_LP_UNSOLVED;
    return lp;
}

void surety_lp_free(surety_lp *lp)
{
    if (!lp)
        return;
    surety_xfree(lp->A);
    surety_xfree(lp->ridx);
    surety_xfree(lp->rnz);
    surety_xfree(lp->AT);
    surety_xfree(lp->slot);
    surety_xfree(lp->atcol);
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
    return isnan(lo) || isnan(hi) || lo > hi || lo == INFINITY || hi == -INFINITY;
}

long surety_lp_add_row(surety_lp *lp, const double *a, double rlo, double rhi)
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
    size_t nz = 0;
    for (size_t j = 0; j < n; j++)
        if (a[j] != 0.0)
            lp->ridx[i * n + nz++] = (uint32_t)j;
    lp->rnz[i] = nz;
    for (size_t j = 0; j < n; j++)
        lp->AT[lp->slot[j] * lp->mcap + i] = a[j];
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

/* Nonbasic status nearest to the value v of column j. */
static signed char nearest_bound(const surety_lp *lp, size_t j, double v)
{
    double l = lp->lb[j], u = lp->ub[j];
    if (isfinite(l) && (!isfinite(u) || fabs(v - l) <= fabs(v - u)))
        return SURETY_LP_AT_LOWER;
    return isfinite(u) ? SURETY_LP_AT_UPPER : SURETY_LP_AT_ZERO;
}

/* A row whose logical is nonbasic is first made basic by the shrinking
 * update of K^-1 (surety_basis_pivot with a column leaving): of the basic
 * columns, the one with the largest |K^-1(c, p)| leaves, which keeps the
 * remaining kernel as well conditioned as the update allows. Then every
 * deleted row has a basic logical, and dropping such rows leaves a valid
 * basis of the rest with K^-1 unchanged. */
int surety_lp_del_rows(surety_lp *lp, const size_t *rows, size_t count)
{
    if (!lp || (count > 0 && !rows))
        return -1;
    size_t n = lp->n, m = lp->m;
    for (size_t t = 0; t < count; t++)
        if (rows[t] >= m)
            return -1;
    if (count == 0)
        return 0;
    unsigned char *del = surety_xcalloc(m, 1);
    size_t *to = surety_xmalloc(m, sizeof *to);
    if (!del || !to || (!lp->factored && surety_basis_refactor(lp) < -1)) {
        surety_xfree(del);
        surety_xfree(to);
        return -1;
    }
    for (size_t t = 0; t < count; t++)
        del[rows[t]] = 1;
    for (size_t i = 0; i < m; i++) {
        if (!del[i] || lp->posN[i] < 0)
            continue;
        size_t p = (size_t)lp->posN[i], best = 0;
        double amax = -1.0;
        for (size_t c = 0; c < lp->k; c++) {
            double a = fabs(lp->Kinv[c * n + p]);
            if (a > amax) {
                amax = a;
                best = c;
            }
        }
        size_t r = lp->colS[best];
        surety_basis_pivot(lp, n + i, r);
        lp->stat[n + i] = SURETY_LP_BASIC;
        lp->stat[r] = nearest_bound(lp, r, lp->x[r]);
    }
    size_t w = 0;
    for (size_t i = 0; i < m; i++) {
        if (del[i])
            continue;
        to[i] = w;
        if (w != i) {
            size_t a = n + i, b = n + w;
            memmove(lp->A + w * n, lp->A + i * n, n * sizeof *lp->A);
            memmove(lp->ridx + w * n, lp->ridx + i * n, lp->rnz[i] * sizeof *lp->ridx);
            lp->rnz[w] = lp->rnz[i];
            lp->cost[b] = lp->cost[a];
            lp->lb[b] = lp->lb[a];
            lp->ub[b] = lp->ub[a];
            lp->wlb[b] = lp->wlb[a];
            lp->wub[b] = lp->wub[a];
            lp->x[b] = lp->x[a];
            lp->d[b] = lp->d[a];
            lp->stat[b] = lp->stat[a];
            lp->wgt[b] = lp->wgt[a];
            lp->posN[w] = lp->posN[i];
        }
        w++;
    }
    for (size_t j = 0; j < n; j++) {
        double *col = lp->AT + j * lp->mcap;
        for (size_t i = 0; i < m; i++)
            if (!del[i])
                col[to[i]] = col[i];
    }
    for (size_t p = 0; p < lp->k; p++)
        lp->rowN[p] = to[lp->rowN[p]];
    lp->m = w;
    lp->weights_stale = 1;
    lp->status = SURETY_LP_UNSOLVED;
    surety_xfree(del);
    surety_xfree(to);
    return 0;
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

void surety_lp_set_bland_after(surety_lp *lp, long steps)
{
    lp->bland_after = steps < 0 ? 50 : steps;
}

void surety_lp_set_cutoff(surety_lp *lp, double cutoff)
{
    lp->cutoff = isnan(cutoff) ? -INFINITY : cutoff;
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

void surety_lp_get_stats(const surety_lp *lp, surety_lp_stats *stats)
{
    *stats = lp->stats;
}

size_t surety_lp_get_basis(const surety_lp *lp, signed char *status)
{
    memcpy(status, lp->stat, (lp->n + lp->m) * sizeof *status);
    return lp->n + lp->m;
}

int surety_lp_set_basis(surety_lp *lp, const signed char *status, size_t nrows)
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
    lp->weights_stale = 1;
    lp->factored = 0;
    lp->status = SURETY_LP_UNSOLVED;
    return 0;
}
