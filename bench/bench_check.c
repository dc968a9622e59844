/* bench_check.c - speed of the out-of-sample check, in job-samples per
 * second including correlated sampling, with the sampling/checking split.
 * SPDX-License-Identifier: MIT */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "check.h"
#include "model.h"
#include "sample.h"
#include "surety.h"

static double cpu_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
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

int main(int argc, char **argv)
{
    const char *path = argc > 1 ? argv[1] : SURETY_SOURCE_ROOT "/instances/demo.json";
    size_t M = argc > 2 ? strtoul(argv[2], NULL, 10) : 1000000;
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
    surety_plan *plan = greedy_plan(model, sc);
    size_t n = model->n, accepted = 0;
    for (size_t j = 0; j < n; j++)
        accepted += surety_plan_get(plan, j) >= 0;

    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = M;
    opt.in_sample = 0;
    surety_check_report rep;
    double c0 = cpu_s();
    if (surety_check(model, plan, &opt, &rep, &err) != SURETY_OK) {
        fprintf(stderr, "error: %s\n", err.message);
        return 3;
    }
    double cpu = cpu_s() - c0;
    double wall = rep.sample_seconds + rep.check_seconds;
    double js = (double)M * (double)n;
    printf("model %s: %zu jobs (%zu accepted), %zu resources, %s hours\n",
           path, n, accepted, model->m, model->chol ? "correlated" : "independent");
    printf("fresh scenarios M = %zu, reliability %.5f [%.5f, %.5f]\n", M,
           rep.reliability, rep.lo, rep.hi);
    printf("sampling %.3f s, checking %.3f s (wall), %.3f s CPU in all\n",
           rep.sample_seconds, rep.check_seconds, cpu);
    printf("job-samples per second, sampling + checking: %.3g (wall), %.3g (CPU)\n",
           js / wall, js / cpu);
    printf("job-samples per second, checking alone: %.3g\n",
           js / rep.check_seconds);

    /* CPU split: the same M fresh scenarios drawn alone, in the checker's
     * block size, on this thread; the rest of the CPU time is checking */
    surety_sampler *smp = surety_sampler_new(model);
    size_t B = 16 * SURETY_SAMPLE_BLOCK;
    double *h = malloc(B * n * sizeof *h), *p = malloc(B * n * sizeof *p);
    double s0 = cpu_s();
    for (size_t done = 0; done < M; done += B)
        surety_sampler_fill(smp, SURETY_STREAM_CHECK, done,
                            M - done < B ? M - done : B, h, p);
    double scpu = cpu_s() - s0;
    printf("CPU split: sampling %.3f s, checking %.3f s; checking alone "
           "%.3g job-samples per second\n",
           scpu, cpu - scpu, js / (cpu - scpu));
    free(h);
    free(p);
    surety_sampler_free(smp);

    /* the early-exit count alone on the in-sample set, repeated */
    surety_plan_eval ev;
    surety_check_eval_init(&ev, model, plan, NULL);
    size_t reps = 2000, fit = 0;
    double t0 = cpu_s();
    for (size_t r = 0; r < reps; r++)
        fit += surety_check_count(&ev, sc->hours, sc->N);
    double t = cpu_s() - t0;
    printf("early-exit count: %.3g scenarios per second (%zu fit of %zu)\n",
           (double)reps * (double)sc->N / t, fit / reps, sc->N);
    surety_check_eval_free(&ev);
    surety_check_report_free(&rep);
    surety_plan_free(plan);
    surety_scenarios_free(sc);
    surety_model_free(model);
    return 0;
}
