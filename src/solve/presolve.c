/* presolve.c - the solver's view of a model and scenario set: merged
 * duplicate scenarios, pruned (job, resource) pairs, branching order and
 * per-scenario efficiency orders, plus early infeasibility proofs.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "hash.h"
#include "solve/solve.h"

static int rows_equal(const surety_scenarios *sc, size_t la, size_t lb)
{
    const double *ra = sc->hours + la * sc->n, *rb = sc->hours + lb * sc->n;
    for (size_t j = 0; j < sc->n; j++)
        if (!(ra[j] == rb[j]))
            return 0;
    return 1;
}

typedef struct row_key {
    uint64_t h;
    size_t l;
} row_key;

/* Order of row hashes, ties by index (deterministic). */
static int cmp_row_key(const void *a, const void *b)
{
    const row_key *x = a, *y = b;
    if (x->h != y->h)
        return x->h < y->h ? -1 : 1;
    return (x->l > y->l) - (x->l < y->l);
}

/* Identical scenario rows give identical loads for every plan, whatever
 * the summation order, so they fail or hold together: merging them into
 * one scenario with weight = multiplicity (the allowance counting weights)
 * is exact. Rows are grouped by their XXH3 hash (src/hash.c), and within
 * a group tested element by element: a hash alone never merges two rows.
 * Each row joins the first (smallest-index) equal row of its group. */
static int merge_scenarios(surety_solver *s)
{
    const surety_scenarios *sc = s->sc;
    size_t N0 = s->N0, n = s->n;
    row_key *key = surety_xmalloc(N0, sizeof *key);
    size_t *rep = surety_xmalloc(N0, sizeof *rep);
    if (!key || !rep) {
        surety_xfree(key);
        surety_xfree(rep);
        return -1;
    }
    for (size_t l = 0; l < N0; l++) {
        key[l].h = surety_hash_doubles(sc->hours + l * n, n);
        key[l].l = l;
    }
    qsort(key, N0, sizeof *key, cmp_row_key);
    for (size_t t = 0; t < N0;) {
        size_t u = t + 1;
        while (u < N0 && key[u].h == key[t].h)
            u++;
        /* a run of equal hashes, by index: almost always one row, or
         * copies of one row; a collision only costs comparisons */
        for (size_t v = t; v < u; v++) {
            size_t l = key[v].l;
            rep[l] = l;
            for (size_t e = t; e < v; e++)
                if (rep[key[e].l] == key[e].l && rows_equal(sc, key[e].l, l)) {
                    rep[l] = key[e].l;
                    break;
                }
        }
        t = u;
    }
    surety_xfree(key);
    size_t N = 0;
    for (size_t l = 0; l < N0; l++)
        N += rep[l] == l;
    s->N = N;
    s->w = surety_xmalloc(N * n, sizeof *s->w);
    s->cnt = surety_xcalloc(N, sizeof *s->cnt);
    size_t *pos = surety_xmalloc(N0, sizeof *pos);
    if (!s->w || !s->cnt || !pos) {
        surety_xfree(pos);
        surety_xfree(rep);
        return -1;
    }
    const double *cost = s->opt->scenario_cost;
    if (cost)
        s->mu = surety_xcalloc(N, sizeof *s->mu);
    if (cost && !s->mu) {
        surety_xfree(pos);
        surety_xfree(rep);
        return -1;
    }
    size_t c = 0;
    for (size_t l = 0; l < N0; l++) {
        if (rep[l] == l) {
            memcpy(s->w + c * n, sc->hours + l * n, n * sizeof *s->w);
            pos[l] = c++;
        }
        pos[l] = pos[rep[l]]; /* rep[l] <= l: its row is known */
        s->cnt[pos[l]]++;
        /* copies fail together: the merged row carries all their costs */
        if (cost)
            s->mu[pos[l]] += cost[l];
    }
    s->row_of = pos;
    surety_xfree(rep);
    return 0;
}

static int cmp_branch(const void *a, const void *b, void *ctx)
{
    const surety_solver *s = ctx;
    size_t ja = *(const size_t *)a, jb = *(const size_t *)b;
    /* required jobs first: they constrain everything else */
    if (s->required[ja] != s->required[jb])
        return s->required[ja] ? -1 : 1;
    double ka = s->bkey[ja], kb = s->bkey[jb];
    if (ka != kb)
        return ka > kb ? -1 : 1;
    return (ja > jb) - (ja < jb);
}

typedef struct eff_ctx {
    const double *p;
    const double *row;
} eff_ctx;

/* p/w descending; w = 0 first (infinite efficiency); ties by index. The
 * products are compared exactly (their rounding errors by fma break the
 * ties of the rounded ones), so that this is a total order and every
 * sort gives the same order. */
static int cmp_eff(const void *a, const void *b, void *ctx)
{
    const eff_ctx *e = ctx;
    uint32_t ja = *(const uint32_t *)a, jb = *(const uint32_t *)b;
    double wa = e->row[ja], wb = e->row[jb];
    /* compare p_a/w_a with p_b/w_b as p_a*w_b vs p_b*w_a (w >= 0, p > 0) */
    double x = e->p[ja] * wb, y = e->p[jb] * wa;
    if (x != y)
        return x > y ? -1 : 1;
    double xe = fma(e->p[ja], wb, -x), ye = fma(e->p[jb], wa, -y);
    if (xe != ye)
        return xe > ye ? -1 : 1;
    return (ja > jb) - (ja < jb);
}

/* Up to this many candidates a scenario's efficiency order is sorted by
 * insertion: a call per comparison (qsort_r) cost more than the sort's
 * work, an eighth of a restored node's one-resource solve (bench/README.md,
 * "Sorts of a few jobs by insertion"). The insertion compares the rounded
 * ratios p/w (key, c entries of scratch), and cmp_eff only where two are
 * equal: a candidate has p > 0 and w >= 0 (w = 0: +inf, no NaN), and
 * rounding is monotone, so ratios whose rounded values differ compare
 * the same way exactly, and the order is cmp_eff's. */
#define EFF_INSERT_MAX 48

static void sort_eff(uint32_t *e, size_t c, eff_ctx *ctx, double *key)
{
    if (c > EFF_INSERT_MAX) {
        qsort_r(e, c, sizeof *e, cmp_eff, ctx);
        return;
    }
    for (size_t a = 0; a < c; a++) {
        double w = ctx->row[e[a]];
        key[a] = w > 0 ? ctx->p[e[a]] / w : INFINITY;
    }
    for (size_t a = 1; a < c; a++) {
        uint32_t x = e[a];
        double kx = key[a];
        size_t u = a;
        while (u > 0 && (key[u - 1] < kx ||
                         (key[u - 1] == kx &&
                          cmp_eff(&x, &e[u - 1], ctx) < 0))) {
            e[u] = e[u - 1];
            key[u] = key[u - 1];
            u--;
        }
        e[u] = x;
        key[u] = kx;
    }
}

/* lighter hours first, ties by job index */
static int cmp_light(const void *a, const void *b, void *ctx)
{
    const double *row = ctx;
    uint32_t ja = *(const uint32_t *)a, jb = *(const uint32_t *)b;
    if (row[ja] != row[jb])
        return row[ja] < row[jb] ? -1 : 1;
    return (ja > jb) - (ja < jb);
}

static void name_list(const surety_solver *s, const unsigned char *mark,
                      char *buf, size_t len)
{
    size_t used = 0, shown = 0, total = 0;
    buf[0] = '\0';
    for (size_t j = 0; j < s->n; j++) {
        if (!mark[j])
            continue;
        total++;
        if (shown < 6 && used + 1 < len) {
            int w = snprintf(buf + used, len - used, "%s%s",
                             shown ? ", " : "", s->model->jobs[j].id);
            if (w > 0)
                used += (size_t)w < len - used ? (size_t)w : len - used - 1;
            shown++;
        }
    }
    if (total > shown && used + 1 < len)
        snprintf(buf + used, len - used, " and %zu more", total - shown);
}

/* Scenarios (weighted) in which the required jobs that have a single
 * allowed resource overload it by themselves; such a scenario fails in
 * every plan. For the joint constraint also the scenarios in which all
 * required jobs together exceed the summed capacity of every resource any
 * of them may use. Proves infeasibility when the count exceeds k. */
static int required_check(surety_solver *s, char *reason, size_t rlen)
{
    size_t n = s->n, m = s->m, N = s->N;
    unsigned char *mark = surety_xcalloc(n, 1);
    unsigned char *usable = surety_xcalloc(m, 1);
    double *sum = surety_xcalloc(m, sizeof *sum);
    int found = 0;
    if (!mark || !usable || !sum)
        goto done;
    for (size_t j = 0; j < n; j++) {
        if (!s->required[j])
            continue;
        for (size_t i = 0; i < m; i++)
            usable[i] |= s->allowed[j * m + i];
    }
    double capsum = 0;
    for (size_t i = 0; i < m; i++)
        if (usable[i])
            capsum += s->cap_hi[i];
    capsum *= 1 + SURETY_SOLVE_LOAD_TOL;

    size_t *failg = surety_xcalloc(s->G, sizeof *failg);
    if (!failg)
        goto done;
    for (size_t l = 0; l < N; l++) {
        const double *row = s->w + l * n;
        double all = 0;
        memset(sum, 0, m * sizeof *sum);
        for (size_t j = 0; j < n; j++) {
            if (!s->required[j])
                continue;
            all += row[j];
            size_t only = m, c = 0;
            for (size_t i = 0; i < m; i++)
                if (s->allowed[j * m + i]) {
                    only = i;
                    c++;
                }
            if (c == 1)
                sum[only] += row[j];
        }
        int failed_joint = 0;
        for (size_t i = 0; i < m; i++) {
            if (sum[i] > s->cap_hi[i]) {
                if (s->separate)
                    failg[i] += s->cnt[l];
                else
                    failed_joint = 1;
            }
        }
        if (!s->separate && (failed_joint || all > capsum))
            failg[0] += s->cnt[l];
    }
    for (size_t g = 0; g < s->G && !found; g++) {
        if (failg[g] <= s->k)
            continue;
        for (size_t j = 0; j < n; j++)
            mark[j] = s->required[j];
        char names[512];
        name_list(s, mark, names, sizeof names);
        if (s->separate)
            snprintf(reason, rlen,
                     "required jobs %s overload resource %s in %zu of %zu "
                     "scenarios; at most %zu may fail",
                     names, s->model->resources[g].id, failg[g], s->N0, s->k);
        else
            snprintf(reason, rlen,
                     "required jobs %s overload the resources allowed to "
                     "them in %zu of %zu scenarios; at most %zu may fail",
                     names, failg[g], s->N0, s->k);
        found = 1;
    }
    surety_xfree(failg);
done:
    surety_xfree(mark);
    surety_xfree(usable);
    surety_xfree(sum);
    return found;
}

/* Scenarios that every feasible plan fits, set aside before the search.
 *
 * (a) A scenario in which every resource holds all the jobs that may enter
 *     it fits every plan.
 * (b) Scenario a dominates b (a > b) when a's hours are at least b's for
 *     every job the search may place (ties between rows equal on those
 *     jobs broken by index, which keeps > a strict order). A scenario
 *     dominated by scenarios of total weight at least k+1 fits every
 *     feasible plan: the plan fails at most k of them, fits one, and b's
 *     loads are no larger (sums of smaller terms in the same order, also
 *     after rounding). Among b's dominators that are set aside, one that
 *     no other set-aside dominator of b dominates has k+1 weight of
 *     dominators of its own, all kept and all dominating b; so the kept
 *     scenarios still force b to fit.
 * The search then works on the kept scenarios with the same allowance k:
 * a plan failing at most k of them fits the others. Dropping scenarios
 * while keeping k can only enlarge the set of plans the search accepts,
 * so its bounds stay valid even if a test above were loose, and every
 * plan is still re-counted on all scenarios before it is accepted
 * (solve.c). Dominance in a sample is frequent where hours move together
 * (a common shock) or jobs are few, and rare otherwise; the pair tests
 * are screened by a 64-bit signature (hours above the job's mean) and
 * capped in number, beyond which scenarios are simply kept.
 * (Scenario dominance, s' failing whenever s fails: Ruszczynski 2002,
 * METHODS.md s.6; the k+1 rule follows from it as argued above.) */
typedef struct tot_key {
    double t;
    size_t l;
} tot_key;

static int cmp_tot_desc(const void *a, const void *b)
{
    const tot_key *x = a, *y = b;
    if (x->t != y->t)
        return x->t > y->t ? -1 : 1;
    return (x->l > y->l) - (x->l < y->l);
}

/* a > b on the jobs of rel (see above) */
static int dominates(const surety_solver *s, const size_t *rel, size_t nr,
                     size_t a, size_t b)
{
    const double *ra = s->w + a * s->n, *rb = s->w + b * s->n;
    int strict = 0;
    for (size_t t = 0; t < nr; t++) {
        double x = ra[rel[t]], y = rb[rel[t]];
        if (x < y)
            return 0;
        strict |= x > y;
    }
    return strict || a < b;
}

static int set_aside_fitted(surety_solver *s)
{
    size_t n = s->n, m = s->m, N = s->N, k = s->k;
    s->W = 0;
    for (size_t l = 0; l < N; l++)
        s->W += s->cnt[l];
    if (s->opt->keep_dominated || N < 2)
        return 0;
    size_t *rel = surety_xmalloc(n ? n : 1, sizeof *rel);
    unsigned char *aside = surety_xcalloc(N, 1);
    tot_key *ord = surety_xmalloc(N, sizeof *ord);
    uint64_t *sig = surety_xcalloc(N, sizeof *sig);
    double *mean = surety_xcalloc(n ? n : 1, sizeof *mean);
    double *sum = surety_xmalloc(m, sizeof *sum);
    size_t *pw = surety_xmalloc(N + 1, sizeof *pw);
    int rc = -1;
    if (!rel || !aside || !ord || !sig || !mean || !sum || !pw)
        goto done;
    size_t nr = 0;
    for (size_t j = 0; j < n; j++)
        if (s->required[j] || s->cand[j])
            rel[nr++] = j;
    rc = 0;
    if (nr == 0)
        goto done;

    /* (a), unless it would leave no more than k weight to the search */
    size_t wa = 0;
    for (size_t l = 0; l < N; l++) {
        const double *row = s->w + l * n;
        memset(sum, 0, m * sizeof *sum);
        for (size_t t = 0; t < nr; t++)
            for (size_t i = 0; i < m; i++)
                if (s->allowed[rel[t] * m + i])
                    sum[i] += row[rel[t]];
        /* the recount's own test (plan.h): a plan's sum over its jobs in
         * job order is at most this one (fewer terms, none negative: hours
         * never are; same order, monotone rounding) */
        int fits = 1;
        for (size_t i = 0; i < m && fits; i++)
            fits = surety_plan_holds(s->model->resources[i].hours_factor,
                                     sum[i], s->model->resources[i].capacity);
        if (fits) {
            aside[l] = 1;
            wa += s->cnt[l];
        }
    }
    if (s->W - wa <= k) {
        memset(aside, 0, N);
        wa = 0;
    }

    /* (b): candidates for b's dominators are the scenarios with a total
     * at least b's (a sum of larger terms), taken largest first */
    size_t ns = nr < 64 ? nr : 64; /* jobs in the signature */
    for (size_t l = 0; l < N; l++) {
        const double *row = s->w + l * n;
        double t = 0;
        for (size_t u = 0; u < nr; u++)
            t += row[rel[u]];
        for (size_t u = 0; u < ns; u++)
            mean[u] += row[rel[u]];
        ord[l].t = t;
        ord[l].l = l;
    }
    for (size_t u = 0; u < ns; u++)
        mean[u] /= (double)N;
    for (size_t l = 0; l < N; l++)
        for (size_t u = 0; u < ns; u++)
            if (s->w[l * n + rel[u]] > mean[u])
                sig[l] |= (uint64_t)1 << u;
    qsort(ord, N, sizeof *ord, cmp_tot_desc);
    /* pw[p]: weight of the scenarios ahead of position p */
    pw[0] = 0;
    for (size_t p = 0; p < N; p++)
        pw[p + 1] = pw[p] + s->cnt[ord[p].l];
    /* the lightest scenarios first (the likeliest to be dominated); the
     * scan ends after 128 in a row are kept (heavier ones are rarely
     * dominated where lighter ones are not: without any dominance, as with
     * independent hours, this costs 128 N signature tests), or after about
     * 2e8 signature tests and 2e7 row tests (a few tenths of a second) */
    double sig_left = 2e8, row_left = 2e7 / (double)nr;
    size_t end = N; /* one past the last position with b's total */
    size_t misses = 0;
    for (size_t p = N; p-- > 0 && sig_left > 0 && row_left > 0 && misses < 128;) {
        size_t b = ord[p].l;
        if (p + 1 < N && ord[p + 1].t != ord[p].t)
            end = p + 1;
        if (aside[b] || pw[end] - s->cnt[b] <= k)
            continue;
        size_t dw = 0;
        uint64_t sb = sig[b];
        for (size_t q = 0; q < end && dw <= k; q++) {
            size_t a = ord[q].l;
            if (q == p || (sb & ~sig[a]) != 0)
                continue;
            if (dominates(s, rel, nr, a, b))
                dw += s->cnt[a];
            row_left--;
        }
        sig_left -= (double)end;
        if (dw > k) {
            aside[b] = 2;
            wa += s->cnt[b];
            misses = 0;
        } else {
            misses++;
        }
    }
    size_t c = 0;
    for (size_t l = 0; l < N; l++) {
        if (aside[l]) {
            pw[l] = SIZE_MAX; /* reused: the row's new place */
            continue;
        }
        pw[l] = c;
        if (c != l) {
            memmove(s->w + c * n, s->w + l * n, n * sizeof *s->w);
            s->cnt[c] = s->cnt[l];
            /* a scenario set aside fits every feasible plan: it never
             * costs anything */
            if (s->mu)
                s->mu[c] = s->mu[l];
        }
        c++;
    }
    for (size_t l = 0; l < s->N0; l++)
        s->row_of[l] = pw[s->row_of[l]];
    s->N = c;
    s->N_aside = N - c;
    s->W -= wa;
done:
    surety_xfree(rel);
    surety_xfree(aside);
    surety_xfree(ord);
    surety_xfree(sig);
    surety_xfree(mean);
    surety_xfree(sum);
    surety_xfree(pw);
    return rc;
}

surety_code surety_presolve_run(surety_solver *s, char *reason,
                                size_t reason_len, int *infeasible,
                                surety_error *err)
{
    const surety_model *model = s->model;
    const surety_scenarios *sc = s->sc;
    size_t n = model->n, m = model->m;
    *infeasible = 0;
    reason[0] = '\0';
    s->n = n;
    s->m = m;
    s->N0 = sc->N;
    s->k = surety_allowance(model->risk, sc->N);
    s->separate = model->constraint == SURETY_SEPARATE;
    s->G = s->separate ? m : 1;

    s->p = surety_xcalloc(n, sizeof *s->p);
    s->cap = surety_xmalloc(m, sizeof *s->cap);
    s->cap_hi = surety_xmalloc(m, sizeof *s->cap_hi);
    s->allowed = surety_xcalloc(n * m, 1);
    s->required = surety_xcalloc(n, 1);
    s->cand = surety_xcalloc(n, 1);
    s->order = surety_xmalloc(n, sizeof *s->order);
    s->rclass = surety_xmalloc(m, sizeof *s->rclass);
    if (!s->p || !s->cap || !s->cap_hi || !s->allowed || !s->required ||
        !s->cand || !s->order || !s->rclass || merge_scenarios(s) != 0)
        goto oom;
    if (s->mu && (!(s->cq = surety_xmalloc(s->N, sizeof *s->cq)) ||
                  !(s->cq2 = surety_xmalloc(s->N, sizeof *s->cq2)) ||
                  !(s->cqv = surety_xmalloc(s->N, sizeof *s->cqv)) ||
                  !(s->cqw = surety_xmalloc(s->N, sizeof *s->cqw))))
        goto oom;

    /* the job's value: its mean profit, summed as plan.c does */
    for (size_t j = 0; j < n; j++) {
        double t = 0;
        for (size_t l = 0; l < s->N0; l++)
            t += sc->profit[l * n + j];
        s->p[j] = t / (double)s->N0;
        s->pscale += fabs(s->p[j]);
    }
    for (size_t i = 0; i < m; i++) {
        s->cap[i] = model->resources[i].capacity /
                    model->resources[i].hours_factor;
        s->cap_hi[i] = s->cap[i] * (1 + SURETY_SOLVE_LOAD_TOL);
    }

    /* (job, resource) pairs that overload the resource on their own in
     * more than k scenarios can never be used (METHODS.md s.7 rule 2 at
     * the root). Only clear overloads count, so the pruning is safe. */
    for (size_t j = 0; j < n; j++) {
        s->required[j] = model->jobs[j].required != 0;
        int any_model = 0;
        size_t least = s->N0;
        for (size_t i = 0; i < m; i++) {
            if (!model->jobs[j].allowed[i])
                continue;
            any_model = 1;
            size_t over = 0;
            for (size_t l = 0; l < s->N; l++)
                if (s->w[l * n + j] > s->cap_hi[i])
                    over += s->cnt[l];
            if (over <= s->k)
                s->allowed[j * m + i] = 1;
            if (over < least)
                least = over;
        }
        int any = 0;
        for (size_t i = 0; i < m; i++)
            any |= s->allowed[j * m + i];
        if (s->required[j] && !any && !*infeasible) {
            *infeasible = 1;
            if (!any_model)
                snprintf(reason, reason_len,
                         "required job %s is allowed in no resource",
                         model->jobs[j].id);
            else
                snprintf(reason, reason_len,
                         "required job %s alone overloads every allowed "
                         "resource in at least %zu of %zu scenarios; at most "
                         "%zu may fail",
                         model->jobs[j].id, least, s->N0, s->k);
        }
        s->cand[j] = !s->required[j] && any && s->p[j] > 0;
    }
    if (!*infeasible && required_check(s, reason, reason_len))
        *infeasible = 1;
    if (set_aside_fitted(s) != 0)
        goto oom;

    s->wt = surety_xmalloc(n * s->N, sizeof *s->wt);
    if (!s->wt)
        goto oom;
    for (size_t l = 0; l < s->N; l++)
        for (size_t j = 0; j < n; j++)
            s->wt[j * s->N + l] = s->w[l * n + j];

    /* branching order: every job that is not fixed out */
    s->nb = 0;
    s->ncand = 0;
    for (size_t j = 0; j < n; j++) {
        if (s->required[j] || s->cand[j])
            s->order[s->nb++] = j;
        s->ncand += s->cand[j];
    }
    s->bkey = surety_xmalloc(n, sizeof *s->bkey);
    if (!s->bkey)
        goto oom;
    /* largest profit first: those decisions move the bound most */
    for (size_t j = 0; j < n; j++)
        s->bkey[j] = s->p[j];
    qsort_r(s->order, s->nb, sizeof *s->order, cmp_branch, s);

    /* per scenario, candidates by efficiency p_j / w_lj, sorted once here
     * so that each node's fractional knapsacks are linear scans */
    s->eff = surety_xmalloc(s->N * (s->ncand ? s->ncand : 1), sizeof *s->eff);
    double *key = surety_xmalloc(s->ncand ? s->ncand : 1, sizeof *key);
    if (!s->eff || !key) {
        surety_xfree(key);
        goto oom;
    }
    for (size_t l = 0; l < s->N; l++) {
        uint32_t *e = s->eff + l * s->ncand;
        size_t c = 0;
        for (size_t j = 0; j < n; j++)
            if (s->cand[j])
                e[c++] = (uint32_t)j;
        eff_ctx ctx = {s->p, s->w + l * n};
        sort_eff(e, c, &ctx, key);
    }
    surety_xfree(key);
    /* and each candidate's position there, so that a node's knapsack
     * walks only the jobs that still fit, as bits of one word */
    if (s->ncand <= 64) {
        s->erank = surety_xcalloc(s->N * (n ? n : 1), 1);
        if (!s->erank)
            goto oom;
        for (size_t l = 0; l < s->N; l++)
            for (size_t t = 0; t < s->ncand; t++)
                s->erank[l * n + s->eff[l * s->ncand + t]] =
                    (unsigned char)t;
    }
    /* per scenario, the jobs to decide by hours ascending: a node finds
     * the lightest open job of a scenario in a few steps, not O(n). One
     * resource needs none (bound.c, knap_joint) */
    if (m > 1) {
        s->light = surety_xmalloc(s->N * (s->nb ? s->nb : 1),
                                  sizeof *s->light);
        if (!s->light)
            goto oom;
        for (size_t l = 0; l < s->N; l++) {
            uint32_t *e = s->light + l * s->nb;
            for (size_t t = 0; t < s->nb; t++)
                e[t] = (uint32_t)s->order[t];
            qsort_r(e, s->nb, sizeof *e, cmp_light, (void *)(s->w + l * n));
        }
    }

    /* identical resources (same capacity, factor and allowed jobs) are
     * interchangeable: the search opens only the first empty one */
    for (size_t i = 0; i < m; i++) {
        s->rclass[i] = (int)i;
        for (size_t h = 0; h < i; h++) {
            if (s->rclass[h] != (int)h)
                continue;
            if (model->resources[h].capacity != model->resources[i].capacity ||
                model->resources[h].hours_factor !=
                    model->resources[i].hours_factor)
                continue;
            int same = 1;
            for (size_t j = 0; j < n && same; j++)
                same = s->allowed[j * m + h] == s->allowed[j * m + i];
            if (same) {
                s->rclass[i] = (int)h;
                break;
            }
        }
    }
    return SURETY_OK;
oom:
    surety_error_set(err, NULL, 0, 0, NULL,
                     "out of memory while preparing the solver (%zu jobs, "
                     "%zu resources, %zu scenarios)", n, m, sc->N);
    return SURETY_EINTERNAL;
}

void surety_presolve_free(surety_solver *s)
{
    surety_xfree(s->w);
    surety_xfree(s->wt);
    surety_xfree(s->cnt);
    surety_xfree(s->row_of);
    surety_xfree(s->mu);
    surety_xfree(s->cq);
    surety_xfree(s->cq2);
    surety_xfree(s->cqv);
    surety_xfree(s->cqw);
    surety_xfree(s->cap);
    surety_xfree(s->cap_hi);
    surety_xfree(s->p);
    surety_xfree(s->allowed);
    surety_xfree(s->required);
    surety_xfree(s->cand);
    surety_xfree(s->order);
    surety_xfree(s->bkey);
    surety_xfree(s->eff);
    surety_xfree(s->erank);
    surety_xfree(s->light);
    surety_xfree(s->rclass);
}
