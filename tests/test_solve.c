/* test_solve.c - the exact solver against outside references: exhaustive
 * enumeration (own independent code), CBC on the same model written as a
 * MIP, and the toy instance of METHODS.md s.7.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "model.h"
#include "plan.h"
#include "sample.h"
#include "solve_gen.h"
#include "surety.h"

/* ---- independent reference code (shares nothing with src/solve) ---- */

/* Mean profit of job j over the scenarios. */
static double job_value(const surety_scenarios *sc, size_t j)
{
    double t = 0;
    for (size_t l = 0; l < sc->N; l++)
        t += sc->profit[l * sc->n + j];
    return t / (double)sc->N;
}

static double plan_value(const surety_scenarios *sc, const long *plan)
{
    double v = 0;
    for (size_t j = 0; j < sc->n; j++)
        if (plan[j] >= 0)
            v += job_value(sc, j);
    return v;
}

/* Whether the plan satisfies the sampled chance constraint, counted
 * scenario by scenario with the capacity test of DESIGN.md: resource i
 * holds iff hours_factor_i * (sum of its jobs' base hours) <= capacity_i. */
static int plan_ok(const surety_model *md, const surety_scenarios *sc,
                   const long *plan)
{
    size_t n = md->n, m = md->m, N = sc->N;
    size_t k = surety_allowance(md->risk, N);
    for (size_t j = 0; j < n; j++) {
        if (plan[j] < 0 && md->jobs[j].required)
            return 0;
        if (plan[j] >= 0 && !md->jobs[j].allowed[plan[j]])
            return 0;
    }
    size_t joint_fail = 0, res_fail[8] = {0};
    for (size_t l = 0; l < N; l++) {
        int fail = 0;
        for (size_t i = 0; i < m; i++) {
            double sum = 0;
            for (size_t j = 0; j < n; j++)
                if (plan[j] == (long)i)
                    sum += sc->hours[l * n + j];
            if (!(md->resources[i].hours_factor * sum <=
                  md->resources[i].capacity)) {
                fail = 1;
                res_fail[i]++;
            }
        }
        joint_fail += fail;
    }
    if (md->constraint == SURETY_JOINT)
        return joint_fail <= k;
    for (size_t i = 0; i < m; i++)
        if (res_fail[i] > k)
            return 0;
    return 1;
}

/* Exhaustive enumeration of all (m+1)^n plans; returns 1 and the best value
 * when some plan is feasible. */
static int brute_force(const surety_model *md, const surety_scenarios *sc,
                       double *best)
{
    size_t n = md->n, m = md->m;
    long plan[16];
    size_t total = 1;
    for (size_t j = 0; j < n; j++)
        total *= m + 1;
    int found = 0;
    for (size_t code = 0; code < total; code++) {
        size_t c = code;
        for (size_t j = 0; j < n; j++) {
            plan[j] = (long)(c % (m + 1)) - 1;
            c /= m + 1;
        }
        if (!plan_ok(md, sc, plan))
            continue;
        double v = plan_value(sc, plan);
        if (!found || v > *best)
            *best = v;
        found = 1;
    }
    return found;
}

static surety_result *solve_ok(const surety_model *md,
                               const surety_scenarios *sc,
                               const surety_solve_options *opt)
{
    surety_result *res = NULL;
    surety_error err;
    surety_error_clear(&err);
    surety_code rc = surety_solve(md, sc, opt, &res, &err);
    cr_assert_eq(rc, SURETY_OK, "surety_solve failed: %s", err.message);
    cr_assert_not_null(res);
    return res;
}

/* The result is consistent: a reported plan passes the independent count
 * and its value is the reported objective; the bound is not below it. */
static void check_result(const surety_model *md, const surety_scenarios *sc,
                         const surety_result *res)
{
    const surety_plan *pl = surety_result_plan(res);
    surety_status st = surety_result_status(res);
    if (st == SURETY_OPTIMAL || st == SURETY_FEASIBLE) {
        cr_assert_not_null(pl);
        cr_assert(plan_ok(md, sc, pl->resource),
                  "reported plan fails the independent count");
        double v = plan_value(sc, pl->resource);
        cr_assert(fabs(v - surety_result_objective(res)) <=
                      1e-9 * (1 + fabs(v)),
                  "objective %.12g but plan value %.12g",
                  surety_result_objective(res), v);
        cr_assert(surety_result_bound(res) >=
                      surety_result_objective(res) - 1e-9 * (1 + fabs(v)),
                  "bound below objective");
    } else {
        cr_assert_null(pl);
    }
}

/* ---- METHODS.md s.7 toy instance (optima by exhaustive enumeration,
 * as stated there) ---- */

static surety_model *toy_model(double eps)
{
    static const double profit[5] = {10, 7, 6, 5, 4};
    surety_model *md = surety_xcalloc(1, sizeof *md);
    md->name = surety_xstrdup("toy");
    md->risk = eps;
    md->N = 6;
    md->n = 5;
    md->m = 2;
    md->jobs = surety_xcalloc(5, sizeof *md->jobs);
    md->resources = surety_xcalloc(2, sizeof *md->resources);
    for (size_t j = 0; j < 5; j++) {
        char id[8];
        snprintf(id, sizeof id, "J%zu", j);
        md->jobs[j].id = surety_xstrdup(id);
        md->jobs[j].profit.kind = SURETY_PROFIT_FIXED;
        md->jobs[j].profit.fixed = profit[j];
        md->jobs[j].allowed = surety_xcalloc(2, 1);
        md->jobs[j].allowed[0] = md->jobs[j].allowed[1] = 1;
    }
    md->resources[0].id = surety_xstrdup("bin0");
    md->resources[0].capacity = 10;
    md->resources[0].hours_factor = 1;
    md->resources[1].id = surety_xstrdup("bin1");
    md->resources[1].capacity = 8;
    md->resources[1].hours_factor = 1;
    return md;
}

static surety_scenarios *toy_scenarios(void)
{
    static const double w[6][5] = {
        {5, 4, 3, 3, 2}, {6, 4, 3, 2, 2}, {4, 5, 4, 3, 1},
        {7, 3, 3, 4, 2}, {5, 6, 2, 3, 3}, {8, 4, 5, 2, 2},
    };
    static const double profit[5] = {10, 7, 6, 5, 4};
    surety_scenarios *sc = surety_xcalloc(1, sizeof *sc);
    sc->N = 6;
    sc->n = 5;
    sc->hours = surety_xmalloc(30, sizeof *sc->hours);
    sc->profit = surety_xmalloc(30, sizeof *sc->profit);
    for (size_t l = 0; l < 6; l++)
        for (size_t j = 0; j < 5; j++) {
            sc->hours[l * 5 + j] = w[l][j];
            sc->profit[l * 5 + j] = profit[j];
        }
    return sc;
}

Test(solve, toy_instance_of_methods)
{
    /* METHODS.md s.7: optimal profit 25, 26, 28, 32 for k = 0, 1, 2, >= 3
     * (exhaustive enumeration) */
    static const double expect[6] = {25, 26, 28, 32, 32, 32};
    surety_scenarios *sc = toy_scenarios();
    for (size_t k = 0; k < 6; k++) {
        surety_model *md = toy_model(((double)k + 0.5) / 6);
        cr_assert_eq(surety_allowance(md->risk, 6), k);
        surety_result *res = solve_ok(md, sc, NULL);
        cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
        cr_assert_float_eq(surety_result_objective(res), expect[k], 1e-9,
                           "k=%zu: %g", k, surety_result_objective(res));
        check_result(md, sc, res);
        double bf;
        cr_assert(brute_force(md, sc, &bf));
        cr_assert_float_eq(bf, expect[k], 1e-9);
        surety_result_free(res);
        surety_model_destroy(md);
    }
    solve_gen_scenarios_free(sc);
}

/* ---- random tiny instances against exhaustive enumeration ---- */

static uint64_t mix(uint64_t x)
{
    return solve_gen_splitmix(&x);
}

static void random_params(solve_gen_params *p, uint64_t seed, size_t maxn,
                          size_t maxm, size_t maxN)
{
    solve_gen_rng r;
    solve_gen_seed(&r, seed);
    memset(p, 0, sizeof *p);
    p->m = 1 + solve_gen_next(&r) % maxm;
    p->n = 1 + solve_gen_next(&r) % maxn;
    p->N = 1 + solve_gen_next(&r) % maxN;
    static const double eps[] = {0.01, 0.05, 0.1, 0.2, 0.3, 0.5, 0.9};
    p->eps = eps[solve_gen_next(&r) % 7];
    p->separate = solve_gen_unif(&r) < 0.3;
    p->tightness = 0.2 + 1.0 * solve_gen_unif(&r);
    p->dist = (solve_gen_dist)(solve_gen_next(&r) % 3);
    p->p_required = solve_gen_unif(&r) < 0.4 ? 0.25 * solve_gen_unif(&r) : 0;
    p->p_forbid = solve_gen_unif(&r) < 0.5 ? 0.4 * solve_gen_unif(&r) : 0;
    p->p_negative = solve_gen_unif(&r) < 0.3 ? 0.3 : 0;
    p->equal_resources = solve_gen_unif(&r) < 0.4;
    p->noise = solve_gen_unif(&r) < 0.5 ? 0.2 : 0;
    p->seed = seed;
}

Test(solve, brute_force_tiny)
{
    int infeasible = 0, empty = 0;
    for (uint64_t t = 0; t < 300; t++) {
        solve_gen_params p;
        random_params(&p, mix(1000 + t), 8, 3, 14);
        if (p.n == 8 && p.m == 3)
            p.n = 7;
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        surety_result *res = solve_ok(md, sc, NULL);
        check_result(md, sc, res);
        if (!feas) {
            infeasible++;
            cr_assert_eq(surety_result_status(res), SURETY_INFEASIBLE,
                         "instance %lu: enumeration finds no plan but the "
                         "solver says %s", (unsigned long)t,
                         surety_status_name(surety_result_status(res)));
            cr_assert(strlen(surety_result_reason(res)) > 0);
        } else {
            empty += bf == 0;
            cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL,
                         "instance %lu: status %s", (unsigned long)t,
                         surety_status_name(surety_result_status(res)));
            cr_assert(fabs(surety_result_objective(res) - bf) <=
                          1e-9 * (1 + fabs(bf)),
                      "instance %lu (n=%zu m=%zu N=%zu k=%zu %s): solver "
                      "%.12g, enumeration %.12g",
                      (unsigned long)t, p.n, p.m, p.N,
                      surety_allowance(p.eps, p.N),
                      p.separate ? "separate" : "joint",
                      surety_result_objective(res), bf);
        }
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    /* the generator must exercise both kinds of edge case */
    cr_assert(infeasible > 0, "no infeasible instance generated");
    cr_assert(empty > 0, "no instance where the empty plan is optimal");
}
