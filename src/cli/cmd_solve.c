/* cmd_solve.c - `surety solve MODEL`: the proven-optimal plan of the sample
 * approximation, a summary by resource, and the plan file for `check`.
 * SPDX-License-Identifier: MIT */
#include <errno.h>
#include <getopt.h>
#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"

static const char solve_help[] =
    "usage: surety solve MODEL [-n N] [--seed S] [--risk EPS] [-o PLAN.json]\n"
    "                    [--time-limit SEC] [--gap G] [--node-limit K]\n"
    "                    [--lp-after K|never] [--node-lp auto|always|never]\n"
    "                    [--split-after K|never]\n"
    "                    [--split-prices jobs|scenarios] [--split-rounds K]\n"
    "                    [--split-steps bundle|subgradient]\n"
    "                    [--split-root-only] [--keep-dominated]\n"
    "                    [--improve-after K|never] [--dive-nodes K|all]\n"
    "                    [--threads T] [--progress] [--quiet] [--json]\n"
    "\n"
    "Finds the most profitable plan that fits all but at most floor(eps*N) of\n"
    "the model's N scenarios (joint, or per resource when the model says\n"
    "\"separate\"), by surety's own branch and bound, and proves it optimal.\n"
    "\n"
    "  -n N              scenario count (default: the model's)\n"
    "  --seed S          random seed (default: the model's)\n"
    "  --risk EPS        risk eps (default: the model's)\n"
    "  -o FILE           write the plan (for 'surety check'); atomic\n"
    "  --time-limit SEC  stop after SEC seconds with the best plan so far\n"
    "  --gap G           stop when (bound-best)/|best| <= G (default 1e-9)\n"
    "  --node-limit K    stop after K nodes\n"
    "  --lp-after K      solve the root LP bound once K nodes have not closed\n"
    "                    the search (default: 65536 where the split below\n"
    "                    does not start by then, else after its first price\n"
    "                    round if that round searched 131072 nodes or more\n"
    "                    and pairs times scenarios are at most 262144;\n"
    "                    'never' turns it off)\n"
    "  --node-lp W       once the root LP is solved, also bound by it each node\n"
    "                    taken up from the best bound and the first three\n"
    "                    levels below it: 'auto' (default: where the split\n"
    "                    ended after a costly first round above a small LP,\n"
    "                    pairs times scenarios at most 32768), 'always' or\n"
    "                    'never'\n"
    "  --split-after K   from K nodes on (under separate constraints, or from\n"
    "                    the work of K joint nodes), bound the optimum by each\n"
    "                    resource's own problem, solved by the same search,\n"
    "                    with prices on jobs wanted twice, then each job's\n"
    "                    placements tried there one by one (default 65536;\n"
    "                    'never' turns it off)\n"
    "  --split-prices P  what the split prices: 'scenarios' (default: the jobs\n"
    "                    wanted twice, and with the joint constraint each\n"
    "                    resource's failures scenario by scenario, so that\n"
    "                    the resources' failures line up), or 'jobs' only\n"
    "                    (for comparisons)\n"
    "  --split-rounds K  most price rounds of the split before its placements\n"
    "                    are tried (default 60; fewer if the prices settle);\n"
    "                    more tighten the bound on long runs of thousands of\n"
    "                    scenarios, and slow short ones\n"
    "  --split-steps S   how the rounds move the prices: 'bundle' (default: to\n"
    "                    the best point of a model that every round refines)\n"
    "                    or 'subgradient' (steps along each round's\n"
    "                    direction; for comparisons)\n"
    "  --split-root-only after the placements are tried, bound the open nodes\n"
    "                    by them alone; by default each node taken up again\n"
    "                    from the best bound solves the split with all of its\n"
    "                    placements (for comparisons)\n"
    "  --improve-after K from K nodes on (or their work), also improve the best\n"
    "                    plan part by part: some jobs of two or three\n"
    "                    resources and some jobs left out searched again, the\n"
    "                    rest kept, for up to a quarter of the search's work,\n"
    "                    less while no better plan comes (default 65536;\n"
    "                    'never' turns it off)\n"
    "  --dive-nodes K    nodes of one depth-first dive before the search takes\n"
    "                    up the open node of best bound (default 4096), or\n"
    "                    'all' for depth first only; a small K brings the\n"
    "                    best-bound pool and its restored nodes into small\n"
    "                    searches (for tests and comparisons)\n"
    "  --keep-dominated  search every distinct scenario, also those that every\n"
    "                    feasible plan fits (set aside by default; same answer,\n"
    "                    for comparisons)\n"
    "  --threads T       threads for the split's one-resource solves (default\n"
    "                    1; at most one per resource); the tree search runs\n"
    "                    on one thread\n"
    "  --progress        progress lines on stderr (default: on a terminal)\n"
    "  --quiet           no progress lines\n"
    "  --json            machine-readable result on stdout\n"
    "\n"
    "Exit codes: 0 solved (optimal or proven infeasible), 4 stopped by a limit,\n"
    "5 interrupted (the best plan so far is still printed and written).\n";

/* A node count K > 0, or the word (-1): 'never' for --lp-after,
 * --split-after and --improve-after, 'all' for --dive-nodes; non-zero when
 * the text is neither. */
static int parse_count(const char *text, const char *word, long *out)
{
    size_t v;
    if (strcmp(text, word) == 0) {
        *out = -1;
        return 0;
    }
    if (cli_parse_size(text, &v) || v == 0 || v > (size_t)LONG_MAX)
        return 1;
    *out = (long)v;
    return 0;
}

typedef struct log_state {
    int verbosity;
} log_state;

static void on_log(void *ctx, surety_log_level level, const char *line)
{
    log_state *ls = ctx;
    if ((int)level <= ls->verbosity)
        fprintf(stderr, "%s\n", line);
}

/* Mean hours of every resource under the plan over the solved scenarios. */
static void resource_means(const surety_model *model, const surety_plan *plan,
                           const surety_scenarios *sc, double *mean)
{
    size_t n = surety_model_jobs(model), m = surety_model_resources(model);
    size_t N = surety_scenarios_count(sc);
    const double *w = surety_scenarios_hours(sc);
    for (size_t i = 0; i < m; i++)
        mean[i] = 0;
    for (size_t j = 0; j < n; j++) {
        long i = plan ? surety_plan_get(plan, j) : -1;
        if (i < 0)
            continue;
        double s = 0;
        for (size_t l = 0; l < N; l++)
            s += w[l * n + j];
        mean[i] += surety_model_hours_factor(model, (size_t)i) * s / (double)N;
    }
}

static void job_means(const surety_model *model, const surety_scenarios *sc,
                      double *hours, double *profit)
{
    size_t n = surety_model_jobs(model), N = surety_scenarios_count(sc);
    const double *w = surety_scenarios_hours(sc), *p = surety_scenarios_profit(sc);
    for (size_t j = 0; j < n; j++) {
        double sh = 0, sp = 0;
        for (size_t l = 0; l < N; l++) {
            sh += w[l * n + j];
            sp += p[l * n + j];
        }
        hours[j] = sh / (double)N;
        profit[j] = sp / (double)N;
    }
}

static void print_text(const surety_model *model, const surety_scenarios *sc,
                       const surety_result *res)
{
    FILE *fp = stdout;
    size_t n = surety_model_jobs(model), m = surety_model_resources(model);
    size_t N = surety_scenarios_count(sc);
    const surety_plan *plan = surety_result_plan(res);
    surety_status st = surety_result_status(res);
    fprintf(fp, "Solution for \"%s\": %zu jobs, %zu resources, %zu scenarios, risk %.4g (%s)\n",
            surety_model_name(model), n, m, N, surety_model_risk(model),
            surety_model_constraint(model) == SURETY_JOINT ? "joint" : "separate");
    fprintf(fp, "  status %s, stop %s after %ld nodes in %.2f s\n", surety_status_name(st),
            surety_stop_name(surety_result_stop(res)), surety_result_nodes(res),
            surety_result_seconds(res));
    if (st == SURETY_INFEASIBLE) {
        fprintf(fp, "  no plan satisfies the constraint: %s\n", surety_result_reason(res));
        return;
    }
    if (!plan) {
        fprintf(fp, "  no plan found before the search stopped; best bound %.2f\n",
                surety_result_bound(res));
        return;
    }
    fprintf(fp, "  mean profit %.2f, upper bound %.2f, gap %.4f%%\n", surety_result_objective(res),
            surety_result_bound(res), 100.0 * surety_result_gap(res));
    if (st == SURETY_OPTIMAL && surety_result_gap(res) > 1e-6)
        fprintf(fp, "  optimal within the --gap asked for: a better plan may exist, by at "
                    "most the gap\n");
    fprintf(fp, "  in sample: %zu of %zu scenarios fit (at most %zu may overload)\n\n",
            surety_result_fit(res), N, surety_result_allowance(res));
    double *mean = calloc(m + 2 * n, sizeof *mean);
    size_t *fit = calloc(m, sizeof *fit);
    if (!mean || !fit) {
        free(mean);
        free(fit);
        return;
    }
    double *jh = mean + m, *jp = mean + m + n;
    resource_means(model, plan, sc, mean);
    job_means(model, sc, jh, jp);
    surety_plan_count_fit(model, plan, sc, fit);
    fprintf(fp, "  %-16s %9s %9s %9s  %s\n", "resource", "capacity", "mean", "holds in",
            "jobs (mean hours)");
    for (size_t i = 0; i < m; i++) {
        fprintf(fp, "  %-16s %9.1f %9.1f %8.1f%%  ", surety_model_resource_id(model, i),
                surety_model_capacity(model, i), mean[i], 100.0 * (double)fit[i] / (double)N);
        int col = 0;
        for (size_t j = 0; j < n; j++) {
            if (surety_plan_get(plan, j) != (long)i)
                continue;
            if (col >= 4) {
                fprintf(fp, "\n  %-16s %9s %9s %9s  ", "", "", "", "");
                col = 0;
            }
            fprintf(fp, "%s (%.1f) ", surety_model_job_id(model, j),
                    jh[j] * surety_model_hours_factor(model, i));
            col++;
        }
        fprintf(fp, "\n");
    }
    size_t declined = 0;
    for (size_t j = 0; j < n; j++)
        declined += surety_plan_get(plan, j) < 0;
    if (declined) {
        fprintf(fp, "  %-16s ", "declined");
        int col = 0;
        for (size_t j = 0; j < n; j++) {
            if (surety_plan_get(plan, j) >= 0)
                continue;
            if (col >= 6) {
                fprintf(fp, "\n  %-16s ", "");
                col = 0;
            }
            fprintf(fp, "%s ", surety_model_job_id(model, j));
            col++;
        }
        fprintf(fp, "\n");
    }
    fprintf(fp, "\n  In-sample figures are optimistic: run 'surety check' on the plan for\n"
                "  its reliability on fresh scenarios.\n\n");
    cli_print_caution(fp);
    free(mean);
    free(fit);
}

static void print_json(const surety_model *model, const surety_scenarios *sc,
                       const surety_result *res)
{
    FILE *fp = stdout;
    size_t n = surety_model_jobs(model), m = surety_model_resources(model);
    const surety_plan *plan = surety_result_plan(res);
    fprintf(fp, "{\n  \"model\": ");
    cli_json_string(fp, surety_model_name(model));
    fprintf(fp, ",\n  \"jobs\": %zu,\n  \"resources\": %zu,\n  \"scenarios\": %zu,\n", n, m,
            surety_scenarios_count(sc));
    fprintf(fp, "  \"risk\": ");
    cli_json_number(fp, surety_model_risk(model));
    fprintf(fp, ",\n  \"constraint\": \"%s\",\n",
            surety_model_constraint(model) == SURETY_JOINT ? "joint" : "separate");
    fprintf(fp, "  \"status\": \"%s\",\n  \"stop\": \"%s\",\n",
            surety_status_name(surety_result_status(res)),
            surety_stop_name(surety_result_stop(res)));
    fprintf(fp, "  \"objective\": ");
    cli_json_number(fp, plan ? surety_result_objective(res) : NAN);
    fprintf(fp, ",\n  \"bound\": ");
    cli_json_number(fp, surety_result_bound(res));
    fprintf(fp, ",\n  \"gap\": ");
    cli_json_number(fp, plan ? surety_result_gap(res) : NAN);
    fprintf(fp, ",\n  \"nodes\": %ld,\n  \"seconds\": ", surety_result_nodes(res));
    cli_json_number(fp, surety_result_seconds(res));
    fprintf(fp, ",\n  \"fit\": %zu,\n  \"allowance\": %zu,\n  \"searched\": %zu,\n"
            "  \"reason\": ",
            plan ? surety_result_fit(res) : 0, surety_result_allowance(res),
            surety_result_searched(res));
    cli_json_string(fp, surety_result_reason(res));
    fprintf(fp, ",\n  \"plan\": ");
    if (!plan) {
        fprintf(fp, "null\n}\n");
        return;
    }
    fprintf(fp, "{");
    int first = 1;
    for (size_t j = 0; j < n; j++) {
        long i = surety_plan_get(plan, j);
        if (i < 0)
            continue;
        fprintf(fp, "%s\n    ", first ? "" : ",");
        cli_json_string(fp, surety_model_job_id(model, j));
        fprintf(fp, ": ");
        cli_json_string(fp, surety_model_resource_id(model, (size_t)i));
        first = 0;
    }
    fprintf(fp, "%s}\n}\n", first ? "" : "\n  ");
}

int cmd_solve(int argc, char **argv)
{
    static const struct option opts[] = {
        {"seed", required_argument, 0, 's'},
        {"risk", required_argument, 0, 'r'},
        {"output", required_argument, 0, 'o'},
        {"time-limit", required_argument, 0, 't'},
        {"gap", required_argument, 0, 'g'},
        {"node-limit", required_argument, 0, 'k'},
        {"threads", required_argument, 0, 'T'},
        {"lp-after", required_argument, 0, 'L'},
        {"node-lp", required_argument, 0, 'N'},
        {"split-after", required_argument, 0, 'S'},
        {"keep-dominated", no_argument, 0, 'D'},
        {"improve-after", required_argument, 0, 'I'},
        {"dive-nodes", required_argument, 0, 'V'},
        {"split-prices", required_argument, 0, 'P'},
        {"split-rounds", required_argument, 0, 'R'},
        {"split-steps", required_argument, 0, 'B'},
        {"split-root-only", no_argument, 0, 'O'},
        {"progress", no_argument, 0, 'p'},
        {"quiet", no_argument, 0, 'q'},
        {"json", no_argument, 0, 'j'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    const char *n_arg = NULL, *seed_arg = NULL, *risk_arg = NULL, *out = NULL;
    int json = 0, progress = -1;
    surety_solve_options sopt;
    surety_solve_options_init(&sopt);
    int c;
    size_t v;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:o:qh", opts, NULL)) != -1) {
        switch (c) {
        case 'n': n_arg = optarg; break;
        case 's': seed_arg = optarg; break;
        case 'r': risk_arg = optarg; break;
        case 'o': out = optarg; break;
        case 'j': json = 1; break;
        case 'p': progress = 1; break;
        case 'D': sopt.keep_dominated = 1; break;
        case 'O': sopt.decomp_root_only = 1; break;
        case 'q': progress = 0; break;
        case 't':
            if (cli_parse_double(optarg, &sopt.time_limit_s) || sopt.time_limit_s <= 0)
                return cli_usage_error("solve", "--time-limit needs a positive number of seconds");
            break;
        case 'g':
            if (cli_parse_double(optarg, &sopt.gap) || sopt.gap < 0)
                return cli_usage_error("solve", "--gap needs a non-negative number");
            break;
        case 'k':
            if (cli_parse_size(optarg, &v) || v == 0)
                return cli_usage_error("solve", "--node-limit needs a positive whole number");
            sopt.node_limit = (long)v;
            break;
        case 'L':
            if (parse_count(optarg, "never", &sopt.lp_after))
                return cli_usage_error("solve", "--lp-after needs a positive whole number or 'never'");
            break;
        case 'S':
            if (parse_count(optarg, "never", &sopt.decomp_after))
                return cli_usage_error("solve", "--split-after needs a positive whole number or 'never'");
            break;
        case 'I':
            if (parse_count(optarg, "never", &sopt.improve_after))
                return cli_usage_error("solve", "--improve-after needs a positive whole number or 'never'");
            break;
        case 'V':
            if (parse_count(optarg, "all", &sopt.dive_nodes))
                return cli_usage_error("solve", "--dive-nodes needs a positive whole number or 'all'");
            break;
        case 'P':
            if (strcmp(optarg, "jobs") != 0 && strcmp(optarg, "scenarios") != 0)
                return cli_usage_error("solve", "--split-prices needs 'jobs' or 'scenarios'");
            sopt.decomp_jobs_only = strcmp(optarg, "jobs") == 0;
            break;
        case 'N':
            if (strcmp(optarg, "auto") == 0)
                sopt.lp_restored = 0;
            else if (strcmp(optarg, "always") == 0)
                sopt.lp_restored = 1;
            else if (strcmp(optarg, "never") == 0)
                sopt.lp_restored = -1;
            else
                return cli_usage_error("solve", "--node-lp needs 'auto', 'always' or 'never'");
            break;
        case 'B':
            if (strcmp(optarg, "bundle") != 0 && strcmp(optarg, "subgradient") != 0)
                return cli_usage_error("solve", "--split-steps needs 'bundle' or 'subgradient'");
            sopt.decomp_subgradient = strcmp(optarg, "subgradient") == 0;
            break;
        case 'R':
            if (cli_parse_size(optarg, &v) || v == 0 || v > 100000)
                return cli_usage_error("solve", "--split-rounds needs a whole number from 1 to 100000");
            sopt.decomp_rounds = (int)v;
            break;
        case 'T':
            if (cli_parse_size(optarg, &v) || v == 0 || v > 1024)
                return cli_usage_error("solve", "--threads needs a whole number from 1 to 1024");
            sopt.threads = (int)v;
            break;
        case 'h': fputs(solve_help, stdout); return 0;
        default: return cli_usage_error("solve", "unknown option");
        }
    }
    if (optind + 1 != argc)
        return cli_usage_error("solve", "expected one MODEL file");
    if (out && !cli_writable(out)) {
        /* refuse before a long solve rather than lose its plan after it */
        fprintf(stderr, "%s: error: cannot write here: %s\n", out, strerror(errno));
        return SURETY_EINPUT;
    }
    surety_model *model;
    int rc = cli_load_model("solve", argv[optind], n_arg, seed_arg, risk_arg, &model);
    if (rc)
        return rc;
    if (progress < 0)
        progress = isatty(STDERR_FILENO);
    log_state ls = {progress ? SURETY_LOG_PROGRESS : SURETY_LOG_WARN};
    sopt.log = on_log;
    sopt.log_ctx = &ls;
    sopt.verbosity = ls.verbosity;
    sopt.progress_s = progress ? 1.0 : 0.0;
    cli_catch_interrupt();
    sopt.interrupt = &cli_interrupted;

    surety_error err;
    surety_error_clear(&err);
    surety_scenarios *sc = NULL;
    surety_result *res = NULL;
    surety_code code = surety_model_sample(model, &sc, &err);
    if (!code)
        code = surety_solve(model, sc, &sopt, &res, &err);
    if (code) {
        rc = cli_report(&err, code);
        goto done;
    }
    const surety_plan *plan = surety_result_plan(res);
    if (out && plan) {
        char extra[1024];
        snprintf(extra, sizeof extra,
                 "{\"status\": \"%s\", \"objective\": %.17g, \"bound\": %.17g, "
                 "\"scenarios\": %zu, \"seed\": %llu, \"risk\": %.17g, \"fit\": %zu}",
                 surety_status_name(surety_result_status(res)), surety_result_objective(res),
                 surety_result_bound(res), surety_scenarios_count(sc),
                 (unsigned long long)surety_model_seed(model), surety_model_risk(model),
                 surety_result_fit(res));
        if ((code = surety_plan_write(model, plan, extra, out, &err))) {
            rc = cli_report(&err, code);
            goto done;
        }
    }
    if (json)
        print_json(model, sc, res);
    else
        print_text(model, sc, res);
    if (out && plan && !json)
        fprintf(stdout, "\nPlan written to %s\n", out);
    switch (surety_result_stop(res)) {
    case SURETY_STOP_FINISHED: rc = 0; break;
    case SURETY_STOP_INTERRUPT: rc = CLI_EXIT_INTERRUPT; break;
    default: rc = CLI_EXIT_LIMIT; break;
    }
done:
    surety_result_free(res);
    surety_scenarios_free(sc);
    surety_model_free(model);
    return rc;
}
