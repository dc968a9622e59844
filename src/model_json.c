/* model_json.c - the model file and plan file readers (JSON via jansson),
 * every error located by file, line, column and field path.
 * SPDX-License-Identifier: MIT */
#include <assert.h>
#include <jansson.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "fileio.h"
#include "json_pos.h"
#include "model.h"
#include "plan.h"

/* Deepest path the readers build: correlation.pairs[2][1] has 4 steps. */
#define MAX_DEPTH 8
/* Longest job or resource id, bytes. */
#define MAX_ID 64
/* Smallest probability a truncation window may keep; below it the inverse
 * CDF would work on differences of nearly equal numbers. */
#define MIN_TRUNC_MASS 1e-12

/* ------------------------------------------------------------------ */
/* Nearest names, for "did you mean" hints                             */
/* ------------------------------------------------------------------ */

/* Optimal string alignment distance (Levenshtein plus adjacent
 * transpositions), on at most MAX_ID bytes of each word. */
static size_t edit_distance(const char *a, const char *b)
{
    size_t la = strlen(a), lb = strlen(b);
    if (la > MAX_ID)
        la = MAX_ID;
    if (lb > MAX_ID)
        lb = MAX_ID;
    size_t d[MAX_ID + 1][MAX_ID + 1];
    for (size_t i = 0; i <= la; i++)
        d[i][0] = i;
    for (size_t j = 0; j <= lb; j++)
        d[0][j] = j;
    for (size_t i = 1; i <= la; i++) {
        for (size_t j = 1; j <= lb; j++) {
            size_t cost = a[i - 1] != b[j - 1];
            size_t v = d[i - 1][j] + 1;
            if (d[i][j - 1] + 1 < v)
                v = d[i][j - 1] + 1;
            if (d[i - 1][j - 1] + cost < v)
                v = d[i - 1][j - 1] + cost;
            if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1]
                && d[i - 2][j - 2] + 1 < v)
                v = d[i - 2][j - 2] + 1;
            d[i][j] = v;
        }
    }
    return d[la][lb];
}

/* Index of the name nearest to `word`, or -1 when none is near enough to
 * be a likely typo. The limit (1 edit for words under 4 bytes, 2 under 9,
 * else 3) is common practice for spelling hints, not a derived value. */
static long nearest_name(const char *word, const char *const *names,
                         size_t count)
{
    size_t len = strlen(word);
    size_t limit = len < 4 ? 1 : len < 9 ? 2 : 3;
    long best = -1;
    size_t best_d = limit + 1;
    for (size_t i = 0; i < count; i++) {
        size_t d = edit_distance(word, names[i]);
        if (d < best_d) {
            best_d = d;
            best = (long)i;
        }
    }
    return best;
}

typedef const char *(*id_of_fn)(const surety_model *model, size_t t);

/* The ids id_of(model, 0 .. count-1) as one array (caller frees), or NULL
 * when memory is short. */
static const char **gather_ids(const surety_model *model, size_t count,
                               id_of_fn id_of)
{
    const char **ids = surety_xmalloc(count ? count : 1, sizeof *ids);
    for (size_t t = 0; ids && t < count; t++)
        ids[t] = id_of(model, t);
    return ids;
}

static long nearest_id(const surety_model *model, const char *id,
                       size_t count, id_of_fn id_of)
{
    const char **names = gather_ids(model, count, id_of);
    if (!names)
        return -1;
    long r = nearest_name(id, names, count);
    surety_xfree(names);
    return r;
}

long surety_model_nearest_job(const surety_model *model, const char *id)
{
    return nearest_id(model, id, model->n, surety_model_job_id);
}

long surety_model_nearest_resource(const surety_model *model, const char *id)
{
    return nearest_id(model, id, model->m, surety_model_resource_id);
}

/* ------------------------------------------------------------------ */
/* Reader state and error reporting                                    */
/* ------------------------------------------------------------------ */

typedef struct reader {
    const char *text;      /* the raw document */
    json_t *root;          /* the parsed document */
    const char *file;      /* name used in messages */
    surety_jsonpos_step path[MAX_DEPTH]; /* where the reader is now */
    int depth;
    surety_error err;      /* the first error */
    int failed;
    surety_code code;      /* EINPUT, or EINTERNAL when memory ran out */
} reader;

/* The readers nest at most MAX_DEPTH deep (asserted). */
static void push_key(reader *r, const char *key)
{
    assert(r->depth < MAX_DEPTH);
    r->path[r->depth].key = key;
    r->path[r->depth].index = 0;
    r->depth++;
}

static void push_index(reader *r, size_t i)
{
    assert(r->depth < MAX_DEPTH);
    r->path[r->depth].key = NULL;
    r->path[r->depth].index = i;
    r->depth++;
}

static void pop(reader *r)
{
    assert(r->depth > 0);
    r->depth--;
}

/* "jobs[3].hours.sd" */
static void path_string(const reader *r, char *buf, size_t cap)
{
    size_t len = 0;
    buf[0] = '\0';
    for (int d = 0; d < r->depth; d++) {
        int w;
        if (r->path[d].key)
            w = snprintf(buf + len, cap - len, "%s%s", d ? "." : "",
                         r->path[d].key);
        else
            w = snprintf(buf + len, cap - len, "[%zu]", r->path[d].index);
        if (w < 0 || (size_t)w >= cap - len)
            break;
        len += (size_t)w;
    }
}

/* What an error points at: the value at the current path, its key (for
 * unknown fields), or the enclosing value (for missing fields). */
enum at { AT_VALUE, AT_KEY, AT_PARENT };

/* Records the first error, at the current path; always returns -1. The
 * message follows the field path ("jobs[3].hours.sd: must be positive"),
 * so it does not repeat it. */
static int fail(reader *r, enum at at, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

static int fail(reader *r, enum at at, const char *fmt, ...)
{
    if (r->failed)
        return -1;
    char field[256];
    path_string(r, field, sizeof field);
    int depth = at == AT_PARENT ? r->depth - 1 : r->depth;
    const char *p = NULL;
    for (int d = depth; d >= 0 && !p; d--)
        p = surety_jsonpos_locate(r->text, r->path, d,
                                  at == AT_KEY && d == r->depth);
    int line = 0, col = 0;
    if (p)
        surety_jsonpos_position(r->text, p, &line, &col);
    char msg[1024];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    surety_error_set(&r->err, r->file, line, col, field, "%s", msg);
    r->failed = 1;
    if (strncmp(msg, "out of memory", 13) == 0)
        r->code = SURETY_EINTERNAL;
    return -1;
}

static const char *type_name(const json_t *v)
{
    switch (json_typeof(v)) {
    case JSON_OBJECT: return "an object";
    case JSON_ARRAY: return "an array";
    case JSON_STRING: return "a string";
    case JSON_INTEGER:
    case JSON_REAL: return "a number";
    case JSON_TRUE:
    case JSON_FALSE: return "a boolean";
    case JSON_NULL: return "null";
    }
    return "a value";
}

/* Fails on the first member of `o` that is not in `known`, naming the
 * nearest known field as a hint, or listing them all when none is near. */
static int check_fields(reader *r, json_t *o, const char *const *known,
                        size_t count)
{
    const char *key;
    json_t *v;
    json_object_foreach(o, key, v) {
        size_t i = 0;
        while (i < count && strcmp(key, known[i]) != 0)
            i++;
        if (i < count)
            continue;
        push_key(r, key);
        long near = nearest_name(key, known, count);
        if (near >= 0)
            return fail(r, AT_KEY, "unknown field (did you mean '%s'?)",
                        known[near]);
        char list[512];
        size_t len = 0;
        list[0] = '\0';
        for (i = 0; i < count && len < sizeof list; i++) {
            int w = snprintf(list + len, sizeof list - len, "%s%s",
                             i ? ", " : "", known[i]);
            if (w < 0)
                break;
            len += (size_t)w;
        }
        return fail(r, AT_KEY, "unknown field (known fields: %s)", list);
    }
    return 0;
}

enum sign { ANY, NONNEG, POSITIVE };

/* Checks a number at the current path. Returns 1 when read, 0 when v is
 * NULL and not required, -1 on error. */
static int number_value(reader *r, json_t *v, int required, enum sign sign,
                        double *out)
{
    if (!v) {
        if (required)
            return fail(r, AT_PARENT, "required field is missing");
        return 0;
    }
    if (!json_is_number(v))
        return fail(r, AT_VALUE, "must be a number, not %s", type_name(v));
    double x = json_number_value(v);
    /* jansson refuses NaN and overflowing literals, but a caller may hand
     * us a document built in memory; keep the check. */
    if (!isfinite(x))
        return fail(r, AT_VALUE, "must be a finite number");
    if (sign == NONNEG && x < 0)
        return fail(r, AT_VALUE, "must not be negative (got %g)", x);
    if (sign == POSITIVE && !(x > 0))
        return fail(r, AT_VALUE, "must be positive (got %g)", x);
    *out = x;
    return 1;
}

static int get_number(reader *r, json_t *o, const char *key, int required,
                      enum sign sign, double *out)
{
    push_key(r, key);
    int rc = number_value(r, json_object_get(o, key), required, sign, out);
    pop(r);
    return rc;
}

/* A whole number in [lo, hi], written as an integer or as an integral real
 * (1e6). Returns 1, 0 (absent) or -1. */
static int get_count(reader *r, json_t *o, const char *key, double lo,
                     double hi, double *out)
{
    json_t *v = json_object_get(o, key);
    if (!v)
        return 0;
    push_key(r, key);
    double x = 0;
    int rc = number_value(r, v, 1, ANY, &x);
    if (rc > 0 && x != floor(x))
        rc = fail(r, AT_VALUE, "must be a whole number (got %g)", x);
    if (rc > 0 && x < lo)
        rc = fail(r, AT_VALUE, "must be at least %.0f (got %g)", lo, x);
    if (rc > 0 && x > hi)
        rc = fail(r, AT_VALUE, "must be at most %.0f (got %g)", hi, x);
    if (rc > 0)
        *out = x;
    pop(r);
    return rc;
}

static int get_string(reader *r, json_t *o, const char *key, int required,
                      const char **out)
{
    json_t *v = json_object_get(o, key);
    push_key(r, key);
    int rc = 1;
    if (!v)
        rc = required ? fail(r, AT_PARENT, "required field is missing") : 0;
    else if (!json_is_string(v))
        rc = fail(r, AT_VALUE, "must be a string, not %s", type_name(v));
    else
        *out = json_string_value(v);
    pop(r);
    return rc;
}

static int get_bool(reader *r, json_t *o, const char *key, int *out)
{
    json_t *v = json_object_get(o, key);
    if (!v)
        return 0;
    push_key(r, key);
    int rc = 1;
    if (!json_is_boolean(v))
        rc = fail(r, AT_VALUE, "must be true or false, not %s", type_name(v));
    else
        *out = json_is_true(v);
    pop(r);
    return rc;
}

/* Ids name columns of scenario tables (`<job>.hours`) and variables of
 * exported MIPs (x_<job>_<resource>), so they keep to characters both
 * formats carry without quoting. */
static int get_id(reader *r, json_t *o, const char **out)
{
    const char *id = NULL;
    if (get_string(r, o, "id", 1, &id) < 0)
        return -1;
    push_key(r, "id");
    size_t len = strlen(id);
    int rc = 0;
    if (len == 0)
        rc = fail(r, AT_VALUE, "must not be empty");
    else if (len > MAX_ID)
        rc = fail(r, AT_VALUE, "must be at most %d characters (got %zu)",
                  MAX_ID, len);
    for (size_t c = 0; rc == 0 && c < len; c++) {
        unsigned char ch = (unsigned char)id[c];
        if (!((ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z')
              || (ch >= '0' && ch <= '9') || ch == '_' || ch == '-'
              || ch == '.'))
            rc = fail(r, AT_VALUE,
                      "'%s' may use only letters, digits, '_', '-' and '.'",
                      id);
    }
    pop(r);
    *out = id;
    return rc;
}

/* ------------------------------------------------------------------ */
/* Model: hours, profit, resources, jobs, correlation                  */
/* ------------------------------------------------------------------ */

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

static const char *const top_fields[] = {
    "name", "description", "risk", "scenarios", "seed", "constraint",
    "resources", "jobs", "correlation", "scenario_table",
};
static const char *const resource_fields[] = {
    "id", "description", "capacity", "hours_factor",
};
static const char *const job_fields[] = {
    "id", "description", "hours", "profit", "allowed", "required",
};
static const char *const hours_fields[] = {
    "dist", "value", "mean", "sd", "low", "mode", "high", "values", "min", "max",
};
static const char *const profit_fields[] = {"rate", "fixed", "min", "max"};
static const char *const corr_fields[] = {"all", "pairs", "repair"};
static const char *const constraint_names[] = {"joint", "separate"};

/* Indexed by surety_dist_kind. */
static const char *const dist_names[] = {
    "fixed", "normal", "lognormal", "uniform", "triangular", "empirical",
};
/* The fields each kind takes, besides "dist"; truncation by min/max
 * applies to every kind with uncertainty. */
static const char *const dist_takes[] = {
    "value",
    "mean, sd, min, max",
    "mean, sd, min, max",
    "low, high, min, max",
    "low, mode, high, min, max",
    "values, min, max",
};

/* Whether hours field `key` applies to distribution `kind`. */
static int dist_takes_field(surety_dist_kind kind, const char *key)
{
    if (strcmp(key, "dist") == 0)
        return 1;
    const char *list = dist_takes[kind];
    size_t len = strlen(key);
    for (const char *p = list; (p = strstr(p, key)) != NULL; p += len) {
        int starts = p == list || p[-1] == ' ';
        int ends = p[len] == '\0' || p[len] == ',';
        if (starts && ends)
            return 1;
    }
    return 0;
}

static double phi(double x)
{
    return 0.5 * erfc(-x / sqrt(2.0));
}

/* Probability the standard normal gives to [zlo, zhi], taken from the
 * tail it lies in so that far windows do not cancel to zero. */
static double normal_mass(double zlo, double zhi)
{
    if (zlo > 0)
        return phi(-zlo) - phi(-zhi);
    return phi(zhi) - phi(zlo);
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* The truncation window must keep some of the distribution, or the
 * inverse-CDF sampler would have nothing (or only rounding noise) to draw
 * from. Reports at min when given, else at max. */
static int check_window(reader *r, json_t *h, surety_dist *d)
{
    double lo = d->lo, hi = d->hi;
    double mass = 1;
    int overlap = 1;
    switch (d->kind) {
    case SURETY_DIST_FIXED:
        return 0;
    case SURETY_DIST_NORMAL:
        mass = normal_mass((lo - d->a) / d->b, (hi - d->a) / d->b);
        break;
    case SURETY_DIST_LOGNORMAL:
        mass = normal_mass(lo > 0 ? (log(lo) - d->mu) / d->sigma : -INFINITY,
                           (log(hi) - d->mu) / d->sigma);
        break;
    case SURETY_DIST_UNIFORM:
        overlap = fmax(lo, d->a) < fmin(hi, d->b);
        break;
    case SURETY_DIST_TRIANGULAR:
        overlap = fmax(lo, d->a) < fmin(hi, d->c);
        break;
    case SURETY_DIST_EMPIRICAL:
        overlap = 0;
        for (size_t v = 0; v < d->nvalues; v++)
            if (d->values[v] >= lo && d->values[v] <= hi)
                overlap = 1;
        break;
    }
    if (overlap && mass >= MIN_TRUNC_MASS)
        return 0;
    int has_min = json_object_get(h, "min") != NULL;
    int has_max = json_object_get(h, "max") != NULL;
    char window[96];
    if (has_min && has_max)
        snprintf(window, sizeof window, "[min, max] = [%g, %g]", lo, hi);
    else if (has_min)
        snprintf(window, sizeof window, "min = %g", lo);
    else
        snprintf(window, sizeof window, "max = %g", hi);
    push_key(r, has_min ? "min" : "max");
    int rc;
    if (!overlap)
        rc = fail(r, AT_VALUE, "%s leaves none of the %s distribution",
                  window, dist_names[d->kind]);
    else
        rc = fail(r, AT_VALUE, "%s keeps almost none of the %s distribution "
                  "(probability %.3g)", window, dist_names[d->kind], mass);
    pop(r);
    return rc;
}

static int read_hours(reader *r, json_t *h, surety_dist *d)
{
    d->lo = -INFINITY;
    d->hi = INFINITY;
    if (json_is_number(h)) { /* shorthand for {"dist": "fixed", "value": h} */
        d->kind = SURETY_DIST_FIXED;
        return number_value(r, h, 1, NONNEG, &d->a) < 0 ? -1 : 0;
    }
    if (!json_is_object(h))
        return fail(r, AT_VALUE,
                    "must be a number or an object such as {\"dist\": "
                    "\"normal\", \"mean\": 10, \"sd\": 2}, not %s",
                    type_name(h));
    if (check_fields(r, h, hours_fields, COUNT(hours_fields)) < 0)
        return -1;
    const char *name = NULL;
    if (get_string(r, h, "dist", 1, &name) < 0)
        return -1;
    size_t kind = 0;
    while (kind < COUNT(dist_names) && strcmp(name, dist_names[kind]) != 0)
        kind++;
    if (kind == COUNT(dist_names)) {
        push_key(r, "dist");
        long near = nearest_name(name, dist_names, COUNT(dist_names));
        if (near >= 0)
            return fail(r, AT_VALUE, "unknown distribution '%s' (did you "
                        "mean '%s'?)", name, dist_names[near]);
        return fail(r, AT_VALUE, "unknown distribution '%s' (known: fixed, "
                    "normal, lognormal, uniform, triangular, empirical)",
                    name);
    }
    d->kind = (surety_dist_kind)kind;
    const char *key;
    json_t *v;
    json_object_foreach(h, key, v) {
        if (!dist_takes_field(d->kind, key)) {
            push_key(r, key);
            return fail(r, AT_KEY, "does not apply to a %s distribution "
                        "(it takes %s)", name, dist_takes[kind]);
        }
    }

    switch (d->kind) {
    case SURETY_DIST_FIXED:
        return get_number(r, h, "value", 1, NONNEG, &d->a) < 0 ? -1 : 0;
    case SURETY_DIST_NORMAL:
        if (get_number(r, h, "mean", 1, NONNEG, &d->a) < 0
            || get_number(r, h, "sd", 1, POSITIVE, &d->b) < 0)
            return -1;
        /* Hours are never negative: without a stated min the normal is
         * truncated at 0 (for the usual mean >= 3 sd the change is below
         * 0.14% of the mass). */
        d->lo = 0;
        break;
    case SURETY_DIST_LOGNORMAL:
        if (get_number(r, h, "mean", 1, POSITIVE, &d->a) < 0
            || get_number(r, h, "sd", 1, POSITIVE, &d->b) < 0)
            return -1;
        /* Moments of the hours to parameters of log(hours):
         * sigma^2 = ln(1 + sd^2/mean^2), mu = ln(mean) - sigma^2/2. */
        {
            double cv = d->b / d->a;
            double s2 = log1p(cv * cv);
            d->sigma = sqrt(s2);
            d->mu = log(d->a) - 0.5 * s2;
        }
        break;
    case SURETY_DIST_UNIFORM:
        if (get_number(r, h, "low", 1, NONNEG, &d->a) < 0
            || get_number(r, h, "high", 1, NONNEG, &d->b) < 0)
            return -1;
        if (!(d->a < d->b)) {
            push_key(r, "high");
            return fail(r, AT_VALUE, "must be greater than low (%g)", d->a);
        }
        break;
    case SURETY_DIST_TRIANGULAR:
        if (get_number(r, h, "low", 1, NONNEG, &d->a) < 0
            || get_number(r, h, "mode", 1, NONNEG, &d->b) < 0
            || get_number(r, h, "high", 1, NONNEG, &d->c) < 0)
            return -1;
        if (!(d->a < d->c)) {
            push_key(r, "high");
            return fail(r, AT_VALUE, "must be greater than low (%g)", d->a);
        }
        if (d->b < d->a || d->b > d->c) {
            push_key(r, "mode");
            return fail(r, AT_VALUE, "must lie within [low, high] = [%g, %g]",
                        d->a, d->c);
        }
        break;
    case SURETY_DIST_EMPIRICAL: {
        json_t *vals = json_object_get(h, "values");
        push_key(r, "values");
        if (!vals)
            return fail(r, AT_PARENT, "required field is missing");
        if (!json_is_array(vals))
            return fail(r, AT_VALUE, "must be an array of hours, not %s",
                        type_name(vals));
        if (json_array_size(vals) == 0)
            return fail(r, AT_VALUE, "must hold at least one value");
        d->nvalues = json_array_size(vals);
        d->values = surety_xmalloc(d->nvalues, sizeof *d->values);
        if (!d->values)
            return fail(r, AT_VALUE, "out of memory");
        for (size_t i = 0; i < d->nvalues; i++) {
            push_index(r, i);
            if (number_value(r, json_array_get(vals, i), 1, NONNEG,
                             &d->values[i]) < 0)
                return -1;
            pop(r);
        }
        pop(r);
        qsort(d->values, d->nvalues, sizeof *d->values, cmp_double);
        break;
    }
    }

    double x;
    int has_min = get_number(r, h, "min", 0, NONNEG, &x);
    if (has_min < 0)
        return -1;
    if (has_min)
        d->lo = x;
    int has_max = get_number(r, h, "max", 0, NONNEG, &x);
    if (has_max < 0)
        return -1;
    if (has_max)
        d->hi = x;
    if (has_min && has_max && !(d->lo < d->hi)) {
        push_key(r, "max");
        return fail(r, AT_VALUE, "must be greater than min (%g)", d->lo);
    }
    return check_window(r, h, d);
}

static int read_profit(reader *r, json_t *p, surety_profit *pr)
{
    pr->rate = 0;
    pr->fixed = 0;
    pr->min = -INFINITY;
    pr->max = INFINITY;
    if (json_is_number(p)) {
        pr->kind = SURETY_PROFIT_FIXED;
        return number_value(r, p, 1, ANY, &pr->fixed) < 0 ? -1 : 0;
    }
    if (!json_is_object(p))
        return fail(r, AT_VALUE, "must be a number or an object {\"rate\", "
                    "\"fixed\", \"min\", \"max\"}, not %s", type_name(p));
    if (check_fields(r, p, profit_fields, COUNT(profit_fields)) < 0)
        return -1;
    pr->kind = SURETY_PROFIT_RULE;
    int has_rate = get_number(r, p, "rate", 0, ANY, &pr->rate);
    int has_fixed = get_number(r, p, "fixed", 0, ANY, &pr->fixed);
    if (has_rate < 0 || has_fixed < 0)
        return -1;
    if (!has_rate && !has_fixed)
        return fail(r, AT_VALUE, "needs \"rate\" (money per hour), "
                    "\"fixed\" (money) or both");
    int has_min = get_number(r, p, "min", 0, ANY, &pr->min);
    int has_max = get_number(r, p, "max", 0, ANY, &pr->max);
    if (has_min < 0 || has_max < 0)
        return -1;
    if (pr->min > pr->max) {
        push_key(r, "max");
        return fail(r, AT_VALUE, "must not be below min (%g)", pr->min);
    }
    return 0;
}

/* Index pairs (id, position) sorted by id find duplicates in n log n;
 * the error names the second occurrence earliest in the document. */
typedef struct id_pos {
    const char *id;
    size_t pos;
} id_pos;

static int cmp_id_pos(const void *a, const void *b)
{
    const id_pos *x = a, *y = b;
    int c = strcmp(x->id, y->id);
    if (c)
        return c;
    return (x->pos > y->pos) - (x->pos < y->pos);
}

/* Returns the position of the earliest repeated id, or count when all
 * are distinct (or memory is short: the check is then skipped). */
static size_t first_duplicate(const char *const *ids, size_t count,
                              size_t *first)
{
    id_pos *v = surety_xmalloc(count, sizeof *v);
    if (!v)
        return count;
    for (size_t i = 0; i < count; i++) {
        v[i].id = ids[i];
        v[i].pos = i;
    }
    qsort(v, count, sizeof *v, cmp_id_pos);
    size_t best = count;
    for (size_t i = 1; i < count; i++) {
        if (strcmp(v[i].id, v[i - 1].id) == 0 && v[i].pos < best) {
            best = v[i].pos;
            /* sorted by position within equal ids: the run's head is first */
            size_t h = i - 1;
            while (h > 0 && strcmp(v[h - 1].id, v[i].id) == 0)
                h--;
            *first = v[h].pos;
        }
    }
    surety_xfree(v);
    return best;
}

/* The required, non-empty top-level array `key` of `what`s ("resources"
 * of "resource"); pushes `key` on the path. Returns its size, or 0 after
 * failing. */
static size_t get_list(reader *r, json_t *root, const char *key,
                       const char *what, json_t **arr)
{
    *arr = json_object_get(root, key);
    push_key(r, key);
    if (!*arr)
        return (size_t)fail(r, AT_PARENT, "required field is missing") + 1;
    if (!json_is_array(*arr))
        return (size_t)fail(r, AT_VALUE, "must be an array of %s, not %s",
                            key, type_name(*arr)) + 1;
    if (json_array_size(*arr) == 0)
        return (size_t)fail(r, AT_VALUE, "must list at least one %s",
                            what) + 1;
    return json_array_size(*arr);
}

/* Fails at <key>[d].id on the first id of ids[0..count-1] that repeats an
 * earlier one, naming that one; the list's key is on the path. */
static int unique_ids(reader *r, const char **ids, size_t count,
                      const char *key, const char *what)
{
    size_t first = 0, dup = first_duplicate(ids, count, &first);
    if (dup == count)
        return 0;
    push_index(r, dup);
    push_key(r, "id");
    return fail(r, AT_VALUE, "duplicate %s id '%s' (also %s[%zu])", what,
                ids[dup], key, first);
}

static int read_resources(reader *r, json_t *root, surety_model *model)
{
    json_t *arr;
    size_t m = get_list(r, root, "resources", "resource", &arr);
    if (m == 0)
        return -1;
    model->resources = surety_xcalloc(m, sizeof *model->resources);
    if (!model->resources)
        return fail(r, AT_VALUE, "out of memory");
    model->m = m;
    for (size_t i = 0; i < m; i++) {
        json_t *o = json_array_get(arr, i);
        surety_resource *res = &model->resources[i];
        push_index(r, i);
        if (!json_is_object(o))
            return fail(r, AT_VALUE, "must be an object {\"id\", "
                        "\"capacity\", ...}, not %s", type_name(o));
        const char *id, *text;
        if (check_fields(r, o, resource_fields, COUNT(resource_fields)) < 0
            || get_id(r, o, &id) < 0
            || get_string(r, o, "description", 0, &text) < 0
            || get_number(r, o, "capacity", 1, POSITIVE, &res->capacity) < 0)
            return -1;
        res->hours_factor = 1;
        if (get_number(r, o, "hours_factor", 0, POSITIVE,
                       &res->hours_factor) < 0)
            return -1;
        if (!(res->id = surety_xstrdup(id)))
            return fail(r, AT_VALUE, "out of memory");
        pop(r);
    }
    const char **ids = gather_ids(model, m, surety_model_resource_id);
    if (!ids)
        return fail(r, AT_VALUE, "out of memory");
    int rc = unique_ids(r, ids, m, "resources", "resource");
    surety_xfree(ids);
    if (rc < 0)
        return -1;
    pop(r);
    return 0;
}

static int read_allowed(reader *r, json_t *o, const surety_model *model,
                        surety_job *job)
{
    json_t *arr = json_object_get(o, "allowed");
    if (!arr) {
        memset(job->allowed, 1, model->m);
        return 0;
    }
    push_key(r, "allowed");
    if (!json_is_array(arr))
        return fail(r, AT_VALUE, "must be an array of resource ids, not %s",
                    type_name(arr));
    for (size_t e = 0; e < json_array_size(arr); e++) {
        json_t *v = json_array_get(arr, e);
        push_index(r, e);
        if (!json_is_string(v))
            return fail(r, AT_VALUE, "must be a resource id (a string), "
                        "not %s", type_name(v));
        const char *id = json_string_value(v);
        long i = surety_model_find_resource(model, id);
        if (i < 0) {
            long near = surety_model_nearest_resource(model, id);
            if (near >= 0)
                return fail(r, AT_VALUE, "unknown resource '%s' (did you "
                            "mean '%s'?)", id, model->resources[near].id);
            return fail(r, AT_VALUE, "unknown resource '%s'", id);
        }
        if (job->allowed[i])
            return fail(r, AT_VALUE, "resource '%s' is listed twice", id);
        job->allowed[i] = 1;
        pop(r);
    }
    pop(r);
    return 0;
}

static int read_job(reader *r, json_t *o, surety_model *model,
                    surety_job *job)
{
    if (!json_is_object(o))
        return fail(r, AT_VALUE, "must be an object {\"id\", \"hours\", "
                    "\"profit\", ...}, not %s", type_name(o));
    const char *id, *text;
    if (check_fields(r, o, job_fields, COUNT(job_fields)) < 0
        || get_id(r, o, &id) < 0
        || get_string(r, o, "description", 0, &text) < 0)
        return -1;
    if (!(job->id = surety_xstrdup(id)))
        return fail(r, AT_VALUE, "out of memory");

    json_t *h = json_object_get(o, "hours");
    push_key(r, "hours");
    if (h) {
        if (read_hours(r, h, &job->hours) < 0)
            return -1;
        job->has_hours = 1;
    } else if (!json_object_get(r->root, "scenario_table")) {
        return fail(r, AT_PARENT, "required field is missing (it may be "
                    "omitted only in a model with a scenario_table)");
    } else {
        job->hours.kind = SURETY_DIST_FIXED;
        job->hours.lo = -INFINITY;
        job->hours.hi = INFINITY;
    }
    pop(r);

    json_t *p = json_object_get(o, "profit");
    push_key(r, "profit");
    if (!p)
        return fail(r, AT_PARENT, "required field is missing");
    if (read_profit(r, p, &job->profit) < 0)
        return -1;
    pop(r);

    job->allowed = surety_xcalloc(model->m, 1);
    if (!job->allowed)
        return fail(r, AT_VALUE, "out of memory");
    if (read_allowed(r, o, model, job) < 0
        || get_bool(r, o, "required", &job->required) < 0)
        return -1;
    if (job->required) {
        size_t count = 0;
        for (size_t i = 0; i < model->m; i++)
            count += job->allowed[i];
        if (count == 0) {
            push_key(r, "allowed");
            return fail(r, AT_VALUE, "a required job needs at least one "
                        "allowed resource");
        }
    }
    return 0;
}

static int read_jobs(reader *r, json_t *root, surety_model *model)
{
    json_t *arr;
    size_t n = get_list(r, root, "jobs", "job", &arr);
    if (n == 0)
        return -1;
    model->jobs = surety_xcalloc(n, sizeof *model->jobs);
    if (!model->jobs)
        return fail(r, AT_VALUE, "out of memory");
    model->n = n;
    for (size_t j = 0; j < n; j++) {
        push_index(r, j);
        if (read_job(r, json_array_get(arr, j), model, &model->jobs[j]) < 0)
            return -1;
        pop(r);
    }
    const char **ids = gather_ids(model, n, surety_model_job_id);
    if (!ids)
        return fail(r, AT_VALUE, "out of memory");
    int rc = unique_ids(r, ids, n, "jobs", "job");
    surety_xfree(ids);
    if (rc < 0)
        return -1;
    pop(r);
    return 0;
}

/* A job named in a correlation pair; returns its index or -1. */
static long pair_job(reader *r, json_t *v, const surety_model *model)
{
    if (!json_is_string(v)) {
        fail(r, AT_VALUE, "must be a job id (a string), not %s", type_name(v));
        return -1;
    }
    const char *id = json_string_value(v);
    long j = surety_model_find_job(model, id);
    if (j >= 0)
        return j;
    long near = surety_model_nearest_job(model, id);
    if (near >= 0)
        fail(r, AT_VALUE, "unknown job '%s' (did you mean '%s'?)", id,
             model->jobs[near].id);
    else
        fail(r, AT_VALUE, "unknown job '%s'", id);
    return -1;
}

static int corr_value(reader *r, json_t *v, double *out)
{
    if (number_value(r, v, 1, ANY, out) < 0)
        return -1;
    if (*out < -1 || *out > 1)
        return fail(r, AT_VALUE, "a correlation must lie in [-1, 1] (got %g)",
                    *out);
    return 0;
}

/* Builds model->corr (common value, then pairs) and hands it to dist.c for
 * the Cholesky factor of the Gaussian copula. */
static int read_correlation(reader *r, json_t *root, surety_model *model)
{
    json_t *c = json_object_get(root, "correlation");
    if (!c)
        return 0;
    push_key(r, "correlation");
    if (!json_is_object(c))
        return fail(r, AT_VALUE, "must be an object {\"all\", \"pairs\", "
                    "\"repair\"}, not %s", type_name(c));
    if (check_fields(r, c, corr_fields, COUNT(corr_fields)) < 0)
        return -1;
    double all = 0;
    json_t *va = json_object_get(c, "all");
    if (va) {
        push_key(r, "all");
        if (corr_value(r, va, &all) < 0)
            return -1;
        pop(r);
    }
    int repair = 0;
    if (get_bool(r, c, "repair", &repair) < 0)
        return -1;
    json_t *pairs = json_object_get(c, "pairs");
    size_t npairs = 0;
    if (pairs) {
        push_key(r, "pairs");
        if (!json_is_array(pairs))
            return fail(r, AT_VALUE, "must be an array of [job, job, "
                        "correlation] triples, not %s", type_name(pairs));
        npairs = json_array_size(pairs);
        pop(r);
    }
    if (all == 0 && npairs == 0) {
        pop(r);
        return 0; /* independent jobs: no copula */
    }
    size_t n = model->n;
    int big = surety_mul_overflows(n, n);
    model->corr = big ? NULL : surety_xmalloc(n * n, sizeof(double));
    unsigned char *set = big ? NULL : surety_xcalloc(n, n);
    if (!model->corr || !set) {
        surety_xfree(set);
        return fail(r, AT_VALUE, "out of memory for a %zu x %zu correlation "
                    "matrix", n, n);
    }
    for (size_t a = 0; a < n; a++)
        for (size_t b = 0; b < n; b++)
            model->corr[a * n + b] = a == b ? 1.0 : all;
    int rc = 0;
    push_key(r, "pairs");
    for (size_t e = 0; e < npairs && rc == 0; e++) {
        json_t *t = json_array_get(pairs, e);
        push_index(r, e);
        if (!json_is_array(t) || json_array_size(t) != 3) {
            rc = fail(r, AT_VALUE, "must be a triple [job, job, correlation]");
            break;
        }
        long ja, jb;
        double v;
        push_index(r, 0);
        ja = pair_job(r, json_array_get(t, 0), model);
        pop(r);
        push_index(r, 1);
        jb = ja < 0 ? -1 : pair_job(r, json_array_get(t, 1), model);
        if (jb >= 0 && jb == ja) {
            rc = fail(r, AT_VALUE, "a job cannot be paired with itself ('%s')",
                      model->jobs[ja].id);
            break;
        }
        pop(r);
        if (ja < 0 || jb < 0) {
            rc = -1;
            break;
        }
        push_index(r, 2);
        if (corr_value(r, json_array_get(t, 2), &v) < 0) {
            rc = -1;
            break;
        }
        pop(r);
        size_t x = (size_t)ja, y = (size_t)jb;
        if (set[x * n + y]) {
            rc = fail(r, AT_VALUE, "the pair '%s', '%s' is given twice",
                      model->jobs[x].id, model->jobs[y].id);
            break;
        }
        set[x * n + y] = set[y * n + x] = 1;
        model->corr[x * n + y] = model->corr[y * n + x] = v;
        pop(r);
    }
    surety_xfree(set);
    if (rc < 0)
        return -1;
    pop(r);

    surety_error e;
    surety_error_clear(&e);
    surety_code code = surety_model_factor_correlation(model, repair, &e);
    if (code != SURETY_OK) {
        /* dist.c knows which jobs are involved but not where the
         * correlation sits in the file: keep its message, add the place. */
        fail(r, AT_VALUE, "%s%s", e.message[0] ? e.message
             : "the correlation matrix is not positive definite",
             code == SURETY_EINPUT && !repair ? " (\"repair\": true)" : "");
        r->code = code;
        return -1;
    }
    pop(r);
    return 0;
}

/* ------------------------------------------------------------------ */
/* Model: top level                                                    */
/* ------------------------------------------------------------------ */

static void format_bytes(double bytes, char *buf, size_t cap)
{
    static const char *const unit[] = {"bytes", "KiB", "MiB", "GiB", "TiB",
                                       "PiB", "EiB"};
    size_t u = 0;
    while (bytes >= 1024 && u + 1 < COUNT(unit)) {
        bytes /= 1024;
        u++;
    }
    snprintf(buf, cap, u ? "%.1f %s" : "%.0f %s", bytes, unit[u]);
}

/* The sampler keeps hours and profit as two N*n arrays of doubles; refuse a
 * scenario count whose arrays could not fit in this machine's memory,
 * before anyone tries to allocate them. */
static int check_memory(reader *r, const surety_model *model)
{
    double need = 2.0 * (double)model->N * (double)model->n * sizeof(double);
    size_t phys = surety_physical_memory();
    int overflow = surety_mul_overflows(model->N, model->n)
                   || surety_mul_overflows(model->N * model->n,
                                           2 * sizeof(double));
    if (!overflow && (phys == 0 || need <= (double)phys))
        return 0;
    char needs[32], has[32];
    format_bytes(need, needs, sizeof needs);
    format_bytes((double)phys, has, sizeof has);
    push_key(r, "scenarios");
    return fail(r, AT_VALUE, "%zu scenarios of %zu jobs need %s for the "
                "hours and profit arrays, more than the %s of memory here",
                model->N, model->n, needs, has);
}

/* "dir/name.json" -> "name" */
static char *default_name(const char *path)
{
    const char *base = strrchr(path, '/');
    base = base ? base + 1 : path;
    char *name = surety_xstrdup(base);
    if (name) {
        char *dot = strrchr(name, '.');
        if (dot && dot != name)
            *dot = '\0';
    }
    return name;
}

static int read_table(reader *r, json_t *root, const char *dir,
                      surety_model *model, int has_scenarios)
{
    const char *rel = NULL;
    int got = get_string(r, root, "scenario_table", 0, &rel);
    if (got <= 0)
        return got;
    push_key(r, "scenario_table");
    if (rel[0] == '\0')
        return fail(r, AT_VALUE, "must name a CSV file");
    size_t len = strlen(rel) + (dir ? strlen(dir) : 0) + 2;
    char *path = surety_xmalloc(len, 1);
    if (!path)
        return fail(r, AT_VALUE, "out of memory");
    if (dir && dir[0] && rel[0] != '/')
        snprintf(path, len, "%s/%s", dir, rel);
    else
        snprintf(path, len, "%s", rel);
    surety_error e;
    surety_error_clear(&e);
    surety_code code = surety_table_read(model, path, &model->table, &e);
    surety_xfree(path);
    if (code != SURETY_OK) {
        /* the table's own error (its file, line and column) is the useful
         * one; it replaces the model's position */
        r->err = e;
        r->failed = 1;
        r->code = code;
        return -1;
    }
    pop(r);
    if (has_scenarios && model->N != model->table->N) {
        push_key(r, "scenarios");
        return fail(r, AT_VALUE, "is %zu but the scenario table has %zu rows "
                    "(omit scenarios or make them agree)", model->N,
                    model->table->N);
    }
    model->N = model->table->N;
    return 0;
}

static int read_model(reader *r, json_t *root, const char *dir,
                      surety_model *model)
{
    if (!json_is_object(root))
        return fail(r, AT_VALUE, "the model must be a JSON object, not %s",
                    type_name(root));
    if (check_fields(r, root, top_fields, COUNT(top_fields)) < 0)
        return -1;

    const char *name = NULL, *text;
    if (get_string(r, root, "name", 0, &name) < 0
        || get_string(r, root, "description", 0, &text) < 0)
        return -1;
    model->name = name ? surety_xstrdup(name) : default_name(r->file);

    model->risk = 0.05;
    json_t *v = json_object_get(root, "risk");
    if (v) {
        push_key(r, "risk");
        if (number_value(r, v, 1, ANY, &model->risk) < 0)
            return -1;
        if (!(model->risk > 0 && model->risk < 1))
            return fail(r, AT_VALUE, "must lie strictly between 0 and 1 "
                        "(got %g)", model->risk);
        pop(r);
    }

    /* counts and seeds above 2^53 would not survive a JSON real */
    double x = 1000;
    int has_scenarios = get_count(r, root, "scenarios", 1, 9007199254740992.0,
                                  &x);
    if (has_scenarios < 0)
        return -1;
    model->N = (size_t)x;
    /* an integer seed is read exactly up to 2^63-1; a real one up to 2^53 */
    json_t *seed = json_object_get(root, "seed");
    model->seed = 1;
    if (json_is_integer(seed)) {
        if (json_integer_value(seed) < 0) {
            push_key(r, "seed");
            return fail(r, AT_VALUE, "must not be negative (got %lld)",
                        (long long)json_integer_value(seed));
        }
        model->seed = (uint64_t)json_integer_value(seed);
    } else {
        x = 1;
        if (get_count(r, root, "seed", 0, 9007199254740992.0, &x) < 0)
            return -1;
        model->seed = (uint64_t)x;
    }

    const char *cons = NULL;
    if (get_string(r, root, "constraint", 0, &cons) < 0)
        return -1;
    model->constraint = SURETY_JOINT;
    if (cons && strcmp(cons, "separate") == 0) {
        model->constraint = SURETY_SEPARATE;
    } else if (cons && strcmp(cons, "joint") != 0) {
        push_key(r, "constraint");
        long near = nearest_name(cons, constraint_names,
                                 COUNT(constraint_names));
        if (near >= 0)
            return fail(r, AT_VALUE, "must be \"joint\" or \"separate\" "
                        "(did you mean '%s'?)", constraint_names[near]);
        return fail(r, AT_VALUE, "must be \"joint\" or \"separate\" (got "
                    "'%s')", cons);
    }

    if (read_resources(r, root, model) < 0 || read_jobs(r, root, model) < 0
        || read_table(r, root, dir, model, has_scenarios) < 0
        || read_correlation(r, root, model) < 0)
        return -1;
    if (!model->table && check_memory(r, model) < 0)
        return -1;
    if (!model->name)
        return fail(r, AT_VALUE, "out of memory");
    return 0;
}

surety_code surety_model_parse(const char *json, const char *name,
                               const char *dir, surety_model **out,
                               surety_error *err)
{
    if (out)
        *out = NULL;
    if (!json || !out) {
        surety_error_set(err, name, 0, 0, NULL,
                         "surety_model_parse: NULL text or result pointer");
        return SURETY_EUSAGE;
    }
    reader r;
    memset(&r, 0, sizeof r);
    r.text = json;
    r.file = name ? name : "<model>";
    r.code = SURETY_EINPUT;
    json_error_t je;
    json_t *root = json_loads(json, JSON_REJECT_DUPLICATES, &je);
    if (!root) {
        surety_error_set(err, r.file, je.line, je.column, NULL, "%s", je.text);
        return SURETY_EINPUT;
    }
    r.root = root;
    surety_model *model = surety_xcalloc(1, sizeof *model);
    if (!model) {
        json_decref(root);
        surety_error_set(err, r.file, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    model->path = surety_xstrdup(r.file);
    int rc = read_model(&r, root, dir, model);
    json_decref(root);
    if (rc < 0 || !model->path) {
        if (rc == 0) {
            surety_error_set(&r.err, r.file, 0, 0, NULL, "out of memory");
            r.code = SURETY_EINTERNAL;
        }
        if (err)
            *err = r.err;
        surety_model_destroy(model);
        return r.code;
    }
    *out = model;
    return SURETY_OK;
}

surety_code surety_model_read(const char *path, surety_model **out,
                              surety_error *err)
{
    if (out)
        *out = NULL;
    if (!path || !out) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "surety_model_read: NULL path or result pointer");
        return SURETY_EUSAGE;
    }
    char *text = surety_read_file(path, NULL, err);
    if (!text)
        return SURETY_EINPUT;
    char *dir = surety_xstrdup(path);
    if (!dir) {
        surety_xfree(text);
        surety_error_set(err, path, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    char *slash = strrchr(dir, '/');
    if (slash)
        slash[slash == dir ? 1 : 0] = '\0';
    surety_code code = surety_model_parse(text, path, slash ? dir : NULL, out,
                                          err);
    surety_xfree(dir);
    surety_xfree(text);
    return code;
}

/* ------------------------------------------------------------------ */
/* Plan files                                                          */
/* ------------------------------------------------------------------ */

static int read_plan(reader *r, json_t *root, const surety_model *model,
                     surety_plan *plan)
{
    if (!json_is_object(root))
        return fail(r, AT_VALUE, "a plan file must be a JSON object, not %s",
                    type_name(root));
    json_t *pl = json_object_get(root, "plan");
    push_key(r, "plan");
    if (!pl)
        return fail(r, AT_PARENT, "required field is missing");
    if (!json_is_object(pl))
        return fail(r, AT_VALUE, "must be an object {\"<job>\": "
                    "\"<resource>\", ...}, not %s", type_name(pl));
    const char *key;
    json_t *v;
    json_object_foreach(pl, key, v) {
        push_key(r, key);
        long j = surety_model_find_job(model, key);
        if (j < 0) {
            long near = surety_model_nearest_job(model, key);
            if (near >= 0)
                return fail(r, AT_KEY, "unknown job (did you mean '%s'?)",
                            model->jobs[near].id);
            return fail(r, AT_KEY, "unknown job");
        }
        long i = -1;
        if (json_is_string(v)) {
            const char *id = json_string_value(v);
            i = surety_model_find_resource(model, id);
            if (i < 0) {
                long near = surety_model_nearest_resource(model, id);
                if (near >= 0)
                    return fail(r, AT_VALUE, "unknown resource '%s' (did you "
                                "mean '%s'?)", id, model->resources[near].id);
                return fail(r, AT_VALUE, "unknown resource '%s'", id);
            }
            if (!model->jobs[j].allowed[i])
                return fail(r, AT_VALUE, "job '%s' is not allowed in "
                            "resource '%s'", key, id);
        } else if (!json_is_null(v)) {
            return fail(r, AT_VALUE, "must be a resource id or null "
                        "(rejected), not %s", type_name(v));
        }
        plan->resource[j] = i;
        pop(r);
    }
    for (size_t j = 0; j < model->n; j++) {
        if (model->jobs[j].required && plan->resource[j] < 0) {
            push_key(r, model->jobs[j].id);
            return fail(r, AT_VALUE, "required job is not placed in any "
                        "resource");
        }
    }
    pop(r);
    return 0;
}

surety_code surety_plan_read(const surety_model *model, const char *path,
                             surety_plan **out, surety_error *err)
{
    if (out)
        *out = NULL;
    if (!model || !path || !out) {
        surety_error_set(err, path, 0, 0, NULL,
                         "surety_plan_read: NULL model, path or result");
        return SURETY_EUSAGE;
    }
    char *text = surety_read_file(path, NULL, err);
    if (!text)
        return SURETY_EINPUT;
    json_error_t je;
    /* jansson keeps one value per key; rejecting duplicates is what makes a
     * job listed twice an error instead of a silent overwrite */
    json_t *root = json_loads(text, JSON_REJECT_DUPLICATES, &je);
    if (!root) {
        if (json_error_code(&je) == json_error_duplicate_key)
            surety_error_set(err, path, je.line, je.column, NULL,
                             "%s: a plan names each job at most once",
                             je.text);
        else
            surety_error_set(err, path, je.line, je.column, NULL, "%s",
                             je.text);
        surety_xfree(text);
        return SURETY_EINPUT;
    }
    surety_plan *plan = surety_plan_new(model);
    if (!plan) {
        json_decref(root);
        surety_xfree(text);
        surety_error_set(err, path, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    reader r;
    memset(&r, 0, sizeof r);
    r.text = text;
    r.file = path;
    r.root = root;
    int rc = read_plan(&r, root, model, plan);
    json_decref(root);
    surety_xfree(text);
    if (rc < 0) {
        if (err)
            *err = r.err;
        surety_plan_free(plan);
        return SURETY_EINPUT;
    }
    *out = plan;
    return SURETY_OK;
}

/* jansson prints every real with 17 significant digits, so a risk of 0.1
 * would be written 0.10000000000000001. This printer gives each real the
 * fewest digits that read back to the same double, and otherwise lays the
 * document out as jansson's JSON_INDENT(2) does. */
static void put_real(FILE *fp, double v)
{
    char buf[32];
    for (int digits = 1; digits <= 17; digits++) {
        snprintf(buf, sizeof buf, "%.*g", digits, v);
        if (strtod(buf, NULL) == v)
            break;
    }
    /* keep it a real when read back: 2.0 is written 2.0, not 2 */
    if (!strpbrk(buf, ".eEn"))
        strcat(buf, ".0");
    fputs(buf, fp);
}

static void put_json(FILE *fp, json_t *v, int indent)
{
    switch (json_typeof(v)) {
    case JSON_OBJECT: {
        if (json_object_size(v) == 0) {
            fputs("{}", fp);
            break;
        }
        const char *key;
        json_t *x;
        int first = 1;
        fputs("{\n", fp);
        json_object_foreach(v, key, x) {
            json_t *k = json_string(key);
            char *ks = k ? json_dumps(k, JSON_ENCODE_ANY) : NULL;
            fprintf(fp, "%s%*s%s: ", first ? "" : ",\n", indent + 2, "",
                    ks ? ks : "\"\"");
            free(ks); /* jansson's buffers come from plain malloc */
            json_decref(k);
            put_json(fp, x, indent + 2);
            first = 0;
        }
        fprintf(fp, "\n%*s}", indent, "");
        break;
    }
    case JSON_ARRAY: {
        if (json_array_size(v) == 0) {
            fputs("[]", fp);
            break;
        }
        fputs("[\n", fp);
        for (size_t i = 0; i < json_array_size(v); i++) {
            fprintf(fp, "%s%*s", i ? ",\n" : "", indent + 2, "");
            put_json(fp, json_array_get(v, i), indent + 2);
        }
        fprintf(fp, "\n%*s]", indent, "");
        break;
    }
    case JSON_REAL:
        put_real(fp, json_real_value(v));
        break;
    default: {
        char *text = json_dumps(v, JSON_ENCODE_ANY);
        fputs(text ? text : "null", fp);
        free(text);
        break;
    }
    }
}

surety_code surety_plan_write(const surety_model *model,
                              const surety_plan *plan, const char *extra,
                              const char *path, surety_error *err)
{
    if (!model || !plan || !path || plan->n != model->n) {
        surety_error_set(err, path, 0, 0, NULL, "surety_plan_write: NULL "
                         "argument or a plan of another model");
        return SURETY_EUSAGE;
    }
    json_t *root = json_object();
    json_t *pl = json_object();
    int bad = !root || !pl || json_object_set(root, "plan", pl) != 0;
    for (size_t j = 0; j < model->n && !bad; j++) {
        long i = plan->resource[j];
        if (i >= (long)model->m) {
            json_decref(pl);
            json_decref(root);
            surety_error_set(err, path, 0, 0, NULL, "surety_plan_write: job "
                             "%zu placed in resource %ld of %zu", j, i,
                             model->m);
            return SURETY_EUSAGE;
        }
        json_t *v = i >= 0 ? json_string(model->resources[i].id) : json_null();
        bad = json_object_set_new(pl, model->jobs[j].id, v) != 0;
    }
    json_decref(pl);
    if (bad) {
        json_decref(root);
        surety_error_set(err, path, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    if (extra) {
        json_error_t je;
        json_t *x = json_loads(extra, JSON_REJECT_DUPLICATES, &je);
        const char *why = !x ? je.text
                          : !json_is_object(x) ? "not a JSON object"
                          : json_object_get(x, "plan") ? "it has a \"plan\" member"
                          : NULL;
        if (why) {
            surety_error_set(err, path, 0, 0, NULL, "surety_plan_write: bad "
                             "extra members (%s)", why);
            json_decref(x);
            json_decref(root);
            return SURETY_EUSAGE;
        }
        bad = json_object_update(root, x) != 0;
        json_decref(x);
    }
    surety_outfile f;
    surety_code code = bad ? SURETY_EINTERNAL
                           : surety_outfile_open(&f, path, err);
    if (bad)
        surety_error_set(err, path, 0, 0, NULL, "out of memory");
    if (code == SURETY_OK) {
        put_json(f.fp, root, 0);
        if (fputc('\n', f.fp) == EOF || ferror(f.fp)) {
            surety_outfile_abort(&f);
            surety_error_set(err, path, 0, 0, NULL, "write failed");
            code = SURETY_EINTERNAL;
        } else {
            code = surety_outfile_commit(&f, err);
        }
    }
    json_decref(root);
    return code;
}
