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

/* only part of the shared CBC bridge is used here */
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wunused-function"
#include "cbc_util.h"
#pragma GCC diagnostic pop
#include "model.h"
#include "plan.h"
#include "sample.h"
#include "solve/solve.h"
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
 * holds iff hours_factor_i * (sum of its jobs' base hours) <= capacity_i,
 * with the relative slack of 1e-12 that src/plan.h allows for rounding. */
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
                  md->resources[i].capacity * (1 + 1e-12))) {
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

/* The cost of the scenarios in which the plan overloads some resource,
 * counted with plan_ok's test (0 without costs). */
static double plan_fail_cost(const surety_model *md,
                             const surety_scenarios *sc, const long *plan,
                             const double *cost)
{
    double c = 0;
    for (size_t l = 0; cost && l < sc->N; l++) {
        int fail = 0;
        for (size_t i = 0; i < md->m; i++) {
            double sum = 0;
            for (size_t j = 0; j < md->n; j++)
                if (plan[j] == (long)i)
                    sum += sc->hours[l * md->n + j];
            if (!(md->resources[i].hours_factor * sum <=
                  md->resources[i].capacity * (1 + 1e-12)))
                fail = 1;
        }
        if (fail)
            c += cost[l];
    }
    return c;
}

/* Exhaustive enumeration of all (m+1)^n plans; returns 1 and the best value
 * (mean profit, less the costs of the failed scenarios when `cost` is
 * given) when some plan is feasible. */
static int brute_force_cost(const surety_model *md,
                            const surety_scenarios *sc, const double *cost,
                            double *best)
{
    size_t n = md->n, m = md->m, total = 1;
    long plan[16];
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
        double v = plan_value(sc, plan) - plan_fail_cost(md, sc, plan, cost);
        if (!found || v > *best)
            *best = v;
        found = 1;
    }
    return found;
}

static int brute_force(const surety_model *md, const surety_scenarios *sc,
                       double *best)
{
    return brute_force_cost(md, sc, NULL, best);
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

/* The objective of a solve that must end proven optimal. */
static double proven_optimum(const surety_model *md,
                             const surety_scenarios *sc,
                             const surety_solve_options *opt)
{
    surety_result *res = solve_ok(md, sc, opt);
    cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
    double v = surety_result_objective(res);
    surety_result_free(res);
    return v;
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

/* A model of n jobs with fixed profits, each allowed in all m resources
 * (hours factor 1), named J0.. and by rid. */
static surety_model *fixed_model(const char *name, double eps, size_t N,
                                 size_t n, const double *profit, size_t m,
                                 const char *const *rid, const double *cap)
{
    surety_model *md = surety_xcalloc(1, sizeof *md);
    md->name = surety_xstrdup(name);
    md->risk = eps;
    md->N = N;
    md->n = n;
    md->m = m;
    md->jobs = surety_xcalloc(n, sizeof *md->jobs);
    md->resources = surety_xcalloc(m, sizeof *md->resources);
    for (size_t j = 0; j < n; j++) {
        char id[8];
        snprintf(id, sizeof id, "J%zu", j);
        md->jobs[j].id = surety_xstrdup(id);
        md->jobs[j].profit.kind = SURETY_PROFIT_FIXED;
        md->jobs[j].profit.fixed = profit[j];
        md->jobs[j].allowed = surety_xcalloc(m, 1);
        memset(md->jobs[j].allowed, 1, m);
    }
    for (size_t i = 0; i < m; i++) {
        md->resources[i].id = surety_xstrdup(rid[i]);
        md->resources[i].capacity = cap[i];
        md->resources[i].hours_factor = 1;
    }
    return md;
}

/* Scenarios of n jobs whose scenario l takes row[l] of the table w
 * (n hours each) and the fixed profits. */
static surety_scenarios *table_scenarios(size_t N, size_t n, const double *w,
                                         const size_t *row,
                                         const double *profit)
{
    surety_scenarios *sc = surety_xcalloc(1, sizeof *sc);
    sc->N = N;
    sc->n = n;
    sc->hours = surety_xmalloc(N * n, sizeof *sc->hours);
    sc->profit = surety_xmalloc(N * n, sizeof *sc->profit);
    for (size_t l = 0; l < N; l++)
        for (size_t j = 0; j < n; j++) {
            sc->hours[l * n + j] = w[row[l] * n + j];
            sc->profit[l * n + j] = profit[j];
        }
    return sc;
}

static const double toy_profit[5] = {10, 7, 6, 5, 4};

static surety_model *toy_model(double eps)
{
    static const char *const rid[2] = {"bin0", "bin1"};
    static const double cap[2] = {10, 8};
    return fixed_model("toy", eps, 6, 5, toy_profit, 2, rid, cap);
}

static const double toy_hours[6][5] = {
    {5, 4, 3, 3, 2}, {6, 4, 3, 2, 2}, {4, 5, 4, 3, 1},
    {7, 3, 3, 4, 2}, {5, 6, 2, 3, 3}, {8, 4, 5, 2, 2},
};

static surety_scenarios *toy_scenarios(void)
{
    static const size_t row[6] = {0, 1, 2, 3, 4, 5};
    return table_scenarios(6, 5, &toy_hours[0][0], row, toy_profit);
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

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* The node bound's selection (bound.c, surety_select_weighted) against
 * its definition by sorting: the smallest value whose weights strictly
 * before it, in ascending order, sum to at most b and with it exceed b.
 * Weights all 1 take a path of their own (select_plain), other weights
 * the three-way partition; both must leave the arrays a permutation of
 * the (value, weight) pairs, as the children's list selects from them
 * again. Values with many ties (a few distinct levels, as scenarios whose
 * every open job fits give) and -INFINITY (infeasible scenarios) among
 * them. */
Test(solve, selection_is_the_order_statistic_of_the_sorted_values)
{
    solve_gen_rng r;
    solve_gen_seed(&r, 4242);
    enum { MAXC = 300 };
    double v[MAXC + 1], ref[MAXC], pairs[MAXC], back[MAXC];
    unsigned w[MAXC + 1], w0[MAXC];
    size_t plain = 0, weighted = 0;
    for (int rep = 0; rep < 3000; rep++) {
        size_t c = 1 + solve_gen_next(&r) % MAXC;
        unsigned levels = 1 + (unsigned)(solve_gen_next(&r) % 6);
        int unit = solve_gen_next(&r) % 2 == 0, ties = rep % 3 == 0;
        size_t tot = 0;
        for (size_t t = 0; t < c; t++) {
            double u = solve_gen_unif(&r);
            v[t] = ties ? (double)(solve_gen_next(&r) % levels) : u * 100;
            if (solve_gen_next(&r) % 50 == 0)
                v[t] = -INFINITY;
            w[t] = unit ? 1 : 1 + (unsigned)(solve_gen_next(&r) % 4);
            w0[t] = w[t];
            tot += w[t];
            /* each (value, weight) pair as one number, to compare the
             * pairs before and after */
            pairs[t] = v[t] == -INFINITY ? -1e9 - w[t] : v[t] * 8 + w[t];
        }
        size_t b = solve_gen_next(&r) % tot; /* total weight > b */
        v[c] = 12345.5; /* past the end: must stay as it is */
        w[c] = 7;
        /* by sorting: values in ascending order, weights summed along */
        size_t ord[MAXC];
        for (size_t t = 0; t < c; t++)
            ord[t] = t;
        for (size_t a = 1; a < c; a++) /* insertion sort by value */
            for (size_t u = a; u > 0 && v[ord[u - 1]] > v[ord[u]]; u--) {
                size_t x = ord[u];
                ord[u] = ord[u - 1];
                ord[u - 1] = x;
            }
        double want = NAN;
        size_t acc = 0;
        for (size_t t = 0; t < c; t++) {
            acc += w0[ord[t]];
            if (acc > b) {
                want = v[ord[t]];
                break;
            }
        }
        memcpy(ref, pairs, c * sizeof *ref);
        qsort(ref, c, sizeof *ref, cmp_double);
        double got = surety_select_weighted(v, w, c, b);
        cr_assert(got == want, "c=%zu b=%zu unit=%d: %g, by sorting %g", c,
                  b, unit, got, want);
        cr_assert(v[c] == 12345.5 && w[c] == 7, "c=%zu: written past c", c);
        /* still the same pairs */
        for (size_t t = 0; t < c; t++)
            back[t] = v[t] == -INFINITY ? -1e9 - w[t] : v[t] * 8 + w[t];
        qsort(back, c, sizeof *back, cmp_double);
        cr_assert(memcmp(back, ref, c * sizeof *ref) == 0,
                  "c=%zu: the arrays are no longer a permutation", c);
        if (unit)
            plain++;
        else
            weighted++;
    }
    cr_assert(plain > 1000 && weighted > 1000);
}

/* A load equal to its capacity in decimal fits (src/plan.h): in binary
 * 1.35 x 11 = 14.850000000000001 > 14.85, which the test's relative slack
 * of 1e-12 absorbs. The case is the minimised fuzzer model of
 * bench/results/fuzz-s21 (rows (3, 6) and (6, 5), k = 0); optima by hand:
 * both jobs fit in both scenarios, so 5 + 4 = 9; with the capacity 1e-9
 * relative lower, the scenario of 11 hours overloads and the better job
 * alone, 5, is optimal. */
Test(solve, a_load_equal_to_its_capacity_in_decimal_fits)
{
    volatile double factor = 1.35, eleven = 11, cap = 14.85;
    cr_assert(factor * eleven > cap, "the premise: the product rounds up");
    static const double profit[2] = {5, 4};
    static const double w[2][2] = {{3, 6}, {6, 5}};
    static const size_t row[2] = {0, 1};
    static const char *const rid[1] = {"R0"};
    static const double expect[2] = {9, 5};
    for (int low = 0; low < 2; low++) {
        double c = low ? 14.85 * (1 - 1e-9) : 14.85;
        surety_model *md = fixed_model("decimal", 0.01, 2, 2, profit, 1,
                                       rid, &c);
        md->resources[0].hours_factor = 1.35;
        surety_scenarios *sc = table_scenarios(2, 2, &w[0][0], row, profit);
        surety_result *res = solve_ok(md, sc, NULL);
        cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
        cr_assert_float_eq(surety_result_objective(res), expect[low], 1e-12,
                           "capacity %.17g: %g", c,
                           surety_result_objective(res));
        check_result(md, sc, res);
        double bf;
        cr_assert(brute_force(md, sc, &bf));
        cr_assert_float_eq(bf, expect[low], 1e-12);
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
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

Test(solve, brute_force_many_scenarios)
{
    /* N in the hundreds: the search reuses parent bounds for scenarios far
     * from the quantile and keeps hundreds of dead-scenario flags on its
     * trail; the optimum must still equal exhaustive enumeration */
    for (uint64_t t = 0; t < 40; t++) {
        solve_gen_params p;
        random_params(&p, mix(3000 + t), 7, 3, 300);
        p.N += 100;
        p.n = 5 + t % 3;
        p.eps = t % 2 ? 0.05 : 0.1;
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        surety_result *res = solve_ok(md, sc, NULL);
        check_result(md, sc, res);
        cr_assert_eq(surety_result_status(res),
                     feas ? SURETY_OPTIMAL : SURETY_INFEASIBLE);
        if (feas)
            cr_assert(fabs(surety_result_objective(res) - bf) <=
                          1e-9 * (1 + fabs(bf)),
                      "instance %lu (n=%zu m=%zu N=%zu %s): solver %.12g, "
                      "enumeration %.12g", (unsigned long)t, p.n, p.m, p.N,
                      p.separate ? "separate" : "joint",
                      surety_result_objective(res), bf);
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
}

/* Solves with `o` and asserts the outcome enumeration found: optimal
 * with the enumerated value (feas), or infeasible. */
/* As solve_ok, with `light` as the sub-solves use it (the root's greedy
 * without its local search). */
static surety_result *solve_ok_light(const surety_model *md,
                                     const surety_scenarios *sc,
                                     const surety_solve_options *opt,
                                     int light)
{
    surety_result *res = NULL;
    surety_error err;
    surety_error_clear(&err);
    cr_assert_eq(surety_solve_inner(md, sc, opt, light, &res, &err),
                 SURETY_OK, "surety_solve_inner failed: %s", err.message);
    cr_assert_not_null(res);
    return res;
}

static void expect_enumerated_light(const surety_model *md,
                                    const surety_scenarios *sc,
                                    const surety_solve_options *o,
                                    const solve_gen_params *p, uint64_t t,
                                    int feas, double bf, const char *what,
                                    int light)
{
    surety_result *res = light ? solve_ok_light(md, sc, o, 1)
                               : solve_ok(md, sc, o);
    check_result(md, sc, res);
    cr_assert_eq(surety_result_status(res),
                 feas ? SURETY_OPTIMAL : SURETY_INFEASIBLE,
                 "instance %lu, %sdives of %ld: status %s", (unsigned long)t,
                 what, o->dive_nodes,
                 surety_status_name(surety_result_status(res)));
    if (feas)
        cr_assert(fabs(surety_result_objective(res) - bf) <=
                      1e-9 * (1 + fabs(bf)),
                  "instance %lu (n=%zu m=%zu N=%zu %s), %sdives of %ld: "
                  "solver %.12g, enumeration %.12g",
                  (unsigned long)t, p->n, p->m, p->N,
                  p->separate ? "separate" : "joint", what, o->dive_nodes,
                  surety_result_objective(res), bf);
    surety_result_free(res);
}

static void expect_enumerated(const surety_model *md,
                              const surety_scenarios *sc,
                              const surety_solve_options *o,
                              const solve_gen_params *p, uint64_t t, int feas,
                              double bf, const char *what)
{
    expect_enumerated_light(md, sc, o, p, t, feas, bf, what, 0);
}

/* Presolve sets aside the scenarios every feasible plan fits (presolve.c,
 * set_aside_fitted). Scenario l's hours are (l+1) times (1, 2, 3), so each
 * scenario dominates the lighter ones; with k = 2 the seven lightest are
 * dominated by at least k+1 = 3 others. Optimum by hand (and enumeration):
 * a plan fits 8 of the 10 scenarios only if it fits the 8th lightest, 8 x
 * its base hours <= 20, so the best is job J1 alone, profit 5. */
Test(solve, dominated_scenarios_are_set_aside)
{
    static const double base[3] = {1, 2, 3}, profit[3] = {3, 5, 4};
    static const char *const rid[1] = {"bay"};
    static const double cap[1] = {20};
    surety_model *md = fixed_model("chain", 0.25, 10, 3, profit, 1, rid, cap);
    /* row r holds (r+1) x base; stored out of order (scenario l takes row
     * 7l mod 10): the rule must not rely on it */
    double w[10][3];
    size_t row[10];
    for (size_t r = 0; r < 10; r++)
        for (size_t j = 0; j < 3; j++)
            w[r][j] = (double)(r + 1) * base[j];
    for (size_t l = 0; l < 10; l++)
        row[l] = (l * 7) % 10;
    surety_scenarios *sc = table_scenarios(10, 3, &w[0][0], row, profit);
    cr_assert_eq(surety_allowance(md->risk, 10), 2);
    double bf;
    cr_assert(brute_force(md, sc, &bf));
    cr_assert_float_eq(bf, 5, 1e-12);
    for (int keep = 0; keep <= 1; keep++) {
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.keep_dominated = keep;
        surety_result *res = solve_ok(md, sc, &o);
        check_result(md, sc, res);
        cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
        cr_assert_float_eq(surety_result_objective(res), 5, 1e-9);
        cr_assert_eq(surety_result_searched(res), keep ? 10u : 3u,
                     "keep=%d: %zu scenarios searched", keep,
                     surety_result_searched(res));
        surety_result_free(res);
    }
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

/* Duplicate rows are merged (found by hash, confirmed element by element,
 * -0.0 equal to +0.0): the toy's six rows, some repeated, one with a zero
 * written as -0.0 in its copy. With every scenario kept, the search works
 * on the six distinct rows, and the optimum is the enumerated one. */
Test(solve, duplicate_scenarios_are_merged)
{
    double w[6][5];
    memcpy(w, toy_hours, sizeof w);
    w[0][4] = 0;
    static const size_t rows[11] = {0, 1, 0, 2, 3, 3, 5, 3, 4, 5, 0};
    surety_scenarios *sc = table_scenarios(11, 5, &w[0][0], rows, toy_profit);
    sc->hours[10 * 5 + 4] = -0.0;
    for (size_t k = 0; k < 4; k++) {
        surety_model *md = toy_model(((double)k + 0.5) / 11);
        md->N = 11;
        double bf;
        cr_assert(brute_force(md, sc, &bf));
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.keep_dominated = 1;
        surety_result *res = solve_ok(md, sc, &o);
        check_result(md, sc, res);
        cr_assert_eq(surety_result_searched(res), 6u, "k=%zu: %zu searched",
                     k, surety_result_searched(res));
        cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
        cr_assert_float_eq(surety_result_objective(res), bf, 1e-9,
                           "k=%zu: %g, enumeration %g", k,
                           surety_result_objective(res), bf);
        surety_result_free(res);
        surety_model_destroy(md);
    }
    solve_gen_scenarios_free(sc);
}

/* The same rule on random instances with few jobs, where dominance in a
 * sample is common (whole hours give ties and equal rows on the jobs that
 * matter): with and without it the answer equals enumeration. */
Test(solve, setting_dominated_scenarios_aside_keeps_the_optimum)
{
    size_t aside = 0, with_aside = 0;
    for (uint64_t t = 0; t < 80; t++) {
        solve_gen_params p;
        random_params(&p, mix(9000 + t), 6, 3, 250);
        p.N += 20;
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        size_t searched[2];
        for (int keep = 0; keep <= 1; keep++) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.keep_dominated = keep;
            o.dive_nodes = t % 3 == 0 ? -1 : 0;
            surety_result *res = solve_ok(md, sc, &o);
            searched[keep] = surety_result_searched(res);
            surety_result_free(res);
            expect_enumerated(md, sc, &o, &p, t, feas, bf,
                              keep ? "all scenarios kept, " : "");
        }
        cr_assert_leq(searched[0], searched[1]);
        aside += searched[1] - searched[0];
        with_aside += searched[0] < searched[1];
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    /* the instances must exercise the rule */
    cr_assert_geq(with_aside, 20, "only %zu instances set scenarios aside",
                  with_aside);
    cr_assert_gt(aside, 0);
}

/* The best-bound pool: dives of 1 or 3 nodes send almost every open
 * child through the pool (restored from the root, bounds recomputed
 * without parent rows), and depth-first only (< 0) never does; all must
 * find the enumerated optimum. */
Test(solve, short_dives_and_depth_first_agree_with_enumeration)
{
    static const long dives[] = {1, 3, -1};
    for (uint64_t t = 0; t < 120; t++) {
        solve_gen_params p;
        random_params(&p, mix(5000 + t), 8, 3, t % 4 == 0 ? 200 : 30);
        if (p.n == 8 && p.m == 3)
            p.n = 7;
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        for (size_t v = 0; v < sizeof dives / sizeof *dives; v++) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.dive_nodes = dives[v];
            expect_enumerated(md, sc, &o, &p, t, feas, bf, "");
        }
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
}

/* Larger trees (the greedy plans rarely are optimal here, so the search
 * itself must find the optimum): every dive length reaches the optimum of
 * the depth-first search, which the tests above check against enumeration
 * and CBC. */
Test(solve, best_bound_pool_keeps_the_optimum_on_larger_trees)
{
    static const long dives[] = {1, 7, 100};
    for (uint64_t t = 0; t < 8; t++) {
        solve_gen_params p = {.n = 14 + t % 3, .m = 2 + t % 2, .N = 60 + 20 * (t % 3),
                              .eps = t % 2 ? 0.05 : 0.1, .tightness = 0.5,
                              .dist = SOLVE_GEN_LOGNORMAL, .separate = t % 4 == 3,
                              .seed = mix(13000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.dive_nodes = -1;
        double opt = proven_optimum(md, sc, &o);
        for (size_t v = 0; v < sizeof dives / sizeof *dives; v++) {
            o.dive_nodes = dives[v];
            surety_result *res = solve_ok(md, sc, &o);
            check_result(md, sc, res);
            cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
            cr_assert(fabs(surety_result_objective(res) - opt) <=
                          1e-9 * (1 + fabs(opt)),
                      "instance %lu, dives of %ld: %.12g, depth first %.12g",
                      (unsigned long)t, dives[v], surety_result_objective(res),
                      opt);
            surety_result_free(res);
        }
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
}

/* ---- the LP bound (lpbound.c) ---- */

/* Reads the root LP value from the solver's log line. */
/* Catches the value of the log line that `format` reads. */
typedef struct lp_log {
    const char *format;
    double value;
    int seen;
} lp_log;

static void catch_line(void *ctx, surety_log_level level, const char *line)
{
    (void)level;
    lp_log *g = ctx;
    if (sscanf(line, g->format, &g->value) == 1)
        g->seen = 1;
}

/* The LP bound at the root after one node and at every node restored
 * from the pool (dives of 1 and 3 nodes send nearly every node there),
 * with reduced-cost fixing: the optimum must still be the enumerated
 * one, joint and separate. */
Test(solve, lp_bound_keeps_the_enumerated_optimum)
{
    static const long dives[] = {1, 3};
    int lp_runs = 0;
    for (uint64_t t = 0; t < 120; t++) {
        solve_gen_params p;
        random_params(&p, mix(17000 + t), 8, 3, t % 4 == 0 ? 120 : 30);
        if (p.n == 8 && p.m == 3)
            p.n = 7;
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        for (size_t v = 0; v < sizeof dives / sizeof *dives; v++) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.dive_nodes = dives[v];
            o.lp_after = 1;
            o.lp_restored = 1;
            lp_log g = {"LP bound: root %lf", 0, 0};
            o.log = catch_line;
            o.log_ctx = &g;
            expect_enumerated(md, sc, &o, &p, t, feas, bf, "LP bound, ");
            lp_runs += g.seen;
        }
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    /* most instances close at the root; enough must reach the LP */
    cr_assert(lp_runs >= 40, "the LP bound ran in only %d solves", lp_runs);
}

/* Larger trees with the LP at every restored node, against the search
 * without it; the node limit keeps the slow LP variant short, and a
 * stopped run must still report a bound at least the optimum. */
Test(solve, lp_bound_on_larger_trees)
{
    for (uint64_t t = 0; t < 8; t++) {
        solve_gen_params p = {.n = 14 + t % 3, .m = 2 + t % 2, .N = 60 + 20 * (t % 3),
                              .eps = t % 2 ? 0.05 : 0.1, .tightness = 0.5,
                              .dist = SOLVE_GEN_LOGNORMAL, .separate = t % 4 == 3,
                              .seed = mix(19000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_result *plain = solve_ok(md, sc, NULL);
        cr_assert_eq(surety_result_status(plain), SURETY_OPTIMAL);
        double opt = surety_result_objective(plain);
        for (long lim = 0; lim <= 64; lim += 16) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.dive_nodes = 7;
            o.lp_after = 1;
            o.lp_restored = 1;
            o.node_limit = lim;
            surety_result *res = solve_ok(md, sc, &o);
            check_result(md, sc, res);
            cr_assert(surety_result_bound(res) >= opt - 1e-9 * (1 + fabs(opt)),
                      "instance %lu, node limit %ld: bound %.10g below the "
                      "optimum %.10g", (unsigned long)t, lim,
                      surety_result_bound(res), opt);
            if (surety_result_status(res) == SURETY_OPTIMAL)
                cr_assert(fabs(surety_result_objective(res) - opt) <=
                              1e-9 * (1 + fabs(opt)),
                          "instance %lu: LP bound %.12g, without %.12g",
                          (unsigned long)t, surety_result_objective(res), opt);
            else
                cr_assert(lim > 0 && surety_result_objective(res) <=
                                         opt + 1e-9 * (1 + fabs(opt)));
            surety_result_free(res);
        }
        surety_result_free(plain);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
}

/* ---- scenario costs (surety_solve_options.scenario_cost) ---- */

/* Random instances (joint; one to three resources) with random costs on a
 * random share of the scenarios, against enumeration, under every search
 * order, with the decomposition from the first node, and under node
 * limits (then the plan must be feasible and no better than the optimum,
 * its objective its own value, the bound at least the optimum). Costs
 * are of the order of a job's profit, so they change the optimum on many
 * instances; the test requires that on at least 30. */
Test(solve, scenario_costs_keep_the_enumerated_optimum)
{
    int changed = 0;
    for (uint64_t t = 0; t < 150; t++) {
        solve_gen_params p;
        random_params(&p, mix(31000 + t), 8, 3, t % 5 == 0 ? 80 : 30);
        p.separate = 0;
        if (p.n == 8 && p.m == 3)
            p.n = 7;
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        solve_gen_rng r;
        solve_gen_seed(&r, mix(32000 + t));
        double scale = 0;
        for (size_t j = 0; j < md->n; j++)
            scale += fabs(job_value(sc, j)) / (double)md->n;
        double share = solve_gen_unif(&r), *cost = surety_xmalloc(sc->N, sizeof *cost);
        for (size_t l = 0; l < sc->N; l++)
            cost[l] = solve_gen_unif(&r) < share
                          ? 2 * scale * solve_gen_unif(&r)
                          : 0;
        if (t % 7 == 3 && sc->N > 1)
            /* a duplicate of scenario 0 with its own cost: merged rows
             * carry the sum */
            memcpy(sc->hours + 1 * md->n, sc->hours, md->n * sizeof *sc->hours);
        double bf = 0, plain = 0;
        int feas = brute_force_cost(md, sc, cost, &bf);
        brute_force(md, sc, &plain);
        changed += feas && fabs(plain - bf) > 1e-9 * (1 + fabs(bf));
        for (int v = 0; v < 5; v++) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.scenario_cost = cost;
            static const long dives[3] = {0, 1, -1};
            o.dive_nodes = dives[v % 3];
            if (v == 3 && md->m >= 2) {
                o.dive_nodes = 1;
                o.decomp_after = 1;
                o.decomp_rounds = 2;
            }
            long lim = v == 4 ? 1 + (long)(t % 9) : 0;
            o.node_limit = lim;
            surety_result *res = solve_ok(md, sc, &o);
            surety_status st = surety_result_status(res);
            const surety_plan *pl = surety_result_plan(res);
            if (!feas) {
                cr_assert(st == SURETY_INFEASIBLE || (lim > 0 && !pl),
                          "instance %lu: no feasible plan, status %d",
                          (unsigned long)t, (int)st);
            } else if (lim == 0) {
                cr_assert_eq(st, SURETY_OPTIMAL, "instance %lu v %d",
                             (unsigned long)t, v);
                cr_assert(fabs(surety_result_objective(res) - bf) <=
                              1e-9 * (1 + fabs(bf)),
                          "instance %lu v %d: %.12g, enumeration %.12g",
                          (unsigned long)t, v,
                          surety_result_objective(res), bf);
            }
            if (pl) {
                cr_assert(plan_ok(md, sc, pl->resource));
                double own = plan_value(sc, pl->resource) -
                             plan_fail_cost(md, sc, pl->resource, cost);
                cr_assert(fabs(own - surety_result_objective(res)) <=
                              1e-9 * (1 + fabs(own)),
                          "instance %lu v %d: objective %.12g, plan's own "
                          "value %.12g", (unsigned long)t, v,
                          surety_result_objective(res), own);
                cr_assert(own <= bf + 1e-9 * (1 + fabs(bf)));
            }
            if (feas)
                cr_assert(surety_result_bound(res) >=
                              bf - 1e-9 * (1 + fabs(bf)),
                          "instance %lu v %d: bound %.12g below the "
                          "optimum %.12g", (unsigned long)t, v,
                          surety_result_bound(res), bf);
            surety_result_free(res);
        }
        surety_xfree(cost);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_assert(changed >= 30, "costs changed the optimum of only %d", changed);
}

Test(solve, scenario_costs_are_checked)
{
    surety_scenarios *sc = toy_scenarios();
    surety_model *md = toy_model(0.2);
    double cost[6] = {0, 1, 2, NAN, 0, 0};
    surety_solve_options o;
    surety_solve_options_init(&o);
    o.scenario_cost = cost;
    surety_result *res = NULL;
    surety_error err;
    surety_error_clear(&err);
    cr_assert_eq(surety_solve(md, sc, &o, &res, &err), SURETY_EUSAGE);
    cost[3] = -1;
    cr_assert_eq(surety_solve(md, sc, &o, &res, &err), SURETY_EUSAGE);
    cost[3] = 3;
    md->constraint = SURETY_SEPARATE;
    cr_assert_eq(surety_solve(md, sc, &o, &res, &err), SURETY_EUSAGE);
    cr_assert_null(res);
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

/* ---- the resource-decomposition bound (decomp.c) ---- */

/* Catches two log lines' values. */
typedef struct two_logs {
    lp_log a, b;
} two_logs;

static void catch_two(void *ctx, surety_log_level level, const char *line)
{
    two_logs *g = ctx;
    catch_line(&g->a, level, line);
    catch_line(&g->b, level, line);
}

typedef struct three_logs {
    lp_log a, b, c;
} three_logs;

static void catch_three(void *ctx, surety_log_level level, const char *line)
{
    three_logs *g = ctx;
    catch_line(&g->a, level, line);
    catch_line(&g->b, level, line);
    catch_line(&g->c, level, line);
}

/* A random model of at least two resources for the decomposition's
 * tests, with its enumerated optimum (*bf; returns whether any plan is
 * feasible) and options that start the split after one node: dives of
 * one node, no LP. */
/* The model and scenarios of p, their enumerated optimum in *bf (the
 * return value: whether a plan is feasible), and options with the
 * decomposition from the first node, dives of one node and no LP. */
static int split_case_of(const solve_gen_params *p, surety_model **md,
                         surety_scenarios **sc, double *bf,
                         surety_solve_options *o)
{
    *md = solve_gen_model(p);
    *sc = solve_gen_scenarios(*md, p);
    *bf = 0;
    int feas = brute_force(*md, *sc, bf);
    surety_solve_options_init(o);
    o->dive_nodes = 1;
    o->decomp_after = 1;
    o->lp_after = -1;
    return feas;
}

static int split_case(uint64_t seed, size_t nmax, size_t Nmax,
                      solve_gen_params *p, surety_model **md,
                      surety_scenarios **sc, double *bf,
                      surety_solve_options *o)
{
    random_params(p, seed, nmax, 3, Nmax);
    if (p->m < 2)
        p->m = 2;
    if (p->n == 8 && p->m == 3 && nmax == 8)
        p->n = 7;
    return split_case_of(p, md, sc, bf, o);
}

/* Price rounds from the first node on, with dives of one node (every node
 * goes through the pool, where the rounds run): every answer must be the
 * enumerated one, joint and separate, with required jobs and forbidden
 * pairs (random_params). */
Test(solve, decomposition_bound_keeps_the_enumerated_optimum)
{
    int runs = 0, probed = 0;
    for (uint64_t t = 0; t < 120; t++) {
        solve_gen_params p;
        surety_model *md;
        surety_scenarios *sc;
        double bf;
        surety_solve_options o;
        int feas = split_case(mix(23000 + t), 8, t % 4 == 0 ? 120 : 30, &p,
                              &md, &sc, &bf, &o);
        o.decomp_rounds = 1 + (int)(t % 3); /* soon to the probes */
        o.decomp_jobs_only = t % 2 == 0;
        two_logs g = {{"decomposition bound: %lf", 0, 0},
                      {"decomposition probes: %lf", 0, 0}};
        o.log = catch_two;
        o.log_ctx = &g;
        expect_enumerated(md, sc, &o, &p, t, feas, bf, "decomposition, ");
        runs += g.a.seen;
        probed += g.b.seen;
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    /* most instances close at the root; enough must reach a round */
    cr_assert(runs >= 30, "the decomposition ran in only %d solves", runs);
    cr_log_info("rounds in %d solves, probes in %d", runs, probed);
}

/* The decomposition's end-of-run counts as its log lines give them: price
 * rounds, plans made from the rounds' plans and the better plans among
 * them, and the one-resource solves' nodes of the rounds, the probes and
 * the restored nodes. */
typedef struct dec_log {
    long rounds, made, found;
    long nodes[3]; /* SURETY_DEC_ROUNDS, _PROBES, _NODES in solve.h */
    int seen;      /* the rounds' line came */
} dec_log;

static void catch_dec(void *ctx, surety_log_level level, const char *line)
{
    (void)level;
    dec_log *g = ctx;
    if (sscanf(line,
               "decomposition bound: %*f, %ld price rounds, %ld nodes in "
               "their one-resource solves, %*f s (bundle steps %*f s, %ld "
               "plans made from the rounds' plans %*f s); %ld better plans",
               &g->rounds, &g->nodes[0], &g->made, &g->found) == 4)
        g->seen = 1;
    sscanf(line,
           "decomposition probes: %*d one-resource solves with one job "
           "forced in or kept out, %*d pairs ruled out; %ld nodes",
           &g->nodes[1]);
    sscanf(line,
           "decomposition at restored nodes: %*d one-resource solves, %*d "
           "nodes pruned; %*d more answered by an identical resource's; "
           "%ld nodes",
           &g->nodes[2]);
}

/* The scenario prices' share of a node's cap counts the node's dead
 * scenarios as failed (tree.c, dead_share): a completion that beats the
 * cutoff fails them, so its failed scenarios sum to at most their prices
 * plus the k - |dead| largest of the others. Joint models with the
 * scenario prices, rounds from the first node, dives of one or seven
 * nodes, high risk so that many scenarios die, and solved light (the
 * root's greedy without its local search) so that many nodes still beat
 * the cutoff when the share bites: every answer must be the enumerated
 * one. A share that drops the dead scenarios' own prices (the k - |dead|
 * largest alone) fails it. */
Test(solve, dead_scenarios_share_keeps_the_enumerated_optimum)
{
    int runs = 0;
    for (uint64_t t = 0; t < 160; t++) {
        /* three resources on nine jobs only: the enumeration's cost */
        size_t n = 9 + t % 3;
        solve_gen_params p = {.n = n, .m = n == 9 && t % 2 ? 3 : 2,
                              .N = 40 + 20 * (t % 4),
                              .eps = t % 3 ? 0.3 : 0.4,
                              .tightness = 0.4 + 0.1 * (double)(t % 4),
                              .dist = (solve_gen_dist)(t % 3),
                              .p_forbid = t % 4 == 3 ? 0.2 : 0,
                              .seed = mix(26000 + t)};
        surety_model *md;
        surety_scenarios *sc;
        double bf;
        surety_solve_options o;
        int feas = split_case_of(&p, &md, &sc, &bf, &o);
        o.dive_nodes = 1 + (long)(t % 2) * 6;
        o.decomp_rounds = 2 + (int)(t % 5) * 7;
        dec_log g = {0};
        o.log = catch_dec;
        o.log_ctx = &g;
        expect_enumerated_light(md, sc, &o, &p, t, feas, bf, "dead share, ",
                                1);
        runs += g.seen;
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_assert(runs >= 60, "the decomposition ran in only %d solves", runs);
    cr_log_info("rounds in %d solves", runs);
}


/* Plans made from the rounds' plans in `rounds` rounds when none is
 * better: rounds 1, 3, 7, then every 8th (decomp.c, price_round: the
 * gap doubles after each plan that finds nothing, up to 8 rounds). */
static long round_plans_without_gain(long rounds)
{
    long made = 0, due = 0, gap = 1;
    for (long r = 1; r <= rounds; r++)
        if (r >= due) {
            made++;
            gap = gap < 8 ? 2 * gap : 8;
            due = r + gap;
        }
    return made;
}

/* Each price round's one-resource plans made into a whole plan
 * (heur.c surety_heur_from: conflicts settled, jobs dropped to the joint
 * allowance, then the local search) and offered as an incumbent, every
 * round while they pay and further apart while they do not. Solved
 * light (the root's greedy without its local search, as sub-solves are),
 * so that the rounds' plans have incumbents to beat; the answers must be
 * the enumerated ones, some rounds' plans must have been taken, and
 * where none was, the plans must have been made on the rounds above
 * (the log line counts them). The invariant build also checks each such
 * plan against the library's count (decomp.c, round_plan). */
Test(solve, plans_from_price_rounds_keep_the_enumerated_optimum)
{
    int runs = 0, spaced = 0;
    double taken = 0;
    for (uint64_t t = 0; t < 120; t++) {
        solve_gen_params p;
        surety_model *md;
        surety_scenarios *sc;
        double bf;
        surety_solve_options o;
        int feas = split_case(mix(29000 + t), 9, t % 4 == 0 ? 120 : 40, &p,
                              &md, &sc, &bf, &o);
        o.decomp_subgradient = t % 3 == 0;
        dec_log g;
        memset(&g, 0, sizeof g);
        o.log = catch_dec;
        o.log_ctx = &g;
        expect_enumerated_light(md, sc, &o, &p, t, feas, bf, "light, ", 1);
        runs += g.seen;
        taken += (double)g.found;
        cr_assert(g.found <= g.made && g.made <= g.rounds,
                  "%ld better of %ld plans in %ld rounds", g.found, g.made,
                  g.rounds);
        if (g.seen && g.found == 0) {
            cr_assert_eq(g.made, round_plans_without_gain(g.rounds),
                         "%ld plans in %ld rounds", g.made, g.rounds);
            spaced += g.made < g.rounds;
        }
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("rounds in %d solves, %.0f plans taken from them; %d "
                "solves spaced their plans out", runs, taken, spaced);
    cr_assert(runs >= 30, "the decomposition ran in only %d solves", runs);
    cr_assert(taken >= 5, "only %.0f plans came from the rounds", taken);
    cr_assert(spaced >= 5, "only %d solves spaced their plans out", spaced);
}

/* Parts of the best plan searched again (lns.c) from the first node on,
 * with dives of one node so that the tree turns to its pool, and the
 * parts with it, after every node: half of a part's jobs are freed and
 * the others pinned, under the joint constraint only the scenarios the
 * other resources hold are searched, with what is left of the
 * allowance. The answers must be the enumerated ones, joint and
 * separate, with required jobs and forbidden pairs; enough solves must
 * search parts, and some parts must make better plans (the light solves
 * start from the greedy without its local search). */
Test(solve, parts_of_the_plan_keep_the_enumerated_optimum)
{
    int runs = 0;
    double parts = 0, found = 0;
    for (uint64_t t = 0; t < 240; t++) {
        solve_gen_params p;
        surety_model *md;
        surety_scenarios *sc;
        double bf;
        surety_solve_options o;
        int feas = split_case(mix(31000 + t), 9, t % 4 == 0 ? 120 : 40, &p,
                              &md, &sc, &bf, &o);
        o.decomp_after = -1;
        o.improve_after = 1;
        two_logs g = {{"parts of the best plan searched again: %lf parts",
                       0, 0},
                      {"parts of the best plan searched again: %*d parts, "
                       "%*d nodes, %*f s; %lf better plans",
                       0, 0}};
        o.log = catch_two;
        o.log_ctx = &g;
        expect_enumerated_light(md, sc, &o, &p, t, feas, bf, "light, ", 1);
        runs += g.a.seen;
        parts += g.a.seen ? g.a.value : 0;
        found += g.b.seen ? g.b.value : 0;
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("parts in %d solves: %.0f parts, %.0f better plans", runs,
                parts, found);
    cr_assert(runs >= 60, "parts were searched in only %d solves", runs);
    cr_assert(found >= 10, "only %.0f better plans came from %.0f parts",
              found, parts);
}

/* The parts' share of the tree's work (tree.c, lns_round) starts at a
 * quarter and halves after each twelve parts in a row that find no better
 * plan, down to a sixteenth of it, so that a search whose plan is already
 * the best pays little. Each search here starts from the best plan of a
 * longer search without parts and stops at a node limit; where its plan
 * stays that start (no part and nothing else found a better one), the
 * share after P parts must be exactly 0.25 / 2^min(floor(P/12), 4) (the
 * log line says it). With the halving left out it stays 0.25 and this
 * fails; enough searches must keep their start through 12 parts or more
 * (measured: 4 of 10, two of them through 24). */
Test(solve, parts_take_less_while_they_find_nothing)
{
    int kept = 0;
    for (uint64_t t = 0; t < 10; t++) {
        solve_gen_params p = {.n = 20 + t % 3, .m = 3, .N = 100,
                              .eps = 0.1, .tightness = 0.5,
                              .dist = (solve_gen_dist)(t % 2),
                              .seed = mix(31500 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.improve_after = -1;
        o.node_limit = 100000;
        surety_result *ref = solve_ok(md, sc, &o);
        const surety_plan *start = surety_result_plan(ref);
        cr_assert_not_null(start);
        o.start = start;
        o.improve_after = 1;
        o.node_limit = 120000;
        two_logs g = {{"parts of the best plan searched again: %lf parts", 0,
                       0},
                      {"parts of the best plan searched again: %*d parts, "
                       "%*d nodes, %*f s; %*d better plans; at the end they "
                       "were allowed %lf",
                       0, 0}};
        o.log = catch_two;
        o.log_ctx = &g;
        surety_result *res = solve_ok(md, sc, &o);
        check_result(md, sc, res);
        if (g.a.seen &&
            surety_result_objective(res) == surety_result_objective(ref)) {
            cr_assert(g.b.seen, "instance %lu: no share in the log",
                      (unsigned long)t);
            long halvings = (long)g.a.value / 12;
            double want = ldexp(0.25, -(int)(halvings < 4 ? halvings : 4));
            cr_assert(g.b.value == want,
                      "instance %lu: %.0f parts, share %g where %g is due",
                      (unsigned long)t, g.a.value, g.b.value, want);
            kept += g.a.value >= 12;
        }
        surety_result_free(res);
        surety_result_free(ref);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("%d searches kept their start through 12 parts or more",
                kept);
    cr_assert(kept >= 3, "only %d searches kept their start through 12 "
              "parts or more", kept);
}

/* The probes after the price rounds (one or two rounds here, so they come
 * soon): each pair's one-resource problem with the job forced in or kept
 * out caps every node that takes that decision, and pairs whose cap alone
 * cannot beat the incumbent leave the root's row. After them each node
 * restored from the pool may solve the resources' problems with all of
 * its decisions, which caps its subtree. On ten-job instances with trees
 * large enough for the probes to run, every answer must be the enumerated
 * one; enough solves must probe, some must rule pairs out, and restored
 * nodes must solve their own problems and prune by them (the log lines
 * say so). Some instances hold a job that no resource takes by the exact
 * count, though the search's margin lets it in. */
Test(solve, decomposition_probes_keep_the_enumerated_optimum)
{
    int probed = 0, restored = 0;
    double ruled = 0, pruned = 0;
    for (uint64_t t = 0; t < 200; t++) {
        /* two mixes: high risk with ample room (more probe caps bite),
         * and lower risk with tighter room (more pairs ruled out); the
         * last 80 are larger, under separate constraints, whose trees
         * run on after the probes */
        int hi = t % 2 == 0, big = t >= 120;
        solve_gen_params p = {.n = big ? 11 : 9 + t % 2, .m = 2,
                              .N = (hi ? 30 : 40) + (hi ? 10 : 20) * (t % 4),
                              .eps = hi ? (t % 3 ? 0.3 : 0.5)
                                        : (t % 3 ? 0.2 : 0.3),
                              .tightness = (hi ? 0.5 : 0.4) +
                                           0.1 * (double)(t % 3),
                              .dist = (solve_gen_dist)(t % 3),
                              .separate = t % 5 == 4 || big,
                              .p_required = t % 6 == 1 ? 0.15 : 0,
                              .p_forbid = t % 4 == 3 ? 0.2 : 0,
                              .p_negative = t % 7 == 2 ? 0.3 : 0,
                              .seed = mix(25000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        if (t % 6 == 5) {
            /* one job over a capacity by a relative 1e-10 in every
             * scenario: within the search's load margin (1e-9), so
             * presolve keeps the pair, but the count (slack 1e-12) rejects it, and a probe that
             * forces the job in finds no plan (a cap of -infinity) */
            size_t jj = t % p.n, ii = (t / 6) % p.m;
            md->jobs[jj].allowed[ii] = 1;
            const surety_resource *rs = &md->resources[ii];
            for (size_t l = 0; l < sc->N; l++)
                sc->hours[l * p.n + jj] =
                    rs->capacity / rs->hours_factor * (1 + 1e-10);
        }
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.dive_nodes = 1 + (long)(t % 2) * 6;
        o.decomp_after = 1;
        o.decomp_rounds = 1 + (int)(t % 2);
        o.decomp_jobs_only = t % 4 < 2;
        o.lp_after = -1;
        three_logs g = {{"decomposition probes: %lf", 0, 0},
                        {"decomposition probes: %*f one-resource solves with "
                         "one job forced in or kept out, %lf", 0, 0},
                        {"decomposition at restored nodes: %*f one-resource "
                         "solves, %lf", 0, 0}};
        o.log = catch_three;
        o.log_ctx = &g;
        expect_enumerated(md, sc, &o, &p, t, feas, bf, "probes, ");
        probed += g.a.seen;
        ruled += g.b.seen ? g.b.value : 0;
        restored += g.c.seen;
        pruned += g.c.seen ? g.c.value : 0;
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("probed %d solves, ruled out %g pairs; restored nodes "
                "solved in %d, %g pruned", probed, ruled, restored, pruned);
    cr_assert(probed >= 40, "the probes ran in only %d solves", probed);
    cr_assert(ruled >= 4, "probes ruled out only %g pairs", ruled);
    cr_assert(restored >= 5, "restored nodes solved in only %d solves",
              restored);
    cr_assert(pruned >= 50, "restored nodes' solves pruned only %g",
              pruned);
}

/* A restored node whose distance to the cutoff lies in a class where the
 * restored nodes' own solves seldom pruned is left without them (tree.c,
 * node_split), except one in a few, so that the class's count follows the
 * search. Leaving a node without its solves only leaves its cap higher,
 * so every answer must still be the enumerated one; with dives of one
 * node nearly every node is restored, and the rule must come into play
 * (the log line counts the nodes it left). */
Test(solve, restored_nodes_left_without_solves_keep_the_enumerated_optimum)
{
    double left = 0;
    int solved = 0;
    for (uint64_t t = 0; t < 40; t++) {
        solve_gen_params p = {.n = 10 + t % 2, .m = 2,
                              .N = 60 + 20 * (t % 4),
                              .eps = t % 3 ? 0.2 : 0.3,
                              .tightness = 0.5 + 0.1 * (double)(t % 3),
                              .dist = (solve_gen_dist)(t % 3),
                              .separate = t % 5 == 4,
                              .seed = mix(61000 + t)};
        surety_model *md;
        surety_scenarios *sc;
        surety_solve_options o;
        double bf;
        int feas = split_case_of(&p, &md, &sc, &bf, &o);
        o.decomp_rounds = 2;
        lp_log g = {"decomposition at restored nodes: %*f one-resource "
                    "solves, %*f nodes pruned; %*f more answered by an "
                    "identical resource's; %*f nodes, %*f s; %lf",
                    0, 0};
        o.log = catch_line;
        o.log_ctx = &g;
        expect_enumerated(md, sc, &o, &p, t, feas, bf, "restored, ");
        solved += g.seen;
        left += g.seen ? g.value : 0;
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("restored nodes solved in %d searches; %g left without "
                "their solves", solved, left);
    cr_assert(solved >= 5, "restored nodes solved in only %d searches",
              solved);
    cr_assert(left >= 20, "only %g restored nodes left without their solves",
              left);
}

/* The rounds' line counts the nodes of the rounds' one-resource solves
 * alone; the probes and the restored nodes have their own. A search that
 * a node limit stops soon after its rounds (20 nodes) and one allowed
 * 4000 run the same rounds (the search is the same under node limits),
 * so their rounds' nodes must agree, while the longer one's probes and
 * restored nodes may only have solved more. A count that also took in
 * the probes' and restored nodes' solves, as the rounds' line once did,
 * differs between the two wherever the longer search solved more. */
Test(solve, decomposition_work_is_counted_per_phase)
{
    int compared = 0, longer = 0;
    for (uint64_t t = 0; t < 60; t++) {
        solve_gen_params p;
        random_params(&p, mix(31000 + t), 1, 1, 1);
        p.n = 12 + t % 8;
        p.m = 2 + t % 3;
        p.N = 200;
        p.eps = 0.1;
        p.tightness = 0.4 + 0.05 * (double)(t % 5);
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.dive_nodes = 1;
        o.decomp_after = 1;
        o.lp_after = -1;
        o.decomp_rounds = 2;
        o.log = catch_dec;
        dec_log g[2];
        memset(g, 0, sizeof g);
        for (int r = 0; r < 2; r++) {
            o.node_limit = r ? 4000 : 20;
            o.log_ctx = &g[r];
            surety_result_free(solve_ok(md, sc, &o));
        }
        if (g[0].seen && g[1].seen && g[0].rounds == g[1].rounds) {
            compared++;
            cr_assert_eq(g[0].nodes[0], g[1].nodes[0],
                         "model %llu: the rounds' nodes %ld after 20 nodes, "
                         "%ld after 4000", (unsigned long long)t,
                         g[0].nodes[0], g[1].nodes[0]);
            for (int q = 1; q < 3; q++)
                cr_assert(g[1].nodes[q] >= g[0].nodes[q],
                          "model %llu, phase %d: %ld nodes after 20 nodes, "
                          "%ld after 4000", (unsigned long long)t, q,
                          g[0].nodes[q], g[1].nodes[q]);
            longer += g[1].nodes[1] + g[1].nodes[2] >
                      g[0].nodes[1] + g[0].nodes[2];
        }
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("%d models compared, %d solved more after the rounds",
                compared, longer);
    cr_assert(compared >= 10, "only %d models ran the same rounds",
              compared);
    cr_assert(longer >= 5, "only %d longer searches solved more after the "
              "rounds", longer);
}

/* The rounds' line and the root LP's line of one search. */
typedef struct dec_lp_log {
    dec_log dec;
    double dec_root; /* the best round's bound */
    double lp_root;
    int lp_seen;
    int ended; /* the rounds ended after a costly first one */
    long lp_nodes; /* nodes below the root bounded by the LP */
} dec_lp_log;

static void catch_lp(void *ctx, surety_log_level level, const char *line)
{
    dec_lp_log *g = ctx;
    catch_dec(&g->dec, level, line);
    sscanf(line, "decomposition bound: %lf,", &g->dec_root);
    long solves, iters;
    if (sscanf(line, "LP bound: root %lf, %ld solves, %ld iterations, %ld "
                     "nodes bounded by it,",
               &g->lp_root, &solves, &iters, &g->lp_nodes) >= 1)
        g->lp_seen = 1;
    if (strncmp(line, "decomposition: ended after its first price round",
                48) == 0)
        g->ended = 1;
}

/* One search of a generated model of n jobs, 3 resources and 60
 * scenarios, the decomposition from 2000 nodes on with at most `rounds`
 * price rounds, stopped after 40 000 nodes: its log lines in g, its bound
 * and value in bound and value. */
static void costly_run(size_t n, uint64_t seed, int rounds, dec_lp_log *g,
                       double *bound, double *value)
{
    solve_gen_params p;
    memset(&p, 0, sizeof p);
    p.n = n;
    p.m = 3;
    p.N = 60;
    p.eps = 0.05;
    p.tightness = 0.5;
    p.seed = seed;
    surety_model *md = solve_gen_model(&p);
    surety_scenarios *sc = solve_gen_scenarios(md, &p);
    surety_solve_options o;
    surety_solve_options_init(&o);
    o.decomp_after = 2000;
    o.decomp_rounds = rounds;
    o.node_limit = 40000;
    o.log = catch_lp;
    memset(g, 0, sizeof *g);
    o.log_ctx = g;
    surety_result *res = solve_ok(md, sc, &o);
    *bound = surety_result_bound(res);
    *value = surety_result_objective(res);
    surety_result_free(res);
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

/* Where the decomposition starts by default, the root LP is solved only
 * once the first price round has searched SURETY_LP_COSTLY (131 072)
 * one-resource nodes or more (tree.c, lp_due): with 60 jobs, rounds that
 * costly leave the LP the better bound by far. One round each, so that
 * the rounds' line gives the first round's nodes: the LP comes exactly
 * when they reach the mark, on models on both sides of it; and then the
 * reported bound is at most the LP's and at least the plan's value. */
Test(solve, root_lp_follows_a_costly_first_round)
{
    /* first rounds of about 36 000, 172 000 and 20 000 nodes */
    static const size_t jobs[] = {46, 50, 52};
    int costly = 0, cheap = 0;
    for (uint64_t t = 0; t < 3; t++) {
        dec_lp_log g;
        double bound, value;
        costly_run(jobs[t], mix(41001 + 2 * t), 1, &g, &bound, &value);
        cr_assert(g.dec.seen && g.dec.rounds == 1, "model %llu: no round",
                  (unsigned long long)t);
        cr_log_info("model %llu: first round %ld nodes, LP %s",
                    (unsigned long long)t, g.dec.nodes[0],
                    g.lp_seen ? "solved" : "not solved");
        cr_assert_eq(g.lp_seen, g.dec.nodes[0] >= 131072,
                     "model %llu: first round of %ld nodes, LP %s",
                     (unsigned long long)t, g.dec.nodes[0],
                     g.lp_seen ? "solved" : "not solved");
        cr_assert(bound >= value);
        if (g.lp_seen)
            cr_assert(bound <= g.lp_root + 1e-9 * (fabs(g.lp_root) + 1),
                      "model %llu: bound %.9g above the root LP's %.9g",
                      (unsigned long long)t, bound, g.lp_root);
        costly += g.lp_seen;
        cheap += !g.lp_seen;
    }
    cr_assert(costly >= 1 && cheap >= 1,
              "%d costly and %d cheap first rounds: the models no longer "
              "fall on both sides of the mark", costly, cheap);
}

/* After the LP that a costly first round called for, the decomposition
 * ends when that round's bound is above the LP's (tree.c,
 * costly_rounds_end), and only then; the best round's bound still caps
 * the reported one. Then, and only then, the LP also bounds the nodes at
 * the top of each dive (tree.c, SURETY_LP_NODES: these LPs, about 150
 * pairs times 60 scenarios, are small). Models with costly first rounds,
 * up to three rounds each. */
Test(solve, costly_rounds_end_above_the_root_lp)
{
    /* first rounds below and above the LP */
    static const size_t jobs[] = {48, 50};
    int ended = 0, lp = 0;
    for (uint64_t t = 0; t < 2; t++) {
        dec_lp_log g;
        double bound, value;
        costly_run(jobs[t], mix(41002 + t), 3, &g, &bound, &value);
        cr_log_info("model %llu: %ld rounds, %ld nodes, bound %.6f, LP %s "
                    "%.6f, %s", (unsigned long long)t, g.dec.rounds,
                    g.dec.nodes[0], g.dec_root, g.lp_seen ? "solved" : "not",
                    g.lp_root, g.ended ? "ended" : "not ended");
        cr_assert(g.dec.seen, "model %llu: no round", (unsigned long long)t);
        if (g.ended)
            cr_assert(g.lp_seen && g.dec.rounds == 1 &&
                          g.dec.nodes[0] >= 131072 && g.dec_root > g.lp_root,
                      "model %llu: ended without cause",
                      (unsigned long long)t);
        if (g.lp_seen && g.dec.rounds == 1 && g.dec_root > g.lp_root)
            cr_assert(g.ended, "model %llu: a round above the LP, not ended",
                      (unsigned long long)t);
        cr_assert_eq(g.lp_nodes > 0, g.ended,
                     "model %llu: rounds %s, %ld nodes bounded by the LP",
                     (unsigned long long)t, g.ended ? "ended" : "going on",
                     g.lp_nodes);
        cr_assert(bound >= value);
        cr_assert(bound <= g.dec_root + 1e-9 * (fabs(g.dec_root) + 1));
        if (g.lp_seen)
            cr_assert(bound <= g.lp_root + 1e-9 * (fabs(g.lp_root) + 1));
        ended += g.ended;
        lp += g.lp_seen;
    }
    cr_assert(ended == 1 && lp == 2,
              "%d of the models ended their rounds, %d solved the LP: they no "
              "longer fall on both sides of the LP", ended, lp);
}

/* opt->threads runs the decomposition's one-resource solves side by side
 * (decomp.c, run_subs). Each solve is deterministic and independent of
 * the others, so with the restored nodes' own solves off, a search on 1,
 * 2 and 3 threads must take the very same path: the same status, value,
 * bound, node count and probe count, to the last bit. With them on (the
 * default), a node may solve one resource more than it needs: the
 * answer must still be the enumerated optimum. */
Test(solve, threads_take_the_same_path)
{
    int compared = 0, probing = 0, restored = 0;
    double nsolves = 0;
    for (uint64_t t = 0; t < 48; t++) {
        int joint = t % 3 != 2;
        solve_gen_params p = {.n = t % 2 ? 7 : 8, .m = 3 + t % 2,
                              .N = 30 + 10 * (t % 3),
                              .eps = t % 2 ? 0.3 : 0.5,
                              .tightness = 0.5 + 0.1 * (double)(t % 3),
                              .dist = (solve_gen_dist)(t % 3),
                              .separate = !joint,
                              .p_required = t % 6 == 1 ? 0.15 : 0,
                              .p_forbid = t % 4 == 3 ? 0.2 : 0,
                              .seed = mix(27000 + t)};
        surety_model *md;
        surety_scenarios *sc;
        double bf;
        surety_solve_options o;
        int feas = split_case_of(&p, &md, &sc, &bf, &o);
        o.decomp_rounds = 1 + (int)(t % 4 == 3);
        o.decomp_root_only = 1;
        surety_result *r1 = NULL;
        double probes1 = 0;
        for (int th = 1; th <= 3; th++) {
            lp_log g = {"decomposition probes: %lf", 0, 0};
            o.threads = th;
            o.log = catch_line;
            o.log_ctx = &g;
            surety_result *r = solve_ok(md, sc, &o);
            check_result(md, sc, r);
            if (th == 1) {
                r1 = r;
                probes1 = g.seen ? g.value : -1;
                probing += g.seen;
                continue;
            }
            cr_assert_eq(surety_result_status(r), surety_result_status(r1),
                         "instance %lu, %d threads: status", (unsigned long)t,
                         th);
            cr_assert(surety_result_objective(r) ==
                              surety_result_objective(r1) ||
                          (isnan(surety_result_objective(r)) &&
                           isnan(surety_result_objective(r1))),
                      "instance %lu, %d threads: value %.17g against %.17g",
                      (unsigned long)t, th, surety_result_objective(r),
                      surety_result_objective(r1));
            cr_assert(surety_result_bound(r) == surety_result_bound(r1),
                      "instance %lu, %d threads: bound %.17g against %.17g",
                      (unsigned long)t, th, surety_result_bound(r),
                      surety_result_bound(r1));
            cr_assert_eq(surety_result_nodes(r), surety_result_nodes(r1),
                         "instance %lu, %d threads: %ld nodes against %ld",
                         (unsigned long)t, th, surety_result_nodes(r),
                         surety_result_nodes(r1));
            cr_assert(probes1 == (g.seen ? g.value : -1),
                      "instance %lu, %d threads: %g probes against %g",
                      (unsigned long)t, th, g.seen ? g.value : -1, probes1);
            compared++;
            surety_result_free(r);
        }
        surety_result_free(r1);
        lp_log g = {"decomposition at restored nodes: %lf", 0, 0};
        o.log = catch_line;
        o.log_ctx = &g;
        o.decomp_root_only = 0;
        o.threads = 2;
        expect_enumerated(md, sc, &o, &p, t, feas, bf, "two threads, ");
        restored += g.seen && g.value > 0;
        nsolves += g.seen ? g.value : 0;
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("%d runs compared, %d of 48 models probed; on two threads "
                "restored nodes solved in %d models, %g solves",
                compared, probing, restored, nsolves);
    cr_assert(probing >= 12, "only %d models reached the probes", probing);
    cr_assert(restored >= 3 && nsolves >= 100,
              "restored nodes solved in only %d models, %g solves", restored,
              nsolves);
}

/* Searches stopped by node and time limits soon after the rounds begin
 * must report a bound at least the optimum (the rounds cap every open
 * node); and the bound must do its job: on these instances, where the
 * quantile bound is far from the optimum, the stopped searches with the
 * rounds must report a clearly lower bound than those without. */
Test(solve, decomposition_bound_caps_a_stopped_search)
{
    int tighter = 0, stopped = 0;
    for (uint64_t t = 0; t < 6; t++) {
        solve_gen_params p = {.n = 16 + 2 * (t % 3), .m = 2 + t % 2, .N = 200,
                              .eps = 0.05, .tightness = 0.5,
                              .dist = t % 2 ? SOLVE_GEN_LOGNORMAL : SOLVE_GEN_NORMAL,
                              .separate = t % 3 == 2, .p_required = t == 4 ? 0.1 : 0,
                              .seed = mix(24000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_result *full = solve_ok(md, sc, NULL);
        cr_assert_eq(surety_result_status(full), SURETY_OPTIMAL);
        double opt = surety_result_objective(full), tol = 1e-9 * (1 + fabs(opt));
        for (int v = 0; v < 4; v++) {
            double with = 0, without = 0;
            for (int on = 0; on < 2; on++) {
                surety_solve_options o;
                surety_solve_options_init(&o);
                o.dive_nodes = 16;
                o.lp_after = -1;
                o.decomp_after = on ? 1 : -1;
                if (v < 2)
                    o.node_limit = v == 0 ? 64 : 512;
                else
                    o.time_limit_s = v == 2 ? 0.05 : 0.2;
                surety_result *res = solve_ok(md, sc, &o);
                check_result(md, sc, res);
                double b = surety_result_bound(res);
                cr_assert(b >= opt - tol, "instance %lu, variant %d, rounds %s: "
                          "bound %.10g below the optimum %.10g", (unsigned long)t,
                          v, on ? "on" : "off", b, opt);
                if (surety_result_status(res) == SURETY_OPTIMAL)
                    cr_assert(fabs(surety_result_objective(res) - opt) <= tol);
                else
                    stopped += on;
                *(on ? &with : &without) = b;
                surety_result_free(res);
            }
            if (v < 2 && with < without - 1e-3 * fabs(opt))
                tighter++;
            cr_log_info("instance %lu variant %d: optimum %.2f, bound %.2f with "
                        "the rounds, %.2f without", (unsigned long)t, v, opt,
                        with, without);
        }
        surety_result_free(full);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_assert(stopped >= 6, "only %d stopped searches with the rounds", stopped);
    cr_assert(tighter >= 4, "the rounds lowered a stopped search's bound by "
              "0.1%% in only %d of 12 node-limited pairs", tighter);
}

/* Scenario prices (decomp.c): with the joint constraint the rounds also
 * price each resource's failures scenario by scenario, and the bound adds
 * the k largest summed prices. Stopped searches on instances where the
 * rounds run many times (up to 40 rounds, node limits of thousands) must
 * report a bound at least the optimum, the same with every round's
 * prices; and the prices must do their job: the stopped bound with them
 * must be clearly lower than with the assignment prices alone on some
 * instances (it is on most, measured: see the log). */
Test(solve, scenario_prices_cap_a_stopped_search)
{
    int tighter = 0, pairs = 0;
    for (uint64_t t = 0; t < 10; t++) {
        solve_gen_params p = {.n = 26 + 3 * (t % 3), .m = 2 + t % 2, .N = 100 + 50 * (t % 2),
                              .eps = t % 2 ? 0.1 : 0.05, .tightness = 0.5,
                              .dist = t % 2 ? SOLVE_GEN_LOGNORMAL : SOLVE_GEN_NORMAL,
                              .p_required = t == 5 ? 0.1 : 0,
                              .seed = mix(26000 + t)};
        surety_model *md = solve_gen_model(&p);
        /* each job in one resource: the job prices have nothing to do,
         * and what the split misses is only the failures' alignment */
        solve_gen_one_resource_each(md);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_result *full = solve_ok(md, sc, NULL);
        cr_assert_eq(surety_result_status(full), SURETY_OPTIMAL);
        double opt = surety_result_objective(full), tol = 1e-9 * (1 + fabs(opt));
        for (int v = 0; v < 3; v++) {
            double b2[2];
            for (int on = 0; on < 2; on++) {
                surety_solve_options o;
                surety_solve_options_init(&o);
                o.dive_nodes = 16;
                o.lp_after = -1;
                o.decomp_after = 1;
                o.decomp_rounds = 6;
                o.decomp_jobs_only = !on;
                o.node_limit = v == 0 ? 100 : v == 1 ? 300 : 1500;
                surety_result *res = solve_ok(md, sc, &o);
                check_result(md, sc, res);
                double b = surety_result_bound(res);
                cr_assert(b >= opt - tol, "instance %lu, limit %ld, %s: bound "
                          "%.10g below the optimum %.10g", (unsigned long)t,
                          o.node_limit, on ? "scenario prices" : "assignment only",
                          b, opt);
                if (surety_result_status(res) == SURETY_OPTIMAL)
                    cr_assert(fabs(surety_result_objective(res) - opt) <= tol);
                b2[on] = b;
                surety_result_free(res);
            }
            if (b2[0] > opt + 1e-3 * fabs(opt)) {
                pairs++;
                tighter += b2[1] < b2[0] - 0.1 * (b2[0] - opt);
            }
            cr_log_info("instance %lu limit %d: optimum %.2f, bound %.2f with "
                        "scenario prices, %.2f without", (unsigned long)t, v,
                        opt, b2[1], b2[0]);
        }
        surety_result_free(full);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_assert(tighter >= 3, "scenario prices closed a tenth of the gap in only "
              "%d of %d stopped pairs", tighter, pairs);
}

/* The same on small instances with each job in one resource and many
 * rounds (up to 40): there the scenario prices bring the split's bound
 * close to the enumerated optimum, so a stopped search's bound, which the
 * split caps, must not fall below it. */
Test(solve, scenario_prices_keep_a_stopped_bound_above_the_optimum)
{
    int close = 0;
    for (uint64_t t = 0; t < 60; t++) {
        solve_gen_params p = {.n = 9 + t % 2, .m = 2, .N = 12 + 4 * (t % 4),
                              .eps = t % 3 ? 0.1 : 0.2, .tightness = 0.4 + 0.1 * (t % 3),
                              .dist = t % 2 ? SOLVE_GEN_LOGNORMAL : SOLVE_GEN_NORMAL,
                              .seed = mix(27000 + t)};
        surety_model *md = solve_gen_model(&p);
        solve_gen_one_resource_each(md);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        for (long lim = 4; lim <= 64 && feas; lim *= 4) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.dive_nodes = 1;
            o.lp_after = -1;
            o.decomp_after = 1;
            o.decomp_rounds = 40;
            
            o.node_limit = lim;
            surety_result *res = solve_ok(md, sc, &o);
            check_result(md, sc, res);
            double b = surety_result_bound(res), tol = 1e-9 * (1 + fabs(bf));
            cr_assert(b >= bf - tol, "instance %lu, limit %ld: bound %.10g below "
                      "the optimum %.10g", (unsigned long)t, lim, b, bf);
            if (surety_result_status(res) == SURETY_OPTIMAL)
                cr_assert(fabs(surety_result_objective(res) - bf) <= tol);
            else
                close += b < bf + 0.01 * fabs(bf);
            surety_result_free(res);
        }
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("%d stopped searches within 1%% of the optimum", close);
}

/* Every price round's value against the bound its prices give, evaluated
 * here by enumeration. decomp.c's header gives that bound at prices
 * (lam, mu) as
 *     L = sum_j lam_j + T(mu) + sum_i V_i(lam, mu_i),
 * T(mu) the sum of the k largest summed scenario prices, V_i the best of
 *     sum_{j in S} (p_j - lam_j) - sum_{l in F_i(S)} mu_il
 * over the job sets S of resource i's problem (its pairs still possible
 * at the root, which every plan that may beat the incumbent keeps) that
 * overload it (in the scenarios F_i(S), by plan_ok's test) at most k
 * times. For any prices (mu >= 0, lam_j >= 0 for an optional job) L is at
 * least the best plan on those pairs (weak duality); a round whose value
 * falls below L, as one that leaves out part of T(mu) does, falls below
 * that plan wherever L comes that close to it. This check does not wait
 * for prices that good: it holds at every round. A round above L is
 * valid but looser than its prices allow. */
typedef struct round_ref {
    const surety_model *md;
    const surety_scenarios *sc;
    size_t k;
    double opt, tol;
    unsigned char *pairs; /* n*m: the pairs of the last round seen */
    double pair_opt;      /* the best plan on them (-INFINITY: none) */
    long rounds, priced; /* rounds seen; those whose T(mu) is material */
    double short_by;     /* the most a round fell below its evaluation */
    double short_top;    /* that round's T(mu) */
    double over_by;      /* the most a round rose above it */
    double ref_below;    /* the most an evaluation fell below pair_opt */
    double val_below;    /* the most a round's value fell below it */
    int bad_price;       /* a price of the wrong sign */
    /* one resource's job sets: its jobs, their reduced profits, the loads
     * of the sets along the enumeration's path, its scenario prices */
    size_t i, nj, job[16];
    double red[16], *load;
    const double *mu;
    double best;
    /* a decision on one job of the set (for the probes): position fix in
     * job[] always in the set (fix_in) or always out; fix = nj: none */
    size_t fix;
    int fix_in;
} round_ref;

/* Scenarios in which resource e->i with loads ld is overloaded (plan_ok's
 * test); their summed prices into *cost. */
static size_t sub_over(const round_ref *e, const double *ld, double *cost)
{
    const surety_resource *rs = &e->md->resources[e->i];
    size_t over = 0;
    double c = 0;
    for (size_t l = 0; l < e->sc->N; l++)
        if (!(rs->hours_factor * ld[l] <= rs->capacity * (1 + 1e-12))) {
            over++;
            c += e->mu[l];
        }
    *cost = c;
    return over;
}

/* The job sets of resource e->i that extend the one of loads ld and
 * value v with its jobs from t on (loads summed in job order, as plan_ok
 * sums). A set over the allowance has none that fits. */
static void sub_walk(round_ref *e, size_t t, double v, const double *ld)
{
    if (t == e->nj) {
        double c;
        sub_over(e, ld, &c);
        if (v - c > e->best)
            e->best = v - c;
        return;
    }
    if (e->fix != t || !e->fix_in)
        sub_walk(e, t + 1, v, ld);
    if (e->fix == t && !e->fix_in)
        return;
    size_t N = e->sc->N, n = e->sc->n;
    double *nl = e->load + (t + 1) * N, c;
    for (size_t l = 0; l < N; l++)
        nl[l] = ld[l] + e->sc->hours[l * n + e->job[t]];
    if (sub_over(e, nl, &c) <= e->k)
        sub_walk(e, t + 1, v + e->red[t], nl);
}

/* The best plan that uses only the given pairs, by enumeration. */
static double pair_optimum(const surety_model *md, const surety_scenarios *sc,
                           const unsigned char *pairs)
{
    size_t n = md->n, m = md->m;
    surety_model copy = *md;
    surety_job *jobs = surety_xmalloc(n, sizeof *jobs);
    unsigned char *al = surety_xmalloc(n * m, 1);
    for (size_t j = 0; j < n; j++) {
        jobs[j] = md->jobs[j];
        jobs[j].allowed = al + j * m;
        for (size_t i = 0; i < m; i++)
            al[j * m + i] = md->jobs[j].allowed[i] && pairs[j * m + i];
    }
    copy.jobs = jobs;
    double best = 0;
    if (!brute_force(&copy, sc, &best))
        best = -INFINITY;
    surety_xfree(jobs);
    surety_xfree(al);
    return best;
}

/* The summed absolute mean profits: the scale of the tolerances. */
static double profit_scale(const surety_scenarios *sc)
{
    double scale = 0;
    for (size_t j = 0; j < sc->n; j++)
        scale += fabs(job_value(sc, j));
    return scale;
}

static void check_round(void *ctx, const surety_dec_round *r)
{
    round_ref *e = ctx;
    const surety_model *md = e->md;
    size_t n = md->n, m = md->m, N = e->sc->N;
    if (r->probed)
        return; /* the probes after the rounds: checked on their own */
    cr_assert(r->n == n && r->m == m && r->N == N && r->mu);
    if (e->rounds == 0 || memcmp(e->pairs, r->pairs, n * m) != 0) {
        memcpy(e->pairs, r->pairs, n * m);
        e->pair_opt = pair_optimum(md, e->sc, r->pairs);
    }
    double L = 0, top = 0;
    for (size_t j = 0; j < n; j++) {
        L += r->lam[j];
        e->bad_price |= !md->jobs[j].required && !(r->lam[j] >= 0);
    }
    /* T(mu): the k largest sums over the resources, by selection */
    double *tot = surety_xcalloc(N, sizeof *tot);
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++) {
            tot[l] += r->mu[i * N + l];
            e->bad_price |= !(r->mu[i * N + l] >= 0);
        }
    for (size_t q = 0; q < e->k && q < N; q++) {
        size_t a = q;
        for (size_t l = q + 1; l < N; l++)
            if (tot[l] > tot[a])
                a = l;
        double x = tot[q];
        tot[q] = tot[a];
        tot[a] = x;
        top += tot[q];
    }
    surety_xfree(tot);
    L += top;
    for (size_t i = 0; i < m; i++) {
        e->i = i;
        e->nj = 0;
        for (size_t j = 0; j < n; j++)
            if (r->pairs[j * m + i]) {
                e->red[e->nj] = job_value(e->sc, j) - r->lam[j];
                e->job[e->nj++] = j;
            }
        e->mu = r->mu + i * N;
        e->fix = e->nj;
        e->best = 0; /* the empty set */
        memset(e->load, 0, N * sizeof *e->load);
        sub_walk(e, 0, 0, e->load);
        L += e->best;
    }
    e->rounds++;
    e->priced += top >= 1e-3 * (1 + fabs(e->opt));
    if (L - r->bound > e->short_by) {
        e->short_by = L - r->bound;
        e->short_top = top;
    }
    if (r->bound - L > e->over_by)
        e->over_by = r->bound - L;
    if (e->pair_opt - L > e->ref_below)
        e->ref_below = e->pair_opt - L;
    if (e->pair_opt - r->bound > e->val_below)
        e->val_below = e->pair_opt - r->bound;
}

/* Small joint instances (two and three resources, each job in one
 * resource or in several, some with required jobs or forbidden pairs),
 * the rounds from the first node on, every node through the pool (so
 * that the rounds, which run between dives, come often) and no LP.
 * Every round must keep the bound its prices give, enumerated; that
 * bound and the round's value must be at least the best plan on the
 * round's pairs, enumerated; the answer must be the enumerated optimum.
 * The first check is the one that catches a term left out: the few
 * rounds of these small trees stay further above the optimum than their
 * whole T(mu) (with the term dropped, the checks against the optimum
 * still passed). It bites only where T(mu) is material: enough rounds
 * must have one of at least a thousandth of the optimum (a hundredth of
 * which is still thousands of times the tolerance). Nothing here depends
 * on time. */
/* A solve with the decomposition's watcher: its result passes
 * check_result, and its status and value are the enumerated ones (feas,
 * bf) to tol. */
static surety_result *watched_enumerated(const surety_model *md,
                                         const surety_scenarios *sc,
                                         const surety_solve_options *o,
                                         surety_dec_watch watch, void *ctx,
                                         int feas, double bf, double tol,
                                         uint64_t t)
{
    surety_result *res = NULL;
    surety_error err;
    surety_error_clear(&err);
    cr_assert_eq(surety_solve_watched(md, sc, o, watch, ctx, &res, &err),
                 SURETY_OK, "%s", err.message);
    check_result(md, sc, res);
    cr_assert_eq(surety_result_status(res),
                 feas ? SURETY_OPTIMAL : SURETY_INFEASIBLE);
    if (feas)
        cr_assert(fabs(surety_result_objective(res) - bf) <= tol,
                  "instance %lu: solver %.12g, enumeration %.12g",
                  (unsigned long)t, surety_result_objective(res), bf);
    return res;
}

/* What the rounds of a set of solves showed (rounds_case). */
typedef struct round_totals {
    long rounds, priced, with;
    double over;
} round_totals;

/* One instance of the round checks above: solved with the rounds from the
 * first node on, every node through the pool and no LP, its rounds
 * checked by check_round as they come, and its answer against
 * enumeration. When g is given, the solve's log lines go to catch_line. */
static void rounds_case(const solve_gen_params *p, uint64_t t, int one_each,
                        int subgradient, lp_log *g, round_totals *tot)
{
    surety_model *md = solve_gen_model(p);
    if (one_each)
        solve_gen_one_resource_each(md);
    surety_scenarios *sc = solve_gen_scenarios(md, p);
    double bf = 0;
    int feas = brute_force(md, sc, &bf);
    double scale = profit_scale(sc);
    round_ref e = {.md = md, .sc = sc, .k = surety_allowance(p->eps, p->N),
                   .opt = feas ? bf : 0, .tol = 1e-9 * (1 + scale)};
    e.load = surety_xmalloc((md->n + 1) * sc->N, sizeof *e.load);
    e.pairs = surety_xmalloc(md->n * md->m, 1);
    surety_solve_options o;
    surety_solve_options_init(&o);
    o.dive_nodes = 1;
    o.lp_after = -1;
    o.decomp_after = 1;
    o.decomp_subgradient = subgradient;
    if (g) {
        o.log = catch_line;
        o.log_ctx = g;
    }
    surety_result *res =
        watched_enumerated(md, sc, &o, check_round, &e, feas, bf, e.tol, t);
    cr_assert(!e.bad_price, "instance %lu: a price of the wrong sign",
              (unsigned long)t);
    cr_assert(e.short_by <= e.tol,
              "instance %lu: a round's value is %.10g below the bound "
              "its prices give (T(mu) %.10g)", (unsigned long)t,
              e.short_by, e.short_top);
    /* the sub-solves finish: a round is its bound to their gap
     * tolerance (1e-9) and the slack decomp.c adds */
    cr_assert(e.over_by <= 1e3 * e.tol,
              "instance %lu: a round's value is %.10g above the bound "
              "its prices give", (unsigned long)t, e.over_by);
    cr_assert(e.ref_below <= e.tol,
              "instance %lu: the bound at a round's prices is %.10g "
              "below the best plan on its pairs", (unsigned long)t,
              e.ref_below);
    cr_assert(e.val_below <= e.tol,
              "instance %lu: a round's value is %.10g below the best "
              "plan on its pairs", (unsigned long)t, e.val_below);
    tot->rounds += e.rounds;
    tot->priced += e.priced;
    tot->with += e.priced > 0;
    if (e.over_by / (1 + scale) > tot->over)
        tot->over = e.over_by / (1 + scale);
    surety_xfree(e.pairs);
    surety_xfree(e.load);
    surety_result_free(res);
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

Test(solve, price_rounds_keep_the_bound_their_prices_give)
{
    round_totals tot = {0};
    for (uint64_t t = 0; t < 64; t++) {
        int three = t % 4 == 3;
        solve_gen_params p = {.n = three ? 8 : 9 + t % 2, .m = three ? 3 : 2,
                              .N = 30 + 10 * (t % 2), .eps = t % 3 ? 0.2 : 0.3,
                              .tightness = 0.45 + 0.15 * (double)(t % 3),
                              .dist = (solve_gen_dist)(t % 3),
                              .p_required = t % 5 == 2 ? 0.15 : 0,
                              .p_forbid = t % 6 == 1 ? 0.2 : 0,
                              .seed = mix(29000 + t)};
        /* the older steps, too */
        rounds_case(&p, t, t % 2 == 0, t % 4 == 1, NULL, &tot);
    }
    cr_log_info("%ld price rounds, %ld with a material T(mu), in %ld solves; "
                "a round at most %.3g (relative to the summed profits) above "
                "its evaluation", tot.rounds, tot.priced, tot.with, tot.over);
    /* measured: 57 rounds in 24 solves */
    cr_assert(tot.priced >= 30 && tot.with >= 12, "only %ld price rounds (in "
              "%ld solves) had a material T(mu)", tot.priced, tot.with);
}

/* Identical resources at equal prices have the same one-resource problem,
 * which a round solves once (decomp.c, twin_of), as do the probes. The
 * checks of the test above, on models whose resources are all alike
 * (some jobs forbidden in some of them, which makes their problems
 * differ): a bound copied to a resource whose problem is not the same
 * would fall below the bound the round's prices give, enumerated. Enough
 * solves must copy for the check to bite. */
Test(solve, identical_resources_solved_once_keep_the_rounds_bounds)
{
    round_totals tot = {0};
    long copied = 0, solves = 0;
    for (uint64_t t = 0; t < 24; t++) {
        solve_gen_params p = {.n = 9, .m = 3,
                              .N = 40, .eps = t % 3 ? 0.1 : 0.2,
                              .tightness = 0.4 + 0.1 * (double)(t % 3),
                              .dist = (solve_gen_dist)(t % 3),
                              .p_required = t % 5 == 2 ? 0.15 : 0,
                              .p_forbid = t % 4 == 1 ? 0.15 : 0,
                              .equal_resources = 1,
                              .seed = mix(29500 + t)};
        lp_log g = {"decomposition: %lf one-resource solves answered", 0, 0};
        rounds_case(&p, t, 0, t % 5 == 3, &g, &tot);
        copied += g.seen ? (long)g.value : 0;
        solves += g.seen;
    }
    cr_log_info("%ld price rounds in 24 solves; %ld one-resource solves "
                "copied, in %ld of them", tot.rounds, copied, solves);
    /* measured: 46 rounds, 78 copies in 14 solves; with twin_of's
     * comparison of the job lists left out, instance 5 fails the check
     * of a round's value against its evaluation */
    cr_assert(solves >= 10 && copied >= 40, "only %ld solves copied %ld "
              "one-resource solves", solves, copied);
}

/* The probe tables against enumeration: after job j's probes, every cap
 * the search would read for a decision on j (surety_dec_probed, through
 * the watcher) must be at least the best job set of resource i at the
 * best round's prices that the decision allows: with j in the set when j
 * is placed in i, without it otherwise (rejected, or placed elsewhere). */
typedef struct probe_ref {
    round_ref e;
    const double *zero; /* N zero prices: probes without scenario prices */
    long calls, checked;
    long swap_caught; /* checks the two tables swapped would fail */
    double short_by;  /* the most a cap fell below its best set */
    size_t bad_j, bad_i;
    long bad_c;
    double over_by;   /* the most a cap rose above it */
    double part_short; /* the most a best round's part fell below one */
} probe_ref;

/* Resource i's best job set at the round's prices with job j always in
 * (in) or always out, by enumeration; -INFINITY when none fits. */
static double probe_set(round_ref *e, const surety_dec_round *r,
                        const double *mu, size_t i, size_t j, int in)
{
    size_t n = e->md->n, m = e->md->m, N = e->sc->N;
    e->i = i;
    e->nj = 0;
    e->fix = SIZE_MAX;
    for (size_t q = 0; q < n; q++)
        if (r->pairs[q * m + i]) {
            if (q == j)
                e->fix = e->nj;
            e->red[e->nj] = job_value(e->sc, q) - r->lam[q];
            e->job[e->nj++] = q;
        }
    cr_assert(e->fix < e->nj, "job %zu was probed on resource %zu, which "
              "is not among its pairs", j, i);
    e->fix_in = in;
    e->mu = mu + i * N;
    double c;
    memset(e->load, 0, N * sizeof *e->load);
    /* the empty set, when it is allowed: its failures are those of no load
     * (a negative capacity) */
    e->best = !in && sub_over(e, e->load, &c) <= e->k ? -c : -INFINITY;
    sub_walk(e, 0, 0, e->load);
    return e->best;
}

static void check_probes(void *ctx, const surety_dec_round *r)
{
    probe_ref *q = ctx;
    round_ref *e = &q->e;
    size_t m = e->md->m;
    if (!r->probed)
        return; /* a price round: checked by the test above */
    cr_assert(r->n == e->md->n && r->m == m && r->N == e->sc->N && r->v);
    q->calls++;
    size_t j = r->job;
    const double *mu = r->mu ? r->mu : q->zero;
    for (size_t i = 0; i < m; i++) {
        if (!r->pairs[j * m + i])
            continue;
        double vin = probe_set(e, r, mu, i, j, 1);
        double vout = probe_set(e, r, mu, i, j, 0);
        double best = vin > vout ? vin : vout;
        if (best - r->v[i] > q->part_short)
            q->part_short = best - r->v[i];
        const double *row = r->probed + (j * m + i) * (m + 1);
        for (long c = -1; c < (long)m; c++) {
            double ref = c == (long)i ? vin : vout;
            double cap = row[c + 1];
            q->checked++;
            if (ref - cap > q->short_by) {
                q->short_by = ref - cap;
                q->bad_j = j;
                q->bad_i = i;
                q->bad_c = c;
            }
            if (ref > -INFINITY && cap - ref > q->over_by)
                q->over_by = cap - ref;
        }
        /* read the other way round, the tables would fail here */
        double gap = 1e-6 * (1 + fabs(best));
        q->swap_caught += row[i + 1] > -INFINITY && row[0] < vin - gap;
        q->swap_caught += row[0] > -INFINITY && row[i + 1] < vout - gap;
    }
}

/* After the rounds the probes solve one resource's problem again with a
 * job forced in or kept out, and the search caps a node's part of that
 * resource by the table its decision on the job selects. Small joint
 * (with and without scenario prices) and separate models, the probes from
 * the first dives on: every cap the search would read must be at least
 * the best job set its decision allows, enumerated at the best round's
 * prices, and the answer must be the enumerated optimum. The check looks
 * at the tables' direction itself, so it does not need the probes to
 * decide the search: enough probes must have lowered a table so far that
 * the two tables read the other way round would fail it. */
Test(solve, probe_tables_cap_the_sets_their_decisions_allow)
{
    long calls = 0, checked = 0, caught = 0;
    int solves = 0;
    for (uint64_t t = 0; t < 48; t++) {
        int three = t % 4 == 3, sep = t % 3 == 2;
        solve_gen_params p = {.n = three ? 8 : 9 + t % 2, .m = three ? 3 : 2,
                              .N = 30 + 10 * (t % 3),
                              .eps = t % 2 ? 0.2 : 0.3,
                              .tightness = 0.45 + 0.15 * (double)(t % 3),
                              .dist = (solve_gen_dist)(t % 3),
                              .separate = sep,
                              .p_required = t % 5 == 2 ? 0.15 : 0,
                              .p_forbid = t % 6 == 1 ? 0.2 : 0,
                              .p_negative = t % 7 == 3 ? 0.3 : 0,
                              .seed = mix(31000 + t)};
        surety_model *md = solve_gen_model(&p);
        if (t % 4 == 1)
            solve_gen_one_resource_each(md);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        double bf = 0;
        int feas = brute_force(md, sc, &bf);
        double scale = profit_scale(sc);
        probe_ref q = {.e = {.md = md, .sc = sc,
                             .k = surety_allowance(p.eps, p.N),
                             .tol = 1e-9 * (1 + scale)}};
        q.e.load = surety_xmalloc((md->n + 1) * sc->N, sizeof *q.e.load);
        double *zero = surety_xcalloc(md->m * sc->N, sizeof *zero);
        q.zero = zero;
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.dive_nodes = 1;
        o.lp_after = -1;
        o.decomp_after = 1;
        o.decomp_rounds = 1 + (int)(t % 3);
        o.decomp_jobs_only = t % 6 < 3;
        surety_result *res = watched_enumerated(md, sc, &o, check_probes, &q,
                                                feas, bf, q.e.tol, t);
        cr_assert(q.short_by <= q.e.tol,
                  "instance %lu: the cap of job %zu decided as %ld on "
                  "resource %zu is %.10g below the best set it allows",
                  (unsigned long)t, q.bad_j, q.bad_c, q.bad_i, q.short_by);
        /* and no looser: the probed direction is solved again, and the
         * other one is the best round's part, whose plan takes that
         * direction (the sub-solves finish, to the slack of the test
         * above) */
        cr_assert(q.over_by <= 1e3 * q.e.tol,
                  "instance %lu: a cap is %.10g above the best set its "
                  "decision allows", (unsigned long)t, q.over_by);
        cr_assert(q.part_short <= q.e.tol,
                  "instance %lu: the best round's part of a resource is "
                  "%.10g below one of its job sets", (unsigned long)t,
                  q.part_short);
        calls += q.calls;
        checked += q.checked;
        caught += q.swap_caught;
        solves += q.calls > 0;
        surety_xfree(zero);
        surety_xfree(q.e.load);
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("%ld probed jobs in %d solves, %ld caps checked; %ld checks "
                "would fail with the tables swapped", calls, solves, checked,
                caught);
    cr_assert(solves >= 16 && caught >= 20,
              "the probes ran in %d solves and lowered too few tables (%ld "
              "checks would catch a swap)", solves, caught);
}

/* Counts the price rounds a solve shows its watcher. */
static void count_round(void *ctx, const surety_dec_round *r)
{
    if (!r->probed)
        (*(long *)ctx)++;
}

/* Under separate constraints a node's bound evaluates a knapsack per
 * resource for the scenarios near each quantile (and for all of them at
 * every 32nd node), more than a joint node's window, so the
 * decomposition's first step comes after the knapsacks of decomp_after
 * joint nodes (tree.c, decomp_round), before decomp_after nodes:
 * here every solve stops at 200 nodes, half of decomp_after, and still
 * runs price rounds (with the share counted in nodes it runs none), and
 * the rounds keep their share of the work from then on, so that most of
 * these searches close within the 200 nodes. Its bounds stay above the
 * optimum found without the decomposition. */
Test(solve, separate_searches_reach_the_split_by_its_work)
{
    long closed = 0;
    for (uint64_t t = 0; t < 6; t++) {
        solve_gen_params p = {.n = 16 + t % 2, .m = 4, .N = 400, .eps = 0.05,
                              .tightness = 0.5, .separate = 1,
                              .dist = SOLVE_GEN_LOGNORMAL,
                              .seed = mix(33000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.decomp_after = -1;
        double opt = proven_optimum(md, sc, &o);
        o.decomp_after = 400;
        o.dive_nodes = 8;
        o.node_limit = 200;
        long rounds = 0;
        surety_result *res = NULL;
        surety_error err;
        surety_error_clear(&err);
        cr_assert_eq(surety_solve_watched(md, sc, &o, count_round, &rounds,
                                          &res, &err),
                     SURETY_OK, "%s", err.message);
        check_result(md, sc, res);
        cr_assert(surety_result_nodes(res) <= 200);
        cr_assert(surety_result_bound(res) >= opt - 1e-9 * (1 + fabs(opt)),
                  "instance %lu: bound %.12g below the optimum %.12g",
                  (unsigned long)t, surety_result_bound(res), opt);
        /* the rounds started by work and kept their share: measured 8-13
         * rounds in each (2-4 when they had as many knapsacks as the
         * tree) */
        cr_assert(rounds >= 6, "instance %lu: %ld price round(s) in %ld nodes",
                  (unsigned long)t, rounds, surety_result_nodes(res));
        closed += surety_result_status(res) == SURETY_OPTIMAL;
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("%ld of 6 closed within 200 nodes", closed);
}

/* A joint search's nodes evaluate more than the window of knapsacks on
 * average (every 32nd and each restored node recompute every scenario),
 * yet the decomposition's first step comes only after decomp_after nodes
 * (tree.c, work_reached): counted in knapsacks it came after about three
 * fifths of them at 10 000 scenarios and slowed trees that close soon
 * after
 * (bench/README.md, "The decomposition's start counted in nodes for
 * joint searches"). Here many restored nodes (dives of 8) and few
 * scenarios in the window (k = 20 of 400) put the knapsacks of
 * decomp_after joint nodes well before decomp_after nodes: a search
 * stopped one node short of it must have run no price round, and one
 * given the whole allowance must run them. */
Test(solve, joint_searches_reach_the_split_by_their_nodes)
{
    long before = 0, after = 0, open = 0;
    for (uint64_t t = 0; t < 6; t++) {
        solve_gen_params p = {.n = 20 + t % 2, .m = 4, .N = 400, .eps = 0.05,
                              .tightness = 0.5,
                              .dist = SOLVE_GEN_LOGNORMAL,
                              .seed = mix(33500 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        for (int whole = 0; whole < 2; whole++) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.decomp_after = 300;
            o.dive_nodes = 8;
            o.node_limit = whole ? 600 : 299;
            long rounds = 0;
            surety_result *res = NULL;
            surety_error err;
            surety_error_clear(&err);
            cr_assert_eq(surety_solve_watched(md, sc, &o, count_round,
                                              &rounds, &res, &err),
                         SURETY_OK, "%s", err.message);
            check_result(md, sc, res);
            if (!whole) {
                cr_assert(rounds == 0, "instance %lu: %ld price round(s) "
                          "within %ld nodes, before decomp_after",
                          (unsigned long)t, rounds,
                          surety_result_nodes(res));
                open += surety_result_status(res) != SURETY_OPTIMAL;
                before += surety_result_nodes(res);
            } else if (surety_result_nodes(res) > 300) {
                after += rounds > 0;
            }
            surety_result_free(res);
        }
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("%ld nodes before the mark; %ld searches past it ran rounds",
                before, after);
    /* the check bites only where the searches reach the node limit */
    cr_assert(open >= 4, "only %ld of 6 searches were still open at 299 "
              "nodes", open);
    cr_assert(after >= 4, "only %ld searches ran rounds past decomp_after",
              after);
}

/* The slow suite (SURETY_SLOW=1, meson test --suite slow): searches long
 * enough for the scenario prices to grow (up to 60 rounds), whose bounds
 * must stay at least the optimum found without the decomposition. The
 * unit tests' trees are too small for many rounds. (The gaps stay wide
 * here too: the prices' term cut by a tenth still passes, checked.) */
Test(slow_prices, long_searches_keep_their_bounds_above_the_optimum)
{
    if (!getenv("SURETY_SLOW"))
        cr_skip_test("set SURETY_SLOW=1 (meson test --suite slow)");
    for (uint64_t t = 0; t < 6; t++) {
        solve_gen_params p = {.n = 26 + 2 * (t % 3), .m = 3, .N = 100,
                              .eps = 0.05, .tightness = 0.5,
                              .dist = t % 2 ? SOLVE_GEN_LOGNORMAL : SOLVE_GEN_NORMAL,
                              .seed = mix(28000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.decomp_after = -1;
        surety_result *full = solve_ok(md, sc, &o);
        cr_assert_eq(surety_result_status(full), SURETY_OPTIMAL);
        double opt = surety_result_objective(full), tol = 1e-9 * (1 + fabs(opt));
        for (long lim = 20000; lim <= 320000; lim *= 4) {
            surety_solve_options_init(&o);
            o.dive_nodes = 16;
            o.decomp_after = 1;
            o.node_limit = lim;
            surety_result *res = solve_ok(md, sc, &o);
            check_result(md, sc, res);
            double b = surety_result_bound(res);
            cr_assert(b >= opt - tol, "instance %lu, limit %ld: bound %.10g below "
                      "the optimum %.10g", (unsigned long)t, lim, b, opt);
            if (surety_result_status(res) == SURETY_OPTIMAL)
                cr_assert(fabs(surety_result_objective(res) - opt) <= tol);
            cr_log_info("instance %lu limit %ld: optimum %.2f, bound %.2f",
                        (unsigned long)t, lim, opt, b);
            surety_result_free(res);
        }
        surety_result_free(full);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
}

/* ---- random small instances against CBC ---- */

#include <time.h>
static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Writes the indicator formulation (METHODS.md s.6, naive big-M) in CPLEX
 * LP format, independently of src/export_mps.c: x_j_i binaries, z_l (joint)
 * or z_l_i (separate) indicators, one capacity row per (l, i). */
static void write_lp(const surety_model *md, const surety_scenarios *sc,
                     const char *path)
{
    size_t n = md->n, m = md->m, N = sc->N;
    size_t k = surety_allowance(md->risk, N);
    int sep = md->constraint == SURETY_SEPARATE;
    FILE *f = fopen(path, "w");
    cr_assert_not_null(f);
    fprintf(f, "Maximize\n obj:");
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            if (md->jobs[j].allowed[i])
                fprintf(f, " %+.17g x_%zu_%zu", job_value(sc, j), j, i);
    fprintf(f, "\nSubject To\n");
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++) {
            double fac = md->resources[i].hours_factor;
            double C = md->resources[i].capacity, tot = 0;
            for (size_t j = 0; j < n; j++)
                if (md->jobs[j].allowed[i])
                    tot += fac * sc->hours[l * n + j];
            if (tot - C <= 0)
                continue; /* the row can never bind */
            /* a job that overloads the resource on its own fails the
             * scenario: x <= z (valid, and it keeps CBC quick) */
            for (size_t j = 0; j < n; j++)
                if (md->jobs[j].allowed[i] &&
                    !(fac * sc->hours[l * n + j] <= C)) {
                    if (sep)
                        fprintf(f, " one_%zu_%zu_%zu: x_%zu_%zu - z_%zu_%zu "
                                   "<= 0\n", l, i, j, j, i, l, i);
                    else
                        fprintf(f, " one_%zu_%zu_%zu: x_%zu_%zu - z_%zu <= 0\n",
                                l, i, j, j, i, l);
                }
            fprintf(f, " cap_%zu_%zu:", l, i);
            for (size_t j = 0; j < n; j++)
                if (md->jobs[j].allowed[i])
                    fprintf(f, " %+.17g x_%zu_%zu", fac * sc->hours[l * n + j],
                            j, i);
            if (sep)
                fprintf(f, " %+.17g z_%zu_%zu <= %.17g\n", -(tot - C), l, i, C);
            else
                fprintf(f, " %+.17g z_%zu <= %.17g\n", -(tot - C), l, C);
        }
    for (size_t g = 0; g < (sep ? m : 1); g++) {
        fprintf(f, " allow_%zu:", g);
        for (size_t l = 0; l < N; l++) {
            if (sep)
                fprintf(f, " + z_%zu_%zu", l, g);
            else
                fprintf(f, " + z_%zu", l);
        }
        fprintf(f, " <= %zu\n", k);
    }
    for (size_t j = 0; j < n; j++) {
        fprintf(f, " job_%zu:", j);
        for (size_t i = 0; i < m; i++)
            if (md->jobs[j].allowed[i])
                fprintf(f, " + x_%zu_%zu", j, i);
        fprintf(f, " %s 1\n", md->jobs[j].required ? "=" : "<=");
    }
    fprintf(f, "Binaries\n");
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            if (md->jobs[j].allowed[i])
                fprintf(f, " x_%zu_%zu\n", j, i);
    for (size_t l = 0; l < N; l++)
        for (size_t g = 0; g < (sep ? m : 1); g++) {
            if (sep)
                fprintf(f, " z_%zu_%zu\n", l, g);
            else
                fprintf(f, " z_%zu\n", l);
        }
    fprintf(f, "End\n");
    fclose(f);
}

/* Runs CBC; returns 1 with its objective and plan when it reports an
 * optimum, 0 when it reports infeasibility. */
static int run_cbc(const char *dir, const char *lp, size_t n, double *obj,
                   long *plan)
{
    char cmd[1600], sol[600];
    snprintf(sol, sizeof sol, "%s/sol.txt", dir);
    remove(sol);
    snprintf(cmd, sizeof cmd,
             "cbc %s ratioGap 0 allowableGap 1e-9 solve solu %s "
             ">/dev/null 2>&1", lp, sol);
    cr_assert_eq(system(cmd), 0, "cbc failed to run");
    FILE *f = fopen(sol, "r");
    cr_assert_not_null(f, "cbc wrote no solution file");
    char line[512];
    cr_assert_not_null(fgets(line, sizeof line, f));
    int optimal = strncmp(line, "Optimal", 7) == 0;
    cr_assert(optimal || strstr(line, "nfeasible"), "cbc says: %s", line);
    for (size_t j = 0; j < n; j++)
        plan[j] = -1;
    if (optimal) {
        char *p = strstr(line, "objective value");
        cr_assert_not_null(p);
        *obj = strtod(p + strlen("objective value"), NULL);
        while (fgets(line, sizeof line, f)) {
            size_t idx, j, i;
            char name[128];
            double v;
            if (sscanf(line, "%zu %127s %lf", &idx, name, &v) != 3)
                continue;
            if (sscanf(name, "x_%zu_%zu", &j, &i) == 2 && v > 0.5 && j < n)
                plan[j] = (long)i;
        }
    }
    fclose(f);
    return optimal;
}

Test(solve, agrees_with_cbc)
{
    char dir[] = "/tmp/surety_solve_cbc_XXXXXX";
    cr_assert_not_null(mkdtemp(dir));
    char lp[512];
    snprintf(lp, sizeof lp, "%s/model.lp", dir);
    int infeasible = 0, sep = 0, empty = 0;
    for (uint64_t t = 0; t < 110; t++) {
        solve_gen_params p;
        random_params(&p, mix(50000 + t), 9, 3, 24);
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        write_lp(md, sc, lp);
        double cbc_obj = 0;
        long cbc_plan[16];
        double t0 = now_s();
        int cbc_found = run_cbc(dir, lp, p.n, &cbc_obj, cbc_plan);
        if (getenv("SOLVE_TEST_VERBOSE"))
            fprintf(stderr, "cbc %lu n=%zu m=%zu N=%zu sep=%d %.2fs\n",
                    (unsigned long)t, p.n, p.m, p.N, p.separate, now_s() - t0);
        surety_result *res = solve_ok(md, sc, NULL);
        check_result(md, sc, res);
        sep += p.separate;
        if (!cbc_found) {
            infeasible++;
            cr_assert_eq(surety_result_status(res), SURETY_INFEASIBLE,
                         "instance %lu: CBC infeasible, solver %s",
                         (unsigned long)t,
                         surety_status_name(surety_result_status(res)));
        } else {
            double obj = surety_result_objective(res);
            empty += fabs(cbc_obj) < 1e-9;
            cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
            cr_assert(fabs(obj - cbc_obj) <= 1e-6 * (1 + fabs(cbc_obj)),
                      "instance %lu (n=%zu m=%zu N=%zu k=%zu %s): solver "
                      "%.10g, CBC %.10g", (unsigned long)t, p.n, p.m, p.N,
                      surety_allowance(p.eps, p.N),
                      p.separate ? "separate" : "joint", obj, cbc_obj);
            /* CBC's own plan, when exactly feasible, never beats ours */
            if (plan_ok(md, sc, cbc_plan))
                cr_assert(plan_value(sc, cbc_plan) <=
                          obj + 1e-9 * (1 + fabs(obj)));
        }
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_assert(infeasible > 0 && sep > 0 && empty > 0,
              "instance mix: %d infeasible, %d separate, %d empty optimum",
              infeasible, sep, empty);
    char cmd[600];
    snprintf(cmd, sizeof cmd, "rm -rf %s", dir);
    cr_assert_eq(system(cmd), 0);
}

/* ---- structural properties ---- */

Test(solve, optimum_non_decreasing_in_k)
{
    /* METHODS.md s.7: a larger allowance only relaxes the constraint */
    static const double eps[] = {0.01, 0.03, 0.06, 0.1, 0.15, 0.25, 0.4};
    for (uint64_t t = 0; t < 12; t++) {
        solve_gen_params p;
        random_params(&p, mix(7000 + t), 14, 3, 80);
        p.p_required = 0;
        double prev = -INFINITY;
        for (size_t e = 0; e < 7; e++) {
            p.eps = eps[e];
            surety_model *md = solve_gen_model(&p);
            surety_scenarios *sc = solve_gen_scenarios(md, &p);
            surety_result *res = solve_ok(md, sc, NULL);
            check_result(md, sc, res);
            cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
            double v = surety_result_objective(res);
            cr_assert(v >= prev - 1e-9 * (1 + fabs(v)),
                      "instance %lu: eps %g gives %.10g < %.10g",
                      (unsigned long)t, eps[e], v, prev);
            prev = v;
            surety_result_free(res);
            surety_model_destroy(md);
            solve_gen_scenarios_free(sc);
        }
    }
}

Test(solve, all_scenarios_may_fail_is_unconstrained)
{
    /* k = N (risk 1, set directly in the struct since the reader refuses
     * it): every job with a positive mean profit is accepted, required ones
     * always, so the optimum is that sum (computed here, by definition) */
    for (uint64_t t = 0; t < 10; t++) {
        solve_gen_params p;
        random_params(&p, mix(9000 + t), 30, 4, 50);
        p.tightness = 0.3;
        surety_model *md = solve_gen_model(&p);
        md->risk = 1.0;
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        cr_assert_eq(surety_allowance(md->risk, p.N), p.N);
        double expect = 0;
        for (size_t j = 0; j < p.n; j++) {
            double v = job_value(sc, j);
            if (md->jobs[j].required || v > 0)
                expect += v;
        }
        surety_result *res = solve_ok(md, sc, NULL);
        check_result(md, sc, res);
        cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
        cr_assert(fabs(surety_result_objective(res) - expect) <=
                      1e-9 * (1 + fabs(expect)),
                  "%.10g vs %.10g", surety_result_objective(res), expect);
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
}

Test(solve, early_stop_keeps_an_honest_bound)
{
    /* stopped by a node limit, the reported bound must still be at least
     * the optimum found by the unlimited run (on the same instance) */
    for (uint64_t t = 0; t < 6; t++) {
        solve_gen_params p = {.n = 16, .m = 3, .N = 120, .eps = 0.05, .tightness = 0.5,
                              .dist = SOLVE_GEN_LOGNORMAL, .separate = t % 3 == 2,
                              .seed = mix(11000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_result *full = solve_ok(md, sc, NULL);
        cr_assert_eq(surety_result_status(full), SURETY_OPTIMAL);
        double opt = surety_result_objective(full);
        for (long lim = 1; lim <= 1024; lim *= 4) {
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.node_limit = lim;
            /* stopped with nodes waiting in the best-bound pool too */
            o.dive_nodes = (lim / 4) % 2 ? 5 : 0;
            surety_result *res = solve_ok(md, sc, &o);
            check_result(md, sc, res);
            if (surety_result_stop(res) == SURETY_STOP_NODES) {
                cr_assert_leq(surety_result_nodes(res), lim);
                cr_assert(surety_result_status(res) == SURETY_FEASIBLE);
            }
            cr_assert(surety_result_bound(res) >= opt - 1e-9 * (1 + fabs(opt)),
                      "limit %ld: bound %.10g below the optimum %.10g", lim,
                      surety_result_bound(res), opt);
            if (surety_result_plan(res))
                cr_assert(surety_result_objective(res) <=
                          opt + 1e-9 * (1 + fabs(opt)));
            surety_result_free(res);
        }
        surety_result_free(full);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
}

/* The root LP stopped by its share of a short time limit (a quarter of the
 * time left) leaves a valid bound from its duals, so the bound reported at
 * the limit must still be at least the optimum, and a solve that ends
 * optimal must have the optimum (which path is taken depends on the clock;
 * the checks hold on every path). With a resumption of the cut LP, which
 * was measured and not kept (bench/README.md), the test failed when a
 * resumed bound was lowered by 20%. */
static void count_lp_lines(void *ctx, surety_log_level level, const char *line)
{
    (void)level;
    if (line[0] == 'R')
        (*(int *)ctx)++;
}

Test(solve, root_lp_cut_short_keeps_an_honest_bound)
{
    int resumed = 0;
    for (uint64_t t = 0; t < 2; t++) {
        solve_gen_params p = {.n = 20 - 2 * t, .m = 3, .N = 250, .eps = 0.05, .tightness = 0.5,
                              .dist = SOLVE_GEN_NORMAL, .separate = t == 1,
                              .seed = mix(12000 + t)};
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_result *full = solve_ok(md, sc, NULL);
        cr_assert_eq(surety_result_status(full), SURETY_OPTIMAL);
        double opt = surety_result_objective(full);
        cr_log_info("t=%lu full solve %.2f s, %ld nodes", (unsigned long)t,
                    surety_result_seconds(full), surety_result_nodes(full));
        for (int v = 0; v < 3; v++) {
            static const double limit[3] = {0.15, 0.3, 0.6};
            int lines = 0;
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.lp_after = 1;
            o.dive_nodes = 1; /* back to the pool (and the LP) at once */
            o.time_limit_s = limit[v];
            o.verbosity = SURETY_LOG_PROGRESS;
            o.progress_s = 1e9;
            o.log = count_lp_lines;
            o.log_ctx = &lines;
            surety_result *res = solve_ok(md, sc, &o);
            check_result(md, sc, res);
            cr_assert(surety_result_bound(res) >= opt - 1e-9 * (1 + fabs(opt)),
                      "limit %g: bound %.10g below the optimum %.10g",
                      limit[v], surety_result_bound(res), opt);
            if (surety_result_status(res) == SURETY_OPTIMAL)
                cr_assert(fabs(surety_result_objective(res) - opt) <=
                              1e-9 * (1 + fabs(opt)),
                          "limit %g: optimal %.10g, but the optimum is %.10g",
                          limit[v], surety_result_objective(res), opt);
            resumed += lines > 1;
            cr_log_info("t=%lu limit %g: %d root LP calls, %s", (unsigned long)t,
                        limit[v], lines, surety_stop_name(surety_result_stop(res)));
            surety_result_free(res);
        }
        surety_result_free(full);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cr_log_info("runs with more than one root LP line: %d of 6", resumed);
}

Test(solve, interrupt_flag_stops_the_search)
{
    solve_gen_params p = {.n = 30, .m = 3, .N = 300, .eps = 0.05, .tightness = 0.5, .seed = 5};
    surety_model *md = solve_gen_model(&p);
    surety_scenarios *sc = solve_gen_scenarios(md, &p);
    volatile sig_atomic_t flag = 1;
    surety_solve_options o;
    surety_solve_options_init(&o);
    o.interrupt = &flag;
    surety_result *res = solve_ok(md, sc, &o);
    check_result(md, sc, res);
    cr_assert_eq(surety_result_stop(res), SURETY_STOP_INTERRUPT);
    cr_assert_eq(surety_result_nodes(res), 0);
    /* the root heuristic has run: a verified plan, not proven optimal */
    cr_assert_eq(surety_result_status(res), SURETY_FEASIBLE);
    cr_assert(surety_result_bound(res) >= surety_result_objective(res));
    surety_result_free(res);
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

Test(solve, infeasible_required_jobs_are_named)
{
    solve_gen_params p = {.n = 6, .m = 2, .N = 100, .eps = 0.05, .tightness = 0.2, .seed = 3};
    surety_model *md = solve_gen_model(&p);
    for (size_t j = 0; j < p.n; j++)
        md->jobs[j].required = 1;
    surety_scenarios *sc = solve_gen_scenarios(md, &p);
    surety_result *res = solve_ok(md, sc, NULL);
    cr_assert_eq(surety_result_status(res), SURETY_INFEASIBLE);
    cr_assert_null(surety_result_plan(res));
    const char *why = surety_result_reason(res);
    cr_assert(strstr(why, "J01") && strstr(why, "at most 5 may fail"),
              "reason: %s", why);
    surety_result_free(res);
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

Test(solve, empty_model_is_an_input_error)
{
    solve_gen_params p = {.n = 3, .m = 2, .N = 10, .eps = 0.1, .tightness = 0.5, .seed = 1};
    surety_model *md = solve_gen_model(&p);
    surety_scenarios *sc = solve_gen_scenarios(md, &p);
    size_t m = md->m;
    md->m = 0;
    surety_result *res = NULL;
    surety_error err;
    cr_assert_eq(surety_solve(md, sc, NULL, &res, &err), SURETY_EINPUT);
    cr_assert_null(res);
    cr_assert(strstr(err.message, "resources"), "%s", err.message);
    md->m = m;
    size_t n = md->n;
    md->n = 0;
    cr_assert_eq(surety_solve(md, sc, NULL, &res, &err), SURETY_EINPUT);
    cr_assert(strstr(err.message, "jobs"), "%s", err.message);
    md->n = n;
    cr_assert_eq(surety_solve(NULL, sc, NULL, &res, &err), SURETY_EUSAGE);
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

Test(solve, starting_plan_is_used_when_feasible)
{
    /* a caller's plan is re-counted like any other: the optimum of a full
     * run, given back as a start to a run of one node, is kept; an
     * infeasible start (every job in the first resource) is ignored */
    solve_gen_params p = {.n = 14, .m = 3, .N = 150, .eps = 0.05,
                          .tightness = 0.5, .dist = SOLVE_GEN_NORMAL, .seed = 77};
    surety_model *md = solve_gen_model(&p);
    for (size_t j = 0; j < p.n; j++)
        for (size_t i = 0; i < p.m; i++)
            md->jobs[j].allowed[i] = 1;
    surety_scenarios *sc = solve_gen_scenarios(md, &p);
    surety_result *full = solve_ok(md, sc, NULL);
    cr_assert_eq(surety_result_status(full), SURETY_OPTIMAL);
    surety_solve_options o;
    surety_solve_options_init(&o);
    o.node_limit = 1;
    o.start = surety_result_plan(full);
    surety_result *res = solve_ok(md, sc, &o);
    check_result(md, sc, res);
    cr_assert(surety_result_objective(res) >=
              surety_result_objective(full) - 1e-9);

    surety_plan bad = {p.n, NULL};
    long all0[14];
    for (size_t j = 0; j < p.n; j++)
        all0[j] = 0;
    bad.resource = all0;
    cr_assert(!plan_ok(md, sc, all0), "the bad start must be infeasible");
    o.start = &bad;
    surety_result *res2 = solve_ok(md, sc, &o);
    check_result(md, sc, res2);
    surety_result_free(res2);
    surety_result_free(res);
    surety_result_free(full);
    surety_model_destroy(md);
    solve_gen_scenarios_free(sc);
}

Test(solve, agrees_with_cbc_on_exported_mps)
{
    /* the project's own export (plain and quantile big-M) solved by CBC;
     * CBC minimises minus the mean profit */
    char *dir = cbc_tempdir();
    cr_assert_not_null(dir);
    char mps[1200];
    snprintf(mps, sizeof mps, "%s/model.mps", dir);
    for (uint64_t t = 0; t < 40; t++) {
        solve_gen_params p;
        random_params(&p, mix(70000 + t), 9, 3, 24);
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_error err;
        surety_bigm bigm = t % 2 ? SURETY_BIGM_STRENGTHENED : SURETY_BIGM_PLAIN;
        cr_assert_eq(surety_export_mps(md, sc, bigm, mps, &err), SURETY_OK,
                     "%s", err.message);
        cbc_solution cs;
        cbc_status st = cbc_solve_mps(mps, dir, 0, &cs);
        cr_assert(st == CBC_OPTIMAL || st == CBC_INFEASIBLE,
                  "instance %lu: cbc status %d", (unsigned long)t, (int)st);
        surety_result *res = solve_ok(md, sc, NULL);
        check_result(md, sc, res);
        if (st == CBC_INFEASIBLE) {
            cr_assert_eq(surety_result_status(res), SURETY_INFEASIBLE);
        } else {
            double want = -cs.objective;
            cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
            cr_assert(fabs(surety_result_objective(res) - want) <=
                          1e-6 * (1 + fabs(want)),
                      "instance %lu (%s big-M): solver %.10g, CBC %.10g",
                      (unsigned long)t, t % 2 ? "quantile" : "plain",
                      surety_result_objective(res), want);
        }
        cbc_solution_free(&cs);
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cbc_rmdir(dir);
    free(dir);
}

/* The root LP bound against GLPK's LP relaxation of the project's export
 * with quantile big-M (glpsol --nomip, Debian glpk-utils): surety's LP is
 * that relaxation restricted (pairs and jobs presolve rules out, scenario
 * rows whose big-M is negative tightened, dead scenarios fixed), so its
 * value may be lower, never higher; and the optimum with the LP bound is
 * still CBC's. */
Test(solve, root_lp_is_at_least_as_tight_as_glpk_relaxation)
{
    char *dir = cbc_tempdir();
    cr_assert_not_null(dir);
    char mps[1200];
    snprintf(mps, sizeof mps, "%s/model.mps", dir);
    int compared = 0;
    for (uint64_t t = 0; t < 40; t++) {
        solve_gen_params p;
        random_params(&p, mix(23000 + t), 9, 3, 40);
        p.N += 20;
        surety_model *md = solve_gen_model(&p);
        surety_scenarios *sc = solve_gen_scenarios(md, &p);
        surety_error err;
        cr_assert_eq(surety_export_mps(md, sc, SURETY_BIGM_STRENGTHENED, mps,
                                       &err),
                     SURETY_OK, "%s", err.message);
        surety_solve_options o;
        surety_solve_options_init(&o);
        o.dive_nodes = 1;
        o.lp_after = 1;
        lp_log g = {"LP bound: root %lf", 0, 0};
        o.log = catch_line;
        o.log_ctx = &g;
        o.verbosity = SURETY_LOG_INFO;
        surety_result *res = solve_ok(md, sc, &o);
        check_result(md, sc, res);
        cbc_solution cs;
        cbc_status st = cbc_solve_mps(mps, dir, 0, &cs);
        cr_assert(st == CBC_OPTIMAL || st == CBC_INFEASIBLE,
                  "instance %lu: cbc status %d", (unsigned long)t, (int)st);
        if (st == CBC_OPTIMAL) {
            double want = -cs.objective;
            cr_assert_eq(surety_result_status(res), SURETY_OPTIMAL);
            cr_assert(fabs(surety_result_objective(res) - want) <=
                          1e-6 * (1 + fabs(want)),
                      "instance %lu: solver %.10g, CBC %.10g",
                      (unsigned long)t, surety_result_objective(res), want);
            double relax = 0;
            if (g.seen) {
                cr_assert_eq(glpk_relaxation_mps(mps, dir, &relax), 0,
                             "instance %lu: glpsol --nomip failed",
                             (unsigned long)t);
                cr_assert(g.value <= -relax + 1e-6 * (1 + fabs(relax)),
                          "instance %lu: root LP %.10g above GLPK's "
                          "relaxation %.10g", (unsigned long)t, g.value,
                          -relax);
                compared++;
            }
        } else {
            cr_assert_eq(surety_result_status(res), SURETY_INFEASIBLE);
        }
        cbc_solution_free(&cs);
        surety_result_free(res);
        surety_model_destroy(md);
        solve_gen_scenarios_free(sc);
    }
    cbc_rmdir(dir);
    free(dir);
    cr_assert(compared >= 10, "only %d root LPs compared", compared);
}
