/* cmd_data.c - `surety sample` and `surety export`: the model's scenarios
 * as a CSV table, and the sample approximation as an MPS file.
 * SPDX-License-Identifier: MIT */
#include <getopt.h>
#include <string.h>

#include "cli.h"

/* Reads MODEL and applies -n / --seed / --risk overrides. */
static int load_model(const char *cmd, const char *path, const char *n_arg,
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

int cli_load_model(const char *cmd, const char *path, const char *n_arg,
                   const char *seed_arg, const char *risk_arg, surety_model **out)
{
    return load_model(cmd, path, n_arg, seed_arg, risk_arg, out);
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

int cmd_sample(int argc, char **argv)
{
    static const struct option opts[] = {
        {"seed", required_argument, 0, 's'},
        {"output", required_argument, 0, 'o'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    const char *n_arg = NULL, *seed_arg = NULL, *out = NULL;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:o:h", opts, NULL)) != -1) {
        switch (c) {
        case 'n': n_arg = optarg; break;
        case 's': seed_arg = optarg; break;
        case 'o': out = optarg; break;
        case 'h': fputs(sample_help, stdout); return 0;
        default: return cli_usage_error("sample", "unknown option");
        }
    }
    if (optind + 1 != argc)
        return cli_usage_error("sample", "expected one MODEL file");
    if (!out)
        return cli_usage_error("sample", "-o FILE.csv is required");
    surety_model *model;
    int rc = load_model("sample", argv[optind], n_arg, seed_arg, NULL, &model);
    if (rc)
        return rc;
    surety_error err;
    surety_error_clear(&err);
    surety_scenarios *sc = NULL;
    surety_code code = surety_model_sample(model, &sc, &err);
    if (!code)
        code = surety_scenarios_write_csv(model, sc, out, &err);
    if (!code)
        fprintf(stderr, "wrote %zu scenarios of %zu jobs to %s\n",
                surety_scenarios_count(sc), surety_model_jobs(model), out);
    rc = code ? cli_report(&err, code) : 0;
    surety_scenarios_free(sc);
    surety_model_free(model);
    return rc;
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
    static const struct option opts[] = {
        {"seed", required_argument, 0, 's'},
        {"plain", no_argument, 0, 'p'},
        {"strengthened", no_argument, 0, 'S'},
        {"output", required_argument, 0, 'o'},
        {"help", no_argument, 0, 'h'},
        {0, 0, 0, 0},
    };
    const char *n_arg = NULL, *seed_arg = NULL, *out = NULL;
    surety_bigm bigm = SURETY_BIGM_STRENGTHENED;
    int c;
    optind = 1;
    while ((c = getopt_long(argc, argv, "n:o:h", opts, NULL)) != -1) {
        switch (c) {
        case 'n': n_arg = optarg; break;
        case 's': seed_arg = optarg; break;
        case 'p': bigm = SURETY_BIGM_PLAIN; break;
        case 'S': bigm = SURETY_BIGM_STRENGTHENED; break;
        case 'o': out = optarg; break;
        case 'h': fputs(export_help, stdout); return 0;
        default: return cli_usage_error("export", "unknown option");
        }
    }
    if (optind + 1 != argc)
        return cli_usage_error("export", "expected one MODEL file");
    if (!out)
        return cli_usage_error("export", "-o FILE.mps is required");
    surety_model *model;
    int rc = load_model("export", argv[optind], n_arg, seed_arg, NULL, &model);
    if (rc)
        return rc;
    surety_error err;
    surety_error_clear(&err);
    surety_scenarios *sc = NULL;
    surety_code code = surety_model_sample(model, &sc, &err);
    if (!code)
        code = surety_export_mps(model, sc, bigm, out, &err);
    if (!code)
        fprintf(stderr, "wrote the %s formulation with %zu scenarios to %s\n",
                bigm == SURETY_BIGM_PLAIN ? "plain" : "strengthened",
                surety_scenarios_count(sc), out);
    rc = code ? cli_report(&err, code) : 0;
    surety_scenarios_free(sc);
    surety_model_free(model);
    return rc;
}
