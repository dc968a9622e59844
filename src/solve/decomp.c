/* decomp.c - the resource-decomposition bound at the root.
 *
 * The rows "each job in at most one resource" (exactly one for a required
 * job) are priced out with prices lam_j, as the assignment rows of the
 * generalized assignment problem are (Fisher, Jaikumar & Van Wassenhove
 * 1986), and the chance constraint is relaxed to one per resource: a plan
 * that fails at most k scenarios jointly fails at most k on each resource
 * (for separate constraints that is the constraint itself). What is left
 * splits into m one-resource problems
 *     V_i(lam) = max sum_j (p_j - lam_j) x_j over the job sets x that
 *                resource i holds in all but at most k scenarios,
 * and for any prices (lam_j >= 0 for an optional job, any sign for a
 * required one)
 *     optimum <= sum_j lam_j + sum_i V_i(lam).
 * bound.c's per-resource bound relaxes the same rows but bounds V_i
 * scenario by scenario (a knapsack per scenario, then the quantile), so
 * each scenario may pick its own jobs. Here V_i is solved as what it is, a
 * chance-constrained knapsack, by this same solver on a one-resource model
 * (its upper bound is valid at any stop): one job set must fit N-k
 * scenarios. That is the margin for variation which the quantile and LP
 * bounds leave out, and why they stay far above the best plans when many
 * jobs share a resource (bench/README.md, "Findings").
 *
 * Prices by subgradient steps from bound.c's prices (Polyak's step toward
 * the incumbent, halved when the bound stalls: Held, Wolfe & Crowder
 * 1974). The pairs used are those still possible at the root (row 0 of
 * pxs: a pair ruled out there is in no plan that beats the incumbent), so
 * the bound holds for every plan that beats the cutoff, which is all the
 * search needs.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "solve/solve.h"

/* One resource's problem: a model of its own over the jobs that may enter
 * it, on the scenarios as given (the sub-solve merges and sets aside on
 * its own), which are copied into a buffer the resources share. */
typedef struct dec_sub {
    size_t nj;
    size_t *job;           /* nj: the job of the full model */
    surety_job *jobs;      /* nj; ids borrowed from the full model */
    unsigned char one;     /* the one allowed flag every job points to */
    surety_resource res;
    surety_model model;
    surety_plan start;     /* the previous plan, a hint for the next */
    int have_start;
} dec_sub;

static void sub_free(dec_sub *d)
{
    surety_xfree(d->job);
    surety_xfree(d->jobs);
    surety_xfree(d->start.resource);
}

/* Jobs of resource i: the open jobs whose pair with i is possible at the
 * root (where no job is placed yet: the tree places jobs only below it). */
static int sub_init(const surety_solver *s, size_t i, dec_sub *d)
{
    size_t n = s->n, m = s->m;
    const unsigned char *px = s->pxs; /* row 0: the root's */
    memset(d, 0, sizeof *d);
    d->job = surety_xmalloc(n, sizeof *d->job);
    if (!d->job)
        return -1;
    for (size_t j = 0; j < n; j++)
        if (s->state[j] == SURETY_JOB_FREE && px[j * m + i])
            d->job[d->nj++] = j;
    size_t nj = d->nj ? d->nj : 1;
    d->jobs = surety_xcalloc(nj, sizeof *d->jobs);
    d->start.resource = surety_xmalloc(nj, sizeof *d->start.resource);
    if (!d->jobs || !d->start.resource)
        return -1;
    const surety_model *full = s->model;
    d->one = 1;
    d->res = full->resources[i];
    for (size_t t = 0; t < d->nj; t++) {
        size_t j = d->job[t];
        d->jobs[t].id = full->jobs[j].id;
        d->jobs[t].hours = full->jobs[j].hours;
        d->jobs[t].has_hours = full->jobs[j].has_hours;
        d->jobs[t].profit = full->jobs[j].profit;
        d->jobs[t].allowed = &d->one;
        d->jobs[t].required = 0; /* "exactly once" is priced, not kept */
        d->start.resource[t] = -1;
    }
    d->model.name = full->name;
    d->model.path = full->path;
    d->model.risk = full->risk;
    d->model.N = s->N0;
    d->model.seed = full->seed;
    d->model.constraint = SURETY_JOINT;
    d->model.n = d->nj;
    d->model.m = 1;
    d->model.jobs = d->jobs;
    d->model.resources = &d->res;
    d->start.n = d->nj;
    return 0;
}

/* V_i at the prices: an upper bound, valid at any stop of the sub-solve
 * (INFINITY on an error or when the deadline has passed; the empty set
 * always fits, so V_i >= 0); x_j of the sub's plan added into xs. The scenarios go
 * into sc: the hours as given, and as profit the reduced
 * profit in every scenario, so the sub's mean profit is the reduced profit
 * (to rounding, which the caller's slack covers). */
static double sub_solve(const surety_solver *s, dec_sub *d,
                        surety_scenarios *sc, const double *lam,
                        double deadline, double *xs, long *nodes)
{
    if (d->nj == 0)
        return 0;
    size_t N0 = s->N0, n = s->n, nj = d->nj;
    sc->N = N0;
    sc->n = nj;
    for (size_t t = 0; t < nj; t++) {
        size_t j = d->job[t];
        double v = s->p[j] - lam[j];
        for (size_t l = 0; l < N0; l++) {
            sc->hours[l * nj + t] = s->sc->hours[l * n + j];
            sc->profit[l * nj + t] = v;
        }
    }
    surety_solve_options o;
    surety_solve_options_init(&o);
    o.interrupt = s->opt->interrupt;
    o.node_limit = 200000;
    if (deadline < INFINITY) {
        double left = deadline - surety_solve_now();
        if (left <= 0.01)
            return INFINITY;
        o.time_limit_s = left;
    }
    if (d->have_start)
        o.start = &d->start;
    surety_result *r = NULL;
    if (surety_solve(&d->model, sc, &o, &r, NULL) != SURETY_OK)
        return INFINITY;
    double b = surety_result_bound(r);
    *nodes += surety_result_nodes(r);
    const surety_plan *pl = surety_result_plan(r);
    if (pl) {
        for (size_t t = 0; t < nj; t++) {
            d->start.resource[t] = pl->resource[t];
            if (pl->resource[t] >= 0)
                xs[d->job[t]] += 1;
        }
        d->have_start = 1;
    }
    surety_result_free(r);
    return b;
}

struct solve_dec {
    dec_sub *sub;  /* m */
    double *lam;   /* n prices */
    double *xs;    /* n: scratch, then the subgradient */
    surety_scenarios sc; /* the sub-solves' scenarios, room for N0 x the
                          * most jobs of a resource */
    double theta;
    int stall;
};

void surety_decomp_free(surety_solver *s)
{
    solve_dec *d = s->dec;
    if (!d)
        return;
    if (d->sub)
        for (size_t i = 0; i < s->m; i++)
            sub_free(&d->sub[i]);
    surety_xfree(d->sub);
    surety_xfree(d->lam);
    surety_xfree(d->xs);
    surety_xfree(d->sc.hours);
    surety_xfree(d->sc.profit);
    surety_xfree(d);
    s->dec = NULL;
}

static int dec_init(surety_solver *s)
{
    size_t n = s->n, m = s->m;
    solve_dec *d = surety_xcalloc(1, sizeof *d);
    if (!d)
        return -1;
    s->dec = d;
    d->sub = surety_xcalloc(m, sizeof *d->sub);
    d->lam = surety_xmalloc(n, sizeof *d->lam);
    d->xs = surety_xmalloc(n, sizeof *d->xs);
    if (!s->dec_lam)
        s->dec_lam = surety_xcalloc(n, sizeof *s->dec_lam);
    if (!d->sub || !d->lam || !d->xs || !s->dec_lam)
        return -1;
    size_t most = 1;
    for (size_t i = 0; i < m; i++) {
        if (sub_init(s, i, &d->sub[i]) != 0)
            return -1;
        if (d->sub[i].nj > most)
            most = d->sub[i].nj;
    }
    d->sc.hours = surety_xmalloc(s->N0 * most, sizeof *d->sc.hours);
    d->sc.profit = surety_xmalloc(s->N0 * most, sizeof *d->sc.profit);
    if (!d->sc.hours || !d->sc.profit)
        return -1;
    /* prices start at bound.c's; a required job's may take any sign */
    for (size_t j = 0; j < n; j++)
        d->lam[j] = s->state[j] == SURETY_JOB_FREE ? s->lam[j] : 0;
    d->theta = 1;
    return 0;
}

int surety_decomp_round(surety_solver *s, double deadline)
{
    size_t n = s->n, m = s->m;
    if (m < 2)
        return 1; /* nothing to split */
    if (!s->dec && dec_init(s) != 0) {
        surety_decomp_free(s);
        return -1;
    }
    solve_dec *d = s->dec;
    double *lam = d->lam, *xs = d->xs;
    double slack = 1e-9 * (s->pscale + 1);
    double L = 0;
    memset(xs, 0, n * sizeof *xs);
    for (size_t j = 0; j < n; j++)
        if (s->state[j] == SURETY_JOB_FREE)
            L += lam[j];
    for (size_t i = 0; i < m && L < INFINITY; i++)
        L += sub_solve(s, &d->sub[i], &d->sc, lam, deadline, xs,
                       &s->dec_nodes);
    if (!(L < INFINITY))
        return 1; /* a limit stopped a sub-solve: this round is not known */
    L += slack;
    s->dec_iters++;
    if (L < s->dec_root - slack) {
        s->dec_root = L;
        memcpy(s->dec_lam, lam, n * sizeof *lam);
        d->stall = 0;
    } else if (++d->stall >= 3) {
        d->theta /= 2;
        d->stall = 0;
    }
    if (!(s->dec_root > surety_cutoff(s)) || d->theta < 1.0 / 64)
        return 1;
    double norm = 0;
    for (size_t j = 0; j < n; j++) {
        if (s->state[j] != SURETY_JOB_FREE)
            continue;
        double g = 1 - xs[j];
        xs[j] = g;
        norm += g * g;
    }
    if (norm <= 0)
        return 1; /* a zero subgradient (exact when every sub-solve
                   * finished): no prices do better */
    double target = s->have_inc ? s->inc : L - 0.05 * fabs(L) - 1;
    double step = d->theta * (L - target) / norm;
    for (size_t j = 0; j < n; j++) {
        if (s->state[j] != SURETY_JOB_FREE)
            continue;
        double v = lam[j] - step * xs[j];
        if (!s->required[j]) {
            double hi = s->p[j] > 0 ? s->p[j] : 0;
            v = v < 0 ? 0 : v > hi ? hi : v;
        }
        lam[j] = v;
    }
    return 0;
}
