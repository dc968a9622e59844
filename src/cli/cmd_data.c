/* cmd_data.c - `surety sample` and `surety export`: the model's scenarios
 * as a CSV table, and the sample approximation as an MPS file.
 * SPDX-License-Identifier: MIT */
#include <getopt.h>
#include <string.h>

#include "cli.h"

int cli_load_model(const char *cmd, const char *path, const char *n_arg,
                   const char *seed_arg, const char *risk_arg,
                   surety_model **out)
{
    surety_error err;
    surety_error_clear(&err);
    surety_code rc = surety_model_read(path, out, &err);
    if (rc)
        return cli_report(&err, rc);
    if (n_arg) {
        size_t N;
        if (cli_parse_size(n_arg, &N) || N == 0) {
            surety_model_free(*out);
            return cli_usage_error(cmd, "-n needs a positive whole number, not '%s'", n_arg);
        }
        if ((rc = surety_model_set_scenarios(*out, N, &err))) {
            surety_model_free(*out);
            return cli_report(&err, rc);
        }
    }
    if (seed_arg) {
        uint64_t seed;
        if (cli_parse_u64(seed_arg, &seed)) {
            surety_model_free(*out);
            return cli_usage_error(cmd, "--seed needs a whole number, not '%s'", seed_arg);
        }
        surety_model_set_seed(*out, seed);
    }
    if (risk_arg) {
        double eps;
        if (cli_parse_double(risk_arg, &eps) ||
            (rc = surety_model_set_risk(*out, eps, &err))) {
            surety_model_free(*out);
            return cli_usage_error(cmd, "--risk needs a number strictly between 0 and 1, not '%s'",
                                   risk_arg);
        }
    }
    return 0;
}

static const char sample_help[] =
    "usage: surety sample MODEL [-n N] [--seed S] -o FILE.csv\n"
    "\n"
    "Writes the scenarios the model is solved on (scenario l depends only on\n"
    "the seed and l, so -n 2N extends -n N) as a CSV table with <job>.hours and\n"
    "<job>.profit columns. The table reads back exactly as a model's\n"
    "scenario_table.\n"
    "\n"
    "  -n N          scenario count (default: the model's)\n"
    "  --seed S      random seed (default: the model's)\n"
    "  -o FILE       output file (written atomically; required)\n";

/* What sample and export are asked to do. */
typedef struct data_args {
    const char *model, *n_arg, *seed_arg, *out;
    int mps;           /* export: an MPS file; sample: a CSV table */
    surety_bigm bigm;  /* export only */
} data_args;

/* The options both commands share (-n, --seed, -o, --help) and export's
 * formulation flags, which sample refuses. Returns -1 to go on, otherwise
 * the exit code (0 after --help). */
static int parse_data_args(const char *cmd, const char *help, int argc,
                           char **argv, data_args *a)
{
    static const struct option opts[] = {
        {"seed", required_argument, 0, 's'},
        {"plain", no_argument, 0, 'p'},
        {"strengthened", no_argument, 0, 'S'},
        {"output", required_argument, 0, 'o'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:o:h", opts, NULL)) != -1) {
        switch (c) {
        case 'n': a->n_arg = optarg; break;
        case 's': a->seed_arg = optarg; break;
        case 'p':
        case 'S':
            if (!a->mps)
                return cli_usage_error(cmd, "unknown option");
            a->bigm = c == 'p' ? SURETY_BIGM_PLAIN : SURETY_BIGM_STRENGTHENED;
            break;
        case 'o': a->out = optarg; break;
        case 'h': fputs(help, stdout); return 0;
        default: return cli_usage_error(cmd, "unknown option");
        }
    }
    if (optind + 1 != argc)
        return cli_usage_error(cmd, "expected one MODEL file");
    if (!a->out)
        return cli_usage_error(cmd, "-o FILE.%s is required",
                               a->mps ? "mps" : "csv");
    a->model = argv[optind];
    return -1;
}

/* Reads the model, draws the scenarios it is solved on and writes them as
 * a table or as the MPS file of the sample approximation. */
static int write_data(const char *cmd, const data_args *a)
{
    surety_model *model;
    int rc = cli_load_model(cmd, a->model, a->n_arg, a->seed_arg, NULL, &model);
    if (rc)
        return rc;
    surety_error err;
    surety_error_clear(&err);
    surety_scenarios *sc = NULL;
    surety_code code = surety_model_sample(model, &sc, &err);
    if (!code)
        code = a->mps ? surety_export_mps(model, sc, a->bigm, a->out, &err)
                      : surety_scenarios_write_csv(model, sc, a->out, &err);
    if (!code && a->mps)
        fprintf(stderr, "wrote the %s formulation with %zu scenarios to %s\n",
                a->bigm == SURETY_BIGM_PLAIN ? "plain" : "strengthened",
                surety_scenarios_count(sc), a->out);
    else if (!code)
        fprintf(stderr, "wrote %zu scenarios of %zu jobs to %s\n",
                surety_scenarios_count(sc), surety_model_jobs(model), a->out);
    rc = code ? cli_report(&err, code) : 0;
    surety_scenarios_free(sc);
    surety_model_free(model);
    return rc;
}

int cmd_sample(int argc, char **argv)
{
    data_args a = {0};
    int rc = parse_data_args("sample", sample_help, argc, argv, &a);
    return rc >= 0 ? rc : write_data("sample", &a);
}

static const char export_help[] =
    "usage: surety export MODEL [-n N] [--seed S] [--plain|--strengthened] -o FILE.mps\n"
    "\n"
    "Writes the sample approximation (the deterministic equivalent: one binary\n"
    "per allowed job and resource, one indicator per scenario, big-M rows and\n"
    "the allowance row) as an MPS file for a general MIP solver. The objective\n"
    "minimises minus the mean profit.\n"
    "\n"
    "  -n N            scenario count (default: the model's)\n"
    "  --seed S        random seed (default: the model's)\n"
    "  --plain         big-M = all hours minus capacity\n"
    "  --strengthened  order-statistic big-M (default)\n"
    "  -o FILE         output file (written atomically; required)\n";

int cmd_export(int argc, char **argv)
{
    data_args a = {0};
    a.mps = 1;
    a.bigm = SURETY_BIGM_STRENGTHENED;
    int rc = parse_data_args("export", export_help, argc, argv, &a);
    return rc >= 0 ? rc : write_data("export", &a);
}
