/* cbc_util.h - tests' bridge to the CBC MIP solver (coinor-cbc): solve an
 * MPS file, read the status, objective and column values. Header-only.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_TESTS_CBC_UTIL_H
#define SURETY_TESTS_CBC_UTIL_H

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

typedef enum cbc_status {
    CBC_FAILED = -1,    /* cbc missing, crashed, or no solution file */
    CBC_OPTIMAL = 0,
    CBC_INFEASIBLE = 1,
    CBC_STOPPED = 2,    /* any other first word (time limit...) */
} cbc_status;

typedef struct cbc_solution {
    cbc_status status;
    double objective;   /* as CBC prints it: 8 decimals */
    size_t ncols;       /* columns listed (CBC lists the non-zero ones) */
    char **names;
    double *values;
} cbc_solution;

/* 1 when the cbc program can be started (asked once per process). */
static int cbc_available(void)
{
    static int known = -1;
    if (known < 0)
        known = system("cbc -quit >/dev/null 2>&1") == 0;
    return known;
}

/* A fresh temporary directory (caller frees the string), or NULL. */
static char *cbc_tempdir(void)
{
    char *dir = strdup("/tmp/surety-test-XXXXXX");
    if (dir && !mkdtemp(dir)) {
        free(dir);
        return NULL;
    }
    return dir;
}

/* Removes a directory made by cbc_tempdir and every file in it. */
static void cbc_rmdir(const char *dir)
{
    char cmd[1200];
    if (!dir || strncmp(dir, "/tmp/surety-test-", 17) != 0)
        return;
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
    if (system(cmd) != 0)
        fprintf(stderr, "could not remove %s\n", dir);
}

static void cbc_solution_free(cbc_solution *s)
{
    for (size_t t = 0; t < s->ncols; t++)
        free(s->names[t]);
    free(s->names);
    free(s->values);
    memset(s, 0, sizeof *s);
}

/* Parses a solution file written by CBC's `solu` command:
 *   Optimal - objective value -32.00000000
 *         0 x_0_0      1      -10
 * (index, name, value, reduced cost per line). */
static int cbc_read_solution(const char *path, cbc_solution *out)
{
    memset(out, 0, sizeof *out);
    out->status = CBC_FAILED;
    FILE *fp = fopen(path, "r");
    if (!fp)
        return -1;
    char line[4096];
    if (!fgets(line, sizeof line, fp)) {
        fclose(fp);
        return -1;
    }
    if (strncmp(line, "Optimal", 7) == 0)
        out->status = CBC_OPTIMAL;
    else if (strncmp(line, "Infeasible", 10) == 0 ||
             strstr(line, "infeasible"))
        out->status = CBC_INFEASIBLE;
    else
        out->status = CBC_STOPPED;
    const char *ov = strstr(line, "objective value");
    out->objective = ov ? strtod(ov + 15, NULL) : 0;
    size_t cap = 0;
    while (fgets(line, sizeof line, fp)) {
        long idx;
        char name[1024];
        double value;
        /* CBC marks infeasible values with "**" before the index */
        const char *p = line;
        while (*p == ' ' || *p == '*')
            p++;
        if (sscanf(p, "%ld %1023s %lf", &idx, name, &value) != 3)
            continue;
        if (out->ncols == cap) {
            cap = cap ? 2 * cap : 64;
            out->names = realloc(out->names, cap * sizeof *out->names);
            out->values = realloc(out->values, cap * sizeof *out->values);
            if (!out->names || !out->values) {
                fclose(fp);
                return -1;
            }
        }
        out->names[out->ncols] = strdup(name);
        out->values[out->ncols] = value;
        out->ncols++;
    }
    fclose(fp);
    return 0;
}

/* Solves `mps` with CBC to a zero relative gap, working in `dir` (files
 * cbc.sol and cbc.log there). time_limit_s <= 0: none. Returns the
 * status (also in out->status); CBC_FAILED when cbc did not run. */
static cbc_status cbc_solve_mps(const char *mps, const char *dir,
                                double time_limit_s, cbc_solution *out)
{
    char sol[1100], log[1100], cmd[4096], limit[64] = "";
    memset(out, 0, sizeof *out);
    out->status = CBC_FAILED;
    snprintf(sol, sizeof sol, "%s/cbc.sol", dir);
    snprintf(log, sizeof log, "%s/cbc.log", dir);
    unlink(sol);
    if (time_limit_s > 0)
        snprintf(limit, sizeof limit, "-sec %g ", time_limit_s);
    snprintf(cmd, sizeof cmd,
             "cbc '%s' %s-ratioGap 0 -allowableGap 1e-9 -solve -solu '%s' "
             ">'%s' 2>&1",
             mps, limit, sol, log);
    if (system(cmd) != 0)
        return CBC_FAILED;
    if (cbc_read_solution(sol, out) != 0)
        return CBC_FAILED;
    return out->status;
}

/* Value of column `name`, 0 when CBC did not list it (it lists non-zero
 * columns only). */
static double cbc_value(const cbc_solution *s, const char *name)
{
    for (size_t t = 0; t < s->ncols; t++)
        if (strcmp(s->names[t], name) == 0)
            return s->values[t];
    return 0;
}

/* Runs glpsol on `mps` (printable output in `dir`), the MIP or, with
 * relax, only its LP relaxation (--nomip); returns 0 and the objective
 * (the file's sense) when glpsol reports it optimal, -1 otherwise. */
static inline int glpk_run(const char *mps, const char *dir, int relax,
                           double *objective)
{
    char out[1100], cmd[4096], line[1024];
    const char *tag = relax ? "glpk_lp" : "glpk";
    snprintf(out, sizeof out, "%s/%s.out", dir, tag);
    unlink(out);
    snprintf(cmd, sizeof cmd, "glpsol --freemps '%s'%s -o '%s' >'%s/%s.log' 2>&1",
             mps, relax ? " --nomip" : "", out, dir, tag);
    if (system(cmd) != 0)
        return -1;
    FILE *fp = fopen(out, "r");
    if (!fp)
        return -1;
    int optimal = 0, have = 0;
    while (fgets(line, sizeof line, fp)) {
        if (strncmp(line, "Status:", 7) == 0 &&
            strstr(line, relax ? "OPTIMAL" : "INTEGER OPTIMAL"))
            optimal = 1;
        const char *p = strstr(line, "Objective:");
        if (p && (p = strchr(p, '='))) {
            *objective = strtod(p + 1, NULL);
            have = 1;
        }
    }
    fclose(fp);
    return optimal && have ? 0 : -1;
}

/* Solves `mps` with GLPK: 0 and the objective of an optimal integer
 * solution, -1 otherwise. */
static inline int glpk_solve_mps(const char *mps, const char *dir,
                                 double *objective)
{
    return glpk_run(mps, dir, 0, objective);
}

/* The LP relaxation of an MPS file by GLPK (glpsol --nomip): 0 and its
 * objective (the file's sense) when GLPK reports it optimal. */
static inline int glpk_relaxation_mps(const char *mps, const char *dir,
                                      double *objective)
{
    return glpk_run(mps, dir, 1, objective);
}

#endif
