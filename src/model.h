/* model.h - the validated model: resources, jobs, distributions, profit
 * rules, correlation. Filled by model_json.c, read by every later stage.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_MODEL_H
#define SURETY_MODEL_H

#include <stddef.h>
#include <stdint.h>

#include "surety.h"

/* Hours distribution of one job. Every kind may be truncated to
 * [lo, hi] (lo = -INFINITY / hi = +INFINITY when not given, except that a
 * normal without a stated min has lo = 0: hours are never negative);
 * truncation is applied exactly by the inverse-CDF method, never by
 * rejection. */
typedef enum surety_dist_kind {
    SURETY_DIST_FIXED = 0,      /* a = value (no uncertainty) */
    SURETY_DIST_NORMAL = 1,     /* a = mean, b = sd (> 0) */
    SURETY_DIST_LOGNORMAL = 2,  /* a = mean, b = sd of the hours (> 0);
                                   mu, sigma of log hours precomputed */
    SURETY_DIST_UNIFORM = 3,    /* a = low, b = high (a < b) */
    SURETY_DIST_TRIANGULAR = 4, /* a = low, b = mode, c = high */
    SURETY_DIST_EMPIRICAL = 5,  /* values[0..nvalues-1], sorted ascending;
                                   each observed value equally likely */
} surety_dist_kind;

typedef struct surety_dist {
    surety_dist_kind kind;
    double a, b, c;     /* parameters as above */
    double mu, sigma;   /* lognormal: parameters of log(hours) */
    double lo, hi;      /* truncation bounds, hours */
    double *values;     /* empirical: sorted observations (owned) */
    size_t nvalues;
} surety_dist;

/* Profit of an accepted job: clamp(rate * hours + fixed, min, max) when
 * kind is RULE (min = -INFINITY, max = +INFINITY when not given), or the
 * constant `fixed` when kind is FIXED. Units: money. */
typedef enum surety_profit_kind {
    SURETY_PROFIT_RULE = 0,
    SURETY_PROFIT_FIXED = 1,
} surety_profit_kind;

typedef struct surety_profit {
    surety_profit_kind kind;
    double rate;  /* money per hour */
    double fixed; /* money */
    double min, max;
} surety_profit;

typedef struct surety_job {
    char *id;
    surety_dist hours;     /* base hours; in resource i: factor_i * hours */
    int has_hours;         /* 0 only in table models without a dist */
    surety_profit profit;
    unsigned char *allowed; /* m flags: may go to resource i */
    int required;           /* must be accepted (into one resource) */
} surety_job;

typedef struct surety_resource {
    char *id;
    double capacity;     /* hours, > 0 */
    double hours_factor; /* > 0; job hours are multiplied by it here */
} surety_resource;

/* Scenario table read from CSV: N rows; hours[l*n+j]; profit[l*n+j] is NaN
 * where the table has no profit column for job j (the rule applies). */
typedef struct surety_table {
    size_t N;
    double *hours;
    double *profit;
    char *path;
} surety_table;

struct surety_model {
    char *name;
    char *path;          /* the model file, or the name given to parse */
    double risk;         /* eps in (0,1) */
    size_t N;            /* scenario count */
    uint64_t seed;
    surety_constraint constraint;
    size_t n, m;
    surety_job *jobs;           /* n */
    surety_resource *resources; /* m */
    /* Gaussian copula: lower Cholesky factor of the job correlation
     * matrix, n*n row-major, or NULL when jobs are independent. */
    double *chol;
    double *corr;         /* the (possibly repaired) matrix, n*n, or NULL */
    int corr_repaired;    /* the nearest valid matrix was used */
    surety_table *table;  /* or NULL */
};

/* Builds the Cholesky factor of model->corr into model->chol; when the
 * matrix is not positive definite either repairs it (repair != 0: nearest
 * valid correlation matrix by eigenvalue clipping) or fails with a message
 * naming the jobs involved. Only dist.c calls LAPACKE. */
surety_code surety_model_factor_correlation(surety_model *model, int repair,
                                            surety_error *err);

/* Frees every owned member and the model itself. */
void surety_model_destroy(surety_model *model);

/* Reads a scenario table (CSV) for the model; table_csv.c. */
surety_code surety_table_read(const surety_model *model, const char *path,
                              surety_table **out, surety_error *err);
void surety_table_free(surety_table *t);

/* Index of the job (resource) whose id is nearest to `id` by edit
 * distance and near enough to be a likely typo, or -1; for "did you mean"
 * hints. model_json.c. */
long surety_model_nearest_job(const surety_model *model, const char *id);
long surety_model_nearest_resource(const surety_model *model, const char *id);

/* Fills an error record (printf-style message). */
void surety_error_set(surety_error *err, const char *file, int line,
                      int column, const char *field, const char *fmt, ...)
    __attribute__((format(printf, 6, 7)));

/* Profit of job j for `hours` under its profit rule. */
static inline double surety_profit_of(const surety_profit *p, double hours)
{
    if (p->kind == SURETY_PROFIT_FIXED)
        return p->fixed;
    double v = p->rate * hours + p->fixed;
    if (v < p->min)
        v = p->min;
    if (v > p->max)
        v = p->max;
    return v;
}

#endif
