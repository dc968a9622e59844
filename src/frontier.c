/* frontier.c - profit against reliability: the optimal sampled plan per risk
 * level, each checked out of sample on the same fresh scenarios.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "check.h"
#include "clock.h"
#include "fileio.h"
#include "model.h"

void surety_frontier_options_init(surety_frontier_options *opt)
{
    if (!opt)
        return;
    memset(opt, 0, sizeof *opt);
    opt->samples = 10000;
    opt->confidence = 0.95;
    surety_solve_options_init(&opt->solve);
}

void surety_frontier_report_free(surety_frontier_report *rep)
{
    if (!rep)
        return;
    for (size_t p = 0; p < rep->npoints; p++)
        surety_plan_free(rep->point[p].plan);
    surety_xfree(rep->point);
    memset(rep, 0, sizeof *rep);
}

static void point_clear(surety_frontier_point *pt, double risk)
{
    memset(pt, 0, sizeof *pt);
    pt->risk = risk;
    pt->status = SURETY_UNKNOWN;
    pt->objective = NAN;
    pt->bound = NAN;
    pt->reliability = pt->lo = pt->hi = pt->lower = NAN;
    pt->profit_mean = NAN;
    pt->overload_hours = NAN;
}

/* Invariant used for the warm start: the sampled constraint is monotone in
 * the allowance, so on a fixed scenario set a plan that fails at most
 * floor(e1*N) scenarios also satisfies any e2 >= e1. Solving the levels from
 * the smallest risk upward lets each plan seed the next search with a
 * feasible incumbent (and makes the in-sample profits non-decreasing in
 * risk up to the solver's gap). */
surety_code surety_frontier(const surety_model *model, const double *risks,
                            size_t nrisks, const surety_frontier_options *opt,
                            surety_frontier_report *out, surety_error *err)
{
    if (out)
        memset(out, 0, sizeof *out);
    if (!model || !risks || !out || nrisks == 0) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "surety_frontier: model, risks and out are required");
        return SURETY_EUSAGE;
    }
    surety_frontier_options defaults;
    if (!opt) {
        surety_frontier_options_init(&defaults);
        opt = &defaults;
    }
    if (!(opt->confidence > 0 && opt->confidence < 1) || opt->samples == 0) {
        surety_error_set(err, NULL, 0, 0, "confidence",
                         "confidence must lie in (0,1) and samples be positive");
        return SURETY_EUSAGE;
    }
    for (size_t p = 0; p < nrisks; p++) {
        if (!(risks[p] > 0 && risks[p] < 1)) {
            surety_error_set(err, NULL, 0, 0, "risks",
                             "risk level %zu is %g; each must lie in (0,1)", p + 1, risks[p]);
            return SURETY_EUSAGE;
        }
    }
    surety_code code = SURETY_OK;
    size_t *order = surety_xmalloc(nrisks, sizeof *order);
    out->point = surety_xcalloc(nrisks, sizeof *out->point);
    if (!order || !out->point) {
        surety_xfree(order);
        surety_xfree(out->point);
        out->point = NULL;
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    out->npoints = nrisks;
    out->confidence = opt->confidence;
    for (size_t p = 0; p < nrisks; p++) {
        order[p] = p;
        point_clear(&out->point[p], risks[p]);
    }
    /* insertion sort by ascending risk: the list is short */
    for (size_t a = 1; a < nrisks; a++)
        for (size_t b = a; b > 0 && risks[order[b]] < risks[order[b - 1]]; b--) {
            size_t t = order[b];
            order[b] = order[b - 1];
            order[b - 1] = t;
        }

    double t0 = surety_clock_seconds();
    surety_scenarios *sc = NULL;
    code = surety_model_sample(model, &sc, err);
    out->sample_seconds = surety_clock_seconds() - t0;
    if (code)
        goto fail;
    out->N = surety_scenarios_count(sc);

    /* The levels vary only the risk: a shallow copy of the model shares
     * every array read-only, so the caller's model stays untouched. */
    surety_model level = *model;
    const surety_plan *prev = NULL;
    size_t m = surety_model_resources(model);
    for (size_t q = 0; q < nrisks; q++) {
        surety_frontier_point *pt = &out->point[order[q]];
        level.risk = pt->risk;
        pt->k = surety_allowance(pt->risk, out->N);
        surety_solve_options sopt = opt->solve;
        sopt.start = prev;
        surety_result *res = NULL;
        code = surety_solve(&level, sc, &sopt, &res, err);
        if (code)
            goto fail;
        pt->status = surety_result_status(res);
        pt->stop = surety_result_stop(res);
        pt->bound = surety_result_bound(res);
        pt->nodes = surety_result_nodes(res);
        pt->solve_seconds = surety_result_seconds(res);
        out->solve_seconds += pt->solve_seconds;
        const surety_plan *plan = surety_result_plan(res);
        if (plan) {
            pt->objective = surety_result_objective(res);
            pt->plan = surety_plan_copy(plan);
            if (!pt->plan) {
                surety_result_free(res);
                surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
                code = SURETY_EINTERNAL;
                goto fail;
            }
            pt->in_sample_ok = surety_plan_feasible(&level, pt->plan, sc);
            prev = pt->plan;
        }
        surety_result_free(res);
        if (!pt->plan)
            continue;

        /* Common random numbers: every level is checked on the same fresh
         * scenarios (SCREEN stream, so that a level picked from the
         * frontier can be checked afresh on the CHECK stream), and
         * differences between levels are not sampling noise of the
         * check. */
        surety_check_report rep;
        code = surety_check_fresh(&level, pt->plan, opt->samples, 0,
                                  opt->confidence, &rep, err);
        if (code)
            goto fail;
        pt->M = rep.M;
        pt->fit = rep.fit;
        pt->reliability = rep.reliability;
        pt->lo = rep.lo;
        pt->hi = rep.hi;
        pt->lower = rep.lower;
        pt->profit_mean = rep.profit_mean;
        pt->overload_hours = 0;
        for (size_t i = 0; i < m && i < rep.m; i++)
            pt->overload_hours += rep.resource[i].overload_hours_mean;
        out->sample_seconds += rep.sample_seconds;
        out->check_seconds += rep.check_seconds;
        surety_check_report_free(&rep);
        if (opt->solve.interrupt && *opt->solve.interrupt)
            break;
    }
    surety_scenarios_free(sc);
    surety_xfree(order);
    return SURETY_OK;
fail:
    surety_scenarios_free(sc);
    surety_xfree(order);
    surety_frontier_report_free(out);
    return code;
}

surety_code surety_frontier_write_csv(const surety_frontier_report *rep, const char *path,
                                      surety_error *err)
{
    if (!rep || !path) {
        surety_error_set(err, NULL, 0, 0, NULL, "surety_frontier_write_csv: report and path needed");
        return SURETY_EUSAGE;
    }
    surety_outfile f;
    surety_code code = surety_outfile_open(&f, path, err);
    if (code)
        return code;
    fprintf(f.fp, "risk,allowance,scenarios,status,profit_in_sample,bound,fresh_scenarios,"
                  "fresh_fit,reliability,reliability_lo,reliability_hi,reliability_lower,"
                  "confidence,profit_mean,overload_hours_mean,solve_seconds\n");
    for (size_t p = 0; p < rep->npoints; p++) {
        const surety_frontier_point *pt = &rep->point[p];
        fprintf(f.fp, "%.17g,%zu,%zu,%s,%.17g,%.17g,%zu,%zu,%.17g,%.17g,%.17g,%.17g,%.17g,"
                      "%.17g,%.17g,%.6f\n",
                pt->risk, pt->k, rep->N, surety_status_name(pt->status), pt->objective,
                pt->bound, pt->M, pt->fit, pt->reliability, pt->lo, pt->hi, pt->lower,
                rep->confidence, pt->profit_mean, pt->overload_hours, pt->solve_seconds);
    }
    return surety_outfile_commit(&f, err);
}
