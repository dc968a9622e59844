/* cmd_check.c - `surety check MODEL PLAN`: how well a plan holds, in the
 * model's own scenarios and on fresh ones, with Clopper-Pearson intervals.
 * SPDX-License-Identifier: MIT */
#include <getopt.h>
#include <string.h>

#include "cli.h"

static const char check_help[] =
    "usage: surety check MODEL PLAN [--samples M] [--confidence C] [--seed S]\n"
    "                    [-n N] [--risk EPS] [--svg FILE] [--png FILE] [--json]\n"
    "\n"
    "Evaluates a plan file (as written by 'surety solve -o'):\n"
    "  in sample      on the model's own N scenarios: how many fit, and whether\n"
    "                 at most floor(eps*N) overload;\n"
    "  out of sample  on M fresh scenarios from a separate random stream: the\n"
    "                 share in which every capacity holds, its Clopper-Pearson\n"
    "                 interval and one-sided lower bound at confidence C,\n"
    "                 overload per resource, and the profit distribution.\n"
    "The target is met only when the one-sided lower bound reaches 1-eps.\n"
    "\n"
    "  --samples M     fresh scenarios (default 100000)\n"
    "  --confidence C  for the intervals (default 0.95)\n"
    "  --seed S        random seed (default: the model's)\n"
    "  -n N            in-sample scenario count (default: the model's)\n"
    "  --risk EPS      risk eps (default: the model's)\n"
    "  --svg/--png FILE  chart of each resource's load on the fresh scenarios\n"
    "                  against its capacity\n"
    "  --json          machine-readable output\n";

static const char *verdict_text(surety_verdict v)
{
    switch (v) {
    case SURETY_MET: return "met";
    case SURETY_UNCERTAIN: return "not shown";
    case SURETY_NOT_MET: return "not met";
    }
    return "?";
}

static const char *verdict_key(surety_verdict v)
{
    switch (v) {
    case SURETY_MET: return "met";
    case SURETY_UNCERTAIN: return "uncertain";
    case SURETY_NOT_MET: return "not_met";
    }
    return "unknown";
}

static void print_json(const surety_model *model, const surety_check_report *r)
{
    FILE *fp = stdout;
    fprintf(fp, "{\n  \"model\": ");
    cli_json_string(fp, surety_model_name(model));
    fprintf(fp, ",\n  \"risk\": ");
    cli_json_number(fp, surety_model_risk(model));
    fprintf(fp, ",\n  \"constraint\": \"%s\"",
            surety_model_constraint(model) == SURETY_SEPARATE ? "separate" : "joint");
    fprintf(fp, ",\n  \"in_sample\": {\"scenarios\": %zu, \"fit\": %zu, \"allowance\": %zu, "
                "\"holds\": %s},\n", r->in_N, r->in_fit, r->in_k, r->in_ok ? "true" : "false");
    fprintf(fp, "  \"out_of_sample\": {\n    \"scenarios\": %zu,\n    \"fit\": %zu,\n", r->M, r->fit);
    fprintf(fp, "    \"reliability\": ");
    cli_json_number(fp, r->reliability);
    fprintf(fp, ",\n    \"interval\": [");
    cli_json_number(fp, r->lo);
    fprintf(fp, ", ");
    cli_json_number(fp, r->hi);
    fprintf(fp, "],\n    \"lower_bound\": ");
    cli_json_number(fp, r->lower);
    fprintf(fp, ",\n    \"confidence\": ");
    cli_json_number(fp, r->confidence);
    fprintf(fp, ",\n    \"target\": ");
    cli_json_number(fp, r->target);
    fprintf(fp, ",\n    \"verdict\": \"%s\",\n", verdict_key(r->verdict));
    fprintf(fp, "    \"resources\": [\n");
    for (size_t i = 0; i < r->m; i++) {
        const surety_resource_check *q = &r->resource[i];
        fprintf(fp, "      {\"id\": ");
        cli_json_string(fp, surety_model_resource_id(model, i));
        fprintf(fp, ", \"capacity_hours\": ");
        cli_json_number(fp, surety_model_capacity(model, i));
        fprintf(fp, ", \"overload_probability\": ");
        cli_json_number(fp, q->overload_prob);
        fprintf(fp, ", \"overload_interval\": [");
        cli_json_number(fp, q->overload_lo);
        fprintf(fp, ", ");
        cli_json_number(fp, q->overload_hi);
        fprintf(fp, "], \"overload_hours_mean\": ");
        cli_json_number(fp, q->overload_hours_mean);
        fprintf(fp, ", \"overload_hours_p95\": ");
        cli_json_number(fp, q->overload_hours_p95);
        fprintf(fp, ", \"load_hours_mean\": ");
        cli_json_number(fp, q->load_mean);
        fprintf(fp, ", \"load_hours_p95\": ");
        cli_json_number(fp, q->load_p95);
        fprintf(fp, ",\n       \"reliability\": ");
        cli_json_number(fp, q->reliability);
        fprintf(fp, ", \"lower_bound\": ");
        cli_json_number(fp, q->reliability_lower);
        fprintf(fp, ", \"lower_bound_confidence\": ");
        cli_json_number(fp, q->reliability_confidence);
        fprintf(fp, ", \"verdict\": \"%s\"}%s\n", verdict_key(q->verdict),
                i + 1 < r->m ? "," : "");
    }
    fprintf(fp, "    ],\n    \"profit\": {\"mean\": ");
    cli_json_number(fp, r->profit_mean);
    fprintf(fp, ", \"sd\": ");
    cli_json_number(fp, r->profit_sd);
    fprintf(fp, ", \"p5\": ");
    cli_json_number(fp, r->profit_p5);
    fprintf(fp, ", \"p50\": ");
    cli_json_number(fp, r->profit_p50);
    fprintf(fp, ", \"p95\": ");
    cli_json_number(fp, r->profit_p95);
    fprintf(fp, "},\n    \"sample_seconds\": ");
    cli_json_number(fp, r->sample_seconds);
    fprintf(fp, ",\n    \"check_seconds\": ");
    cli_json_number(fp, r->check_seconds);
    fprintf(fp, "\n  }\n}\n");
}

/* Why a verdict was reached, after its word. */
static void print_verdict_reason(FILE *fp, surety_verdict v)
{
    switch (v) {
    case SURETY_MET:
        fprintf(fp, " (the lower bound reaches the target)\n");
        break;
    case SURETY_UNCERTAIN:
        fprintf(fp, " (the estimate reaches the target, its lower bound does not:\n"
                    "                   check with more samples before relying on it)\n");
        break;
    case SURETY_NOT_MET:
        fprintf(fp, " (the estimate falls short of the target)\n");
        break;
    }
}

/* The joint figures: every capacity holding together. */
static void print_joint(FILE *fp, const surety_check_report *r)
{
    double pct = 100.0 * r->confidence;
    fprintf(fp, "  reliability      %8.4f%%\n", 100.0 * r->reliability);
    fprintf(fp, "  %4.4g%% interval   %8.4f%% .. %.4f%%  (Clopper-Pearson, two-sided)\n",
            pct, 100.0 * r->lo, 100.0 * r->hi);
    fprintf(fp, "  at least         %8.4f%%  with %.4g%% confidence (one-sided)\n",
            100.0 * r->lower, pct);
}

/* A separate model: one chance constraint per resource, each judged on its
 * own lower bound; the bounds are at the Bonferroni confidence so that all
 * of them hold together at the requested one. */
static void print_separate(FILE *fp, const surety_model *model, const surety_check_report *r)
{
    double each = r->m ? r->resource[0].reliability_confidence : r->confidence;
    fprintf(fp, "  Each resource on its own (the model's constraint): lower bounds at\n"
                "  %.4g%% confidence each, so that all %zu hold together with %.4g%%\n"
                "  confidence (Bonferroni).\n\n",
            100.0 * each, r->m, 100.0 * r->confidence);
    fprintf(fp, "  %-16s %10s %10s  %s\n", "resource", "holds in", "at least", "verdict");
    for (size_t i = 0; i < r->m; i++) {
        const surety_resource_check *q = &r->resource[i];
        fprintf(fp, "  %-16s %9.4f%% %9.4f%%  %s\n", surety_model_resource_id(model, i),
                100.0 * q->reliability, 100.0 * q->reliability_lower, verdict_text(q->verdict));
    }
    fprintf(fp, "  target %6.2f%% in every resource: %s", 100.0 * r->target,
            verdict_text(r->verdict));
    switch (r->verdict) {
    case SURETY_MET:
        fprintf(fp, " (every lower bound reaches the target)\n");
        break;
    case SURETY_UNCERTAIN:
        fprintf(fp, " (every estimate reaches the target, not every lower\n"
                    "                   bound: check with more samples before relying on it)\n");
        break;
    case SURETY_NOT_MET:
        fprintf(fp, " (an estimate falls short of the target)\n");
        break;
    }
    fprintf(fp, "\n  Every capacity together (for information; not the model's constraint):\n");
    print_joint(fp, r);
}

void cli_print_check(const surety_model *model, const surety_check_report *r)
{
    FILE *fp = stdout;
    int separate = surety_model_constraint(model) == SURETY_SEPARATE;
    fprintf(fp, "Plan check for \"%s\" (risk %.4g, target reliability %.2f%%%s)\n\n",
            surety_model_name(model), surety_model_risk(model), 100.0 * r->target,
            separate ? " for each resource" : "");
    if (separate)
        fprintf(fp, "  In the model's %zu scenarios: %zu fit every capacity; %s %zu -> %s\n",
                r->in_N, r->in_fit,
                r->in_ok ? "no resource overloads in more than"
                         : "some resource overloads in more than",
                r->in_k,
                r->in_ok ? "the sampled constraints hold" : "the sampled constraints FAIL");
    else
        fprintf(fp, "  In the model's %zu scenarios: %zu fit, %zu overload (at most %zu may) -> %s\n",
                r->in_N, r->in_fit, r->in_N - r->in_fit, r->in_k,
                r->in_ok ? "the sampled constraint holds" : "the sampled constraint FAILS");
    fprintf(fp, "  In %zu fresh scenarios:       %zu fit%s\n\n", r->M, r->fit,
            separate ? " every capacity" : "");
    if (separate) {
        print_separate(fp, model, r);
    } else {
        print_joint(fp, r);
        fprintf(fp, "  target %6.2f%%:  %s", 100.0 * r->target, verdict_text(r->verdict));
        print_verdict_reason(fp, r->verdict);
    }
    fprintf(fp, "\n  %-16s %10s %10s %11s %11s %10s\n", "resource", "capacity",
            "load mean", "load P95", "P(over)", "over P95");
    fprintf(fp, "  %-16s %10s %10s %11s %11s %10s\n", "", "hours", "hours", "hours", "",
            "hours");
    for (size_t i = 0; i < r->m; i++) {
        const surety_resource_check *q = &r->resource[i];
        fprintf(fp, "  %-16s %10.1f %10.1f %11.1f %10.3f%% %10.2f\n",
                surety_model_resource_id(model, i), surety_model_capacity(model, i),
                q->load_mean, q->load_p95, 100.0 * q->overload_prob, q->overload_hours_p95);
    }
    fprintf(fp, "\n  profit  mean %.2f  sd %.2f  P5 %.2f  median %.2f  P95 %.2f\n",
            r->profit_mean, r->profit_sd, r->profit_p5, r->profit_p50, r->profit_p95);
    fprintf(fp, "  (time: %.2f s drawing scenarios, %.2f s checking)\n\n",
            r->sample_seconds, r->check_seconds);
    cli_print_caution(fp);
}

int cmd_check(int argc, char **argv)
{
    static const struct option opts[] = {
        {"samples", required_argument, 0, 'M'},
        {"confidence", required_argument, 0, 'c'},
        {"seed", required_argument, 0, 's'},
        {"risk", required_argument, 0, 'r'},
        {"json", no_argument, 0, 'j'},
        {"svg", required_argument, 0, 'S'},
        {"png", required_argument, 0, 'P'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    const char *n_arg = NULL, *seed_arg = NULL, *risk_arg = NULL;
    const char *svg = NULL, *png = NULL;
    int json = 0;
    surety_check_options copt;
    surety_check_options_init(&copt);
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:h", opts, NULL)) != -1) {
        switch (c) {
        case 'n': n_arg = optarg; break;
        case 's': seed_arg = optarg; break;
        case 'r': risk_arg = optarg; break;
        case 'j': json = 1; break;
        case 'S': svg = optarg; break;
        case 'P': png = optarg; break;
        case 'M':
            if (cli_parse_size(optarg, &copt.samples) || copt.samples == 0)
                return cli_usage_error("check", "--samples needs a positive whole number");
            break;
        case 'c':
            if (cli_parse_double(optarg, &copt.confidence) || !(copt.confidence > 0) ||
                !(copt.confidence < 1))
                return cli_usage_error("check", "--confidence needs a number in (0,1)");
            break;
        case 'h': fputs(check_help, stdout); return 0;
        default: return cli_usage_error("check", "unknown option");
        }
    }
    if (optind + 2 != argc)
        return cli_usage_error("check", "expected MODEL and PLAN files");
    surety_model *model;
    int rc = cli_load_model("check", argv[optind], n_arg, seed_arg, risk_arg, &model);
    if (rc)
        return rc;
    surety_error err;
    surety_error_clear(&err);
    surety_plan *plan = NULL;
    surety_check_report rep;
    memset(&rep, 0, sizeof rep);
    surety_code code = surety_plan_read(model, argv[optind + 1], &plan, &err);
    if (!code)
        code = surety_check(model, plan, &copt, &rep, &err);
    if (!code && svg)
        code = surety_chart_loads(model, plan, &copt, SURETY_CHART_SVG, svg, &err);
    if (!code && png)
        code = surety_chart_loads(model, plan, &copt, SURETY_CHART_PNG, png, &err);
    if (code) {
        rc = cli_report(&err, code);
    } else {
        if (json)
            print_json(model, &rep);
        else
            cli_print_check(model, &rep);
        rc = 0;
    }
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_model_free(model);
    return rc;
}
