/* bench_solve.c - times the exact solver on generated instances (n = 40
 * jobs, m = 4 resources, eps = 0.05, N = 500/1000/2000 by default) and
 * prints one line per instance plus medians per N.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../tests/solve_gen.h"
#include "surety.h"

static void log_line(void *ctx, surety_log_level level, const char *line)
{
    (void)ctx;
    (void)level;
    fprintf(stderr, "%s\n", line);
}

static int cmp_d(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static void usage(void)
{
    fprintf(stderr,
            "usage: bench_solve [-N n1,n2,..] [-s seeds] [-n jobs] [-m res]\n"
            "                   [-e eps] [-t tightness] [-d normal|lognormal]\n"
            "                   [-u] (unequal resources) [-T time_limit_s]\n"
            "                   [-S] (separate) [-v] (progress lines)\n");
}

int main(int argc, char **argv)
{
    size_t Ns[16] = {500, 1000, 2000}, nN = 3, seeds = 5;
    solve_gen_params base;
    memset(&base, 0, sizeof base);
    base.n = 40;
    base.m = 4;
    base.eps = 0.05;
    base.tightness = 0.5;
    base.dist = SOLVE_GEN_LOGNORMAL;
    base.equal_resources = 1;
    base.noise = 0.1;
    double tl = 60;
    int verbose = 0;
    for (int a = 1; a < argc; a++) {
        const char *o = argv[a];
        const char *v = a + 1 < argc ? argv[a + 1] : NULL;
        if (!strcmp(o, "-N") && v) {
            nN = 0;
            char *p = (char *)v;
            while (*p && nN < 16) {
                Ns[nN++] = strtoul(p, &p, 10);
                if (*p == ',')
                    p++;
            }
            a++;
        } else if (!strcmp(o, "-s") && v) {
            seeds = strtoul(v, NULL, 10);
            a++;
        } else if (!strcmp(o, "-n") && v) {
            base.n = strtoul(v, NULL, 10);
            a++;
        } else if (!strcmp(o, "-m") && v) {
            base.m = strtoul(v, NULL, 10);
            a++;
        } else if (!strcmp(o, "-e") && v) {
            base.eps = atof(v);
            a++;
        } else if (!strcmp(o, "-t") && v) {
            base.tightness = atof(v);
            a++;
        } else if (!strcmp(o, "-T") && v) {
            tl = atof(v);
            a++;
        } else if (!strcmp(o, "-d") && v) {
            base.dist = !strcmp(v, "normal") ? SOLVE_GEN_NORMAL
                                             : SOLVE_GEN_LOGNORMAL;
            a++;
        } else if (!strcmp(o, "-u")) {
            base.equal_resources = 0;
        } else if (!strcmp(o, "-S")) {
            base.separate = 1;
        } else if (!strcmp(o, "-v")) {
            verbose = 1;
        } else {
            usage();
            return 1;
        }
    }
    printf("%6s %5s %-9s %14s %14s %9s %10s %9s %9s\n", "N", "seed", "status",
           "objective", "bound", "gap", "nodes", "seconds", "us/node");
    for (size_t t = 0; t < nN; t++) {
        double *secs = calloc(seeds ? seeds : 1, sizeof *secs);
        for (size_t s = 0; s < seeds; s++) {
            solve_gen_params p = base;
            p.N = Ns[t];
            p.seed = 1 + s;
            surety_model *md = solve_gen_model(&p);
            surety_scenarios *sc = solve_gen_scenarios(md, &p);
            surety_solve_options o;
            surety_solve_options_init(&o);
            o.time_limit_s = tl;
            if (verbose) {
                o.log = log_line;
                o.verbosity = SURETY_LOG_PROGRESS;
                o.progress_s = 2;
            }
            surety_result *res = NULL;
            surety_error err;
            if (surety_solve(md, sc, &o, &res, &err) != SURETY_OK) {
                fprintf(stderr, "error: %s\n", err.message);
                return 3;
            }
            double sec = surety_result_seconds(res);
            long nodes = surety_result_nodes(res);
            printf("%6zu %5zu %-9s %14.4f %14.4f %9.2e %10ld %9.3f %9.1f\n",
                   p.N, p.seed, surety_status_name(surety_result_status(res)),
                   surety_result_objective(res), surety_result_bound(res),
                   surety_result_gap(res), nodes, sec,
                   nodes ? 1e6 * sec / (double)nodes : 0.0);
            fflush(stdout);
            secs[s] = sec;
            surety_result_free(res);
            surety_model_destroy(md);
            solve_gen_scenarios_free(sc);
        }
        qsort(secs, seeds, sizeof *secs, cmp_d);
        if (seeds)
            printf("N=%zu median %.3f s over %zu instances\n", Ns[t],
                   seeds % 2 ? secs[seeds / 2]
                             : 0.5 * (secs[seeds / 2 - 1] + secs[seeds / 2]),
                   seeds);
        free(secs);
    }
    return 0;
}
