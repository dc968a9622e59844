/* solve.c - the public solve API: options, the result record, incumbent
 * acceptance by exact recount, progress lines, and the driver that runs
 * presolve, heuristics and the tree search.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>
#include <time.h>

#include "alloc.h"
#include "clock.h"
#include "solve/solve.h"

struct surety_result {
    surety_stop stop;
    surety_status status;
    double objective;  /* mean profit of the plan; NAN without a plan */
    double bound;      /* valid upper bound on the optimum */
    double gap;        /* relative; INFINITY when unknown */
    double seconds;
    long nodes;
    unsigned long long knaps; /* scenario knapsacks of the node bounds */
    surety_plan *plan; /* owned; NULL without a plan */
    size_t fit;        /* scenarios where the plan fits (joint) */
    size_t k;          /* allowance */
    size_t searched;   /* scenarios the search worked on */
    char reason[768];  /* why infeasible, or "" */
};

void surety_solve_options_init(surety_solve_options *opt)
{
    if (!opt)
        return;
    memset(opt, 0, sizeof *opt);
    opt->time_limit_s = 0;
    opt->gap = 1e-9;
    opt->node_limit = 0;
    opt->threads = 1;
    opt->verbosity = SURETY_LOG_INFO;
    opt->progress_s = 5;
    opt->log = NULL;
    opt->log_ctx = NULL;
    opt->interrupt = NULL;
    opt->start = NULL;
    opt->dive_nodes = 0;
    opt->lp_after = 0;
    opt->decomp_after = 0;
    opt->decomp_rounds = 0;
    opt->decomp_root_only = 0;
    opt->lp_restored = 0;
    opt->improve_after = 0;
}

double surety_solve_now(void)
{
    return surety_clock_seconds(); /* the bundle's deadline uses it too */
}

static void logf_(const surety_solver *s, surety_log_level level,
                  const char *fmt, ...) __attribute__((format(printf, 3, 4)));
static void logf_(const surety_solver *s, surety_log_level level,
                  const char *fmt, ...)
{
    const surety_solve_options *o = s->opt;
    if (!o->log || (int)level > o->verbosity)
        return;
    char line[512];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(line, sizeof line, fmt, ap);
    va_end(ap);
    o->log(o->log_ctx, level, line);
}

static double global_bound(const surety_solver *s)
{
    /* nodes pruned against the cutoff (the incumbent plus the gap
     * tolerance) may hold plans up to it, as in the final bound */
    double cut = surety_cutoff(s);
    double b = cut;
    if (s->nodes == 0 && s->depth == 0 && s->open_bound &&
        s->open_bound[0] == -INFINITY) {
        /* before the search: the root bounds when known */
        double r = s->root_agg < s->root_lagr ? s->root_agg : s->root_lagr;
        return s->root_lagr == 0 && s->root_agg == 0 ? INFINITY
                                                     : (r > b ? r : b);
    }
    if (!s->open_bound)
        return s->root_bound > b ? s->root_bound : b;
    for (size_t d = 0; d <= s->depth && d <= s->nb; d++)
        if (s->open_bound[d] > b)
            b = s->open_bound[d];
    if (s->npool > 0 && s->pool[0].bound > b)
        b = s->pool[0].bound;
    if (b > s->root_cap) /* the root LP and decomposition cap every node */
        b = cut > s->root_cap ? cut : s->root_cap;
    return b;
}

static double rel_gap(double obj, double bound)
{
    if (isnan(obj) || bound == INFINITY)
        return INFINITY;
    double d = bound - obj;
    if (d <= 0)
        return 0;
    double den = fabs(obj);
    return den > 0 ? d / den : INFINITY;
}

/* One progress line: a mark ('*' new incumbent from the tree, 'H' from a
 * heuristic, 'L' from the local search run from the incumbent, 'S' made
 * from a price round's one-resource plans, 'P' from a part of the
 * incumbent searched again (lns.c), 'R' the root LP bound solved,
 * 'D' the decomposition bound lowered, ' ' timed), elapsed seconds, nodes, open subtrees (waiting in the pool and
 * on the dive path), incumbent, bound, gap. Header every 20 lines. */
void surety_solve_log_progress(surety_solver *s, int force, char mark)
{
    const surety_solve_options *o = s->opt;
    if (!o->log || o->verbosity < SURETY_LOG_PROGRESS)
        return;
    double now = surety_solve_now();
    if (!force && (o->progress_s <= 0 || now - s->last_log < o->progress_s))
        return;
    s->last_log = now;
    static const char *head =
        "     time_s        nodes   open        incumbent            bound"
        "       gap";
    if (s->log_lines++ % 20 == 0)
        o->log(o->log_ctx, SURETY_LOG_PROGRESS, head);
    size_t open = s->npool;
    if (s->open_bound)
        for (size_t d = 0; d <= s->depth && d <= s->nb; d++)
            open += s->open_bound[d] > -INFINITY;
    double b = global_bound(s);
    char inc[32], gap[32];
    if (s->have_inc) {
        snprintf(inc, sizeof inc, "%16.6f", s->inc);
        double g = rel_gap(s->inc, b);
        if (isinf(g))
            snprintf(gap, sizeof gap, "%9s", "inf");
        else
            snprintf(gap, sizeof gap, "%8.4f%%", 100 * g);
    } else {
        snprintf(inc, sizeof inc, "%16s", "-");
        snprintf(gap, sizeof gap, "%9s", "-");
    }
    char line[256];
    snprintf(line, sizeof line, "%c %9.2f %12ld %6zu %s %16.6f %s", mark,
             now - s->t0, s->nodes, open, inc, b, gap);
    o->log(o->log_ctx, SURETY_LOG_PROGRESS, line);
}

/* Canonical value of a plan: mean profits of accepted jobs added in
 * ascending job order (the same sum as surety_plan_profit). */
static double plan_value(const surety_solver *s, const long *plan)
{
    double v = 0;
    for (size_t j = 0; j < s->n; j++)
        if (plan[j] >= 0)
            v += s->p[j];
    return v;
}

/* A plan is accepted only after the exact recount of plan.c on the
 * scenarios as given (not the merged ones, not the search's loads), with
 * the model's own allowed and required flags. */
static int plan_valid(const surety_solver *s, const long *plan, size_t *fit)
{
    const surety_model *model = s->model;
    for (size_t j = 0; j < s->n; j++) {
        long i = plan[j];
        if (i < 0) {
            if (model->jobs[j].required)
                return 0;
            continue;
        }
        if ((size_t)i >= s->m || !model->jobs[j].allowed[i])
            return 0;
    }
    surety_plan tmp = {s->n, (long *)plan};
    if (!surety_plan_feasible(model, &tmp, s->sc))
        return 0;
    if (fit)
        *fit = surety_plan_count_fit(model, &tmp, s->sc, NULL);
    return 1;
}

int surety_solve_offer(surety_solver *s, const long *plan)
{
    double v = plan_value(s, plan);
    if (s->have_inc && !(v > s->inc))
        return 0;
    if (s->opt->scenario_cost) {
        surety_plan pl = {s->n, (long *)plan};
        v -= surety_plan_fail_cost(s->model, &pl, s->sc,
                                   s->opt->scenario_cost);
        if (s->have_inc && !(v > s->inc))
            return 0;
    }
    size_t fit = 0;
    if (!plan_valid(s, plan, &fit))
        return 0;
    for (size_t j = 0; j < s->n; j++)
        s->inc_plan[j] = plan[j] >= 0 ? plan[j] : -1;
    s->inc = v;
    s->have_inc = 1;
    s->inc_fit = fit;
    return 1;
}

static void solver_free(surety_solver *s)
{
    surety_presolve_free(s);
    surety_heur_free(s);
    surety_bound_free(s);
    surety_lpb_free(s);
    surety_decomp_free(s);
    surety_lns_free(s);
    surety_priced_free(s);
    surety_xfree(s->dec_lam);
    surety_xfree(s->dec_v);
    surety_xfree(s->dec_mu);
    surety_xfree(s->dec_mtot);
    surety_xfree(s->dec_msrt);
    surety_xfree(s->dec_mrow);
    surety_xfree(s->dec_mpre);
    surety_xfree(s->dec_vin);
    surety_xfree(s->dec_vout);
    surety_xfree(s->dec_c);
    surety_xfree(s->dec_saved_c);
    surety_xfree(s->state);
    surety_xfree(s->nin);
    surety_xfree(s->load);
    surety_xfree(s->ltot);
    surety_xfree(s->wtot);
    surety_xfree(s->dead);
    surety_xfree(s->lw);
    surety_xfree(s->dead_w);
    surety_xfree(s->trail);
    surety_xfree(s->saved_load);
    surety_xfree(s->saved_dead_w);
    surety_xfree(s->frames);
    surety_xfree(s->ub);
    surety_xfree(s->ubw);
    surety_xfree(s->kn);
    surety_xfree(s->ubv);
    surety_xfree(s->ubt_l);
    surety_xfree(s->ubt_v);
    surety_xfree(s->rl);
    surety_xfree(s->rln);
    surety_xfree(s->pxs);
    surety_xfree(s->pxo);
    surety_xfree(s->ppmark);
    surety_xfree(s->died);
    surety_xfree(s->ropen);
    surety_xfree(s->jk);
    surety_xfree(s->freec);
    surety_xfree(s->pbits);
    surety_xfree(s->kfit);
    surety_xfree(s->rix);
    surety_xfree(s->inc_plan);
    surety_xfree(s->open_bound);
    /* nodes still waiting when a limit stopped the search */
    for (size_t e = 0; e < s->npool; e++)
        surety_xfree(s->pool[e].dec);
    surety_xfree(s->pool);
    s->pool = NULL;
    s->npool = s->cpool = 0;
    surety_xfree(s->tplan);
    surety_xfree(s->tfix);
}

static int search_alloc(surety_solver *s)
{
    size_t n = s->n, m = s->m, N = s->N, G = s->G, nb = s->nb;
    s->state = surety_xmalloc(n, sizeof *s->state);
    s->nin = surety_xcalloc(m, sizeof *s->nin);
    s->load = surety_xcalloc(m * N, sizeof *s->load);
    s->ltot = surety_xcalloc(m, sizeof *s->ltot);
    s->wtot = surety_xcalloc(n, sizeof *s->wtot);
    s->dead = surety_xcalloc(G * N, 1);
    s->lw = surety_xmalloc(G * N, sizeof *s->lw);
    s->dead_w = surety_xcalloc(G, sizeof *s->dead_w);
    s->trail_cap = 2 * G * N + 16;
    s->trail = surety_xmalloc(s->trail_cap, sizeof *s->trail);
    s->saved_load = surety_xmalloc((nb + 1) * N, sizeof *s->saved_load);
    s->saved_dead_w = surety_xmalloc((nb + 1) * G, sizeof *s->saved_dead_w);
    s->frames = surety_xcalloc(nb + 1, sizeof *s->frames);
    s->ub = surety_xmalloc(N, sizeof *s->ub);
    s->ubw = surety_xmalloc(N, sizeof *s->ubw);
    s->kn = surety_xmalloc(m, sizeof *s->kn);
    s->ubv = surety_xcalloc(N, sizeof *s->ubv);
    s->ubt_l = surety_xmalloc((nb + 1) * N, sizeof *s->ubt_l);
    s->ubt_v = surety_xmalloc((nb + 1) * N, sizeof *s->ubt_v);
    /* a child recomputes at most 2(b+1)+16 scenarios (bound.c), b <= k */
    s->rlcap = 2 * (s->k + 1) + 16 < N ? 2 * (s->k + 1) + 16 : N;
    s->rl = surety_xmalloc((nb + 2) * (s->rlcap ? s->rlcap : 1), sizeof *s->rl);
    s->rln = surety_xmalloc(nb + 2, sizeof *s->rln);
    /* zeroed: possible_pairs writes only the rows of the order's jobs */
    s->pxs = surety_xcalloc((nb + 2) * n * m, 1);
    s->pxo = surety_xmalloc((nb + 2) * n * m, sizeof *s->pxo);
    s->ppmark = surety_xmalloc(nb + 2, sizeof *s->ppmark);
    s->died = surety_xmalloc(s->trail_cap, sizeof *s->died);
    s->ropen = surety_xmalloc(m, 1);
    s->jk = surety_xcalloc(n, 1);
    s->freec = surety_xmalloc(n, sizeof *s->freec);
    s->pbits = surety_xcalloc(n, sizeof *s->pbits);
    s->kfit = surety_xcalloc(n, 1);
    s->rix = surety_xmalloc(N, sizeof *s->rix);
    s->open_bound = surety_xmalloc(nb + 1, sizeof *s->open_bound);
    s->tplan = surety_xmalloc(n, sizeof *s->tplan);
    s->tfix = surety_xmalloc(n, sizeof *s->tfix);
    if (!s->state || !s->nin || !s->load || !s->lw || !s->ltot || !s->wtot ||
        !s->dead || !s->dead_w || !s->trail || !s->saved_load ||
        !s->saved_dead_w || !s->frames || !s->ub || !s->ubw || !s->kn ||
        !s->ubv || !s->ubt_l || !s->ubt_v || !s->rl || !s->rln || !s->pxs ||
        !s->pxo || !s->ppmark || !s->died || !s->ropen || !s->jk ||
        !s->freec || !s->pbits || !s->kfit || !s->rix || !s->open_bound ||
        !s->tplan || !s->tfix)
        return -1;
    for (size_t e = 0; e < G * N; e++)
        s->lw[e] = s->cnt[e % N];
    for (size_t j = 0; j < n; j++) {
        s->state[j] = SURETY_JOB_OUT;
        for (size_t l = 0; l < N; l++)
            s->wtot[j] += s->wt[j * N + l];
    }
    for (size_t t = 0; t < nb; t++)
        s->state[s->order[t]] = SURETY_JOB_FREE;
    for (size_t d = 0; d <= nb; d++)
        s->open_bound[d] = -INFINITY;
    s->req_left = 0;
    s->req_profit = 0;
    for (size_t j = 0; j < n; j++)
        if (s->required[j]) {
            s->req_left++;
            s->req_profit += s->p[j];
        }
    return 0;
}

static surety_result *result_new(void)
{
    surety_result *r = surety_xcalloc(1, sizeof *r);
    if (!r)
        return NULL;
    r->stop = SURETY_STOP_FINISHED;
    r->status = SURETY_UNKNOWN;
    r->objective = NAN;
    r->bound = INFINITY;
    r->gap = INFINITY;
    return r;
}

surety_code surety_solve(const surety_model *model, const surety_scenarios *sc,
                         const surety_solve_options *opt, surety_result **out,
                         surety_error *err)
{
    return surety_solve_inner(model, sc, opt, 0, out, err);
}

static surety_code solve_run(const surety_model *model,
                             const surety_scenarios *sc,
                             const surety_solve_options *opt, int light,
                             surety_dec_watch watch, void *watch_ctx,
                             surety_result **out, surety_error *err)
{
    if (out)
        *out = NULL;
    if (!model || !sc || !out) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "surety_solve needs a model, scenarios and a result "
                         "pointer");
        return SURETY_EUSAGE;
    }
    if (model->n == 0 || model->m == 0) {
        surety_error_set(err, model->path, 0, 0,
                         model->n == 0 ? "jobs" : "resources",
                         "the model has no %s; there is nothing to plan",
                         model->n == 0 ? "jobs" : "resources");
        return SURETY_EINPUT;
    }
    if (sc->n != model->n || sc->N == 0) {
        surety_error_set(err, NULL, 0, 0, "scenarios",
                         sc->N == 0 ? "the scenario set is empty"
                                    : "the scenario set has %zu jobs, the "
                                      "model %zu",
                         sc->n, model->n);
        return SURETY_EUSAGE;
    }
    surety_solve_options defaults;
    if (!opt) {
        surety_solve_options_init(&defaults);
        opt = &defaults;
    }
    if (opt->scenario_cost) {
        if (model->constraint != SURETY_JOINT) {
            surety_error_set(err, NULL, 0, 0, "scenario_cost",
                             "scenario costs need the joint constraint");
            return SURETY_EUSAGE;
        }
        for (size_t l = 0; l < sc->N; l++)
            if (!(opt->scenario_cost[l] >= 0 &&
                  opt->scenario_cost[l] < INFINITY)) {
                surety_error_set(err, NULL, 0, 0, "scenario_cost",
                                 "scenario %zu has cost %g; costs must be "
                                 "finite and at least 0",
                                 l + 1, opt->scenario_cost[l]);
                return SURETY_EUSAGE;
            }
    }

    surety_solver s;
    memset(&s, 0, sizeof s);
    s.model = model;
    s.sc = sc;
    s.opt = opt;
    s.t0 = surety_solve_now();
    s.last_log = s.t0;
    s.root_bound = INFINITY;
    s.lp_root = INFINITY;
    s.dec_root = INFINITY;
    s.dec_rule_inc = -INFINITY;
    s.root_cap = INFINITY;
    s.dec_watch = watch;
    s.dec_watch_ctx = watch_ctx;

    surety_result *res = result_new();
    if (!res) {
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    int infeasible = 0;
    surety_code rc = surety_presolve_run(&s, res->reason, sizeof res->reason,
                                         &infeasible, err);
    if (rc != SURETY_OK)
        goto fail;
    res->k = s.k;
    res->searched = s.N;
    s.inc_plan = surety_xmalloc(s.n, sizeof *s.inc_plan);
    if (!s.inc_plan || search_alloc(&s) != 0) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "out of memory for the search (%zu jobs, %zu "
                         "scenarios)", s.n, s.N);
        rc = SURETY_EINTERNAL;
        goto fail;
    }
    logf_(&s, SURETY_LOG_INFO,
          "solve: %zu jobs (%zu to decide), %zu resources, %zu scenarios "
          "(%zu distinct, %zu searched), allowance %zu, %s",
          s.n, s.nb, s.m, s.N0, s.N + s.N_aside, s.N, s.k,
          s.separate ? "separate" : "joint");
    if (s.N_aside)
        logf_(&s, SURETY_LOG_INFO,
              "solve: %zu distinct scenarios set aside: every plan that "
              "fails at most %zu scenarios fits them (dominated by other "
              "scenarios, or fitting every plan)", s.N_aside, s.k);
    if (opt->threads > 1) {
        size_t th = (size_t)opt->threads < s.m ? (size_t)opt->threads : s.m;
        if (th > SURETY_DEC_MAX_THREADS)
            th = SURETY_DEC_MAX_THREADS;
        if (th > 1)
            logf_(&s, SURETY_LOG_INFO,
                  "threads: the decomposition's one-resource solves run on "
                  "up to %zu threads at once; the tree search runs on one",
                  th);
        else
            logf_(&s, SURETY_LOG_INFO,
                  "threads: one resource, no decomposition: the search runs "
                  "on one thread");
    }

    if (!infeasible) {
        /* the empty plan, a caller's plan, then the greedy + local search */
        if (s.req_left == 0) {
            for (size_t j = 0; j < s.n; j++)
                s.tplan[j] = SURETY_JOB_OUT;
            surety_solve_offer(&s, s.tplan);
        }
        if (opt->start && opt->start->n == s.n &&
            surety_solve_offer(&s, opt->start->resource))
            logf_(&s, SURETY_LOG_INFO, "starting plan accepted: %.6f", s.inc);
        memcpy(s.tfix, s.state, s.n * sizeof *s.tfix);
        if (surety_heur_complete(&s, s.tfix, s.tplan, !light))
            surety_solve_offer(&s, s.tplan);
        if (surety_bound_init(&s, light) != 0) {
            surety_error_set(err, NULL, 0, 0, NULL,
                             "out of memory for the bound (%zu jobs, %zu "
                             "scenarios)", s.n, s.N);
            rc = SURETY_EINTERNAL;
            goto fail;
        }
        {
            /* improvement runs in the tree: about 15% of the work of the
             * 1024 nodes between two runs, taking a node as the knapsacks
             * its bound evaluates (bound.c: the quantile window of the
             * joint bound, and with the per-resource bound one per
             * resource and scenario) and an iteration as a greedy repair
             * over every resource and scenario */
            double win = s.separate ? 0
                                    : 2.0 * (double)(s.k + 1) + 16 +
                                          (double)s.N / 32;
            double per = s.use_lagr ? (double)s.m * (double)s.N : 0;
            double node = (win + per) * (double)(s.ncand + 1);
            double iter = 2.0 * (double)s.m * (double)s.N * (double)(s.ncand + 1);
            double it = 0.15 * 1024 * node / iter;
            s.hiters = it < 1 ? 1 : it > 64 ? 64 : (size_t)it;
            s.hseed = 0x1a5eedULL ^ (uint64_t)s.N * 0x9e3779b97f4a7c15ULL;
        }
        {
            /* the nodes (or their work) after which the root LP, the
             * decomposition and the parts start, unless the caller says */
            const long after = 65536;
            s.dec_after = opt->decomp_after == 0 ? after : opt->decomp_after;
            /* by default no root LP where the decomposition bound starts by
             * the LP's own trigger: its first round is already below the
             * LP on the 40-job instances, and the LP's 1.6-3.9 s at 1000
             * scenarios pruned no node and ruled out no pair there
             * (bench/README.md, "The decomposition's share raised to four
             * fifths"); unless the rounds prove costly, as with 60 jobs
             * and more, where the LP is the better bound by far (tree.c,
             * lp_due, which sets the LP up then, if it is small) */
            int dec_runs = s.dec_after > 0 && s.dec_after <= after &&
                           s.m >= 2 && opt->dive_nodes >= 0;
            s.lp_after = opt->lp_after != 0 ? opt->lp_after
                         : dec_runs && opt->lp_restored <= 0 ? -1
                                                         : after;
            s.lp_costly = opt->lp_after == 0 && s.lp_after < 0 &&
                          opt->dive_nodes >= 0;
            s.lp_nodes = opt->lp_restored > 0;
            s.dec_nodes_on = !opt->decomp_root_only;
            s.lns_after = opt->improve_after == 0 ? after
                                                  : opt->improve_after;
            if (opt->scenario_cost)
                s.lns_after = -1; /* the parts' searches price no failures */
            int lr = s.lp_after > 0 && opt->dive_nodes >= 0
                         ? surety_lpb_init(&s)
                         : 1;
            if (lr != 0)
                surety_lpb_free(&s);
            if (lr < 0) {
                surety_error_set(err, NULL, 0, 0, NULL,
                                 "out of memory for the LP bound");
                rc = SURETY_EINTERNAL;
                goto fail;
            }
        }
        logf_(&s, SURETY_LOG_INFO,
              "root bounds: aggregated %.6f, per resource %.6f%s",
              s.root_agg, s.root_lagr,
              s.use_lagr ? "" : " (aggregated used in the tree)");
        if (s.have_inc)
            surety_solve_log_progress(&s, 1, 'H');
        double open = surety_tree_search(&s);
        if (s.stop) {
            /* open subtrees, and plans within the pruning tolerance of
             * the incumbent (fixings may have cut those) */
            res->stop = (surety_stop)(s.stop - 1);
            double b = surety_cutoff(&s);
            res->bound = open > b ? open : b;
        } else {
            res->stop = SURETY_STOP_FINISHED;
            /* every pruned node had a bound at most the final cutoff */
            res->bound = surety_cutoff(&s);
        }
    } else {
        res->stop = SURETY_STOP_FINISHED;
        res->bound = -INFINITY;
    }

    if (s.have_inc) {
        /* independent final recount; a plan that fails it is withheld */
        size_t fit = 0;
        if (!plan_valid(&s, s.inc_plan, &fit)) {
            surety_error_set(err, NULL, 0, 0, NULL,
                             "internal error: the best plan failed its "
                             "final recount");
            rc = SURETY_EINTERNAL;
            goto fail;
        }
        res->plan = surety_xmalloc(1, sizeof *res->plan);
        long *r = surety_xmalloc(s.n, sizeof *r);
        if (!res->plan || !r) {
            surety_xfree(r);
            surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
            rc = SURETY_EINTERNAL;
            goto fail;
        }
        memcpy(r, s.inc_plan, s.n * sizeof *r);
        res->plan->n = s.n;
        res->plan->resource = r;
        res->fit = fit;
        res->objective = s.inc;
        if (res->bound < s.inc)
            res->bound = s.inc;
        res->status = res->stop == SURETY_STOP_FINISHED ? SURETY_OPTIMAL
                                                        : SURETY_FEASIBLE;
        res->gap = rel_gap(res->objective, res->bound);
    } else if (res->stop == SURETY_STOP_FINISHED) {
        res->status = SURETY_INFEASIBLE;
        if (!res->reason[0]) {
            char names[400];
            size_t used = 0, shown = 0;
            names[0] = '\0';
            for (size_t j = 0; j < s.n && shown < 6; j++)
                if (s.required[j]) {
                    int w = snprintf(names + used, sizeof names - used, "%s%s",
                                     shown ? ", " : "", model->jobs[j].id);
                    if (w < 0 || (size_t)w >= sizeof names - used)
                        break;
                    used += (size_t)w;
                    shown++;
                }
            snprintf(res->reason, sizeof res->reason,
                     "no placement of the required jobs (%s%s) fits %zu of "
                     "the %zu scenarios; at most %zu may fail",
                     names, s.req_left > shown ? ", ..." : "", s.N0 - s.k,
                     s.N0, s.k);
        }
    } else {
        res->status = SURETY_UNKNOWN;
    }
    res->nodes = s.nodes;
    res->knaps = s.knaps;
    res->seconds = surety_solve_now() - s.t0;
    if (s.lp_solves)
        logf_(&s, SURETY_LOG_INFO,
              "LP bound: root %.6f, %ld solves, %ld iterations, %ld nodes "
              "bounded by it, %ld pruned, %ld pairs ruled out",
              s.lp_root, s.lp_solves, s.lp_iters, s.lp_bounded, s.lp_prunes,
              s.lp_fixed);
    if (s.dec_iters)
        logf_(&s, SURETY_LOG_INFO,
              "decomposition bound: %.6f, %ld price rounds, %ld nodes in "
              "their one-resource solves, %.2f s (bundle steps %.2f s, %ld "
              "plans made from the rounds' plans %.2f s); %ld better plans "
              "made from the rounds' plans",
              s.dec_root, s.dec_iters, s.dec_nodes[SURETY_DEC_ROUNDS],
              s.dec_secs[SURETY_DEC_ROUNDS], s.dec_master_secs, s.dec_made,
              s.dec_heur_secs, s.dec_found);
    if (s.dec_ended)
        logf_(&s, SURETY_LOG_INFO,
              "decomposition: ended after its first price round, costly and "
              "above the root LP's bound");
    if (s.dec_twins)
        logf_(&s, SURETY_LOG_INFO,
              "decomposition: %ld one-resource solves answered by an "
              "identical resource's at the same prices",
              s.dec_twins);
    if (s.dec_probes)
        logf_(&s, SURETY_LOG_INFO,
              "decomposition probes: %ld one-resource solves with one job "
              "forced in or kept out, %ld pairs ruled out; %ld nodes, %.2f s",
              s.dec_probes, s.dec_ruled, s.dec_nodes[SURETY_DEC_PROBES],
              s.dec_secs[SURETY_DEC_PROBES]);
    if (s.dec_nsolves)
        logf_(&s, SURETY_LOG_INFO,
              "decomposition at restored nodes: %ld one-resource solves, "
              "%ld nodes pruned; %ld more answered by an identical "
              "resource's; %ld nodes, %.2f s; %ld restored nodes left "
              "without them, at distances where they took off little",
              s.dec_nsolves, s.dec_npruned, s.dec_ntwins,
              s.dec_nodes[SURETY_DEC_NODES], s.dec_secs[SURETY_DEC_NODES],
              s.dec_nleft);
    if (s.pc_state > 0)
        logf_(&s, SURETY_LOG_INFO,
              "decomposition parts bounded at the nodes: %ld nodes cut off",
              s.pc_cuts);
    if (s.lns_parts)
        logf_(&s, SURETY_LOG_INFO,
              "parts of the best plan searched again: %ld parts, %ld nodes, "
              "%.2f s; %ld better plans; at the end they were allowed %.6g "
              "of the tree's work",
              s.lns_parts, s.lns_nodes, s.lns_secs, s.lns_found,
              s.lns_share);
    if (s.lns_kept)
        logf_(&s, SURETY_LOG_DEBUG,
              "parts that kept a placed job the search leaves out: %ld",
              s.lns_kept);
    logf_(&s, SURETY_LOG_INFO,
          "solve: %s (%s), objective %.6f, bound %.6f, %ld nodes, %.2f s",
          surety_status_name(res->status), surety_stop_name(res->stop),
          res->objective, res->bound, res->nodes, res->seconds);
    solver_free(&s);
    *out = res;
    return SURETY_OK;
fail:
    solver_free(&s);
    surety_result_free(res);
    return rc;
}

surety_code surety_solve_inner(const surety_model *model,
                               const surety_scenarios *sc,
                               const surety_solve_options *opt, int light,
                               surety_result **out, surety_error *err)
{
    return solve_run(model, sc, opt, light, NULL, NULL, out, err);
}

#ifdef SURETY_CHECK_INVARIANTS
double surety_chk_completion(const surety_solver *s)
{
    return surety_chk_completion_on(s, s->pxs);
}

double surety_chk_completion_on(const surety_solver *s,
                                const unsigned char *px)
{
    size_t n = s->n, m = s->m;
    const surety_model *full = s->model;
    surety_job *jobs = surety_xcalloc(n, sizeof *jobs);
    unsigned char *al = surety_xcalloc(n * m, 1);
    double best = NAN;
    if (!jobs || !al)
        goto done;
    for (size_t j = 0; j < n; j++) {
        long st = s->state[j];
        jobs[j] = full->jobs[j];
        jobs[j].allowed = al + j * m;
        for (size_t i = 0; i < m; i++)
            al[j * m + i] = st == SURETY_JOB_FREE
                                ? full->jobs[j].allowed[i] && px[j * m + i]
                                : st == (long)i;
        if (st >= 0)
            jobs[j].required = 1;
    }
    surety_model copy = *full;
    copy.jobs = jobs;
    surety_solve_options o;
    surety_solve_options_init(&o);
    o.decomp_after = -1;
    o.scenario_cost = s->opt->scenario_cost;
    surety_result *r = NULL;
    if (surety_solve(&copy, s->sc, &o, &r, NULL) == SURETY_OK &&
        surety_result_status(r) == SURETY_OPTIMAL)
        best = surety_result_objective(r);
    surety_result_free(r);
done:
    surety_xfree(jobs);
    surety_xfree(al);
    return best;
}
#endif

surety_code surety_solve_watched(const surety_model *model,
                                 const surety_scenarios *sc,
                                 const surety_solve_options *opt,
                                 surety_dec_watch watch, void *watch_ctx,
                                 surety_result **out, surety_error *err)
{
    return solve_run(model, sc, opt, 0, watch, watch_ctx, out, err);
}

void surety_result_free(surety_result *res)
{
    if (!res)
        return;
    if (res->plan) {
        surety_xfree(res->plan->resource);
        surety_xfree(res->plan);
    }
    surety_xfree(res);
}

surety_stop surety_result_stop(const surety_result *res)
{
    return res ? res->stop : SURETY_STOP_FINISHED;
}
surety_status surety_result_status(const surety_result *res)
{
    return res ? res->status : SURETY_UNKNOWN;
}
double surety_result_objective(const surety_result *res)
{
    return res ? res->objective : NAN;
}
double surety_result_bound(const surety_result *res)
{
    return res ? res->bound : INFINITY;
}
double surety_result_gap(const surety_result *res)
{
    return res ? res->gap : INFINITY;
}

unsigned long long surety_result_knaps(const surety_result *res)
{
    return res ? res->knaps : 0;
}

long surety_result_nodes(const surety_result *res)
{
    return res ? res->nodes : 0;
}
double surety_result_seconds(const surety_result *res)
{
    return res ? res->seconds : 0;
}
const surety_plan *surety_result_plan(const surety_result *res)
{
    return res ? res->plan : NULL;
}
size_t surety_result_fit(const surety_result *res)
{
    return res ? res->fit : 0;
}
size_t surety_result_allowance(const surety_result *res)
{
    return res ? res->k : 0;
}
size_t surety_result_searched(const surety_result *res)
{
    return res ? res->searched : 0;
}
const char *surety_result_reason(const surety_result *res)
{
    return res ? res->reason : "";
}
