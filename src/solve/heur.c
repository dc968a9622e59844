/* heur.c - incumbents: greedy insertion with a violation budget and a
 * local search of add, swap and drop/re-insert moves (METHODS.md s.8).
 * Every plan found here is re-counted exactly by surety_solve_offer.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "solve/solve.h"

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>
#endif

static int over(const surety_solver *s, size_t i, double load)
{
    const surety_resource *r = &s->model->resources[i];
    return !surety_plan_holds(r->hours_factor, load, r->capacity);
}

static size_t group_of(const surety_solver *s, size_t i)
{
    return s->separate ? i : 0;
}

/* A job the caller left open (fixed[j] == SURETY_JOB_FREE), or any job
 * when nothing is fixed: the moves below may place, move or drop it. */
static int movable(const long *fixed, size_t j)
{
    return !fixed || fixed[j] == SURETY_JOB_FREE;
}

/* Loads recomputed from scratch, jobs added in ascending order as the
 * canonical recount does, so the heuristic's counts start exact. */
static void reset(surety_solver *s, const long *plan)
{
    size_t N = s->N, m = s->m, n = s->n, G = s->G;
    memset(s->hload, 0, m * N * sizeof *s->hload);
    for (size_t j = 0; j < n; j++) {
        long i = plan[j];
        if (i < 0)
            continue;
        double *ld = s->hload + (size_t)i * N;
        const double *wj = s->wt + j * N;
        for (size_t l = 0; l < N; l++)
            ld[l] += wj[l];
    }
    memset(s->hov, 0, G * N * sizeof *s->hov);
    memset(s->hfail, 0, G * sizeof *s->hfail);
    for (size_t i = 0; i < m; i++) {
        size_t g = group_of(s, i);
        s->htot[i] = 0;
        for (size_t l = 0; l < N; l++) {
            double ld = s->hload[i * N + l];
            s->htot[i] += ld;
            unsigned char o = (unsigned char)over(s, i, ld);
            s->hover[i * N + l] = o;
            if (o && s->hov[g * N + l]++ == 0)
                s->hfail[g] += s->cnt[l];
        }
    }
}

/* fail, changed as fail_after changes it for the scenarios from `from`
 * on, one scenario at a time: fail_after's last few scenarios, and the
 * invariant build's recount of all of them. */
static size_t fail_scalar(const surety_solver *s, size_t i, size_t add,
                          size_t rem, size_t from, size_t fail)
{
    size_t N = s->N, g = group_of(s, i);
    const unsigned *hv = s->hov + g * N;
    const unsigned char *ov = s->hover + i * N;
    for (size_t l = from; l < N; l++) {
        double x = s->hload[i * N + l];
        if (add != SIZE_MAX)
            x += s->wt[add * N + l];
        if (rem != SIZE_MAX)
            x -= s->wt[rem * N + l];
        unsigned now = hv[l] - ov[l] + (unsigned)over(s, i, x);
        if (now > 0 && hv[l] == 0)
            fail += s->cnt[l];
        else if (hv[l] > 0 && now == 0)
            fail -= s->cnt[l];
    }
    return fail;
}

/* Failed weight of resource i's group if job `add` (or none, SIZE_MAX)
 * joined and job `rem` (or none) left resource i: the local search's
 * inner loop. A scenario's weight counts in where no resource of the
 * group overloaded it and now i would, and out where i was the only one
 * and no longer would. Four scenarios at a time without a branch (adding
 * a job changes the flag in many scenarios, so a branch per change paid
 * more than it saved); the capacity test is over()'s, the same product
 * against the same slackened capacity, so the count is exact. */
SURETY_CLONES
static size_t fail_after(const surety_solver *s, size_t i, size_t add,
                         size_t rem)
{
    size_t N = s->N, g = group_of(s, i), l = 0;
    const surety_resource *r = &s->model->resources[i];
    double f = r->hours_factor;
    double cap = surety_plan_limit(r->capacity);
    const double *ld = s->hload + i * N;
    const unsigned char *ov = s->hover + i * N;
    const unsigned *hv = s->hov + g * N, *cnt = s->cnt;
    const double *wa = add != SIZE_MAX ? s->wt + add * N : NULL;
    const double *wr = rem != SIZE_MAX ? s->wt + rem * N : NULL;
    const surety_v4d fv = {f, f, f, f}, cv = {cap, cap, cap, cap};
    const surety_v4i zero = {0, 0, 0, 0};
    surety_v4i acc = zero;
    for (; l + 4 <= N; l += 4) {
        surety_v4d x, w;
        memcpy(&x, ld + l, sizeof x);
        if (wa) {
            memcpy(&w, wa + l, sizeof w);
            x += w;
        }
        if (wr) {
            memcpy(&w, wr + l, sizeof w);
            x -= w;
        }
        surety_v4i o = ~(surety_v4i)(fv * x <= cv) & 1; /* over() */
        surety_v4i was = {ov[l], ov[l + 1], ov[l + 2], ov[l + 3]};
        surety_v4i h = {hv[l], hv[l + 1], hv[l + 2], hv[l + 3]};
        surety_v4i c = {cnt[l], cnt[l + 1], cnt[l + 2], cnt[l + 3]};
        surety_v4i now = h - was + o;
        acc += ((surety_v4i)(now > zero) & c) - ((surety_v4i)(h > zero) & c);
    }
    size_t fail = s->hfail[g] + (size_t)(acc[0] + acc[1] + acc[2] + acc[3]);
    fail = fail_scalar(s, i, add, rem, l, fail);
#ifdef SURETY_CHECK_INVARIANTS
    /* built only for tests/test_invariants.c: the four-wide count against
     * the count one scenario at a time */
    size_t want = fail_scalar(s, i, add, rem, 0, s->hfail[g]);
    if (fail != want) {
        fprintf(stderr, "invariant broken: fail_after %zu, recounted %zu\n",
                fail, want);
        abort();
    }
#endif
    return fail;
}

/* Adds (sign > 0) or removes job j in resource i. */
static void change(surety_solver *s, size_t j, size_t i, int sign)
{
    size_t N = s->N, g = group_of(s, i);
    double *ld = s->hload + i * N;
    unsigned char *ov = s->hover + i * N;
    unsigned *hv = s->hov + g * N;
    const double *wj = s->wt + j * N;
    for (size_t l = 0; l < N; l++) {
        double x = sign > 0 ? ld[l] + wj[l] : ld[l] - wj[l];
        s->htot[i] += x - ld[l];
        ld[l] = x;
        unsigned char o = (unsigned char)over(s, i, x);
        if (o == ov[l])
            continue;
        ov[l] = o;
        if (o) {
            if (hv[l]++ == 0)
                s->hfail[g] += s->cnt[l];
        } else {
            if (--hv[l] == 0)
                s->hfail[g] -= s->cnt[l];
        }
    }
}

/* The best resource for job j: allowed, keeps its group within the
 * allowance (unless `force`, for required jobs), fewest new failures, then
 * the least loaded. Returns -1 when none. */
static long best_resource(surety_solver *s, size_t j, int force)
{
    long best = -1;
    size_t bestf = SIZE_MAX;
    double bestt = INFINITY;
    for (size_t i = 0; i < s->m; i++) {
        if (!s->allowed[j * s->m + i])
            continue;
        size_t g = group_of(s, i);
        size_t f = fail_after(s, i, j, SIZE_MAX);
        if (!force && f > s->k)
            continue;
        size_t add = f - s->hfail[g];
        double t = s->htot[i] / s->cap[i];
        if (add < bestf || (add == bestf && t < bestt)) {
            best = (long)i;
            bestf = add;
            bestt = t;
        }
    }
    return best;
}

static int within(const surety_solver *s)
{
    for (size_t g = 0; g < s->G; g++)
        if (s->hfail[g] > s->k)
            return 0;
    return 1;
}

/* Places the required jobs that plan leaves free, each where it adds the
 * fewest failures; 1 when the plan is then within the allowance, 0 when
 * not, -1 when a required job has no resource at all. */
static int place_required(surety_solver *s, long *plan)
{
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        if (!s->required[j] || plan[j] != SURETY_JOB_FREE)
            continue;
        long i = best_resource(s, j, 1);
        if (i < 0)
            return -1;
        change(s, j, (size_t)i, 1);
        plan[j] = i;
    }
    return within(s);
}

/* Inserts the free jobs of plan (SURETY_JOB_FREE entries) greedily: required
 * jobs first, then candidates in the order `ord`. Free jobs left over
 * become SURETY_JOB_OUT. */
static int greedy(surety_solver *s, long *plan, const size_t *ord)
{
    if (place_required(s, plan) != 1)
        return 0;
    for (size_t t = 0; t < s->ncand; t++) {
        size_t j = ord[t];
        if (plan[j] != SURETY_JOB_FREE)
            continue;
        long i = best_resource(s, j, 0);
        if (i >= 0) {
            change(s, j, (size_t)i, 1);
            plan[j] = i;
        } else {
            plan[j] = SURETY_JOB_OUT;
        }
    }
    for (size_t j = 0; j < s->n; j++)
        if (plan[j] == SURETY_JOB_FREE)
            plan[j] = SURETY_JOB_OUT;
    return 1;
}

static double profit_of(const surety_solver *s, const long *plan)
{
    double v = 0;
    for (size_t j = 0; j < s->n; j++)
        if (plan[j] >= 0)
            v += s->p[j];
    return v;
}

/* Local search until no move improves (METHODS.md s.8 rule 2): add an
 * outside job; swap a placed optional job for a more profitable outside
 * one in the same resource; drop a placed job and re-insert greedily
 * (itself included, so it may move), kept when profit rises. Jobs fixed
 * by the caller (fixed[j] != SURETY_JOB_FREE) are never touched. */
static void polish(surety_solver *s, long *plan, const long *fixed)
{
    size_t m = s->m;
    for (int round = 0; round < 50; round++) {
        int improved = 0;
        /* add */
        for (size_t t = 0; t < s->ncand; t++) {
            size_t j = s->hordp[t];
            if (plan[j] != SURETY_JOB_OUT || !movable(fixed, j))
                continue;
            long i = best_resource(s, j, 0);
            if (i >= 0) {
                change(s, j, (size_t)i, 1);
                plan[j] = i;
                improved = 1;
            }
        }
        /* swap in resource i: a out, b in, p_b > p_a */
        for (size_t ta = 0; ta < s->ncand; ta++) {
            size_t a = s->hordp[s->ncand - 1 - ta]; /* least profitable first */
            if (plan[a] < 0 || !movable(fixed, a))
                continue;
            size_t i = (size_t)plan[a];
            for (size_t tb = 0; tb < s->ncand; tb++) {
                size_t b = s->hordp[tb];
                if (!(s->p[b] > s->p[a]))
                    break;
                if (plan[b] != SURETY_JOB_OUT || !movable(fixed, b) ||
                    !s->allowed[b * m + i])
                    continue;
                if (fail_after(s, i, b, a) <= s->k) {
                    change(s, a, i, -1);
                    change(s, b, i, 1);
                    plan[a] = SURETY_JOB_OUT;
                    plan[b] = (long)i;
                    improved = 1;
                    break;
                }
            }
        }
        /* drop one job, re-insert greedily */
        for (size_t ta = 0; ta < s->ncand; ta++) {
            size_t a = s->hordp[ta];
            if (plan[a] < 0 || !movable(fixed, a))
                continue;
            double before = profit_of(s, plan);
            memcpy(s->hsave, plan, s->n * sizeof *plan);
            change(s, a, (size_t)plan[a], -1);
            plan[a] = SURETY_JOB_OUT;
            for (size_t tb = 0; tb < s->ncand; tb++) {
                size_t b = s->hordp[tb];
                if (b == a || plan[b] != SURETY_JOB_OUT ||
                    !movable(fixed, b))
                    continue;
                long i = best_resource(s, b, 0);
                if (i >= 0) {
                    change(s, b, (size_t)i, 1);
                    plan[b] = i;
                }
            }
            long i = best_resource(s, a, 0);
            if (i >= 0) {
                change(s, a, (size_t)i, 1);
                plan[a] = i;
            }
            if (profit_of(s, plan) > before + 1e-12 * (s->pscale + 1)) {
                improved = 1;
            } else {
                memcpy(plan, s->hsave, s->n * sizeof *plan);
                reset(s, plan);
            }
        }
        if (!improved)
            break;
        reset(s, plan); /* drop the drift of incremental sums */
    }
}

static int cmp_key_ext(const void *a, const void *b, void *ctx);

static uint64_t next_rand(uint64_t *x)
{
    return surety_rng_splitmix64(x);
}

/* A random allowed resource that keeps job j's group within the
 * allowance, tried from a random first one (the greedy's best_resource
 * always picks the same, which leaves the search few ways out). */
static long random_fit(surety_solver *s, size_t j, uint64_t *seed)
{
    size_t m = s->m, start = (size_t)(next_rand(seed) % m);
    for (size_t t = 0; t < m; t++) {
        size_t i = (start + t) % m;
        if (s->allowed[j * m + i] && fail_after(s, i, j, SIZE_MAX) <= s->k)
            return (long)i;
    }
    return -1;
}

/* Iterated local search (a large-neighbourhood search in the sense of
 * Shaw 1998): empty one resource, or drop a few placed jobs at random;
 * re-insert the outside jobs in a randomly perturbed key order, each into
 * its best resource or, half of the time, a random one that fits (METHODS.md
 * s.8 rules 1-2 as the repair); keep the result when it is more
 * profitable. Iteration counts, not the clock, bound the work, so runs
 * repeat; the caller's seed carries the random sequence across calls.
 * Stops after `patience` iterations without improvement. */
static void ils(surety_solver *s, long *plan, const long *fixed, size_t iters,
                size_t patience, uint64_t *seed)
{
    size_t n = s->n, nc = s->ncand, m = s->m;
    long *cur = surety_xmalloc(n, sizeof *cur);
    size_t *ord = surety_xmalloc(nc ? nc : 1, sizeof *ord);
    double *key = surety_xmalloc(n, sizeof *key);
    if (!cur || !ord || !key) {
        surety_xfree(cur);
        surety_xfree(ord);
        surety_xfree(key);
        return;
    }
    double best = profit_of(s, plan);
    size_t since = 0; /* iterations since the last improvement */
    for (size_t it = 0; it < iters && since < patience; it++, since++) {
        memcpy(cur, plan, n * sizeof *cur);
        reset(s, cur);
        size_t placed = 0;
        for (size_t t = 0; t < nc; t++) {
            size_t j = s->hordp[t];
            placed += cur[j] >= 0 && movable(fixed, j);
        }
        if (placed == 0)
            break;
        if (m > 1 && next_rand(seed) % 10 < 3) {
            size_t i = (size_t)(next_rand(seed) % m);
            for (size_t t = 0; t < nc; t++) {
                size_t j = s->hordp[t];
                if (cur[j] == (long)i && movable(fixed, j)) {
                    change(s, j, i, -1);
                    cur[j] = SURETY_JOB_OUT;
                }
            }
        } else {
            size_t drop = 1 + next_rand(seed) % 5;
            for (size_t d = 0; d < drop && placed > 0; d++) {
                size_t pick = next_rand(seed) % placed, c = 0;
                for (size_t t = 0; t < nc; t++) {
                    size_t j = s->hordp[t];
                    if (cur[j] < 0 || !movable(fixed, j))
                        continue;
                    if (c++ == pick) {
                        change(s, j, (size_t)cur[j], -1);
                        cur[j] = SURETY_JOB_OUT;
                        placed--;
                        break;
                    }
                }
            }
        }
        /* refill order: the greedy key with noise, the profit alone, or
         * at random (a third each) */
        unsigned kind = (unsigned)(next_rand(seed) % 3);
        for (size_t t = 0; t < nc; t++) {
            size_t j = s->hord[t];
            double u = (double)(next_rand(seed) >> 11) * 0x1.0p-53;
            key[j] = kind == 0 ? s->hkey[j] * (0.7 + 0.6 * u)
                     : kind == 1 ? s->p[j]
                                 : u;
            ord[t] = j;
        }
        qsort_r(ord, nc, sizeof *ord, cmp_key_ext, key);
        int rnd = next_rand(seed) & 1;
        for (size_t t = 0; t < nc; t++) {
            size_t j = ord[t];
            if (cur[j] != SURETY_JOB_OUT || !movable(fixed, j))
                continue;
            long i = rnd ? random_fit(s, j, seed) : best_resource(s, j, 0);
            if (i >= 0) {
                change(s, j, (size_t)i, 1);
                cur[j] = i;
            }
        }
        double v = profit_of(s, cur);
        if (v > best + 1e-12 * (s->pscale + 1) && within(s)) {
            best = v;
            since = 0;
            memcpy(plan, cur, n * sizeof *cur);
        }
    }
    reset(s, plan);
    surety_xfree(cur);
    surety_xfree(ord);
    surety_xfree(key);
}

typedef struct key_ctx {
    const double *key;
} key_ctx;

static int cmp_key(const void *a, const void *b, void *ctx)
{
    const double *key = ctx;
    size_t ja = *(const size_t *)a, jb = *(const size_t *)b;
    if (key[ja] != key[jb])
        return key[ja] > key[jb] ? -1 : 1;
    return (ja > jb) - (ja < jb);
}

static int cmp_key_ext(const void *a, const void *b, void *ctx)
{
    return cmp_key(a, b, ctx);
}

/* Greedy keys: p_j over the (N-k)-th smallest hours of job j, the hours
 * it needs in all scenarios that must hold (METHODS.md s.8 rule 1), found
 * by weighted selection (a sort of the N hours per job took 4-5% of the
 * decomposition's one-resource solves at N=1000; the value is the same). */
static int heur_init(surety_solver *s)
{
    size_t N = s->N, n = s->n;
    double *v = surety_xmalloc(N, sizeof *v);
    unsigned *w = surety_xmalloc(N, sizeof *w);
    if (!v || !w) {
        surety_xfree(v);
        surety_xfree(w);
        return -1;
    }
    size_t target = s->W - s->k; /* 1-based rank */
    size_t c = 0;
    for (size_t j = 0; j < n; j++) {
        if (!s->cand[j]) {
            s->hkey[j] = 0;
            continue;
        }
        const double *wj = s->wt + j * N;
        double q = wj[0];
        if (target == 0 || target > s->W) {
            /* as the sort's scan did: with k = W no scenario must hold
             * (the smallest hours); k > W wraps the rank past W (the
             * largest) */
            for (size_t l = 1; l < N; l++)
                if (target == 0 ? wj[l] < q : wj[l] > q)
                    q = wj[l];
        } else {
            memcpy(v, wj, N * sizeof *v);
            memcpy(w, s->cnt, N * sizeof *w);
            q = surety_select_weighted(v, w, N, target - 1);
        }
        s->hkey[j] = q > 0 ? s->p[j] / q : INFINITY;
        s->hord[c] = j;
        s->hordp[c] = j;
        c++;
    }
    qsort_r(s->hord, c, sizeof *s->hord, cmp_key, s->hkey);
    qsort_r(s->hordp, c, sizeof *s->hordp, cmp_key, s->p);
    surety_xfree(v);
    surety_xfree(w);
    return 0;
}

int surety_heur_complete(surety_solver *s, const long *fixed, long *plan,
                         int polish_it)
{
    if (!s->hkey) {
        size_t N = s->N, m = s->m, n = s->n;
        s->hload = surety_xmalloc(m * N, sizeof *s->hload);
        s->hover = surety_xmalloc(m * N, 1);
        s->hov = surety_xmalloc(s->G * N, sizeof *s->hov);
        s->hfail = surety_xmalloc(s->G, sizeof *s->hfail);
        s->htot = surety_xmalloc(m, sizeof *s->htot);
        s->hkey = surety_xmalloc(n, sizeof *s->hkey);
        s->hord = surety_xmalloc(n, sizeof *s->hord);
        s->hordp = surety_xmalloc(n, sizeof *s->hordp);
        s->hplan = surety_xmalloc(n, sizeof *s->hplan);
        s->hsave = surety_xmalloc(n, sizeof *s->hsave);
        if (!s->hload || !s->hover || !s->hov || !s->hfail || !s->htot ||
            !s->hkey || !s->hord || !s->hordp || !s->hplan || !s->hsave ||
            heur_init(s) != 0)
            return 0;
    }
    int ok = 1;
    for (int pass = 0; pass < (polish_it ? 2 : 1); pass++) {
        memcpy(plan, fixed, s->n * sizeof *plan);
        long *start = s->hplan;
        for (size_t j = 0; j < s->n; j++)
            start[j] = plan[j] >= 0 ? plan[j] : SURETY_JOB_OUT;
        reset(s, start);
        ok = greedy(s, plan, pass == 0 ? s->hord : s->hordp);
        if (ok && polish_it) {
            polish(s, plan, fixed);
            /* about 1e7 elementary steps in all */
            double per = (double)s->n * (double)s->m * (double)s->N + 1;
            double it = 1e7 / per;
            uint64_t seed = 0x5eed ^ (uint64_t)s->n * 1000003u ^ (uint64_t)s->N;
            ils(s, plan, fixed, it < 20 ? 20 : it > 1000 ? 1000 : (size_t)it,
                150, &seed);
            polish(s, plan, fixed);
        }
        if (ok)
            ok = within(s);
        if (ok && polish_it && pass == 0)
            surety_solve_offer(s, plan);
    }
    return ok;
}

int surety_heur_improve(surety_solver *s, long *plan, size_t iters)
{
    if (!s->hkey)
        return 0;
    double before = profit_of(s, plan), tol = 1e-12 * (s->pscale + 1);
    reset(s, plan);
    if (!within(s))
        return 0;
    ils(s, plan, NULL, iters, iters, &s->hseed);
    if (!(profit_of(s, plan) > before + tol))
        return 0;
    polish(s, plan, NULL);
    return within(s);
}

/* A plan from the one-resource plans of a price round (a Lagrangian
 * heuristic: the relaxation's solution made feasible, as in Fisher 1981,
 * cited from memory). want (n*m flags) marks the resources
 * whose plans hold job j. A job one resource wants goes there; a job
 * several want goes, most profitable first, to the one of them it adds
 * the fewest failed scenarios to. Required jobs left out are placed as
 * the greedy places them. Then, while a group fails more than its
 * allowance, the optional job of such a group whose removal saves the
 * most failed weight per unit of profit leaves (the least profitable
 * when no single removal saves any); then the local search. Jobs the
 * root has decided (s->state) keep their state. Returns 1 with a plan in `plan` that is within the allowance by
 * the heuristic's count (the caller offers it: surety_solve_offer
 * re-counts it), else 0. */
int surety_heur_from(surety_solver *s, const unsigned char *want, long *plan,
                     uint64_t *seed)
{
    if (!s->hkey)
        return 0;
    size_t n = s->n, m = s->m;
    const long *fixed = s->state;
    for (size_t j = 0; j < n; j++)
        plan[j] = fixed[j] == SURETY_JOB_FREE ? SURETY_JOB_OUT : fixed[j];
    reset(s, plan);
    for (int many = 0; many < 2; many++)
        for (size_t t = 0; t < s->ncand; t++) {
            size_t j = s->hordp[t], c = 0;
            if (!movable(fixed, j))
                continue;
            for (size_t i = 0; i < m; i++)
                c += want[j * m + i] && s->allowed[j * m + i];
            if (c == 0 || (c > 1) != many)
                continue;
            long best = -1;
            size_t bestf = SIZE_MAX;
            for (size_t i = 0; i < m; i++) {
                if (!want[j * m + i] || !s->allowed[j * m + i])
                    continue;
                size_t f = fail_after(s, i, j, SIZE_MAX) -
                           s->hfail[group_of(s, i)];
                if (f < bestf) {
                    best = (long)i;
                    bestf = f;
                }
            }
            change(s, j, (size_t)best, 1);
            plan[j] = best;
        }
    for (size_t j = 0; j < n; j++)
        if (s->required[j] && plan[j] < 0 && movable(fixed, j))
            plan[j] = SURETY_JOB_FREE;
    if (place_required(s, plan) < 0)
        return 0;
    while (!within(s)) {
        long drop = -1;
        double score = -INFINITY;
        for (size_t j = 0; j < n; j++) {
            if (plan[j] < 0 || !movable(fixed, j) || s->required[j])
                continue;
            size_t i = (size_t)plan[j], g = group_of(s, i);
            if (s->hfail[g] <= s->k)
                continue; /* its group is within its allowance */
            double saved = (double)s->hfail[g] -
                           (double)fail_after(s, i, SIZE_MAX, j);
            double p = s->p[j] > 1e-12 ? s->p[j] : 1e-12;
            /* saving weight first; among none, the least profitable */
            double sc = saved > 0 ? saved / p : -p;
            if (sc > score) {
                score = sc;
                drop = (long)j;
            }
        }
        if (drop < 0)
            return 0; /* only required jobs are left to move */
        change(s, (size_t)drop, (size_t)plan[drop], -1);
        plan[drop] = SURETY_JOB_OUT;
    }
    polish(s, plan, fixed);
    double per = (double)n * (double)m * (double)s->N + 1, it = 1e8 / per;
    ils(s, plan, fixed, it < 100 ? 100 : it > 3000 ? 3000 : (size_t)it,
        300, seed);
    polish(s, plan, fixed);
    reset(s, plan); /* the count from scratch, as the recount does it */
    return within(s);
}

void surety_heur_free(surety_solver *s)
{
    surety_xfree(s->hload);
    surety_xfree(s->hover);
    surety_xfree(s->hov);
    surety_xfree(s->hfail);
    surety_xfree(s->htot);
    surety_xfree(s->hkey);
    surety_xfree(s->hord);
    surety_xfree(s->hordp);
    surety_xfree(s->hplan);
    surety_xfree(s->hsave);
}
