/* bigm.c - quantile big-M coefficients of the scenario rows (see bigm.h).
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "bigm.h"

/* A feasible point of the same fractional knapsack, filled in the fixed
 * order pi (taken prefix, one fractional item, nothing after): its value is
 * a lower bound. */
static double fixed_order_fill(const double *a, const double *b,
                               const size_t *pi, size_t nj, double C)
{
    double cap = C, v = 0;
    for (size_t p = 0; p < nj; p++) {
        size_t t = pi[p];
        if (b[t] <= cap) {
            v += a[t];
            cap -= b[t];
        } else {
            v += a[t] * (cap / b[t]);
            break;
        }
    }
    return v;
}

/* Value of max sum_t a[t] x_t subject to sum_t b[t] x_t <= C, 0 <= x <= 1:
 * the fractional knapsack, whose optimum takes items by decreasing a/b and
 * the last one fractionally (Dantzig's rule); items with b = 0 are always
 * taken. Instead of sorting, the critical ratio is found by a weighted
 * quickselect on the ratios (three-way partitions around a median-of-three
 * pivot, recursing into the side that holds the capacity boundary), O(nj)
 * expected (Balas & Zemel 1980). idx and r are nj scratch entries. */
static double frac_knapsack(const double *a, const double *b, size_t nj,
                            double C, double *r, size_t *idx)
{
    double v = 0, cap = C;
    size_t q = 0;
    for (size_t t = 0; t < nj; t++) {
        if (b[t] <= 0) {
            v += a[t];
        } else if (a[t] > 0) {
            r[t] = a[t] / b[t];
            idx[q++] = t;
        }
    }
    size_t lo = 0, hi = q;
    while (lo < hi) {
        double x = r[idx[lo]], y = r[idx[lo + (hi - lo) / 2]], z = r[idx[hi - 1]];
        double p = x < y ? (y < z ? y : (x < z ? z : x))
                         : (x < z ? x : (y < z ? z : y));
        /* idx[lo..gt) > p, idx[gt..i) == p, idx[lt..hi) < p */
        size_t gt = lo, i = lo, lt = hi;
        while (i < lt) {
            size_t t = idx[i];
            if (r[t] > p) {
                idx[i] = idx[gt];
                idx[gt++] = t;
                i++;
            } else if (r[t] < p) {
                idx[i] = idx[--lt];
                idx[lt] = t;
            } else {
                i++;
            }
        }
        double bg = 0, ag = 0;
        for (size_t u = lo; u < gt; u++) {
            bg += b[idx[u]];
            ag += a[idx[u]];
        }
        if (bg > cap) {
            hi = gt; /* the boundary lies among the larger ratios */
            continue;
        }
        v += ag;
        cap -= bg;
        double be = 0, ae = 0;
        for (size_t u = gt; u < lt; u++) {
            be += b[idx[u]];
            ae += a[idx[u]];
        }
        if (be >= cap)
            return v + p * cap; /* equal ratios: a = p b */
        v += ae;
        cap -= be;
        lo = lt;
    }
    return v;
}

static void heap_sift_down(double *h, size_t len, size_t p)
{
    for (;;) {
        size_t c = 2 * p + 1;
        if (c >= len)
            return;
        if (c + 1 < len && h[c + 1] > h[c])
            c++;
        if (h[p] >= h[c])
            return;
        double t = h[p];
        h[p] = h[c];
        h[c] = t;
        p = c;
    }
}

static void heap_push(double *h, size_t *len, double v)
{
    size_t p = (*len)++;
    h[p] = v;
    while (p > 0) {
        size_t q = (p - 1) / 2;
        if (h[q] >= h[p])
            break;
        double t = h[p];
        h[p] = h[q];
        h[q] = t;
        p = q;
    }
}

static int by_key_desc(const void *x, const void *y)
{
    const struct surety_bigm_keyed *a = x, *b = y;
    if (a->key > b->key)
        return -1;
    if (a->key < b->key)
        return 1;
    return a->l < b->l ? -1 : a->l > b->l;
}

int surety_bigm_init(surety_bigm_res *r, const double *w, size_t stride,
                     const size_t *jobs, size_t nj, size_t N,
                     const unsigned *cnt, double factor, double C, size_t k)
{
    memset(r, 0, sizeof *r);
    size_t nn = nj ? nj : 1, NN = N ? N : 1;
    r->N = N;
    r->nj = nj;
    r->k = k;
    r->C = C;
    r->cnt = cnt;
    r->a = surety_xmalloc(NN, nn * sizeof *r->a);
    r->total = surety_xmalloc(NN, sizeof *r->total);
    r->order = surety_xmalloc(NN, sizeof *r->order);
    r->wbar = surety_xmalloc(nn, sizeof *r->wbar);
    r->ratio = surety_xmalloc(nn, sizeof *r->ratio);
    r->idx = surety_xmalloc(nn, sizeof *r->idx);
    r->pi = surety_xmalloc(nn, sizeof *r->pi);
    r->heap = surety_xmalloc(k + 1, sizeof *r->heap);
    if (!r->a || !r->total || !r->order || !r->wbar || !r->ratio ||
        !r->idx || !r->pi || !r->heap) {
        surety_bigm_free(r);
        return -1;
    }
    double *a = r->a;
    for (size_t l = 0; l < N; l++) {
        const double *wl = w + l * stride;
        double sum = 0;
        for (size_t t = 0; t < nj; t++) {
            a[l * nj + t] = factor * wl[jobs[t]];
            sum += wl[jobs[t]];
        }
        /* A_l in the product form of surety_plan_holds */
        r->total[l] = factor * sum;
        r->order[l].key = r->total[l];
        r->order[l].l = l;
    }
    qsort(r->order, N, sizeof *r->order, by_key_desc);
    double weight = 0;
    for (size_t l = 0; l < N; l++)
        weight += cnt ? cnt[l] : 1;
    for (size_t t = 0; t < nj; t++) {
        double s = 0;
        for (size_t l = 0; l < N; l++)
            s += a[l * nj + t] * (cnt ? cnt[l] : 1);
        r->wbar[t] = weight > 0 ? s / weight : 0;
    }
    return 0;
}

void surety_bigm_free(surety_bigm_res *r)
{
    surety_xfree(r->a);
    surety_xfree(r->total);
    surety_xfree(r->order);
    surety_xfree(r->wbar);
    surety_xfree(r->ratio);
    surety_xfree(r->idx);
    surety_xfree(r->pi);
    surety_xfree(r->heap);
    memset(r, 0, sizeof *r);
}

double surety_bigm_plain(const surety_bigm_res *r, size_t l)
{
    return r->total[l] - r->C;
}

/* Quantile big-M (Luedtke 2014; Qiu, Ahmed, Dey & Wolsey
 * 2014; Song, Luedtke & Kucukyavuz 2014; METHODS.md s.6). A plan feasible
 * for the sample satisfies at least N-k scenarios, so among any k+1
 * scenarios one holds resource i. With m(l,l') = max over the LP
 * relaxation of resource i of load_l - C_i subject to load_l' <= C_i,
 * every feasible plan has load_l - C_i <= m(l,l') for some l' among the
 * k+1 scenarios of smallest m(l,.), so M_li = the (k+1)-th smallest
 * m(l,l') over l' is a valid big-M (also for separate constraints, which
 * hold resource i in N-k scenarios on its own).
 *
 * Speed, keeping M exact: scenarios l' are visited in order of decreasing
 * total load B_l' (sorted once per resource), so small values come first
 * and the current (k+1)-th smallest T drops fast. For each pair, cheap
 * lower bounds on m(l,l') decide whether the exact knapsack is needed:
 *  - scaling every x_j by min(1, C/B_l') is feasible, so
 *    m >= A_l min(1, C/B_l') - C; it only grows along the visiting order,
 *    so once it reaches T no later l' can enter and the scan stops;
 *  - a fill in a fixed order per l (jobs by a_lj over their mean weight,
 *    which is close to the ratio order of most l') is feasible too; when
 *    its value is >= T the pair is skipped.
 * The remaining pairs get the exact value from frac_knapsack. Every
 * skip is a value >= T, so the result is the
 * exact (k+1)-th smallest; rounding in the tests can at worst skip a value
 * within an ulp of T, which makes M larger (looser), never invalid.
 * A row l' of multiplicity c counts as c scenarios among the k+1.
 * Cost: O(N nj) per row, with small constants. */
double surety_bigm_row(surety_bigm_res *r, size_t l)
{
    size_t N = r->N, nj = r->nj, need = r->k + 1;
    const double *a = r->a;
    double C = r->C, A = r->total[l];
    double plain = A - C;
    size_t weight = 0;
    for (size_t u = 0; u < N && weight < need; u++)
        weight += r->cnt ? r->cnt[u] : 1;
    if (!(plain > 0) || weight < need)
        return plain;
    const double *al = a + l * nj;
    /* pi: jobs by decreasing a_lj / wbar_j (jobs never seen with hours
     * first), insertion sort on the small nj */
    for (size_t t = 0; t < nj; t++) {
        double q = r->wbar[t] > 0 ? al[t] / r->wbar[t] : INFINITY;
        size_t p = t;
        while (p > 0 && r->ratio[p - 1] < q) {
            r->ratio[p] = r->ratio[p - 1];
            r->pi[p] = r->pi[p - 1];
            p--;
        }
        r->ratio[p] = q;
        r->pi[p] = t;
    }
    double *heap = r->heap;
    size_t len = 0;
    for (size_t u = 0; u < N; u++) {
        size_t lp = r->order[u].l;
        double B = r->order[u].key;
        double lower = (B > C ? A * (C / B) : A) - C;
        if (len == need && lower >= heap[0])
            break;
        double v;
        if (B <= C) {
            v = A - C; /* every allowed job fits scenario l' */
        } else {
            v = fixed_order_fill(al, a + lp * nj, r->pi, nj, C) - C;
            if (len == need && v >= heap[0])
                continue;
            v = frac_knapsack(al, a + lp * nj, nj, C, r->ratio, r->idx) - C;
        }
        size_t c = r->cnt ? r->cnt[lp] : 1;
        for (size_t e = 0; e < c; e++) {
            if (len < need) {
                heap_push(heap, &len, v);
            } else if (v < heap[0]) {
                heap[0] = v;
                heap_sift_down(heap, len, 0);
            } else {
                break;
            }
        }
    }
    return heap[0] < plain ? heap[0] : plain;
}
