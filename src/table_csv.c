/* table_csv.c - scenario tables (CSV via libcsv): a header, then one row
 * per scenario of `<job>.hours` and optional `<job>.profit` cells.
 * SPDX-License-Identifier: MIT */
#include <csv.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "fileio.h"
#include "model.h"

/* A table must give hours for every job: a scenario is one joint draw of
 * all jobs, and filling some columns from the distributions would break
 * the dependence the rows carry. Profit columns are optional; where one is
 * missing the job's profit rule applies to the row's hours. Cells are read
 * with strtod, so values printed with "%.17g" read back bit for bit. */

/* Longest column name: a 64-byte id and ".profit". */
#define MAX_COL 80

typedef struct tparse {
    const surety_model *model;
    const char *path;
    int line, col;               /* 1-based position of the byte being fed */
    int pending;                 /* the next field has not begun: 1 after a
                                    delimiter (an empty cell may start at a
                                    newline), 2 after a record */
    int field_line, field_col;   /* where the current field began */
    int rec_line;                /* where the current record began */
    size_t record;               /* 0 while reading the header */
    size_t field;                /* index of the current field */
    surety_vec names;            /* header cells, char *, owned */
    long *hours_col, *profit_col; /* per job: its column, or -1 */
    double *row;                 /* the current record's cells */
    surety_vec hours, profit;    /* double, n per data row */
    int failed;
    surety_error err;
} tparse;

static void tfail(tparse *t, int line, int col, const char *field,
                  const char *fmt, ...) __attribute__((format(printf, 5, 6)));

static void tfail(tparse *t, int line, int col, const char *field,
                  const char *fmt, ...)
{
    if (t->failed)
        return;
    char msg[1024];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    surety_error_set(&t->err, t->path, line, col, field, "%s", msg);
    t->failed = 1;
}

static const char *col_name(const tparse *t, size_t c)
{
    return c < t->names.len ? ((char **)t->names.data)[c] : "";
}

static void header_cell(tparse *t, const char *s, size_t len)
{
    const surety_model *model = t->model;
    char *name = surety_xstrdup(s ? s : "");
    if (!name || surety_vec_push(&t->names, &name) < 0) {
        surety_xfree(name);
        tfail(t, t->field_line, t->field_col, NULL, "out of memory");
        return;
    }
    if (len == 0) {
        tfail(t, t->field_line, t->field_col, NULL,
              "column %zu has no name", t->field + 1);
        return;
    }
    char *dot = strrchr(name, '.');
    int profit = dot && strcmp(dot, ".profit") == 0;
    if (!dot || dot == name || (!profit && strcmp(dot, ".hours") != 0)) {
        tfail(t, t->field_line, t->field_col, name,
              "unknown column: expected '<job>.hours' or '<job>.profit'");
        return;
    }
    *dot = '\0';
    long j = surety_model_find_job(model, name);
    long near = j < 0 ? surety_model_nearest_job(model, name) : -1;
    *dot = '.';
    if (j < 0) {
        if (near >= 0)
            tfail(t, t->field_line, t->field_col, name, "unknown column: no "
                  "job '%.*s' (did you mean '%s%s'?)", (int)(dot - name),
                  name, model->jobs[near].id, dot);
        else
            tfail(t, t->field_line, t->field_col, name,
                  "unknown column: no job '%.*s'", (int)(dot - name), name);
        return;
    }
    long *have = profit ? t->profit_col : t->hours_col;
    if (have[j] >= 0) {
        tfail(t, t->field_line, t->field_col, name,
              "column appears twice (columns %ld and %zu)", have[j] + 1,
              t->field + 1);
        return;
    }
    have[j] = (long)t->field;
}

static void data_cell(tparse *t, const char *s, size_t len)
{
    size_t ncols = t->names.len;
    const char *name = col_name(t, t->field);
    if (t->field >= ncols) {
        tfail(t, t->field_line, t->field_col, NULL, "row %zu has more cells "
              "than the header's %zu", t->record, ncols);
        return;
    }
    if (!s || len == 0) {
        tfail(t, t->field_line, t->field_col, name, "empty cell (row %zu)",
              t->record);
        return;
    }
    char *end;
    double v = strtod(s, &end);
    if (end != s + len) {
        tfail(t, t->field_line, t->field_col, name,
              "'%.40s' is not a number (row %zu)", s, t->record);
        return;
    }
    if (!isfinite(v)) {
        tfail(t, t->field_line, t->field_col, name,
              "'%.40s' is not a finite number (row %zu)", s, t->record);
        return;
    }
    size_t dot = strlen(name);
    int is_hours = dot >= 6 && strcmp(name + dot - 6, ".hours") == 0;
    if (is_hours && v < 0) {
        tfail(t, t->field_line, t->field_col, name,
              "hours cannot be negative (got %g, row %zu)", v, t->record);
        return;
    }
    t->row[t->field] = v;
}

static void on_field(void *s, size_t len, void *data)
{
    tparse *t = data;
    if (t->failed)
        return;
    if (t->field == 0)
        t->rec_line = t->field_line;
    if (t->record == 0)
        header_cell(t, s, len);
    else
        data_cell(t, s, len);
    t->field++;
    t->pending = 1;
}

static void end_header(tparse *t)
{
    const surety_model *model = t->model;
    for (size_t j = 0; j < model->n; j++) {
        if (t->hours_col[j] < 0) {
            char col[MAX_COL];
            snprintf(col, sizeof col, "%s.hours", model->jobs[j].id);
            tfail(t, t->rec_line, 0, col, "missing column: a scenario table "
                  "must give hours for every job");
            return;
        }
    }
    t->row = surety_xmalloc(t->names.len, sizeof *t->row);
    if (!t->row)
        tfail(t, t->rec_line, 0, NULL, "out of memory");
}

static void end_row(tparse *t)
{
    const surety_model *model = t->model;
    size_t ncols = t->names.len;
    if (t->field < ncols) {
        tfail(t, t->rec_line, 1, NULL, "row %zu has %zu cells, the header "
              "has %zu", t->record, t->field, ncols);
        return;
    }
    if (surety_vec_reserve(&t->hours, t->hours.len + model->n) < 0
        || surety_vec_reserve(&t->profit, t->profit.len + model->n) < 0) {
        tfail(t, t->rec_line, 0, NULL, "out of memory");
        return;
    }
    double *h = (double *)t->hours.data + t->hours.len;
    double *p = (double *)t->profit.data + t->profit.len;
    for (size_t j = 0; j < model->n; j++) {
        h[j] = t->row[t->hours_col[j]];
        p[j] = t->profit_col[j] >= 0 ? t->row[t->profit_col[j]] : NAN;
    }
    t->hours.len += model->n;
    t->profit.len += model->n;
}

static void on_record(int c, void *data)
{
    (void)c;
    tparse *t = data;
    if (t->failed)
        return;
    if (t->record == 0)
        end_header(t);
    else
        end_row(t);
    t->record++;
    t->field = 0;
    t->pending = 2;
}

static void tparse_free(tparse *t)
{
    for (size_t c = 0; c < t->names.len; c++)
        surety_xfree(((char **)t->names.data)[c]);
    surety_vec_free(&t->names);
    surety_xfree(t->hours_col);
    surety_xfree(t->profit_col);
    surety_xfree(t->row);
    surety_vec_free(&t->hours);
    surety_vec_free(&t->profit);
}

surety_code surety_table_read(const surety_model *model, const char *path,
                              surety_table **out, surety_error *err)
{
    if (out)
        *out = NULL;
    if (!model || !path || !out) {
        surety_error_set(err, path, 0, 0, NULL,
                         "surety_table_read: NULL model, path or result");
        return SURETY_EUSAGE;
    }
    size_t len = 0;
    char *buf = surety_read_file(path, &len, err);
    if (!buf)
        return SURETY_EINPUT;

    tparse t;
    memset(&t, 0, sizeof t);
    t.model = model;
    t.path = path;
    t.line = t.col = 1;
    t.pending = 2;
    surety_vec_init(&t.names, sizeof(char *));
    surety_vec_init(&t.hours, sizeof(double));
    surety_vec_init(&t.profit, sizeof(double));
    t.hours_col = surety_xmalloc(model->n, sizeof *t.hours_col);
    t.profit_col = surety_xmalloc(model->n, sizeof *t.profit_col);
    struct csv_parser p;
    int init = csv_init(&p, CSV_STRICT | CSV_STRICT_FINI | CSV_APPEND_NULL
                                | CSV_EMPTY_IS_NULL);
    if (init != 0 || !t.hours_col || !t.profit_col) {
        if (init == 0)
            csv_free(&p);
        tparse_free(&t);
        surety_xfree(buf);
        surety_error_set(err, path, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    for (size_t j = 0; j < model->n; j++)
        t.hours_col[j] = t.profit_col[j] = -1;

    /* A spreadsheet's byte-order mark is not part of the first name. */
    size_t pos = len >= 3 && memcmp(buf, "\xEF\xBB\xBF", 3) == 0 ? 3 : 0;
    /* libcsv reports cells but not where they sit. Feeding it chunks
     * that end at every ',', CR and LF means a callback can fire only at a
     * chunk's last byte, so the position of each cell's first byte is known
     * before the chunk is parsed. */
    while (pos < len && !t.failed) {
        size_t end = pos;
        while (end < len && buf[end] != ',' && buf[end] != '\n'
               && buf[end] != '\r')
            end++;
        if (end < len)
            end++;
        if (t.pending) {
            int col = t.col;
            for (size_t q = pos; q < end; q++) {
                unsigned char c = (unsigned char)buf[q];
                int skip = c == ' ' || c == '\t'
                           || (t.pending == 2 && (c == '\r' || c == '\n'));
                if (!skip) {
                    t.pending = 0;
                    t.field_line = t.line;
                    t.field_col = col;
                    break;
                }
                if ((c & 0xC0) != 0x80)
                    col++;
            }
        }
        size_t got = csv_parse(&p, buf + pos, end - pos, on_field, on_record,
                               &t);
        if (got != end - pos) {
            int col = t.col;
            for (size_t q = pos; q < pos + got; q++)
                col += ((unsigned char)buf[q] & 0xC0) != 0x80;
            tfail(&t, t.line, col, NULL, csv_error(&p) == CSV_EPARSE
                  ? "malformed CSV: a quote inside an unquoted cell, or text "
                    "after a closing quote" : "out of memory");
        }
        for (; pos < end; pos++) {
            unsigned char c = (unsigned char)buf[pos];
            if (c == '\n') {
                t.line++;
                t.col = 1;
            } else if ((c & 0xC0) != 0x80) {
                t.col++;
            }
        }
    }
    if (!t.failed && csv_fini(&p, on_field, on_record, &t) != 0)
        tfail(&t, t.line, t.col, NULL,
              "malformed CSV: a quoted cell is not closed");
    csv_free(&p);
    surety_xfree(buf);

    if (!t.failed && t.record == 0)
        tfail(&t, 1, 0, NULL, "empty file: expected a header row of "
              "'<job>.hours' columns");
    if (!t.failed && t.record == 1)
        tfail(&t, t.line, 0, NULL, "no data rows: a scenario table needs at "
              "least one scenario");
    surety_table *tab = NULL;
    if (!t.failed) {
        tab = surety_xcalloc(1, sizeof *tab);
        if (tab)
            tab->path = surety_xstrdup(path);
        if (!tab || !tab->path) {
            surety_xfree(tab);
            tab = NULL;
            tfail(&t, 0, 0, NULL, "out of memory");
        }
    }
    if (t.failed) {
        if (err)
            *err = t.err;
        tparse_free(&t);
        return strcmp(t.err.message, "out of memory") == 0 ? SURETY_EINTERNAL
                                                            : SURETY_EINPUT;
    }
    tab->N = t.record - 1;
    tab->hours = t.hours.data;
    tab->profit = t.profit.data;
    t.hours.data = t.profit.data = NULL;
    tparse_free(&t);
    *out = tab;
    return SURETY_OK;
}

void surety_table_free(surety_table *t)
{
    if (!t)
        return;
    surety_xfree(t->hours);
    surety_xfree(t->profit);
    surety_xfree(t->path);
    surety_xfree(t);
}
