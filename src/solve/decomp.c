/* decomp.c - the resource-decomposition bound at the root, and its probes.
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
 * Scenario prices (joint constraint, the default; decomp_jobs_only turns
 * them off). Relaxed as above, each resource may fail its own k scenarios,
 * and their union may hold m*k where the joint constraint allows k: on
 * 40-job instances that is most of the gap. Give each resource a failure
 * indicator z_il of its own and link it to the scenario's, z_il <= z_l
 * with sum_l z_l <= k, then price the links with mu_il >= 0 (Lagrangian
 * relaxation of linking constraints between copies of a variable:
 * Guignard & Kim 1987, "Lagrangean decomposition", cited from memory).
 * For any feasible plan, with F its failed scenarios and F_i those of
 * resource i (F_i within F, |F| <= k),
 *     sum_i mu_i(F_i) <= sum_{l in F} sum_i mu_il <= T(mu),
 * T(mu) the sum of the k largest summed prices, so
 *     optimum <= sum_j lam_j + T(mu) + sum_i V_i(lam, mu_i),
 * where V_i now also charges each scenario its plan overloads mu_il
 * (surety_solve_options.scenario_cost, the sub-solve's objective). The
 * subgradient of mu_il is z_l - z_il: the k scenarios of largest summed
 * price less resource i's failures in this round's plan. Measured on the
 * 40-job instances: the n=40, m=4, N=1000 gap after 600 s halves, and
 * 40-job, 100-scenario instances close 2 to 3.5 times sooner
 * (bench/README.md, "Findings").
 *
 * The prices start at bound.c's. By default each round's plans refine a
 * cutting-plane model of every V_i and of T, and the next prices minimise
 * that model near the best prices so far (a proximal bundle method,
 * bundle.c; bundle_round): the rounds reach lower bounds than the
 * subgradient steps below, which use only the last round's plans (on the
 * n=40, m=4, N=1000 instance, scenario seeds 1 and 4 in 240 s: 31 486 and
 * 31 616 against 31 625 and 31 774; bench/README.md, "Findings"). Its
 * metric gives the job prices and the scenario prices each half of the
 * first step's predicted decrease (bundle_begin), as the subgradient
 * steps split it.
 * For comparisons (decomp_subgradient), subgradient steps from bound.c's
 * prices (Polyak's step toward
 * the incumbent, halved when the bound stalls: Held, Wolfe & Crowder
 * 1974; with scenario prices, the predicted decrease split evenly between
 * the two blocks of prices), each block's direction deflected by its last
 * one where the two point apart (Camerini, Fratta & Maffioli 1975), which
 * damps the zigzag of plain steps: on the n=40, N=1000 instance the bound
 * after 49 rounds is 31 655 against 31 714 (bench/README.md, "Findings").
 * The pairs used are those still possible at the root (row 0 of pxs: a
 * pair ruled out there is in no plan that beats the incumbent), so the
 * bound holds for every plan that beats the cutoff, which is all the
 * search needs.
 *
 * Each round's plans, one per resource, also make a whole plan (a
 * Lagrangian heuristic, heur.c surety_heur_from): a job several resources
 * hold goes to one of them, jobs leave until the joint allowance holds,
 * and the local search improves the rest; it is offered as an incumbent.
 *
 * After the rounds, probes at the best round's prices (the reduction tests
 * of Lagrangian relaxation, which bound a problem with one variable fixed:
 * Beasley 1993, "Lagrangean relaxation", in Reeves (ed.), Modern Heuristic
 * Techniques for Combinatorial Problems; cited from memory). For each pair
 * (j, i), V_i is solved again with j kept out of i when the best round's
 * plan of i holds it, or forced in when it does not (the other direction
 * leaves V_i as it was when the best round's solve finished, and its
 * entry keeps V_i, still a bound, when it did not). A node whose decision
 * on j matches the probe (j placed in i for a forced-in probe; placed
 * elsewhere or rejected for a kept-out one) has resource i's part at most
 * that probe's value (its job sets are among the probe's); tree.c keeps,
 * along the path, the smallest such value per resource, so a node's cap
 * is the sum of prices plus those values. A pair whose cap alone cannot
 * beat the incumbent leaves the root's row.
 *
 * After the probes, a node restored from the pool may solve V_i with all
 * of its decisions at once (surety_decomp_node, at the same prices): the
 * problem of a branch-and-bound node of the Lagrangian dual with the
 * root's multipliers, which caps the node's whole subtree. The probes
 * give only the smallest single decision's value.
 *
 * Identical resources (same capacity, factor and jobs) at equal prices
 * have one and the same V_i, so a batch solves it once and copies it
 * (run_subs, twin_of). Their prices start equal and stay equal while
 * their plans are the same, which loses nothing: the dual function is
 * convex and unchanged when identical resources swap prices, so it has a
 * minimum where their prices are equal. On four identical resources a
 * round costs a quarter of the solves (bench/README.md, "Findings").
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "solve/bundle.h"
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
    unsigned char *in_best; /* nj: in the sub's plan of the best round */
    unsigned char zero;     /* the allowed flag of a job kept out */
    surety_plan pstart;     /* a probe's or a node's starting plan */
    long work;              /* nodes of its last solve (run_subs' order) */
} dec_sub;

static void sub_free(dec_sub *d)
{
    surety_xfree(d->job);
    surety_xfree(d->jobs);
    surety_xfree(d->start.resource);
    surety_xfree(d->in_best);
    surety_xfree(d->pstart.resource);
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
    d->in_best = surety_xcalloc(nj, 1);
    d->pstart.resource = surety_xmalloc(nj, sizeof *d->pstart.resource);
    if (!d->jobs || !d->start.resource || !d->in_best || !d->pstart.resource)
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
        /* the incumbent's jobs in i fit i in all but k scenarios: the
         * first round starts from them */
        d->start.resource[t] =
            s->have_inc && s->inc_plan[j] == (long)i ? 0 : -1;
    }
    d->have_start = s->have_inc;
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
 * (INFINITY on an error or when the deadline has passed; -INFINITY when
 * no job set fits, which only a job forced in can cause). The scenarios
 * go into sc: the hours as given, and as profit the reduced profit in
 * every scenario, so the sub's mean profit is the reduced profit (to
 * rounding, which the caller's slack covers). With scenario prices, cost
 * is the resource's (N0 entries): each scenario it overloads costs that
 * much. `start` is a hint; with
 * `out`, the sub's plan goes there (have_start set). The sub-solve's
 * nodes and knapsacks are added to *nodes and *knaps. It reads s and
 * writes only d, sc, out and the counts: sub-solves of distinct
 * resources with distinct sc may run at once (run_subs). */
static double sub_solve(const surety_solver *s, dec_sub *d,
                        surety_scenarios *sc, const double *lam,
                        const double *cost, double deadline,
                        const surety_plan *start, surety_plan *out,
                        long *nodes, unsigned long long *knaps)
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
    o.start = start;
    o.scenario_cost = cost;
    /* no root LP in a one-resource solve: it leaves the scenario costs
     * out, so its bound seldom prunes, and a long sub-solve paid its
     * simplex every round (ident, tightness 0.7, N=1000: 2.77 s a round
     * against 3.65 s with it, the same bounds) */
    o.lp_after = -1;
    /* scenarios are not set aside (surety_solve_options.keep_dominated):
     * a one-resource solve seldom finds one that every plan fits or that
     * k+1 others dominate, yet its search for them (some 128 N signature
     * tests) took a quarter of a restored node's solve. On n=40, m=4,
     * N=1000 instances at capacity 0.3 the search is the same, node for
     * node, and the proofs 1-20% sooner (bench/README.md, "One-resource
     * solves set no scenario aside") */
    o.keep_dominated = 1;
    surety_result *r = NULL;
    if (surety_solve_inner(&d->model, sc, &o, start != NULL, &r, NULL) !=
        SURETY_OK)
        return INFINITY;
    double b = surety_result_status(r) == SURETY_INFEASIBLE
                   ? -INFINITY
                   : surety_result_bound(r);
    *nodes += surety_result_nodes(r);
    *knaps += surety_result_knaps(r);
    const surety_plan *pl = surety_result_plan(r);
    if (pl && out) {
        for (size_t t = 0; t < nj; t++)
            out->resource[t] = pl->resource[t];
        d->have_start = 1;
    }
    surety_result_free(r);
    return b;
}

struct solve_dec {
    dec_sub *sub;  /* m */
    double *lam;   /* n prices */
    double *xs;    /* n: scratch, then the subgradient */
    double *v;     /* m: this round's V_i bounds */
    surety_scenarios *scs; /* nthr: each worker's scenarios for its
                            * sub-solves, room for N0 x the most jobs of
                            * a resource */
    size_t nthr;   /* workers: opt->threads, at most m */
    struct sub_task *task; /* m: a batch of one-resource solves */
    size_t *ord;   /* m: the order run_subs takes them in */
    size_t *twin;  /* m: the task whose solve answers each (twin_of) */
    double *nv;    /* m: V_i solved at the current restored node */
    size_t *nidx;  /* m: the resources a node's batch solves */
    unsigned char *nsolved; /* m: nv[i] is set (surety_decomp_node) */
    double *mu;    /* m*N0 scenario prices, or NULL (not priced) */
    double *dj, *dm; /* the last step's directions: n for lam, m*N0 for mu */
    double *gm;    /* m*N0: this round's subgradient of mu */
    int best_priced; /* the best round had scenario prices */
    double *mtot;  /* N0: the sum over resources of mu */
    size_t *srt;   /* N0: scenarios by mtot, for the top k */
    unsigned char *zf; /* m*N0: the resource's plan of this round fails it */
    unsigned *nf;  /* N0: resources that fail it */
    double theta;
    int stall;
    surety_bundle *bun; /* the bundle's model (bundle_round), or NULL */
    double *bx;    /* n + m*N0: a point of the bundle (lam, then mu) */
    size_t *bi;    /* n + m*N0: a cut's coordinates */
    double *bv;    /* n + m*N0: a cut's slope entries */
    unsigned char *fresh; /* m: this round's solve gave resource i a plan */
    unsigned char *want; /* n*m: the round's plans that hold job j */
    long *hplan;   /* n: a plan made from them (surety_heur_from) */
    uint64_t hseed; /* its local search's random sequence */
    long plan_due;  /* the round (dec_iters) of the next such plan */
    long plan_gap;  /* rounds from one such plan to the next */
    int probing;   /* the rounds are over: pairs are probed */
    size_t next;   /* position in s->order of the next job to probe */
};

/* One-resource solves to run as a batch (run_subs): each on a resource
 * of its own, with its prices, start and plan buffer set by the caller;
 * v, nodes and knaps are its results. */
typedef struct sub_task {
    dec_sub *u;
    const double *lam, *cost;
    const surety_plan *start;
    surety_plan *out;
    size_t q;      /* the probed job's place in u (probe_next) */
    double v;
    long nodes;
    unsigned long long knaps;
} sub_task;

typedef struct sub_batch {
    const surety_solver *s;
    sub_task *task;
    const size_t *ord; /* the order in which tasks are taken */
    size_t ntask;
    size_t next;     /* the next task to take (atomic) */
    double deadline;
} sub_batch;

typedef struct sub_worker {
    sub_batch *b;
    surety_scenarios *sc; /* this worker's own */
} sub_worker;

static void *sub_work(void *arg)
{
    sub_worker *w = arg;
    sub_batch *b = w->b;
    for (;;) {
        size_t q = __atomic_fetch_add(&b->next, 1, __ATOMIC_RELAXED);
        if (q >= b->ntask)
            return NULL;
        sub_task *t = &b->task[b->ord[q]];
        t->nodes = 0;
        t->knaps = 0;
        t->v = sub_solve(b->s, t->u, w->sc, t->lam, t->cost, b->deadline,
                         t->start, t->out, &t->nodes, &t->knaps);
    }
}

/* Do two resources' problems have the same capacity, hours factor and
 * jobs (twin_of and node_twin compare the rest)? */
static int same_sub(const dec_sub *a, const dec_sub *b)
{
    return a->nj == b->nj && a->res.capacity == b->res.capacity &&
           a->res.hours_factor == b->res.hours_factor &&
           memcmp(a->job, b->job, a->nj * sizeof *a->job) == 0;
}

/* The first task of the batch whose one-resource problem is task q's
 * own: same_sub, the same flags (a probe's or a node's decisions), the
 * same job prices and the same scenario costs. Its solve then answers q
 * as well: V_i depends on nothing else (the start is a hint; a solve
 * stopped early gives a bound of the same problem). Why the prices of
 * identical resources stay equal, and lose nothing by it: the head of
 * this file. Returns q when no earlier task matches. */
static size_t twin_of(const surety_solver *s, const sub_task *task, size_t q)
{
    const dec_sub *a = task[q].u;
    size_t N0 = s->N0;
    for (size_t p = 0; p < q; p++) {
        const dec_sub *b = task[p].u;
        if (s->dec->twin[p] != p || !same_sub(a, b) ||
            (task[p].cost == NULL) != (task[q].cost == NULL))
            continue;
        int same = 1;
        for (size_t t = 0; t < a->nj && same; t++)
            same = *a->jobs[t].allowed == *b->jobs[t].allowed &&
                   a->jobs[t].required == b->jobs[t].required;
        for (size_t t = 0; t < a->nj && same; t++) {
            size_t j = a->job[t];
            same = task[q].lam[j] == task[p].lam[j];
        }
        if (same && task[q].cost)
            same = memcmp(task[q].cost, task[p].cost,
                          N0 * sizeof *task[q].cost) == 0;
        if (same)
            return p;
    }
    return q;
}

/* Runs the tasks, on up to d->nthr threads (the caller's among them),
 * and adds their nodes and knapsacks to the solver's counts. The tasks
 * are independent (distinct resources, each worker its own scenario
 * buffer) and each sub-solve is deterministic, so the results do not
 * depend on the number of threads; only the wall time does. On more than
 * one thread the resources whose last solve took the most nodes go first
 * (longest processing time first, Graham 1969), so that a long solve does
 * not start last. A thread that cannot be started leaves its share to
 * the others. */
static void run_subs(surety_solver *s, sub_task *task, size_t ntask,
                     double deadline, int phase)
{
    solve_dec *d = s->dec;
    size_t *ord = d->ord, *twin = d->twin, nrun = 0;
    if (ntask == 0)
        return; /* e.g. a probed job that no resource's problem holds */
    for (size_t q = 0; q < ntask; q++) {
        twin[q] = twin_of(s, task, q);
        if (twin[q] != q)
            continue; /* an earlier task's solve answers it */
        size_t r = nrun++;
        long w = task[q].u->work;
        for (; r > 0 && d->nthr > 1 && task[ord[r - 1]].u->work < w; r--)
            ord[r] = ord[r - 1];
        ord[r] = q;
    }
    sub_batch b = {.s = s, .task = task, .ord = ord, .ntask = nrun,
                   .next = 0, .deadline = deadline};
    sub_worker w[SURETY_DEC_MAX_THREADS];
    pthread_t th[SURETY_DEC_MAX_THREADS];
    int started[SURETY_DEC_MAX_THREADS] = {0};
    size_t nw = d->nthr < nrun ? d->nthr : nrun;
    if (nw > SURETY_DEC_MAX_THREADS)
        nw = SURETY_DEC_MAX_THREADS;
    for (size_t k = 0; k < nw; k++)
        w[k] = (sub_worker){.b = &b, .sc = &d->scs[k]};
    for (size_t k = 1; k < nw; k++)
        started[k] = pthread_create(&th[k], NULL, sub_work, &w[k]) == 0;
    sub_work(&w[0]);
    for (size_t k = 1; k < nw; k++)
        if (started[k])
            pthread_join(th[k], NULL);
    for (size_t q = 0; q < ntask; q++) {
        if (twin[q] != q) {
            /* the same problem: the same bound, and its plan */
            sub_task *t = &task[q], *p = &task[twin[q]];
            t->v = p->v;
            t->nodes = 0;
            t->knaps = 0;
            if (t->out && p->out && p->u->have_start) {
                memcpy(t->out->resource, p->out->resource,
                       t->u->nj * sizeof *t->out->resource);
                t->u->have_start = 1;
            }
            s->dec_twins++;
            continue;
        }
        s->dec_nodes[phase] += task[q].nodes;
        s->dec_knaps += task[q].knaps;
        task[q].u->work = task[q].nodes;
    }
}

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
    surety_xfree(d->v);
    surety_xfree(d->mu);
    surety_xfree(d->dj);
    surety_xfree(d->dm);
    surety_xfree(d->gm);
    surety_xfree(d->mtot);
    surety_xfree(d->srt);
    surety_xfree(d->zf);
    surety_xfree(d->nf);
    if (d->scs)
        for (size_t w = 0; w < d->nthr; w++) {
            surety_xfree(d->scs[w].hours);
            surety_xfree(d->scs[w].profit);
        }
    surety_xfree(d->scs);
    surety_xfree(d->task);
    surety_xfree(d->ord);
    surety_xfree(d->twin);
    surety_xfree(d->nv);
    surety_xfree(d->nidx);
    surety_xfree(d->nsolved);
    surety_bundle_free(d->bun);
    surety_xfree(d->bx);
    surety_xfree(d->bi);
    surety_xfree(d->bv);
    surety_xfree(d->fresh);
    surety_xfree(d->want);
    surety_xfree(d->hplan);
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
    d->v = surety_xmalloc(m, sizeof *d->v);
    d->dj = surety_xcalloc(n, sizeof *d->dj);
    if (!s->dec_lam)
        s->dec_lam = surety_xcalloc(n, sizeof *s->dec_lam);
    if (!s->dec_v)
        s->dec_v = surety_xcalloc(m, sizeof *s->dec_v);
    if (!d->sub || !d->lam || !d->xs || !d->v || !d->dj || !s->dec_lam ||
        !s->dec_v)
        return -1;
    if (!s->separate && !s->opt->decomp_jobs_only) {
        size_t N0 = s->N0;
        d->mu = surety_xcalloc(m * N0, sizeof *d->mu);
        d->dm = surety_xcalloc(m * N0, sizeof *d->dm);
        d->gm = surety_xmalloc(m * N0, sizeof *d->gm);
        d->mtot = surety_xmalloc(N0, sizeof *d->mtot);
        d->srt = surety_xmalloc(N0, sizeof *d->srt);
        d->zf = surety_xcalloc(m * N0, 1);
        d->nf = surety_xcalloc(N0, sizeof *d->nf);
        if (!s->dec_mu) {
            s->dec_mu = surety_xcalloc(m * N0, sizeof *s->dec_mu);
            s->dec_mtot = surety_xcalloc(N0, sizeof *s->dec_mtot);
            s->dec_msrt = surety_xmalloc(N0, sizeof *s->dec_msrt);
            s->dec_mrow = surety_xcalloc(s->N ? s->N : 1, sizeof *s->dec_mrow);
            s->dec_mpre = surety_xcalloc(s->k + 1, sizeof *s->dec_mpre);
        }
        if (!d->mu || !d->dm || !d->gm || !d->mtot || !d->srt || !d->zf ||
            !d->nf || !s->dec_mu || !s->dec_mtot || !s->dec_msrt ||
            !s->dec_mrow || !s->dec_mpre)
            return -1;
    }
    size_t most = 1;
    for (size_t i = 0; i < m; i++) {
        if (sub_init(s, i, &d->sub[i]) != 0)
            return -1;
        if (d->sub[i].nj > most)
            most = d->sub[i].nj;
    }
    d->nthr = s->opt->threads > 1 ? (size_t)s->opt->threads : 1;
    if (d->nthr > m)
        d->nthr = m;
    if (d->nthr > SURETY_DEC_MAX_THREADS)
        d->nthr = SURETY_DEC_MAX_THREADS;
    d->scs = surety_xcalloc(d->nthr, sizeof *d->scs);
    d->task = surety_xcalloc(m, sizeof *d->task);
    d->ord = surety_xmalloc(m, sizeof *d->ord);
    d->twin = surety_xmalloc(m, sizeof *d->twin);
    d->nv = surety_xmalloc(m, sizeof *d->nv);
    d->nidx = surety_xmalloc(m, sizeof *d->nidx);
    d->nsolved = surety_xcalloc(m, 1);
    d->fresh = surety_xcalloc(m, 1);
    d->want = surety_xmalloc(n * m, 1);
    d->hplan = surety_xmalloc(n, sizeof *d->hplan);
    if (!d->scs || !d->task || !d->ord || !d->twin || !d->nv || !d->nidx ||
        !d->nsolved || !d->fresh || !d->want || !d->hplan)
        return -1;
    for (size_t w = 0; w < d->nthr; w++) {
        d->scs[w].hours = surety_xmalloc(s->N0 * most, sizeof *d->scs->hours);
        d->scs[w].profit = surety_xmalloc(s->N0 * most,
                                          sizeof *d->scs->profit);
        if (!d->scs[w].hours || !d->scs[w].profit)
            return -1;
    }
    /* prices start at bound.c's; a required job's may take any sign */
    for (size_t j = 0; j < n; j++)
        d->lam[j] = s->state[j] == SURETY_JOB_FREE ? s->lam[j] : 0;
    d->theta = 1;
    d->hseed = 0x0dec5eedULL ^ (uint64_t)s->N0 * 0x9e3779b97f4a7c15ULL;
    d->plan_due = 0;
    d->plan_gap = 1;
    return 0;
}

/* The scenarios a plan of sub d overloads (its jobs' base hours summed in
 * job order, the capacity test of plan.h), into zf (N0 flags). */
static void sub_fails(const surety_solver *s, const dec_sub *d,
                      const surety_plan *pl, unsigned char *zf)
{
    size_t n = s->n;
    for (size_t l = 0; l < s->N0; l++) {
        const double *row = s->sc->hours + l * n;
        double sum = 0;
        for (size_t t = 0; t < d->nj; t++)
            if (pl->resource[t] >= 0)
                sum += row[d->job[t]];
        zf[l] = !surety_plan_holds(d->res.hours_factor, sum, d->res.capacity);
    }
}

static int by_mtot(const void *a, const void *b, void *ctx)
{
    const solve_dec *d = ctx;
    size_t x = *(const size_t *)a, y = *(const size_t *)b;
    if (d->mtot[x] != d->mtot[y])
        return d->mtot[x] > d->mtot[y] ? -1 : 1;
    if (d->nf[x] != d->nf[y])
        return d->nf[x] > d->nf[y] ? -1 : 1;
    return (x > y) - (x < y);
}

/* The scenario prices' share of the bound, the most that k scenarios'
 * summed prices can reach: T(mu) = the sum of the k largest mtot. */
static double top_k(const surety_solver *s, solve_dec *d)
{
    size_t N0 = s->N0, m = s->m;
    for (size_t l = 0; l < N0; l++) {
        double t = 0;
        for (size_t i = 0; i < m; i++)
            t += d->mu[i * N0 + l];
        d->mtot[l] = t;
        d->srt[l] = l;
    }
    qsort_r(d->srt, N0, sizeof *d->srt, by_mtot, d);
    double T = 0;
    for (size_t r = 0; r < s->k && r < N0; r++)
        T += d->mtot[d->srt[r]];
    return T;
}

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>
/* A round's bound against the best plan it covers: the plans whose pairs
 * are all possible at the root (surety_chk_completion at the root state).
 * Prices of any value must leave the bound at least that plan's value.
 * Aborts otherwise. */
static void chk_round(const surety_solver *s, double L)
{
    if (s->n > 20)
        return; /* a full solve per round: small models only */
    for (size_t j = 0; j < s->n; j++)
        if (s->state[j] != SURETY_JOB_FREE)
            return; /* the rounds bound the root's completions */
    double best = surety_chk_completion(s);
    if (L < best - 1e-9 * (s->pscale + 1)) {
        fprintf(stderr, "invariant: a price round's bound %.12g is below "
                "a plan it covers, %.12g\n", L, best);
        abort();
    }
}
#endif

/* The pairs the one-resource problems hold (n*m flags), for a watcher;
 * NULL when out of memory. */
static unsigned char *sub_pairs(const surety_solver *s)
{
    size_t m = s->m;
    const solve_dec *d = s->dec;
    unsigned char *pairs = surety_xcalloc(s->n * m, 1);
    if (pairs)
        for (size_t i = 0; i < m; i++)
            for (size_t t = 0; t < d->sub[i].nj; t++)
                pairs[d->sub[i].job[t] * m + i] = 1;
    return pairs;
}

/* Shows a round to the caller's watcher (solve.h): its prices and value,
 * and the pairs its one-resource problems hold. */
static void watch_round(const surety_solver *s, double L)
{
    size_t n = s->n, m = s->m;
    const solve_dec *d = s->dec;
    unsigned char *pairs = sub_pairs(s);
    if (!pairs)
        return;
    surety_dec_round w = {.n = n, .m = m, .N = s->N0, .pairs = pairs,
                          .lam = d->lam, .mu = d->mu, .bound = L};
    s->dec_watch(s->dec_watch_ctx, &w);
    surety_xfree(pairs);
}

/* The step's direction, deflected by the last one where they point apart
 * (Camerini, Fratta & Maffioli 1975, "On improving relaxation methods by
 * modified gradient techniques", cited from memory):
 *     d = g + beta d', beta = max(0, -1.5 g.d' / |d'|^2).
 * g (the subgradient) and dir (d', the last direction) both become d;
 * returns |d|^2. */
static double deflect(double *g, double *dir, size_t len)
{
    double gd = 0, dd = 0;
    for (size_t t = 0; t < len; t++) {
        gd += g[t] * dir[t];
        dd += dir[t] * dir[t];
    }
    double beta = dd > 0 && gd < 0 ? -1.5 * gd / dd : 0, nn = 0;
    for (size_t t = 0; t < len; t++) {
        dir[t] = g[t] + beta * dir[t];
        g[t] = dir[t];
        nn += dir[t] * dir[t];
    }
    return nn;
}

/* The bundle's start (bundle.c): the prices as one point x = (lam, mu),
 * f(x) = sum_j lam_j + T(mu) + sum_i V_i(lam, mu_i) with e the slope of
 * the first sum, lam_j in [0, p_j] for an optional job (a price above the
 * profit changes no V_i), free for a required one, 0 for a job the root
 * has decided, and mu >= 0. Components: each V_i, then T. Each V_i starts
 * with the empty plan's cut (V_i >= 0: no sub-problem has a required
 * job), so that every model is bounded below. t0 is Polyak's step length
 * toward the target, g2l and g2m the squared norms of the subgradient's
 * job and scenario blocks. With both, the metric gives each block half of
 * the decrease Polyak's step predicts, as the subgradient steps do (there
 * are m*N0 scenario prices against n job prices: with one step length the
 * job prices would hardly move, and at N=10 000 the rounds are few). */
static int bundle_begin(surety_solver *s, double L, double g2l, double g2m)
{
    size_t n = s->n, m = s->m, N0 = s->N0;
    solve_dec *d = s->dec;
    size_t dim = n + (d->mu ? m * N0 : 0);
    double *e = surety_xmalloc(dim, sizeof *e);
    double *lo = surety_xmalloc(dim, sizeof *lo);
    double *hi = surety_xmalloc(dim, sizeof *hi);
    d->bx = surety_xmalloc(dim, sizeof *d->bx);
    d->bi = surety_xmalloc(dim, sizeof *d->bi);
    d->bv = surety_xmalloc(dim, sizeof *d->bv);
    double *sc = surety_xmalloc(dim, sizeof *sc);
    int ok = e && lo && hi && d->bx && d->bi && d->bv && sc;
    if (ok) {
        for (size_t j = 0; j < n; j++) {
            int open = s->state[j] == SURETY_JOB_FREE;
            e[j] = open ? 1 : 0;
            lo[j] = !open ? 0 : s->required[j] ? -INFINITY : 0;
            hi[j] = !open ? 0 : s->required[j] ? INFINITY
                    : s->p[j] > 0 ? s->p[j] : 0;
        }
        for (size_t x = n; x < dim; x++) {
            e[x] = 0;
            lo[x] = 0;
            hi[x] = INFINITY;
        }
        double target = s->have_inc ? s->inc : L - 0.05 * fabs(L) - 1;
        double g2 = g2l + g2m, t0 = (L - target) / g2;
        int both = g2l > 0 && g2m > 0;
        for (size_t x = 0; x < dim; x++)
            sc[x] = !both ? 1 : x < n ? 0.5 * g2 / g2l : 0.5 * g2 / g2m;
        size_t ncomp = m + (d->mu ? 1 : 0);
        d->bun = surety_bundle_new(dim, ncomp, 40, e, lo, hi, t0);
        ok = d->bun != NULL;
        if (ok)
            surety_bundle_scale(d->bun, sc);
        for (size_t i = 0; ok && i < m; i++)
            ok = surety_bundle_cut(d->bun, i, 0, NULL, NULL, 0) == 0;
    }
    surety_xfree(e);
    surety_xfree(lo);
    surety_xfree(hi);
    surety_xfree(sc);
    return ok ? 0 : -1;
}

/* A bundle round (unless decomp_subgradient): the cuts of this round's plans, then
 * the bundle's next prices. Each resource's plan X, with F_i(X) the
 * scenarios it overloads, gives V_i(lam', mu') >= sum_{j in X} (p_j -
 * lam'_j) - sum_{l in F_i(X)} mu'_il at any prices (X is one of V_i's
 * job sets), and the k scenarios of largest summed price S give
 * T(mu') >= sum_{l in S} sum_i mu'_il. The bound of the round is f at its
 * prices, computed by the caller from the sub-solves' own bounds; the
 * bundle only chooses where to evaluate next. Returns as price_round:
 * 0 for another round, 1 when the model predicts (almost) no decrease,
 * or when out of memory. */
static int bundle_round(surety_solver *s, double L, double deadline)
{
    size_t n = s->n, m = s->m, N0 = s->N0;
    solve_dec *d = s->dec;
    int priced = d->mu != NULL;
    double g2l = 0, g2m = 0; /* the subgradient's blocks, squared */
    if (!d->bun) {
        for (size_t j = 0; j < n; j++)
            if (s->state[j] == SURETY_JOB_FREE)
                g2l += (1 - d->xs[j]) * (1 - d->xs[j]);
    }
    if (priced) {
        top_k(s, d); /* the k scenarios of largest summed price: srt */
        memset(d->nf, 0, N0 * sizeof *d->nf); /* reused: in the top k */
        for (size_t r = 0; r < s->k && r < N0; r++)
            d->nf[d->srt[r]] = 1;
        for (size_t i = 0; i < m; i++) {
            unsigned char *zf = d->zf + i * N0;
            if (d->fresh[i] && d->sub[i].nj)
                sub_fails(s, &d->sub[i], &d->sub[i].start, zf);
            else
                memset(zf, 0, N0);
            if (!d->bun)
                for (size_t l = 0; l < N0; l++) {
                    double g = (double)d->nf[l] - zf[l];
                    g2m += g * g;
                }
        }
    }
    if (!d->bun) {
        if (!(g2l + g2m > 0))
            return 1; /* a zero subgradient: no prices do better */
        if (bundle_begin(s, L, g2l, g2m) != 0)
            return 1; /* the bound so far stands */
    }
    size_t *bi = d->bi;
    double *bv = d->bv;
    for (size_t i = 0; i < m; i++) {
        dec_sub *u = &d->sub[i];
        if (!d->fresh[i] || !u->nj)
            continue;
        size_t nnz = 0;
        double a = 0;
        for (size_t t = 0; t < u->nj; t++)
            if (u->start.resource[t] >= 0) {
                a += s->p[u->job[t]];
                bi[nnz] = u->job[t];
                bv[nnz++] = -1;
            }
        if (priced)
            for (size_t l = 0; l < N0; l++)
                if (d->zf[i * N0 + l]) {
                    bi[nnz] = n + i * N0 + l;
                    bv[nnz++] = -1;
                }
#ifdef SURETY_CHECK_INVARIANTS
        double cv = a;
        for (size_t q = 0; q < nnz; q++)
            cv -= bi[q] < n ? d->lam[bi[q]] : d->mu[bi[q] - n];
        if (cv > d->v[i] + 1e-7 * (s->pscale + 1) + 1e-9 * fabs(cv)) {
            fprintf(stderr, "invariant: resource %zu's plan is worth %.12g "
                    "at the round's prices, above its bound %.12g\n", i,
                    cv, d->v[i]);
            abort();
        }
#endif
        if (surety_bundle_cut(d->bun, i, a, bi, bv, nnz) != 0)
            return 1;
    }
    if (priced) {
        size_t nnz = 0;
        for (size_t r = 0; r < s->k && r < N0; r++)
            for (size_t i = 0; i < m; i++) {
                bi[nnz] = n + i * N0 + d->srt[r];
                bv[nnz++] = 1;
            }
        if (surety_bundle_cut(d->bun, m, 0, bi, bv, nnz) != 0)
            return 1;
    }
    double *x = d->bx;
    memcpy(x, d->lam, n * sizeof *x);
    if (priced)
        memcpy(x + n, d->mu, m * N0 * sizeof *x);
    double t0 = surety_solve_now();
    surety_bundle_deadline(d->bun, deadline);
    double pred = surety_bundle_step(d->bun, x, L, x);
    s->dec_master_secs += surety_solve_now() - t0;
    memcpy(d->lam, x, n * sizeof *x);
    if (priced)
        memcpy(d->mu, x + n, m * N0 * sizeof *x);
    return pred > 1e-7 * (fabs(L) + 1) ? 0 : 1;
}

/* Most rounds between two plans made from the rounds' plans while they
 * find nothing better (price_round). */
#define ROUND_PLAN_GAP 8

/* A whole plan from this round's one-resource plans (surety_heur_from),
 * offered as an incumbent. */
static void round_plan(surety_solver *s)
{
    size_t n = s->n, m = s->m;
    solve_dec *d = s->dec;
    memset(d->want, 0, n * m);
    for (size_t i = 0; i < m; i++) {
        const dec_sub *u = &d->sub[i];
        if (d->fresh[i])
            for (size_t t = 0; t < u->nj; t++)
                if (u->start.resource[t] >= 0)
                    d->want[u->job[t] * m + i] = 1;
    }
    double t0 = surety_solve_now();
    int found = surety_heur_from(s, d->want, d->hplan, &d->hseed);
    s->dec_heur_secs += surety_solve_now() - t0;
#ifdef SURETY_CHECK_INVARIANTS
    /* the root's decisions kept; a plan said to fit, fits */
    for (size_t j = 0; j < n; j++)
        if (s->state[j] != SURETY_JOB_FREE && d->hplan[j] != s->state[j] &&
            found) {
            fprintf(stderr, "invariant: the rounds' plan moves job %zu, "
                    "which the root has decided\n", j);
            abort();
        }
    surety_plan pl = {n, d->hplan};
    if (found && !surety_plan_feasible(s->model, &pl, s->sc)) {
        fprintf(stderr, "invariant: the rounds' plan fails more scenarios "
                "than the allowance\n");
        abort();
    }
#endif
    if (found && surety_solve_offer(s, d->hplan))
        s->dec_found++;
}

/* One subgradient round. Returns 0 when more rounds may help, 1 when they
 * will not (converged, or the most rounds: 60 by default), 2 when the work
 * should stop (a limit stopped a sub-solve, or the bound no longer beats
 * the cutoff). */
static int price_round(surety_solver *s, double deadline)
{
    size_t n = s->n, m = s->m;
    solve_dec *d = s->dec;
    double *lam = d->lam, *xs = d->xs;
    size_t N0 = s->N0;
    double slack = 1e-9 * (s->pscale + 1);
    double lsum = slack, L;
    memset(xs, 0, n * sizeof *xs);
    for (size_t j = 0; j < n; j++)
        if (s->state[j] == SURETY_JOB_FREE)
            lsum += lam[j];
    int priced = d->mu != NULL;
    if (priced) {
        double T = top_k(s, d);
        lsum += T + 1e-12 * (T + 1); /* summed in another order below */
    }
    L = lsum;
    sub_task *task = d->task;
    for (size_t i = 0; i < m; i++) {
        dec_sub *u = &d->sub[i];
        task[i] = (sub_task){.u = u, .lam = lam,
                             .cost = priced ? d->mu + i * N0 : NULL,
                             .start = u->have_start ? &u->start : NULL,
                             .out = &u->start};
        u->have_start = 0; /* set again by a plan of this round */
    }
    run_subs(s, task, m, deadline, SURETY_DEC_ROUNDS);
    for (size_t i = 0; i < m; i++) {
        dec_sub *u = &d->sub[i];
        d->v[i] = task[i].v;
        L += d->v[i];
        d->fresh[i] = u->have_start;
        if (u->have_start) /* this round's plan counts into xs */
            for (size_t t = 0; t < u->nj; t++)
                if (u->start.resource[t] >= 0)
                    xs[u->job[t]] += 1;
        if (task[i].start)
            u->have_start = 1; /* the earlier plan stays a hint */
    }
    if (!(L < INFINITY))
        return 2; /* a limit stopped a sub-solve: this round is not known */
    s->dec_iters++;
    if (s->dec_iters >= d->plan_due) {
        /* every round while its plans pay; after each round whose plan
         * does not, the next is twice as far off, at most ROUND_PLAN_GAP
         * rounds (at 1000 scenarios a plan can cost as much as a round's
         * solves: bench/README.md, "Plans from the price rounds spaced
         * out") */
        long found = s->dec_found;
        round_plan(s);
        s->dec_made++;
        d->plan_gap = s->dec_found > found ? 1
                      : d->plan_gap < ROUND_PLAN_GAP ? 2 * d->plan_gap
                                                     : ROUND_PLAN_GAP;
        d->plan_due = s->dec_iters + d->plan_gap;
    }
#ifdef SURETY_CHECK_INVARIANTS
    chk_round(s, L);
#endif
    if (s->dec_watch)
        watch_round(s, L);
    if (L < s->dec_root - slack) {
        s->dec_root = L;
        s->dec_lsum = lsum;
        memcpy(s->dec_lam, lam, n * sizeof *lam);
        memcpy(s->dec_v, d->v, m * sizeof *d->v);
        if (d->mu) {
            memcpy(s->dec_mu, d->mu, m * N0 * sizeof *d->mu);
            /* top_k's order of this round's prices (tree.c, dead_share) */
            memcpy(s->dec_mtot, d->mtot, N0 * sizeof *d->mtot);
            memcpy(s->dec_msrt, d->srt, N0 * sizeof *d->srt);
            memset(s->dec_mrow, 0, s->N * sizeof *s->dec_mrow);
            for (size_t l = 0; l < N0; l++)
                if (s->row_of[l] != SIZE_MAX)
                    s->dec_mrow[s->row_of[l]] += d->mtot[l];
            for (size_t r = 0; r < s->k && r < N0; r++)
                s->dec_mpre[r + 1] = s->dec_mpre[r] + d->mtot[d->srt[r]];
        }
        d->best_priced = priced;
        for (size_t i = 0; i < m; i++) {
            dec_sub *u = &d->sub[i];
            for (size_t t = 0; t < u->nj; t++)
                u->in_best[t] = u->start.resource[t] >= 0;
        }
        d->stall = 0;
    } else if (++d->stall >= 3) {
        d->theta /= 2;
        d->stall = 0;
    }
    if (!(s->dec_root > surety_cutoff(s)))
        return 2;
    long most = s->opt->decomp_rounds > 0 ? s->opt->decomp_rounds : 60;
    if (s->dec_iters >= most)
        return 1;
    if (!s->opt->decomp_subgradient)
        return bundle_round(s, L, deadline);
    if (d->theta < 1.0 / 64)
        return 1;
    double norm = 0, nmu = 0;
    for (size_t j = 0; j < n; j++) {
        if (s->state[j] != SURETY_JOB_FREE)
            continue;
        double g = 1 - xs[j];
        xs[j] = g;
        norm += g * g;
    }
    if (priced) {
        /* the subgradient of mu_il is z_l - z_il: the master's choice of
         * the k scenarios of largest summed prices (ties to the ones more
         * resources fail) less resource i's failure in this round's plan */
        memset(d->nf, 0, N0 * sizeof *d->nf);
        for (size_t i = 0; i < m; i++) {
            dec_sub *u = &d->sub[i];
            unsigned char *zf = d->zf + i * N0;
            if (u->nj && u->have_start)
                sub_fails(s, u, &u->start, zf);
            else
                memset(zf, 0, N0);
            for (size_t l = 0; l < N0; l++)
                d->nf[l] += zf[l];
        }
        top_k(s, d); /* the order again, now with the ties broken */
        memset(d->mtot, 0, N0 * sizeof *d->mtot); /* reused: z_l */
        for (size_t r = 0; r < s->k && r < N0; r++)
            d->mtot[d->srt[r]] = 1;
        for (size_t i = 0; i < m; i++)
            for (size_t l = 0; l < N0; l++) {
                double g = d->mtot[l] - d->zf[i * N0 + l];
                d->gm[i * N0 + l] = g;
                nmu += g * g;
            }
    }
    if (norm <= 0 && nmu <= 0)
        return 1; /* a zero subgradient (exact when every sub-solve
                   * finished): no prices do better */
    /* each block's direction deflected by its last one (deflect); a job
     * decided at the root has g = 0 and direction 0 (xs counts only the
     * sub-solves' jobs, the root's open ones) */
    norm = deflect(xs, d->dj, n);
    if (priced)
        nmu = deflect(d->gm, d->dm, m * N0);
    /* Polyak's step, the predicted decrease split between the two blocks
     * of prices when both move (there are m*N0 scenario prices against n
     * job prices: one step over both would leave the job prices still) */
    double target = s->have_inc ? s->inc : L - 0.05 * fabs(L) - 1;
    double share = norm > 0 && nmu > 0 ? 0.5 : 1;
    double step = norm > 0 ? share * d->theta * (L - target) / norm : 0;
    double mstep = nmu > 0 ? share * d->theta * (L - target) / nmu : 0;
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
    if (priced)
        for (size_t i = 0; i < m; i++)
            for (size_t l = 0; l < N0; l++) {
                double v = d->mu[i * N0 + l] - mstep * d->dm[i * N0 + l];
                d->mu[i * N0 + l] = v > 0 ? v : 0;
            }
    return 0;
}

/* The rounds are over: the tables of probed bounds start at the best
 * round's V_i (no probe yet: a decision costs nothing). */
static int probe_init(surety_solver *s)
{
    size_t n = s->n, m = s->m;
    s->dec_vin = surety_xmalloc(n * m, sizeof *s->dec_vin);
    s->dec_vout = surety_xmalloc(n * m, sizeof *s->dec_vout);
    s->dec_c = surety_xmalloc(m, sizeof *s->dec_c);
    s->dec_saved_c = surety_xmalloc((s->nb + 1) * m, sizeof *s->dec_saved_c);
    if (!s->dec_vin || !s->dec_vout || !s->dec_c || !s->dec_saved_c) {
        /* none of them, or tree.c and surety_decomp_rule would read them */
        surety_xfree(s->dec_vin);
        surety_xfree(s->dec_vout);
        surety_xfree(s->dec_c);
        surety_xfree(s->dec_saved_c);
        s->dec_vin = s->dec_vout = s->dec_c = s->dec_saved_c = NULL;
        return -1;
    }
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            s->dec_vin[j * m + i] = s->dec_vout[j * m + i] = s->dec_v[i];
    memcpy(s->dec_c, s->dec_v, m * sizeof *s->dec_c);
    s->dec->probing = 1;
    s->dec->next = 0;
    return 0;
}

/* The cap of a node that decides job j only (c >= 0: placed in resource
 * c; SURETY_JOB_OUT: rejected), at the best round's prices. */
static double single_cap(const surety_solver *s, size_t j, long c)
{
    size_t m = s->m;
    double v = s->dec_lsum - (c < 0 ? s->dec_lam[j] : 0);
    for (size_t i = 0; i < m; i++) {
        double w = surety_dec_probed(s, j, i, c);
        v += w < s->dec_v[i] ? w : s->dec_v[i];
    }
    return v;
}

/* Rules out of the root's row of pxs, which every restored node starts
 * from (as the root LP's reduced costs do), the pairs of the first `upto`
 * jobs in the branching order whose probed cap alone leaves no plan above
 * the cutoff. */
static void rule_pairs(surety_solver *s, size_t upto)
{
    size_t m = s->m;
    double cut = surety_cutoff(s);
    unsigned char *px = s->pxs; /* row 0: the root's */
    for (size_t t = 0; t < upto; t++) {
        size_t j = s->order[t];
        if (s->state[j] != SURETY_JOB_FREE)
            continue;
        for (size_t i = 0; i < m; i++)
            if (px[j * m + i] && !(single_cap(s, j, (long)i) > cut)) {
                px[j * m + i] = 0;
                s->dec_ruled++;
            }
    }
}

/* Shows the probe tables, as the search reads them, to the caller's
 * watcher (solve.h) after job j's probes. */
static void watch_probes(const surety_solver *s, size_t j)
{
    size_t n = s->n, m = s->m;
    const solve_dec *d = s->dec;
    unsigned char *pairs = sub_pairs(s);
    double *probed = surety_xmalloc(n * m * (m + 1), sizeof *probed);
    if (pairs && probed) {
        for (size_t e = 0; e < n * m; e++)
            for (long c = -1; c < (long)m; c++)
                probed[e * (m + 1) + (size_t)(c + 1)] =
                    surety_dec_probed(s, e / m, e % m, c);
        surety_dec_round w = {.n = n, .m = m, .N = s->N0, .pairs = pairs,
                              .lam = s->dec_lam,
                              .mu = d->best_priced ? s->dec_mu : NULL,
                              .bound = s->dec_root, .probed = probed,
                              .v = s->dec_v, .job = j};
        s->dec_watch(s->dec_watch_ctx, &w);
    }
    surety_xfree(pairs);
    surety_xfree(probed);
}

/* A probe's or a node's solve of resource i at the best round's prices,
 * started from the best round's plan (u->pstart), before their own
 * decisions are put in. */
static sub_task best_task(const surety_solver *s, size_t i)
{
    solve_dec *d = s->dec;
    dec_sub *u = &d->sub[i];
    u->pstart.n = u->nj;
    for (size_t t = 0; t < u->nj; t++)
        u->pstart.resource[t] = u->in_best[t] ? 0 : -1;
    return (sub_task){.u = u, .lam = s->dec_lam,
                      .cost = d->best_priced ? s->dec_mu + i * s->N0 : NULL,
                      .start = &u->pstart};
}

/* Probes the pairs of the next job in the branching order: on each
 * resource whose best-round plan holds it, V_i with the job kept out;
 * on the others, V_i with the job forced in (one batch: run_subs); then
 * the pairs of the jobs probed so far are ruled out where they can.
 * Returns 0 while jobs are left, 1 when done, 2 when a limit stopped a
 * sub-solve. */
static int probe_next(surety_solver *s, double deadline)
{
    size_t m = s->m;
    solve_dec *d = s->dec;
    if (d->next >= s->nb)
        return 1;
    size_t j = s->order[d->next++];
    if (s->state[j] != SURETY_JOB_FREE)
        return 0;
    size_t nt = 0;
    for (size_t i = 0; i < m; i++) {
        dec_sub *u = &d->sub[i];
        size_t q = 0;
        while (q < u->nj && u->job[q] != j)
            q++;
        if (q == u->nj)
            continue; /* j may not enter i */
        sub_task *k = &d->task[nt++];
        *k = best_task(s, i);
        k->q = q;
        if (u->in_best[q]) {
            u->jobs[q].allowed = &u->zero;
            u->pstart.resource[q] = -1;
        } else {
            u->jobs[q].required = 1;
            u->pstart.resource[q] = 0;
        }
    }
    run_subs(s, d->task, nt, deadline, SURETY_DEC_PROBES);
    int stopped = 0;
    for (size_t r = 0; r < nt; r++) {
        sub_task *k = &d->task[r];
        dec_sub *u = k->u;
        size_t q = k->q, i = (size_t)(u - d->sub);
        int out = u->in_best[q];
        u->jobs[q].allowed = &u->one;
        u->jobs[q].required = 0;
        if (!(k->v < INFINITY)) {
            stopped = 1;
            continue;
        }
        s->dec_probes++;
        double *tab = out ? s->dec_vout : s->dec_vin;
        if (k->v < tab[j * m + i])
            tab[j * m + i] = k->v;
    }
    if (stopped)
        return 2;
    if (s->dec_watch)
        watch_probes(s, j);
    rule_pairs(s, d->next);
    return d->next >= s->nb;
}

/* The invariant build keeps the values the restored node's own solves
 * gave, apart from dec_c, so that its check of the caps along the path
 * (bound.c, "probed caps") has a reference of its own. */
static void chk_node_value(surety_solver *s, size_t i, double v)
{
#ifdef SURETY_CHECK_INVARIANTS
    if (s->chk_nodec && v < s->chk_nodec[i])
        s->chk_nodec[i] = v;
#else
    (void)s;
    (void)i;
    (void)v;
#endif
}

/* Resource h's problem at the node is resource i's (both solved with the
 * node's decisions): the same capacity, factor and jobs, the same prices,
 * and no job placed in either, so that each job is free or kept out in
 * both alike. */
static int node_twin(const surety_solver *s, size_t h, size_t i)
{
    const solve_dec *d = s->dec;
    const dec_sub *a = &d->sub[h], *b = &d->sub[i];
    size_t m = s->m, N0 = s->N0;
    const unsigned char *px = s->pxs;
    if (s->nin[h] || s->nin[i] || !same_sub(a, b))
        return 0;
    for (size_t t = 0; t < a->nj; t++) {
        size_t j = a->job[t];
        if (px[j * m + h] != px[j * m + i])
            return 0;
    }
    return !d->best_priced ||
           memcmp(s->dec_mu + h * N0, s->dec_mu + i * N0,
                  N0 * sizeof *s->dec_mu) == 0;
}

/* The restored node's own V_i for the resources i0 .. i0+cnt-1 (one
 * batch: run_subs): each one's problem with all of the node's decisions
 * at once (its jobs in i forced in, its jobs placed elsewhere or
 * rejected kept out), at the best round's prices. It is at most the
 * smallest probed value of those decisions (its job sets are among each
 * probe's), and bounds resource i's part of every completion of the node
 * as the probes do (tree.c, dec_cap); it lowers dec_c[i], which the
 * node's subtree inherits. Returns 0, or 2 when a limit stopped a
 * sub-solve (its dec_c[i] then stays). */
int surety_decomp_node(surety_solver *s, size_t i0, size_t cnt,
                       double deadline)
{
    size_t m = s->m;
    solve_dec *d = s->dec;
    if (!d || !s->dec_c)
        return 2;
    double t0 = surety_solve_now();
    const unsigned char *px = s->pxs; /* row 0: the root's */
    if (cnt > m - i0)
        cnt = m - i0;
    if (i0 == 0) /* a new node: nothing solved at it yet */
        memset(d->nsolved, 0, m);
    /* a resource whose problem an earlier call of this node solved takes
     * that value (the calls go in resource order, from 0); the others of
     * the batch are solved, in idx */
    size_t nt = 0, *idx = d->nidx;
    for (size_t i = i0; i < i0 + cnt; i++) {
        size_t h = 0;
        while (h < i0 && !(d->nsolved[h] && node_twin(s, h, i)))
            h++;
        if (h == i0) {
            idx[nt++] = i;
            continue;
        }
        s->dec_twins++;
        s->dec_ntwins++;
        d->nv[i] = d->nv[h];
        d->nsolved[i] = 1;
        chk_node_value(s, i, d->nv[h]);
        if (d->nv[h] < s->dec_c[i])
            s->dec_c[i] = d->nv[h];
    }
    for (size_t r = 0; r < nt; r++) {
        size_t i = idx[r];
        dec_sub *u = &d->sub[i];
        d->task[r] = best_task(s, i);
        for (size_t t = 0; t < u->nj; t++) {
            size_t j = u->job[t];
            long st = s->state[j];
            if (st == (long)i) {
                u->jobs[t].required = 1;
                u->pstart.resource[t] = 0;
            } else if (st != SURETY_JOB_FREE || !px[j * m + i]) {
                u->jobs[t].allowed = &u->zero;
                u->pstart.resource[t] = -1;
            }
        }
    }
    run_subs(s, d->task, nt, deadline, SURETY_DEC_NODES);
    int stopped = 0;
    for (size_t r = 0; r < nt; r++) {
        size_t i = idx[r];
        dec_sub *u = &d->sub[i];
        for (size_t t = 0; t < u->nj; t++) {
            u->jobs[t].allowed = &u->one;
            u->jobs[t].required = 0;
        }
        double v = d->task[r].v;
        if (!(v < INFINITY)) {
            stopped = 1;
            continue;
        }
        d->nv[i] = v;
        d->nsolved[i] = 1;
        chk_node_value(s, i, v);
        s->dec_nsolves++;
        if (v < s->dec_c[i])
            s->dec_c[i] = v;
    }
    s->dec_secs[SURETY_DEC_NODES] += surety_solve_now() - t0;
    return stopped ? 2 : 0;
}

size_t surety_decomp_threads(const surety_solver *s)
{
    return s->dec ? s->dec->nthr : 1;
}

void surety_decomp_rule(surety_solver *s)
{
    if (s->dec_vin)
        rule_pairs(s, s->nb);
}

int surety_decomp_round(surety_solver *s, double deadline)
{
    if (s->m < 2)
        return 1; /* nothing to split */
    double t0 = surety_solve_now();
    if (!s->dec && dec_init(s) != 0) {
        surety_decomp_free(s);
        return -1;
    }
    solve_dec *d = s->dec;
    int r;
    if (d->probing) {
        r = probe_next(s, deadline) == 0 ? 0 : 1;
        s->dec_secs[SURETY_DEC_PROBES] += surety_solve_now() - t0;
        return r;
    }
    r = price_round(s, deadline);
    if (r == 2 || (r == 1 && (!(s->dec_root < INFINITY) || s->nb == 0)))
        r = 1;
    else if (r == 1) /* the rounds are over: the probes next */
        r = probe_init(s) != 0 ? -1 : 0;
    s->dec_secs[SURETY_DEC_ROUNDS] += surety_solve_now() - t0;
    return r;
}
