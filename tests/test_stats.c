/* test_stats.c - the statistics module against published and SciPy values.
 * SPDX-License-Identifier: MIT
 *
 * Sources, named beside each check: METHODS.md (its values come from SciPy
 * 1.10.1, from the cited papers, or from plain arithmetic), Newcombe (1998)
 * for published intervals, and tests/ref/stats_ref.h, a table made by
 * tests/ref/gen_stats_ref.py with SciPy 1.10.1 and 60-digit decimal
 * arithmetic. */
#include <criterion/criterion.h>
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ref/stats_ref.h"
#include "sizes.h"
#include "stats.h"
#include "surety.h"

/* Relative closeness; exact equality (including both infinite) passes. */
static int close_rel(double got, double want, double tol)
{
    if (got == want)
        return 1;
    if (isnan(got) || isnan(want))
        return 0;
    return fabs(got - want) <= tol * fabs(want);
}

static int close_abs(double got, double want, double tol)
{
    return fabs(got - want) <= tol;
}

#define EXPECT_REL(got, want, tol)                                            \
    do {                                                                      \
        double g_ = (got), w_ = (want);                                       \
        cr_expect(close_rel(g_, w_, (tol)), "%s = %.17g, want %.17g (rel %g)", \
                  #got, g_, w_, (double)(tol));                               \
    } while (0)

#define EXPECT_ABS(got, want, tol)                                            \
    do {                                                                      \
        double g_ = (got), w_ = (want);                                       \
        cr_expect(close_abs(g_, w_, (tol)), "%s = %.17g, want %.17g (abs %g)", \
                  #got, g_, w_, (double)(tol));                               \
    } while (0)

#define EXPECT_SIZE(got, want)                                                \
    do {                                                                      \
        size_t g_ = (got), w_ = (want);                                       \
        cr_expect(g_ == w_, "%s = %zu, want %zu", #got, g_, w_);              \
    } while (0)

#define EXPECT_LONG(got, want)                                                \
    do {                                                                      \
        long g_ = (got), w_ = (want);                                         \
        cr_expect(g_ == w_, "%s = %ld, want %ld", #got, g_, w_);              \
    } while (0)

#define NROWS(a) (sizeof(a) / sizeof((a)[0]))

/* ------------------------------------------------------------------ */
/* METHODS.md s.2: numerical primitives                                */
/* ------------------------------------------------------------------ */

Test(normal, methods_values)
{
    /* SciPy 1.10.1, METHODS.md s.2 (16 digits given) */
    EXPECT_REL(surety_norm_quantile(0.975), 1.959963984540054, 1e-15);
    EXPECT_REL(surety_norm_quantile(0.95), 1.644853626951472, 1e-15);
    EXPECT_REL(surety_norm_quantile(1e-10), -6.361340902404056, 1e-15);
    EXPECT_REL(surety_norm_cdf(1.0), 0.841344746068543, 1e-14);
}

Test(normal, tails_and_edges)
{
    /* tests/ref/stats_ref.h: 60-digit Mills-ratio values, SciPy 1.10.1
     * agreeing to 1e-12. Phi at x has condition number about x^2, yet the
     * compensated erfc argument keeps 1e-15 out to x = -37.5. */
    for (size_t r = 0; r < NROWS(ref_norm_cdf_rows); r++)
        EXPECT_REL(surety_norm_cdf(ref_norm_cdf_rows[r].x),
                   ref_norm_cdf_rows[r].v, 1e-15);
    for (size_t r = 0; r < NROWS(ref_norm_quantile_rows); r++)
        EXPECT_REL(surety_norm_quantile(ref_norm_quantile_rows[r].x),
                   ref_norm_quantile_rows[r].v, 1e-15);
    cr_expect(surety_norm_quantile(0.5) == 0.0);
    cr_expect(isinf(surety_norm_quantile(0.0)) && surety_norm_quantile(0.0) < 0);
    cr_expect(isinf(surety_norm_quantile(1.0)) && surety_norm_quantile(1.0) > 0);
    cr_expect(isnan(surety_norm_quantile(-0.1)));
    cr_expect(isnan(surety_norm_quantile(NAN)));
    /* Symmetry Phi^{-1}(p) = -Phi^{-1}(1-p) (a property of the normal
     * law), at p = j 2^-40 where 1-p is exact in double. */
    for (double j = 1; j < 0x1p39; j = 3 * j + 1) {
        double p = j * 0x1p-40;
        EXPECT_REL(surety_norm_quantile(p), -surety_norm_quantile(1.0 - p),
                   2e-15);
    }
    /* Round trip Phi(Phi^{-1}(p)) = p, within the conditioning above */
    for (double p = 1e-250; p < 0.5; p *= 1e7) {
        double x = surety_norm_quantile(p);
        EXPECT_REL(surety_norm_cdf(x), p, 1e-15 * (4.0 + x * x));
    }
}

/* The limits of a distribution function: Phi(-inf) = 0, Phi(inf) = 1
 * (definition). The compensated lower tail once returned NaN at -inf. */
Test(normal, infinite_arguments)
{
    cr_expect(surety_norm_cdf(-INFINITY) == 0.0, "%g",
              surety_norm_cdf(-INFINITY));
    cr_expect(surety_norm_cdf(INFINITY) == 1.0);
    cr_expect(isnan(surety_norm_cdf(NAN)));
    /* far in the lower tail the value underflows to 0 without NaN */
    cr_expect(surety_norm_cdf(-1e300) == 0.0);
    cr_expect(surety_norm_cdf(-DBL_MAX) == 0.0);
    cr_expect(surety_norm_cdf(DBL_MAX) == 1.0);
    /* round trip through the quantile's infinities */
    cr_expect(surety_norm_cdf(surety_norm_quantile(0.0)) == 0.0);
    cr_expect(surety_norm_cdf(surety_norm_quantile(1.0)) == 1.0);
}

/* Elements of got whose bits differ from want's (any NaN matches any
 * NaN), the first ten of them logged. */
static size_t count_differing(const double *got, const double *want,
                              size_t count)
{
    size_t bad = 0;
    for (size_t t = 0; t < count; t++) {
        int same = isnan(want[t]) ? isnan(got[t])
                                  : memcmp(&got[t], &want[t], sizeof *got) == 0;
        if (!same && bad++ < 10)
            cr_log_error("element %zu: %.17g vs %.17g", t, got[t], want[t]);
    }
    return bad;
}

/* The batch normal CDF gives the scalar one's bits on every element: on
 * both sides of x = -sqrt 2, where the scalar routine starts to correct
 * for the rounding of x/sqrt 2, in the far lower tail, at the limits and
 * at NaN. */
Test(normal, cdf_batch_equals_scalar)
{
    enum { M = 1000 };
    static double x[M], want[M];
    static const double edge[] = {-INFINITY, INFINITY, NAN, 0.0, -0.0,
                                  /* z = -x/sqrt 2 just below 1, at 1,
                                   * then above it */
                                  -1.4142135623730947, -1.4142135623730949,
                                  -M_SQRT2,
                                  -1.4142135623730954, -38.5, -40.0, 8.3,
                                  40.0};
    size_t nedge = NROWS(edge);
    for (size_t t = 0; t < M; t++) {
        /* a deterministic spread over (-39, 9): half of it over the
         * lower tail below -1 */
        double u = (t + 0.5) / M;
        x[t] = t < nedge ? edge[t] : (t % 2 ? -1.0 - 38.0 * u : 9.0 - 10.0 * u);
        want[t] = surety_norm_cdf(x[t]);
    }
    surety_norm_cdf_batch(x, M);
    size_t bad = count_differing(x, want, M);
    cr_expect(bad == 0, "%zu of %d elements differ", bad, M);
    surety_norm_cdf_batch(NULL, 0);
}

/* The batch quantile gives the scalar one's bits on every element: both
 * AS 241 regions, their borders, the limits and invalid input, over
 * lengths that cross its internal passes. */
Test(normal, quantile_batch_equals_scalar)
{
    enum { M = 1000 };
    static double p[M], want[M];
    static const double edge[] = {0.0, 1.0, NAN, -0.1, 1.5, 0.5, 0.075,
                                  0.925, 0.07499999999999999, 1e-300,
                                  4.9e-324, 1.0 - 0x1p-53,
                                  /* r = sqrt(-ln p) about 5, the border of
                                   * the tail's two formulas */
                                  1.3887943864964021e-11, 1e-11, 1e-12,
                                  1.0 - 1e-11};
    size_t nedge = NROWS(edge);
    for (size_t t = 0; t < M; t++) {
        /* a deterministic spread over (0,1), denser in the tails */
        double u = (t + 0.5) / M;
        p[t] = t < nedge ? edge[t] : (t % 3 == 0 ? pow(u, 8) : u);
        want[t] = surety_norm_quantile(p[t]);
    }
    surety_norm_quantile_batch(p, M);
    size_t bad = count_differing(p, want, M);
    cr_expect(bad == 0, "%zu of %d elements differ", bad, M);
    /* length 0 touches nothing */
    surety_norm_quantile_batch(NULL, 0);
}

Test(binom, methods_values)
{
    /* SciPy 1.10.1, METHODS.md s.2 (10 digits given) */
    EXPECT_REL(surety_stats_log_choose(1000, 50), 195.6642689267, 1e-12);
    EXPECT_REL(surety_binom_cdf(5, 100, 0.05), 0.6159991280, 1e-9);
    EXPECT_REL(surety_binom_cdf(50, 1000, 0.05), 0.5375290408, 1e-9);
    EXPECT_REL(surety_binom_cdf(449, 10000, 0.05), 9.4194797188e-03, 1e-10);
    EXPECT_REL(surety_binom_cdf(9, 371, 0.05), 9.9204214796e-03, 1e-10);
    /* METHODS.md s.1 identity B(k; N, p) = I_{1-p}(N-k, k+1) */
    EXPECT_REL(surety_stats_ibeta(0.95, 1000 - 50, 51),
               surety_binom_cdf(50, 1000, 0.05), 1e-12);
    /* METHODS.md s.4 consistency checks (SciPy 1.10.1, 6 digits) */
    EXPECT_ABS(surety_binom_cdf(5, 100, 0.10225338), 0.05, 5e-7);
    EXPECT_ABS(surety_binom_cdf(765, 10000, 0.08101393), 0.05, 5e-7);
}

Test(binom, edge_cases)
{
    /* METHODS.md s.2: p = 0 -> 1; p = 1 -> (k >= N ? 1 : 0); k < 0 -> 0;
     * k >= N -> 1 */
    cr_expect(surety_binom_cdf(0, 10, 0.0) == 1.0);
    cr_expect(surety_binom_cdf(3, 10, 1.0) == 0.0);
    cr_expect(surety_binom_cdf(10, 10, 1.0) == 1.0);
    cr_expect(surety_binom_cdf(-1, 10, 0.3) == 0.0);
    cr_expect(surety_binom_cdf(10, 10, 0.3) == 1.0);
    cr_expect(surety_binom_cdf(12, 10, 0.3) == 1.0);
    cr_expect(surety_binom_cdf(0, 0, 0.3) == 1.0);
    cr_expect(isnan(surety_binom_cdf(1, 10, 1.5)));
    cr_expect(isnan(surety_binom_cdf(1, -1, 0.5)));
    cr_expect(surety_stats_binom_sf(10, 10, 0.3) == 0.0);
    cr_expect(surety_stats_binom_sf(-1, 10, 0.3) == 1.0);
    cr_expect(surety_stats_binom_pmf(11, 10, 0.3) == 0.0);
    /* closed forms, exact arithmetic: P{X = 0} = (1-p)^N, P{X <= N-1}
     * = 1 - p^N */
    EXPECT_REL(surety_binom_cdf(0, 1000, 0.01), pow(0.99, 1000), 1e-13);
    EXPECT_REL(surety_stats_binom_sf(999, 1000, 0.999), pow(0.999, 1000),
               1e-13);
    /* exact: C(10,3) = 120 */
    EXPECT_REL(surety_stats_log_choose(10, 3), log(120.0), 1e-15);
    cr_expect(surety_stats_log_choose(10, 0) == 0.0);
    cr_expect(isinf(surety_stats_log_choose(10, 11)));
}

Test(ibeta, methods_values)
{
    /* METHODS.md s.2: exact 0.6875; SciPy 1.10.1 0.364004081072 */
    EXPECT_REL(surety_stats_ibeta(0.5, 2, 3), 0.6875, 1e-14);
    EXPECT_REL(surety_stats_ibeta(0.3, 10, 20), 0.364004081072, 1e-11);
    EXPECT_REL(surety_stats_ibeta_inv(0.6875, 2, 3), 0.5, 1e-13);
    /* exact: I_x(1,1) = x, I_x(a,1) = x^a */
    EXPECT_REL(surety_stats_ibeta(0.123, 1, 1), 0.123, 1e-14);
    EXPECT_REL(surety_stats_ibeta(0.9, 7.5, 1), pow(0.9, 7.5), 1e-14);
    cr_expect(surety_stats_ibeta(0.0, 2, 3) == 0.0);
    cr_expect(surety_stats_ibeta(1.0, 2, 3) == 1.0);
    cr_expect(surety_stats_ibetac(0.0, 2, 3) == 1.0);
    cr_expect(isnan(surety_stats_ibeta(0.5, -1, 3)));
    cr_expect(isnan(surety_stats_ibeta(1.5, 1, 3)));
    cr_expect(surety_stats_ibeta_inv(0.0, 2, 3) == 0.0);
    cr_expect(surety_stats_ibeta_inv(1.0, 2, 3) == 1.0);
}

/* ------------------------------------------------------------------ */
/* Reference table (tests/ref/stats_ref.h)                             */
/* ------------------------------------------------------------------ */

/* All rows at 1e-10 relative. The decimal values are exact to far more
 * digits than a double holds. Linear values below 1e-300 are compared
 * through their logs only (the linear ones are then 0 or subnormal). */
Test(reference, binom_table)
{
    size_t bad = 0;
    for (size_t r = 0; r < NROWS(ref_binom_rows); r++) {
        const ref_binom *w = &ref_binom_rows[r];
        double lc = surety_stats_binom_logcdf(w->k, w->N, w->p);
        double ls = surety_stats_binom_logsf(w->k, w->N, w->p);
        int ok = close_rel(lc, w->logcdf, 1e-10)
                 && close_rel(ls, w->logsf, 1e-10);
        if (w->cdf > 1e-300)
            ok = ok && close_rel(surety_binom_cdf(w->k, w->N, w->p), w->cdf,
                                 1e-10);
        if (w->sf > 1e-300)
            ok = ok && close_rel(surety_stats_binom_sf(w->k, w->N, w->p),
                                 w->sf, 1e-10);
        if (!ok && bad++ < 20)
            cr_log_error("B(%ld; %ld, %.17g): logcdf %.17g want %.17g, "
                         "logsf %.17g want %.17g", w->k, w->N, w->p, lc,
                         w->logcdf, ls, w->logsf);
    }
    cr_expect(bad == 0, "%zu of %zu binomial rows off", bad,
              NROWS(ref_binom_rows));
    cr_expect(NROWS(ref_binom_rows) > 500);
}

Test(reference, ibeta_table)
{
    size_t bad = 0;
    for (size_t r = 0; r < NROWS(ref_ibeta_rows); r++) {
        const ref_ibeta *w = &ref_ibeta_rows[r];
        double I = surety_stats_ibeta(w->x, w->a, w->b);
        double Ic = surety_stats_ibetac(w->x, w->a, w->b);
        if (!(close_rel(I, w->I, 1e-10) && close_rel(Ic, w->Ic, 1e-10))
            && bad++ < 20)
            cr_log_error("I_%.17g(%.17g, %.17g) = %.17g / %.17g, want "
                         "%.17g / %.17g", w->x, w->a, w->b, I, Ic, w->I,
                         w->Ic);
    }
    cr_expect(bad == 0, "%zu of %zu incomplete beta rows off", bad,
              NROWS(ref_ibeta_rows));
    cr_expect(NROWS(ref_ibeta_rows) > 300);
}

Test(reference, ibeta_inv_table)
{
    size_t bad = 0;
    for (size_t r = 0; r < NROWS(ref_ibeta_inv_rows); r++) {
        const ref_ibeta_inv *w = &ref_ibeta_inv_rows[r];
        double x = surety_stats_ibeta_inv(w->y, w->a, w->b);
        if (!close_rel(x, w->x, 1e-10) && bad++ < 20)
            cr_log_error("I^-1(%.17g; %.17g, %.17g) = %.17g, want %.17g",
                         w->y, w->a, w->b, x, w->x);
    }
    cr_expect(bad == 0, "%zu of %zu inverse beta rows off", bad,
              NROWS(ref_ibeta_inv_rows));
    cr_expect(NROWS(ref_ibeta_inv_rows) > 200);
}

Test(reference, clopper_pearson_table)
{
    size_t bad = 0;
    for (size_t r = 0; r < NROWS(ref_cp_rows); r++) {
        const ref_cp *w = &ref_cp_rows[r];
        double lo, hi, l1;
        surety_clopper_pearson((size_t)w->x, (size_t)w->n, w->c, &lo, &hi,
                               &l1);
        double u1 = surety_stats_cp_upper1((size_t)w->x, (size_t)w->n, w->c);
        double l1b = surety_stats_cp_lower1((size_t)w->x, (size_t)w->n, w->c);
        int ok = close_rel(lo, w->lo, 1e-10) && close_rel(hi, w->hi, 1e-10)
                 && close_rel(l1, w->lower1, 1e-10)
                 && close_rel(u1, w->upper1, 1e-10) && l1b == l1;
        if (!ok && bad++ < 20)
            cr_log_error("CP %ld/%ld at %g: %.17g %.17g %.17g %.17g, want "
                         "%.17g %.17g %.17g %.17g", w->x, w->n, w->c, lo, hi,
                         l1, u1, w->lo, w->hi, w->lower1, w->upper1);
    }
    cr_expect(bad == 0, "%zu of %zu Clopper-Pearson rows off", bad,
              NROWS(ref_cp_rows));
}

/* ------------------------------------------------------------------ */
/* METHODS.md s.4: intervals                                           */
/* ------------------------------------------------------------------ */

typedef struct cp_check {
    size_t x, n;
    double lo, hi, lower1, upper1, wlo, whi, wlower1, wupper1;
} cp_check;

Test(intervals, methods_table_95)
{
    /* SciPy 1.10.1, METHODS.md s.4 table, 95%, 8 digits */
    static const cp_check t[] = {
        {9235, 10000, 0.91811616, 0.92863562, 0.91898607, 0.92783033,
         0.91812632, 0.92854843, 0.91901258, 0.92775832},
        {95, 100, 0.88716509, 0.98356812, 0.89774662, 0.98009444,
         0.88824953, 0.97845632, 0.90083891, 0.97545264},
        {0, 100, 0, 0.03621669, 0, 0.02951305, 0, 0.03699350, 0,
         0.02634272},
        {100, 100, 0.96378331, 1, 0.97048695, 1, 0.96300650, 1, 0.97365728,
         1},
        {9500, 10000, 0.94554547, 0.95419006, 0.94626682, 0.95353748,
         0.94555288, 0.95410152, 0.94629183, 0.95346474},
    };
    for (size_t r = 0; r < NROWS(t); r++) {
        double lo, hi, l1, u1, wlo, whi, wl1, wu1;
        surety_clopper_pearson(t[r].x, t[r].n, 0.95, &lo, &hi, &l1);
        u1 = surety_stats_cp_upper1(t[r].x, t[r].n, 0.95);
        surety_stats_wilson(t[r].x, t[r].n, 0.95, 2, &wlo, &whi);
        surety_stats_wilson(t[r].x, t[r].n, 0.95, 1, &wl1, &wu1);
        EXPECT_ABS(lo, t[r].lo, 5e-9);
        EXPECT_ABS(hi, t[r].hi, 5e-9);
        EXPECT_ABS(l1, t[r].lower1, 5e-9);
        EXPECT_ABS(u1, t[r].upper1, 5e-9);
        EXPECT_ABS(wlo, t[r].wlo, 5e-9);
        EXPECT_ABS(whi, t[r].whi, 5e-9);
        EXPECT_ABS(wl1, t[r].wlower1, 5e-9);
        EXPECT_ABS(wu1, t[r].wupper1, 5e-9);
    }
}

Test(intervals, newcombe_1998)
{
    /* Published, Newcombe (1998) Stat. Med. 17:857-872, Table I, 95%
     * two-sided, 4 decimals */
    static const cp_check t[] = {
        {81, 263, 0.2527, 0.3676, 0, 0, 0.2553, 0.3662, 0, 0},
        {15, 148, 0.0578, 0.1617, 0, 0, 0.0624, 0.1605, 0, 0},
        {0, 20, 0, 0.1684, 0, 0, 0, 0.1611, 0, 0},
        {1, 29, 0.0009, 0.1776, 0, 0, 0.0061, 0.1718, 0, 0},
    };
    for (size_t r = 0; r < NROWS(t); r++) {
        double lo, hi, wlo, whi;
        surety_clopper_pearson(t[r].x, t[r].n, 0.95, &lo, &hi, NULL);
        surety_stats_wilson(t[r].x, t[r].n, 0.95, 2, &wlo, &whi);
        EXPECT_ABS(lo, t[r].lo, 5e-5);
        EXPECT_ABS(hi, t[r].hi, 5e-5);
        EXPECT_ABS(wlo, t[r].wlo, 5e-5);
        EXPECT_ABS(whi, t[r].whi, 5e-5);
    }
}

Test(intervals, definitions)
{
    /* METHODS.md s.4: U1 solves B(x; n, U1) = a and L1 solves
     * B(x-1; n, L1) = 1-a; closed forms at x = 0. */
    size_t xs[] = {1, 7, 50, 999}, ns[] = {10, 100, 1000, 1000};
    double cs[] = {0.9, 0.95, 0.99};
    for (size_t i = 0; i < 4; i++)
        for (size_t j = 0; j < 3; j++) {
            double a = 1.0 - cs[j];
            double u1 = surety_stats_cp_upper1(xs[i], ns[i], cs[j]);
            double l1 = surety_stats_cp_lower1(xs[i], ns[i], cs[j]);
            EXPECT_REL(surety_binom_cdf((long)xs[i], (long)ns[i], u1), a,
                       1e-11);
            EXPECT_REL(surety_binom_cdf((long)xs[i] - 1, (long)ns[i], l1),
                       1.0 - a, 1e-11);
        }
    /* exact arithmetic: 1 - (a/2)^(1/n), 1 - a^(1/n) */
    double lo, hi, l1;
    surety_clopper_pearson(0, 100, 0.95, &lo, &hi, &l1);
    cr_expect(lo == 0.0 && l1 == 0.0);
    EXPECT_REL(hi, 1.0 - pow(0.025, 0.01), 1e-13);
    EXPECT_REL(surety_stats_cp_upper1(0, 100, 0.95), 1.0 - pow(0.05, 0.01),
               1e-13);
    surety_clopper_pearson(5, 0, 0.95, &lo, &hi, &l1);
    cr_expect(isnan(lo) && isnan(hi) && isnan(l1));
    surety_clopper_pearson(5, 10, 1.0, &lo, &hi, &l1);
    cr_expect(isnan(lo));
    surety_clopper_pearson(11, 10, 0.9, &lo, &hi, &l1);
    cr_expect(isnan(lo));
}

Test(intervals, violation_upper_bounds_99)
{
    /* SciPy 1.10.1, METHODS.md s.4: 99% one-sided CP upper bounds on the
     * violation probability, N' = 1000, 6 decimals */
    static const struct {
        size_t v;
        double u;
    } t[] = {{0, 0.004595},  {1, 0.006620},  {2, 0.008379},
             {5, 0.013055},  {10, 0.020043}, {30, 0.045050},
             {40, 0.056848}, {50, 0.068405}};
    for (size_t r = 0; r < NROWS(t); r++)
        EXPECT_ABS(surety_stats_cp_upper1(t[r].v, 1000, 0.99), t[r].u,
                   5e-7);
}

Test(intervals, certify)
{
    /* METHODS.md s.4: minimal N' with zero violations, ceil(ln b/ln(1-e))
     * (arithmetic) */
    static const struct {
        double eps, beta;
        size_t N;
    } m[] = {{0.05, 0.05, 59},  {0.05, 0.01, 90},  {0.05, 0.001, 135},
             {0.10, 0.05, 29},  {0.10, 0.01, 44},  {0.10, 0.001, 66},
             {0.01, 0.05, 299}, {0.01, 0.01, 459}, {0.01, 0.001, 688}};
    for (size_t r = 0; r < NROWS(m); r++)
        EXPECT_SIZE(surety_stats_certify_min_samples(m[r].eps, m[r].beta, 0),
                    m[r].N);
    /* METHODS.md s.4 (SciPy 1.10.1): largest v certifying eps = 0.05 */
    static const struct {
        size_t N;
        long v01, v05;
    } v[] = {{100, 0, 1}, {1000, 34, 38}, {10000, 449, 463},
             {100000, 4839, 4886}};
    for (size_t r = 0; r < NROWS(v); r++) {
        EXPECT_LONG(surety_stats_certify_max_violations(v[r].N, 0.05, 0.01),
                    v[r].v01);
        EXPECT_LONG(surety_stats_certify_max_violations(v[r].N, 0.05, 0.05),
                    v[r].v05);
    }
    /* METHODS.md s.3.5 example: 9235 of 10000 -> reliability >= 91.90% at
     * 95% (one-sided) */
    EXPECT_ABS(surety_stats_cp_lower1(9235, 10000, 0.95), 0.9190, 5e-5);
}

/* ------------------------------------------------------------------ */
/* METHODS.md s.3: sample sizes                                        */
/* ------------------------------------------------------------------ */

Test(sample_size, luedtke_ahmed_table)
{
    /* SciPy 1.10.1, METHODS.md s.3.1, delta = 0.01, ln|X| = n ln(m+1).
     * "stable" there is checked over a window of 300; ours is proved for
     * all larger N, and the two agree on these rows. */
    static const struct {
        double lnX, eps, alpha;
        size_t first, stable, chernoff, hoeffding;
    } t[] = {
        {20 * M_LN2, 0.05, 0, 361, 361, 739, 3694},
        {20 * 1.3862943611198906, 0.05, 0, 631, 631, 1294, 6467},
        {20 * 1.3862943611198906, 0.05, 0.025, 3668, 3723, 5173, 25865},
        {20 * 1.3862943611198906, 0.10, 0.05, 1754, 1782, 2587, 6467},
        {50 * 1.791759469228055, 0.05, 0, 1837, 1837, 3768, 18839},
        {50 * 1.791759469228055, 0.05, 0.025, 11316, 11371, 15071, 75355},
        {50 * 1.791759469228055, 0.10, 0.05, 5418, 5445, 7536, 18839},
    };
    for (size_t r = 0; r < NROWS(t); r++) {
        EXPECT_SIZE(surety_stats_la_first(t[r].eps, t[r].alpha, 0.01,
                                          t[r].lnX), t[r].first);
        EXPECT_SIZE(surety_stats_la_stable(t[r].eps, t[r].alpha, 0.01,
                                           t[r].lnX), t[r].stable);
        EXPECT_SIZE(surety_stats_la_chernoff(t[r].eps, t[r].alpha, 0.01,
                                             t[r].lnX), t[r].chernoff);
        EXPECT_SIZE(surety_stats_la_hoeffding(t[r].eps, t[r].alpha, 0.01,
                                              t[r].lnX), t[r].hoeffding);
    }
    /* alpha = 0: the closed form ln(|X|/delta)/(-ln(1-eps)) is exact
     * (METHODS.md s.3.1): 18.4681/0.0512933 = 360.04 -> 361 */
    EXPECT_SIZE(surety_stats_la_fixed_k(0.05, 0, 0.01, 20 * M_LN2), 361);
    /* ln(|X|/delta)/eps (arithmetic): 18.4681/0.05 = 369.4 -> 370 */
    EXPECT_SIZE(surety_stats_la_zero(0.05, 0.01, 20 * M_LN2), 370);
    cr_expect(surety_stats_la_first(0.05, 0.05, 0.01, 1.0) == 0);
    cr_expect(surety_stats_la_first(0.05, 0.01, 1.5, 1.0) == 0);
}

/* The definitions behind first and stable, checked directly on the
 * binomial tail: first passes and first-1 fails; stable-1 fails and every
 * N from stable up to well past it passes. */
Test(sample_size, luedtke_ahmed_definition)
{
    double lnX = 20 * 1.3862943611198906, eps = 0.05, alpha = 0.025;
    double lt = log(0.01) - lnX;
    size_t first = surety_stats_la_first(eps, alpha, 0.01, lnX);
    size_t stable = surety_stats_la_stable(eps, alpha, 0.01, lnX);
#define PASS(N)                                                               \
    (surety_stats_binom_logcdf((long)surety_allowance(alpha, (N)), (long)(N), \
                               eps) <= lt)
    cr_expect(PASS(first) && !PASS(first - 1));
    cr_expect(!PASS(stable - 1));
    size_t fails = 0;
    for (size_t N = stable; N < stable + 3000; N++)
        fails += !PASS(N);
    cr_expect(fails == 0);
    fails = 0;
    for (size_t N = 1; N < first; N++)
        fails += !PASS(N);
    cr_expect(fails == first - 1);
#undef PASS
    /* fixed k is monotone: the k of the first passing N gives that N or a
     * smaller one */
    size_t k = surety_allowance(alpha, first);
    cr_expect(surety_stats_la_fixed_k(eps, k, 0.01, lnX) <= first);
}

Test(sample_size, lower_bound)
{
    /* METHODS.md s.3.2 (computed): 922, 3685, 34539 */
    EXPECT_SIZE(surety_stats_la_lower(0.05, 0.10, 0.01), 922);
    EXPECT_SIZE(surety_stats_la_lower(0.05, 0.075, 0.01), 3685);
    EXPECT_SIZE(surety_stats_la_lower(0.05, 0.06, 0.001), 34539);
}

Test(sample_size, convex_bounds)
{
    /* METHODS.md s.3.3, d = 10, beta = 1e-5 (SciPy 1.10.1 / arithmetic):
     * Campi-Garatti 2008 / CGP 2009 / Calafiore-Campi 2006 / 2005 */
    static const struct {
        double eps;
        size_t cg, cgp, cc06, cc05;
    } t[] = {
        {0.1, 285, 431, 850, 9999999},
        {0.05, 581, 861, 1957, 19999999},
        {0.01, 2942, 4303, 12920, 99999999},
        {0.001, 29513, 43026, 175064, 999999999},
    };
    for (size_t r = 0; r < NROWS(t); r++) {
        EXPECT_SIZE(surety_stats_cg2008(t[r].eps, 1e-5, 10), t[r].cg);
        EXPECT_SIZE(surety_stats_cgp2009(t[r].eps, 1e-5, 10), t[r].cgp);
        EXPECT_SIZE(surety_stats_cc2006(t[r].eps, 1e-5, 10), t[r].cc06);
        EXPECT_SIZE(surety_stats_cc2005(t[r].eps, 1e-5, 10), t[r].cc05);
    }
}

Test(sample_size, sampling_and_discarding)
{
    /* METHODS.md s.3.3, Campi & Garatti (2011), eps = 0.05, beta = 0.01 */
    static const size_t ks[] = {0, 1, 5, 10, 50, 100};
    static const size_t n10[] = {371, 476, 760, 1030, 2603, 4214};
    static const size_t n1[] = {90, 130, 259, 398, 1372, 2504};
    for (size_t r = 0; r < NROWS(ks); r++) {
        EXPECT_SIZE(surety_stats_discard_min_n(ks[r], 10, 0.05, 0.01),
                    n10[r]);
        EXPECT_SIZE(surety_stats_discard_min_n(ks[r], 1, 0.05, 0.01), n1[r]);
    }
    EXPECT_LONG(surety_stats_discard_max_k(1000, 10, 0.05, 0.01), 9);
    EXPECT_LONG(surety_stats_discard_max_k(1000, 1, 0.05, 0.01), 34);
    EXPECT_LONG(surety_stats_discard_max_k(2000, 10, 0.05, 0.01), 33);
    EXPECT_LONG(surety_stats_discard_max_k(10000, 10, 0.05, 1e-3), 302);
    /* boundary values, 7 significant digits */
    EXPECT_REL(surety_stats_discard_prob(1030, 10, 10, 0.05), 9.906237e-03,
               5e-7);
    EXPECT_REL(surety_stats_discard_prob(1029, 10, 10, 0.05), 1.024043e-02,
               5e-7);
    EXPECT_LONG(surety_stats_discard_max_k(5, 10, 0.05, 0.01), -1);
    EXPECT_LONG(surety_stats_discard_max_k(100, 10, 0.05, 0.01), -1);
    /* With k = 0 the bound is Campi & Garatti (2008) */
    EXPECT_SIZE(surety_stats_discard_min_n(0, 10, 0.05, 0.01),
                surety_stats_cg2008(0.05, 0.01, 10));
}

/* METHODS.md s.3.3: with d = 1 sampling and discarding is the one-sided
 * Clopper-Pearson test. For each N, v, eps, beta: B(v; N, eps) <= beta iff
 * the one-sided lower bound on reliability at 1-beta reaches 1-eps. The
 * two take different routes: a tail evaluated at eps, against a quantile
 * found by bisection on the beta law. */
Test(sample_size, discarding_d1_is_clopper_pearson)
{
    static const size_t Ns[] = {20, 59, 90, 100, 371, 1000, 2503, 10000};
    static const double eps[] = {0.01, 0.05, 0.1, 0.3};
    static const double betas[] = {0.001, 0.01, 0.05};
    size_t agree = 0, both = 0, checked = 0;
    for (size_t a = 0; a < NROWS(Ns); a++)
        for (size_t b = 0; b < NROWS(eps); b++)
            for (size_t c = 0; c < NROWS(betas); c++) {
                size_t N = Ns[a];
                long vmax = surety_stats_discard_max_k(N, 1, eps[b],
                                                       betas[c]);
                for (size_t v = 0; v <= N / 2; v += 1 + N / 200) {
                    int by_discard = surety_stats_discard_prob(N, v, 1,
                                                               eps[b])
                                     <= betas[c];
                    int by_cp = surety_stats_cp_lower1(N - v, N,
                                                       1.0 - betas[c])
                                >= 1.0 - eps[b];
                    agree += by_discard == by_cp;
                    both += by_discard && by_cp;
                    checked++;
                    cr_expect(by_discard == ((long)v <= vmax));
                }
                /* both sides of the threshold agree exactly */
                if (vmax >= 0)
                    cr_expect(surety_stats_cp_lower1(N - (size_t)vmax, N,
                                                     1.0 - betas[c])
                              >= 1.0 - eps[b]);
                if (vmax + 1 <= (long)N)
                    cr_expect(surety_stats_cp_lower1(N - (size_t)vmax - 1, N,
                                                     1.0 - betas[c])
                              < 1.0 - eps[b]);
            }
    cr_expect(agree == checked, "%zu of %zu agree", agree, checked);
    cr_expect(both > 0 && both < checked);
}

Test(sample_size, campi_garatti_ramponi_2018)
{
    /* SciPy 1.10.1, METHODS.md s.3.4, N = 1000, beta = 1e-3, 5 digits */
    static const struct {
        size_t sigma;
        double eps;
    } t[] = {{0, 0.01372},  {1, 0.02053},  {5, 0.04283},  {10, 0.06614},
             {20, 0.10567}, {50, 0.19789}, {100, 0.31136}};
    for (size_t r = 0; r < NROWS(t); r++)
        EXPECT_ABS(surety_stats_cgr2018_eps(1000, t[r].sigma, 1e-3),
                   t[r].eps, 5e-6);
    cr_expect(surety_stats_cgr2018_eps(1000, 1000, 1e-3) == 1.0);
}

Test(sample_size, pagnoncelli_ahmed_shapiro)
{
    /* SciPy 1.10.1, METHODS.md s.5 */
    double t1 = surety_stats_pas_theta(1000, 0.05, 0.05);
    EXPECT_REL(t1, 0.5375290408, 1e-9);
    EXPECT_SIZE(surety_stats_pas_rank(10, t1, 0.01), 2);
    EXPECT_SIZE(surety_stats_pas_rank(100, t1, 0.01), 42);
    double t2 = surety_stats_pas_theta(1000, 0.06, 0.05);
    EXPECT_ABS(t2, 0.932937, 5e-7);
    EXPECT_SIZE(surety_stats_pas_rank(10, t2, 0.01), 7);
    EXPECT_SIZE(surety_stats_pas_rank(100, t2, 0.01), 87);
    double t3 = surety_stats_pas_theta(500, 0.05, 0.05);
    EXPECT_ABS(t3, 0.552939, 5e-7);
    EXPECT_SIZE(surety_stats_pas_rank(1000, t3, 0.01), 516);
    /* no admissible L: B(0; 3, 0.5) = 0.125 > 0.01 (arithmetic) */
    EXPECT_SIZE(surety_stats_pas_rank(3, 0.5, 0.01), 0);
}
