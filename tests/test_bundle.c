/* test_bundle.c - the proximal bundle method (src/solve/bundle.c) on
 * convex piecewise-linear functions whose minimum GLPK finds as an LP.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "solve/bundle.h"

/* A sum of ncomp maxima of K affine pieces each, plus e.x, over a box:
 * f(x) = e.x + sum_c max_k (a_ck + g_ck . x). */
typedef struct pwl {
    size_t dim, ncomp, K;
    double *e, *lo, *hi;
    double *a; /* ncomp * K */
    double *g; /* ncomp * K * dim */
} pwl;

static uint64_t rng_state;

static double unif(void) /* splitmix64, to [0, 1) */
{
    uint64_t z = (rng_state += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    z ^= z >> 31;
    return (double)(z >> 11) / 9007199254740992.0;
}

/* Random instance. Coordinate 0 is free on both sides and component 0
 * holds the pieces +x0 and -x0 (so f is bounded below); the others are
 * boxed, some one-sided (x >= 0 with a positive e, like the prices of an
 * optional job). */
static pwl make(uint64_t seed)
{
    rng_state = seed;
    pwl p;
    p.dim = 2 + (size_t)(unif() * 9);
    p.ncomp = 1 + (size_t)(unif() * 4);
    p.K = 2 + (size_t)(unif() * 8);
    p.e = calloc(p.dim, sizeof *p.e);
    p.lo = calloc(p.dim, sizeof *p.lo);
    p.hi = calloc(p.dim, sizeof *p.hi);
    p.a = calloc(p.ncomp * p.K, sizeof *p.a);
    p.g = calloc(p.ncomp * p.K * p.dim, sizeof *p.g);
    cr_assert(p.e && p.lo && p.hi && p.a && p.g);
    p.lo[0] = -INFINITY;
    p.hi[0] = INFINITY;
    for (size_t x = 1; x < p.dim; x++) {
        if (unif() < 0.4) {
            p.lo[x] = 0;
            p.hi[x] = INFINITY;
            p.e[x] = 0.5 + unif();
        } else {
            p.lo[x] = -1 - 4 * unif();
            p.hi[x] = p.lo[x] + 0.5 + 6 * unif();
            p.e[x] = unif() < 0.5 ? 0 : 2 * unif() - 1;
        }
    }
    for (size_t c = 0; c < p.ncomp; c++)
        for (size_t k = 0; k < p.K; k++) {
            p.a[c * p.K + k] = 10 * unif() - 5;
            for (size_t x = 0; x < p.dim; x++)
                p.g[(c * p.K + k) * p.dim + x] = unif() < 0.3 ? 0 : 6 * unif() - 3;
        }
    /* component 0: pieces 0 and 1 are +-x0 plus a constant, nothing else */
    for (size_t k = 0; k < 2 && k < p.K; k++) {
        double *g = p.g + k * p.dim;
        memset(g, 0, p.dim * sizeof *g);
        g[0] = k == 0 ? 1 : -1;
    }
    return p;
}

static void drop(pwl *p)
{
    free(p->e);
    free(p->lo);
    free(p->hi);
    free(p->a);
    free(p->g);
}

/* The oracle: f(x), and for each component the index of a piece that
 * attains its maximum (the cut to add). */
static double eval(const pwl *p, const double *x, size_t *arg)
{
    double f = 0;
    for (size_t t = 0; t < p->dim; t++)
        f += p->e[t] * x[t];
    for (size_t c = 0; c < p->ncomp; c++) {
        double best = -INFINITY;
        for (size_t k = 0; k < p->K; k++) {
            const double *g = p->g + (c * p->K + k) * p->dim;
            double v = p->a[c * p->K + k];
            for (size_t t = 0; t < p->dim; t++)
                v += g[t] * x[t];
            if (v > best) {
                best = v;
                arg[c] = k;
            }
        }
        f += best;
    }
    return f;
}

static char tmpdir[256];

static void remove_tmpdir(void)
{
    char path[512];
    snprintf(path, sizeof path, "%s/p.lp", tmpdir);
    unlink(path);
    snprintf(path, sizeof path, "%s/p.raw", tmpdir);
    unlink(path);
    snprintf(path, sizeof path, "%s/log", tmpdir);
    unlink(path);
    rmdir(tmpdir);
}

/* The minimum of f as GLPK 5.0's simplex finds it (glpsol, from Debian's
 * glpk-utils) on the LP  min e.x + sum_c r_c  s.t.  r_c - g_ck.x >= a_ck,
 * x in the box: the epigraph form of a piecewise-linear function. The
 * objective is read from glpsol's raw solution file ("s bas m n p d obj"). */
static double glpk_min(const pwl *p)
{
    if (!tmpdir[0]) {
        cr_assert(system("glpsol --version > /dev/null 2>&1") == 0,
                  "glpsol (Debian glpk-utils) is required by this test");
        snprintf(tmpdir, sizeof tmpdir, "/tmp/surety_bundle_XXXXXX");
        cr_assert(mkdtemp(tmpdir), "mkdtemp failed");
        atexit(remove_tmpdir);
    }
    char lp[512], raw[512], cmd[2048];
    snprintf(lp, sizeof lp, "%s/p.lp", tmpdir);
    snprintf(raw, sizeof raw, "%s/p.raw", tmpdir);
    FILE *f = fopen(lp, "w");
    cr_assert(f);
    fprintf(f, "Minimize\n obj:");
    for (size_t x = 0; x < p->dim; x++)
        fprintf(f, " %+.17g x%zu", p->e[x], x);
    for (size_t c = 0; c < p->ncomp; c++)
        fprintf(f, " + r%zu", c);
    fprintf(f, "\nSubject To\n");
    for (size_t c = 0; c < p->ncomp; c++)
        for (size_t k = 0; k < p->K; k++) {
            fprintf(f, " c%zu_%zu: r%zu", c, k, c);
            const double *g = p->g + (c * p->K + k) * p->dim;
            for (size_t x = 0; x < p->dim; x++)
                if (g[x] != 0)
                    fprintf(f, " %+.17g x%zu", -g[x], x);
            fprintf(f, " >= %.17g\n", p->a[c * p->K + k]);
        }
    fprintf(f, "Bounds\n");
    for (size_t x = 0; x < p->dim; x++) {
        if (!isfinite(p->lo[x]) && !isfinite(p->hi[x]))
            fprintf(f, " x%zu free\n", x);
        else if (!isfinite(p->hi[x]))
            fprintf(f, " x%zu >= %.17g\n", x, p->lo[x]);
        else
            fprintf(f, " %.17g <= x%zu <= %.17g\n", p->lo[x], x, p->hi[x]);
    }
    for (size_t c = 0; c < p->ncomp; c++)
        fprintf(f, " r%zu free\n", c);
    fprintf(f, "End\n");
    fclose(f);
    unlink(raw);
    snprintf(cmd, sizeof cmd, "glpsol --lp %s -w %s > %s/log 2>&1", lp, raw, tmpdir);
    cr_assert(system(cmd) == 0, "glpsol failed on %s", lp);
    FILE *r = fopen(raw, "r");
    cr_assert(r, "glpsol wrote no solution");
    char line[512];
    double obj = NAN;
    while (fgets(line, sizeof line, r)) {
        unsigned mm, nn;
        char pst, dst;
        double v;
        if (sscanf(line, "s bas %u %u %c %c %lf", &mm, &nn, &pst, &dst, &v) == 5) {
            cr_assert(pst == 'f' && dst == 'f', "GLPK found no optimum for %s", lp);
            obj = v;
        }
    }
    fclose(r);
    return obj;
}

/* Runs the bundle from a point of the box with the exact oracle, with
 * the diagonal metric `scale` (NULL: none); returns the lowest value it
 * evaluated, *steps the evaluations it took. Every point it asks for must
 * lie in the box. */
static double run_bundle(const pwl *p, size_t cap, const double *scale,
                         int most, int *steps)
{
    size_t dim = p->dim;
    double *x = calloc(dim, sizeof *x), *val = calloc(dim, sizeof *val);
    size_t *idx = calloc(dim, sizeof *idx), *arg = calloc(p->ncomp, sizeof *arg);
    cr_assert(x && val && idx && arg);
    for (size_t t = 0; t < dim; t++)
        x[t] = isfinite(p->hi[t]) ? p->hi[t] : isfinite(p->lo[t]) ? p->lo[t] + 1 : 3;
    surety_bundle *b = surety_bundle_new(dim, p->ncomp, cap, p->e, p->lo, p->hi, 1.0);
    cr_assert(b);
    if (scale)
        surety_bundle_scale(b, scale);
    double best = INFINITY;
    int it = 0;
    for (; it < most; it++) {
        for (size_t t = 0; t < dim; t++)
            cr_assert(x[t] >= p->lo[t] && x[t] <= p->hi[t],
                      "step %d: coordinate %zu = %g outside [%g, %g]", it, t, x[t],
                      p->lo[t], p->hi[t]);
        double fx = eval(p, x, arg);
        if (fx < best)
            best = fx;
        for (size_t c = 0; c < p->ncomp; c++) {
            const double *g = p->g + (c * p->K + arg[c]) * dim;
            size_t nnz = 0;
            for (size_t t = 0; t < dim; t++)
                if (g[t] != 0) {
                    idx[nnz] = t;
                    val[nnz++] = g[t];
                }
            cr_assert(surety_bundle_cut(b, c, p->a[c * p->K + arg[c]], idx, val, nnz) == 0);
        }
        double pred = surety_bundle_step(b, x, fx, x);
        cr_assert(pred > -1e-6 * (1 + fabs(fx)), "step %d predicts an increase %g", it, pred);
        if (pred <= 1e-10 * (1 + fabs(fx)))
            break;
    }
    *steps = it + 1;
    surety_bundle_free(b);
    free(x);
    free(val);
    free(idx);
    free(arg);
    return best;
}

/* On 60 random functions the bundle's best value reaches GLPK's LP
 * minimum to 1e-6 relative with every cut kept (cap K: the model becomes
 * the function itself), in at most 50 steps as measured, and so it does
 * with a diagonal metric of two blocks a hundred times apart (decomp.c
 * scales its job and scenario prices so).
 * With two cuts kept per component (the aggregate and the newest, the
 * least the method allows) it still converges, but slowly at the end:
 * 1e-4 relative in 3000 steps (measured worst 4.1e-5). It can never go
 * below the minimum (each value is f at a point of the box). */
Test(bundle, reaches_the_lp_minimum)
{
    int worst[3] = {0, 0, 0};
    for (uint64_t t = 0; t < 60; t++) {
        pwl p = make(7100 + t);
        double want = glpk_min(&p);
        size_t caps[3] = {p.K, 2, p.K};
        double *scale = malloc(p.dim * sizeof *scale);
        cr_assert(scale);
        for (size_t x = 0; x < p.dim; x++) /* two blocks, as decomp.c's */
            scale[x] = x < p.dim / 2 ? 10 : 0.1;
        for (int r = 0; r < 3; r++) {
            int steps = 0;
            double got = run_bundle(&p, caps[r], r == 2 ? scale : NULL,
                                    r == 1 ? 3000 : 400, &steps);
            double tol = 1e-6 * fmax(1, fabs(want));
            cr_assert(got >= want - tol, "instance %d: %.12g below the minimum %.12g",
                      (int)t, got, want);
            if (r == 1)
                tol *= 100; /* two cuts and their aggregate: slow at the end */
            cr_assert(got <= want + tol,
                      "instance %d, cap %zu: %.12g after %d steps, GLPK's minimum %.12g",
                      (int)t, caps[r], got, steps, want);
            if (steps > worst[r])
                worst[r] = steps;
        }
        free(scale);
        drop(&p);
    }
    cr_log_info("most steps: %d (every cut kept), %d (two kept), %d (every cut, scaled)",
                worst[0], worst[1], worst[2]);
}

/* A hand-worked case: f(x) = |x - 1| + max(0, 2 - x) over x >= 0 has its
 * minimum 1 on [1, 2]. From x = 0 the first master, with t = 1 and both
 * cuts of that point (slopes -1 and -1), minimises 3 - 2y + y^2 / 2: it
 * steps to x = 2, where the model is 3 - 4 = -1, and predicts the
 * decrease f(0) - (-1) = 4. With
 * the metric d = 1/2 it minimises 3 - 2y + y^2 instead: x = 1, where the
 * model is 3 - 2 = 1, a predicted decrease of 2. */
static void worked_example(double d)
{
    double e = 0, lo = 0, hi = INFINITY, x = 0;
    surety_bundle *b = surety_bundle_new(1, 2, 4, &e, &lo, &hi, 1.0);
    cr_assert(b);
    if (d != 1)
        surety_bundle_scale(b, &d);
    double x1 = d == 1 ? 2 : 1, pred1 = d == 1 ? 4 : 2;
    size_t idx = 0;
    double best = INFINITY;
    for (int it = 0; it < 50; it++) {
        double f1 = fabs(x - 1), f2 = fmax(0, 2 - x), fx = f1 + f2;
        best = fmin(best, fx);
        double s1 = x >= 1 ? 1 : -1, s2 = x <= 2 ? -1 : 0;
        cr_assert(surety_bundle_cut(b, 0, f1 - s1 * x, &idx, &s1, 1) == 0);
        cr_assert(surety_bundle_cut(b, 1, f2 - s2 * x, &idx, &s2, s2 != 0) == 0);
        double pred = surety_bundle_step(b, &x, fx, &x);
        if (it == 0)
            cr_assert(fabs(x - x1) < 1e-6 && fabs(pred - pred1) < 1e-6,
                      "metric %g: first step to %g predicting %g; by hand: %g and %g",
                      d, x, pred, x1, pred1);
        if (pred < 1e-12)
            break;
    }
    cr_assert(fabs(best - 1) < 1e-9, "best value %g, the minimum is 1", best);
    cr_assert(surety_bundle_serious(b) >= 1);
    surety_bundle_free(b);
}

Test(bundle, worked_example)
{
    worked_example(1);
    worked_example(0.5);
}

/* The first master problem with three cuts in one component, in the plane
 * and with a random diagonal metric d, against its minimiser worked out
 * by cases: minimise max_k (a_k + g_k.y) + sum_x (y_x - c_x)^2 / (2 t d_x)
 * (no box). At the minimiser y = c - t D (sum_k w_k g_k) with convex
 * weights w on the pieces that are largest at y (the optimality
 * conditions), so it is one of: a single piece k with y = c - t D g_k
 * and no piece above it; two pieces k, l equal at y with w_k = s in
 * [0, 1] (linear in s) and the third not above; or all three equal at y
 * (a 2x2 system) with weights >= 0. The master stops once its point's
 * objective is within a hundredth of the predicted decrease of its dual's
 * value (bundle.c), so the bundle's point must have an objective at least
 * the minimiser's (else the cases are wrong) and at most that much above
 * it, and its predicted decrease must be f(c) less the model there. */

static double piece(const double *a, const double *g, int k, const double *y)
{
    return a[k] + g[2 * k] * y[0] + g[2 * k + 1] * y[1];
}

static double top3(const double *a, const double *g, const double *y)
{
    return fmax(piece(a, g, 0, y), fmax(piece(a, g, 1, y), piece(a, g, 2, y)));
}

static double master_obj(const double *a, const double *g, const double *c,
                         const double *d, double t, const double *y)
{
    double pr = 0;
    for (int x = 0; x < 2; x++)
        pr += (y[x] - c[x]) * (y[x] - c[x]) / d[x];
    return top3(a, g, y) + pr / (2 * t);
}

static int by_cases(const double *a, const double *g, const double *c, const double *d,
                    double t, double *best)
{
    int found = 0;
    double tol = 1e-9;
    for (int k = 0; k < 3; k++) { /* one piece */
        double y[2] = {c[0] - t * d[0] * g[2 * k], c[1] - t * d[1] * g[2 * k + 1]};
        if (piece(a, g, k, y) >= top3(a, g, y) - tol) {
            best[0] = y[0];
            best[1] = y[1];
            found++;
        }
    }
    for (int k = 0; k < 3; k++) /* two pieces: y(s) = c - tD(s g_k + (1-s) g_l) */
        for (int l = k + 1; l < 3; l++) {
            /* h(s) = piece_k(y(s)) - piece_l(y(s)) = h0 + s h1 */
            double dg[2] = {g[2 * k] - g[2 * l], g[2 * k + 1] - g[2 * l + 1]};
            double h0 = a[k] - a[l], h1 = 0;
            for (int x = 0; x < 2; x++) {
                h0 += dg[x] * (c[x] - t * d[x] * g[2 * l + x]);
                h1 -= dg[x] * t * d[x] * (g[2 * k + x] - g[2 * l + x]);
            }
            if (fabs(h1) < 1e-12)
                continue;
            double s = -h0 / h1;
            if (s < -tol || s > 1 + tol)
                continue;
            double y[2];
            for (int x = 0; x < 2; x++)
                y[x] = c[x] - t * d[x] * (s * g[2 * k + x] + (1 - s) * g[2 * l + x]);
            if (piece(a, g, k, y) >= top3(a, g, y) - 1e-7) {
                best[0] = y[0];
                best[1] = y[1];
                found++;
            }
        }
    /* three pieces: (g_0 - g_1).y = a_1 - a_0, (g_0 - g_2).y = a_2 - a_0 */
    double m00 = g[0] - g[2], m01 = g[1] - g[3], m10 = g[0] - g[4], m11 = g[1] - g[5];
    double r0 = a[1] - a[0], r1 = a[2] - a[0], det = m00 * m11 - m01 * m10;
    if (fabs(det) > 1e-9) {
        double y[2] = {(r0 * m11 - m01 * r1) / det, (m00 * r1 - r0 * m10) / det};
        /* weights: (c - y) / (t d) = sum w_k g_k, sum w_k = 1 */
        double q0 = (c[0] - y[0]) / (t * d[0]), q1 = (c[1] - y[1]) / (t * d[1]);
        /* w_0 (g_0 - g_2) + w_1 (g_1 - g_2) = q - g_2 */
        double n00 = g[0] - g[4], n01 = g[2] - g[4], n10 = g[1] - g[5], n11 = g[3] - g[5];
        double u0 = q0 - g[4], u1 = q1 - g[5], dn = n00 * n11 - n01 * n10;
        if (fabs(dn) > 1e-12) {
            double w0 = (u0 * n11 - n01 * u1) / dn, w1 = (n00 * u1 - u0 * n10) / dn;
            double w2 = 1 - w0 - w1;
            if (w0 >= -tol && w1 >= -tol && w2 >= -tol) {
                best[0] = y[0];
                best[1] = y[1];
                found++;
            }
        }
    }
    return found;
}

Test(bundle, scaled_master_matches_its_minimiser_by_cases)
{
    int checked = 0, multi = 0;
    for (uint64_t s = 0; s < 300; s++) {
        rng_state = 9100 + s;
        double a[3], g[6], c[2], d[2], t = 0.5 + 2 * unif(), want[2] = {0, 0};
        for (int k = 0; k < 3; k++) {
            a[k] = 4 * unif() - 2;
            g[2 * k] = 4 * unif() - 2;
            g[2 * k + 1] = 4 * unif() - 2;
        }
        for (int x = 0; x < 2; x++) {
            c[x] = 4 * unif() - 2;
            d[x] = pow(10, 2 * unif() - 1);
        }
        if (by_cases(a, g, c, d, t, want) != 1)
            continue; /* a tie between cases: degenerate, skipped */
        double e[2] = {0, 0}, lo[2] = {-INFINITY, -INFINITY}, hi[2] = {INFINITY, INFINITY};
        surety_bundle *b = surety_bundle_new(2, 1, 8, e, lo, hi, t);
        cr_assert(b);
        surety_bundle_scale(b, d);
        size_t idx[2] = {0, 1};
        for (int k = 0; k < 3; k++)
            cr_assert(surety_bundle_cut(b, 0, a[k], idx, g + 2 * k, 2) == 0);
        double next[2], fc = top3(a, g, c);
        double pred = surety_bundle_step(b, c, fc, next);
        double got = master_obj(a, g, c, d, t, next), opt = master_obj(a, g, c, d, t, want);
        cr_assert(got >= opt - 1e-9 * (1 + fabs(opt)),
                  "case %lu: the bundle's point (%.9g, %.9g) beats the minimiser by cases "
                  "(%.9g, %.9g): %.12g < %.12g", (unsigned long)s, next[0], next[1], want[0],
                  want[1], got, opt);
        cr_assert(got <= opt + 0.01 * pred + 1e-9 * (1 + fabs(fc)),
                  "case %lu: the bundle steps to (%.9g, %.9g), objective %.12g; the minimiser "
                  "(%.9g, %.9g) has %.12g", (unsigned long)s, next[0], next[1], got, want[0],
                  want[1], opt);
        cr_assert(fabs(pred - (fc - top3(a, g, next))) < 1e-9 * (1 + fabs(fc)),
                  "case %lu: predicted decrease %.9g, f(c) less the model there %.9g",
                  (unsigned long)s, pred, fc - top3(a, g, next));
        /* pieces active at the minimiser: more than one means FISTA had work */
        int act = 0;
        for (int k = 0; k < 3; k++)
            act += piece(a, g, k, want) >= top3(a, g, want) - 1e-7;
        multi += act > 1;
        checked++;
        surety_bundle_free(b);
    }
    cr_log_info("%d masters checked, %d with more than one piece active", checked, multi);
    cr_assert(checked >= 250 && multi >= 50, "only %d cases (%d with a kink)", checked, multi);
}
