/* bench_check.c - speed of the out-of-sample check including correlated
 * sampling: job-samples and scenarios per second, CPU and wall, and splits.
 * SPDX-License-Identifier: MIT */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "check.h"
#include "model.h"
#include "rng.h"
#include "sample.h"
#include "surety.h"

/* CPU seconds of every thread of the process (OpenBLAS's idle workers
 * included: they are part of what a check costs). */
static double cpu_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static double wall_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int cmp_dbl(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Median of v[0..len-1] (reorders v). */
static double median(double *v, size_t len)
{
    qsort(v, len, sizeof *v, cmp_dbl);
    return len % 2 ? v[len / 2] : 0.5 * (v[len / 2 - 1] + v[len / 2]);
}

/* CPU seconds to draw scenarios 0..M-1 of the CHECK stream in the
 * checker's block size, restricted to cols (all jobs when cols is NULL). */
static double fill_cpu(const surety_model *model, size_t M,
                       const size_t *cols, size_t ncols)
{
    size_t n = model->n, B = 16 * SURETY_SAMPLE_BLOCK;
    surety_sampler *smp = surety_sampler_new(model);
    double *h = malloc(B * n * sizeof *h), *p = malloc(B * n * sizeof *p);
    if (!smp || !h || !p) {
        fprintf(stderr, "error: out of memory\n");
        exit(3);
    }
    surety_sampler_restrict(smp, cols, ncols);
    double c0 = cpu_s();
    for (size_t done = 0; done < M; done += B)
        surety_sampler_fill(smp, SURETY_STREAM_CHECK, done,
                            M - done < B ? M - done : B, h, p);
    double t = cpu_s() - c0;
    free(h);
    free(p);
    surety_sampler_free(smp);
    return t;
}

/* Memory bandwidth of one core, STREAM's triad a = b + s c on three
 * arrays of 2^22 doubles (32 MiB each, far beyond the caches): bytes moved
 * per CPU second (24 per element: two read, one written), best of 5. */
static double triad_bytes_per_s(void)
{
    size_t len = (size_t)1 << 22;
    double *a = malloc(len * sizeof *a), *b = malloc(len * sizeof *b),
           *c = malloc(len * sizeof *c);
    if (!a || !b || !c) {
        fprintf(stderr, "error: out of memory\n");
        exit(3);
    }
    for (size_t e = 0; e < len; e++) {
        a[e] = 0;
        b[e] = (double)e;
        c[e] = 1.0 / (double)(e + 1);
    }
    double best = 0, sink = 0;
    for (int rep = 0; rep < 5; rep++) {
        double c0 = cpu_s();
        for (size_t e = 0; e < len; e++)
            a[e] = b[e] + 3.0 * c[e];
        double t = cpu_s() - c0;
        sink += a[rep];
        if (t > 0 && 24.0 * (double)len / t > best)
            best = 24.0 * (double)len / t;
    }
    if (sink == 42.4242)
        printf("%g\n", sink); /* keeps the stores */
    free(a);
    free(b);
    free(c);
    return best;
}

/* Draws per CPU second of the sampler's generator alone: one uniform per
 * job-sample (the least any sampling does with it), and one standard normal
 * by its ziggurat (the copula's draw), summed so none is optimised away. */
static void rng_rates(double *uniform_per_s, double *normal_per_s)
{
    size_t cnt = 50000000;
    surety_rng r = surety_rng_from(0x5eedULL);
    double acc = 0, c0 = cpu_s();
    for (size_t e = 0; e < cnt; e++)
        acc += surety_rng_uniform(&r);
    double t = cpu_s() - c0;
    *uniform_per_s = (double)cnt / t;
    c0 = cpu_s();
    for (size_t e = 0; e < cnt; e++)
        acc += surety_rng_normal_keyed(&r, e);
    t = cpu_s() - c0;
    *normal_per_s = (double)cnt / t;
    if (acc == 42.4242)
        printf("%g\n", acc);
}

/* A plan near the reliability boundary, as a solver would return: jobs in
 * file order, each into the first allowed resource that keeps the sampled
 * chance constraint, so that some fresh scenarios overload. */
static surety_plan *greedy_plan(const surety_model *model,
                                const surety_scenarios *sc)
{
    surety_plan *plan = surety_plan_new(model);
    /* required jobs first (placed even when nothing keeps the constraint) */
    for (int pass = 0; pass < 2; pass++)
        for (size_t j = 0; j < model->n; j++) {
            int req = surety_model_job_required(model, j);
            if (req != (pass == 0))
                continue;
            long first = -1;
            for (size_t i = 0; i < model->m; i++) {
                if (!surety_model_job_allowed(model, j, i))
                    continue;
                if (first < 0)
                    first = (long)i;
                surety_plan_set(plan, j, (long)i);
                if (surety_plan_feasible(model, plan, sc))
                    break;
                surety_plan_set(plan, j, -1);
            }
            if (req && surety_plan_get(plan, j) < 0)
                surety_plan_set(plan, j, first);
        }
    return plan;
}

/* Usage: bench_check [MODEL [M [REPS [PLAN]]]]. Each figure is the median
 * of REPS runs (default 5); the machine may be shared, so CPU time is the
 * figure to compare, wall time only shows how busy the machine was. The
 * plan is read from PLAN (as `surety solve -o` writes it) when given,
 * else built greedily. */
int main(int argc, char **argv)
{
    const char *path = argc > 1 ? argv[1] : SURETY_SOURCE_ROOT "/instances/demo.json";
    size_t M = argc > 2 ? strtoul(argv[2], NULL, 10) : 1000000;
    size_t reps = argc > 3 ? strtoul(argv[3], NULL, 10) : 5;
    const char *plan_path = argc > 4 ? argv[4] : NULL;
    if (M == 0 || reps == 0 || reps > 100) {
        fprintf(stderr,
                "usage: bench_check [MODEL [M [REPS (1-100) [PLAN]]]]\n");
        return 1;
    }
    surety_model *model = NULL;
    surety_error err;
    if (surety_model_read(path, &model, &err) != SURETY_OK) {
        fprintf(stderr, "%s:%d:%d: error: %s\n", err.file, err.line, err.column,
                err.message);
        return 2;
    }
    surety_scenarios *sc = NULL;
    if (surety_model_sample(model, &sc, &err) != SURETY_OK) {
        fprintf(stderr, "error: %s\n", err.message);
        return 2;
    }
    surety_plan *plan = NULL;
    if (!plan_path) {
        plan = greedy_plan(model, sc);
    } else if (surety_plan_read(model, plan_path, &plan, &err) != SURETY_OK) {
        fprintf(stderr, "%s: error: %s\n", plan_path, err.message);
        return 2;
    }
    size_t n = model->n, accepted = 0;
    size_t *cols = malloc((n ? n : 1) * sizeof *cols);
    for (size_t j = 0; j < n; j++)
        if (surety_plan_get(plan, j) >= 0)
            cols[accepted++] = j;

    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = M;
    opt.in_sample = 0;
    surety_check_report rep;
    memset(&rep, 0, sizeof rep);
    double cpu[100], wall[100], samp[100], full[100];
    for (size_t t = 0; t < reps; t++) {
        surety_check_report_free(&rep);
        double c0 = cpu_s(), w0 = wall_s();
        if (surety_check(model, plan, &opt, &rep, &err) != SURETY_OK) {
            fprintf(stderr, "error: %s\n", err.message);
            return 3;
        }
        cpu[t] = cpu_s() - c0;
        wall[t] = wall_s() - w0;
        /* the same scenarios drawn alone, as the check draws them (only
         * the accepted jobs transformed) and in full (surety sample) */
        samp[t] = fill_cpu(model, M, cols, accepted);
        full[t] = fill_cpu(model, M, NULL, 0);
    }
    double c = median(cpu, reps), w = median(wall, reps);
    double s = median(samp, reps), f = median(full, reps);
    double all = (double)M * (double)n, used = (double)M * (double)accepted;
    printf("model %s: %zu jobs (%zu accepted by the %s plan), %zu "
           "resources, %s hours\n", path, n, accepted,
           plan_path ? "given" : "greedy", model->m,
           model->chol ? "correlated" : "independent");
    printf("fresh scenarios M = %zu, reliability %.5f [%.5f, %.5f]\n", M,
           rep.reliability, rep.lo, rep.hi);
    printf("check (sampling included), median of %zu runs: %.3f s CPU, "
           "%.3f s wall\n", reps, c, w);
    printf("  job-samples/s, all %zu jobs a scenario:    %.3g CPU, %.3g wall\n",
           n, all / c, all / w);
    printf("  job-samples/s, %zu transformed jobs only:  %.3g CPU, %.3g wall\n",
           accepted, used / c, used / w);
    printf("  scenarios/s:                          %.3g CPU, %.3g wall\n",
           (double)M / c, (double)M / w);
    printf("sampling alone, as the check draws (accepted jobs transformed): "
           "%.3f s CPU\n", s);
    printf("full sampling of all jobs (surety sample): %.3f s CPU, %.3g "
           "job-samples/s\n", f, all / f);

    /* where the check stands against two limits of this machine */
    double bw = triad_bytes_per_s(), ru, rn;
    rng_rates(&ru, &rn);
    printf("limits measured on this machine (one core, CPU time):\n");
    printf("  memory bandwidth (triad, 3 x 32 MiB): %.3g GB/s; a check that "
           "read stored hours\n    (8 bytes a job-sample) could reach at most "
           "%.3g job-samples/s;\n    this one, drawing on the fly, reaches "
           "%.1f%% of that\n", bw / 1e9, bw / 8, 100 * (all / c) / (bw / 8));
    printf("  the generator alone: %.3g uniforms/s, %.3g normals/s; the check "
           "reaches\n    %.1f%% of one uniform per job-sample and %.1f%% of one "
           "normal\n", ru, rn, 100 * (all / c) / ru, 100 * (all / c) / rn);

    /* the early-exit count alone on the in-sample set, repeated */
    surety_plan_eval ev;
    surety_check_eval_init(&ev, model, plan, NULL);
    size_t creps = 2000, fit = 0;
    double t0 = cpu_s();
    for (size_t r = 0; r < creps; r++)
        fit += surety_check_count(&ev, sc->hours, sc->N);
    double t = cpu_s() - t0;
    printf("early-exit count: %.3g scenarios per second (%zu fit of %zu)\n",
           (double)creps * (double)sc->N / t, fit / creps, sc->N);
    surety_check_eval_free(&ev);
    surety_check_report_free(&rep);
    free(cols);
    surety_plan_free(plan);
    surety_scenarios_free(sc);
    surety_model_free(model);
    return 0;
}
