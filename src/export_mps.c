/* export_mps.c - the sample approximation as a mixed-integer program in
 * free MPS, with plain or order-statistic (quantile) big-M coefficients.
 * SPDX-License-Identifier: MIT */
#include <ctype.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "bigm.h"
#include "fileio.h"
#include "model.h"
#include "sample.h"

/* What becomes of capacity row (l, i). */
enum {
    ROW_DROP = 0, /* can never bind: not written */
    ROW_HARD = 1, /* written without indicator: load <= capacity */
    ROW_BIGM = 2, /* load - M z <= capacity */
};

typedef struct export_ctx {
    const surety_model *model;
    const surety_scenarios *sc;
    size_t n, m, N, k;
    double *bigm;        /* N*m, M_li at [l*m + i] */
    unsigned char *row;  /* N*m, ROW_* at [l*m + i] */
    size_t *jobs;        /* scratch: jobs allowed in a resource, <= n */
} export_ctx;

/* Plain big-M: the load with every allowed job in the resource, minus the
 * capacity. Computed with the same product form as surety_plan_holds. */
static void plain_bigm(export_ctx *c)
{
    const surety_model *model = c->model;
    for (size_t l = 0; l < c->N; l++) {
        const double *w = c->sc->hours + l * c->n;
        for (size_t i = 0; i < c->m; i++) {
            double sum = 0;
            for (size_t j = 0; j < c->n; j++)
                if (model->jobs[j].allowed[i])
                    sum += w[j];
            double M = model->resources[i].hours_factor * sum -
                       model->resources[i].capacity;
            c->bigm[l * c->m + i] = M;
            c->row[l * c->m + i] = M > 0 ? ROW_BIGM : ROW_DROP;
        }
    }
}

/* Quantile big-M of every row of resource i (bigm.c). */
static int quantile_bigm(export_ctx *c, size_t i)
{
    const surety_model *model = c->model;
    size_t nj = 0;
    for (size_t j = 0; j < c->n; j++)
        if (model->jobs[j].allowed[i])
            c->jobs[nj++] = j;
    surety_bigm_res r;
    if (surety_bigm_init(&r, c->sc->hours, c->n, c->jobs, nj, c->N, NULL,
                         model->resources[i].hours_factor,
                         model->resources[i].capacity, c->k) != 0)
        return -1;
    for (size_t l = 0; l < c->N; l++) {
        double plain = surety_bigm_plain(&r, l);
        double M = surety_bigm_row(&r, l);
        c->bigm[l * c->m + i] = M;
        if (plain <= 0)
            c->row[l * c->m + i] = ROW_DROP;
        else
            c->row[l * c->m + i] = M > 0 ? ROW_BIGM : ROW_HARD;
    }
    surety_bigm_free(&r);
    return 0;
}

static void free_ctx(export_ctx *c)
{
    surety_xfree(c->bigm);
    surety_xfree(c->row);
    surety_xfree(c->jobs);
}

/* The model name with anything but letters, digits, '_', '-', '.' replaced,
 * so the NAME line is a single free-MPS token. */
static void write_name(FILE *fp, const char *name)
{
    if (!name || !*name)
        name = "surety";
    for (const char *p = name; *p; p++) {
        unsigned char ch = (unsigned char)*p;
        fputc(isalnum(ch) || ch == '_' || ch == '-' || ch == '.' ? ch : '_',
              fp);
    }
}

static void write_mps(const export_ctx *c, surety_bigm bigm, FILE *fp)
{
    const surety_model *model = c->model;
    const surety_scenarios *sc = c->sc;
    size_t n = c->n, m = c->m, N = c->N;
    int separate = model->constraint == SURETY_SEPARATE;

    /* per-job mean profit over the N scenarios, summed in scenario order
     * and divided by N exactly as surety_plan_profit does */
    fprintf(fp, "* sample approximation of a %s chance constraint\n",
            separate ? "separate" : "joint");
    fprintf(fp, "* N = %zu scenarios, allowance k = %zu, %s big-M\n", N,
            c->k, bigm == SURETY_BIGM_PLAIN ? "plain" : "strengthened");
    fprintf(fp, "* objective: minimise minus the mean profit\n");
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            if (model->jobs[j].allowed[i])
                fprintf(fp, "* x_%zu_%zu = job %s in resource %s\n", j, i,
                        model->jobs[j].id, model->resources[i].id);
    fprintf(fp, "NAME ");
    write_name(fp, model->name);
    fprintf(fp, "\nROWS\n N obj\n");
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] != ROW_DROP)
                fprintf(fp, " L cap_%zu_%zu\n", l, i);
    /* allowance rows, only when some indicator exists */
    size_t *zcount = surety_xcalloc(m + 1, sizeof *zcount);
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] == ROW_BIGM && zcount)
                zcount[separate ? i : 0]++;
    for (size_t i = 0; i < (separate ? m : 1); i++)
        if (!zcount || zcount[i]) {
            if (separate)
                fprintf(fp, " L allow_%zu\n", i);
            else
                fprintf(fp, " L allow\n");
        }
    for (size_t j = 0; j < n; j++) {
        int any = 0;
        for (size_t i = 0; i < m; i++)
            any |= model->jobs[j].allowed[i] != 0;
        if (any || model->jobs[j].required)
            fprintf(fp, " %c assign_%zu\n", model->jobs[j].required ? 'E' : 'L',
                    j);
    }

    fprintf(fp, "COLUMNS\n");
    fprintf(fp, "    MARKER 'MARKER' 'INTORG'\n");
    for (size_t j = 0; j < n; j++) {
        double p = 0;
        for (size_t l = 0; l < N; l++)
            p += sc->profit[l * n + j];
        p /= (double)N;
        for (size_t i = 0; i < m; i++) {
            if (!model->jobs[j].allowed[i])
                continue;
            double f = model->resources[i].hours_factor;
            if (p != 0)
                fprintf(fp, "    x_%zu_%zu obj %.17g\n", j, i, -p);
            for (size_t l = 0; l < N; l++) {
                double w = f * sc->hours[l * n + j];
                if (c->row[l * m + i] != ROW_DROP && w != 0)
                    fprintf(fp, "    x_%zu_%zu cap_%zu_%zu %.17g\n", j, i, l,
                            i, w);
            }
            fprintf(fp, "    x_%zu_%zu assign_%zu 1\n", j, i, j);
        }
    }
    for (size_t l = 0; l < N; l++) {
        if (separate) {
            for (size_t i = 0; i < m; i++)
                if (c->row[l * m + i] == ROW_BIGM) {
                    fprintf(fp, "    z_%zu_%zu cap_%zu_%zu %.17g\n", l, i, l, i,
                            -c->bigm[l * m + i]);
                    fprintf(fp, "    z_%zu_%zu allow_%zu 1\n", l, i, i);
                }
            continue;
        }
        int any = 0;
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] == ROW_BIGM) {
                fprintf(fp, "    z_%zu cap_%zu_%zu %.17g\n", l, l, i,
                        -c->bigm[l * m + i]);
                any = 1;
            }
        if (any)
            fprintf(fp, "    z_%zu allow 1\n", l);
    }
    fprintf(fp, "    MARKER 'MARKER' 'INTEND'\n");

    fprintf(fp, "RHS\n");
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] != ROW_DROP)
                fprintf(fp, "    rhs cap_%zu_%zu %.17g\n", l, i,
                        model->resources[i].capacity);
    for (size_t i = 0; i < (separate ? m : 1); i++)
        if ((!zcount || zcount[i]) && c->k > 0) {
            if (separate)
                fprintf(fp, "    rhs allow_%zu %zu\n", i, c->k);
            else
                fprintf(fp, "    rhs allow %zu\n", c->k);
        }
    for (size_t j = 0; j < n; j++)
        fprintf(fp, "    rhs assign_%zu 1\n", j);

    fprintf(fp, "BOUNDS\n");
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            if (model->jobs[j].allowed[i])
                fprintf(fp, " UP bnd x_%zu_%zu 1\n", j, i);
    for (size_t l = 0; l < N; l++) {
        if (separate) {
            for (size_t i = 0; i < m; i++)
                if (c->row[l * m + i] == ROW_BIGM)
                    fprintf(fp, " UP bnd z_%zu_%zu 1\n", l, i);
            continue;
        }
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] == ROW_BIGM) {
                fprintf(fp, " UP bnd z_%zu 1\n", l);
                break;
            }
    }
    fprintf(fp, "ENDATA\n");
    surety_xfree(zcount);
}

surety_code surety_export_mps(const surety_model *model,
                              const surety_scenarios *sc, surety_bigm bigm,
                              const char *path, surety_error *err)
{
    if (!model || !sc || !path) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "export: model, scenarios and path are required");
        return SURETY_EUSAGE;
    }
    if (sc->n != model->n) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "export: the scenarios have %zu jobs, the model %zu",
                         sc->n, model->n);
        return SURETY_EUSAGE;
    }
    if (sc->N == 0) {
        surety_error_set(err, NULL, 0, 0, NULL, "export: no scenarios");
        return SURETY_EUSAGE;
    }
    if (bigm != SURETY_BIGM_PLAIN && bigm != SURETY_BIGM_STRENGTHENED) {
        surety_error_set(err, NULL, 0, 0, NULL, "export: unknown big-M kind");
        return SURETY_EUSAGE;
    }

    export_ctx c;
    memset(&c, 0, sizeof c);
    c.model = model;
    c.sc = sc;
    c.n = model->n;
    c.m = model->m;
    c.N = sc->N;
    c.k = surety_allowance(model->risk, sc->N);
    c.bigm = surety_xmalloc(c.N, (c.m ? c.m : 1) * sizeof *c.bigm);
    c.row = surety_xmalloc(c.N, c.m ? c.m : 1);
    int bad = !c.bigm || !c.row;
    if (!bad && bigm == SURETY_BIGM_STRENGTHENED) {
        c.jobs = surety_xmalloc(c.n ? c.n : 1, sizeof *c.jobs);
        bad = !c.jobs;
        for (size_t i = 0; i < c.m && !bad; i++)
            bad = quantile_bigm(&c, i) != 0;
    } else if (!bad) {
        plain_bigm(&c);
    }
    if (bad) {
        free_ctx(&c);
        surety_error_set(err, path, 0, 0, NULL,
                         "export: out of memory for %zu scenarios", sc->N);
        return SURETY_EINTERNAL;
    }

    surety_outfile out;
    surety_code rc = surety_outfile_open(&out, path, err);
    if (rc != SURETY_OK) {
        free_ctx(&c);
        return rc;
    }
    write_mps(&c, bigm, out.fp);
    free_ctx(&c);
    return surety_outfile_commit(&out, err);
}
