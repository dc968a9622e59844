/* test_check.c - plans and the out-of-sample checker against closed-form
 * normal reliabilities, SciPy intervals and NumPy percentiles.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "check.h"
#include "model.h"
#include "plan.h"
#include "sample.h"
#include "surety.h"

#define PYTHON "/usr/bin/python3" /* the interpreter with SciPy 1.10.1 */

/* Independent normal hours, no truncation. Means are >= 6.6 sd above 0, so
 * the sampler's clamp at 0 changes a draw with probability below 2e-11
 * (SciPy: norm.cdf(-10/1.5) = 1.3e-11): the sums are normal to that
 * precision. Profits are rate*hours+fixed without clamps, hence normal. */
static const char *normal_json =
    "{\"name\": \"three shops\", \"risk\": 0.4, \"scenarios\": 500, \"seed\": 11,\n"
    " \"resources\": [\n"
    "  {\"id\": \"north\", \"capacity\": 28.5, \"hours_factor\": 1.0},\n"
    "  {\"id\": \"south\", \"capacity\": 27, \"hours_factor\": 1.2},\n"
    "  {\"id\": \"east\", \"capacity\": 6, \"hours_factor\": 0.9}],\n"
    " \"jobs\": [\n"
    "  {\"id\": \"J1\", \"hours\": {\"dist\": \"normal\", \"mean\": 10, \"sd\": 1.5},\n"
    "   \"profit\": {\"rate\": 80, \"fixed\": 100}, \"allowed\": [\"north\", \"south\"]},\n"
    "  {\"id\": \"J2\", \"hours\": {\"dist\": \"normal\", \"mean\": 14, \"sd\": 2},\n"
    "   \"profit\": {\"rate\": 80}, \"allowed\": [\"north\"], \"required\": true},\n"
    "  {\"id\": \"J3\", \"hours\": {\"dist\": \"normal\", \"mean\": 8, \"sd\": 1.2},\n"
    "   \"profit\": {\"rate\": 80}, \"allowed\": [\"south\"]},\n"
    "  {\"id\": \"J4\", \"hours\": {\"dist\": \"normal\", \"mean\": 11, \"sd\": 1.6},\n"
    "   \"profit\": {\"rate\": 80}, \"allowed\": [\"south\", \"east\"]},\n"
    "  {\"id\": \"J5\", \"hours\": {\"dist\": \"normal\", \"mean\": 6, \"sd\": 1},\n"
    "   \"profit\": {\"rate\": 80}, \"allowed\": [\"east\"]},\n"
    "  {\"id\": \"J6\", \"hours\": {\"dist\": \"normal\", \"mean\": 9, \"sd\": 1.4},\n"
    "   \"profit\": {\"rate\": 70}, \"allowed\": [\"north\", \"east\"]}]}\n";

static surety_model *parse(const char *json)
{
    surety_model *model = NULL;
    surety_error err;
    surety_error_clear(&err);
    surety_code rc = surety_model_parse(json, "test.json", NULL, &model, &err);
    cr_assert_eq(rc, SURETY_OK, "parse: %s %s", err.field, err.message);
    return model;
}

/* The plan of the closed-form test: J1,J2 -> north; J3,J4 -> south;
 * J5 -> east; J6 rejected. */
static surety_plan *normal_plan(const surety_model *model)
{
    surety_plan *plan = surety_plan_new(model);
    surety_plan_set(plan, 0, 0);
    surety_plan_set(plan, 1, 0);
    surety_plan_set(plan, 2, 1);
    surety_plan_set(plan, 3, 1);
    surety_plan_set(plan, 4, 2);
    return plan;
}

/* Runs a Python expression with SciPy and reads whitespace-separated
 * numbers from its output; returns how many were read. */
static int python_numbers(const char *program, double *v, int max)
{
    char path[] = "/tmp/surety-check-py-XXXXXX";
    int fd = mkstemp(path);
    cr_assert_geq(fd, 0);
    FILE *fp = fdopen(fd, "w");
    fputs(program, fp);
    fclose(fp);
    char cmd[256];
    snprintf(cmd, sizeof cmd, PYTHON " %s", path);
    FILE *p = popen(cmd, "r");
    cr_assert_not_null(p);
    int got = 0;
    while (got < max && fscanf(p, "%lf", &v[got]) == 1)
        got++;
    int status = pclose(p);
    unlink(path);
    cr_assert_eq(status, 0, "python failed on:\n%s", program);
    return got;
}

/* Clopper-Pearson by SciPy's beta quantiles (Clopper & Pearson 1934,
 * METHODS.md s.4): two-sided [lo, hi] and one-sided lower bound. */
static void scipy_cp(size_t x, size_t n, double c, double out[3])
{
    char prog[1024];
    snprintf(prog, sizeof prog,
             "from scipy.stats import beta\n"
             "x, n, a = %zu, %zu, 1 - %.17g\n"
             "lo = 0.0 if x == 0 else beta.ppf(a / 2, x, n - x + 1)\n"
             "hi = 1.0 if x == n else beta.ppf(1 - a / 2, x + 1, n - x)\n"
             "l1 = 0.0 if x == 0 else beta.ppf(a, x, n - x + 1)\n"
             "print('%%.17g %%.17g %%.17g' %% (lo, hi, l1))\n",
             x, n, c);
    cr_assert_eq(python_numbers(prog, out, 3), 3);
}

Test(check, closed_form_normal_reliability)
{
    surety_model *model = parse(normal_json);
    surety_plan *plan = normal_plan(model);
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 200000;
    opt.confidence = 0.99;
    surety_check_report rep;
    surety_error err;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, &err), SURETY_OK, "%s",
                 err.message);

    /* Truth (SciPy 1.10.1, scipy.stats.norm): loads are normal with
     * mean f*sum(mu) and sd f*sqrt(sum sd^2); resources share no job, so
     * the joint reliability is the product of
     * norm.cdf((C-mu)/sd) = 0.9640696808870742 (north: mu 24, sd 2.5),
     * 0.9599408431361829 (south: 22.8, 2.4), 0.747507462453077 (east: 5.4,
     * 0.9) = 0.6917806782049672.
     * Not flaky: a 99% interval misses the truth with probability 1%,
     * decided once for this seed; the seed makes the draw deterministic. */
    const double joint = 0.6917806782049672;
    const double hold[3] = {0.9640696808870742, 0.9599408431361829,
                            0.747507462453077};
    const double mu[3] = {24, 22.8, 5.4}, sd[3] = {2.5, 2.4, 0.9};
    const double cap[3] = {28.5, 27, 6};
    const double eover[3] = {0.035688959744069326, 0.03881710635559599,
                             0.13600768244196337};
    const double p95load[3] = {28.11213406737868, 26.747648704683535,
                               6.880368264256325};
    /* sd of max(0, L-C): E[(L-C)+^2] = sd^2((1+d^2)(1-Phi(d)) - d phi(d)),
     * d = (C-mu)/sd (normal partial moments), minus the squared mean,
     * evaluated with SciPy 1.10.1 */
    const double sdover[3] = {0.25038065771912266, 0.257297744055912,
                              0.32313504338681026};
    cr_assert_eq(rep.M, 200000);
    cr_assert(rep.lo <= joint && joint <= rep.hi, "joint %g not in [%g, %g]",
              joint, rep.lo, rep.hi);
    cr_assert(rep.lower <= joint);
    double M = (double)rep.M;
    for (int i = 0; i < 3; i++) {
        const surety_resource_check *q = &rep.resource[i];
        double over = 1 - hold[i];
        cr_assert(q->overload_lo <= over && over <= q->overload_hi,
                  "resource %d: %g not in [%g, %g]", i, over, q->overload_lo,
                  q->overload_hi);
        /* tolerances: 5 standard errors. se(mean) = sd/sqrt(M). A sample
         * quantile's se is sqrt(q(1-q)/M)/density at the quantile, with
         * density phi(1.6448536)/sd = 0.10313564/sd (SciPy norm.pdf). */
        double se_mean = sd[i] / sqrt(M);
        double se_q95 = sqrt(0.95 * 0.05 / M) / (0.10313564037537139 / sd[i]);
        cr_assert(fabs(q->load_mean - mu[i]) < 5 * se_mean,
                  "load mean %g vs %g", q->load_mean, mu[i]);
        cr_assert(fabs(q->load_p95 - p95load[i]) < 5 * se_q95,
                  "load p95 %g vs %g", q->load_p95, p95load[i]);
        cr_assert(fabs(q->overload_hours_mean - eover[i]) <
                      5 * sdover[i] / sqrt(M),
                  "overload mean %g vs %g", q->overload_hours_mean, eover[i]);
        /* p95 of the overload: 0 where fewer than 5% overload (north,
         * south, by ~30 se), else the load's p95 minus the capacity */
        if (i < 2)
            cr_assert_eq(q->overload_hours_p95, 0.0);
        else
            cr_assert(fabs(q->overload_hours_p95 - (p95load[i] - cap[i])) <
                      5 * se_q95);
    }
    /* profit: 80*(10+14+8+11+6) + 100 = 4020, sd 80*sqrt(11.25)
     * = 268.3281572999748; 5th/95th percentiles 3578.639457251931 and
     * 4461.360542748069 (SciPy norm.ppf). se(sd) ~ sd/sqrt(2M). */
    double psd = 268.3281572999748;
    double pse_q = sqrt(0.95 * 0.05 / M) / (0.10313564037537139 / psd);
    double pse_med = sqrt(0.25 / M) / (0.3989422804014327 / psd);
    cr_assert(fabs(rep.profit_mean - 4020) < 5 * psd / sqrt(M));
    cr_assert(fabs(rep.profit_sd - psd) < 5 * psd / sqrt(2 * M));
    cr_assert(fabs(rep.profit_p5 - 3578.639457251931) < 5 * pse_q);
    cr_assert(fabs(rep.profit_p50 - 4020) < 5 * pse_med);
    cr_assert(fabs(rep.profit_p95 - 4461.360542748069) < 5 * pse_q);

    /* target 1 - 0.4 = 0.6 lies far below the truth: met */
    cr_assert(fabs(rep.target - 0.6) < 1e-15);
    cr_assert_eq(rep.verdict, SURETY_MET);
    cr_assert(rep.sample_seconds >= 0 && rep.check_seconds >= 0);
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_model_free(model);
}

Test(check, intervals_match_scipy)
{
    surety_model *model = parse(normal_json);
    surety_plan *plan = normal_plan(model);
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 3000;
    opt.confidence = 0.95;
    surety_check_report rep;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, NULL), SURETY_OK);
    double cp[3];
    scipy_cp(rep.fit, rep.M, 0.95, cp);
    cr_assert(fabs(rep.lo - cp[0]) < 1e-9 && fabs(rep.hi - cp[1]) < 1e-9 &&
                  fabs(rep.lower - cp[2]) < 1e-9,
              "CP (%g %g %g) vs SciPy (%g %g %g)", rep.lo, rep.hi, rep.lower,
              cp[0], cp[1], cp[2]);
    cr_assert_eq(rep.reliability, (double)rep.fit / 3000.0);
    size_t over = rep.M - (size_t)llround(rep.M * (1 - rep.resource[2].overload_prob));
    scipy_cp(over, rep.M, 0.95, cp);
    cr_assert(fabs(rep.resource[2].overload_lo - cp[0]) < 1e-9);
    cr_assert(fabs(rep.resource[2].overload_hi - cp[1]) < 1e-9);
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_model_free(model);
}

/* Verdict rules: MET iff lower >= target; UNCERTAIN iff estimate >= target
 * but lower < target; NOT_MET otherwise. The risk is moved around the
 * observed numbers, which do not depend on the risk. */
Test(check, verdict_logic)
{
    surety_model *model = parse(normal_json);
    surety_plan *plan = normal_plan(model);
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 2000;
    opt.in_sample = 0;
    surety_check_report rep;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, NULL), SURETY_OK);
    double r = rep.reliability, lower = rep.lower;
    size_t fit = rep.fit;
    cr_assert(lower < r && r < 1);
    surety_check_report_free(&rep);

    struct {
        double target;
        surety_verdict want;
    } cases[] = {
        {lower - 1e-6, SURETY_MET},
        {(lower + r) / 2, SURETY_UNCERTAIN},
        {r - 1e-12, SURETY_UNCERTAIN},
        {(r + 1) / 2, SURETY_NOT_MET},
    };
    for (size_t t = 0; t < sizeof cases / sizeof cases[0]; t++) {
        cr_assert_eq(surety_model_set_risk(model, 1 - cases[t].target, NULL),
                     SURETY_OK);
        cr_assert_eq(surety_check(model, plan, &opt, &rep, NULL), SURETY_OK);
        cr_assert_eq(rep.fit, fit, "the same fresh scenarios every time");
        cr_assert_eq(rep.verdict, cases[t].want, "case %zu: verdict %d", t,
                     (int)rep.verdict);
        surety_check_report_free(&rep);
    }
    /* nothing accepted: every scenario fits */
    surety_plan *empty = surety_plan_new(model);
    surety_plan_set(empty, 1, 0); /* J2 is required */
    cr_assert_eq(surety_model_set_risk(model, 0.05, NULL), SURETY_OK);
    cr_assert_eq(surety_check(model, empty, &opt, &rep, NULL), SURETY_OK);
    cr_assert_eq(rep.fit, rep.M);
    cr_assert_eq(rep.hi, 1.0);
    cr_assert_eq(rep.verdict, SURETY_MET); /* 0.95^2000 is far below 5% */
    surety_check_report_free(&rep);
    surety_plan_free(empty);
    surety_plan_free(plan);
    surety_model_free(model);
}

/* normal_json with the separate constraint and seed 12 (caller frees). */
static char *separate_json(void)
{
    char *json = strdup(normal_json);
    char *p = strstr(json, "\"seed\": 11,");
    cr_assert_not_null(p);
    memcpy(p, "\"seed\": 12,", 11);
    size_t len = strlen(json);
    char *sep = malloc(len + 64);
    snprintf(sep, len + 64, "{\"constraint\": \"separate\", %s", json + 1);
    free(json);
    return sep;
}

Test(check, separate_verdicts_are_bonferroni)
{
    /* same model, separate constraint; eps 0.1: east (0.75) fails */
    char *sep = separate_json();
    surety_model *model = parse(sep);
    cr_assert_eq(surety_model_constraint(model), SURETY_SEPARATE);
    cr_assert_eq(surety_model_set_risk(model, 0.1, NULL), SURETY_OK);
    surety_plan *plan = normal_plan(model);
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 20000;
    opt.confidence = 0.95;
    surety_check_report rep;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, NULL), SURETY_OK);
    /* each bound at 1 - 0.05/3 (Bonferroni over m = 3), checked by SciPy */
    for (int i = 0; i < 3; i++) {
        const surety_resource_check *q = &rep.resource[i];
        size_t holds = (size_t)llround(q->reliability * (double)rep.M);
        double cp[3];
        scipy_cp(holds, rep.M, 1 - 0.05 / 3, cp);
        cr_assert(fabs(q->reliability_lower - cp[2]) < 1e-9,
                  "resource %d: %.12g vs SciPy %.12g", i, q->reliability_lower,
                  cp[2]);
    }
    /* truth 0.964, 0.960 (met at 0.9 with 20000 samples) and 0.748 */
    cr_assert_eq(rep.resource[0].verdict, SURETY_MET);
    cr_assert_eq(rep.resource[1].verdict, SURETY_MET);
    cr_assert_eq(rep.resource[2].verdict, SURETY_NOT_MET);
    cr_assert_eq(rep.verdict, SURETY_NOT_MET);
    /* moving J5 out leaves east empty: then every resource is met */
    surety_plan_set(plan, 4, -1);
    surety_check_report_free(&rep);
    cr_assert_eq(surety_check(model, plan, &opt, &rep, NULL), SURETY_OK);
    cr_assert_eq(rep.resource[2].reliability, 1.0);
    cr_assert_eq(rep.verdict, SURETY_MET);
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_model_free(model);
    free(sep);
}

/* `surety check` on a separate model shows each resource's reliability,
 * lower bound (at its Bonferroni confidence) and verdict, in the text and
 * in the JSON, equal to what the library computes on the same fresh
 * scenarios; Python's json module reads the JSON. */
Test(check, cli_shows_each_resource_of_a_separate_model)
{
    const char *root = getenv("SURETY_BUILD_ROOT");
    char exe[1024];
    snprintf(exe, sizeof exe, "%s/surety", root ? root : ".");
    if (!root || access(exe, X_OK) != 0 || access(PYTHON, X_OK) != 0)
        cr_skip_test("no surety program or no python");
    char dir[] = "/tmp/surety-check-cli-XXXXXX";
    cr_assert_not_null(mkdtemp(dir));
    char mpath[128], ppath[128];
    snprintf(mpath, sizeof mpath, "%s/model.json", dir);
    snprintf(ppath, sizeof ppath, "%s/plan.json", dir);
    char *sep = separate_json();
    FILE *fp = fopen(mpath, "w");
    cr_assert_not_null(fp);
    fputs(sep, fp);
    fclose(fp);
    surety_model *model = parse(sep);
    cr_assert_eq(surety_model_set_risk(model, 0.1, NULL), SURETY_OK);
    surety_plan *plan = normal_plan(model);
    surety_error err;
    cr_assert_eq(surety_plan_write(model, plan, NULL, ppath, &err), SURETY_OK,
                 "%s", err.message);
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 5000;
    surety_check_report rep;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, NULL), SURETY_OK);
    static const char *key[] = {"met", "uncertain", "not_met"};

    char cmd[2048];
    snprintf(cmd, sizeof cmd,
             "'%s' check '%s' '%s' --risk 0.1 --samples 5000 --json | " PYTHON
             " -c \"import json,sys; d=json.load(sys.stdin); print(d['constraint']); "
             "[print(repr(r['reliability']), repr(r['lower_bound']), "
             "repr(r['lower_bound_confidence']), r['verdict']) "
             "for r in d['out_of_sample']['resources']]\"",
             exe, mpath, ppath);
    FILE *p = popen(cmd, "r");
    cr_assert_not_null(p);
    char word[32] = "";
    cr_assert_eq(fscanf(p, "%31s", word), 1, "no JSON read");
    cr_expect_str_eq(word, "separate");
    for (size_t i = 0; i < 3; i++) {
        double rel, lower, conf;
        cr_assert_eq(fscanf(p, "%lf %lf %lf %31s", &rel, &lower, &conf, word),
                     4, "resource %zu missing", i);
        const surety_resource_check *q = &rep.resource[i];
        cr_expect_eq(rel, q->reliability, "resource %zu", i);
        cr_expect_eq(lower, q->reliability_lower, "resource %zu", i);
        cr_expect_float_eq(conf, 1 - 0.05 / 3, 1e-15);
        cr_expect_str_eq(word, key[q->verdict]);
    }
    cr_expect_eq(pclose(p), 0);

    snprintf(cmd, sizeof cmd, "'%s' check '%s' '%s' --risk 0.1 --samples 5000",
             exe, mpath, ppath);
    p = popen(cmd, "r");
    cr_assert_not_null(p);
    static char text[16384];
    size_t len = fread(text, 1, sizeof text - 1, p);
    text[len] = '\0';
    cr_expect_eq(pclose(p), 0);
    cr_expect(strstr(text, "Each resource on its own") != NULL, "%s", text);
    static const char *word_of[] = {"met", "not shown", "not met"};
    for (size_t i = 0; i < 3; i++) {
        const surety_resource_check *q = &rep.resource[i];
        char line[160];
        snprintf(line, sizeof line, "  %-16s %9.4f%% %9.4f%%  %s\n",
                 surety_model_resource_id(model, i), 100 * q->reliability,
                 100 * q->reliability_lower, word_of[q->verdict]);
        cr_expect(strstr(text, line) != NULL, "no line '%s' in:\n%s", line,
                  text);
    }
    /* east (truth 0.748) falls short, so the model's verdict is not met */
    cr_expect_eq(rep.verdict, SURETY_NOT_MET);
    cr_expect(strstr(text, "in every resource: not met") != NULL);
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_model_free(model);
    free(sep);
    unlink(mpath);
    unlink(ppath);
    rmdir(dir);
}

Test(check, bad_plans_rejected)
{
    surety_model *model = parse(normal_json);
    surety_check_report rep;
    surety_error err;

    surety_plan *plan = normal_plan(model);
    surety_plan_set(plan, 2, 0); /* J3 is allowed in south only */
    cr_assert_eq(surety_check(model, plan, NULL, &rep, &err), SURETY_EINPUT);
    cr_assert(strstr(err.message, "J3") && strstr(err.message, "north"),
              "%s", err.message);
    surety_plan_free(plan);

    plan = normal_plan(model);
    surety_plan_set(plan, 1, -1); /* J2 is required */
    cr_assert_eq(surety_check(model, plan, NULL, &rep, &err), SURETY_EINPUT);
    cr_assert(strstr(err.message, "J2") && strstr(err.message, "required"));
    surety_plan_set(plan, 1, 7); /* no resource 7 */
    cr_assert_eq(surety_check(model, plan, NULL, &rep, &err), SURETY_EUSAGE);
    surety_plan_free(plan);

    plan = normal_plan(model);
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 0;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, &err), SURETY_EUSAGE);
    surety_check_options_init(&opt);
    opt.confidence = 1;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, &err), SURETY_EUSAGE);
    surety_plan_free(plan);

    /* through the plan reader: a job in a resource it may not use */
    char path[] = "/tmp/surety-plan-XXXXXX";
    int fd = mkstemp(path);
    FILE *fp = fdopen(fd, "w");
    fputs("{\"plan\": {\"J1\": \"north\", \"J2\": \"south\"}}\n", fp);
    fclose(fp);
    surety_plan *read = NULL;
    cr_assert_neq(surety_plan_read(model, path, &read, &err), SURETY_OK);
    cr_assert_null(read);
    /* and a good one reads back to the same plan */
    fp = fopen(path, "w");
    fputs("{\"plan\": {\"J1\": \"north\", \"J2\": \"north\", \"J3\": \"south\","
          " \"J4\": \"south\", \"J5\": \"east\"}}\n",
          fp);
    fclose(fp);
    cr_assert_eq(surety_plan_read(model, path, &read, &err), SURETY_OK, "%s",
                 err.message);
    plan = normal_plan(model);
    for (size_t j = 0; j < surety_model_jobs(model); j++)
        cr_assert_eq(surety_plan_get(read, j), surety_plan_get(plan, j));
    unlink(path);
    surety_plan_free(read);
    surety_plan_free(plan);
    surety_model_free(model);
}

/* A straightforward recount: resource i holds in scenario l iff
 * f_i * (sum of its jobs' hours in job order) <= C_i. */
static size_t recount(const surety_model *model, const surety_plan *plan,
                      const surety_scenarios *sc, size_t *per)
{
    size_t n = model->n, fit = 0;
    for (size_t i = 0; i < model->m; i++)
        per[i] = 0;
    for (size_t l = 0; l < sc->N; l++) {
        int all = 1;
        for (size_t i = 0; i < model->m; i++) {
            double s = 0;
            for (size_t j = 0; j < n; j++)
                if (surety_plan_get(plan, j) == (long)i)
                    s += sc->hours[l * n + j];
            if (model->resources[i].hours_factor * s <=
                model->resources[i].capacity * (1 + 1e-12))
                per[i]++;
            else
                all = 0;
        }
        fit += (size_t)all;
    }
    return fit;
}

Test(check, early_exit_count_equals_full_count)
{
    surety_model *model = parse(normal_json);
    surety_scenarios *sc = NULL;
    cr_assert_eq(surety_model_sample(model, &sc, NULL), SURETY_OK);
    size_t n = model->n, m = model->m;
    uint64_t state = 5;
    for (int trial = 0; trial < 200; trial++) {
        surety_plan *plan = surety_plan_new(model);
        for (size_t j = 0; j < n; j++) {
            state = state * 6364136223846793005ULL + 1442695040888963407ULL;
            size_t pick = (size_t)(state >> 33) % (m + 1);
            if (pick < m && model->jobs[j].allowed[pick])
                surety_plan_set(plan, j, (long)pick);
        }
        surety_plan_set(plan, 1, 0); /* the required job */
        surety_plan_eval ev;
        cr_assert_eq(surety_check_eval_init(&ev, model, plan, NULL), SURETY_OK);
        size_t want[3], per[3] = {0, 0, 0}, per2[3];
        size_t fit = recount(model, plan, sc, want);
        cr_assert_eq(surety_check_count(&ev, sc->hours, sc->N), fit);
        cr_assert_eq(surety_check_count_resources(&ev, sc->hours, sc->N, per),
                     fit);
        cr_assert_eq(surety_plan_count_fit(model, plan, sc, per2), fit);
        cr_assert_eq(surety_plan_count_fit(model, plan, sc, NULL), fit);
        for (size_t i = 0; i < m; i++) {
            cr_assert_eq(per[i], want[i]);
            cr_assert_eq(per2[i], want[i]);
        }
        surety_check_eval_free(&ev);
        surety_plan_free(plan);
    }
    surety_scenarios_free(sc);
    surety_model_free(model);
}

Test(check, in_sample_and_blocks_equal_direct_recount)
{
    surety_model *model = parse(normal_json);
    surety_plan *plan = normal_plan(model);
    size_t n = model->n;

    /* fresh scenarios from an unaligned start, a count that is not a
     * multiple of any block size */
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 5003;
    opt.first = 37;
    surety_check_report rep;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, NULL), SURETY_OK);

    surety_scenarios *own = NULL;
    cr_assert_eq(surety_model_sample(model, &own, NULL), SURETY_OK);
    size_t per[3];
    size_t fit = recount(model, plan, own, per);
    size_t k = surety_allowance(0.4, 500);
    cr_assert_eq(k, 200);
    cr_assert_eq(rep.in_N, 500);
    cr_assert_eq(rep.in_k, k);
    cr_assert_eq(rep.in_fit, fit);
    cr_assert_eq(rep.in_ok, fit + k >= 500);
    cr_assert_eq(rep.in_ok, surety_plan_feasible(model, plan, own));
    surety_scenarios_free(own);

    surety_scenarios *fresh = NULL;
    cr_assert_eq(surety_sample(model, SURETY_STREAM_CHECK, 37, 5003, &fresh,
                               NULL),
                 SURETY_OK);
    fit = recount(model, plan, fresh, per);
    cr_assert_eq(rep.fit, fit);
    for (size_t i = 0; i < 3; i++)
        cr_assert_eq(rep.resource[i].overload_prob,
                     (double)(5003 - per[i]) / 5003.0);

    /* percentiles against NumPy on the same per-scenario values (profit
     * summed in job order, load = factor * sum, as the checker does) */
    char path[] = "/tmp/surety-values-XXXXXX";
    int fd = mkstemp(path);
    FILE *fp = fdopen(fd, "w");
    for (size_t l = 0; l < fresh->N; l++) {
        double p = 0, south = 0;
        for (size_t j = 0; j < n; j++)
            if (surety_plan_get(plan, j) >= 0)
                p += fresh->profit[l * n + j];
        south = fresh->hours[l * n + 2] + fresh->hours[l * n + 3];
        fprintf(fp, "%.17g %.17g %.17g\n", p, 1.2 * south,
                0.9 * fresh->hours[l * n + 4]);
    }
    fclose(fp);
    char prog[512];
    snprintf(prog, sizeof prog,
             "import numpy as np\n"
             "v = np.loadtxt('%s')\n"
             "p = np.percentile(v[:, 0], [5, 50, 95])\n"
             "x = np.maximum(0, v[:, 2] - 6)\n"
             "print('%%.17g %%.17g %%.17g %%.17g %%.17g %%.17g %%.17g %%.17g' %% "
             "(p[0], p[1], p[2], np.percentile(v[:, 1], 95), v[:, 0].mean(), "
             "v[:, 0].std(ddof=1), x.mean(), np.percentile(x, 95)))\n",
             path);
    double np_[8];
    cr_assert_eq(python_numbers(prog, np_, 8), 8);
    unlink(path);
    cr_assert(fabs(rep.profit_p5 - np_[0]) < 1e-9 * np_[0]);
    cr_assert(fabs(rep.profit_p50 - np_[1]) < 1e-9 * np_[1]);
    cr_assert(fabs(rep.profit_p95 - np_[2]) < 1e-9 * np_[2]);
    cr_assert(fabs(rep.resource[1].load_p95 - np_[3]) < 1e-9 * np_[3]);
    cr_assert(fabs(rep.profit_mean - np_[4]) < 1e-9 * np_[4]);
    cr_assert(fabs(rep.profit_sd - np_[5]) < 1e-9 * np_[5]);
    /* east: overload hours max(0, 0.9 h5 - 6), mean and 95th percentile */
    cr_assert(fabs(rep.resource[2].overload_hours_mean - np_[6]) <
              1e-9 * np_[6]);
    cr_assert(fabs(rep.resource[2].overload_hours_p95 - np_[7]) <
              1e-9 * np_[7]);
    surety_scenarios_free(fresh);
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_model_free(model);
}

/* The checker transforms only the accepted jobs' hours; on the demo model
 * (18 jobs of four laws under a Gaussian copula, half of them rejected)
 * its counts and profit mean must equal a recount on the full sample of
 * the same stream and window (reference: the full sampler, `surety
 * sample`, and the recount above). */
Test(check, restricted_sampling_equals_full_sample)
{
    surety_model *model = NULL;
    surety_error err;
    cr_assert_eq(surety_model_read(SURETY_SOURCE_ROOT "/instances/demo.json",
                                   &model, &err),
                 SURETY_OK, "%s", err.message);
    size_t n = model->n, m = model->m;
    cr_assert_eq(m, 3);
    /* a plan of the demo: 9 of 18 jobs accepted */
    static const long place[18] = {2, 1, 0, 1, -1, -1, -1, -1, -1,
                                   1, -1, 0, 2, -1, -1, 0, 2, -1};
    surety_plan *plan = surety_plan_new(model);
    for (size_t j = 0; j < n; j++)
        surety_plan_set(plan, j, place[j]);
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = 20011;
    opt.first = 130;
    opt.in_sample = 0;
    surety_check_report rep;
    cr_assert_eq(surety_check(model, plan, &opt, &rep, &err), SURETY_OK,
                 "%s", err.message);

    surety_scenarios *sc = NULL;
    cr_assert_eq(surety_sample(model, SURETY_STREAM_CHECK, 130, 20011, &sc,
                               NULL),
                 SURETY_OK);
    size_t per[3];
    size_t fit = recount(model, plan, sc, per);
    cr_assert_eq(rep.fit, fit);
    for (size_t i = 0; i < m; i++)
        cr_assert_eq(rep.resource[i].overload_prob,
                     (double)(20011 - per[i]) / 20011.0);
    double s = 0;
    for (size_t l = 0; l < sc->N; l++) {
        double p = 0;
        for (size_t j = 0; j < n; j++)
            if (place[j] >= 0)
                p += sc->profit[l * n + j];
        s += p;
    }
    cr_assert(rep.profit_mean == s / 20011.0, "%.17g vs %.17g",
              rep.profit_mean, s / 20011.0);
    surety_scenarios_free(sc);
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_model_free(model);
}
