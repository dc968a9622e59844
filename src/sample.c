/* sample.c - scenario sets: drawing from the model's distributions and
 * Gaussian copula, block by block; copying a scenario table; CSV output.
 * SPDX-License-Identifier: MIT */
#include "sample.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "alloc.h"
#include "dist.h"
#include "fileio.h"
#include "hash.h"
#include "lp/dense.h"
#include "model.h"
#include "rng.h"

#define B SURETY_SAMPLE_BLOCK

/* Layout of a scenario's stream: scenario l of stream s seeds its own
 * generator from (seed, s, l) and takes one 64-bit output per job, in job
 * order: a standard normal (ziggurat) for a job in the copula or with an
 * untruncated normal or lognormal law, else a uniform. The block of copula
 * normals is multiplied by the Cholesky factor (Gaussian copula,
 * METHODS.md s.9.2), and each job's marginal maps its value to hours by
 * inverse CDF. A job outside the copula therefore keeps its values when
 * other jobs' laws or correlations change. */
struct surety_sampler {
    const surety_model *model;
    size_t n;
    uint64_t seed;
    surety_marginal *marg;     /* n prepared marginals */
    unsigned char *in_copula;  /* n flags: correlated with some other job */
    unsigned char *normal;     /* n flags: draws a normal, not a uniform */
    unsigned char *need;       /* n flags: job j is among cols */
    size_t *cols;              /* ncols jobs ascending whose hours and
                                  profits fills write (all n by default) */
    size_t ncols;
    double *L;                 /* n*n Cholesky factor (copy), or NULL */
    double *u;                 /* B*n: draws of jobs outside the copula */
    double *z;                 /* B*n: correlated normals of copula jobs,
                                  0 in the other columns */
    void *mem;                 /* allocation behind L, u, z */
    int cached;                /* u and z hold block cache_block of ... */
    uint64_t cache_stream;     /* ... stream cache_stream */
    size_t cache_block;
};

/* ------------------------------------------------------------------ */
/* Scenario sets                                                       */
/* ------------------------------------------------------------------ */

surety_code surety_scenarios_alloc(size_t N, size_t n, surety_scenarios **out,
                                   surety_error *err)
{
    *out = NULL;
    /* Two arrays (hours, profit) of N*n doubles. */
    double want = (double)N * (double)n * 2.0 * sizeof(double);
    size_t phys = surety_physical_memory();
    int overflow = surety_mul_overflows(N, n) ||
                   surety_mul_overflows(N * n, 2 * sizeof(double));
    if (overflow || (phys && N * n * 2 * sizeof(double) > phys)) {
        surety_error_set(err, NULL, 0, 0, "scenarios",
                         "%zu scenarios of %zu jobs would need %.0f bytes "
                         "(%.1f GiB) for hours and profits, more than the "
                         "%zu bytes of physical memory",
                         N, n, want, want / 1073741824.0, phys);
        return SURETY_EINPUT;
    }
    surety_scenarios *sc = surety_xcalloc(1, sizeof *sc);
    if (sc) {
        sc->hours = surety_xmalloc(N * n, sizeof(double));
        sc->profit = surety_xmalloc(N * n, sizeof(double));
    }
    if (!sc || !sc->hours || !sc->profit) {
        surety_scenarios_free(sc);
        surety_error_set(err, NULL, 0, 0, "scenarios",
                         "out of memory for %zu scenarios of %zu jobs "
                         "(%.0f bytes)", N, n, want);
        return SURETY_EINTERNAL;
    }
    sc->N = N;
    sc->n = n;
    *out = sc;
    return SURETY_OK;
}

void surety_scenarios_free(surety_scenarios *sc)
{
    if (!sc)
        return;
    surety_xfree(sc->hours);
    surety_xfree(sc->profit);
    surety_xfree(sc);
}

size_t surety_scenarios_count(const surety_scenarios *sc) { return sc->N; }
size_t surety_scenarios_jobs(const surety_scenarios *sc) { return sc->n; }
const double *surety_scenarios_hours(const surety_scenarios *sc)
{
    return sc->hours;
}
const double *surety_scenarios_profit(const surety_scenarios *sc)
{
    return sc->profit;
}

/* ------------------------------------------------------------------ */
/* Sampler                                                             */
/* ------------------------------------------------------------------ */

/* Whether the correlation matrix couples any two jobs. */
static int corr_couples(const surety_model *model)
{
    if (!model->corr)
        return 0;
    for (size_t r = 0; r < model->n; r++)
        for (size_t s = 0; s < r; s++)
            if (model->corr[r * model->n + s] != 0.0)
                return 1;
    return 0;
}

surety_code surety_sampler_check(const surety_model *model, surety_error *err)
{
    if (!model) {
        surety_error_set(err, NULL, 0, 0, NULL, "no model given");
        return SURETY_EUSAGE;
    }
    for (size_t j = 0; j < model->n; j++) {
        const surety_job *job = &model->jobs[j];
        char field[64];
        snprintf(field, sizeof field, "jobs[%zu].hours", j);
        if (!job->has_hours) {
            surety_error_set(err, model->path, 0, 0, field,
                             "job '%s' has no hours distribution, so only "
                             "the model's scenario table can give its "
                             "scenarios", job->id);
            return SURETY_EINPUT;
        }
        surety_marginal mg;
        surety_code rc = surety_dist_prepare(&mg, &job->hours, job->id, field,
                                             err);
        if (rc != SURETY_OK) {
            if (err)
                snprintf(err->file, sizeof err->file, "%s",
                         model->path ? model->path : "");
            return rc;
        }
    }
    if (!model->chol && corr_couples(model)) {
        surety_error_set(err, NULL, 0, 0, "correlation",
                         "the correlation matrix has not been factored "
                         "(surety_model_factor_correlation)");
        return SURETY_EUSAGE;
    }
    return SURETY_OK;
}

/* Doubles rounded up to a whole 64-byte line. */
static size_t line_round(size_t count)
{
    return (count + 7) & ~(size_t)7;
}

int surety_sampler_restrict(surety_sampler *smp, const size_t *cols,
                            size_t ncols)
{
    size_t n = smp->n;
    if (!cols) {
        for (size_t j = 0; j < n; j++) {
            smp->cols[j] = j;
            smp->need[j] = 1;
        }
        smp->ncols = n;
        return 0;
    }
    if (ncols > n)
        return -1;
    for (size_t c = 0; c < ncols; c++)
        if (cols[c] >= n || (c > 0 && cols[c] <= cols[c - 1]))
            return -1;
    memset(smp->need, 0, n);
    for (size_t c = 0; c < ncols; c++) {
        smp->cols[c] = cols[c];
        smp->need[cols[c]] = 1;
    }
    smp->ncols = ncols;
    return 0;
}

surety_sampler *surety_sampler_new(const surety_model *model)
{
    if (surety_sampler_check(model, NULL) != SURETY_OK)
        return NULL;
    size_t n = model->n;
    surety_sampler *smp = surety_xcalloc(1, sizeof *smp);
    if (!smp)
        return NULL;
    smp->model = model;
    smp->n = n;
    smp->seed = model->seed;
    smp->marg = surety_xcalloc(n, sizeof *smp->marg);
    smp->in_copula = surety_xcalloc(n, 1);
    smp->normal = surety_xcalloc(n, 1);
    smp->need = surety_xmalloc(n ? n : 1, 1);
    smp->cols = surety_xmalloc(n ? n : 1, sizeof *smp->cols);
    /* One block holds L, u and z, each 64-byte aligned: the product's
     * arithmetic must not depend on where malloc happened to put them. */
    size_t nL = model->chol ? line_round(n * n) : 0;
    size_t nb = line_round(B * n);
    size_t total = nL + 2 * nb;
    if (!smp->marg || !smp->in_copula || !smp->normal || !smp->need ||
        !smp->cols || surety_mul_overflows(B, n) ||
        !(smp->mem = surety_xmalloc(total + 8, sizeof(double)))) {
        surety_sampler_free(smp);
        return NULL;
    }
    double *base = (double *)(((uintptr_t)smp->mem + 63) & ~(uintptr_t)63);
    smp->u = base + nL;
    smp->z = base + nL + nb;
    for (size_t j = 0; j < n; j++)
        surety_dist_prepare(&smp->marg[j], &model->jobs[j].hours, NULL, NULL,
                            NULL);
    if (model->chol) {
        smp->L = base;
        memcpy(smp->L, model->chol, n * n * sizeof(double));
        /* A job is in the copula when its row or column of L has an
         * off-diagonal entry; otherwise its value is independent of the
         * others and a uniform serves it directly, with no Phi round
         * trip. */
        for (size_t r = 0; r < n; r++)
            for (size_t s = 0; s < r; s++)
                if (smp->L[r * n + s] != 0.0)
                    smp->in_copula[r] = smp->in_copula[s] = 1;
    }
    for (size_t j = 0; j < n; j++)
        smp->normal[j] = smp->in_copula[j] || smp->marg[j].direct;
    surety_sampler_restrict(smp, NULL, 0);
    surety_dense_single_thread();
    return smp;
}

void surety_sampler_free(surety_sampler *smp)
{
    if (!smp)
        return;
    surety_xfree(smp->marg);
    surety_xfree(smp->in_copula);
    surety_xfree(smp->normal);
    surety_xfree(smp->need);
    surety_xfree(smp->cols);
    surety_xfree(smp->mem);
    surety_xfree(smp);
}

/* Key of job j's auxiliary generator, combined with the scenario's hash:
 * an odd multiplier spreads consecutive jobs over all 64 bits. */
static uint64_t aux_key(size_t j)
{
    return ((uint64_t)j + 1) * 0xd1342543de82ef95ULL;
}

/* Draws of scenarios l0 .. l0+rows-1, one row per scenario: copula
 * normals into z (when z is given; 0 in the other columns), every other
 * needed job's normal or uniform into u. A job outside the copula and
 * outside cols still takes its one output of the generator, unconverted. */
static void draw_rows(surety_sampler *smp, uint64_t stream, size_t l0,
                      size_t rows, double *z)
{
    size_t n = smp->n;
    const unsigned char *cop = smp->in_copula, *nor = smp->normal;
    const unsigned char *need = smp->need;
    /* The rows' seeds first: their hash and SplitMix chains are
     * independent, so the CPU overlaps them instead of waiting for each
     * at the start of its row. */
    uint64_t hs[B];
    surety_rng gen[B];
    for (size_t r = 0; r < rows; r++) {
        hs[r] = surety_hash_stream(smp->seed, stream, (uint64_t)(l0 + r));
        gen[r] = surety_rng_from(hs[r]);
    }
    for (size_t r = 0; r < rows; r++) {
        uint64_t h = hs[r];
        surety_rng rng = gen[r];
        double *urow = smp->u + r * n;
        double *zrow = z ? z + r * n : NULL;
        for (size_t j = 0; j < n; j++) {
            if (!cop[j] && !need[j]) {
                surety_rng_next(&rng);
                if (zrow)
                    zrow[j] = 0.0;
                continue;
            }
            /* One output of the scenario's generator per job; a normal's
             * rare extra numbers come from a generator keyed by (scenario,
             * job), so no job's numbers depend on another job's law. */
            double v = nor[j] ? surety_rng_normal_keyed(&rng, h ^ aux_key(j))
                              : surety_rng_uniform(&rng);
            if (cop[j]) {
                zrow[j] = v;
            } else {
                urow[j] = v;
                if (zrow)
                    zrow[j] = 0.0;
            }
        }
    }
}

/* Block b (scenarios b*B .. b*B+B-1) of the stream: uniforms in u and
 * correlated normals in z. Always the full block, so every scenario sits at
 * the same row of the same B x n product whatever window asked for it. */
static void ensure_block(surety_sampler *smp, uint64_t stream, size_t b)
{
    if (smp->cached && smp->cache_stream == stream && smp->cache_block == b)
        return;
    draw_rows(smp, stream, b * B, B, smp->z);
    surety_dense_lower_apply(smp->z, B, smp->n, smp->L);
    smp->cached = 1;
    smp->cache_stream = stream;
    smp->cache_block = b;
}

/* Rows r0 .. r0+rows-1 of the current u/z block to hours and profits,
 * in the columns of the jobs in cols only, one column at a time while it
 * is in cache. Each value is computed by the same operations whichever
 * other columns are wanted. */
static void transform(const surety_sampler *smp, size_t r0, size_t rows,
                      double *hours, double *profit)
{
    size_t n = smp->n, nc = smp->ncols;
    const size_t *cols = smp->cols;
    for (size_t c = 0; c < nc; c++) {
        size_t j = cols[c];
        double *h = hours + j;
        if (smp->in_copula[j])
            surety_dist_apply_normal(&smp->marg[j], smp->z + r0 * n + j, n,
                                     rows, h, n);
        else if (smp->normal[j])
            surety_dist_apply_normal(&smp->marg[j], smp->u + r0 * n + j, n,
                                     rows, h, n);
        else
            surety_dist_apply_uniform(&smp->marg[j], smp->u + r0 * n + j, n,
                                      rows, h, n);
        /* A negative duration is impossible: hours are clamped at 0 (this
         * also turns -0.0 into +0.0). Truncation (min/max) is the proper
         * tool for shaping the lower tail; the clamp only guards wide
         * normals. */
        for (size_t r = 0; r < rows; r++)
            if (h[r * n] <= 0.0)
                h[r * n] = 0.0;
        if (!profit)
            continue;
        const surety_profit *rule = &smp->model->jobs[j].profit;
        for (size_t r = 0; r < rows; r++)
            profit[r * n + j] = surety_profit_of(rule, h[r * n]);
    }
}

void surety_sampler_fill(surety_sampler *smp, uint64_t stream, size_t first,
                         size_t count, double *hours, double *profit)
{
    size_t n = smp->n;
    if (!smp->L) {
        /* Independent jobs: each scenario stands alone, no alignment. */
        for (size_t done = 0; done < count;) {
            size_t rows = count - done < B ? count - done : B;
            draw_rows(smp, stream, first + done, rows, NULL);
            transform(smp, 0, rows, hours + done * n,
                      profit ? profit + done * n : NULL);
            done += rows;
        }
        smp->cached = 0;
        return;
    }
    size_t end = first + count;
    for (size_t l = first; l < end;) {
        size_t b = l / B;
        size_t r0 = l - b * B;
        size_t r1 = end - b * B < B ? end - b * B : B;
        ensure_block(smp, stream, b);
        transform(smp, r0, r1 - r0, hours + (l - first) * n,
                  profit ? profit + (l - first) * n : NULL);
        l = b * B + r1;
    }
}

/* ------------------------------------------------------------------ */
/* Drawing whole sets                                                  */
/* ------------------------------------------------------------------ */

surety_code surety_sample(const surety_model *model, uint64_t stream,
                          size_t first, size_t N, surety_scenarios **out,
                          surety_error *err)
{
    if (!out) {
        surety_error_set(err, NULL, 0, 0, NULL, "no output pointer given");
        return SURETY_EUSAGE;
    }
    *out = NULL;
    surety_code rc = surety_sampler_check(model, err);
    if (rc != SURETY_OK)
        return rc;
    if (N == 0 || first > SIZE_MAX - N) {
        surety_error_set(err, NULL, 0, 0, "scenarios",
                         N == 0 ? "at least one scenario must be drawn"
                                : "the scenario range overflows");
        return SURETY_EUSAGE;
    }
    surety_scenarios *sc;
    rc = surety_scenarios_alloc(N, model->n, &sc, err);
    if (rc != SURETY_OK)
        return rc;
    surety_sampler *smp = surety_sampler_new(model);
    if (!smp) {
        surety_scenarios_free(sc);
        surety_error_set(err, NULL, 0, 0, NULL,
                         "out of memory for the sampler");
        return SURETY_EINTERNAL;
    }
    surety_sampler_fill(smp, stream, first, N, sc->hours, sc->profit);
    surety_sampler_free(smp);
    *out = sc;
    return SURETY_OK;
}

surety_code surety_model_sample(const surety_model *model,
                                surety_scenarios **out, surety_error *err)
{
    if (!model || !out) {
        surety_error_set(err, NULL, 0, 0, NULL, "no model or output given");
        return SURETY_EUSAGE;
    }
    *out = NULL;
    const surety_table *t = model->table;
    if (!t)
        return surety_sample(model, SURETY_STREAM_SOLVE, 0, model->N, out,
                             err);
    size_t n = model->n;
    surety_scenarios *sc;
    surety_code rc = surety_scenarios_alloc(t->N, n, &sc, err);
    if (rc != SURETY_OK)
        return rc;
    memcpy(sc->hours, t->hours, t->N * n * sizeof(double));
    /* Profit from the table where it has a column, else the job's rule
     * applied to the table's hours. */
    for (size_t l = 0; l < t->N; l++)
        for (size_t j = 0; j < n; j++) {
            double p = t->profit ? t->profit[l * n + j] : NAN;
            sc->profit[l * n + j] =
                isnan(p) ? surety_profit_of(&model->jobs[j].profit,
                                            sc->hours[l * n + j])
                         : p;
        }
    *out = sc;
    return SURETY_OK;
}

/* ------------------------------------------------------------------ */
/* CSV output                                                          */
/* ------------------------------------------------------------------ */

/* A header cell, quoted (RFC 4180) when the id holds a comma, quote or
 * line break. */
static void put_cell(FILE *fp, const char *id, const char *suffix)
{
    if (!strpbrk(id, ",\"\r\n")) {
        fprintf(fp, "%s%s", id, suffix);
        return;
    }
    fputc('"', fp);
    for (const char *c = id; *c; c++) {
        if (*c == '"')
            fputc('"', fp);
        fputc(*c, fp);
    }
    fprintf(fp, "%s\"", suffix);
}

surety_code surety_scenarios_write_csv(const surety_model *model,
                                       const surety_scenarios *sc,
                                       const char *path, surety_error *err)
{
    if (!model || !sc || !path || sc->n != model->n) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "the scenario set does not belong to the model");
        return SURETY_EUSAGE;
    }
    surety_outfile f;
    surety_code rc = surety_outfile_open(&f, path, err);
    if (rc != SURETY_OK)
        return rc;
    size_t n = sc->n;
    for (size_t j = 0; j < n; j++) {
        if (j)
            fputc(',', f.fp);
        put_cell(f.fp, model->jobs[j].id, ".hours");
        fputc(',', f.fp);
        put_cell(f.fp, model->jobs[j].id, ".profit");
    }
    fputc('\n', f.fp);
    /* %.17g: 17 significant digits identify every double, so the table
     * reads back bit for bit. */
    for (size_t l = 0; l < sc->N; l++) {
        const double *h = sc->hours + l * n, *p = sc->profit + l * n;
        for (size_t j = 0; j < n; j++)
            fprintf(f.fp, j ? ",%.17g,%.17g" : "%.17g,%.17g", h[j], p[j]);
        fputc('\n', f.fp);
    }
    if (ferror(f.fp)) {
        surety_outfile_abort(&f);
        surety_error_set(err, path, 0, 0, NULL,
                         "could not write the scenario table");
        return SURETY_EINTERNAL;
    }
    return surety_outfile_commit(&f, err);
}
