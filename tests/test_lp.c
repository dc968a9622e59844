/* test_lp.c - the dense dual simplex against GLPK (glpsol) on random,
 * degenerate, unbounded and infeasible LPs, warm starts and bases.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "lp/dense.h"
#include "lp/simplex.h"

/* ------------------------------------------------------------------ */
/* A random LP and its reference solution by GLPK                       */
/* ------------------------------------------------------------------ */

typedef struct prob {
    size_t n, m;
    double *c, *lo, *hi; /* n */
    double *A;           /* m x n */
    double *rlo, *rhi;   /* m */
} prob;

typedef struct ref {
    int status; /* SURETY_LP_OPTIMAL, _INFEASIBLE, _UNBOUNDED, or -1 */
    double obj;
} ref;

static uint64_t rs;

static double urand(void)
{
    rs ^= rs >> 12;
    rs ^= rs << 25;
    rs ^= rs >> 27;
    return (double)((rs * 2685821657736338717ULL) >> 11) * 0x1.0p-53;
}

static int irand(int lo, int hi)
{
    return lo + (int)(urand() * (hi - lo + 1));
}

static prob prob_new(size_t n, size_t m)
{
    prob p = {n,
              m,
              calloc(n, 8),
              calloc(n, 8),
              calloc(n, 8),
              calloc(m * n + 1, 8),
              calloc(m + 1, 8),
              calloc(m + 1, 8)};
    return p;
}

static void prob_free(prob *p)
{
    free(p->c);
    free(p->lo);
    free(p->hi);
    free(p->A);
    free(p->rlo);
    free(p->rhi);
}

static void put_term(FILE *f, double a, size_t j, int *first)
{
    if (a == 0.0)
        return;
    fprintf(f, " %s %.17g x%zu", a < 0 ? "-" : (*first ? "" : "+"), fabs(a), j);
    *first = 0;
}

static void put_row(FILE *f, const prob *p, size_t i, const char *tag, const char *sense,
                    double rhs)
{
    int first = 1;
    fprintf(f, " r%zu%s:", i, tag);
    for (size_t j = 0; j < p->n; j++)
        put_term(f, p->A[i * p->n + j], j, &first);
    if (first)
        fprintf(f, " 0 x0");
    fprintf(f, " %s %.17g\n", sense, rhs);
}

/* CPLEX LP format as read by glpsol --lp; a ranged row is written as its
 * two sides, which is the same LP. */
static void write_lp(const prob *p, const char *path)
{
    FILE *f = fopen(path, "w");
    cr_assert(f, "cannot write %s", path);
    fprintf(f, "Maximize\n obj:");
    int first = 1;
    for (size_t j = 0; j < p->n; j++)
        put_term(f, p->c[j], j, &first);
    if (first)
        fprintf(f, " 0 x0");
    fprintf(f, "\nSubject To\n");
    int rows = 0;
    for (size_t i = 0; i < p->m; i++) {
        double l = p->rlo[i], u = p->rhi[i];
        if (l == u) {
            put_row(f, p, i, "", "=", l);
        } else {
            if (isfinite(l))
                put_row(f, p, i, "a", ">=", l);
            if (isfinite(u))
                put_row(f, p, i, "b", "<=", u);
        }
        rows += isfinite(l) || isfinite(u);
    }
    if (!rows)
        fprintf(f, " dummy: 0 x0 >= -1\n");
    fprintf(f, "Bounds\n");
    for (size_t j = 0; j < p->n; j++) {
        double l = p->lo[j], u = p->hi[j];
        if (l == u)
            fprintf(f, " x%zu = %.17g\n", j, l);
        else if (!isfinite(l) && !isfinite(u))
            fprintf(f, " x%zu free\n", j);
        else if (!isfinite(l))
            fprintf(f, " -inf <= x%zu <= %.17g\n", j, u);
        else if (!isfinite(u))
            fprintf(f, " x%zu >= %.17g\n", j, l);
        else
            fprintf(f, " %.17g <= x%zu <= %.17g\n", l, j, u);
    }
    fprintf(f, "End\n");
    fclose(f);
}

static char tmpdir[256];

static void remove_tmpdir(void)
{
    const char *names[] = {"p.lp", "p.raw", "log"};
    char path[512];
    for (int t = 0; t < 3; t++) {
        snprintf(path, sizeof path, "%s/%s", tmpdir, names[t]);
        unlink(path);
    }
    rmdir(tmpdir);
}

static void need_glpsol(void)
{
    /* Fail loudly: the set-up installs glpk-utils. */
    cr_assert(system("glpsol --version > /dev/null 2>&1") == 0,
              "glpsol (Debian glpk-utils) is required by this test");
    if (!tmpdir[0]) {
        snprintf(tmpdir, sizeof tmpdir, "/tmp/surety_lp_XXXXXX");
        cr_assert(mkdtemp(tmpdir), "mkdtemp failed");
        atexit(remove_tmpdir);
    }
}

/* Reference by GLPK 5.0's simplex, presolver off so that infeasible and
 * unbounded LPs get a status. From glpsol's raw solution file (-w):
 * "s bas m n pst dst obj", pst/dst 'f' feasible, 'n' no feasible one. */
static ref glpk_solve(const prob *p)
{
    char lp[512], raw[512], cmd[2048];
    snprintf(lp, sizeof lp, "%s/p.lp", tmpdir);
    snprintf(raw, sizeof raw, "%s/p.raw", tmpdir);
    write_lp(p, lp);
    unlink(raw);
    snprintf(cmd, sizeof cmd, "glpsol --nopresol --lp %s -w %s > %s/log 2>&1", lp, raw, tmpdir);
    cr_assert(system(cmd) == 0, "glpsol failed on %s", lp);
    FILE *f = fopen(raw, "r");
    cr_assert(f, "glpsol wrote no solution");
    char line[512];
    ref r = {-1, NAN};
    while (fgets(line, sizeof line, f)) {
        char pst, dst;
        unsigned mm, nn;
        double obj;
        if (sscanf(line, "s bas %u %u %c %c %lf", &mm, &nn, &pst, &dst, &obj) == 5) {
            if (pst == 'f' && dst == 'f')
                r.status = SURETY_LP_OPTIMAL;
            else if (pst == 'n')
                r.status = SURETY_LP_INFEASIBLE;
            else if (pst == 'f' && dst == 'n')
                r.status = SURETY_LP_UNBOUNDED;
            r.obj = obj;
        }
    }
    fclose(f);
    return r;
}

static surety_lp *build(const prob *p)
{
    surety_lp *lp = surety_lp_create(p->n, p->c, p->lo, p->hi);
    cr_assert(lp);
    for (size_t i = 0; i < p->m; i++)
        cr_assert(surety_lp_add_row(lp, p->A + i * p->n, p->rlo[i], p->rhi[i]) == (long)i);
    return lp;
}

static int close_rel(double a, double b, double tol)
{
    return fabs(a - b) <= tol * fmax(1.0, fmax(fabs(a), fabs(b)));
}

/* Checks an optimal answer against the definition of optimality (no outside
 * source needed: these are the LP optimality conditions, e.g. Chvatal 1983,
 * ch. 5 and 9): x within bounds and rows; reduced costs d = c - A^T y;
 * complementary slackness with the signs of a maximisation; and c^T x
 * equal to the dual objective. */
static void check_kkt(const prob *p, surety_lp *lp)
{
    size_t n = p->n, m = p->m;
    double *x = calloc(n, 8), *act = calloc(m + 1, 8), *y = calloc(m + 1, 8), *d = calloc(n, 8);
    surety_lp_get_x(lp, x);
    surety_lp_get_row_activity(lp, act);
    surety_lp_get_row_duals(lp, y);
    surety_lp_get_redcosts(lp, d);
    double scale = 1.0, cx = 0.0;
    for (size_t j = 0; j < n; j++) {
        scale = fmax(scale, fabs(x[j]));
        cx += p->c[j] * x[j];
    }
    double tol = 1e-6 * scale;
    cr_expect(close_rel(cx, surety_lp_obj(lp), 1e-9), "obj %g vs c^T x %g", surety_lp_obj(lp), cx);
    double dualobj = 0.0;
    for (size_t j = 0; j < n; j++) {
        cr_expect(x[j] >= p->lo[j] - tol && x[j] <= p->hi[j] + tol, "x%zu = %g outside [%g, %g]", j,
                  x[j], p->lo[j], p->hi[j]);
        double dj = p->c[j];
        for (size_t i = 0; i < m; i++)
            dj -= p->A[i * n + j] * y[i];
        cr_expect(fabs(dj - d[j]) <= 1e-6 * (1 + fabs(dj)), "reduced cost %zu: %g vs %g", j, d[j],
                  dj);
        /* max: d_j > 0 only at an upper bound, d_j < 0 only at a lower */
        if (dj > 1e-7)
            cr_expect(x[j] >= p->hi[j] - tol, "d%zu = %g but x below hi", j, dj);
        if (dj < -1e-7)
            cr_expect(x[j] <= p->lo[j] + tol, "d%zu = %g but x above lo", j, dj);
        if (fabs(dj) > 1e-7)
            dualobj += dj * x[j];
    }
    for (size_t i = 0; i < m; i++) {
        double a = 0.0;
        for (size_t j = 0; j < n; j++)
            a += p->A[i * n + j] * x[j];
        cr_expect(fabs(a - act[i]) <= tol, "row %zu activity", i);
        cr_expect(a >= p->rlo[i] - tol && a <= p->rhi[i] + tol, "row %zu = %g outside [%g, %g]", i,
                  a, p->rlo[i], p->rhi[i]);
        if (y[i] > 1e-7)
            cr_expect(a >= p->rhi[i] - tol, "y%zu = %g on a slack row", i, y[i]);
        if (y[i] < -1e-7)
            cr_expect(a <= p->rlo[i] + tol, "y%zu = %g on a slack row", i, y[i]);
        if (fabs(y[i]) > 1e-7)
            dualobj += y[i] * (y[i] > 0 ? p->rhi[i] : p->rlo[i]);
    }
    cr_expect(close_rel(dualobj, cx, 1e-6), "dual objective %g vs %g", dualobj, cx);
    free(x);
    free(act);
    free(y);
    free(d);
}

/* A random LP of the given shape. kind selects the flavour:
 * 0 general (mixed bounds and rows, feasible by construction),
 * 1 degenerate (integer data with many ties, zero right-hand sides),
 * 2 unconstrained right-hand sides (often infeasible or unbounded),
 * 3 the branch-and-bound shape (0 <= x <= 1, nonnegative rows <=, some
 *   rows repeated or scaled copies of earlier ones). */
static prob random_prob(size_t n, size_t m, int kind)
{
    prob p = prob_new(n, m);
    double *x0 = calloc(n, 8);
    for (size_t j = 0; j < n; j++) {
        double u = urand(), l = irand(-5, 5);
        if (kind == 3) {
            p.lo[j] = 0;
            p.hi[j] = 1;
        } else if (u < 0.4) {
            p.lo[j] = 0;
            p.hi[j] = INFINITY;
        } else if (u < 0.65) {
            p.lo[j] = l;
            p.hi[j] = l + irand(0, 6);
        } else if (u < 0.78) {
            p.lo[j] = -INFINITY;
            p.hi[j] = INFINITY;
        } else if (u < 0.88) {
            p.lo[j] = -INFINITY;
            p.hi[j] = l;
        } else if (u < 0.93) {
            p.lo[j] = p.hi[j] = l;
        } else {
            p.lo[j] = l;
            p.hi[j] = INFINITY;
        }
        double a = isfinite(p.lo[j]) ? p.lo[j] : p.hi[j] - 3;
        double b = isfinite(p.hi[j]) ? p.hi[j] : a + 3;
        if (!isfinite(a))
            a = -3, b = 3;
        x0[j] = kind == 1 ? (isfinite(p.lo[j]) ? p.lo[j] : (isfinite(p.hi[j]) ? p.hi[j] : 0))
                          : a + (b - a) * urand();
        p.c[j] = kind == 1 ? irand(-2, 3) : (urand() < 0.1 ? 0 : urand() * 20 - 8);
        if (kind == 3)
            p.c[j] = 1 + irand(0, 9);
    }
    for (size_t i = 0; i < m; i++) {
        double act = 0;
        int nz = 0;
        for (size_t j = 0; j < n; j++) {
            double a;
            if (kind == 3)
                a = urand() < 0.3 ? 0 : irand(1, 9);
            else if (kind == 1)
                a = urand() < 0.5 ? 0 : irand(-3, 3);
            else
                a = urand() < 0.25 ? 0 : urand() * 10 - 5;
            p.A[i * n + j] = a;
            nz += a != 0;
            act += a * x0[j];
        }
        if (!nz) {
            p.A[i * n + (size_t)irand(0, (int)n - 1)] = 1;
            act = 0;
            for (size_t j = 0; j < n; j++)
                act += p.A[i * n + j] * x0[j];
        }
        double u = urand();
        double gap = kind == 1 ? (urand() < 0.6 ? 0 : irand(0, 3)) : urand() * 5;
        if (kind == 2)
            act = urand() * 20 - 10;
        if (kind == 3) {
            p.rlo[i] = -INFINITY;
            p.rhi[i] = (double)irand(0, 4 * (int)n);
        } else if (u < 0.45) {
            p.rlo[i] = -INFINITY;
            p.rhi[i] = act + gap;
        } else if (u < 0.65) {
            p.rlo[i] = act - gap;
            p.rhi[i] = INFINITY;
        } else if (u < 0.8) {
            p.rlo[i] = p.rhi[i] = act;
        } else if (u < 0.95) {
            p.rlo[i] = act - gap;
            p.rhi[i] = act + gap + urand() * 3;
        } else {
            p.rlo[i] = -INFINITY;
            p.rhi[i] = INFINITY;
        }
    }
    if (kind == 3)
        for (size_t i = 1; i < m; i++)
            if (urand() < 0.15) {
                size_t src = (size_t)irand(0, (int)i - 1);
                double f = urand() < 0.5 ? 1.0 : 2.0;
                for (size_t j = 0; j < n; j++)
                    p.A[i * n + j] = f * p.A[src * n + j];
                p.rhi[i] = f * p.rhi[src];
            }
    free(x0);
    return p;
}

/* Kind 4: rows and columns scaled by factors in [1e-2, 1e2], the same LP
 * in other units. */
static void scale_prob(prob *pp)
{
    prob p = *pp;
    size_t n = p.n, m = p.m;
    for (size_t i = 0; i < m; i++) {
        double f = pow(10.0, urand() * 4 - 2);
        for (size_t j = 0; j < n; j++)
            p.A[i * n + j] *= f;
        p.rlo[i] *= f;
        p.rhi[i] *= f;
    }
    for (size_t j = 0; j < n; j++) {
        /* x_j = f x'_j: column j of A and c_j scale by f, bounds by 1/f */
        double f = pow(10.0, urand() * 4 - 2);
        for (size_t i = 0; i < m; i++)
            p.A[i * n + j] *= f;
        p.c[j] *= f;
        p.lo[j] /= f;
        p.hi[j] /= f;
    }
}

static void compare(const prob *p, surety_lp *lp, surety_lp_status st, const char *what)
{
    ref r = glpk_solve(p);
    cr_assert(r.status >= 0, "%s: GLPK gave no definite status", what);
    cr_assert_eq((int)st, r.status, "%s (n=%zu m=%zu): status %d, GLPK %d (obj %.10g)", what, p->n,
                 p->m, (int)st, r.status, r.obj);
    if (st == SURETY_LP_OPTIMAL) {
        /* GLPK's optimum, compared to 1e-7 relative. */
        cr_assert(close_rel(surety_lp_obj(lp), r.obj, 1e-7),
                  "%s (n=%zu m=%zu): obj %.12g, GLPK %.12g", what, p->n, p->m, surety_lp_obj(lp),
                  r.obj);
        check_kkt(p, lp);
    }
}

/* ------------------------------------------------------------------ */
/* Tests                                                                */
/* ------------------------------------------------------------------ */

/* V. Chvatal, Linear Programming (Freeman 1983), ch. 2, the first worked
 * dictionary example (from memory): max 5x1 + 4x2 + 3x3 subject to
 * 2x1 + 3x2 + x3 <= 5, 4x1 + x2 + 2x3 <= 11, 3x1 + 4x2 + 2x3 <= 8, x >= 0;
 * optimum z = 13 at x = (2, 0, 1). GLPK confirms it below. */
Test(lp, chvatal_example)
{
    need_glpsol();
    prob p = prob_new(3, 3);
    double c[] = {5, 4, 3}, A[] = {2, 3, 1, 4, 1, 2, 3, 4, 2}, b[] = {5, 11, 8};
    memcpy(p.c, c, sizeof c);
    memcpy(p.A, A, sizeof A);
    for (int j = 0; j < 3; j++) {
        p.lo[j] = 0;
        p.hi[j] = INFINITY;
        p.rlo[j] = -INFINITY;
        p.rhi[j] = b[j];
    }
    surety_lp *lp = build(&p);
    cr_assert_eq(surety_lp_solve(lp), SURETY_LP_OPTIMAL);
    cr_expect(fabs(surety_lp_obj(lp) - 13.0) < 1e-12, "z = %.15g", surety_lp_obj(lp));
    double x[3];
    surety_lp_get_x(lp, x);
    cr_expect(fabs(x[0] - 2) < 1e-12 && fabs(x[1]) < 1e-12 && fabs(x[2] - 1) < 1e-12);
    /* The final dictionary there reads z = 13 - 3 x2 - x4 - x6 (x4, x6 the
     * slacks of rows 1 and 3), so the duals are y = (1, 0, 1) and the
     * reduced costs (0, -3, 0); checked by hand: 5*1 + 8*1 = 13. */
    double y[3], d[3];
    surety_lp_get_row_duals(lp, y);
    surety_lp_get_redcosts(lp, d);
    cr_expect(fabs(y[0] - 1) < 1e-12 && fabs(y[1]) < 1e-12 && fabs(y[2] - 1) < 1e-12,
              "y = %g %g %g", y[0], y[1], y[2]);
    cr_expect(fabs(d[0]) < 1e-12 && fabs(d[1] + 3) < 1e-12 && fabs(d[2]) < 1e-12, "d = %g %g %g",
              d[0], d[1], d[2]);
    compare(&p, lp, SURETY_LP_OPTIMAL, "chvatal");
    surety_lp_free(lp);
    prob_free(&p);
}

/* Counters summed over a batch, to check that the paths a batch is meant
 * to exercise (artificial bounds, the primal phase, bound flips,
 * perturbation) were taken. */
static surety_lp_stats total;
static long bland_steps; /* primal steps of LPs run on Bland's rule */

static void add_stats(const surety_lp *lp)
{
    surety_lp_stats s;
    surety_lp_get_stats(lp, &s);
    total.solves += s.solves;
    total.dual_iterations += s.dual_iterations;
    total.primal_iterations += s.primal_iterations;
    total.bound_flips += s.bound_flips;
    total.refactors += s.refactors;
    total.singular += s.singular;
    total.perturbations += s.perturbations;
    total.artificial += s.artificial;
}

static void random_batch(int kind, int count, uint64_t seed)
{
    need_glpsol();
    rs = seed;
    memset(&total, 0, sizeof total);
    bland_steps = 0;
    for (int t = 0; t < count; t++) {
        size_t n, m;
        int shape = t % 4;
        if (shape == 0) { /* tall: many more rows than columns */
            n = (size_t)irand(1, 8);
            m = (size_t)irand(10, 80);
        } else if (shape == 1) { /* wide */
            n = (size_t)irand(10, 40);
            m = (size_t)irand(1, 8);
        } else {
            n = (size_t)irand(2, 25);
            m = (size_t)irand(2, 25);
        }
        prob p = random_prob(n, m, kind == 4 ? 0 : kind);
        if (kind == 4)
            scale_prob(&p);
        surety_lp *lp = build(&p);
        /* every other LP runs its primal phase on Bland's rule only */
        if (t % 2)
            surety_lp_set_bland_after(lp, 0);
        surety_lp_status st = surety_lp_solve(lp);
        char what[64];
        snprintf(what, sizeof what, "kind %d instance %d", kind, t);
        compare(&p, lp, st, what);
        add_stats(lp);
        if (t % 2) {
            surety_lp_stats s;
            surety_lp_get_stats(lp, &s);
            bland_steps += s.primal_iterations;
        }
        surety_lp_free(lp);
        prob_free(&p);
    }
}

Test(lp, random_general)
{
    random_batch(0, 150, 11);
    /* free and one-sided columns need artificial bounds and a primal
     * clean-up; boxed ones get flipped by the ratio test */
    cr_expect_gt(total.artificial, 0);
    cr_expect_gt(total.primal_iterations, 0);
    cr_expect_gt(bland_steps, 0, "Bland's rule never ran");
    cr_expect_gt(total.bound_flips, 0);
}

Test(lp, random_degenerate)
{
    random_batch(1, 120, 23);
}

/* Set-cover LPs (min sum x, every row covered at least once, 0 <= x <= 1)
 * are highly dual degenerate: the ties make the dual simplex stall and
 * exercise its cost perturbation and the clean-up after it. */
Test(lp, random_set_cover)
{
    need_glpsol();
    rs = 61;
    memset(&total, 0, sizeof total);
    for (int t = 0; t < 60; t++) {
        size_t n = (size_t)irand(60, 100), m = n * (size_t)irand(2, 4);
        prob p = prob_new(n, m);
        for (size_t j = 0; j < n; j++) {
            p.c[j] = t % 2 ? -1.0 : -(double)irand(1, 3);
            p.lo[j] = 0;
            p.hi[j] = 1;
        }
        for (size_t i = 0; i < m; i++) {
            for (size_t j = 0; j < n; j++)
                p.A[i * n + j] = urand() < 0.1 ? 1 : 0;
            p.A[i * n + (size_t)irand(0, (int)n - 1)] = 1;
            p.rlo[i] = 1;
            p.rhi[i] = INFINITY;
        }
        surety_lp *lp = build(&p);
        surety_lp_status st = surety_lp_solve(lp);
        compare(&p, lp, st, "set cover");
        add_stats(lp);
        surety_lp_free(lp);
        prob_free(&p);
    }
    cr_expect_gt(total.perturbations, 0, "no set-cover LP stalled");
}

Test(lp, random_badly_scaled)
{
    random_batch(4, 100, 53);
}

Test(lp, random_often_infeasible_or_unbounded)
{
    random_batch(2, 120, 37);
}

Test(lp, random_branch_and_bound_shape)
{
    random_batch(3, 60, 41);
    /* all columns boxed: never artificial bounds */
    cr_expect_eq(total.artificial, 0);
    cr_expect_gt(total.bound_flips, 0);
}

/* Hand-made corner cases whose answer is plain from the algebra. */
Test(lp, unbounded_and_infeasible)
{
    double c[] = {1, 1};
    double lo[] = {0, -INFINITY}, hi[] = {INFINITY, INFINITY};
    surety_lp *lp = surety_lp_create(2, c, lo, hi);
    double a[] = {1, -1};
    surety_lp_add_row(lp, a, 1, INFINITY); /* x1 - x2 >= 1 */
    cr_expect_eq(surety_lp_solve(lp), SURETY_LP_UNBOUNDED);
    cr_expect(isinf(surety_lp_obj(lp)) && surety_lp_obj(lp) > 0);
    surety_lp_free(lp);

    lp = surety_lp_create(2, c, NULL, NULL);
    double b[] = {1, 1};
    surety_lp_add_row(lp, b, 5, INFINITY);
    surety_lp_add_row(lp, b, -INFINITY, 4);
    cr_expect_eq(surety_lp_solve(lp), SURETY_LP_INFEASIBLE);
    cr_expect(isinf(surety_lp_obj(lp)) && surety_lp_obj(lp) < 0);
    surety_lp_free(lp);

    /* no rows: boxed optimum at the bounds */
    double lo2[] = {-1, 2}, hi2[] = {3, 7}, c2[] = {2, -1};
    lp = surety_lp_create(2, c2, lo2, hi2);
    cr_expect_eq(surety_lp_solve(lp), SURETY_LP_OPTIMAL);
    cr_expect(fabs(surety_lp_obj(lp) - 4.0) < 1e-12);
    surety_lp_free(lp);

    /* misuse is refused, not a crash */
    double badlo[] = {1}, badhi[] = {0};
    cr_expect_null(surety_lp_create(1, NULL, badlo, badhi));
    cr_expect_null(surety_lp_create(0, NULL, NULL, NULL));
}

/* Rows arrive in batches (as from a cutting-plane loop); each re-solve
 * starts from the previous basis and must equal a cold solve of the same
 * rows, and at the end GLPK's optimum. */
Test(lp, warm_start_after_rows)
{
    need_glpsol();
    rs = 101;
    long warm_iters = 0, cold_iters = 0;
    for (int t = 0; t < 40; t++) {
        int kind = t % 4 == 3 ? 3 : t % 2;
        size_t n = (size_t)irand(3, 20), m = (size_t)irand(8, 60);
        prob p = random_prob(n, m, kind);
        surety_lp *warm = surety_lp_create(n, p.c, p.lo, p.hi);
        size_t done = 0;
        while (done < m) {
            size_t add = (size_t)irand(1, 10);
            if (done + add > m)
                add = m - done;
            for (size_t i = done; i < done + add; i++)
                surety_lp_add_row(warm, p.A + i * n, p.rlo[i], p.rhi[i]);
            done += add;
            surety_lp_status sw = surety_lp_solve(warm);
            warm_iters += surety_lp_iterations(warm);
            prob part = p;
            part.m = done;
            surety_lp *cold = build(&part);
            surety_lp_status sc = surety_lp_solve(cold);
            cold_iters += surety_lp_iterations(cold);
            cr_assert_eq(sw, sc, "instance %d rows %zu: warm %d cold %d", t, done, sw, sc);
            if (sw == SURETY_LP_OPTIMAL)
                cr_assert(close_rel(surety_lp_obj(warm), surety_lp_obj(cold), 1e-9),
                          "instance %d rows %zu: warm %.12g cold %.12g", t, done,
                          surety_lp_obj(warm), surety_lp_obj(cold));
            surety_lp_free(cold);
            if (sw == SURETY_LP_INFEASIBLE)
                break;
        }
        p.m = done;
        compare(&p, warm, surety_lp_status_of(warm), "warm rows");
        p.m = m;
        surety_lp_free(warm);
        prob_free(&p);
    }
    /* the point of warm starts: less work in total than cold solves */
    cr_expect_lt(warm_iters, cold_iters, "warm %ld vs cold %ld iterations", warm_iters, cold_iters);
}

/* Branching: a sequence of column fixings and bound changes, each
 * re-solved warm, must equal a cold solve and GLPK. */
Test(lp, warm_start_after_bound_changes)
{
    need_glpsol();
    rs = 202;
    for (int t = 0; t < 30; t++) {
        int kind = t % 3 == 0 ? 3 : 0;
        size_t n = (size_t)irand(3, 20), m = (size_t)irand(3, 40);
        prob p = random_prob(n, m, kind);
        surety_lp *warm = build(&p);
        surety_lp_solve(warm);
        for (int step = 0; step < 8; step++) {
            size_t j = (size_t)irand(0, (int)n - 1);
            double l, u;
            if (kind == 3) {
                l = u = (double)irand(0, 1);
                if (urand() < 0.3)
                    l = 0, u = 1;
            } else {
                l = irand(-4, 2);
                u = l + irand(0, 5);
                if (urand() < 0.2)
                    u = INFINITY;
            }
            p.lo[j] = l;
            p.hi[j] = u;
            cr_assert_eq(surety_lp_set_col_bounds(warm, j, l, u), 0);
            if (m > 0 && urand() < 0.3) {
                /* relax or tighten a row too */
                size_t i = (size_t)irand(0, (int)m - 1);
                if (isfinite(p.rhi[i]))
                    p.rhi[i] += irand(-2, 2);
                if (p.rhi[i] < p.rlo[i])
                    p.rhi[i] = p.rlo[i];
                cr_assert_eq(surety_lp_set_row_bounds(warm, i, p.rlo[i], p.rhi[i]), 0);
            }
            surety_lp_status sw = surety_lp_solve(warm);
            surety_lp *cold = build(&p);
            surety_lp_status sc = surety_lp_solve(cold);
            cr_assert_eq(sw, sc, "instance %d step %d: warm %d cold %d", t, step, sw, sc);
            if (sw == SURETY_LP_OPTIMAL)
                cr_assert(close_rel(surety_lp_obj(warm), surety_lp_obj(cold), 1e-9),
                          "instance %d step %d: warm %.12g cold %.12g", t, step,
                          surety_lp_obj(warm), surety_lp_obj(cold));
            if (step % 4 == 3)
                compare(&p, warm, sw, "warm bounds");
            surety_lp_free(cold);
        }
        surety_lp_free(warm);
        prob_free(&p);
    }
}

/* A branch and bound saves the parent's basis, branches, and later
 * restores it: with the parent's bounds back, the parent's optimal basis
 * needs no pivot, and rows added by the child come back basic. */
Test(lp, basis_save_restore)
{
    rs = 303;
    for (int t = 0; t < 20; t++) {
        size_t n = (size_t)irand(4, 30), m = (size_t)irand(4, 40);
        prob p = random_prob(n, m, 3);
        surety_lp *lp = build(&p);
        cr_assert_eq(surety_lp_solve(lp), SURETY_LP_OPTIMAL);
        double root = surety_lp_obj(lp);
        signed char *basis = malloc(n + m + 64);
        cr_assert_eq(surety_lp_get_basis(lp, basis), n + m);
        /* child: fix two columns, add a row */
        surety_lp_set_col_bounds(lp, 0, 1, 1);
        surety_lp_set_col_bounds(lp, 1, 0, 0);
        double *row = calloc(n, 8);
        for (size_t j = 0; j < n; j++)
            row[j] = 1;
        surety_lp_add_row(lp, row, -INFINITY, 1e9);
        surety_lp_solve(lp);
        /* back to the parent */
        surety_lp_set_col_bounds(lp, 0, 0, 1);
        surety_lp_set_col_bounds(lp, 1, 0, 1);
        cr_assert_eq(surety_lp_set_basis(lp, basis, m), 0);
        cr_assert_eq(surety_lp_solve(lp), SURETY_LP_OPTIMAL);
        cr_expect(close_rel(surety_lp_obj(lp), root, 1e-9));
        cr_expect_eq(surety_lp_iterations(lp), 0, "restored optimal basis took %ld iterations",
                     surety_lp_iterations(lp));
        /* a basis with a wrong count of basic variables is refused */
        basis[0] = basis[0] == SURETY_LP_BASIC ? SURETY_LP_AT_LOWER : SURETY_LP_BASIC;
        cr_expect_eq(surety_lp_set_basis(lp, basis, m), -1);
        cr_expect_eq(surety_lp_set_basis(lp, basis, m + 5), -1);
        free(row);
        free(basis);
        surety_lp_free(lp);
        prob_free(&p);
    }
}

/* The sizes the branch and bound meets: a few thousand scenario rows
 * over a couple of hundred [0,1] columns, a tall one, and two wider ones
 * with general bounds, against GLPK. */
Test(lp, larger_instances)
{
    need_glpsol();
    rs = 404;
    size_t shapes[][2] = {{200, 2000}, {60, 1500}, {150, 300}, {40, 400}};
    for (int t = 0; t < 4; t++) {
        prob p = random_prob(shapes[t][0], shapes[t][1], t >= 2 ? 0 : 3);
        surety_lp *lp = build(&p);
        surety_lp_status st = surety_lp_solve(lp);
        compare(&p, lp, st, "larger");
        surety_lp_free(lp);
        prob_free(&p);
    }
}

/* The iteration limit stops a solve with its own status, and a later
 * solve without the limit finishes from where it stopped. */
Test(lp, iteration_limit)
{
    need_glpsol();
    rs = 505;
    prob p = random_prob(30, 60, 3);
    surety_lp *lp = build(&p);
    surety_lp_set_iter_limit(lp, 2);
    cr_assert_eq(surety_lp_solve(lp), SURETY_LP_ITER_LIMIT);
    cr_expect_leq(surety_lp_iterations(lp), 2);
    surety_lp_set_iter_limit(lp, 0);
    surety_lp_status st = surety_lp_solve(lp);
    compare(&p, lp, st, "after limit");
    surety_lp_free(lp);
    prob_free(&p);
}

/* New objective coefficients on a solved LP: the re-solve from the old
 * basis (nonbasics re-placed by the new reduced costs, artificial bounds
 * for free columns, then the primal clean-up) must match GLPK. */
Test(lp, objective_change)
{
    need_glpsol();
    rs = 606;
    for (int t = 0; t < 30; t++) {
        prob p = random_prob((size_t)irand(3, 20), (size_t)irand(3, 30), t % 4 == 3 ? 3 : 0);
        surety_lp *lp = build(&p);
        surety_lp_solve(lp);
        for (size_t j = 0; j < p.n; j++)
            if (urand() < 0.5) {
                p.c[j] = urand() * 20 - 10;
                cr_assert_eq(surety_lp_set_obj(lp, j, p.c[j]), 0);
            }
        surety_lp_status st = surety_lp_solve(lp);
        compare(&p, lp, st, "objective change");
        surety_lp_free(lp);
        prob_free(&p);
    }
}

/* Cutoff for pruning: below GLPK's optimum z* the solve must still reach
 * z*; at or above it, a stop must report a bound in [z*, cutoff] (a valid
 * upper bound by weak duality), and must not stop on a bound above it. */
Test(lp, cutoff)
{
    need_glpsol();
    rs = 707;
    int stopped = 0;
    for (int t = 0; t < 30; t++) {
        prob p = random_prob((size_t)irand(5, 25), (size_t)irand(10, 60), 3);
        ref r = glpk_solve(&p);
        cr_assert_eq(r.status, SURETY_LP_OPTIMAL);
        surety_lp *lp = build(&p);
        surety_lp_set_cutoff(lp, r.obj - 1.0);
        cr_assert_eq(surety_lp_solve(lp), SURETY_LP_OPTIMAL);
        cr_expect(close_rel(surety_lp_obj(lp), r.obj, 1e-7));
        surety_lp_free(lp);

        lp = build(&p);
        double cut = r.obj + 0.5 * fabs(r.obj) * urand();
        surety_lp_set_cutoff(lp, cut);
        surety_lp_status st = surety_lp_solve(lp);
        cr_assert(st == SURETY_LP_OPTIMAL || st == SURETY_LP_CUTOFF);
        if (st == SURETY_LP_CUTOFF) {
            stopped++;
            cr_expect(surety_lp_obj(lp) <= cut);
            cr_expect(surety_lp_obj(lp) >= r.obj - 1e-7 * fmax(1, fabs(r.obj)),
                      "bound %.12g below the optimum %.12g", surety_lp_obj(lp), r.obj);
        } else {
            cr_expect(close_rel(surety_lp_obj(lp), r.obj, 1e-7));
        }
        surety_lp_free(lp);
        prob_free(&p);
    }
    cr_expect_gt(stopped, 0, "no solve stopped at its cutoff");
}

/* The pattern of a branch and bound: nodes keep their parent's basis,
 * fix columns to 0 or 1, add rows, and are solved warm from the parent's
 * basis restored over more rows than it was saved with. Each node's LP
 * must match a cold solve of the same LP, and some nodes GLPK. */
Test(lp, branch_and_bound_pattern)
{
    need_glpsol();
    rs = 808;
    for (int t = 0; t < 6; t++) {
        size_t n = (size_t)irand(10, 30), m = (size_t)irand(10, 40);
        size_t extra = 20;
        prob full = random_prob(n, m + extra, 3);
        prob p = full;
        p.m = m;
        surety_lp *lp = build(&p);
        cr_assert_eq(surety_lp_solve(lp), SURETY_LP_OPTIMAL);
        enum { NODES = 24 };
        signed char *basis[NODES];
        size_t brows[NODES];
        double nlo[NODES][32], nhi[NODES][32];
        basis[0] = malloc(n + m + extra);
        surety_lp_get_basis(lp, basis[0]);
        brows[0] = m;
        for (size_t j = 0; j < n; j++)
            nlo[0][j] = 0, nhi[0][j] = 1;
        for (int v = 1; v < NODES; v++) {
            int parent = irand(0, v - 1);
            memcpy(nlo[v], nlo[parent], sizeof nlo[v]);
            memcpy(nhi[v], nhi[parent], sizeof nhi[v]);
            size_t j = (size_t)irand(0, (int)n - 1);
            nlo[v][j] = nhi[v][j] = (double)irand(0, 1);
            for (size_t jj = 0; jj < n; jj++)
                cr_assert_eq(surety_lp_set_col_bounds(lp, jj, nlo[v][jj], nhi[v][jj]), 0);
            cr_assert_eq(surety_lp_set_basis(lp, basis[parent], brows[parent]), 0);
            if (surety_lp_nrows(lp) < m + extra && urand() < 0.4) {
                size_t i = surety_lp_nrows(lp);
                surety_lp_add_row(lp, full.A + i * n, full.rlo[i], full.rhi[i]);
            }
            surety_lp_status sw = surety_lp_solve(lp);
            prob node = full;
            node.m = surety_lp_nrows(lp);
            memcpy(node.lo, nlo[v], n * sizeof *node.lo);
            memcpy(node.hi, nhi[v], n * sizeof *node.hi);
            surety_lp *cold = build(&node);
            surety_lp_status sc = surety_lp_solve(cold);
            cr_assert_eq(sw, sc, "instance %d node %d: warm %d cold %d", t, v, sw, sc);
            if (sw == SURETY_LP_OPTIMAL)
                cr_assert(close_rel(surety_lp_obj(lp), surety_lp_obj(cold), 1e-9),
                          "instance %d node %d: warm %.12g cold %.12g", t, v, surety_lp_obj(lp),
                          surety_lp_obj(cold));
            if (v % 6 == 0)
                compare(&node, lp, sw, "node");
            surety_lp_free(cold);
            basis[v] = malloc(n + m + extra);
            surety_lp_get_basis(lp, basis[v]);
            brows[v] = surety_lp_nrows(lp);
        }
        for (int v = 0; v < NODES; v++)
            free(basis[v]);
        /* full.lo/hi were overwritten through node; p shares them */
        surety_lp_free(lp);
        prob_free(&full);
    }
}

/* Deleting rows, binding ones included, then re-solving warm must give
 * the optimum of the LP without them (cold solve and GLPK). */
Test(lp, delete_rows)
{
    need_glpsol();
    rs = 909;
    int binding_deleted = 0;
    for (int t = 0; t < 30; t++) {
        size_t n = (size_t)irand(3, 20), m = (size_t)irand(6, 50);
        prob p = random_prob(n, m, t % 2 ? 3 : 0);
        surety_lp *lp = build(&p);
        surety_lp_solve(lp);
        signed char *basis = malloc(n + m);
        surety_lp_get_basis(lp, basis);
        size_t *gone = malloc(m * sizeof *gone), count = 0, keep = 0;
        for (size_t i = 0; i < m; i++) {
            if (urand() < 0.3) {
                gone[count++] = i;
                binding_deleted += basis[n + i] != SURETY_LP_BASIC;
            } else {
                /* compact the reference LP the same way */
                memmove(p.A + keep * n, p.A + i * n, n * sizeof *p.A);
                p.rlo[keep] = p.rlo[i];
                p.rhi[keep] = p.rhi[i];
                keep++;
            }
        }
        cr_assert_eq(surety_lp_del_rows(lp, gone, count), 0);
        cr_assert_eq(surety_lp_nrows(lp), keep);
        p.m = keep;
        surety_lp_status sw = surety_lp_solve(lp);
        surety_lp *cold = build(&p);
        surety_lp_status sc = surety_lp_solve(cold);
        cr_assert_eq(sw, sc, "instance %d: warm %d cold %d", t, sw, sc);
        if (sw == SURETY_LP_OPTIMAL)
            cr_assert(close_rel(surety_lp_obj(lp), surety_lp_obj(cold), 1e-9),
                      "instance %d: warm %.12g cold %.12g", t, surety_lp_obj(lp),
                      surety_lp_obj(cold));
        compare(&p, lp, sw, "after deletion");
        size_t bad_row = keep;
        cr_expect_eq(surety_lp_del_rows(lp, &bad_row, 1), -1);
        surety_lp_free(cold);
        surety_lp_free(lp);
        free(gone);
        free(basis);
        prob_free(&p);
    }
    cr_expect_gt(binding_deleted, 0, "no deleted row was binding");
}

/* The dense kernel behind every basis rebuild: the inverse of the 4 x 4
 * Hilbert matrix H_ij = 1/(i+j+1) has integer entries, here from SciPy
 * 1.10 (scipy.linalg.invhilbert(4, exact=True)); its 1-norm condition
 * number is 28375 (numpy.linalg.cond(hilbert(4), 1)), so rcond must be
 * near 1/28375. A singular matrix must be reported, not inverted. */
Test(lp, dense_inverse)
{
    double H[16], ref[16] = {16,  -120,  240,  -140,  -120, 1200, -2700, 1680,
                             240, -2700, 6480, -4200, -140, 1680, -4200, 2800};
    for (int i = 0; i < 4; i++)
        for (int j = 0; j < 4; j++)
            H[i * 4 + j] = 1.0 / (i + j + 1);
    double rcond;
    cr_assert_eq(surety_dense_invert(4, H, 4, &rcond), 0);
    for (int t = 0; t < 16; t++)
        cr_expect(fabs(H[t] - ref[t]) < 1e-8 * fabs(ref[t]), "entry %d: %.15g vs %g", t, H[t],
                  ref[t]);
    /* dgecon estimates; the estimate is within a small factor */
    cr_expect(rcond > 0.3 / 28375 && rcond < 3.0 / 28375, "rcond %g", rcond);
    double S[4] = {1, 2, 2, 4};
    cr_expect_eq(surety_dense_invert(2, S, 2, &rcond), 1);
}
