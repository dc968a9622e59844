/* test_model.c - the model file, scenario table and plan file readers:
 * every field, every error path (tests/bad/), the shipped instances.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <dirent.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "model.h"
#include "plan.h"
#include "surety.h"

#define SRC SURETY_SOURCE_ROOT

static char *slurp(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return NULL;
    fseek(f, 0, SEEK_END);
    long len = ftell(f);
    fseek(f, 0, SEEK_SET);
    char *buf = malloc((size_t)len + 1);
    size_t got = fread(buf, 1, (size_t)len, f);
    buf[got] = '\0';
    fclose(f);
    return buf;
}

static int ends_with(const char *s, const char *tail)
{
    size_t a = strlen(s), b = strlen(tail);
    return a >= b && strcmp(s + a - b, tail) == 0;
}

/* ------------------------------------------------------------------ */
/* The bad-input corpus                                                */
/* ------------------------------------------------------------------ */

/* Each tests/bad/<kind>/<case>.json has a <case>.expect written by hand:
 *   message: <fragment the message must contain>
 *   field: <exact field path, may be empty>
 *   file: <the error's file ends with this> (default: the .json itself)
 *   at: <text that occurs once in that file; '|' marks the point>
 *   line: / column: <explicit position, for syntax errors: jansson points
 *                    at the last character of the offending token>
 * The expected position comes from the anchor text, found by a plain
 * substring search here, never from the reader's own locator. */
typedef struct expect {
    char message[512], field[256], file[256], at[256];
    int line, column, has_line, has_column;
} expect;

static int read_expect(const char *path, expect *e)
{
    memset(e, 0, sizeof *e);
    FILE *f = fopen(path, "r");
    if (!f)
        return -1;
    char buf[1024];
    while (fgets(buf, sizeof buf, f)) {
        buf[strcspn(buf, "\n")] = '\0';
        char *v = strchr(buf, ':');
        if (!v)
            continue;
        *v++ = '\0';
        if (*v == ' ')
            v++;
        if (!strcmp(buf, "message"))
            snprintf(e->message, sizeof e->message, "%s", v);
        else if (!strcmp(buf, "field"))
            snprintf(e->field, sizeof e->field, "%s", v);
        else if (!strcmp(buf, "file"))
            snprintf(e->file, sizeof e->file, "%s", v);
        else if (!strcmp(buf, "at"))
            snprintf(e->at, sizeof e->at, "%s", v);
        else if (!strcmp(buf, "line"))
            e->line = atoi(v), e->has_line = 1;
        else if (!strcmp(buf, "column"))
            e->column = atoi(v), e->has_column = 1;
    }
    fclose(f);
    return 0;
}

/* Line and column (characters, 1-based) of the anchor's marked point;
 * -1 when the anchor is missing or not unique. */
static int anchor_position(const char *text, const char *at, int *line,
                           int *col)
{
    char needle[256];
    size_t k = 0, mark = 0;
    for (const char *p = at; *p && k + 1 < sizeof needle; p++) {
        if (*p == '|')
            mark = k;
        else
            needle[k++] = *p;
    }
    needle[k] = '\0';
    const char *hit = strstr(text, needle);
    if (!hit || strstr(hit + 1, needle))
        return -1;
    const char *p = hit + mark;
    *line = 1;
    *col = 1;
    for (const char *q = text; q < p; q++) {
        if (*q == '\n') {
            (*line)++;
            *col = 1;
        } else if (((unsigned char)*q & 0xC0) != 0x80) {
            (*col)++;
        }
    }
    return 0;
}

static int cmp_str(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

/* Runs every case of a corpus folder through `run`; returns the count. */
static size_t run_corpus(const char *kind,
                         surety_code (*run)(const char *path,
                                            surety_error *err))
{
    char dir[1024];
    snprintf(dir, sizeof dir, "%s/tests/bad/%s", SRC, kind);
    DIR *d = opendir(dir);
    cr_assert_not_null(d, "cannot open %s", dir);
    char *names[512];
    size_t count = 0;
    struct dirent *de;
    while ((de = readdir(d)) && count < 512)
        if (ends_with(de->d_name, ".json"))
            names[count++] = strdup(de->d_name);
    closedir(d);
    qsort(names, count, sizeof *names, cmp_str);
    for (size_t c = 0; c < count; c++) {
        char path[1200], epath[1200];
        snprintf(path, sizeof path, "%s/%s", dir, names[c]);
        snprintf(epath, sizeof epath, "%s", path);
        strcpy(epath + strlen(epath) - 5, ".expect");
        expect e;
        cr_assert_eq(read_expect(epath, &e), 0, "%s: no .expect", names[c]);
        surety_error err;
        surety_code code = run(path, &err);
        cr_expect_eq(code, SURETY_EINPUT, "%s: code %d (%s)", names[c], code,
                     err.message);
        cr_expect(strstr(err.message, e.message) != NULL,
                  "%s: message '%s' lacks '%s'", names[c], err.message,
                  e.message);
        cr_expect_str_eq(err.field, e.field, "%s: field '%s', expected '%s'",
                         names[c], err.field, e.field);
        const char *want_file = e.file[0] ? e.file : names[c];
        cr_expect(ends_with(err.file, want_file), "%s: file '%s'", names[c],
                  err.file);
        int line = e.line, col = e.column;
        if (e.at[0]) {
            char fpath[1300];
            snprintf(fpath, sizeof fpath, "%s/%s", dir, want_file);
            char *text = slurp(fpath);
            cr_assert_not_null(text, "%s: cannot read %s", names[c], fpath);
            cr_assert_eq(anchor_position(text, e.at, &line, &col), 0,
                         "%s: anchor '%s' missing or not unique", names[c],
                         e.at);
            free(text);
        }
        if (e.at[0] || e.has_line)
            cr_expect_eq(err.line, line, "%s: line %d, expected %d", names[c],
                         err.line, line);
        if (e.at[0] || e.has_column)
            cr_expect_eq(err.column, col, "%s: column %d, expected %d",
                         names[c], err.column, col);
        free(names[c]);
    }
    return count;
}

static surety_code run_model(const char *path, surety_error *err)
{
    surety_model *m = (surety_model *)1;
    surety_code code = surety_model_read(path, &m, err);
    cr_expect_null(m, "%s: a failed read must leave *out NULL", path);
    surety_model_free(m);
    return code;
}

static surety_code run_plan(const char *path, surety_error *err)
{
    surety_model *model;
    surety_error e;
    cr_assert_eq(surety_model_read(SRC "/tests/bad/plan-model.json", &model,
                                   &e), SURETY_OK, "%s", e.message);
    surety_plan *plan = (surety_plan *)1;
    surety_code code = surety_plan_read(model, path, &plan, err);
    cr_expect_null(plan, "%s: a failed read must leave *out NULL", path);
    surety_plan_free(plan);
    surety_model_free(model);
    return code;
}

Test(corpus, model_errors)
{
    /* the corpus holds 114 cases; a lost folder must not pass quietly */
    cr_expect_geq(run_corpus("model", run_model), 114);
}

Test(corpus, plan_errors)
{
    cr_expect_geq(run_corpus("plan", run_plan), 13);
}

/* ------------------------------------------------------------------ */
/* Every field                                                         */
/* ------------------------------------------------------------------ */

static const char every_field[] =
    "{\n"
    "  \"name\": \"every field\", \"description\": \"all of them\",\n"
    "  \"risk\": 0.1, \"scenarios\": 2000, \"seed\": 12345678901234567,\n"
    "  \"constraint\": \"separate\",\n"
    "  \"resources\": [\n"
    "    {\"id\": \"r1\", \"capacity\": 50.5, \"description\": \"x\"},\n"
    "    {\"id\": \"r2\", \"capacity\": 40, \"hours_factor\": 1.25}\n"
    "  ],\n"
    "  \"jobs\": [\n"
    "    {\"id\": \"fx\", \"hours\": {\"dist\": \"fixed\", \"value\": 4},\n"
    "     \"profit\": 120, \"description\": \"y\"},\n"
    "    {\"id\": \"fx2\", \"hours\": 2.5, \"profit\": {\"fixed\": 50}},\n"
    "    {\"id\": \"nm\", \"hours\": {\"dist\": \"normal\", \"mean\": 10, "
    "\"sd\": 2},\n"
    "     \"profit\": {\"rate\": 80, \"fixed\": 20, \"min\": 500, "
    "\"max\": 1100},\n"
    "     \"allowed\": [\"r2\"], \"required\": true},\n"
    "    {\"id\": \"nt\", \"hours\": {\"dist\": \"normal\", \"mean\": 10, "
    "\"sd\": 2, \"min\": 7, \"max\": 14},\n"
    "     \"profit\": {\"rate\": -30, \"fixed\": 900}},\n"
    "    {\"id\": \"ln\", \"hours\": {\"dist\": \"lognormal\", \"mean\": 10, "
    "\"sd\": 3, \"max\": 40},\n"
    "     \"profit\": {\"rate\": 70}},\n"
    "    {\"id\": \"un\", \"hours\": {\"dist\": \"uniform\", \"low\": 3, "
    "\"high\": 9}, \"profit\": 200, \"allowed\": []},\n"
    "    {\"id\": \"tr\", \"hours\": {\"dist\": \"triangular\", \"low\": 2, "
    "\"mode\": 3, \"high\": 8, \"min\": 2.5}, \"profit\": 100, "
    "\"required\": false},\n"
    "    {\"id\": \"em\", \"hours\": {\"dist\": \"empirical\", \"values\": "
    "[5, 1, 3, 3]}, \"profit\": 90}\n"
    "  ],\n"
    "  \"correlation\": {\"all\": 0.1, \"pairs\": [[\"nm\", \"ln\", 0.5], "
    "[\"un\", \"tr\", -0.2]], \"repair\": false}\n"
    "}\n";

Test(model, every_field)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_parse(every_field, "every.json", NULL, &m, &err),
                 SURETY_OK, "%d:%d %s: %s", err.line, err.column, err.field,
                 err.message);
    cr_expect_str_eq(surety_model_name(m), "every field");
    cr_expect_eq(m->risk, 0.1);
    cr_expect_eq(m->N, 2000);
    cr_expect_eq(m->seed, UINT64_C(12345678901234567));
    cr_expect_eq(m->constraint, SURETY_SEPARATE);
    cr_assert_eq(m->m, 2);
    cr_expect_str_eq(m->resources[0].id, "r1");
    cr_expect_eq(m->resources[0].capacity, 50.5);
    cr_expect_eq(m->resources[0].hours_factor, 1.0);
    cr_expect_eq(m->resources[1].hours_factor, 1.25);
    cr_assert_eq(m->n, 8);

    const surety_job *j = m->jobs;
    cr_expect_eq(j[0].hours.kind, SURETY_DIST_FIXED);
    cr_expect_eq(j[0].hours.a, 4);
    cr_expect_eq(j[0].profit.kind, SURETY_PROFIT_FIXED);
    cr_expect_eq(j[0].profit.fixed, 120);
    cr_expect(j[0].allowed[0] && j[0].allowed[1], "allowed defaults to all");
    cr_expect_eq(j[0].required, 0);
    cr_expect_eq(j[1].hours.kind, SURETY_DIST_FIXED);
    cr_expect_eq(j[1].hours.a, 2.5);
    cr_expect_eq(j[1].profit.kind, SURETY_PROFIT_RULE);
    cr_expect_eq(j[1].profit.rate, 0);
    cr_expect_eq(j[1].profit.fixed, 50);

    cr_expect_eq(j[2].hours.kind, SURETY_DIST_NORMAL);
    cr_expect_eq(j[2].hours.a, 10);
    cr_expect_eq(j[2].hours.b, 2);
    cr_expect_eq(j[2].hours.lo, 0, "a normal without min stops at 0 hours");
    cr_expect(isinf(j[2].hours.hi) && j[2].hours.hi > 0);
    cr_expect_eq(j[2].profit.rate, 80);
    cr_expect_eq(j[2].profit.fixed, 20);
    cr_expect_eq(j[2].profit.min, 500);
    cr_expect_eq(j[2].profit.max, 1100);
    /* clamp(80 * 5 + 20, 500, 1100) = 500; clamp(80*20+20) = 1100 */
    cr_expect_eq(surety_profit_of(&j[2].profit, 5), 500);
    cr_expect_eq(surety_profit_of(&j[2].profit, 10), 820);
    cr_expect_eq(surety_profit_of(&j[2].profit, 20), 1100);
    cr_expect(!j[2].allowed[0] && j[2].allowed[1]);
    cr_expect_eq(j[2].required, 1);
    cr_expect_eq(j[3].hours.lo, 7);
    cr_expect_eq(j[3].hours.hi, 14);
    cr_expect_eq(j[3].profit.rate, -30);
    cr_expect(isinf(j[3].profit.min) && j[3].profit.min < 0);

    cr_expect_eq(j[4].hours.kind, SURETY_DIST_LOGNORMAL);
    cr_expect_eq(j[4].hours.a, 10);
    cr_expect_eq(j[4].hours.b, 3);
    /* SciPy 1.10.1: stats.lognorm(s=0.29356037920852, scale=exp(
     * 2.25949624487352)) has mean 10.000000000000 and std 3.000000000000,
     * so these are the parameters of log(hours) for mean 10, sd 3. */
    cr_expect_float_eq(j[4].hours.sigma, 0.29356037920852, 1e-12);
    cr_expect_float_eq(j[4].hours.mu, 2.25949624487352, 1e-12);
    cr_expect(isinf(j[4].hours.lo) && j[4].hours.lo < 0);
    cr_expect_eq(j[4].hours.hi, 40);

    cr_expect_eq(j[5].hours.kind, SURETY_DIST_UNIFORM);
    cr_expect_eq(j[5].hours.a, 3);
    cr_expect_eq(j[5].hours.b, 9);
    cr_expect(!j[5].allowed[0] && !j[5].allowed[1], "allowed: [] is none");
    cr_expect_eq(j[6].hours.kind, SURETY_DIST_TRIANGULAR);
    cr_expect_eq(j[6].hours.a, 2);
    cr_expect_eq(j[6].hours.b, 3);
    cr_expect_eq(j[6].hours.c, 8);
    cr_expect_eq(j[6].hours.lo, 2.5);
    cr_expect_eq(j[6].required, 0);
    cr_expect_eq(j[7].hours.kind, SURETY_DIST_EMPIRICAL);
    cr_assert_eq(j[7].hours.nvalues, 4);
    const double sorted[4] = {1, 3, 3, 5};
    for (size_t v = 0; v < 4; v++)
        cr_expect_eq(j[7].hours.values[v], sorted[v]);
    for (size_t q = 0; q < m->n; q++)
        cr_expect_eq(j[q].has_hours, 1);

    /* correlation: common value, then the pairs, symmetric, unit diagonal */
    cr_assert_not_null(m->corr);
    size_t n = m->n;
    for (size_t a = 0; a < n; a++) {
        for (size_t b = 0; b < n; b++) {
            double want = a == b ? 1 : 0.1;
            if ((a == 2 && b == 4) || (a == 4 && b == 2))
                want = 0.5;
            if ((a == 5 && b == 6) || (a == 6 && b == 5))
                want = -0.2;
            cr_expect_eq(m->corr[a * n + b], want, "corr[%zu][%zu]", a, b);
        }
    }
    /* the factor reproduces the matrix: L L^T = R (plain arithmetic) */
    cr_assert_not_null(m->chol);
    for (size_t a = 0; a < n; a++)
        for (size_t b = 0; b < n; b++) {
            double s = 0;
            for (size_t c = 0; c < n; c++)
                s += m->chol[a * n + c] * m->chol[b * n + c];
            cr_expect_float_eq(s, m->corr[a * n + b], 1e-12);
        }
    cr_expect_null(m->table);
    surety_model_free(m);
}

Test(model, defaults)
{
    const char *text =
        "{\"resources\": [{\"id\": \"a\", \"capacity\": 10}],\n"
        " \"jobs\": [{\"id\": \"j\", \"hours\": {\"dist\": \"uniform\", "
        "\"low\": 1, \"high\": 2}, \"profit\": {\"rate\": 5}}]}";
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_parse(text, "some/dir/minimal.json", NULL, &m,
                                    &err), SURETY_OK, "%s", err.message);
    cr_expect_str_eq(surety_model_name(m), "minimal");
    cr_expect_eq(surety_model_risk(m), 0.05);
    cr_expect_eq(surety_model_scenarios(m), 1000);
    cr_expect_eq(surety_model_seed(m), 1);
    cr_expect_eq(surety_model_constraint(m), SURETY_JOINT);
    cr_expect_eq(surety_model_hours_factor(m, 0), 1.0);
    cr_expect_eq(surety_model_job_allowed(m, 0, 0), 1);
    cr_expect_eq(surety_model_job_required(m, 0), 0);
    cr_expect(isinf(m->jobs[0].hours.lo) && isinf(m->jobs[0].hours.hi));
    cr_expect(isinf(m->jobs[0].profit.min) && isinf(m->jobs[0].profit.max));
    cr_expect_eq(m->jobs[0].profit.fixed, 0);
    cr_expect_null(m->corr);
    cr_expect_null(m->chol);
    cr_expect_eq(surety_model_has_table(m), 0);
    surety_model_free(m);
}

Test(model, api_misuse)
{
    surety_model *m = NULL;
    surety_error err;
    cr_expect_eq(surety_model_parse(NULL, "x", NULL, &m, &err), SURETY_EUSAGE);
    cr_expect_eq(surety_model_parse("{}", "x", NULL, NULL, &err),
                 SURETY_EUSAGE);
    cr_expect_eq(surety_model_read(NULL, &m, &err), SURETY_EUSAGE);
    /* a NULL error record is allowed */
    cr_expect_eq(surety_model_parse("{", "x", NULL, &m, NULL), SURETY_EINPUT);
    cr_expect_eq(surety_model_parse("{\"risk\": 2}", "x", NULL, &m, NULL),
                 SURETY_EINPUT);
    cr_expect_null(m);
    cr_expect_eq(surety_model_read("/nonexistent/model.json", &m, &err),
                 SURETY_EINPUT);
    cr_expect_str_eq(err.file, "/nonexistent/model.json");
}

Test(model, nearest_names)
{
    surety_model *m;
    cr_assert_eq(surety_model_read(SRC "/instances/workshops-30.json", &m, NULL),
                 SURETY_OK);
    cr_expect_eq(surety_model_nearest_job(m, "O7"), 6);   /* O07 */
    cr_expect_eq(surety_model_nearest_job(m, "O300"), 29); /* O30 */
    cr_expect_eq(surety_model_nearest_job(m, "workbench"), -1);
    cr_expect_eq(surety_model_nearest_resource(m, "brich"), 1);
    cr_expect_eq(surety_model_nearest_resource(m, "oak"), -1);
    surety_model_free(m);
}

/* ------------------------------------------------------------------ */
/* The shipped instances                                               */
/* ------------------------------------------------------------------ */

Test(instances, workshops_30)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_read(SRC "/instances/workshops-30.json", &m, &err),
                 SURETY_OK, "%s:%d: %s", err.file, err.line, err.message);
    cr_expect_eq(m->n, 30);
    cr_expect_eq(m->m, 3);
    cr_expect_eq(m->N, 1000);
    cr_expect_eq(m->risk, 0.05);
    cr_expect_eq(surety_allowance(m->risk, m->N), 50);
    size_t required = 0, restricted = 0;
    for (size_t j = 0; j < m->n; j++) {
        required += (size_t)m->jobs[j].required;
        restricted += !(m->jobs[j].allowed[0] && m->jobs[j].allowed[1]
                        && m->jobs[j].allowed[2]);
    }
    cr_expect_eq(required, 3);
    cr_expect_geq(restricted, 5);
    cr_expect_not_null(m->chol, "common correlation 0.2 and pairs");
    /* It must be a real decision: the expected hours exceed what the
     * workshops can do. SciPy 1.10.1 (truncnorm, and lognorm integrated
     * over each job's [min, max]) gives 451.9 expected base hours against
     * 120 + 100 + 80 = 300 hours of capacity. Here, as a check on the file
     * rather than on truncation, the untruncated means must be within 2%. */
    double hours = 0, cap = 0;
    for (size_t j = 0; j < m->n; j++) {
        const surety_dist *d = &m->jobs[j].hours;
        switch (d->kind) {
        case SURETY_DIST_FIXED: hours += d->a; break;
        case SURETY_DIST_NORMAL:
        case SURETY_DIST_LOGNORMAL: hours += d->a; break;
        case SURETY_DIST_UNIFORM: hours += (d->a + d->b) / 2; break;
        case SURETY_DIST_TRIANGULAR: hours += (d->a + d->b + d->c) / 3; break;
        case SURETY_DIST_EMPIRICAL: {
            double s = 0;
            for (size_t v = 0; v < d->nvalues; v++)
                s += d->values[v];
            hours += s / (double)d->nvalues;
            break;
        }
        }
    }
    for (size_t i = 0; i < m->m; i++)
        cap += m->resources[i].capacity;
    cr_expect_eq(cap, 300);
    cr_expect(fabs(hours - 451.9) < 0.02 * 451.9, "expected hours %g", hours);
    cr_expect(hours / cap > 1.3 && hours / cap < 1.6, "ratio %g", hours / cap);
    surety_model_free(m);
}

Test(instances, tutorial)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_read(SRC "/instances/tutorial.json", &m, &err),
                 SURETY_OK, "%s:%d: %s", err.file, err.line, err.message);
    cr_expect_eq(m->n, 8);
    cr_expect_eq(m->m, 2);
    cr_expect_eq(m->N, 500);
    cr_expect_eq(m->seed, 7);
    /* it shows every distribution kind */
    int seen[6] = {0};
    for (size_t j = 0; j < m->n; j++)
        seen[m->jobs[j].hours.kind] = 1;
    for (int k = 0; k < 6; k++)
        cr_expect(seen[k], "distribution kind %d unused", k);
    surety_model_free(m);
}

Test(instances, table_demo)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_read(SRC "/instances/table-demo.json", &m, &err),
                 SURETY_OK, "%s:%d: %s", err.file, err.line, err.message);
    cr_assert_not_null(m->table);
    cr_expect_eq(m->N, 200);
    cr_expect_eq(m->table->N, 200);
    cr_expect_eq(surety_model_has_table(m), 1);
    for (size_t j = 0; j < m->n; j++)
        cr_expect_eq(m->jobs[j].has_hours, 1, "fresh scenarios need them");
    cr_expect_not_null(m->chol);
    /* first data row of table-demo.csv:
     * 18.04,6.44,911.95,18.71,8.51,652.28,10.12 (columns a.h, b.h, b.p,
     * c.h, d.h, d.p, e.h) */
    const double *h = m->table->hours, *p = m->table->profit;
    cr_expect_eq(h[0], 18.04);
    cr_expect_eq(h[1], 6.44);
    cr_expect_eq(h[2], 18.71);
    cr_expect_eq(h[3], 8.51);
    cr_expect_eq(h[4], 10.12);
    cr_expect(isnan(p[0]), "no batch-a.profit column");
    cr_expect_eq(p[1], 911.95);
    cr_expect_eq(p[3], 652.28);
    cr_expect(isnan(p[4]));
    surety_error e2;
    cr_expect_eq(surety_model_set_scenarios(m, 100, &e2), SURETY_EUSAGE);
    surety_model_free(m);
}

/* ------------------------------------------------------------------ */
/* Scenario tables                                                     */
/* ------------------------------------------------------------------ */

static char tmpdir[64];

static void make_tmpdir(void)
{
    snprintf(tmpdir, sizeof tmpdir, "/tmp/surety-test-model-XXXXXX");
    cr_assert_not_null(mkdtemp(tmpdir));
}

static void write_text(const char *name, const char *text)
{
    char path[256];
    snprintf(path, sizeof path, "%s/%s", tmpdir, name);
    FILE *f = fopen(path, "wb");
    cr_assert_not_null(f);
    fputs(text, f);
    fclose(f);
}

static void remove_tmp(const char *name)
{
    char path[256];
    snprintf(path, sizeof path, "%s/%s", tmpdir, name);
    unlink(path);
}

static const char table_model[] =
    "{\"scenario_table\": \"t.csv\",\n"
    " \"resources\": [{\"id\": \"a\", \"capacity\": 10}],\n"
    " \"jobs\": [{\"id\": \"x\", \"profit\": 1},\n"
    "          {\"id\": \"y\", \"profit\": {\"rate\": 2}}]}";

/* Values printed with %.17g read back bit for bit (glibc's strtod is
 * correctly rounded, as C11 Annex F recommends); ones that round-trip only
 * at 17 digits are chosen on purpose. */
Test(table, round_trip_bits)
{
    make_tmpdir();
    const double v[] = {0.1, 1.0 / 3.0, 4.9406564584124654e-324,
                        123456789.12345679, 0x1.fffffffffffffp-1,
                        2.0 / 3.0 * 1e10, 0.0, 7.0};
    const double pv[] = {-1e-7, 1e300, -2.5, 1.0 / 7.0};
    char csv[2048];
    size_t len = (size_t)snprintf(csv, sizeof csv,
                                  "y.profit,x.hours,y.hours\n");
    for (size_t l = 0; l < 4; l++)
        len += (size_t)snprintf(csv + len, sizeof csv - len,
                                "%.17g,%.17g,%.17g\n", pv[l], v[2 * l],
                                v[2 * l + 1]);
    write_text("t.csv", csv);
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_parse(table_model, "t.json", tmpdir, &m, &err),
                 SURETY_OK, "%s:%d: %s", err.file, err.line, err.message);
    cr_assert_eq(m->N, 4);
    for (size_t l = 0; l < 4; l++) {
        cr_expect_eq(memcmp(&m->table->hours[l * 2], &v[2 * l], 8), 0,
                     "row %zu x", l);
        cr_expect_eq(memcmp(&m->table->hours[l * 2 + 1], &v[2 * l + 1], 8),
                     0, "row %zu y", l);
        cr_expect(isnan(m->table->profit[l * 2]));
        cr_expect_eq(memcmp(&m->table->profit[l * 2 + 1], &pv[l], 8), 0);
    }
    surety_model_free(m);
    remove_tmp("t.csv");
    rmdir(tmpdir);
}

Test(table, quoting_spaces_and_blank_lines)
{
    make_tmpdir();
    /* quoted cells, spaces around cells, a blank line and no final newline
     * are all ordinary CSV (RFC 4180 plus common practice) */
    write_text("t.csv", "\"x.hours\", y.hours\n 1.5 ,\"2\"\n\n3,4");
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_parse(table_model, "t.json", tmpdir, &m, &err),
                 SURETY_OK, "%s:%d: %s", err.file, err.line, err.message);
    cr_expect_eq(m->N, 2);
    cr_expect_eq(m->table->hours[0], 1.5);
    cr_expect_eq(m->table->hours[1], 2);
    cr_expect_eq(m->table->hours[2], 3);
    cr_expect_eq(m->table->hours[3], 4);
    surety_model_free(m);
    remove_tmp("t.csv");
    rmdir(tmpdir);
}

/* ------------------------------------------------------------------ */
/* Plan files                                                          */
/* ------------------------------------------------------------------ */

Test(plan, round_trip)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_read(SRC "/instances/tutorial.json", &m, &err),
                 SURETY_OK, "%s", err.message);
    surety_plan *p = surety_plan_new(m);
    cr_assert_not_null(p);
    long gearbox = surety_model_find_job(m, "gearbox");
    long fleet = surety_model_find_job(m, "fleet-service");
    long brakes = surety_model_find_job(m, "brakes");
    surety_plan_set(p, (size_t)gearbox, 0);
    surety_plan_set(p, (size_t)fleet, 1);
    surety_plan_set(p, (size_t)brakes, 1);
    make_tmpdir();
    char path[256];
    snprintf(path, sizeof path, "%s/plan.json", tmpdir);
    cr_assert_eq(surety_plan_write(m, p,
                                   "{\"status\": \"optimal\", "
                                   "\"objective\": 1234.5, \"risk\": 0.1, "
                                   "\"two\": 2.0, \"sum\": 0.30000000000000004, "
                                   "\"tiny\": [5e-324], \"n\": 3}", path, &err),
                 SURETY_OK, "%s", err.message);
    surety_plan *q = NULL;
    cr_assert_eq(surety_plan_read(m, path, &q, &err), SURETY_OK, "%s:%d: %s",
                 err.file, err.line, err.message);
    for (size_t j = 0; j < m->n; j++)
        cr_expect_eq(surety_plan_get(q, j), surety_plan_get(p, j), "job %zu",
                     j);
    char *text = slurp(path);
    cr_expect(strstr(text, "\"gearbox\": \"bay-1\"") != NULL, "%s", text);
    cr_expect(strstr(text, "\"service\": null") != NULL, "%s", text);
    cr_expect(strstr(text, "\"status\": \"optimal\"") != NULL, "%s", text);
    cr_expect(strstr(text, "\"objective\": 1234.5") != NULL, "%s", text);
    /* reals in their shortest round-trip form, as Python's repr() prints
     * them: repr(0.1) = '0.1', repr(0.1 + 0.2) = '0.30000000000000004',
     * repr(5e-324) = '5e-324'; integers stay integers */
    cr_expect(strstr(text, "\"risk\": 0.1,") != NULL, "%s", text);
    cr_expect(strstr(text, "\"two\": 2.0,") != NULL, "%s", text);
    cr_expect(strstr(text, "\"sum\": 0.30000000000000004,") != NULL, "%s",
              text);
    cr_expect(strstr(text, "5e-324") != NULL, "%s", text);
    cr_expect(strstr(text, "\"n\": 3\n") != NULL, "%s", text);
    free(text);

    /* bad extra members are refused and leave the file as it was */
    cr_expect_eq(surety_plan_write(m, p, "[1]", path, &err), SURETY_EUSAGE);
    cr_expect_eq(surety_plan_write(m, p, "{\"plan\": 1}", path, &err),
                 SURETY_EUSAGE);
    cr_expect_eq(surety_plan_write(m, p, "{", path, &err), SURETY_EUSAGE);
    surety_plan_free(q);
    q = NULL;
    cr_expect_eq(surety_plan_read(m, path, &q, &err), SURETY_OK);
    surety_plan_free(q);

    /* a plan naming the required job only by omission fails to read */
    surety_plan_set(p, (size_t)fleet, -1);
    cr_expect_eq(surety_plan_write(m, p, NULL, path, &err), SURETY_OK);
    q = NULL;
    cr_expect_eq(surety_plan_read(m, path, &q, &err), SURETY_EINPUT);
    cr_expect_str_eq(err.field, "plan.fleet-service");

    /* nothing is left behind by a write into a missing folder */
    char bad[300];
    snprintf(bad, sizeof bad, "%s/none/plan.json", tmpdir);
    cr_expect_neq(surety_plan_write(m, p, NULL, bad, &err), SURETY_OK);
    unlink(path);
    cr_expect_eq(rmdir(tmpdir), 0, "temporary files left in %s", tmpdir);
    surety_plan_free(p);
    surety_model_free(m);
}

/* ------------------------------------------------------------------ */
/* Through the sampler                                                 */
/* ------------------------------------------------------------------ */

/* The demo's distributions as read here, drawn by the sampler, have the
 * expected total base hours SciPy 1.10.1 computes from the file (truncnorm
 * for the normals; lognorm integrated over each [min, max]; triang,
 * uniform, the empirical mean): 451.881671. This checks the reader's
 * parameter translation (lognormal mu, sigma; normal truncated at 0;
 * truncation windows) end to end. The bound is 4 standard errors of the
 * sample mean. */
Test(instances, workshops_30_expected_hours)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_read(SRC "/instances/workshops-30.json", &m, &err),
                 SURETY_OK, "%s", err.message);
    const size_t M = 20000;
    surety_scenarios *sc;
    cr_assert_eq(surety_sample(m, SURETY_STREAM_CHECK, 0, M, &sc, &err),
                 SURETY_OK, "%s", err.message);
    const double *h = surety_scenarios_hours(sc);
    double sum = 0, sum2 = 0;
    for (size_t l = 0; l < M; l++) {
        double t = 0;
        for (size_t j = 0; j < m->n; j++)
            t += h[l * m->n + j];
        sum += t;
        sum2 += t * t;
    }
    double mean = sum / (double)M;
    double sd = sqrt((sum2 - sum * mean) / (double)(M - 1));
    double se = sd / sqrt((double)M);
    cr_expect(fabs(mean - 451.881671) < 4 * se, "mean %g, se %g", mean, se);
    surety_scenarios_free(sc);
    surety_model_free(m);
}

/* A scenario set written by the sampler's CSV writer reads back as a
 * table bit for bit, hours and profits. */
Test(table, sampler_csv_round_trip)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_read(SRC "/instances/tutorial.json", &m, &err),
                 SURETY_OK, "%s", err.message);
    surety_scenarios *sc;
    cr_assert_eq(surety_sample(m, SURETY_STREAM_SOLVE, 0, 64, &sc, &err),
                 SURETY_OK, "%s", err.message);
    make_tmpdir();
    char path[256];
    snprintf(path, sizeof path, "%s/s.csv", tmpdir);
    cr_assert_eq(surety_scenarios_write_csv(m, sc, path, &err), SURETY_OK,
                 "%s", err.message);
    surety_table *t = NULL;
    cr_assert_eq(surety_table_read(m, path, &t, &err), SURETY_OK,
                 "%s:%d:%d: %s", err.file, err.line, err.column, err.message);
    cr_assert_eq(t->N, 64);
    size_t cells = 64 * m->n;
    cr_expect_eq(memcmp(t->hours, surety_scenarios_hours(sc),
                        cells * sizeof(double)), 0);
    cr_expect_eq(memcmp(t->profit, surety_scenarios_profit(sc),
                        cells * sizeof(double)), 0);
    surety_table_free(t);
    surety_scenarios_free(sc);
    surety_model_free(m);
    unlink(path);
    rmdir(tmpdir);
}

/* "repair": true takes the nearest valid matrix where the stated
 * correlations cannot hold together (0.9, 0.9 and -0.9 among three jobs:
 * the determinant 1 - 3(0.81) - 2(0.729) is negative). */
Test(model, correlation_repair)
{
    const char *text =
        "{\"resources\": [{\"id\": \"a\", \"capacity\": 10}],\n"
        " \"jobs\": [{\"id\": \"x\", \"hours\": 1, \"profit\": 1},\n"
        "          {\"id\": \"y\", \"hours\": 1, \"profit\": 1},\n"
        "          {\"id\": \"z\", \"hours\": 1, \"profit\": 1}],\n"
        " \"correlation\": {\"pairs\": [[\"x\", \"y\", 0.9], "
        "[\"y\", \"z\", 0.9], [\"x\", \"z\", -0.9]], \"repair\": true}}";
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_parse(text, "r.json", NULL, &m, &err),
                 SURETY_OK, "%s", err.message);
    cr_expect_eq(m->corr_repaired, 1);
    cr_expect_not_null(m->chol);
    surety_model_free(m);
}

/* The README's demo: the first 18 orders of workshops-30.json with the
 * capacities scaled to 18/30 of theirs (72, 60, 48 hours), so that the
 * solver proves it optimal in seconds. */
Test(instances, demo)
{
    surety_model *m;
    surety_error err;
    cr_assert_eq(surety_model_read(SRC "/instances/demo.json", &m, &err),
                 SURETY_OK, "%s:%d: %s", err.file, err.line, err.message);
    cr_expect_eq(m->n, 18);
    cr_expect_eq(m->m, 3);
    cr_expect_eq(m->N, 1000);
    cr_expect_eq(surety_allowance(m->risk, m->N), 50);
    cr_expect_eq(m->resources[0].capacity, 72);
    cr_expect_eq(m->resources[1].capacity, 60);
    cr_expect_eq(m->resources[2].capacity, 48);
    size_t required = 0;
    for (size_t j = 0; j < m->n; j++)
        required += (size_t)m->jobs[j].required;
    cr_expect_eq(required, 2);
    cr_expect_not_null(m->chol, "the demo's orders are correlated");
    surety_model_free(m);
}
