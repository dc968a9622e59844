/* lns.c - the incumbent improved by solving a part of it exactly.
 *
 * A large neighbourhood search (Shaw 1998, cited from memory): a few
 * resources R are chosen, and some of the jobs the incumbent places in
 * them and some of the jobs it leaves out are freed; the rest of the plan
 * is kept, and this same solver searches the freed jobs' placements, with
 * the incumbent's as its starting plan. The part is a model of its own:
 *   - the resources R;
 *   - the freed jobs, each allowed in R where the whole model allows it;
 *   - the jobs kept in R, required and allowed only where they are (their
 *     hours stay in R);
 *   - under the joint constraint, the scenarios that no resource outside
 *     R overloads, with allowance k - |F0|, F0 the scenarios that the
 *     kept resources outside R overload: a plan of the part completes the
 *     kept plan within the allowance if and only if it fails at most
 *     k - |F0| of those scenarios (the failures inside F0 cost nothing
 *     more). Under separate constraints each resource keeps its own k on
 *     every scenario.
 * The local search of heur.c moves one or two jobs at a time; a part's
 * search exchanges job sets among several resources and the jobs left
 * out at once: on the 40-job, 1000-scenario instance the local search's
 * later improvements moved eight jobs among three resources
 * (bench/README.md, "Findings", "Parts of the best plan searched
 * again").
 *
 * Every plan found here goes through surety_solve_offer, which re-counts
 * it on the scenarios as given: a part's plan never enters unchecked (and
 * the invariant build requires that a better part's plan passes). The
 * parts take a share of the tree's work, counted in scenario knapsacks as
 * the decomposition's (tree.c, lns_round), and the choices come from a
 * seeded sequence, so runs stay repeatable.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "solve/solve.h"

/* A part's search stops after this many nodes. At most SURETY_LNS_JOBS
 * jobs are freed (a search of 16 jobs mostly closes within the node
 * limit at N=1000); parts span two or three resources, in turn. */
#define SURETY_LNS_NODES 20000
#define SURETY_LNS_JOBS 16

struct solve_lns {
    uint64_t seed;         /* the random choices of resources and jobs */
    unsigned long step;    /* parts so far */
    size_t *res;           /* m: the part's resources, then the others */
    long *at;              /* m: a resource's place in the part, or -1 */
    size_t *job;           /* n: the jobs of the current part */
    unsigned char *pin;    /* n: the part's job stays where it is */
    surety_job *jobs;      /* n */
    unsigned char *allow;  /* n*m: their allowed flags in the part */
    surety_resource *pres; /* m: the part's resources */
    surety_model model;
    surety_scenarios sc;   /* room for N0 scenarios of cap jobs */
    size_t cap;            /* jobs sc has room for (grown as parts need) */
    long *start;           /* n: the incumbent's placements in the part */
    long *plan;            /* n: a whole plan */
    double *load;          /* N0: scratch */
    unsigned char *fail;   /* N0: overloaded by a resource outside */
};

void surety_lns_free(surety_solver *s)
{
    solve_lns *L = s->lns;
    if (!L)
        return;
    surety_xfree(L->res);
    surety_xfree(L->at);
    surety_xfree(L->job);
    surety_xfree(L->pin);
    surety_xfree(L->jobs);
    surety_xfree(L->allow);
    surety_xfree(L->pres);
    surety_xfree(L->sc.hours);
    surety_xfree(L->sc.profit);
    surety_xfree(L->start);
    surety_xfree(L->plan);
    surety_xfree(L->load);
    surety_xfree(L->fail);
    surety_xfree(L);
    s->lns = NULL;
}

static int lns_init(surety_solver *s)
{
    size_t n = s->n, m = s->m, N0 = s->N0;
    solve_lns *L = surety_xcalloc(1, sizeof *L);
    if (!L)
        return -1;
    s->lns = L;
    L->seed = 0x9a27ULL ^ (uint64_t)n * 0x9e3779b97f4a7c15ULL ^ (uint64_t)N0;
    L->res = surety_xmalloc(m, sizeof *L->res);
    L->at = surety_xmalloc(m, sizeof *L->at);
    L->job = surety_xmalloc(n, sizeof *L->job);
    L->pin = surety_xmalloc(n, 1);
    L->jobs = surety_xcalloc(n, sizeof *L->jobs);
    L->allow = surety_xcalloc(n * m, 1);
    L->pres = surety_xcalloc(m, sizeof *L->pres);
    L->start = surety_xmalloc(n, sizeof *L->start);
    L->plan = surety_xmalloc(n, sizeof *L->plan);
    L->load = surety_xmalloc(N0, sizeof *L->load);
    L->fail = surety_xmalloc(N0, 1);
    if (!L->res || !L->at || !L->job || !L->pin || !L->jobs || !L->allow ||
        !L->pres || !L->start || !L->plan || !L->load || !L->fail)
        return -1;
    for (size_t i = 0; i < m; i++)
        L->res[i] = i;
    return 0;
}

/* Moves a random entry of v[t..c-1] to v[t], for t = 0 .. want-1 (a
 * partial Fisher-Yates shuffle). */
static void pick(size_t *v, size_t c, size_t want, uint64_t *seed)
{
    for (size_t t = 0; t < want && t < c; t++) {
        size_t u = t + (size_t)(surety_rng_splitmix64(seed) % (c - t));
        size_t x = v[t];
        v[t] = v[u];
        v[u] = x;
    }
}

/* Marks in L->fail the scenarios (as given) that a resource outside the
 * part overloads in the incumbent, loads summed in ascending job order as
 * the recount sums them; returns their number. */
static size_t outside_failures(surety_solver *s)
{
    solve_lns *L = s->lns;
    size_t n = s->n, m = s->m, N0 = s->N0;
    const double *h = s->sc->hours;
    memset(L->fail, 0, N0);
    for (size_t i = 0; i < m; i++) {
        if (L->at[i] >= 0)
            continue;
        memset(L->load, 0, N0 * sizeof *L->load);
        for (size_t j = 0; j < n; j++)
            if (s->inc_plan[j] == (long)i)
                for (size_t l = 0; l < N0; l++)
                    L->load[l] += h[l * n + j];
        const surety_resource *r = &s->model->resources[i];
        for (size_t l = 0; l < N0; l++)
            if (!surety_plan_holds(r->hours_factor, L->load[l], r->capacity))
                L->fail[l] = 1;
    }
    size_t f = 0;
    for (size_t l = 0; l < N0; l++)
        f += L->fail[l];
    return f;
}

static int by_key(const void *x, const void *y, void *ctx)
{
    const double *key = ctx;
    double a = key[*(const size_t *)x], b = key[*(const size_t *)y];
    return (a < b) - (a > b);
}

/* May job j go to resource i in a part? Allowed after presolve, and
 * possible at the root (a pair the root rules out is in no plan that
 * beats the cutoff, the incumbent plus the gap tolerance), or where the
 * incumbent has it. */
static int may(const surety_solver *s, size_t j, size_t i)
{
    size_t m = s->m;
    return s->allowed[j * m + i] &&
           (s->pxs[j * m + i] || s->inc_plan[j] == (long)i);
}

/* The part's jobs: those the incumbent places in R (the first ones
 * chosen at random are freed, the others pinned where they are), then
 * freed left-out candidates that may enter a resource of R, chosen at
 * random among the best by the greedy's key (twice as many as taken).
 * Half of these jobs are freed, at most SURETY_LNS_JOBS, a third of them
 * left-out ones when there are so many. Returns the part's job count;
 * the jobs are in ascending order. */
static size_t part_jobs(surety_solver *s, size_t r)
{
    solve_lns *L = s->lns;
    size_t n = s->n, np = 0, c;
    for (size_t j = 0; j < n; j++) {
        long i = s->inc_plan[j];
        if (s->state[j] == SURETY_JOB_FREE && i >= 0 && L->at[i] >= 0)
            L->job[np++] = j;
    }
    c = np;
    for (size_t j = 0; j < n; j++) {
        if (s->state[j] != SURETY_JOB_FREE || s->inc_plan[j] >= 0 ||
            !s->cand[j])
            continue;
        int any = 0;
        for (size_t u = 0; u < r && !any; u++)
            any = may(s, j, L->res[u]);
        if (any)
            L->job[c++] = j;
    }
    /* free half of them, at least two and at most SURETY_LNS_JOBS */
    size_t no = c - np, nfree = (c + 1) / 2;
    if (nfree < 2)
        nfree = c < 2 ? c : 2;
    if (nfree > SURETY_LNS_JOBS)
        nfree = SURETY_LNS_JOBS;
    size_t want = nfree / 3;
    if (np < nfree && want < nfree - np)
        want = nfree - np;
    if (want > no)
        want = no;
    size_t wp = nfree - want;
    if (wp > np)
        wp = np;
    qsort_r(L->job + np, no, sizeof *L->job, by_key, s->hkey);
    pick(L->job + np, no < 2 * want ? no : 2 * want, want, &L->seed);
    pick(L->job, np, wp, &L->seed);
    c = np + want;
    for (size_t u = 0; u < c; u++)
        L->pin[u] = u < np && u >= wp;
    /* a job the search does not decide that the incumbent places in R (a
     * caller's starting plan may hold one) is pinned there too */
    size_t c0 = c;
    for (size_t j = 0; j < n; j++) {
        long i = s->inc_plan[j];
        if (s->state[j] != SURETY_JOB_FREE && i >= 0 && L->at[i] >= 0) {
            L->pin[c] = 1;
            L->job[c++] = j;
        }
    }
    s->lns_kept += c > c0;
    /* in ascending job order, so that a resource's load in the part is
     * summed as the whole plan's recount sums it */
    for (size_t u = 1; u < c; u++) {
        size_t j = L->job[u], v = u;
        unsigned char f = L->pin[u];
        for (; v > 0 && L->job[v - 1] > j; v--) {
            L->job[v] = L->job[v - 1];
            L->pin[v] = L->pin[v - 1];
        }
        L->job[v] = j;
        L->pin[v] = f;
    }
#ifdef SURETY_CHECK_INVARIANTS
    /* every job the incumbent places in R is in the part: one left out
     * would keep its place while the part searched as if its hours were
     * not there */
    for (size_t j = 0, u = 0; j < n; j++) {
        while (u < c && L->job[u] < j)
            u++;
        long i = s->inc_plan[j];
        if (i >= 0 && L->at[i] >= 0 && (u == c || L->job[u] != j))
            abort();
    }
#endif
    return c;
}

/* Builds the part of the resources L->res[0 .. r-1] and solves it.
 * Returns 1 when it made a better whole plan that was accepted, 0 when
 * not, -1 on an error. */
static int solve_part(surety_solver *s, size_t r, double deadline)
{
    solve_lns *L = s->lns;
    size_t n = s->n, m = s->m, N0 = s->N0;
    const surety_model *full = s->model;
    for (size_t i = 0; i < m; i++)
        L->at[i] = -1;
    for (size_t u = 0; u < r; u++)
        L->at[L->res[u]] = (long)u;
    size_t nf = part_jobs(s, r), freed = 0;
    for (size_t t = 0; t < nf; t++)
        freed += !L->pin[t];
    if (freed == 0)
        return 0;
    size_t f0 = s->separate ? 0 : outside_failures(s);
    if (f0 > s->k)
        return 0; /* cannot happen for a verified incumbent */
    size_t kk = s->k - f0, Np = 0;
    if (nf > L->cap) {
        /* the part's scenarios: room for N0 rows of nf jobs */
        surety_xfree(L->sc.hours);
        surety_xfree(L->sc.profit);
        L->sc.hours = surety_xmalloc(N0 * nf, sizeof *L->sc.hours);
        L->sc.profit = surety_xmalloc(N0 * nf, sizeof *L->sc.profit);
        L->cap = L->sc.hours && L->sc.profit ? nf : 0;
        if (!L->cap)
            return -1;
    }
    for (size_t t = 0; t < nf; t++) {
        size_t j = L->job[t];
        long i = s->inc_plan[j];
        L->jobs[t].id = full->jobs[j].id;
        L->jobs[t].hours = full->jobs[j].hours;
        L->jobs[t].has_hours = full->jobs[j].has_hours;
        L->jobs[t].profit = full->jobs[j].profit;
        L->jobs[t].allowed = L->allow + t * r;
        L->jobs[t].required = L->pin[t] || full->jobs[j].required;
        L->start[t] = i >= 0 ? L->at[i] : -1;
        for (size_t u = 0; u < r; u++)
            L->allow[t * r + u] =
                (unsigned char)(L->pin[t] ? L->start[t] == (long)u
                                          : may(s, j, L->res[u]));
    }
    const double *h = s->sc->hours;
    for (size_t l = 0; l < N0; l++) {
        if (!s->separate && L->fail[l])
            continue;
        for (size_t t = 0; t < nf; t++) {
            L->sc.hours[Np * nf + t] = h[l * n + L->job[t]];
            L->sc.profit[Np * nf + t] = s->p[L->job[t]];
        }
        Np++;
    }
    if (Np == 0 || kk >= Np)
        return 0; /* any plan of the part fits: nothing to search */
    L->sc.N = Np;
    L->sc.n = nf;
    for (size_t u = 0; u < r; u++)
        L->pres[u] = full->resources[L->res[u]];
    L->model.name = full->name;
    L->model.path = full->path;
    /* allowance floor(risk * Np) = kk (model.c's 1e-9 guard is below 0.5) */
    L->model.risk = ((double)kk + 0.5) / (double)Np;
    L->model.N = Np;
    L->model.seed = full->seed;
    L->model.constraint = full->constraint;
    L->model.n = nf;
    L->model.m = r;
    L->model.jobs = L->jobs;
    L->model.resources = L->pres;

    surety_solve_options o;
    surety_solve_options_init(&o);
    o.interrupt = s->opt->interrupt;
    o.node_limit = SURETY_LNS_NODES;
    o.gap = s->opt->gap;
    o.lp_after = -1;
    o.decomp_after = -1;
    o.improve_after = -1;
    if (deadline < INFINITY) {
        double left = deadline - surety_solve_now();
        if (left <= 0.01)
            return 0;
        o.time_limit_s = left;
    }
    surety_plan st = {nf, L->start};
    o.start = &st;
    surety_result *res = NULL;
    if (surety_solve_inner(&L->model, &L->sc, &o, 1, &res, NULL) !=
        SURETY_OK)
        return -1;
    s->lns_knaps += surety_result_knaps(res);
    s->lns_nodes += surety_result_nodes(res);
    s->lns_parts++;
    const surety_plan *pl = surety_result_plan(res);
    int better = 0;
#ifdef SURETY_CHECK_INVARIANTS
    {
        /* the part must take the incumbent's placements as its start: its
         * plan is then worth at least theirs (a part that rejects them
         * would search from the greedy's plan, silently) */
        double sp = 0;
        for (size_t t = 0; t < nf; t++)
            if (L->start[t] >= 0)
                sp += s->p[L->job[t]];
        if (!pl || surety_result_objective(res) <
                       sp - 1e-9 * (s->pscale + 1))
            abort();
    }
#endif
    if (pl) {
        double gain = 0;
        memcpy(L->plan, s->inc_plan, n * sizeof *L->plan);
        for (size_t t = 0; t < nf; t++) {
            size_t j = L->job[t];
            long u = pl->resource[t];
            L->plan[j] = u >= 0 ? (long)L->res[u] : SURETY_JOB_OUT;
            gain += (u >= 0 ? s->p[j] : 0) - (L->start[t] >= 0 ? s->p[j] : 0);
        }
        better = surety_solve_offer(s, L->plan);
#ifdef SURETY_CHECK_INVARIANTS
        /* a part's plan that gains must complete the kept plan */
        if (!better && gain > 1e-9 * (s->pscale + 1)) {
            surety_plan whole = {n, L->plan};
            if (!surety_plan_feasible(full, &whole, s->sc))
                abort();
        }
#else
        (void)gain;
#endif
    }
    surety_result_free(res);
    return better;
}

int surety_lns_step(surety_solver *s, double deadline)
{
    if (s->m < 2 || !s->have_inc || !s->hkey)
        return 0;
    if (!s->lns && lns_init(s) != 0) {
        surety_lns_free(s);
        return -1;
    }
    solve_lns *L = s->lns;
    /* two resources, then three, in turn (all of them when m is 2) */
    size_t r = s->m < 3 ? s->m : 2 + L->step % 2;
    L->step++;
    pick(L->res, s->m, r, &L->seed);
    int got = solve_part(s, r, deadline);
    if (got > 0)
        s->lns_found++;
    return got;
}
