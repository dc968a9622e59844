/* cmd_plan.c - `surety advise | assure | bounds | frontier`: from a solved
 * sample to a plan one can stand behind.
 * SPDX-License-Identifier: MIT */
#include <getopt.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"

/* getopt value of --threads (no short form) */
enum { OPT_THREADS = 1000 };

static int parse_prob(const char *cmd, const char *name, const char *arg, double *out)
{
    if (cli_parse_double(arg, out) || !(*out > 0) || !(*out < 1))
        return cli_usage_error(cmd, "%s needs a number in (0,1)", name);
    return 0;
}

static int parse_positive(const char *cmd, const char *name, const char *arg, size_t *out)
{
    if (cli_parse_size(arg, out) || *out == 0)
        return cli_usage_error(cmd, "%s needs a positive whole number", name);
    return 0;
}

/* --threads for the solves of assure, bounds and frontier (as in solve) */
static int parse_threads(const char *cmd, const char *arg, int *out)
{
    size_t th;
    if (cli_parse_size(arg, &th) || th == 0 || th > 1024)
        return cli_usage_error(cmd, "--threads needs a whole number from 1 to 1024");
    *out = (int)th;
    return 0;
}

/* ---- advise ------------------------------------------------------ */

static const char advise_help[] =
    "usage: surety advise --risk EPS --confidence C (--jobs n --resources m | --model MODEL)\n"
    "                     [--allow K] [--json]\n"
    "\n"
    "How many scenarios published theory asks for, before solving, each row\n"
    "with its source and what it guarantees:\n"
    "  finite plan set    (Luedtke & Ahmed 2008) with confidence C, EVERY plan that\n"
    "                     fits all but the allowed scenarios has risk <= EPS; valid\n"
    "                     for yes/no plans, even one found under a time limit;\n"
    "  sampling and       (Campi & Garatti 2011) a result for convex programs (the\n"
    "  discarding         LP relaxation); it does not certify a yes/no plan;\n"
    "  check              fresh scenarios with no overload that certify a plan.\n"
    "All are sufficient, not necessary: conservative.\n"
    "\n"
    "  --risk EPS        allowed probability of an overload (default: the model's)\n"
    "  --confidence C    confidence (default 0.99)\n"
    "  --jobs n          jobs and resources: every job may go to any resource\n"
    "  --resources m     or stay out (ln|X| = n ln(m+1), d = n m)\n"
    "  --model MODEL     count the plans of this model instead\n"
    "  --allow K         also a row for a fixed allowance of K scenarios\n"
    "  --json            machine-readable output\n";

static void print_n(FILE *fp, size_t N)
{
    if (N)
        fprintf(fp, "%10zu", N);
    else
        fprintf(fp, "%10s", "> 1e8");
}

static void print_closed(FILE *fp, double v)
{
    if (isfinite(v))
        fprintf(fp, "%11.0f", v);
    else
        fprintf(fp, "%11s", "-");
}

static void advise_text(const surety_advice *a, const char *what)
{
    FILE *fp = stdout;
    double eps = a->eps, C = a->confidence;
    fprintf(fp, "Scenarios needed for risk %.4g (reliability %.4g%%) at confidence %.4g%%\n", eps,
            100 * (1 - eps), 100 * C);
    fprintf(fp, "%s:\n  ln|X| = %.3f (plans: each job in an allowed resource or out),\n"
                "  d = %zu job-resource pairs\n\n", what, a->log_plans, a->d);
    fprintf(fp, "1. Finite plan set (Luedtke & Ahmed 2008, exact binomial form)\n");
    fprintf(fp, "   %-26s %10s %10s %11s %11s\n", "may overload in the sample", "N", "first N",
            "Chernoff", "Hoeffding");
    for (size_t r = 0; r < a->nrows; r++) {
        const surety_advice_row *w = &a->row[r];
        if (w->kind != SURETY_ADVICE_FINITE)
            continue;
        char label[64];
        if (w->k >= 0)
            snprintf(label, sizeof label, "k = %ld scenarios", w->k);
        else if (w->alpha == 0)
            snprintf(label, sizeof label, "none (k = 0)");
        else
            snprintf(label, sizeof label, "%.4g%% of N (alpha %.4g)", 100 * w->alpha, w->alpha);
        fprintf(fp, "   %-26s ", label);
        print_n(fp, w->N);
        fputc(' ', fp);
        print_n(fp, w->N_first);
        fputc(' ', fp);
        print_closed(fp, w->chernoff);
        fputc(' ', fp);
        print_closed(fp, w->hoeffding);
        fputc('\n', fp);
    }
    fprintf(fp, "   Guarantee: with %.4g%% confidence over the sample, EVERY plan that fits all\n"
                "   but the allowed scenarios of N has true risk <= %.4g. It holds for yes/no\n"
                "   plans, including one found under a time limit. N: that count and every\n"
                "   larger one pass; first N: the smallest that passes (the condition is not\n"
                "   monotone when the allowance grows with N). Chernoff and Hoeffding are the\n"
                "   paper's closed forms, looser still.\n\n",
            100 * C, eps);
    fprintf(fp, "2. Sampling and discarding (Campi & Garatti 2011) - CONVEX programs only\n");
    for (size_t r = 0; r < a->nrows; r++) {
        const surety_advice_row *w = &a->row[r];
        if (w->kind != SURETY_ADVICE_DISCARDING)
            continue;
        fprintf(fp, "   discard k = %-13ld ", w->k);
        print_n(fp, w->N);
        fputc('\n', fp);
    }
    fprintf(fp, "   This bound is for a convex program with d = %zu variables, such as the LP\n"
                "   relaxation. It does NOT certify a yes/no plan: shown for comparison only.\n\n",
            a->d);
    for (size_t r = 0; r < a->nrows; r++)
        if (a->row[r].kind == SURETY_ADVICE_CHECK)
            fprintf(fp, "3. After solving (Clopper & Pearson 1934, one-sided): %zu fresh scenarios\n"
                        "   with no overload certify reliability %.4g%% at %.4g%% confidence; with\n"
                        "   overloads more are needed ('surety check', 'surety assure').\n\n",
                    a->row[r].N, 100 * (1 - eps), 100 * C);
    fprintf(fp, "All of these are sufficient, not necessary: conservative. A plan solved on fewer\n"
                "scenarios can still be certified after the fact on fresh ones.\n");
}

static void advise_json(const surety_advice *a)
{
    FILE *fp = stdout;
    fprintf(fp, "{\n  \"risk\": ");
    cli_json_number(fp, a->eps);
    fprintf(fp, ",\n  \"confidence\": ");
    cli_json_number(fp, a->confidence);
    fprintf(fp, ",\n  \"log_plans\": ");
    cli_json_number(fp, a->log_plans);
    fprintf(fp, ",\n  \"variables\": %zu,\n  \"rows\": [\n", a->d);
    static const char *kinds[] = {"finite", "discarding", "check"};
    for (size_t r = 0; r < a->nrows; r++) {
        const surety_advice_row *w = &a->row[r];
        fprintf(fp, "    {\"kind\": \"%s\", \"alpha\": ", kinds[w->kind]);
        cli_json_number(fp, w->alpha);
        fprintf(fp, ", \"k\": ");
        if (w->k >= 0)
            fprintf(fp, "%ld", w->k);
        else
            fputs("null", fp);
        fprintf(fp, ", \"N\": ");
        cli_json_number(fp, w->N ? (double)w->N : NAN);
        fprintf(fp, ", \"N_first\": ");
        cli_json_number(fp, w->N_first ? (double)w->N_first : NAN);
        fprintf(fp, ", \"chernoff\": ");
        cli_json_number(fp, w->chernoff);
        fprintf(fp, ", \"hoeffding\": ");
        cli_json_number(fp, w->hoeffding);
        fprintf(fp, ", \"certifies_plans\": %s, \"source\": ",
                w->kind == SURETY_ADVICE_DISCARDING ? "false" : "true");
        cli_json_string(fp, w->source);
        fprintf(fp, "}%s\n", r + 1 < a->nrows ? "," : "");
    }
    fprintf(fp, "  ]\n}\n");
}

int cmd_advise(int argc, char **argv)
{
    static const struct option opts[] = {
        {"risk", required_argument, 0, 'r'},
        {"confidence", required_argument, 0, 'c'},
        {"jobs", required_argument, 0, 'J'},
        {"resources", required_argument, 0, 'R'},
        {"model", required_argument, 0, 'm'},
        {"allow", required_argument, 0, 'k'},
        {"json", no_argument, 0, 'j'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    double eps = NAN, conf = 0.99;
    size_t n = 0, m = 0, allow = 0;
    long allow_k = -1;
    const char *model_path = NULL, *risk_arg = NULL;
    int json = 0, c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
        switch (c) {
        case 'r':
            risk_arg = optarg;
            if (parse_prob("advise", "--risk", optarg, &eps))
                return SURETY_EUSAGE;
            break;
        case 'c':
            if (parse_prob("advise", "--confidence", optarg, &conf))
                return SURETY_EUSAGE;
            break;
        case 'J':
            if (parse_positive("advise", "--jobs", optarg, &n))
                return SURETY_EUSAGE;
            break;
        case 'R':
            if (parse_positive("advise", "--resources", optarg, &m))
                return SURETY_EUSAGE;
            break;
        case 'k':
            if (cli_parse_size(optarg, &allow))
                return cli_usage_error("advise", "--allow needs a whole number");
            allow_k = (long)allow;
            break;
        case 'm': model_path = optarg; break;
        case 'j': json = 1; break;
        case 'h': fputs(advise_help, stdout); return 0;
        default: return cli_usage_error("advise", "unknown option");
        }
    }
    if (optind != argc)
        return cli_usage_error("advise", "unexpected argument '%s'", argv[optind]);
    if (model_path && (n || m))
        return cli_usage_error("advise", "give either --model or --jobs and --resources");
    double lnX;
    size_t d;
    char what[256];
    if (model_path) {
        surety_model *model;
        int rc = cli_load_model("advise", model_path, NULL, NULL, risk_arg, &model);
        if (rc)
            return rc;
        eps = surety_model_risk(model);
        lnX = surety_advise_log_plans(model);
        d = surety_advise_variables(model);
        snprintf(what, sizeof what, "model \"%s\", %zu jobs x %zu resources%s",
                 surety_model_name(model), surety_model_jobs(model),
                 surety_model_resources(model),
                 surety_model_constraint(model) == SURETY_SEPARATE &&
                         surety_model_resources(model) > 1
                     ? ", separate constraints (the plan count is multiplied by m)"
                     : "");
        surety_model_free(model);
    } else {
        if (!n || !m)
            return cli_usage_error("advise", "give --jobs and --resources, or --model");
        if (!isfinite(eps))
            return cli_usage_error("advise", "--risk is required without --model");
        lnX = (double)n * log((double)m + 1);
        d = n * m;
        snprintf(what, sizeof what, "%zu jobs x %zu resources", n, m);
    }
    surety_advice a;
    surety_error err;
    surety_error_clear(&err);
    surety_code code = surety_advise(eps, conf, lnX, d, allow_k, &a, &err);
    if (code)
        return cli_report(&err, code);
    if (json)
        advise_json(&a);
    else
        advise_text(&a, what);
    surety_advice_free(&a);
    return 0;
}

/* ---- shared by the solving commands ------------------------------ */

static void quiet_solve(surety_solve_options *s)
{
    s->log = NULL;
    s->verbosity = SURETY_LOG_ERROR;
    s->progress_s = 0;
    cli_catch_interrupt();
    s->interrupt = &cli_interrupted;
}

static int write_plan(const surety_model *model, const surety_plan *plan, const char *extra,
                      const char *path)
{
    surety_error err;
    surety_error_clear(&err);
    surety_code code = surety_plan_write(model, plan, extra, path, &err);
    return code ? cli_report(&err, code) : 0;
}

/* ---- assure ------------------------------------------------------ */

static const char assure_help[] =
    "usage: surety assure MODEL [--target R] [--confidence C] [--samples M]\n"
    "                     [--certify-samples M2] [-n N] [--max-scenarios NMAX]\n"
    "                     [--max-steps S] [--time-limit SEC] [--solve-limit SEC] [--seed S]\n"
    "                     [--threads T] [-o PLAN.json] [--json]\n"
    "\n"
    "Solves on N scenarios, checks the plan on M fresh ones and, while the\n"
    "one-sided Clopper-Pearson lower bound on its reliability is below R,\n"
    "doubles N (the first N scenarios are reused) and lowers the risk solved at.\n"
    "The plan that passes is then certified on M2 further fresh scenarios that\n"
    "played no part in choosing it. When a limit stops the search first, the\n"
    "plan with the best lower bound is returned and the output says so.\n"
    "\n"
    "  --target R           reliability to reach (default: 1 - the model's risk)\n"
    "  --confidence C       confidence of the bounds (default 0.95)\n"
    "  --samples M          fresh scenarios per screening check (default 10000)\n"
    "  --certify-samples M2 fresh scenarios of the final certificate (default M)\n"
    "  -n N                 first scenario count (default: the model's)\n"
    "  --max-scenarios NMAX largest scenario count (default 16 N)\n"
    "  --max-steps S        solves at most (default 12)\n"
    "  --time-limit SEC     limit for the whole run\n"
    "  --solve-limit SEC    limit per solve (its best plan is still checked)\n"
    "  --threads T          threads for each solve's one-resource solves (as in\n"
    "                       'surety solve'; default 1)\n"
    "  --seed S             random seed (default: the model's)\n"
    "  -o FILE              write the returned plan (atomic)\n"
    "  --json               machine-readable output\n"
    "\n"
    "Exit codes: 0 target certified, 4 not certified or stopped by a limit,\n"
    "5 interrupted.\n";

static void assure_text(const surety_model *model, const surety_assure_report *r)
{
    FILE *fp = stdout;
    double pc = 100 * r->confidence;
    fprintf(fp, "Assurance for \"%s\": target reliability %.4g%% at %.4g%% confidence\n\n",
            surety_model_name(model), 100 * r->target, pc);
    fprintf(fp, "  %4s %9s %8s %6s %-10s %12s %9s %19s %9s %8s %8s\n", "step", "scenarios",
            "risk", "allow", "status", "profit", "fresh", "interval", "lower", "solve s",
            "check s");
    for (size_t s = 0; s < r->nsteps; s++) {
        const surety_assure_step *st = &r->step[s];
        fprintf(fp, "  %4zu %9zu %8.4g %6zu %-10s ", s + 1, st->N, st->risk, st->k,
                surety_status_name(st->status));
        if (isfinite(st->objective))
            fprintf(fp, "%12.2f %8.3f%% %8.3f..%7.3f%% %8.3f%% ", st->objective,
                    100 * st->reliability, 100 * st->lo, 100 * st->hi, 100 * st->lower);
        else
            fprintf(fp, "%12s %9s %19s %9s ", "-", "-", "-", "-");
        fprintf(fp, "%8.2f %8.2f%s\n", st->solve_seconds, st->sample_seconds + st->check_seconds,
                (long)s == r->chosen ? "  <- chosen" : "");
    }
    fprintf(fp, "\n  'profit' is the in-sample mean; 'fresh' is the reliability on the %zu\n"
                "  screening scenarios, 'interval' its two-sided %.4g%% Clopper-Pearson\n"
                "  interval and 'lower' the one-sided bound.\n\n",
            r->nsteps ? r->step[0].M : 0, pc);
    if (r->plan) {
        const surety_check_report *c = &r->cert;
        fprintf(fp, "  Certificate on %zu fresh scenarios never used for screening:\n"
                    "    %zu fit; reliability %.3f%%, at least %.3f%% with %.4g%% confidence;\n"
                    "    mean profit %.2f.\n",
                c->M, c->fit, 100 * c->reliability, 100 * c->lower, pc, c->profit_mean);
    }
    switch (r->end) {
    case SURETY_ASSURE_MET:
        fprintf(fp, "  Target %.4g%%: MET (certified).\n", 100 * r->target);
        break;
    case SURETY_ASSURE_NOT_CERTIFIED:
        fprintf(fp, "  Target %.4g%%: NOT certified. The plan passed screening but not the\n"
                    "  fresh certificate; do not rely on it at this target.\n", 100 * r->target);
        break;
    case SURETY_ASSURE_SCENARIO_LIMIT:
        fprintf(fp, "  Target %.4g%%: NOT reached within the scenario and step limits. The plan\n"
                    "  returned is the one with the best lower bound; %s\n", 100 * r->target,
                r->certified ? "its certificate alone reaches the\n"
                               "  target (screening did not)."
                             : "it is not certified at\n  the target.");
        break;
    case SURETY_ASSURE_TIME_LIMIT:
        fprintf(fp, "  Target %.4g%%: NOT reached before the time limit. %s\n", 100 * r->target,
                r->plan ? "The plan returned has the best lower bound so far." : "No plan.");
        break;
    case SURETY_ASSURE_INFEASIBLE:
        fprintf(fp, "  Target %.4g%%: no plan satisfies the sampled constraint at the risk\n"
                    "  tried last; the required jobs may not fit.\n", 100 * r->target);
        break;
    case SURETY_ASSURE_INTERRUPTED:
        fprintf(fp, "  Interrupted. %s\n", r->plan ? "Best plan so far returned." : "No plan.");
        break;
    }
    fprintf(fp, "  Time: solver %.2f s, sampling %.2f s, checking %.2f s, total %.2f s.\n\n",
            r->solve_seconds, r->sample_seconds, r->check_seconds, r->seconds);
    cli_print_caution(fp);
}

static void assure_json(const surety_model *model, const surety_assure_report *r)
{
    FILE *fp = stdout;
    fprintf(fp, "{\n  \"model\": ");
    cli_json_string(fp, surety_model_name(model));
    fprintf(fp, ",\n  \"target\": ");
    cli_json_number(fp, r->target);
    fprintf(fp, ",\n  \"confidence\": ");
    cli_json_number(fp, r->confidence);
    fprintf(fp, ",\n  \"end\": \"%s\",\n  \"certified\": %s,\n  \"chosen_step\": ",
            surety_assure_end_name(r->end), r->certified ? "true" : "false");
    if (r->chosen >= 0)
        fprintf(fp, "%ld", r->chosen + 1);
    else
        fputs("null", fp);
    fprintf(fp, ",\n  \"steps\": [\n");
    for (size_t s = 0; s < r->nsteps; s++) {
        const surety_assure_step *st = &r->step[s];
        fprintf(fp, "    {\"scenarios\": %zu, \"risk\": ", st->N);
        cli_json_number(fp, st->risk);
        fprintf(fp, ", \"allowance\": %zu, \"status\": \"%s\", \"profit\": ", st->k,
                surety_status_name(st->status));
        cli_json_number(fp, st->objective);
        fprintf(fp, ", \"bound\": ");
        cli_json_number(fp, st->bound);
        fprintf(fp, ", \"fresh\": %zu, \"fit\": %zu, \"reliability\": ", st->M, st->fit);
        cli_json_number(fp, st->reliability);
        fprintf(fp, ", \"interval\": [");
        cli_json_number(fp, st->lo);
        fprintf(fp, ", ");
        cli_json_number(fp, st->hi);
        fprintf(fp, "], \"lower_bound\": ");
        cli_json_number(fp, st->lower);
        fprintf(fp, ", \"solve_seconds\": ");
        cli_json_number(fp, st->solve_seconds);
        fprintf(fp, ", \"check_seconds\": ");
        cli_json_number(fp, st->sample_seconds + st->check_seconds);
        fprintf(fp, "}%s\n", s + 1 < r->nsteps ? "," : "");
    }
    fprintf(fp, "  ],\n  \"certificate\": ");
    if (r->plan) {
        fprintf(fp, "{\"scenarios\": %zu, \"fit\": %zu, \"reliability\": ", r->cert.M,
                r->cert.fit);
        cli_json_number(fp, r->cert.reliability);
        fprintf(fp, ", \"lower_bound\": ");
        cli_json_number(fp, r->cert.lower);
        fprintf(fp, ", \"profit_mean\": ");
        cli_json_number(fp, r->cert.profit_mean);
        fprintf(fp, "}");
    } else {
        fputs("null", fp);
    }
    fprintf(fp, ",\n  \"seconds\": {\"solve\": ");
    cli_json_number(fp, r->solve_seconds);
    fprintf(fp, ", \"sample\": ");
    cli_json_number(fp, r->sample_seconds);
    fprintf(fp, ", \"check\": ");
    cli_json_number(fp, r->check_seconds);
    fprintf(fp, ", \"total\": ");
    cli_json_number(fp, r->seconds);
    fprintf(fp, "}\n}\n");
}

int cmd_assure(int argc, char **argv)
{
    static const struct option opts[] = {
        {"target", required_argument, 0, 'R'},
        {"confidence", required_argument, 0, 'c'},
        {"samples", required_argument, 0, 'M'},
        {"certify-samples", required_argument, 0, 'C'},
        {"max-scenarios", required_argument, 0, 'X'},
        {"max-steps", required_argument, 0, 'S'},
        {"time-limit", required_argument, 0, 't'},
        {"threads", required_argument, 0, OPT_THREADS},
        {"solve-limit", required_argument, 0, 'T'},
        {"seed", required_argument, 0, 's'},
        {"output", required_argument, 0, 'o'},
        {"json", no_argument, 0, 'j'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    surety_assure_options aopt;
    surety_assure_options_init(&aopt);
    const char *seed_arg = NULL, *out = NULL;
    int json = 0, c;
    size_t v;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:o:h", opts, NULL)) != -1) {
        switch (c) {
        case 'R':
            if (parse_prob("assure", "--target", optarg, &aopt.target))
                return SURETY_EUSAGE;
            break;
        case 'c':
            if (parse_prob("assure", "--confidence", optarg, &aopt.confidence))
                return SURETY_EUSAGE;
            break;
        case 'M':
            if (parse_positive("assure", "--samples", optarg, &aopt.samples))
                return SURETY_EUSAGE;
            break;
        case 'C':
            if (parse_positive("assure", "--certify-samples", optarg, &aopt.certify_samples))
                return SURETY_EUSAGE;
            break;
        case 'n':
            if (parse_positive("assure", "-n", optarg, &aopt.start_scenarios))
                return SURETY_EUSAGE;
            break;
        case 'X':
            if (parse_positive("assure", "--max-scenarios", optarg, &aopt.max_scenarios))
                return SURETY_EUSAGE;
            break;
        case 'S':
            if (parse_positive("assure", "--max-steps", optarg, &v) || v > 1000)
                return cli_usage_error("assure", "--max-steps needs 1 to 1000");
            aopt.max_steps = (int)v;
            break;
        case 't':
            if (cli_parse_double(optarg, &aopt.time_limit_s) || aopt.time_limit_s <= 0)
                return cli_usage_error("assure", "--time-limit needs a positive number");
            break;
        case 'T':
            if (cli_parse_double(optarg, &aopt.solve.time_limit_s) || aopt.solve.time_limit_s <= 0)
                return cli_usage_error("assure", "--solve-limit needs a positive number");
            break;
        case 's': seed_arg = optarg; break;
        case 'o': out = optarg; break;
        case 'j': json = 1; break;
        case OPT_THREADS:
            if (parse_threads("assure", optarg, &aopt.solve.threads))
                return SURETY_EUSAGE;
            break;
        case 'h': fputs(assure_help, stdout); return 0;
        default: return cli_usage_error("assure", "unknown option");
        }
    }
    if (optind + 1 != argc)
        return cli_usage_error("assure", "expected one MODEL file");
    surety_model *model;
    int rc = cli_load_model("assure", argv[optind], NULL, seed_arg, NULL, &model);
    if (rc)
        return rc;
    quiet_solve(&aopt.solve);
    surety_assure_report rep;
    surety_error err;
    surety_error_clear(&err);
    surety_code code = surety_assure(model, &aopt, &rep, &err);
    if (code) {
        surety_model_free(model);
        return cli_report(&err, code);
    }
    if (out && rep.plan) {
        char extra[512];
        snprintf(extra, sizeof extra,
                 "{\"assure\": \"%s\", \"target\": %.17g, \"confidence\": %.17g, "
                 "\"certified_lower_bound\": %.17g, \"certified_scenarios\": %zu}",
                 surety_assure_end_name(rep.end), rep.target, rep.confidence, rep.cert.lower,
                 rep.cert.M);
        rc = write_plan(model, rep.plan, extra, out);
    }
    if (json)
        assure_json(model, &rep);
    else
        assure_text(model, &rep);
    if (!rc && out && rep.plan && !json)
        printf("\nPlan written to %s\n", out);
    if (!rc)
        rc = rep.end == SURETY_ASSURE_MET ? 0
             : rep.end == SURETY_ASSURE_INTERRUPTED ? CLI_EXIT_INTERRUPT : CLI_EXIT_LIMIT;
    surety_assure_report_free(&rep);
    surety_model_free(model);
    return rc;
}

/* ---- bounds ------------------------------------------------------ */

static const char bounds_help[] =
    "usage: surety bounds MODEL [--replications M] [--confidence C] [--gamma G]\n"
    "                     [--samples S] [-n N] [--risk EPS] [--seed S] [--time-limit SEC]\n"
    "                     [--threads T] [-o PLAN.json] [--json]\n"
    "\n"
    "An interval for the true optimal mean profit (Pagnoncelli, Ahmed & Shapiro\n"
    "2009). Upper side: M independent samples of N scenarios are each solved at\n"
    "risk G; the L-th largest of their upper bounds, L chosen from the binomial\n"
    "law, bounds the optimum. Lower side: the most profitable candidate plan that\n"
    "is shown to meet 1-EPS on S fresh scenarios, its mean profit measured on S\n"
    "further ones. The confidence C covers the whole interval (Bonferroni).\n"
    "\n"
    "  --replications M  independent samples (default 10)\n"
    "  --confidence C    of the interval (default 0.95)\n"
    "  --gamma G         risk each sample is solved at (default EPS)\n"
    "  --samples S       fresh scenarios for the lower side (default 10000)\n"
    "  -n N, --risk EPS, --seed S   override the model's\n"
    "  --time-limit SEC  per solve\n"
    "  --threads T       threads for each solve's one-resource solves (as in\n"
    "                    'surety solve'; default 1)\n"
    "  -o FILE           write the lower side's plan (atomic)\n"
    "  --json            machine-readable output\n";

static void bounds_text(const surety_model *model, const surety_bounds_report *r)
{
    FILE *fp = stdout;
    fprintf(fp, "Bounds on the optimal mean profit of \"%s\": risk %.4g, %zu scenarios,\n"
                "%zu replications solved at risk %.4g\n\n",
            surety_model_name(model), r->eps, r->N, r->M, r->gamma);
    fprintf(fp, "  %5s %12s %14s %14s\n", "rank", "replication", "upper bound", "best plan");
    for (size_t q = 0; q < r->M; q++)
        fprintf(fp, "  %5zu %12ld %14.2f %14.2f%s\n", q + 1, r->replication[q], r->bound[q],
                r->objective[q], (long)q + 1 == r->L ? "  <- L" : "");
    fprintf(fp, "\n  theta_N = P{Bin(%zu, %.4g) <= allowance} = %.6f\n", r->N, r->eps, r->theta);
    if (r->theta_eff != r->theta)
        fprintf(fp, "  theta used %.6f (%s%s)\n", r->theta_eff,
                surety_model_constraint(model) == SURETY_SEPARATE
                    ? "every resource's constraint must hold, Bonferroni"
                    : "",
                r->margin > 0 ? (surety_model_constraint(model) == SURETY_SEPARATE
                                     ? "; less 0.02 for the margin"
                                     : "less 0.02 for the margin")
                              : "");
    if (r->margin > 0)
        fprintf(fp, "  margin %.2f: profits vary, so a sample's mean profit of the optimal plan\n"
                    "  may fall short of its true mean (normal approximation)\n",
                r->margin);
    if (r->L > 0)
        fprintf(fp, "  Upper: L = %ld -> the optimum is at most %.2f%s (confidence %.4g%%)%s\n",
                r->L, r->upper, r->margin > 0 ? " (bound plus margin)" : "",
                100 * (1 - r->beta_upper),
                r->all_optimal ? "" : "\n  (some replications stopped early: their bounds were used)");
    else
        fprintf(fp, "  Upper: no L exists for %zu replications at this confidence; use more\n"
                    "  replications or a larger --gamma.\n", r->M);
    if (r->plan) {
        char from[64];
        if (r->plan_source >= 0)
            snprintf(from, sizeof from, "replication %ld", r->plan_source);
        else
            snprintf(from, sizeof from, "the model's own sample at risk %.4g", r->plan_risk);
        fprintf(fp, "  Lower: plan from %s, reliability >= %.3f%% (screened,\n"
                    "         Bonferroni), mean profit %.2f (sd %.2f) on further fresh scenarios\n"
                    "         -> the optimum is at least %.2f (confidence %.4g%%; normal\n"
                    "         approximation for the mean)\n",
                from, 100 * r->reliability_lower, r->profit_mean, r->profit_sd, r->lower,
                100 * (1 - r->beta_lower));
    } else {
        fprintf(fp, "  Lower: no candidate plan was shown to meet reliability %.4g%%.\n",
                100 * (1 - r->eps));
    }
    if (r->L > 0 && r->plan)
        fprintf(fp, "\n  With confidence >= %.4g%%: %.2f <= optimal mean profit <= %.2f\n",
                100 * r->confidence, r->lower, r->upper);
    fprintf(fp, "  Time: solver %.2f s, checking %.2f s, total %.2f s.\n\n", r->solve_seconds,
            r->check_seconds, r->seconds);
    cli_print_caution(fp);
}

static void bounds_json(const surety_model *model, const surety_bounds_report *r)
{
    FILE *fp = stdout;
    fprintf(fp, "{\n  \"model\": ");
    cli_json_string(fp, surety_model_name(model));
    fprintf(fp, ",\n  \"risk\": ");
    cli_json_number(fp, r->eps);
    fprintf(fp, ",\n  \"gamma\": ");
    cli_json_number(fp, r->gamma);
    fprintf(fp, ",\n  \"scenarios\": %zu,\n  \"replications\": %zu,\n  \"confidence\": ", r->N,
            r->M);
    cli_json_number(fp, r->confidence);
    fprintf(fp, ",\n  \"bounds\": [");
    for (size_t q = 0; q < r->M; q++) {
        fprintf(fp, "%s", q ? ", " : "");
        cli_json_number(fp, r->bound[q]);
    }
    fprintf(fp, "],\n  \"theta\": ");
    cli_json_number(fp, r->theta);
    fprintf(fp, ",\n  \"theta_used\": ");
    cli_json_number(fp, r->theta_eff);
    fprintf(fp, ",\n  \"margin\": ");
    cli_json_number(fp, r->margin);
    fprintf(fp, ",\n  \"L\": %ld,\n  \"upper\": ", r->L);
    cli_json_number(fp, r->upper);
    fprintf(fp, ",\n  \"upper_confidence\": ");
    cli_json_number(fp, 1 - r->beta_upper);
    fprintf(fp, ",\n  \"lower\": ");
    cli_json_number(fp, r->lower);
    fprintf(fp, ",\n  \"lower_confidence\": ");
    cli_json_number(fp, 1 - r->beta_lower);
    fprintf(fp, ",\n  \"lower_plan_replication\": ");
    if (r->plan && r->plan_source >= 0)
        fprintf(fp, "%ld", r->plan_source);
    else
        fputs("null", fp);
    fprintf(fp, ",\n  \"lower_plan_risk\": ");
    cli_json_number(fp, r->plan ? r->plan_risk : NAN);
    fprintf(fp, ",\n  \"profit_mean\": ");
    cli_json_number(fp, r->profit_mean);
    fprintf(fp, ",\n  \"all_optimal\": %s,\n  \"seconds\": ", r->all_optimal ? "true" : "false");
    cli_json_number(fp, r->seconds);
    fprintf(fp, "\n}\n");
}

int cmd_bounds(int argc, char **argv)
{
    static const struct option opts[] = {
        {"replications", required_argument, 0, 'M'},
        {"confidence", required_argument, 0, 'c'},
        {"gamma", required_argument, 0, 'g'},
        {"samples", required_argument, 0, 'S'},
        {"risk", required_argument, 0, 'r'},
        {"seed", required_argument, 0, 's'},
        {"time-limit", required_argument, 0, 't'},
        {"threads", required_argument, 0, OPT_THREADS},
        {"output", required_argument, 0, 'o'},
        {"json", no_argument, 0, 'j'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    surety_bounds_options bopt;
    surety_bounds_options_init(&bopt);
    const char *n_arg = NULL, *seed_arg = NULL, *risk_arg = NULL, *out = NULL;
    int json = 0, c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:o:h", opts, NULL)) != -1) {
        switch (c) {
        case 'M':
            if (parse_positive("bounds", "--replications", optarg, &bopt.replications))
                return SURETY_EUSAGE;
            break;
        case 'c':
            if (parse_prob("bounds", "--confidence", optarg, &bopt.confidence))
                return SURETY_EUSAGE;
            break;
        case 'g':
            if (parse_prob("bounds", "--gamma", optarg, &bopt.gamma))
                return SURETY_EUSAGE;
            break;
        case 'S':
            if (parse_positive("bounds", "--samples", optarg, &bopt.samples))
                return SURETY_EUSAGE;
            break;
        case 't':
            if (cli_parse_double(optarg, &bopt.solve.time_limit_s) || bopt.solve.time_limit_s <= 0)
                return cli_usage_error("bounds", "--time-limit needs a positive number");
            break;
        case 'n': n_arg = optarg; break;
        case 'r': risk_arg = optarg; break;
        case 's': seed_arg = optarg; break;
        case 'o': out = optarg; break;
        case 'j': json = 1; break;
        case OPT_THREADS:
            if (parse_threads("bounds", optarg, &bopt.solve.threads))
                return SURETY_EUSAGE;
            break;
        case 'h': fputs(bounds_help, stdout); return 0;
        default: return cli_usage_error("bounds", "unknown option");
        }
    }
    if (optind + 1 != argc)
        return cli_usage_error("bounds", "expected one MODEL file");
    surety_model *model;
    int rc = cli_load_model("bounds", argv[optind], n_arg, seed_arg, risk_arg, &model);
    if (rc)
        return rc;
    quiet_solve(&bopt.solve);
    surety_bounds_report rep;
    surety_error err;
    surety_error_clear(&err);
    surety_code code = surety_bounds(model, &bopt, &rep, &err);
    if (code) {
        surety_model_free(model);
        return cli_report(&err, code);
    }
    if (out && rep.plan)
        rc = write_plan(model, rep.plan, NULL, out);
    if (json)
        bounds_json(model, &rep);
    else
        bounds_text(model, &rep);
    surety_bounds_report_free(&rep);
    surety_model_free(model);
    return rc;
}

/* ---- frontier ---------------------------------------------------- */

static const char frontier_help[] =
    "usage: surety frontier MODEL --risks LIST [--samples M] [--confidence C]\n"
    "                       [-n N] [--seed S] [--target R] [--time-limit SEC]\n"
    "                       [--threads T] [--svg FILE] [--png FILE] [--csv FILE] [--json]\n"
    "\n"
    "For each risk level in LIST (comma-separated, e.g. 0.01,0.02,0.05,0.1):\n"
    "the optimal plan on the model's N scenarios, its mean profit, and its\n"
    "reliability on M fresh scenarios (the same ones for every level) with a\n"
    "Clopper-Pearson interval, and the expected overload hours. Levels are\n"
    "solved from the smallest risk up; each plan starts the next search.\n"
    "\n"
    "  --risks LIST      risk levels in (0,1)\n"
    "  --samples M       fresh scenarios (default 10000)\n"
    "  --confidence C    for the intervals (default 0.95)\n"
    "  --target R        reliability line on the chart (default 1 - the model's risk)\n"
    "  --time-limit SEC  per level\n"
    "  --threads T       threads for each solve's one-resource solves (as in\n"
    "                    'surety solve'; default 1)\n"
    "  --svg/--png FILE  chart of profit against reliability\n"
    "  --csv FILE        one row per level\n"
    "  --json            machine-readable output\n";

static int parse_risks(const char *s, double **out, size_t *count)
{
    size_t cap = 1;
    for (const char *p = s; *p; p++)
        cap += *p == ',';
    double *v = malloc(cap * sizeof *v);
    if (!v)
        return -1;
    char *copy = strdup(s);
    if (!copy) {
        free(v);
        return -1;
    }
    size_t k = 0;
    for (char *save = NULL, *tok = strtok_r(copy, ",", &save); tok;
         tok = strtok_r(NULL, ",", &save)) {
        if (cli_parse_double(tok, &v[k]) || !(v[k] > 0) || !(v[k] < 1)) {
            free(copy);
            free(v);
            return -1;
        }
        k++;
    }
    free(copy);
    if (!k) {
        free(v);
        return -1;
    }
    *out = v;
    *count = k;
    return 0;
}

static void frontier_text(const surety_model *model, const surety_frontier_report *r)
{
    FILE *fp = stdout;
    fprintf(fp, "Frontier for \"%s\": %zu scenarios solved, %zu fresh for checking\n\n",
            surety_model_name(model), r->N, r->npoints ? r->point[0].M : 0);
    fprintf(fp, "  %8s %6s %-10s %12s %12s %9s %19s %9s %10s %8s\n", "risk", "allow", "status",
            "profit", "fresh mean", "fresh", "interval", "lower", "overload h", "solve s");
    for (size_t p = 0; p < r->npoints; p++) {
        const surety_frontier_point *pt = &r->point[p];
        fprintf(fp, "  %8.4g %6zu %-10s ", pt->risk, pt->k, surety_status_name(pt->status));
        if (pt->plan)
            fprintf(fp, "%12.2f %12.2f %8.3f%% %8.3f..%7.3f%% %8.3f%% %10.3f ", pt->objective,
                    pt->profit_mean, 100 * pt->reliability, 100 * pt->lo, 100 * pt->hi,
                    100 * pt->lower, pt->overload_hours);
        else
            fprintf(fp, "%12s %12s %9s %19s %9s %10s ", "-", "-", "-", "-", "-", "-");
        fprintf(fp, "%8.2f%s\n", pt->solve_seconds, pt->plan && !pt->in_sample_ok ? "  (!)" : "");
    }
    fprintf(fp, "\n  profit: in-sample mean; fresh: reliability on the fresh scenarios with its\n"
                "  two-sided %.4g%% Clopper-Pearson interval and one-sided lower bound;\n"
                "  overload h: expected overload hours summed over resources.\n"
                "  Time: sampling %.2f s, solver %.2f s, checking %.2f s.\n",
            100 * r->confidence, r->sample_seconds, r->solve_seconds, r->check_seconds);
}

static void frontier_json(const surety_model *model, const surety_frontier_report *r)
{
    FILE *fp = stdout;
    fprintf(fp, "{\n  \"model\": ");
    cli_json_string(fp, surety_model_name(model));
    fprintf(fp, ",\n  \"scenarios\": %zu,\n  \"confidence\": ", r->N);
    cli_json_number(fp, r->confidence);
    fprintf(fp, ",\n  \"levels\": [\n");
    for (size_t p = 0; p < r->npoints; p++) {
        const surety_frontier_point *pt = &r->point[p];
        fprintf(fp, "    {\"risk\": ");
        cli_json_number(fp, pt->risk);
        fprintf(fp, ", \"allowance\": %zu, \"status\": \"%s\", \"profit\": ", pt->k,
                surety_status_name(pt->status));
        cli_json_number(fp, pt->objective);
        fprintf(fp, ", \"bound\": ");
        cli_json_number(fp, pt->bound);
        fprintf(fp, ", \"in_sample_ok\": %s, \"fresh\": %zu, \"fit\": %zu, \"reliability\": ",
                pt->in_sample_ok ? "true" : "false", pt->M, pt->fit);
        cli_json_number(fp, pt->reliability);
        fprintf(fp, ", \"interval\": [");
        cli_json_number(fp, pt->lo);
        fprintf(fp, ", ");
        cli_json_number(fp, pt->hi);
        fprintf(fp, "], \"lower_bound\": ");
        cli_json_number(fp, pt->lower);
        fprintf(fp, ", \"profit_mean\": ");
        cli_json_number(fp, pt->profit_mean);
        fprintf(fp, ", \"overload_hours\": ");
        cli_json_number(fp, pt->overload_hours);
        fprintf(fp, ", \"solve_seconds\": ");
        cli_json_number(fp, pt->solve_seconds);
        fprintf(fp, "}%s\n", p + 1 < r->npoints ? "," : "");
    }
    fprintf(fp, "  ]\n}\n");
}

int cmd_frontier(int argc, char **argv)
{
    static const struct option opts[] = {
        {"risks", required_argument, 0, 'r'},
        {"samples", required_argument, 0, 'M'},
        {"confidence", required_argument, 0, 'c'},
        {"target", required_argument, 0, 'R'},
        {"seed", required_argument, 0, 's'},
        {"time-limit", required_argument, 0, 't'},
        {"threads", required_argument, 0, OPT_THREADS},
        {"svg", required_argument, 0, 'S'},
        {"png", required_argument, 0, 'P'},
        {"csv", required_argument, 0, 'C'},
        {"json", no_argument, 0, 'j'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    surety_frontier_options fopt;
    surety_frontier_options_init(&fopt);
    const char *n_arg = NULL, *seed_arg = NULL, *risks_arg = NULL;
    const char *svg = NULL, *png = NULL, *csv = NULL;
    double target = 0;
    int json = 0, c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:h", opts, NULL)) != -1) {
        switch (c) {
        case 'r': risks_arg = optarg; break;
        case 'M':
            if (parse_positive("frontier", "--samples", optarg, &fopt.samples))
                return SURETY_EUSAGE;
            break;
        case 'c':
            if (parse_prob("frontier", "--confidence", optarg, &fopt.confidence))
                return SURETY_EUSAGE;
            break;
        case 'R':
            if (parse_prob("frontier", "--target", optarg, &target))
                return SURETY_EUSAGE;
            break;
        case 't':
            if (cli_parse_double(optarg, &fopt.solve.time_limit_s) || fopt.solve.time_limit_s <= 0)
                return cli_usage_error("frontier", "--time-limit needs a positive number");
            break;
        case 'n': n_arg = optarg; break;
        case 's': seed_arg = optarg; break;
        case 'S': svg = optarg; break;
        case 'P': png = optarg; break;
        case 'C': csv = optarg; break;
        case 'j': json = 1; break;
        case OPT_THREADS:
            if (parse_threads("frontier", optarg, &fopt.solve.threads))
                return SURETY_EUSAGE;
            break;
        case 'h': fputs(frontier_help, stdout); return 0;
        default: return cli_usage_error("frontier", "unknown option");
        }
    }
    if (optind + 1 != argc)
        return cli_usage_error("frontier", "expected one MODEL file");
    if (!risks_arg)
        return cli_usage_error("frontier", "--risks LIST is required");
    double *risks;
    size_t nrisks;
    if (parse_risks(risks_arg, &risks, &nrisks))
        return cli_usage_error("frontier", "--risks needs numbers in (0,1) separated by commas");
    if ((svg || png) && !surety_chart_available()) {
        free(risks);
        return cli_usage_error("frontier", "this build has no charts (cairo missing)");
    }
    surety_model *model;
    int rc = cli_load_model("frontier", argv[optind], n_arg, seed_arg, NULL, &model);
    if (rc) {
        free(risks);
        return rc;
    }
    if (target <= 0)
        target = 1 - surety_model_risk(model);
    quiet_solve(&fopt.solve);
    surety_frontier_report rep;
    surety_error err;
    surety_error_clear(&err);
    surety_code code = surety_frontier(model, risks, nrisks, &fopt, &rep, &err);
    free(risks);
    if (code) {
        surety_model_free(model);
        return cli_report(&err, code);
    }
    if (json)
        frontier_json(model, &rep);
    else
        frontier_text(model, &rep);
    if (!code && csv)
        code = surety_frontier_write_csv(&rep, csv, &err);
    if (!code && svg)
        code = surety_chart_frontier(&rep, target, SURETY_CHART_SVG, svg, &err);
    if (!code && png)
        code = surety_chart_frontier(&rep, target, SURETY_CHART_PNG, png, &err);
    rc = code ? cli_report(&err, code) : 0;
    if (!rc && cli_interrupted)
        rc = CLI_EXIT_INTERRUPT;
    surety_frontier_report_free(&rep);
    surety_model_free(model);
    return rc;
}
