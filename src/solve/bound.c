/* bound.c - the quantile bound of a search node with scenario fixing
 * (METHODS.md s.7, rules 1, 3 and 4).
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "solve/solve.h"

/* Weighted selection: the smallest value v among vals[0..c-1] such that the
 * weights of the values strictly before it in ascending order sum to at
 * most b while including it they exceed b; i.e. the (b+1)-th smallest when
 * every weight is 1. Quickselect with a median-of-three pivot (expected
 * O(c), deterministic). Requires total weight > b. Reorders both arrays. */
static double select_weighted(double *vals, unsigned *wts, size_t c, size_t b)
{
    size_t lo = 0, hi = c; /* active range [lo, hi) */
    for (;;) {
        if (hi - lo == 1)
            return vals[lo];
        double a = vals[lo], m = vals[lo + (hi - lo) / 2], z = vals[hi - 1];
        double piv = a < m ? (m < z ? m : (a < z ? z : a))
                           : (a < z ? a : (m < z ? z : m));
        /* three-way partition: [lo, lt) < piv, [lt, gt) == piv, [gt, hi) > */
        size_t lt = lo, t = lo, gt = hi;
        while (t < gt) {
            if (vals[t] < piv) {
                double v = vals[t]; vals[t] = vals[lt]; vals[lt] = v;
                unsigned u = wts[t]; wts[t] = wts[lt]; wts[lt] = u;
                lt++;
                t++;
            } else if (vals[t] > piv) {
                gt--;
                double v = vals[t]; vals[t] = vals[gt]; vals[gt] = v;
                unsigned u = wts[t]; wts[t] = wts[gt]; wts[gt] = u;
            } else {
                t++;
            }
        }
        size_t wl = 0, we = 0;
        for (size_t r = lo; r < lt; r++)
            wl += wts[r];
        if (wl > b) {
            hi = lt;
            continue;
        }
        for (size_t r = lt; r < gt; r++)
            we += wts[r];
        if (wl + we > b)
            return piv;
        b -= wl + we;
        lo = gt;
    }
}

static void trail_push(surety_solver *s, size_t idx)
{
    s->trail[s->trail_len++] = idx << 2 | s->dead[idx];
}

/* Fractional knapsack for the joint constraint in scenario l: candidates
 * by efficiency into the aggregated residual capacity of all resources
 * (base hours), restricted to items that fit one allowed resource on
 * their own; undecided required jobs take their hours off the aggregate
 * first. -INFINITY when the required jobs cannot fit. */
static double knap_joint(const surety_solver *s, size_t l)
{
    size_t n = s->n, m = s->m, N = s->N;
    const double *row = s->w + l * n;
    double res[64];
    double *r = m <= 64 ? res : s->kn + s->G * N; /* spare scratch */
    double agg = 0, rmax = -INFINITY;
    for (size_t i = 0; i < m; i++) {
        r[i] = s->cap_hi[i] - s->load[i * N + l];
        if (r[i] > 0)
            agg += r[i];
        if (r[i] > rmax)
            rmax = r[i];
    }
    if (s->req_left) {
        for (size_t t = 0; t < s->nb; t++) {
            size_t j = s->order[t];
            if (!s->required[j] || s->state[j] != JOB_FREE)
                continue;
            double wj = row[j], best = -INFINITY;
            for (size_t i = 0; i < m; i++)
                if (s->allowed[j * m + i] && r[i] > best)
                    best = r[i];
            if (wj > best)
                return -INFINITY;
            agg -= wj;
        }
        if (agg < 0)
            return -INFINITY;
    }
    const uint32_t *e = s->eff + l * s->ncand;
    double v = 0, c = agg;
    for (size_t t = 0; t < s->ncand; t++) {
        uint32_t j = e[t];
        if (s->state[j] != JOB_FREE)
            continue;
        double wj = row[j];
        double fit = rmax;
        if (!s->anyres[j]) {
            fit = -INFINITY;
            for (size_t i = 0; i < m; i++)
                if (s->allowed[j * m + i] && r[i] > fit)
                    fit = r[i];
        }
        if (wj > fit)
            continue; /* fits no resource on its own in this scenario */
        if (wj <= c) {
            v += s->p[j];
            c -= wj;
        } else {
            v += s->p[j] * (c / wj);
            break;
        }
    }
    return v;
}

/* The same for one resource i (separate constraint): candidates allowed in
 * i into its residual capacity. */
static double knap_single(const surety_solver *s, size_t i, size_t l)
{
    size_t n = s->n, m = s->m, N = s->N;
    const double *row = s->w + l * n;
    double r = s->cap_hi[i] - s->load[i * N + l];
    if (r < 0)
        r = 0;
    const uint32_t *e = s->eff + l * s->ncand;
    double v = 0, c = r;
    for (size_t t = 0; t < s->ncand; t++) {
        uint32_t j = e[t];
        if (s->state[j] != JOB_FREE || !s->allowed[j * m + i])
            continue;
        double wj = row[j];
        if (wj > r)
            continue;
        if (wj <= c) {
            v += s->p[j];
            c -= wj;
        } else {
            v += s->p[j] * (c / wj);
            break;
        }
    }
    return v;
}

/* Why this bound holds (METHODS.md s.7): a completion that beats the
 * cutoff fits, in each group g, all but at most b_g = k - dead_g of the
 * live scenarios. In every scenario it fits, its extra profit in g is at
 * most the knapsack value kn_gl, so it is at most the (b_g+1)-th smallest
 * kn_gl (weighted by multiplicity). Summing over groups bounds the whole
 * completion (for the joint constraint there is one group). A scenario
 * whose kn_gl plus the other groups' quantiles cannot beat the cutoff must
 * be among the failed ones (rule 4): it is fixed dead for the subtree. */
double surety_bound_node(surety_solver *s, double cutoff)
{
    size_t N = s->N, G = s->G, k = s->k;
    double base = s->fixed_profit + s->req_profit;

    for (size_t g = 0; g < G; g++)
        if (s->dead_w[g] > k)
            return -INFINITY;

    /* unconstrained completion value per group and overall */
    double unc_all = 0;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        if (s->cand[j] && s->state[j] == JOB_FREE)
            unc_all += s->p[j];
    }

    double qsum = 0;
    for (size_t g = 0; g < G; g++) {
        double unc = unc_all;
        if (s->separate) {
            unc = 0;
            for (size_t t = 0; t < s->nb; t++) {
                size_t j = s->order[t];
                if (s->cand[j] && s->state[j] == JOB_FREE &&
                    s->allowed[j * s->m + g])
                    unc += s->p[j];
            }
        }
        const unsigned char *dead = s->dead + g * N;
        double *kn = s->kn + g * N;
        size_t c = 0, livew = 0;
        for (size_t l = 0; l < N; l++) {
            if (dead[l] != LIVE)
                continue;
            double v = s->separate ? knap_single(s, g, l) : knap_joint(s, l);
            if (v > unc)
                v = unc;
            kn[l] = v;
            s->ub[c] = v;
            s->ubw[c] = s->cnt[l];
            livew += s->cnt[l];
            c++;
        }
        size_t b = k - s->dead_w[g];
        double q = livew > b ? select_weighted(s->ub, s->ubw, c, b) : unc;
        s->q[g] = q;
        qsum += q;
    }
    if (qsum > unc_all)
        qsum = unc_all;
    double bound = base + qsum;
    if (bound == -INFINITY || !(bound > cutoff))
        return bound == -INFINITY ? -INFINITY : bound;

    for (size_t g = 0; g < G; g++) {
        double others = 0;
        for (size_t h = 0; h < G; h++)
            if (h != g)
                others += s->q[h];
        unsigned char *dead = s->dead + g * N;
        const double *kn = s->kn + g * N;
        for (size_t l = 0; l < N; l++) {
            if (dead[l] != LIVE)
                continue;
            if (kn[l] == -INFINITY || base + kn[l] + others <= cutoff) {
                trail_push(s, g * N + l);
                dead[l] = DEAD_BOUND;
                s->dead_w[g] += s->cnt[l];
            }
        }
        if (s->dead_w[g] > k)
            return -INFINITY;
    }
    return bound;
}
