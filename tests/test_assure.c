/* test_assure.c - the assurance loop, the risk frontier, its chart and the
 * statistical optimality bounds, against independent checks: a fresh
 * million-scenario check, exhaustive enumeration of a discrete model, and
 * Python's XML parser for the SVG.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "surety.h"

#define PYTHON "/usr/bin/python3"

/* One workshop of 40 hours, eight jobs with normal hours and fixed profits.
 * Built so that the optimal plan of a 100-scenario sample at risk 0.05 is
 * too risky out of sample (asserted below, not assumed). */
static const char small_json[] =
    "{\"name\": \"assure test\", \"risk\": 0.05, \"scenarios\": 100, \"seed\": 11,\n"
    " \"resources\": [{\"id\": \"shop\", \"capacity\": 40}],\n"
    " \"jobs\": [\n"
    "  {\"id\": \"a\", \"hours\": {\"dist\": \"normal\", \"mean\": 6, \"sd\": 2, \"min\": 0.5}, \"profit\": 300},\n"
    "  {\"id\": \"b\", \"hours\": {\"dist\": \"normal\", \"mean\": 7, \"sd\": 2.5, \"min\": 0.5}, \"profit\": 350},\n"
    "  {\"id\": \"c\", \"hours\": {\"dist\": \"normal\", \"mean\": 5, \"sd\": 1.5, \"min\": 0.5}, \"profit\": 240},\n"
    "  {\"id\": \"d\", \"hours\": {\"dist\": \"normal\", \"mean\": 8, \"sd\": 3, \"min\": 0.5}, \"profit\": 420},\n"
    "  {\"id\": \"e\", \"hours\": {\"dist\": \"normal\", \"mean\": 4, \"sd\": 1, \"min\": 0.5}, \"profit\": 190},\n"
    "  {\"id\": \"f\", \"hours\": {\"dist\": \"normal\", \"mean\": 6, \"sd\": 2, \"min\": 0.5}, \"profit\": 310},\n"
    "  {\"id\": \"g\", \"hours\": {\"dist\": \"normal\", \"mean\": 9, \"sd\": 3, \"min\": 0.5}, \"profit\": 460},\n"
    "  {\"id\": \"h\", \"hours\": {\"dist\": \"normal\", \"mean\": 3, \"sd\": 1, \"min\": 0.5}, \"profit\": 150}]}\n";

static surety_model *parse(const char *json)
{
    surety_model *m = NULL;
    surety_error err;
    surety_error_clear(&err);
    cr_assert_eq(surety_model_parse(json, "test.json", NULL, &m, &err), SURETY_OK, "%s",
                 err.message);
    return m;
}

Test(assure, grows_until_certified_and_an_independent_check_agrees)
{
    surety_model *model = parse(small_json);
    surety_assure_options opt;
    surety_assure_options_init(&opt);
    opt.target = 0.95;
    opt.confidence = 0.95;
    opt.samples = 10000;
    surety_assure_report rep;
    surety_error err;
    cr_assert_eq(surety_assure(model, &opt, &rep, &err), SURETY_OK, "%s", err.message);
    cr_assert_geq(rep.nsteps, 2);
    /* the model is what the test needs: N = 100 at risk 0.05 falls short */
    cr_expect_eq(rep.step[0].N, 100);
    cr_expect_float_eq(rep.step[0].risk, 0.05, 1e-15);
    cr_expect_lt(rep.step[0].lower, 0.95, "first plan already passes: %g", rep.step[0].lower);
    /* the sample doubles and reuses its prefix; the risk never rises */
    for (size_t s = 1; s < rep.nsteps; s++) {
        cr_expect_eq(rep.step[s].N, 2 * rep.step[s - 1].N);
        cr_expect_leq(rep.step[s].risk, rep.step[s - 1].risk);
    }
    cr_expect_eq(rep.end, SURETY_ASSURE_MET, "end %s", surety_assure_end_name(rep.end));
    cr_assert(rep.plan);
    cr_expect(rep.certified);
    cr_expect_geq(rep.cert.lower, 0.95);
    /* certificate scenarios are disjoint from screening: SCREEN stream
     * samples .. 2 samples-1 (recounted here); screening used 0..samples-1 */
    cr_expect_eq(rep.cert.M, opt.samples);
    surety_scenarios *cert = NULL;
    cr_assert_eq(surety_sample(model, SURETY_STREAM_SCREEN, opt.samples, opt.samples, &cert, &err),
                 SURETY_OK);
    cr_expect_eq(surety_plan_count_fit(model, rep.plan, cert, NULL), rep.cert.fit);
    surety_scenarios_free(cert);

    /* Independent confirmation: another seed (every stream changes) and
     * 10^6 fresh scenarios. The claim "reliability >= 95%" should hold
     * within three standard errors of this estimate. */
    surety_model_set_seed(model, 987654321);
    surety_check_options copt;
    surety_check_options_init(&copt);
    copt.samples = 1000000;
    copt.in_sample = 0;
    surety_check_report big;
    cr_assert_eq(surety_check(model, rep.plan, &copt, &big, &err), SURETY_OK, "%s",
                 err.message);
    double se = sqrt(0.95 * 0.05 / 1e6);
    cr_expect_geq(big.reliability, 0.95 - 3 * se, "independent check: %.5f", big.reliability);
    surety_check_report_free(&big);
    surety_assure_report_free(&rep);
    surety_model_free(model);
}

Test(assure, stops_at_the_scenario_limit_and_says_so)
{
    surety_model *model = parse(small_json);
    surety_assure_options opt;
    surety_assure_options_init(&opt);
    opt.target = 0.999; /* out of reach with 100..200 scenarios and 2 steps */
    opt.max_scenarios = 200;
    opt.max_steps = 2;
    opt.samples = 5000;
    surety_assure_report rep;
    surety_error err;
    cr_assert_eq(surety_assure(model, &opt, &rep, &err), SURETY_OK, "%s", err.message);
    cr_expect_eq(rep.nsteps, 2);
    cr_expect_neq(rep.end, SURETY_ASSURE_MET);
    cr_expect_leq(rep.step[1].N, 200);
    if (rep.plan)
        cr_expect_not(rep.certified && rep.end == SURETY_ASSURE_MET);
    surety_assure_report_free(&rep);
    surety_model_free(model);
}

static size_t count_lines(const char *path)
{
    FILE *fp = fopen(path, "r");
    cr_assert(fp, "cannot open %s", path);
    size_t n = 0;
    int c;
    while ((c = fgetc(fp)) != EOF)
        n += c == '\n';
    fclose(fp);
    return n;
}

Test(frontier, profits_fall_with_risk_and_plans_fit_their_sample)
{
    surety_model *model = parse(small_json);
    static const double risks[] = {0.2, 0.02, 0.1, 0.05}; /* any order */
    surety_frontier_options opt;
    surety_frontier_options_init(&opt);
    opt.samples = 5000;
    surety_frontier_report rep;
    surety_error err;
    cr_assert_eq(surety_frontier(model, risks, 4, &opt, &rep, &err), SURETY_OK, "%s",
                 err.message);
    cr_assert_eq(rep.npoints, 4);
    surety_scenarios *sc = NULL;
    cr_assert_eq(surety_model_sample(model, &sc, &err), SURETY_OK);
    for (size_t p = 0; p < 4; p++) {
        const surety_frontier_point *pt = &rep.point[p];
        cr_expect_float_eq(pt->risk, risks[p], 0, "points keep the order given");
        cr_assert(pt->plan);
        cr_expect_eq(pt->status, SURETY_OPTIMAL);
        /* feasible in sample, recounted here independently of the solver */
        size_t fit = surety_plan_count_fit(model, pt->plan, sc, NULL);
        cr_expect_geq(fit, 100 - surety_allowance(pt->risk, 100), "risk %g: %zu fit", pt->risk,
                      fit);
        cr_expect(pt->in_sample_ok);
        cr_expect_leq(pt->lo, pt->reliability);
        cr_expect_leq(pt->reliability, pt->hi);
    }
    /* The levels were screened on SCREEN scenarios 0..4999, recounted
     * here: a plan picked from the frontier and then checked by `surety
     * check` (CHECK stream) is judged on scenarios it was not chosen on. */
    surety_scenarios *screen = NULL;
    cr_assert_eq(surety_sample(model, SURETY_STREAM_SCREEN, 0, 5000, &screen, &err), SURETY_OK);
    for (size_t p = 0; p < 4; p++) {
        const surety_frontier_point *pt = &rep.point[p];
        cr_expect_eq(surety_plan_count_fit(model, pt->plan, screen, NULL), pt->fit,
                     "risk %g: not the SCREEN scenarios", pt->risk);
        double profit = surety_plan_profit(model, pt->plan, screen);
        cr_expect(fabs(profit - pt->profit_mean) <= 1e-9 * fabs(profit), "risk %g: %.17g vs %.17g",
                  pt->risk, profit, pt->profit_mean);
    }
    surety_scenarios_free(screen);
    cr_expect_neq(SURETY_STREAM_SCREEN, SURETY_STREAM_CHECK);
    /* optimal profit is non-increasing as the risk decreases */
    for (size_t a = 0; a < 4; a++)
        for (size_t b = 0; b < 4; b++)
            if (risks[a] < risks[b])
                cr_expect_leq(rep.point[a].objective, rep.point[b].objective + 1e-9,
                              "risk %g profit %g > risk %g profit %g", risks[a],
                              rep.point[a].objective, risks[b], rep.point[b].objective);

    char csv[] = "/tmp/surety-frontier-XXXXXX.csv";
    int fd = mkstemps(csv, 4);
    cr_assert_geq(fd, 0);
    close(fd);
    cr_assert_eq(surety_frontier_write_csv(&rep, csv, &err), SURETY_OK, "%s", err.message);
    cr_expect_eq(count_lines(csv), 5, "header and one row per level");
    unlink(csv);

    if (surety_chart_available() && access(PYTHON, X_OK) == 0) {
        char svg[] = "/tmp/surety-frontier-XXXXXX.svg";
        fd = mkstemps(svg, 4);
        cr_assert_geq(fd, 0);
        close(fd);
        cr_assert_eq(surety_chart_frontier(&rep, 0.95, SURETY_CHART_SVG, svg, &err), SURETY_OK,
                     "%s", err.message);
        /* Python's XML parser must read it; the point markers are the only
         * paths filled with the marker colour (chart.c POINT, written by
         * cairo as percentages). */
        char cmd[1024];
        snprintf(cmd, sizeof cmd,
                 PYTHON " -c \"import xml.etree.ElementTree as E; r=E.parse('%s').getroot(); "
                        "print(r.tag.endswith('svg'), sum(1 for e in r.iter() "
                        "if e.tag.endswith('path') and 'fill:rgb(10%%,35%%,65%%)' in "
                        "e.get('style','')))\"",
                 svg);
        FILE *p = popen(cmd, "r");
        cr_assert(p);
        char ok[16] = "";
        int points = -1;
        int got = fscanf(p, "%15s %d", ok, &points);
        pclose(p);
        cr_assert_eq(got, 2, "python could not parse the SVG");
        cr_expect_str_eq(ok, "True");
        cr_expect_eq(points, 4, "one marker per level, got %d", points);
        unlink(svg);
    }
    surety_scenarios_free(sc);
    surety_frontier_report_free(&rep);
    surety_model_free(model);
}

/* A discrete model whose true optimum is known by enumeration: one shop of
 * 12 hours, four jobs with equally likely hours values (independent) and
 * fixed profits, so the objective is deterministic and PAS 2009 applies
 * exactly. */
static const char tiny_json_fmt[] =
    "{\"name\": \"tiny\", \"risk\": %.17g, \"scenarios\": 200, \"seed\": %lu,\n"
    " \"resources\": [{\"id\": \"shop\", \"capacity\": 12}],\n"
    " \"jobs\": [\n"
    "  {\"id\": \"a\", \"hours\": {\"dist\": \"empirical\", \"values\": [2, 4, 6]}, \"profit\": 10},\n"
    "  {\"id\": \"b\", \"hours\": {\"dist\": \"empirical\", \"values\": [3, 5]}, \"profit\": 9},\n"
    "  {\"id\": \"c\", \"hours\": {\"dist\": \"empirical\", \"values\": [1, 4, 7]}, \"profit\": 8},\n"
    "  {\"id\": \"d\", \"hours\": {\"dist\": \"empirical\", \"values\": [2, 3]}, \"profit\": 5}]}\n";

static const double tiny_values[4][3] = {{2, 4, 6}, {3, 5, 0}, {1, 4, 7}, {2, 3, 0}};
static const double tiny_profit[4] = {10, 9, 8, 5};

/* Exhaustive: every subset of jobs, its exact probability of fitting 12
 * hours over the 3*2*3*2 = 36 equally likely outcomes. Returns the best
 * profit among subsets that fit with probability >= 1 - eps. */
static double tiny_optimum(double eps)
{
    double best = 0;
    for (int S = 0; S < 16; S++) {
        int fit = 0, total = 0;
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 2; b++)
                for (int c = 0; c < 3; c++)
                    for (int d = 0; d < 2; d++) {
                        int idx[4] = {a, b, c, d};
                        double load = 0;
                        for (int j = 0; j < 4; j++)
                            if (S >> j & 1)
                                load += tiny_values[j][idx[j]];
                        fit += load <= 12;
                        total++;
                    }
        double p = 0;
        for (int j = 0; j < 4; j++)
            if (S >> j & 1)
                p += tiny_profit[j];
        /* fit/36 >= 1-eps, compared in integers to avoid a knife edge */
        if ((double)fit >= (1 - eps) * total - 1e-9 && p > best)
            best = p;
    }
    return best;
}

/* Runs surety_bounds on the tiny model; returns whether [lower, upper]
 * holds the true optimum. *above counts the replications whose dual bound
 * reaches the optimum (each should with probability >= theta_N). */
static int bounds_cover_n(double eps, unsigned long seed, double *upper, double *lower,
                          int *above)
{
    char json[2048];
    snprintf(json, sizeof json, tiny_json_fmt, eps, seed);
    surety_model *model = parse(json);
    surety_bounds_options opt;
    surety_bounds_options_init(&opt);
    opt.replications = 10;
    opt.confidence = 0.95;
    opt.samples = 4000;
    surety_bounds_report rep;
    surety_error err;
    cr_assert_eq(surety_bounds(model, &opt, &rep, &err), SURETY_OK, "%s", err.message);
    /* METHODS.md s.5 (SciPy 1.10.1) gives L = 2 for M = 10 at beta = 0.01
     * with theta = 0.5375; here beta/2 = 0.025 and theta = B(34; 200, 0.17) */
    cr_assert_gt(rep.L, 0);
    double opt_true = tiny_optimum(eps);
    *upper = rep.upper;
    *lower = rep.plan ? rep.lower : -INFINITY;
    int ok = rep.upper >= opt_true - 1e-9 && *lower <= opt_true + 1e-9;
    if (above)
        for (size_t r = 0; r < rep.M; r++)
            *above += rep.bound[r] >= opt_true - 1e-9;
    surety_bounds_report_free(&rep);
    surety_model_free(model);
    return ok;
}

static int bounds_cover(double eps, unsigned long seed, double *upper, double *lower)
{
    return bounds_cover_n(eps, seed, upper, lower, NULL);
}

Test(bounds, interval_on_an_enumerable_model)
{
    /* cross-checked by a separate enumeration in Python (itertools.product
     * over the 36 outcomes): {a,b,d} fits 12 h in 30 of 36 (83.3% >= 83%),
     * every more profitable set fits less often, so the optimum at risk
     * 0.17 is 24 */
    cr_expect_float_eq(tiny_optimum(0.17), 24, 1e-12);
    double up, lo;
    int ok = bounds_cover(0.17, 5, &up, &lo);
    cr_expect(ok, "interval [%g, %g] misses the true optimum 24", lo, up);
    cr_expect_leq(lo, up);
}

/* PAS 2009 assume a deterministic objective; here each replication's
 * objective is a sampled mean profit. One job of uniform(5, 15) hours
 * always fits 100 hours, so the true optimum is its mean profit
 * 100 * 10 = 1000 (arithmetic) and every replication's dual bound is a
 * sample mean of 100 profits (sd 1000/sqrt(12) = 288.7), below 1000 about
 * half the time. At gamma = 0.1, theta_N = B(10; 100, 0.05) = 0.98853
 * (SciPy 1.10.1 binom.cdf), so without the margin L would be 9 of 10: the
 * second smallest sample mean, below 1000 with probability
 * 1 - B(1; 10, 0.5) = 0.989. */
Test(bounds, random_profits_widen_the_upper_bound)
{
    static const char json[] =
        "{\"name\": \"one job\", \"risk\": 0.05, \"scenarios\": 100, \"seed\": 4,\n"
        " \"resources\": [{\"id\": \"shop\", \"capacity\": 100}],\n"
        " \"jobs\": [{\"id\": \"a\", \"hours\": {\"dist\": \"uniform\", \"low\": 5, "
        "\"high\": 15}, \"profit\": {\"rate\": 100}}]}\n";
    surety_model *model = parse(json);
    surety_bounds_options opt;
    surety_bounds_options_init(&opt);
    opt.gamma = 0.1;
    opt.samples = 2000;
    surety_bounds_report rep;
    surety_error err;
    cr_assert_eq(surety_bounds(model, &opt, &rep, &err), SURETY_OK, "%s", err.message);
    cr_expect_float_eq(rep.theta, 0.98853, 5e-6);
    cr_expect_float_eq(rep.theta_eff, rep.theta - 0.02, 1e-15);
    /* margin = Phi^{-1}(0.98) = 2.0537489 (SciPy norm.ppf) times the
     * sample sd over sqrt(100); the sample sd is within 20% of 288.7 */
    cr_expect_gt(rep.margin, 2.0537489 * 288.7 / 10 * 0.8);
    cr_expect_lt(rep.margin, 2.0537489 * 288.7 / 10 * 1.2);
    int below = 0;
    for (size_t r = 0; r < rep.M; r++)
        below += rep.bound[r] < 1000;
    cr_expect_geq(below, 2, "this seed should show the bias: %d of 10 below", below);
    cr_expect_gt(rep.L, 0);
    cr_expect_geq(rep.upper, 1000, "upper %g below the true optimum 1000", rep.upper);
    cr_expect_leq(rep.lower, 1000);
    surety_bounds_report_free(&rep);
    surety_model_free(model);
}

/* A separate model's optimal plan fits a sample only if each of its m
 * constraints does: theta_eff = 1 - m (1 - theta_N) (Bonferroni), here
 * with fixed profits (no margin). At gamma = eps the two-resource tiny
 * model has theta_N = B(34; 200, 0.17) = 0.545639 (SciPy 1.10.1), too
 * little for any L; at gamma = 0.25 theta_N = B(50; 200, 0.17) = 0.998463
 * (SciPy 1.10.1) and L exists. */
Test(bounds, separate_models_use_bonferroni_for_theta)
{
    char json[2048];
    snprintf(json, sizeof json, tiny_json_fmt, 0.17, 5UL);
    char sep[2200];
    snprintf(sep, sizeof sep, "{\"constraint\": \"separate\", %s", json + 1);
    char *shop = strstr(sep, "\"capacity\": 12}");
    cr_assert_not_null(shop);
    char two[2300];
    snprintf(two, sizeof two, "%.*s\"capacity\": 12}, {\"id\": \"yard\", \"capacity\": 9}%s",
             (int)(shop - sep), sep, shop + strlen("\"capacity\": 12}"));
    surety_model *model = parse(two);
    cr_assert_eq(surety_model_resources(model), 2);
    surety_bounds_options opt;
    surety_bounds_options_init(&opt);
    opt.samples = 1000;
    surety_bounds_report rep;
    surety_error err;
    cr_assert_eq(surety_bounds(model, &opt, &rep, &err), SURETY_OK, "%s", err.message);
    cr_expect_float_eq(rep.theta, 0.545639, 5e-7);
    cr_expect_eq(rep.margin, 0);
    /* 1 - 2 (1 - 0.545639) = 0.091278; B(0; 10, 0.091278) = 0.384 > 0.025
     * (arithmetic), so no order statistic qualifies (one resource: L = 2) */
    cr_expect_float_eq(rep.theta_eff, 0.091278, 5e-6);
    cr_expect_eq(rep.L, 0);
    cr_expect(isnan(rep.upper));
    surety_bounds_report_free(&rep);
    opt.gamma = 0.25;
    cr_assert_eq(surety_bounds(model, &opt, &rep, &err), SURETY_OK, "%s", err.message);
    cr_expect_float_eq(rep.theta, 0.998463, 5e-7);
    cr_expect_float_eq(rep.theta_eff, 1 - 2 * (1 - rep.theta), 1e-15);
    cr_expect_gt(rep.L, 0);
    surety_bounds_report_free(&rep);
    surety_model_free(model);
}

/* Coverage over many independent seeds: the interval must contain the true
 * optimum in at least the stated 95% of runs (minus three binomial standard
 * errors). Slow suite. */
/* theta: P{Bin(200, eps) <= floor(200 eps)} from SciPy 1.10.1
 * (binom.cdf(34, 200, 0.17) = 0.545639, binom.cdf(33, 200, 1/6) = 0.521032):
 * the probability that the true optimal plan fits a replication's sample,
 * hence a lower bound on the share of replications whose bound reaches the
 * optimum (Pagnoncelli, Ahmed & Shapiro 2009). */
static void coverage_run(double eps, double theta, int reps)
{
    int covered = 0, up_ok = 0, above = 0;
    double opt_true = tiny_optimum(eps);
    for (int r = 0; r < reps; r++) {
        double up, lo;
        covered += bounds_cover_n(eps, 1000 + (unsigned long)r, &up, &lo, &above);
        up_ok += up >= opt_true - 1e-9;
    }
    double cov = (double)covered / reps, share = (double)above / (10.0 * reps);
    fprintf(stderr, "bounds coverage at risk %.4g (optimum %g): %d of %d (%.3f); upper side "
                    "alone %d of %d; replications reaching the optimum %.3f (theta %.3f)\n",
            eps, opt_true, covered, reps, cov, up_ok, reps, share, theta);
    cr_expect_geq(cov, 0.95 - 3 * sqrt(0.95 * 0.05 / reps), "coverage %.3f", cov);
    cr_expect_geq(share, theta - 3 * sqrt(theta * (1 - theta) / (10.0 * reps)),
                  "share %.3f below theta %.3f", share, theta);
}

Test(slow_bounds, coverage)
{
    if (!getenv("SURETY_SLOW"))
        cr_skip_test("set SURETY_SLOW=1 (meson test --suite slow)");
    coverage_run(0.17, 0.545639, 200);
}

/* Knife edge: at risk 1/6 the optimal set {a,b,d} fits in exactly 30 of 36
 * outcomes = 1 - 1/6, so it fits a sample with probability only about
 * theta_N ~ 0.5 and the upper bound rests on the order statistic L. */
Test(slow_bounds, coverage_at_the_knife_edge)
{
    if (!getenv("SURETY_SLOW"))
        cr_skip_test("set SURETY_SLOW=1 (meson test --suite slow)");
    cr_assert_float_eq(tiny_optimum(1.0 / 6), 24, 1e-12);
    coverage_run(1.0 / 6, 0.521032, 200);
}

/* The load chart of `surety check --svg`: one capacity line per resource
 * (the only strokes in the capacity colour, chart.c LIMIT) and an XML file
 * Python can parse. */
Test(chart, loads_svg_has_one_capacity_line_per_resource)
{
    if (!surety_chart_available() || access(PYTHON, X_OK) != 0)
        cr_skip_test("no cairo or no python");
    static const char json[] =
        "{\"name\": \"two\", \"risk\": 0.1, \"scenarios\": 50, \"seed\": 3,\n"
        " \"resources\": [{\"id\": \"r1\", \"capacity\": 10}, {\"id\": \"r2\", \"capacity\": 8}],\n"
        " \"jobs\": [\n"
        "  {\"id\": \"a\", \"hours\": {\"dist\": \"normal\", \"mean\": 6, \"sd\": 2, \"min\": 0.5}, \"profit\": 5},\n"
        "  {\"id\": \"b\", \"hours\": {\"dist\": \"uniform\", \"low\": 2, \"high\": 6}, \"profit\": 4}]}\n";
    surety_model *model = parse(json);
    surety_plan *plan = surety_plan_new(model);
    surety_plan_set(plan, 0, 0);
    surety_plan_set(plan, 1, 1);
    surety_check_options copt;
    surety_check_options_init(&copt);
    copt.samples = 3000;
    char svg[] = "/tmp/surety-loads-XXXXXX.svg";
    int fd = mkstemps(svg, 4);
    cr_assert_geq(fd, 0);
    close(fd);
    surety_error err;
    cr_assert_eq(surety_chart_loads(model, plan, &copt, SURETY_CHART_SVG, svg, &err), SURETY_OK,
                 "%s", err.message);
    char cmd[1024];
    snprintf(cmd, sizeof cmd,
             PYTHON " -c \"import xml.etree.ElementTree as E; r=E.parse('%s').getroot(); "
                    "print(sum(1 for e in r.iter() if e.tag.endswith('path') and "
                    "'stroke:rgb(75%%,10%%,10%%)' in e.get('style','')))\"",
             svg);
    FILE *p = popen(cmd, "r");
    cr_assert(p);
    int lines = -1;
    int got = fscanf(p, "%d", &lines);
    pclose(p);
    cr_assert_eq(got, 1, "python could not parse the SVG");
    cr_expect_eq(lines, 2, "capacity lines: %d", lines);
    unlink(svg);
    surety_plan_free(plan);
    surety_model_free(model);
}
