/* bench_sample.c - sampling rate of the scenario sampler, in job-samples
 * per second, for a demo-like model of 30 jobs with and without
 * correlation, on one thread, timed in CPU seconds.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "alloc.h"
#include "dist.h"
#include "model.h"
#include "sample.h"

/* CPU seconds of this thread: the machine may be shared, and the rate of
 * interest is the work per core, not the wait for one. */
static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The demo's mix of hours laws: mostly truncated normals (a floor of half
 * an hour), some lognormal, triangular, uniform and empirical jobs, and a
 * clamped linear profit rule. Invented numbers. */
static surety_model *demo_model(size_t n, int correlated)
{
    static const double history[] = {4, 5, 5, 6, 7, 7, 8, 9, 11, 14};
    surety_model *m = surety_xcalloc(1, sizeof *m);
    m->name = surety_xstrdup("bench");
    m->risk = 0.05;
    m->N = 1000;
    m->seed = 7;
    m->n = n;
    m->m = 1;
    m->jobs = surety_xcalloc(n, sizeof *m->jobs);
    for (size_t j = 0; j < n; j++) {
        surety_job *job = &m->jobs[j];
        char id[16];
        snprintf(id, sizeof id, "J%02zu", j + 1);
        job->id = surety_xstrdup(id);
        job->has_hours = 1;
        surety_dist *d = &job->hours;
        d->lo = -INFINITY;
        d->hi = INFINITY;
        double mean = 6.0 + (double)(j % 7) * 2.0;
        switch (j % 6) {
        case 0:
        case 1:
        case 2:
            d->kind = SURETY_DIST_NORMAL;
            d->a = mean;
            d->b = 0.25 * mean;
            d->lo = 0.5;
            break;
        case 3:
            d->kind = SURETY_DIST_LOGNORMAL;
            d->a = mean;
            d->b = 0.3 * mean;
            break;
        case 4:
            d->kind = j % 12 == 4 ? SURETY_DIST_TRIANGULAR
                                  : SURETY_DIST_UNIFORM;
            d->a = 0.6 * mean;
            d->b = d->kind == SURETY_DIST_UNIFORM ? 1.5 * mean : 0.9 * mean;
            d->c = 1.5 * mean;
            break;
        default:
            d->kind = SURETY_DIST_EMPIRICAL;
            d->nvalues = sizeof history / sizeof *history;
            d->values = surety_xmalloc(d->nvalues, sizeof(double));
            memcpy(d->values, history, sizeof history);
            break;
        }
        job->profit.kind = SURETY_PROFIT_RULE;
        job->profit.rate = 85;
        job->profit.fixed = 100;
        job->profit.min = 600;
        job->profit.max = 1500;
    }
    if (correlated) {
        /* "all": 0.2 plus a few strongly linked pairs. */
        m->corr = surety_xmalloc(n * n, sizeof(double));
        for (size_t r = 0; r < n; r++)
            for (size_t s = 0; s < n; s++)
                m->corr[r * n + s] = r == s ? 1.0 : 0.2;
        for (size_t r = 0; r + 1 < n; r += 5)
            m->corr[r * n + r + 1] = m->corr[(r + 1) * n + r] = 0.6;
        surety_error err;
        if (surety_model_factor_correlation(m, 0, &err) != SURETY_OK) {
            fprintf(stderr, "bench_sample: %s\n", err.message);
            exit(3);
        }
    }
    return m;
}

static void free_model(surety_model *m)
{
    for (size_t j = 0; j < m->n; j++) {
        surety_xfree(m->jobs[j].id);
        surety_xfree(m->jobs[j].hours.values);
    }
    surety_xfree(m->jobs);
    surety_xfree(m->corr);
    surety_xfree(m->chol);
    surety_xfree(m->name);
    surety_xfree(m);
}

/* Draws N scenarios through the block sampler in windows of `chunk` rows
 * (the checker's way) and once more as one scenario set; prints the best
 * rate of `reps` runs of each (the least disturbed by other work on the
 * machine). A checksum keeps the work from being optimised away. */
static void run(const char *label, surety_model *m, size_t N, size_t chunk,
                int reps)
{
    size_t n = m->n;
    double *h = surety_xmalloc(chunk * n, sizeof(double));
    double *p = surety_xmalloc(chunk * n, sizeof(double));
    surety_sampler *smp = surety_sampler_new(m);
    if (!h || !p || !smp) {
        fprintf(stderr, "bench_sample: out of memory\n");
        exit(3);
    }
    double sum = 0, best_w = INFINITY, best_s = INFINITY;
    for (int rep = 0; rep < reps; rep++) {
        double t0 = now_s();
        for (size_t l = 0; l < N; l += chunk) {
            size_t c = N - l < chunk ? N - l : chunk;
            surety_sampler_fill(smp, SURETY_STREAM_CHECK, l, c, h, p);
            sum += h[0] + p[c * n - 1];
        }
        double t1 = now_s();
        best_w = fmin(best_w, t1 - t0);

        surety_scenarios *sc;
        surety_error err;
        double t2 = now_s();
        if (surety_sample(m, SURETY_STREAM_SOLVE, 0, N, &sc, &err) !=
            SURETY_OK) {
            fprintf(stderr, "bench_sample: %s\n", err.message);
            exit(3);
        }
        double t3 = now_s();
        best_s = fmin(best_s, t3 - t2);
        sum += sc->hours[N * n - 1];
        surety_scenarios_free(sc);
    }
    surety_sampler_free(smp);
    surety_xfree(h);
    surety_xfree(p);

    double js = (double)N * (double)n;
    printf("%-22s N=%zu n=%zu  windows of %zu: %.3f s, %.3g job-samples/s"
           "  | one set: %.3f s, %.3g job-samples/s  (checksum %.6g)\n",
           label, N, n, chunk, best_w, js / best_w, best_s, js / best_s,
           sum);
}

/* bench_sample [N [reps [model.json]]]: the built-in mix, and when a model
 * file is given (e.g. instances/demo.json) that model as it stands and with
 * its correlations removed. */
int main(int argc, char **argv)
{
    size_t N = argc > 1 ? strtoull(argv[1], NULL, 10) : 1000000;
    int reps = argc > 2 ? atoi(argv[2]) : 3;
    size_t n = 30;
    surety_model *ind = demo_model(n, 0);
    surety_model *cor = demo_model(n, 1);
    run("independent", ind, N, 4096, reps);
    run("correlated", cor, N, 4096, reps);
    run("correlated, odd window", cor, N, 1000, reps);
    free_model(ind);
    free_model(cor);
    if (argc > 3) {
        surety_model *m;
        surety_error err;
        if (surety_model_read(argv[3], &m, &err) != SURETY_OK) {
            fprintf(stderr, "%s: %s\n", argv[3], err.message);
            return 2;
        }
        run("model file", m, N, 4096, reps);
        surety_xfree(m->chol);
        surety_xfree(m->corr);
        m->chol = m->corr = NULL;
        run("model file, no corr.", m, N, 4096, reps);
        surety_model_free(m);
    }
    return 0;
}
