/* bound.c - the quantile bound of a search node with scenario fixing
 * (METHODS.md s.7, rules 1, 3 and 4).
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"

#include "solve/solve.h"

/* The quickselects' pivot: the median of the first, middle and last
 * values of the range [lo, hi). */
static double pivot3(const double *vals, size_t lo, size_t hi)
{
    double a = vals[lo], m = vals[lo + (hi - lo) / 2], z = vals[hi - 1];
    return a < m ? (m < z ? m : (a < z ? z : a))
                 : (a < z ? a : (m < z ? z : m));
}

/* The (b+1)-th smallest of vals[0..c-1] (b < c), for weights that are
 * all 1 (scenarios without duplicates, the usual case at large N). A
 * quickselect with the same pivot as the weighted one, but without a
 * branch on the values: they come in no useful order, so such a branch is
 * mispredicted often (bench/README.md, "Branch-free counts and selection
 * in the inner loops"). One pass counts the values below and equal to the
 * pivot; a second swaps the side that holds the answer to the front of
 * the range (a partition in the manner of Lomuto's, whose swap need not
 * be skipped). The array stays a permutation of the values, which
 * set_list selects from again. */
static double select_plain(double *vals, size_t c, size_t b)
{
    size_t lo = 0, hi = c;
    for (;;) {
        if (hi - lo == 1)
            return vals[lo];
        double piv = pivot3(vals, lo, hi);
        size_t below = 0, eq = 0;
        for (size_t t = lo; t < hi; t++) {
            below += vals[t] < piv;
            /* "neither below nor above": equal, and the pivot counts
             * itself even when it is NaN, so the range always shrinks */
            eq += !(vals[t] < piv) & !(vals[t] > piv);
        }
        if (below <= b && below + eq > b)
            return piv;
        int low = below > b; /* the answer is below the pivot */
        size_t n = lo;
        for (size_t t = lo; t < hi; t++) {
            double v = vals[t];
            vals[t] = vals[n];
            vals[n] = v;
            n += low ? v < piv : v > piv;
        }
        if (!low)
            b -= below + eq;
        hi = n;
    }
}

/* Weighted selection: the smallest value v among vals[0..c-1] such that the
 * weights of the values strictly before it in ascending order sum to at
 * most b while including it they exceed b; i.e. the (b+1)-th smallest when
 * every weight is 1. Quickselect with a median-of-three pivot (expected
 * O(c), deterministic). Requires total weight > b. Reorders both arrays
 * (with weights all 1, only the values: any order of the weights is
 * theirs). */
double surety_select_weighted(double *vals, unsigned *wts, size_t c,
                              size_t b)
{
    unsigned other = 0;
    for (size_t t = 0; t < c; t++)
        other |= wts[t] ^ 1u;
    if (!other)
        return select_plain(vals, c, b);
    size_t lo = 0, hi = c; /* active range [lo, hi) */
    for (;;) {
        if (hi - lo == 1)
            return vals[lo];
        double piv = pivot3(vals, lo, hi);
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

/* Fixes scenario l of group g as failed by the bound (rule 4), on the
 * trail. */
static void fix_dead(surety_solver *s, size_t g, size_t l)
{
    size_t idx = g * s->N + l;
    s->trail[s->trail_len++] = idx << 2 | s->dead[idx];
    s->dead[idx] = SURETY_DEAD_BOUND;
    s->lw[idx] = 0;
    s->dead_w[g] += s->cnt[l];
}

/* The live weight of the scenarios in which ld + wj exceeds hi, counted
 * in blocks of 64 until it exceeds b (then some value above b). lw holds
 * each scenario's weight when live, 0 when dead, so the loop has no
 * branch; GCC's vector extension keeps it four lanes wide (two SSE2
 * registers, or one AVX2 register in the clone for CPUs that have it). */
SURETY_CLONES
static size_t count_over(const double *ld, const double *wj,
                         const int64_t *lw, double hi, size_t N, size_t b)
{
    size_t over = 0, l = 0;
    const surety_v4d h = {hi, hi, hi, hi};
    for (; l + 64 <= N && over <= b; l += 64) {
        surety_v4i acc = {0, 0, 0, 0};
        for (size_t u = l; u < l + 64; u += 4) {
            surety_v4d a, w;
            surety_v4i c;
            memcpy(&a, ld + u, sizeof a);
            memcpy(&w, wj + u, sizeof w);
            memcpy(&c, lw + u, sizeof c);
            acc += (surety_v4i)(a + w > h) & c;
        }
        over += (size_t)(acc[0] + acc[1] + acc[2] + acc[3]);
    }
    for (; l < N && over <= b; l++)
        over += ld[l] + wj[l] > hi ? (size_t)lw[l] : 0;
    return over;
}

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>
/* Built only for tests/test_invariants.c: with one resource knap_joint
 * leaves out the scan for the lightest open job, which only matters when
 * the residual r is positive and below it; then no open candidate may fit
 * alone (their hours hsum sum to 0). Aborts otherwise. */
static void chk_one_resource(const surety_solver *s, size_t l, double r,
                             double hsum)
{
    const double *row = s->w + l * s->n;
    double wmin = INFINITY;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        if (s->state[j] == SURETY_JOB_FREE && row[j] < wmin)
            wmin = row[j];
    }
    if (r > 0 && r < wmin && hsum != 0) {
        fprintf(stderr, "invariant: scenario %zu, residual %.17g below the "
                "lightest open job's %.17g, yet open jobs fit\n", l, r,
                wmin);
        abort();
    }
}
#endif

/* The efficiency of the last job taken whole before the break job (last,
 * or -1 for none: infinite), computed once where the bound needs it
 * rather than for every job taken. */
static double last_eff(const surety_solver *s, const double *row, long last)
{
    if (last < 0)
        return INFINITY;
    double w = row[last];
    return w > 0 ? s->p[last] / w : INFINITY;
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
    double *r = m <= 64 ? res : s->kn;
    /* a resource whose residual is below the lightest open job's hours,
     * or that no open job can still enter (possible_pairs), takes no more
     * jobs in this scenario: its residual is not counted. With one
     * resource that changes nothing (no open job fits it alone then, and
     * the value is 0 either way), so its scan is left out: it reads a
     * table row of its own per scenario, a cache miss at large N (the
     * decomposition's one-resource solves) */
    double wmin = -INFINITY;
    if (m > 1) {
        const uint32_t *lt = s->light + l * s->nb;
        wmin = INFINITY;
        for (size_t t = 0; t < s->nb; t++)
            if (s->state[lt[t]] == SURETY_JOB_FREE) {
                wmin = row[lt[t]];
                break;
            }
    }
    double agg = 0, rmax = -INFINITY; /* rmax: over resources still open */
    for (size_t i = 0; i < m; i++) {
        r[i] = s->cap_hi[i] - s->load[i * N + l];
        if (s->ropen[i]) {
            if (r[i] > rmax)
                rmax = r[i];
            if (r[i] > 0 && r[i] >= wmin)
                agg += r[i];
        }
    }
    if (s->req_left) {
        for (size_t t = 0; t < s->nb; t++) {
            size_t j = s->order[t];
            if (!s->required[j] || s->state[j] != SURETY_JOB_FREE)
                continue;
            double wj = row[j], best = -INFINITY;
            for (size_t i = 0; i < m; i++)
                if (s->pxcur[j * m + i] && r[i] > best)
                    best = r[i];
            if (wj > best)
                return -INFINITY;
            agg -= wj;
        }
        if (agg < 0)
            return -INFINITY;
    }
    /* most scenarios deep in the tree have room for every open job that
     * fits a resource on its own: then the value is their profit, found
     * from the node's short list of open candidates */
    double hsum = 0, psum = 0;
    unsigned char *fits = s->kfit; /* open jobs: fits a resource alone */
    const unsigned char *rk = s->erank ? s->erank + l * n : NULL;
    uint64_t bits = 0; /* with rk: the fitting jobs' positions in eff */
    for (size_t t = 0; t < s->nfree; t++) {
        size_t j = s->freec[t];
        double wj = row[j], fit = rmax;
        if (s->jk[j] == SURETY_JK_SOME) {
            fit = -INFINITY;
            if (m <= 32) {
                for (uint32_t a = s->pbits[j]; a; a &= a - 1)
                    if (r[__builtin_ctz(a)] > fit)
                        fit = r[__builtin_ctz(a)];
            } else {
                const unsigned char *pj = s->pxcur + j * m;
                for (size_t i = 0; i < m; i++)
                    if (pj[i] && r[i] > fit)
                        fit = r[i];
            }
        }
        fits[j] = wj <= fit;
        if (fits[j]) {
            hsum += wj;
            psum += s->p[j];
            if (rk)
                bits |= (uint64_t)1 << rk[j];
        }
    }
#ifdef SURETY_CHECK_INVARIANTS
    if (m == 1)
        chk_one_resource(s, l, r[0], hsum);
#endif
    if (hsum <= agg)
        return psum;
    /* Every job is taken whole or not at all, so this is a 0-1 knapsack
     * and the Martello-Toth bound U2 applies at the break job c (Martello
     * & Toth 1977): either c is left out (the rest of the capacity is
     * filled at most at the next job's efficiency) or c is taken (the
     * missing hours are removed from the taken jobs at least at the last
     * taken job's efficiency). Both are at most the LP value. */
    const uint32_t *e = s->eff + l * s->ncand;
    double v = 0, c = agg;
    long brk = -1, last = -1; /* last: the last job taken whole */
    for (size_t t = 0;;) {
        /* the next fitting job by efficiency (the others are decided, or
         * fit no resource on its own here) */
        uint32_t j;
        if (rk) {
            if (!bits)
                break;
            j = e[__builtin_ctzll(bits)];
            bits &= bits - 1;
        } else {
            while (t < s->ncand && !fits[e[t]])
                t++;
            if (t == s->ncand)
                break;
            j = e[t++];
        }
        double wj = row[j];
        if (brk < 0) {
            if (wj <= c) {
                v += s->p[j];
                c -= wj;
                last = (long)j;
                continue;
            }
            brk = (long)j;
            continue;
        }
        /* the first fitting job after the break job */
        double u0 = v + c * (s->p[j] / wj);
        double elast = last_eff(s, row, last);
        double wc = row[brk];
        double u1 = v + s->p[brk] - (wc - c) * elast;
        double lp = v + s->p[brk] * (c / wc);
        double u = u0 > u1 ? u0 : u1;
        return u < lp ? u : lp;
    }
    if (brk >= 0) {
        double elast = last_eff(s, row, last);
        double wc = row[brk];
        double u1 = v + s->p[brk] - (wc - c) * elast;
        double lp = v + s->p[brk] * (c / wc);
        double u = v > u1 ? v : u1;
        return u < lp ? u : lp;
    }
    return v;
}

/* Fractional knapsack of resource i in scenario l with the reduced
 * profits rp (Lagrangian prices subtracted): free candidates allowed in i
 * by rp/w, into the residual capacity of i. When x is given, it receives
 * the fraction taken of each job (entries of untaken jobs untouched). */
static double knap_lagr(const surety_solver *s, size_t i, size_t l, double *x)
{
    size_t n = s->n, m = s->m, N = s->N;
    const double *row = s->w + l * n;
    double r = s->cap_hi[i] - s->load[i * N + l];
    if (r < 0)
        r = 0;
    const uint32_t *e = s->leff + l * s->nl;
    double v = 0, c = r;
    for (size_t t = 0; t < s->nl; t++) {
        uint32_t j = e[t];
        if (s->state[j] != SURETY_JOB_FREE || !s->pxcur[j * m + i])
            continue;
        double wj = row[j];
        if (wj > r)
            continue;
        if (wj <= c) {
            v += s->rp[j];
            c -= wj;
            if (x)
                x[j] = 1;
        } else {
            v += s->rp[j] * (c / wj);
            if (x)
                x[j] = c / wj;
            break;
        }
    }
    return v;
}

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>
/* Built only for tests/test_invariants.c: every per-resource value in use
 * (kept from an ancestor or not) is at least the knapsack it bounds, and
 * kp is the path's sum. Aborts otherwise. */
static void chk_lagr(const surety_solver *s)
{
    size_t N = s->N, m = s->m;
    double tol = 1e-9 * (s->pscale + 1);
    for (size_t i = 0; i < m; i++) {
        size_t g = s->separate ? i : 0;
        if (s->klv) {
            double p = 0;
            for (size_t j = 0; j < s->n; j++)
                if (s->state[j] == (long)i)
                    p += s->rp[j];
            if (fabs(p - s->kp[i]) > tol) {
                fprintf(stderr, "invariant: kp of resource %zu is %.12g, "
                        "the path's %.12g\n", i, s->kp[i], p);
                abort();
            }
        }
        for (size_t l = 0; l < N; l++) {
            if (s->dead[g * N + l] != SURETY_LIVE)
                continue;
            double v = knap_lagr(s, i, l, NULL);
            if (s->kl[i * N + l] < v - tol) {
                fprintf(stderr, "invariant: resource %zu scenario %zu: "
                        "value %.12g below its knapsack %.12g\n", i, l,
                        s->kl[i * N + l], v);
                abort();
            }
        }
    }
}

/* The job sets of resource i that extend one of loads ld (N) and reduced
 * profit v with the open jobs job[t..nj), while they overload at most
 * weight b of the live scenarios (knap_lagr's capacity test); the best
 * profit into *best. */
static void chk_sets(const surety_solver *s, size_t i, const uint32_t *job,
                     size_t t, size_t nj, double v, const double *ld,
                     double *lds, size_t b, double *best)
{
    size_t N = s->N, n = s->n;
    const unsigned char *dead = s->dead + (s->separate ? i : 0) * N;
    if (v > *best)
        *best = v;
    for (; t < nj; t++) {
        double *nl = lds + t * N;
        size_t over = 0;
        for (size_t l = 0; l < N; l++) {
            nl[l] = ld[l] + s->w[l * n + job[t]];
            if (dead[l] == SURETY_LIVE &&
                nl[l] > s->cap_hi[i] - s->load[i * N + l])
                over += s->cnt[l];
        }
        if (over <= b)
            chk_sets(s, i, job, t + 1, nj, v + s->rp[job[t]], nl, lds, b,
                     best);
    }
}

/* Built only for tests/test_invariants.c: each per-resource quantile q_i
 * against the job sets it bounds, by enumeration (nodes with at most 12
 * open jobs possible in i): a set of open jobs possible in i that
 * overloads live scenarios of weight at most b (the allowance left) fits
 * one of the b+1 lightest-valued ones, whose knapsack holds it, so its
 * reduced profit is at most q_i. Aborts otherwise. */
static void chk_quant(const surety_solver *s)
{
    size_t N = s->N, m = s->m, n = s->n;
    uint32_t job[12];
    double *ld = surety_xcalloc(N * 13, sizeof *ld);
    if (!ld)
        return;
    for (size_t i = 0; i < m; i++) {
        size_t nj = 0;
        for (size_t j = 0; j < n && nj <= 12; j++)
            if (s->state[j] == SURETY_JOB_FREE && s->pxcur[j * m + i] &&
                s->rp[j] > 0) {
                if (nj < 12)
                    job[nj] = (uint32_t)j;
                nj++;
            }
        size_t g = s->separate ? i : 0;
        if (nj > 12 || s->dead_w[g] > s->k)
            continue;
        double best = 0;
        chk_sets(s, i, job, 0, nj, 0, ld, ld + N, s->k - s->dead_w[g],
                 &best);
        if (best > s->ql[i] + 1e-9 * (s->pscale + 1)) {
            fprintf(stderr, "invariant: resource %zu's quantile %.12g is "
                    "below a job set it bounds, %.12g\n", i, s->ql[i],
                    best);
            abort();
        }
    }
    surety_xfree(ld);
}
#endif

/* Frees the kept per-resource values (each node then recomputes them). */
static void lagr_keep_free(surety_solver *s)
{
    surety_xfree(s->klv);
    surety_xfree(s->kp);
    surety_xfree(s->klt_e);
    surety_xfree(s->klt_v);
    surety_xfree(s->qk);
    s->klv = s->kp = s->klt_v = s->qk = NULL;
    s->klt_e = NULL;
    s->klt_len = 0;
}

/* Sets resource i's kept value of scenario l (kl plus kp_i), keeping the
 * old one on the trail when the node has a parent to return to. */
static void klv_set(surety_solver *s, size_t row, size_t i, size_t l,
                    double v)
{
    size_t e = i * s->N + l;
    if (row > 0) {
        s->klt_e[s->klt_len] = (uint32_t)e;
        s->klt_v[s->klt_len++] = s->klv[e];
    }
    s->klv[e] = v + s->kp[i];
}

/* Per-resource quantiles of the Lagrangian bound. Why it holds: for prices
 * lam >= 0 and y_j = sum_i x_ij <= 1,
 *   sum_j p_j y_j <= sum_j lam_j + sum_i sum_j (p_j - lam_j)^+ x_ij,
 * and the jobs of resource i hold there in all but at most b of the live
 * scenarios (joint: the plan fits all but b live scenarios, so every
 * resource does; separate: resource i's own budget). In each scenario where
 * i holds, its reduced profit is at most the knapsack value kl_il, hence at
 * most the (b+1)-th smallest kl_il (METHODS.md s.7 rule 3 per resource;
 * Lagrangian relaxation of the assignment rows as for the multiple
 * knapsack problem, Martello & Toth's bound). Returns sum_i q_i.
 *
 * Any upper bounds on the kl_il give an upper bound on each quantile, so
 * values computed at an ancestor serve, corrected by kp_i: kl_il is the
 * LP optimum of a knapsack over the open jobs possible in i that fit the
 * residual capacity alone, and a child's item set and capacity are within
 * its parent's, so its value is at most the parent's, and at most the
 * parent's less rp_j when the child places job j in i (the child's
 * solution plus j is feasible for the parent: a scenario where j no
 * longer fits is overloaded, dead for resource i's group). Hence
 * kl_il <= klv_il - kp_i, klv kept as the computed value plus the kp_i of
 * its node. Each node recomputes only the scenarios whose kept value is
 * at most the kept quantile (the ones that can lower it), and every 32nd
 * evaluation, and the root, all of them, as the joint bound's window
 * does. Measured under separate constraints (bench/README.md,
 * "Findings"). */
static double lagr_quantiles(surety_solver *s, size_t row)
{
    size_t N = s->N, m = s->m, k = s->k;
    int all = !s->klv || row == 0 || (s->kevals++ & 31) == 0;
    /* the parent was evaluated on this path, its values are the kept ones */
    int parent = !all && row > 0 && row != s->restart_row;
    /* kept values went through other sums: rounding slack */
    double slack = 1e-12 * (s->pscale + 1);
    double qsum = 0;
    for (size_t i = 0; i < m; i++) {
        size_t g = s->separate ? i : 0;
        const unsigned char *dead = s->dead + g * N;
        double *kl = s->kl + i * N;
        double unc = 0;
        for (size_t t = 0; t < s->nb; t++) {
            size_t j = s->order[t];
            if (s->state[j] == SURETY_JOB_FREE && s->pxcur[j * m + i])
                unc += s->rp[j];
        }
        size_t b = k - s->dead_w[g];
        size_t c = 0, livew = 0, nk = 0;
        double over = INFINITY; /* recompute the values at most this */
        if (!all) {
            const double *kv = s->klv + i * N;
            double kp = s->kp[i];
            for (size_t l = 0; l < N; l++) {
                if (dead[l] != SURETY_LIVE)
                    continue;
                double v = kv[l] - kp + slack;
                kl[l] = v;
                if (!parent) { /* for the selection below */
                    s->ub[c] = v;
                    s->ubw[c] = s->cnt[l];
                }
                c++;
                livew += s->cnt[l];
            }
            /* with no more than b live, the quantile is unc anyway; with
             * its parent just evaluated, a node's kept values are the
             * parent's final ones shifted alike by kp, less the newly
             * dead scenarios, whose weight also leaves the allowance, so
             * the kept quantile is at most the parent's, shifted; else
             * it is selected */
            if (livew <= b)
                over = -INFINITY;
            else if (parent)
                over = s->qk[(row - 1) * m + i] - kp + slack;
            else
                over = surety_select_weighted(s->ub, s->ubw, c, b);
        }
        /* Without `all` the quantile is among the recomputed scenarios:
         * their values are at most `over`, the others' kept values above
         * it. Any set of them that weighs more than b gives a quantile
         * at least the one over all live scenarios, so a valid one; those
         * at most the kept quantile do (that is its definition), and so
         * do those at most a larger `over`. */
        size_t live = c; /* without `all`: the live ones, counted above */
        size_t wfresh = 0;
        c = 0;
        if (all)
            livew = 0;
        for (size_t l = 0; l < N; l++) {
            if (dead[l] != SURETY_LIVE)
                continue;
            int fresh = all || kl[l] <= over;
            if (fresh) {
                double v = knap_lagr(s, i, l, NULL);
                kl[l] = v;
                if (s->klv)
                    klv_set(s, row, i, l, v);
                nk++;
                s->ub[c] = v;
                s->ubw[c++] = s->cnt[l];
                wfresh += s->cnt[l];
            }
            if (all)
                livew += s->cnt[l];
        }
        double q = INFINITY;
        if (livew > b) {
            if (wfresh <= b) {
                /* too few recomputed (rounding in the parent's
                 * threshold): the quantile over every live value */
                c = 0;
                for (size_t l = 0; l < N; l++)
                    if (dead[l] == SURETY_LIVE) {
                        s->ub[c] = kl[l];
                        s->ubw[c++] = s->cnt[l];
                    }
            }
            q = surety_select_weighted(s->ub, s->ubw, c, b);
        }
        if (s->qk)
            s->qk[row * m + i] = q + s->kp[i];
        if (q > unc)
            q = unc;
        s->ql[i] = q;
        /* the work: the knapsacks, and the scan of the kept values at
         * about an eighth of one each (measured at N=1000) */
        s->knaps += nk + (all ? 0 : live / 8);
        qsum += q;
    }
#ifdef SURETY_CHECK_INVARIANTS
    chk_lagr(s);
    chk_quant(s);
#endif
    return qsum;
}

static double lam_free(const surety_solver *s)
{
    double v = 0;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        if (s->cand[j] && s->state[j] == SURETY_JOB_FREE)
            v += s->lam[j];
    }
    return v;
}

/* Fills row `row` of pxs: pair (j, i) stays possible when job j is open,
 * the pair was possible at the parent (the root: allowed after presolve;
 * a node restored from the best-bound pool: possible at the root) and
 * placing j in i overloads i, on top of the committed load, in at most b
 * live scenarios of i's group (b = k - dead weight). Why: a completion
 * that beats the cutoff fails every dead scenario and at most b live ones
 * (METHODS.md s.7 rule 4), so a pair that alone breaks more is never part
 * of it; the presolve's rule for single pairs, applied at every node.
 * Down the tree loads only grow and live scenarios only die, so a pair
 * out at the parent stays out. The overload weight of every possible pair
 * is kept exact in pxo: a pair of the resource just loaded is recounted
 * over the N scenarios; for any other, the load is the parent's, so its
 * count is the parent's minus the scenarios that died since the parent's
 * count (the trail entries from the parent's mark on) and that it
 * overloads. Returns 0 when an open required job has no possible pair
 * left (the node is infeasible). */
static int possible_pairs(surety_solver *s, size_t row)
{
    size_t n = s->n, m = s->m, N = s->N, k = s->k, nm = n * m;
    unsigned char *px = s->pxs + row * nm;
    uint32_t *po = s->pxo + row * nm;
    int parent = row > 0 && row != s->restart_row;
    const unsigned char *pp = parent ? px - nm : NULL;
    const uint32_t *ppo = parent ? po - nm : NULL;
    long changed = row > 0 ? s->frames[row - 1].res : -1;
    s->pxcur = px;
    s->ppmark[row] = s->trail_len;
    /* scenarios (g*N + l) that died since the parent's count */
    size_t nd = 0;
    if (parent)
        for (size_t e = s->ppmark[row - 1]; e < s->trail_len; e++)
            if ((s->trail[e] & 3) == SURETY_LIVE)
                s->died[nd++] = s->trail[e] >> 2;
    memset(s->ropen, 0, m);
    int ok = 1;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        unsigned char *pj = px + j * m;
        if (s->state[j] != SURETY_JOB_FREE) {
            memset(pj, 0, m);
            continue;
        }
        const double *wj = s->wt + j * N;
        int any = 0;
        for (size_t i = 0; i < m; i++) {
            size_t g = s->separate ? i : 0, b = k - s->dead_w[g], q = j * m + i;
            /* a restored node starts from the root's row (row 0, which
             * the LP bound may have thinned), the root from presolve */
            int was = pp ? pp[q] : row > 0 ? s->pxs[q] : s->allowed[q];
            pj[i] = 0;
            if (!was)
                continue;
            const double *ld = s->load + i * N;
            double hi = s->cap_hi[i];
            if (pp && (long)i != changed) {
                size_t over = ppo[q], gone = 0;
                for (size_t r = 0; r < nd; r++) {
                    size_t l = s->died[r] - g * N;
                    if (l < N && ld[l] + wj[l] > hi)
                        gone += s->cnt[l];
                }
                if (gone <= over) {
                    over -= gone;
                    if (over <= b) {
                        pj[i] = 1;
                        po[q] = (uint32_t)over;
                        any = 1;
                    }
                    continue;
                }
                /* not reached while the counts are exact: recount */
            }
            size_t over = count_over(ld, wj, s->lw + g * N, hi, N, b);
            if (over <= b) {
                pj[i] = 1;
                po[q] = (uint32_t)over;
                any = 1;
            }
        }
        for (size_t i = 0; i < m; i++)
            s->ropen[i] |= pj[i];
        if (!any && s->required[j])
            ok = 0;
    }
    /* for the knapsacks: the open candidates, and which of them may enter
     * every open resource */
    s->nfree = 0;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        unsigned char kind = SURETY_JK_DECIDED;
        s->kfit[j] = 0;
        if (s->state[j] == SURETY_JOB_FREE) {
            kind = SURETY_JK_ALL;
            uint32_t bits = 0;
            for (size_t i = 0; i < m; i++) {
                if (px[j * m + i] != s->ropen[i])
                    kind = SURETY_JK_SOME;
                if (px[j * m + i] && i < 32)
                    bits |= (uint32_t)1 << i;
            }
            s->pbits[j] = bits;
            if (s->cand[j])
                s->freec[s->nfree++] = (uint32_t)j;
        }
        s->jk[j] = kind;
    }
    return ok;
}

/* What the children of the node at depth `row` recompute (any choice is
 * valid, see surety_bound_node; this one is about work): of the scenarios
 * ids[0..c) (total weight w), whose values the node has just used, the
 * ones below the (want+1)-th smallest value and as many at it as make up
 * want; when w <= want, all of them. vals/wts hold the same values in any
 * order and are reordered. */
static void set_list(surety_solver *s, size_t row, const size_t *ids,
                     size_t c, size_t w, size_t want, double *vals,
                     unsigned *wts, double slack, double cap)
{
    uint32_t *out = s->rl + row * s->rlcap;
    size_t n = 0;
    if (w <= want) {
        for (size_t t = 0; t < c && n < s->rlcap; t++)
            out[n++] = (uint32_t)ids[t];
        s->rln[row] = n;
        return;
    }
    double tau = surety_select_weighted(vals, wts, c, want);
    size_t below = 0;
    for (size_t t = 0; t < c; t++)
        if (vals[t] < tau)
            below += wts[t];
    size_t ties = want > below ? want - below : 0;
    for (size_t t = 0; t < c && n < s->rlcap; t++) {
        double v = s->ubv[ids[t]] + slack;
        if (v > cap)
            v = cap;
        if (v == tau && ties > 0)
            ties--;
        else if (!(v < tau))
            continue;
        out[n++] = (uint32_t)ids[t];
    }
    s->rln[row] = n;
}

/* Sets the current node's bound of scenario l, keeping the old one on the
 * trail when the node has a parent to return to. */
static void ubv_set(surety_solver *s, size_t row, size_t l, double v)
{
    if (row > 0) {
        s->ubt_l[s->ubt_len] = (uint32_t)l;
        s->ubt_v[s->ubt_len++] = s->ubv[l];
    }
    s->ubv[l] = v;
#ifdef SURETY_CHECK_INVARIANTS
    s->chk_ub[row * s->N + l] = v;
#endif
}

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>

/* Built only for tests/test_invariants.c: the bookkeeping that makes the
 * search fast is compared with a slow, direct version at every node, and
 * any difference aborts. */
static void chk_fail(const char *what, size_t row, size_t a, size_t b)
{
    fprintf(stderr, "invariant broken at depth %zu: %s (%zu, %zu)\n", row, what,
            a, b);
    abort();
}

/* The live weights and the pair rule's kept counts against a recount. */
static void chk_pairs(const surety_solver *s, size_t row)
{
    size_t N = s->N, m = s->m;
    for (size_t g = 0; g < s->G; g++)
        for (size_t l = 0; l < N; l++)
            if (s->lw[g * N + l] !=
                (s->dead[g * N + l] == SURETY_LIVE ? (int64_t)s->cnt[l] : 0))
                chk_fail("live weight", row, g, l);
    const unsigned char *px = s->pxs + row * s->n * m;
    const uint32_t *po = s->pxo + row * s->n * m;
    for (size_t t = 0; t < s->nb; t++)
        for (size_t i = 0, j = s->order[t]; i < m; i++) {
            if (!px[j * m + i])
                continue;
            size_t g = s->separate ? i : 0, over = 0;
            for (size_t l = 0; l < N; l++)
                if (s->dead[g * N + l] == SURETY_LIVE &&
                    s->load[i * N + l] + s->wt[j * N + l] > s->cap_hi[i])
                    over += s->cnt[l];
            if (over != po[j * m + i])
                chk_fail("pair count", row, j, i);
        }
    /* the decomposition prices of the rejected jobs (tree.c, dec_cap) */
    if (s->dec_lam) {
        double rej = 0;
        for (size_t t = 0; t < s->nb; t++)
            if (s->state[s->order[t]] == SURETY_JOB_OUT)
                rej += s->dec_lam[s->order[t]];
        if (fabs(rej - s->rej_lam) > 1e-9 * (s->pscale + 1))
            chk_fail("rejected prices", row, 0, 0);
    }
    /* the probed caps the path's decisions select (tree.c, apply) */
    if (s->dec_c)
        for (size_t i = 0; i < m; i++) {
            double c = s->dec_v[i];
            for (size_t t = 0; t < s->nb; t++) {
                size_t j = s->order[t];
                if (s->state[j] == SURETY_JOB_FREE)
                    continue;
                double v = surety_dec_probed(s, j, i, s->state[j]);
                if (v < c)
                    c = v;
            }
            /* and the restored ancestor's own solves (tree.c, node_split) */
            if (s->chk_nodec && s->chk_nodec[i] < c)
                c = s->chk_nodec[i];
            if (c != s->dec_c[i])
                chk_fail("probed caps", row, 0, i);
        }
}

/* Before an evaluation: the node starts from its parent's values (a node
 * restored from the pool, from the root's), which the undo trail must
 * have brought back exactly. */
static void chk_ub_start(surety_solver *s, size_t row)
{
    size_t N = s->N;
    if (!s->chk_ub) {
        s->chk_ub = calloc((s->nb + 2) * N, sizeof *s->chk_ub);
        if (!s->chk_ub)
            abort();
    }
    if (row == 0)
        return;
    size_t from = row == s->restart_row ? 0 : row - 1;
    const double *exp = s->chk_ub + from * N;
    for (size_t l = 0; l < N; l++)
        if (memcmp(&s->ubv[l], &exp[l], sizeof *exp) != 0)
            chk_fail("scenario bound not restored", row, l, from);
    memcpy(s->chk_ub + row * N, exp, N * sizeof *exp);
}
#endif

/* The list for the children of a node that survived its bound (nothing
 * to do for the per-resource bound alone, or a node whose list is "every
 * scenario", or a leaf). */
static void children_list(surety_solver *s, size_t row, size_t c, size_t w,
                          size_t want, double slack, double cap)
{
    if (c == SIZE_MAX || row >= s->nb)
        return;
    set_list(s, row, s->rix, c, w, want, s->ub, s->ubw, slack, cap);
}

/* The c entries by ascending v, equal values in their order: a stable
 * merge sort (runs of 16 by insertion, then merged bottom up between a
 * and tmp, c entries of room), the order glibc's qsort (a merge sort)
 * gave them before, so the search's path is the same. Most calls sort
 * about k+1 entries or more; with the comparison inline, the
 * decomposition's one-resource solves take 6% less time at N=1000 and
 * 10% less at N=10 000 (the same nodes; bench/README.md, "Findings"). */
static void sort_cq(solve_cq *a, size_t c, solve_cq *tmp)
{
    enum { RUN = 16 };
    for (size_t lo = 0; lo < c; lo += RUN) {
        size_t hi = lo + RUN < c ? lo + RUN : c;
        for (size_t t = lo + 1; t < hi; t++) {
            solve_cq x = a[t];
            size_t u = t;
            while (u > lo && a[u - 1].v > x.v) {
                a[u] = a[u - 1];
                u--;
            }
            a[u] = x;
        }
    }
    solve_cq *src = a, *dst = tmp;
    for (size_t w = RUN; w < c; w *= 2) {
        for (size_t lo = 0; lo < c; lo += 2 * w) {
            size_t mid = lo + w < c ? lo + w : c;
            size_t hi = lo + 2 * w < c ? lo + 2 * w : c;
            size_t x = lo, y = mid, o = lo;
            while (x < mid && y < hi)
                dst[o++] = src[y].v < src[x].v ? src[y++] : src[x++];
            while (x < mid)
                dst[o++] = src[x++];
            while (y < hi)
                dst[o++] = src[y++];
        }
        solve_cq *sw = src;
        src = dst;
        dst = sw;
    }
    if (src != a)
        memcpy(a, src, c * sizeof *a);
}

/* The node's bound with scenario costs (surety_solve_options.scenario_cost,
 * joint constraint), from `bound`, a valid bound on the mean profit of the
 * completions that beat the cutoff, and cap, the profit of every open job.
 * Such a completion fails every dead scenario, so it pays their costs.
 * Among the live ones it fails a set F of weight at most b = k - dead
 * weight; sort the live scenarios by their bounds ubv (values of this node
 * or an ancestor, plus rounding slack: upper bounds on the profit of a
 * completion that fits the scenario) and let t be the first not in F: all
 * before t are in F, and the completion fits t, so its value is at most
 * ubv_t minus the costs of the scenarios before t, whose weight is at most
 * b; or, when F holds every live scenario, cap minus all their costs.
 * Hence value <= min(bound, max over those t) - dead costs.
 * Only the scenarios up to the first t past weight b are read, so only
 * values at most thr are sorted, thr being at least the (b+1)-th smallest
 * by weight (the node's quantile, computed over these values or fewer:
 * fewer can only raise an order statistic); if they do not reach past
 * weight b after all, every live scenario is sorted. Where many values
 * are at most thr (thr at the cap, which many scenarios reach deep in a
 * one-resource solve), q, the smallest value whose weight with the ones
 * below passes b, is selected first, and only the values below q are
 * sorted, those equal to q following in the order they were gathered:
 * that is the sorted order's prefix up to past weight b (the sort is
 * stable), so the walk reads the same values in the same order. */
static double cost_bound(surety_solver *s, double bound, double cap,
                         double thr)
{
    size_t N = s->N, c, b = s->k - s->dead_w[0], live;
    double slack = 1e-12 * (s->pscale + 1), dead_mu, best, paid;
    size_t wsum, t, wc;
again:
    c = live = wc = 0;
    dead_mu = 0;
    for (size_t l = 0; l < N; l++) {
        if (s->dead[l] != SURETY_LIVE) {
            dead_mu += s->mu[l];
            continue;
        }
        live++;
        double v = s->ubv[l] + slack;
        v = v < cap ? v : cap;
        if (v > thr)
            continue;
        s->cq[c].v = v;
        s->cq[c].mu = s->mu[l];
        wc += s->cnt[l];
        s->cq[c++].w = s->cnt[l];
    }
    if (wc > b && c > 2 * (b + 1) + 16) {
        for (size_t r = 0; r < c; r++) {
            s->cqv[r] = s->cq[r].v;
            s->cqw[r] = (unsigned)s->cq[r].w;
        }
        double q = surety_select_weighted(s->cqv, s->cqw, c, b);
        size_t lt = 0, eq = 0;
        for (size_t r = 0; r < c; r++)
            if (s->cq[r].v < q)
                s->cq[lt++] = s->cq[r];
            else if (s->cq[r].v == q)
                s->cq2[eq++] = s->cq[r];
        memcpy(s->cq + lt, s->cq2, eq * sizeof *s->cq);
        sort_cq(s->cq, lt, s->cq2);
        c = lt + eq;
    } else {
        sort_cq(s->cq, c, s->cq2);
    }
    best = -INFINITY;
    paid = 0;
    wsum = 0;
    for (t = 0; t < c && wsum <= b; t++) {
        double v = s->cq[t].v - paid;
        if (v > best)
            best = v;
        paid += s->cq[t].mu;
        wsum += s->cq[t].w;
    }
    if (t == c && wsum <= b) {
        if (c < live) {
            thr = INFINITY; /* the threshold fell short: sort them all */
            goto again;
        }
        if (cap - paid > best)
            best = cap - paid;
    }
    /* costs are summed in another order than plan_cost's: a margin */
    double v = (best < bound ? best : bound) - dead_mu;
    return v + 1e-12 * (fabs(v) + dead_mu + paid + s->pscale + 1);
}

/* The node bound is the smaller of two valid bounds:
 *  - aggregated (joint only; METHODS.md s.7 rule 3): a completion that
 *    beats the cutoff fits all but at most b = k - dead of the live
 *    scenarios; in each one it fits, its extra profit is at most the
 *    knapsack value kn_l over the summed residual capacity, so it is at
 *    most the (b+1)-th smallest kn_l (weighted by multiplicity);
 *  - per resource with Lagrangian prices (lagr_quantiles above).
 * A scenario in which either bound, evaluated as if the completion held
 * there, cannot beat the cutoff must be among the failed ones (rule 4): it
 * is fixed dead for the subtree. */
double surety_bound_node(surety_solver *s, double cutoff, size_t row)
{
    size_t N = s->N, G = s->G, k = s->k, m = s->m;
    double base = s->fixed_profit + s->req_profit;

    for (size_t g = 0; g < G; g++)
        if (s->dead_w[g] > k)
            return -INFINITY;
    if (!possible_pairs(s, row))
        return -INFINITY;
#ifdef SURETY_CHECK_INVARIANTS
    chk_pairs(s, row);
#endif

    double unc = 0;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        if (s->cand[j] && s->state[j] == SURETY_JOB_FREE)
            unc += s->p[j];
    }
    double lf = 0, lsum = 0, bound = base + unc;
    if (s->use_lagr) {
        lf = lam_free(s);
        lsum = lagr_quantiles(s, row);
        if (base + lf + lsum < bound)
            bound = base + lf + lsum;
    }
    double qa = INFINITY;
    /* the children's list (set_list) is made only for a node that
     * survives: the values its ids point to (ub, ubw, rix) are kept */
    size_t lst_c = SIZE_MAX, lst_w = 0, lst_want = 0;
    double lst_slack = 0, lst_cap = 0;
    if (!s->separate) {
        /* Values are kept as absolute bounds base + kn_l in ubv. A child's
         * bound in scenario l is at most its parent's (its completions are
         * a subset), so a value computed at an ancestor, plus rounding
         * slack, stays an upper bound; only the scenarios that can decide
         * the quantile are recomputed, and every so often all of them. */
#ifdef SURETY_CHECK_INVARIANTS
        chk_ub_start(s, row);
#endif
        int have_list = row > 0 && row != s->restart_row &&
                        s->rln[row - 1] != SIZE_MAX && (s->evals++ & 31) != 0;
        double slack = 1e-12 * (s->pscale + 1), cap = base + unc;
        size_t b = k - s->dead_w[0];
        /* the parent left the scenarios its children recompute (the
         * smallest of its values: the ones that can decide a quantile);
         * every 32nd evaluation recomputes them all. Without scenario
         * costs only the (b+1)-th smallest value is read, and a list of
         * b+1 and a sixteenth more, plus 4, proved the 40-job, 1000-
         * scenario instances 6-18% sooner than 2(b+1)+16, whose extra
         * knapsacks cost more than the lower values they find; with them
         * cost_bound also reads the values below it, and the
         * decomposition's one-resource solves at 10 000 scenarios were
         * slower with 1.25(b+1)+16 (bench/README.md, "A shorter
         * recompute list") */
        size_t want = s->mu ? 2 * (b + 1) + 16 : (b + 1) + (b + 1) / 16 + 4;
        lst_want = want;
        lst_cap = cap;
        size_t c = 0, livew = s->W - s->dead_w[0], nr = 0, rw = 0;
        /* the parent's list, or every scenario */
        const uint32_t *lst = have_list ? s->rl + (row - 1) * s->rlcap : NULL;
        size_t nl = have_list ? s->rln[row - 1] : N;
        for (size_t t = 0; t < nl; t++) {
            size_t l = lst ? lst[t] : t;
            if (s->dead[l] != SURETY_LIVE)
                continue;
            double v = base + knap_joint(s, l);
            if (v > cap)
                v = cap;
            ubv_set(s, row, l, v);
            s->ub[c] = v;
            s->ubw[c++] = s->cnt[l];
            s->rix[nr++] = l;
            rw += s->cnt[l];
        }
        /* recomputed scenarios are in ub/ubw (their ids in rix); when their
         * weight exceeds b, their own (b+1)-th smallest is at least the
         * true one (fewer values can only raise an order statistic), hence
         * still a valid bound */
        s->nrix = nr;
        s->knaps += nr;
        s->rix_all = nr == 0 || livew == rw;
        if (rw > b) {
            qa = surety_select_weighted(s->ub, s->ubw, c, b);
            /* for the children: about the want smallest recomputed */
            lst_c = c;
            lst_w = rw;
        } else if (livew > b) {
            /* too few recomputed: select over every live value */
            c = 0;
            for (size_t l = 0; l < N; l++)
                if (s->dead[l] == SURETY_LIVE) {
                    double v = s->ubv[l] + slack;
                    s->ub[c] = v < cap ? v : cap;
                    s->ubw[c] = s->cnt[l];
                    s->rix[c++] = l;
                }
            qa = surety_select_weighted(s->ub, s->ubw, c, b);
            lst_c = c;
            lst_w = livew;
            lst_slack = slack;
            s->nrix = c;
            s->rix_all = 1;
        } else {
            qa = cap;
            s->rln[row] = SIZE_MAX;
            s->rix_all = 1;
        }
        if (qa < bound)
            bound = qa;
    }
    if (bound == -INFINITY || !(bound > cutoff))
        return bound == -INFINITY ? -INFINITY : bound;

    if (!s->separate && !s->use_lagr && !s->rix_all) {
        /* stale scenarios exceed the quantile, which exceeds the cutoff:
         * only the recomputed ones can be fixed */
        for (size_t r = 0; r < s->nrix; r++) {
            size_t l = s->rix[r];
            double v = s->ubv[l];
            if (v == -INFINITY || v <= cutoff)
                fix_dead(s, 0, l);
        }
        if (s->dead_w[0] > k)
            return -INFINITY;
        children_list(s, row, lst_c, lst_w, lst_want, lst_slack, lst_cap);
        return s->mu ? cost_bound(s, bound, base + unc,
                                  qa + 4e-12 * (s->pscale + 1))
                     : bound;
    }
    /* values may come from an ancestor: plus rounding slack */
    double slack = 1e-12 * (s->pscale + 1);
    for (size_t g = 0; g < G; g++) {
        unsigned char *dead = s->dead + g * N;
        for (size_t l = 0; l < N; l++) {
            if (dead[l] != SURETY_LIVE)
                continue;
            int fail = 0;
            if (!s->separate) {
                double v = s->ubv[l];
                fail = v == -INFINITY || v + slack <= cutoff;
            }
            for (size_t i = 0; i < m && !fail && s->use_lagr; i++) {
                if (s->separate && i != g)
                    continue;
                fail = base + lf + lsum - s->ql[i] + s->kl[i * N + l] <= cutoff;
            }
            if (fail)
                fix_dead(s, g, l);
        }
        if (s->dead_w[g] > k)
            return -INFINITY;
    }
    children_list(s, row, lst_c, lst_w, lst_want, lst_slack, lst_cap);
    return s->mu ? cost_bound(s, bound, base + unc,
                              s->separate ? INFINITY : qa + 4 * slack)
                 : bound;
}

typedef struct lctx {
    const double *rp;
    const double *row;
} lctx;

/* Job a before job b when rp_a / w_a > rp_b / w_b, compared as the
 * products rp_a w_b and rp_b w_a exactly: where the rounded products tie,
 * their rounding errors (fma gives them exactly) decide, then the index.
 * Rounded products alone can order three jobs in a circle, and then two
 * sorting methods may disagree; exact ones make this a total order, so
 * every sort gives the same one. */
static int cmp_lagr(const void *a, const void *b, void *ctx)
{
    const lctx *e = ctx;
    uint32_t ja = *(const uint32_t *)a, jb = *(const uint32_t *)b;
    double x = e->rp[ja] * e->row[jb], y = e->rp[jb] * e->row[ja];
    if (x != y)
        return x > y ? -1 : 1;
    double xe = fma(e->rp[ja], e->row[jb], -x);
    double ye = fma(e->rp[jb], e->row[ja], -y);
    if (xe != ye)
        return xe > ye ? -1 : 1;
    return (ja > jb) - (ja < jb);
}

/* Up to this many jobs lagr_prepare sorts a scenario by insertion. */
#define LAGR_INSERT_MAX 48

/* Reduced profits and the per-scenario orders for the current prices. */
static void lagr_prepare(surety_solver *s)
{
    size_t n = s->n;
    s->nl = 0;
    for (size_t j = 0; j < n; j++) {
        s->rp[j] = s->cand[j] ? s->p[j] - s->lam[j] : 0;
        if (s->rp[j] < 0)
            s->rp[j] = 0;
        s->nl += s->rp[j] > 0;
    }
    for (size_t l = 0; l < s->N; l++) {
        uint32_t *e = s->leff + l * s->nl;
        size_t c = 0;
        for (size_t j = 0; j < n; j++)
            if (s->rp[j] > 0)
                e[c++] = (uint32_t)j;
        lctx ctx = {s->rp, s->w + l * n};
        if (c > LAGR_INSERT_MAX) {
            qsort_r(e, c, sizeof *e, cmp_lagr, &ctx);
            continue;
        }
        /* a few jobs (a one-resource solve's, mostly): insertion with the
         * comparison inline, which a call per comparison cost more than
         * the sort's work. cmp_lagr is a total order, so the order is
         * qsort_r's. */
        for (size_t a = 1; a < c; a++) {
            uint32_t x = e[a];
            size_t u = a;
            while (u > 0 && cmp_lagr(&x, &e[u - 1], &ctx) < 0) {
                e[u] = e[u - 1];
                u--;
            }
            e[u] = x;
        }
    }
}

/* Root prices by projected subgradient steps on L(lam) = sum lam_j +
 * sum_i q_i(lam) (Polyak step toward the incumbent; Held, Wolfe & Crowder
 * 1974 style halving when progress stalls). lam_j stays in [0, p_j]. */
int surety_bound_init(surety_solver *s, int light)
{
    size_t n = s->n, N = s->N, m = s->m;
    s->lam = surety_xcalloc(n, sizeof *s->lam);
    s->rp = surety_xcalloc(n, sizeof *s->rp);
    s->ql = surety_xmalloc(m, sizeof *s->ql);
    s->lx = surety_xmalloc(n, sizeof *s->lx);
    if (!s->lam || !s->rp || !s->ql || !s->lx)
        return -1;
    /* A light solve (inside another, from a start plan) with the joint
     * constraint uses the aggregated bound alone; its prices and
     * per-scenario orders are not computed (nor their tables allocated).
     * - The decomposition's one-resource solves: with one resource the
     *   rows "each job once" are the bounds x_j <= 1 that every knapsack
     *   keeps, its single round stays at zero prices, and the per-resource
     *   bound is the aggregated one without the latter's refinements
     *   (required jobs' hours, Martello-Toth's U2). In the test suite's
     *   477 such solves that chose it, it was below the aggregated bound
     *   by rounding only (at most 2.4e-9), yet it took about 8% of a
     *   restored node's solve.
     * - The parts of lns.c (two or three resources): the 60 price steps,
     *   each sorting every scenario's jobs, took most of a part's time
     *   (about 1 of the 1.5 s the parts took in a 20-s proof), outside the
     *   work the parts are paced by, and 13 of 82 parts kept the bound.
     *   Without it the 0.3 proofs ran 0-6% faster, node for node nearly
     *   the same (bench/README.md, "The parts without the per-resource
     *   bound").
     * A user's model still gets both bounds reported. */
    if (light && !s->separate) {
        s->use_lagr = 0;
        s->root_lagr = INFINITY;
        s->root_agg = surety_bound_node(s, -INFINITY, 0);
        return 0;
    }
    s->leff = surety_xmalloc(N * (s->ncand ? s->ncand : 1), sizeof *s->leff);
    s->kl = surety_xmalloc(m * N, sizeof *s->kl);
    double *best = surety_xcalloc(n, sizeof *best);
    double *g = surety_xmalloc(n, sizeof *g);
    if (!s->leff || !s->kl || !best || !g) {
        surety_xfree(best);
        surety_xfree(g);
        return -1;
    }
    /* the per-resource values kept down the tree, when their trail takes
     * at most about 256 MB (else each node recomputes them all) */
    size_t mn = m * N, depth = s->nb + 1;
    if (mn <= UINT32_MAX && depth * mn <= ((size_t)256 << 20) / 12) {
        s->klv = surety_xmalloc(mn, sizeof *s->klv);
        s->kp = surety_xcalloc(m, sizeof *s->kp);
        s->klt_e = surety_xmalloc(depth * mn, sizeof *s->klt_e);
        s->klt_v = surety_xmalloc(depth * mn, sizeof *s->klt_v);
        s->qk = surety_xmalloc(depth * m, sizeof *s->qk);
        if (!s->klv || !s->kp || !s->klt_e || !s->klt_v || !s->qk) {
            lagr_keep_free(s);
        } else {
            for (size_t e = 0; e < mn; e++)
                s->klv[e] = INFINITY;
        }
    }
    possible_pairs(s, 0);
    double bestL = INFINITY, theta = 1;
    int stall = 0;
    double base = s->fixed_profit + s->req_profit;
    int iters = m > 1 ? 60 : 1;
    for (int it = 0; it < iters; it++) {
        lagr_prepare(s);
        for (size_t j = 0; j < n; j++)
            g[j] = s->cand[j] ? 1 : 0;
        lagr_quantiles(s, 0);
        /* subgradient: 1 - sum over resources of the fraction of j taken
         * in that resource's critical scenario */
        double lsum;
        lsum = 0;
        for (size_t i = 0; i < m; i++) {
            size_t gi = s->separate ? i : 0;
            lsum += s->ql[i];
            if (s->ql[i] <= 0)
                continue;
            for (size_t l = 0; l < N; l++)
                if (s->dead[gi * N + l] == SURETY_LIVE && s->kl[i * N + l] == s->ql[i]) {
                    memset(s->lx, 0, n * sizeof *s->lx);
                    knap_lagr(s, i, l, s->lx);
                    for (size_t j = 0; j < n; j++)
                        g[j] -= s->lx[j];
                    break;
                }
        }
        double L = base + lam_free(s) + lsum;
        if (L < bestL - 1e-12 * (s->pscale + 1)) {
            bestL = L;
            memcpy(best, s->lam, n * sizeof *best);
            stall = 0;
        } else if (++stall >= 5) {
            theta /= 2;
            stall = 0;
        }
        if (it + 1 == iters)
            break; /* no step that no round would use */
        double norm = 0;
        for (size_t j = 0; j < n; j++)
            if (s->cand[j] && s->state[j] == SURETY_JOB_FREE)
                norm += g[j] * g[j];
        if (norm <= 0 || theta < 1e-4)
            break;
        double target = s->have_inc ? s->inc : 0.9 * L;
        double step = theta * (L - target) / norm;
        if (step <= 0)
            step = theta * 1e-3 * (s->pscale + 1) / norm;
        for (size_t j = 0; j < n; j++) {
            if (!s->cand[j] || s->state[j] != SURETY_JOB_FREE)
                continue;
            double v = s->lam[j] - step * g[j];
            s->lam[j] = v < 0 ? 0 : (v > s->p[j] ? s->p[j] : v);
        }
    }
    if (memcmp(s->lam, best, n * sizeof *best) != 0) {
        /* the orders for the best prices (one resource, a single round:
         * they are the last round's; the decomposition's one-resource
         * solves paid for the orders twice) */
        memcpy(s->lam, best, n * sizeof *best);
        lagr_prepare(s);
    }
    /* for the joint constraint the aggregated bound is often the smaller
     * one; the per-resource bound is kept only when it helps at the root */
    s->use_lagr = 1;
    s->root_agg = INFINITY;
    if (!s->separate) {
        s->use_lagr = 0;
        double agg = surety_bound_node(s, -INFINITY, 0);
        s->use_lagr = bestL < agg;
        s->root_agg = agg;
    }
    s->root_lagr = bestL;
    surety_xfree(best);
    surety_xfree(g);
    return 0;
}

void surety_bound_free(surety_solver *s)
{
#ifdef SURETY_CHECK_INVARIANTS
    free(s->chk_ub);
    s->chk_ub = NULL;
    free(s->chk_nodec);
    s->chk_nodec = NULL;
#endif
    lagr_keep_free(s);
    surety_xfree(s->lam);
    surety_xfree(s->rp);
    surety_xfree(s->leff);
    surety_xfree(s->kl);
    surety_xfree(s->ql);
    surety_xfree(s->lx);
}
