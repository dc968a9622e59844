/* test_sample.c - streams, distributions, the Gaussian copula and scenario
 * sets, against SciPy 1.10.1 / NumPy 1.24.2 values, METHODS.md check values
 * and statistical tolerances derived beside each check.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "alloc.h"
#include "dist.h"
#include "fileio.h"
#include "hash.h"
#include "model.h"
#include "rng.h"
#include "sample.h"
#include "surety.h"

/* Statistical checks use fixed seeds, so they are deterministic; the
 * tolerances are 5 standard errors, which a correct sampler exceeds with
 * probability about 6e-7 per check (two-sided normal tail), while a wrong
 * parameter or formula shifts the statistic by far more. */
#define Z5 5.0

/* ------------------------------------------------------------------ */
/* Helpers                                                             */
/* ------------------------------------------------------------------ */

static surety_model *parse(const char *json)
{
    surety_model *model = NULL;
    surety_error err;
    surety_error_clear(&err);
    surety_code rc = surety_model_parse(json, "test.json", NULL, &model, &err);
    cr_assert_eq(rc, SURETY_OK, "parse: %s: %s", err.field, err.message);
    return model;
}

/* A model with one resource and the given jobs (JSON array body) and an
 * optional correlation object (JSON member text or ""). */
static surety_model *model_with(const char *jobs, const char *corr,
                                size_t N, unsigned seed)
{
    static char buf[8192];
    snprintf(buf, sizeof buf,
             "{\"name\": \"t\", \"risk\": 0.05, \"scenarios\": %zu, "
             "\"seed\": %u, \"resources\": [{\"id\": \"shop\", "
             "\"capacity\": 100}], \"jobs\": [%s]%s%s}",
             N, seed, jobs, corr[0] ? ", " : "", corr);
    return parse(buf);
}

#define JOB(id, hours) \
    "{\"id\": \"" id "\", \"hours\": " hours ", \"profit\": {\"rate\": 10}, " \
    "\"allowed\": [\"shop\"]}"

static surety_scenarios *draw(const surety_model *model, uint64_t stream,
                              size_t first, size_t N)
{
    surety_scenarios *sc = NULL;
    surety_error err;
    surety_error_clear(&err);
    surety_code rc = surety_sample(model, stream, first, N, &sc, &err);
    cr_assert_eq(rc, SURETY_OK, "sample: %s", err.message);
    return sc;
}

/* Column j of a scenario-major array, copied. */
static double *column(const double *a, size_t N, size_t n, size_t j)
{
    double *c = surety_xmalloc(N, sizeof *c);
    for (size_t l = 0; l < N; l++)
        c[l] = a[l * n + j];
    return c;
}

static double mean_of(const double *x, size_t N)
{
    double s = 0;
    for (size_t l = 0; l < N; l++)
        s += x[l];
    return s / (double)N;
}

static double sd_of(const double *x, size_t N)
{
    double m = mean_of(x, N), s = 0;
    for (size_t l = 0; l < N; l++)
        s += (x[l] - m) * (x[l] - m);
    return sqrt(s / (double)(N - 1));
}

static double pearson(const double *x, const double *y, size_t N)
{
    double mx = mean_of(x, N), my = mean_of(y, N), sxy = 0, sxx = 0, syy = 0;
    for (size_t l = 0; l < N; l++) {
        sxy += (x[l] - mx) * (y[l] - my);
        sxx += (x[l] - mx) * (x[l] - mx);
        syy += (y[l] - my) * (y[l] - my);
    }
    return sxy / sqrt(sxx * syy);
}

static int cmp_dbl(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Ranks 1..N (continuous data: no ties expected). */
static double *ranks(const double *x, size_t N)
{
    double *r = surety_xmalloc(N, sizeof *r);
    double *key = surety_xmalloc(N * 2, sizeof *key);
    for (size_t l = 0; l < N; l++) {
        key[2 * l] = x[l];
        key[2 * l + 1] = (double)l;
    }
    qsort(key, N, 2 * sizeof *key, cmp_dbl);
    for (size_t t = 0; t < N; t++)
        r[(size_t)key[2 * t + 1]] = (double)(t + 1);
    surety_xfree(key);
    return r;
}

static double spearman(const double *x, const double *y, size_t N)
{
    double *rx = ranks(x, N), *ry = ranks(y, N);
    double s = pearson(rx, ry, N);
    surety_xfree(rx);
    surety_xfree(ry);
    return s;
}

static double frac_at_most(const double *x, size_t N, double q)
{
    size_t c = 0;
    for (size_t l = 0; l < N; l++)
        c += x[l] <= q;
    return (double)c / (double)N;
}

static double phi_cdf(double x) /* from libm, not the project's stats.c */
{
    return 0.5 * erfc(-x / sqrt(2.0));
}

static double phi_pdf(double x)
{
    return exp(-0.5 * x * x) / sqrt(2.0 * M_PI);
}

/* A model built directly (the reader rejects some of what the C API
 * allows, e.g. an untruncated normal or an id with a comma); released by
 * surety_model_free. */
static surety_model *struct_model(size_t n, const surety_dist *d,
                                  const char *const *ids)
{
    surety_model *m = surety_xcalloc(1, sizeof *m);
    m->name = surety_xstrdup("t");
    m->risk = 0.05;
    m->N = 10;
    m->seed = 1;
    m->n = n;
    m->m = 1;
    m->resources = surety_xcalloc(1, sizeof *m->resources);
    m->resources[0].id = surety_xstrdup("shop");
    m->resources[0].capacity = 100;
    m->resources[0].hours_factor = 1;
    m->jobs = surety_xcalloc(n, sizeof *m->jobs);
    for (size_t j = 0; j < n; j++) {
        surety_job *job = &m->jobs[j];
        job->id = surety_xstrdup(ids[j]);
        job->hours = d[j];
        job->has_hours = 1;
        job->profit.kind = SURETY_PROFIT_RULE;
        job->profit.rate = 10;
        job->profit.min = -INFINITY;
        job->profit.max = INFINITY;
        job->allowed = surety_xcalloc(1, 1);
        job->allowed[0] = 1;
    }
    return m;
}

static surety_dist make_dist(surety_dist_kind kind, double a, double b,
                             double c, double lo, double hi)
{
    surety_dist d;
    memset(&d, 0, sizeof d);
    d.kind = kind;
    d.a = a;
    d.b = b;
    d.c = c;
    d.lo = lo;
    d.hi = hi;
    return d;
}

/* ------------------------------------------------------------------ */
/* Generators                                                          */
/* ------------------------------------------------------------------ */

/* Reference outputs of xoshiro256** from state {1, 2, 3, 4}: 11520, 0,
 * 1509978240, 1215971899390074240 (from memory of the reference C code's
 * output, as used in the rand_xoshiro test vectors; confirmed by an
 * independent Python re-implementation of Blackman & Vigna's algorithm). */
Test(rng, xoshiro_reference)
{
    surety_rng r = {{1, 2, 3, 4}};
    cr_assert_eq(surety_rng_next(&r), 11520ULL);
    cr_assert_eq(surety_rng_next(&r), 0ULL);
    cr_assert_eq(surety_rng_next(&r), 1509978240ULL);
    cr_assert_eq(surety_rng_next(&r), 1215971899390074240ULL);
}

/* SplitMix64 from 1234567 gives 6457827717110365317, 3203168211198807973,
 * 9817491932198370423, 4593380528125082431 (from memory of the values
 * quoted for Vigna's splitmix64.c; confirmed by a Python re-implementation). */
Test(rng, splitmix_seeding_reference)
{
    surety_rng r = surety_rng_from(1234567);
    cr_assert_eq(r.s[0], 6457827717110365317ULL);
    cr_assert_eq(r.s[1], 3203168211198807973ULL);
    cr_assert_eq(r.s[2], 9817491932198370423ULL);
    cr_assert_eq(r.s[3], 4593380528125082431ULL);
}

/* Inverse of an odd number modulo 2^64 by Newton's iteration. */
static uint64_t inv64(uint64_t a)
{
    uint64_t x = a;
    for (int t = 0; t < 6; t++)
        x *= 2 - a * x;
    return x;
}

/* The uniform never reaches 0 or 1: states crafted so that the 64-bit
 * output is all zeros and all ones give exactly 2^-53 and 1 - 2^-53
 * (arithmetic: (0 + 1/2)/2^52 and (2^52 - 1 + 1/2)/2^52). */
Test(rng, uniform_open_interval_extremes)
{
    surety_rng r = {{1, 0, 0, 0}}; /* output rotl(0*5,7)*9 = 0 */
    cr_assert_eq(surety_rng_uniform(&r), 0x1.0p-53);
    /* output = rotl(s1*5, 7)*9 = 2^64-1  <=>  s1 = rotr((2^64-1)/9, 7)/5 */
    uint64_t t = UINT64_MAX * inv64(9);
    t = (t >> 7) | (t << 57);
    surety_rng q = {{0, t * inv64(5), 0, 0}}, q2 = q;
    cr_assert_eq(surety_rng_next(&q2), UINT64_MAX);
    double u = surety_rng_uniform(&q);
    cr_assert_eq(u, 1.0 - 0x1.0p-53);
    cr_assert(u < 1.0);
}

/* 10^6 uniforms: mean 1/2 with se sqrt(1/12/N) = 2.9e-4; variance 1/12
 * with se sqrt((1/80 - 1/144)/N) = 7.5e-5 (fourth central moment of U(0,1)
 * is 1/80). */
Test(rng, uniform_moments)
{
    const size_t N = 1000000;
    surety_rng r = surety_rng_at(3, 0, 0);
    double s = 0, s2 = 0;
    for (size_t l = 0; l < N; l++) {
        double u = surety_rng_uniform(&r);
        cr_assert(u > 0 && u < 1);
        s += u;
        s2 += u * u;
    }
    double m = s / N, v = s2 / N - m * m;
    cr_assert(fabs(m - 0.5) < Z5 * sqrt(1.0 / 12 / N), "mean %g", m);
    cr_assert(fabs(v - 1.0 / 12) < Z5 * sqrt((1.0 / 80 - 1.0 / 144) / N),
              "var %g", v);
}

/* Ziggurat normals against Phi (libm erfc): the Kolmogorov-Smirnov
 * distance of 10^6 draws stays below the 0.1% critical value
 * 1.9495/sqrt(N) (SciPy 1.10.1: kolmogi(0.001) = 1.9494746). The tail
 * beyond the ziggurat's base r = 3.6541528853610088 has probability
 * 2.5803e-4 (SciPy: 2*norm.sf(r)); its count is binomial, checked within 5
 * se. Mean 0 (se 1/sqrt N), variance 1 (se sqrt(2/N)), kurtosis 3 (se
 * sqrt(96/N)) within 5 se. */
Test(rng, ziggurat_normal_distribution)
{
    const size_t N = 1000000;
    double *z = surety_xmalloc(N, sizeof *z);
    size_t tail = 0;
    double s = 0, s2 = 0, s4 = 0;
    for (size_t l = 0; l < N; l++) {
        surety_rng r = surety_rng_at(11, 5, l / 16);
        /* several draws per generator, as a scenario makes; half of them
         * the keyed form the sampler uses */
        for (size_t k = 0; k < l % 16; k++)
            surety_rng_normal(&r);
        z[l] = l % 2 ? surety_rng_normal(&r)
                     : surety_rng_normal_keyed(&r, 977 * l + 5);
        tail += fabs(z[l]) > 3.6541528853610088;
        s += z[l];
        s2 += z[l] * z[l];
        s4 += z[l] * z[l] * z[l] * z[l];
    }
    qsort(z, N, sizeof *z, cmp_dbl);
    double D = 0;
    for (size_t l = 0; l < N; l++) {
        double F = phi_cdf(z[l]);
        D = fmax(D, fmax(fabs((double)(l + 1) / N - F),
                         fabs(F - (double)l / N)));
    }
    cr_assert(D < 1.9494746 / sqrt((double)N), "KS distance %g", D);
    double p = 2.5803248765390077e-4;
    cr_assert(fabs((double)tail - N * p) < Z5 * sqrt(N * p * (1 - p)),
              "tail count %zu", tail);
    double m = s / N, v = s2 / N, k = s4 / N;
    cr_assert(fabs(m) < Z5 / sqrt((double)N), "mean %g", m);
    cr_assert(fabs(v - 1) < Z5 * sqrt(2.0 / N), "var %g", v);
    cr_assert(fabs(k - 3) < Z5 * sqrt(96.0 / N), "kurtosis %g", k);
    surety_xfree(z);
}

/* The ziggurat's wedges and tail, where its rare branches act: the counts
 * of |z| in each layer's band [x[i+1], x[i]) and beyond r, from 10^7 keyed
 * draws, against the exact band probabilities 2 (Phi(x[i]) - Phi(x[i+1]))
 * (libm erfc). Pearson's chi-square with 255 degrees of freedom stays below
 * its 1e-6 critical value 377.08 (SciPy 1.10.1: chi2.ppf(1 - 1e-6, 255)).
 * A wedge test that accepts too often (heights drawn from half the range)
 * gives 463 here, the correct one 276. */
Test(rng, ziggurat_layer_bands)
{
    const size_t N = 10000000;
    const double *X = surety_rng_zig_x;
    double *cnt = surety_xcalloc(256, sizeof *cnt);
    surety_rng r = surety_rng_at(1, 2, 3);
    for (size_t l = 0; l < N; l++) {
        double z = fabs(surety_rng_normal_keyed(&r, l * 0x9e3779b97f4a7c15ULL));
        if (z >= X[1]) {
            cnt[0]++;
            continue;
        }
        int lo = 1, hi = 256; /* X[lo] > z >= X[hi] */
        while (hi - lo > 1) {
            int mid = (lo + hi) / 2;
            if (z >= X[mid])
                hi = mid;
            else
                lo = mid;
        }
        cnt[lo]++;
    }
    double p = 2 * (1 - phi_cdf(X[1]));
    double chi = (cnt[0] - N * p) * (cnt[0] - N * p) / (N * p);
    for (int i = 1; i < 256; i++) {
        p = 2 * (phi_cdf(X[i]) - phi_cdf(X[i + 1]));
        chi += (cnt[i] - N * p) * (cnt[i] - N * p) / (N * p);
    }
    cr_assert(chi < 377.0781154988172, "chi-square %g", chi);
    surety_xfree(cnt);
}

/* Streams: the generator of (seed, stream, l) is a pure function of the
 * three, and neighbouring scenarios, streams and seeds start elsewhere.
 * Uniforms of streams 0 and 1 at equal l are uncorrelated: |r| < 5/sqrt N
 * (se of a null correlation 1/sqrt N). */
Test(rng, streams_independent)
{
    surety_rng a = surety_rng_at(1, 0, 42), b = surety_rng_at(1, 0, 42);
    cr_assert(memcmp(&a, &b, sizeof a) == 0);
    uint64_t h = surety_hash_stream(1, 0, 42);
    cr_assert_neq(h, surety_hash_stream(1, 0, 43));
    cr_assert_neq(h, surety_hash_stream(1, 1, 42));
    cr_assert_neq(h, surety_hash_stream(2, 0, 42));
    cr_assert_neq(surety_hash_stream(0, 1, 0), surety_hash_stream(0, 0, 1));
    const size_t N = 200000;
    double *x = surety_xmalloc(N, sizeof *x), *y = surety_xmalloc(N, sizeof *y);
    for (size_t l = 0; l < N; l++) {
        surety_rng r0 = surety_rng_at(1, 0, l), r1 = surety_rng_at(1, 1, l);
        x[l] = surety_rng_uniform(&r0);
        y[l] = surety_rng_uniform(&r1);
    }
    double r = pearson(x, y, N);
    cr_assert(fabs(r) < Z5 / sqrt((double)N), "r = %g", r);
    surety_xfree(x);
    surety_xfree(y);
}

/* Rows equal under == hash equally: -0.0 and +0.0, also past the 64-value
 * buffer; a changed value changes the hash. */
Test(hash, doubles_rows)
{
    double a[100], b[100];
    for (int t = 0; t < 100; t++)
        a[t] = b[t] = t * 0.25;
    b[0] = -0.0;
    b[80] = b[80] + 0; /* same value */
    cr_assert_eq(surety_hash_doubles(a, 100), surety_hash_doubles(b, 100));
    a[70] = 0.0;
    b[70] = -0.0;
    cr_assert_eq(surety_hash_doubles(a, 100), surety_hash_doubles(b, 100));
    b[99] = 1e-300;
    cr_assert_neq(surety_hash_doubles(a, 100), surety_hash_doubles(b, 100));
    cr_assert_neq(surety_hash_doubles(a, 99), surety_hash_doubles(a, 100));
}

/* ------------------------------------------------------------------ */
/* Quantile functions against SciPy                                    */
/* ------------------------------------------------------------------ */

static const double U[7] = {1e-10, 0.001, 0.025, 0.3, 0.5, 0.9, 0.999999};

static void check_quantiles(const surety_dist *d, const double *want,
                            double rtol, const char *what)
{
    for (int t = 0; t < 7; t++) {
        double got = surety_dist_quantile(d, U[t]);
        cr_assert(fabs(got - want[t]) <= rtol * fabs(want[t]),
                  "%s at u=%g: %.17g, SciPy %.17g", what, U[t], got, want[t]);
    }
}

/* Values: SciPy 1.10.1 ppf at u = 1e-10, .001, .025, .3, .5, .9, .999999.
 * Truncated laws: scipy.stats.truncnorm for the normal, and
 * ppf(F(lo) + u (F(hi) - F(lo))) with SciPy's own cdf/ppf for the others.
 * Tolerance 1e-11 relative: AS 241 is good to about 1e-16 and the
 * truncation map costs a few ulps more (far tails lose more: 1e-9). */
Test(dist, quantiles_match_scipy)
{
    surety_dist d;
    d = make_dist(SURETY_DIST_NORMAL, 10, 2, 0, -INFINITY, INFINITY);
    check_quantiles(&d, (double[]){-2.7226818048081114, 3.8195353876643736,
        6.080072030919891, 8.9511989745839173, 10, 12.5631031310892,
        19.506848617634176}, 1e-12, "normal(10,2)");

    d = make_dist(SURETY_DIST_NORMAL, 10, 2, 0, 7, 12);
    check_quantiles(&d, (double[]){7.0000000011960335, 7.0119070898525688,
        7.2705613270935032, 8.946412804721982, 9.7692602287437591,
        11.437749755049861, 11.999993598099053}, 1e-11,
        "truncnorm(10,2,[7,12])");

    d = make_dist(SURETY_DIST_NORMAL, 10, 2, 0, 16, INFINITY);
    check_quantiles(&d, (double[]){16.000000000060918, 16.000609459102272,
        16.015406317241634, 16.214033393274285, 16.410309841197865,
        17.285044551663248, 21.897764692258676}, 1e-11,
        "truncnorm(10,2,[16,inf))");

    d = make_dist(SURETY_DIST_NORMAL, 10, 2, 0, -INFINITY, 5);
    check_quantiles(&d, (double[]){-4.2012514237786522, 1.2598128565977529,
        2.7872147810704613, 4.1990203252831924, 4.5270006177257125,
        4.9257934550377547, 4.9999992914694635}, 1e-11,
        "truncnorm(10,2,(-inf,5])");

    /* 8 to 9 sd above the mean: F(lo) rounds to 1 in double, so only the
     * survival-function form can place these. */
    d = make_dist(SURETY_DIST_NORMAL, 10, 2, 0, 26, 28);
    check_quantiles(&d, (double[]){26.000000000024627, 26.000246340578169,
        26.006232538630773, 26.087584260780485, 26.169777798036339,
        26.557218074023105, 27.998793172143966}, 1e-9,
        "truncnorm(10,2,[26,28])");

    /* Lognormal with hours mean 8, sd 3: SciPy lognorm(s=0.3627345555481574,
     * scale=exp(2.013653362785476)). */
    d = make_dist(SURETY_DIST_LOGNORMAL, 8, 3, 0, -INFINITY, INFINITY);
    check_quantiles(&d, (double[]){0.74540707372944437, 2.4417605613770701,
        3.6792417985961245, 6.193096326195346, 7.4906334205523537,
        11.923561497114608, 42.009030907473566}, 1e-12, "lognormal(8,3)");

    d = make_dist(SURETY_DIST_LOGNORMAL, 8, 3, 0, 5, 12);
    check_quantiles(&d, (double[]){5.000000000651732, 5.0065085532117273,
        5.1579119988701407, 6.6009928369894535, 7.6129625929671505,
        10.528455217652121, 11.999980450435533}, 1e-11,
        "lognormal(8,3) in [5,12]");

    /* scipy.stats.triang(c=0.2, loc=2, scale=5) */
    d = make_dist(SURETY_DIST_TRIANGULAR, 2, 3, 7, -INFINITY, INFINITY);
    check_quantiles(&d, (double[]){2.0000223606797749, 2.0707106781186546,
        2.353553390593274, 3.2583426132260591, 3.8377223398316205,
        5.5857864376269051, 6.9955278640449361}, 1e-12, "triangular(2,3,7)");

    d = make_dist(SURETY_DIST_TRIANGULAR, 2, 3, 7, 2.5, 6);
    check_quantiles(&d, (double[]){2.50000000045, 2.5044799302251777,
        2.6020797289396147, 3.312182217082845, 3.8377223398316205,
        5.3266799469318489, 5.9999910000404988}, 1e-11,
        "triangular(2,3,7) in [2.5,6]");

    /* mode at the upper end: scipy.stats.triang(c=1, loc=2, scale=3) */
    d = make_dist(SURETY_DIST_TRIANGULAR, 2, 5, 5, -INFINITY, INFINITY);
    check_quantiles(&d, (double[]){2.0000300000000002, 2.0948683298050512,
        2.474341649025257, 3.6431676725154984, 4.1213203435596428,
        4.8460498941515411, 4.9999984999996254}, 1e-12, "triangular(2,5,5)");

    /* A truncated uniform is uniform on the intersection (arithmetic). */
    d = make_dist(SURETY_DIST_UNIFORM, 2, 5, 0, 3, 10);
    for (int t = 0; t < 7; t++)
        cr_assert_float_eq(surety_dist_quantile(&d, U[t]), 3 + 2 * U[t],
                           1e-15);
}

/* Empirical: the inverse of the empirical CDF, NumPy 1.24.2
 * quantile(values, u, method='inverted_cdf'): for {1,2,2,3,5,8} at the
 * U above: 1, 1, 1, 2, 2, 8, 8 (u = 0.5 = 3/6 sits on a step and takes
 * the lower value). Truncation to [2, 5] keeps {2,2,3,5}. */
Test(dist, empirical_inverse_cdf)
{
    double v[6] = {1, 2, 2, 3, 5, 8};
    surety_dist d = make_dist(SURETY_DIST_EMPIRICAL, 0, 0, 0, -INFINITY,
                              INFINITY);
    d.values = v;
    d.nvalues = 6;
    const double want[7] = {1, 1, 1, 2, 2, 8, 8};
    for (int t = 0; t < 7; t++)
        cr_assert_eq(surety_dist_quantile(&d, U[t]), want[t], "u=%g", U[t]);
    d.lo = 2;
    d.hi = 5;
    /* inverted_cdf of {2,2,3,5}: u <= .5 -> 2, (.5,.75] -> 3, > .75 -> 5 */
    cr_assert_eq(surety_dist_quantile(&d, 0.1), 2);
    cr_assert_eq(surety_dist_quantile(&d, 0.6), 3);
    cr_assert_eq(surety_dist_quantile(&d, 0.999), 5);
}

/* The batched maps the sampler uses give the same bits as the one-value
 * maps (which the SciPy checks above cover), for uniforms and for the
 * copula's normals, on every kind: truncated both ways, flipped to the
 * survival side, direct, discrete. 5000 values cross several internal
 * passes and both AS 241 regions. */
Test(dist, batch_equals_scalar)
{
    double v[6] = {1, 2, 2, 3, 5, 8};
    surety_dist ds[9] = {
        make_dist(SURETY_DIST_NORMAL, 10, 2, 0, 7, 12),
        make_dist(SURETY_DIST_NORMAL, 10, 2, 0, 16, INFINITY),
        make_dist(SURETY_DIST_NORMAL, 10, 2, 0, -INFINITY, INFINITY),
        make_dist(SURETY_DIST_LOGNORMAL, 8, 3, 0, 5, 12),
        make_dist(SURETY_DIST_LOGNORMAL, 8, 3, 0, 14, 30),
        make_dist(SURETY_DIST_LOGNORMAL, 8, 3, 0, -INFINITY, INFINITY),
        make_dist(SURETY_DIST_TRIANGULAR, 2, 3, 7, 2.5, 6),
        make_dist(SURETY_DIST_UNIFORM, 2, 5, 0, 3, 10),
        make_dist(SURETY_DIST_EMPIRICAL, 0, 0, 0, -INFINITY, INFINITY)};
    ds[8].values = v;
    ds[8].nvalues = 6;
    enum { M = 5000 };
    double *u = surety_xmalloc(M, sizeof *u), *z = surety_xmalloc(M, sizeof *z);
    double *x = surety_xmalloc(2 * M, sizeof *x);
    surety_rng r = surety_rng_at(2, 0, 0);
    for (int t = 0; t < M; t++) {
        u[t] = surety_rng_uniform(&r);
        z[t] = surety_rng_normal(&r);
    }
    for (int k = 0; k < 9; k++) {
        surety_marginal mg;
        surety_error err;
        cr_assert_eq(surety_dist_prepare(&mg, &ds[k], "J", NULL, &err),
                     SURETY_OK, "%d: %s", k, err.message);
        /* strided output, as the sampler writes one job's column */
        surety_dist_apply_uniform(&mg, u, 1, M, x, 2);
        for (int t = 0; t < M; t++) {
            double want = surety_dist_from_uniform(&mg, u[t]);
            cr_assert(memcmp(&x[2 * t], &want, sizeof want) == 0,
                      "law %d, u = %.17g: %.17g vs %.17g", k, u[t], x[2 * t],
                      want);
        }
        surety_dist_apply_normal(&mg, z, 1, M, x, 2);
        for (int t = 0; t < M; t++) {
            double want = surety_dist_from_normal(&mg, z[t]);
            cr_assert(memcmp(&x[2 * t], &want, sizeof want) == 0,
                      "law %d, z = %.17g: %.17g vs %.17g", k, z[t], x[2 * t],
                      want);
        }
    }
    surety_xfree(u);
    surety_xfree(z);
    surety_xfree(x);
}

/* Lognormal parameters from the hours' mean and sd: SciPy check values
 * mu = 2.013653362785476, sigma = 0.3627345555481574 for (8, 3). */
Test(dist, lognormal_parameters)
{
    double mu, sigma;
    surety_dist_lognormal_params(8, 3, &mu, &sigma);
    cr_assert_float_eq(mu, 2.013653362785476, 1e-14);
    cr_assert_float_eq(sigma, 0.3627345555481574, 1e-14);
}

Test(dist, invalid_laws_name_the_job)
{
    surety_marginal mg;
    surety_error err;
    surety_dist d = make_dist(SURETY_DIST_NORMAL, 10, 0, 0, -INFINITY,
                              INFINITY);
    cr_assert_eq(surety_dist_prepare(&mg, &d, "J7", "jobs[6].hours", &err),
                 SURETY_EINPUT);
    cr_assert(strstr(err.message, "'J7'"), "%s", err.message);
    cr_assert_str_eq(err.field, "jobs[6].hours");
    /* 40 sd above the mean: the window's probability underflows to 0 */
    d = make_dist(SURETY_DIST_NORMAL, 10, 1, 0, 50, 51);
    cr_assert_eq(surety_dist_prepare(&mg, &d, "J7", NULL, &err),
                 SURETY_EINPUT);
    cr_assert(strstr(err.message, "no probability"), "%s", err.message);
    d = make_dist(SURETY_DIST_UNIFORM, 1, 2, 0, 3, 4);
    cr_assert_eq(surety_dist_prepare(&mg, &d, "J7", NULL, &err),
                 SURETY_EINPUT);
    d = make_dist(SURETY_DIST_TRIANGULAR, 1, 3, 2, -INFINITY, INFINITY);
    cr_assert_eq(surety_dist_prepare(&mg, &d, "J7", NULL, &err),
                 SURETY_EINPUT);
    double v[2] = {1, 2};
    d = make_dist(SURETY_DIST_EMPIRICAL, 0, 0, 0, 2.5, 3);
    d.values = v;
    d.nvalues = 2;
    cr_assert_eq(surety_dist_prepare(&mg, &d, "J7", NULL, &err),
                 SURETY_EINPUT);
    cr_assert(isnan(surety_dist_quantile(&d, 0.5)));
}

/* ------------------------------------------------------------------ */
/* Sampled moments and quantiles                                       */
/* ------------------------------------------------------------------ */

/* Mean within 5 se = 5 sd/sqrt(N). Sample sd within 5 se with
 * se(s) = sd sqrt((kappa + 2)/(4N)): Var(s^2) ~ sd^4 (kappa + 2)/N for
 * excess kurtosis kappa, and the delta method divides by 2 sd. */
static void check_moments(const double *x, size_t N, double mean, double sd,
                          double kappa, const char *what)
{
    double m = mean_of(x, N), s = sd_of(x, N);
    cr_assert(fabs(m - mean) < Z5 * sd / sqrt((double)N),
              "%s: mean %.6g, expected %.6g", what, m, mean);
    cr_assert(fabs(s - sd) < Z5 * sd * sqrt((kappa + 2) / (4.0 * N)),
              "%s: sd %.6g, expected %.6g", what, s, sd);
}

/* A sample quantile check via the binomial: the fraction of draws at or
 * below the true p-quantile q_p is p with se sqrt(p(1-p)/N). */
static void check_cdf_at(const double *x, size_t N, double q, double p,
                         const char *what)
{
    double f = frac_at_most(x, N, q);
    cr_assert(fabs(f - p) < Z5 * sqrt(p * (1 - p) / N),
              "%s: P(X <= %g) = %g, expected %g", what, q, f, p);
}

Test(sample, marginal_moments_and_quantiles)
{
    const size_t N = 100000;
    surety_model *model = model_with(
        JOB("N", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 2}") ", "
        JOB("T", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 2, "
                 "\"min\": 7, \"max\": 12}") ", "
        JOB("L", "{\"dist\": \"lognormal\", \"mean\": 8, \"sd\": 3}") ", "
        JOB("U", "{\"dist\": \"uniform\", \"low\": 2, \"high\": 5}") ", "
        JOB("R", "{\"dist\": \"triangular\", \"low\": 2, \"mode\": 3, "
                 "\"high\": 7}") ", "
        JOB("E", "{\"dist\": \"empirical\", \"values\": [1, 2, 2, 3, 5, 8]}")
        ", " JOB("F", "{\"dist\": \"fixed\", \"value\": 4.5}"),
        "", N, 21);
    surety_scenarios *sc = draw(model, SURETY_STREAM_SOLVE, 0, N);
    size_t n = 7;
    double *x;

    x = column(sc->hours, N, n, 0);
    check_moments(x, N, 10, 2, 0, "normal");
    /* SciPy: norm(10,2).ppf(.3) = 8.9511989745839173, ppf(.9) = 12.563.. */
    check_cdf_at(x, N, 8.9511989745839173, 0.3, "normal");
    check_cdf_at(x, N, 12.5631031310892, 0.9, "normal");
    surety_xfree(x);

    /* Truncated normal on [7, 12] (alpha = -1.5, beta = 1): every draw
     * inside; mean mu + sigma (phi(alpha) - phi(beta)) / (Phi(beta) -
     * Phi(alpha)) (Johnson, Kotz & Balakrishnan, Continuous Univariate
     * Distributions vol. 1, 2nd ed. 1994, s.13.10), which SciPy gives as
     * truncnorm.mean() = 9.709625105694947, sd 1.2894727700225226 and
     * excess kurtosis -0.9405144690119158. */
    x = column(sc->hours, N, n, 1);
    for (size_t l = 0; l < N; l++)
        cr_assert(x[l] >= 7 && x[l] <= 12, "draw %g outside [7,12]", x[l]);
    double a = -1.5, b = 1.0;
    double tmean = 10 + 2 * (phi_pdf(a) - phi_pdf(b)) /
                            (phi_cdf(b) - phi_cdf(a));
    cr_assert_float_eq(tmean, 9.709625105694947, 1e-12);
    check_moments(x, N, tmean, 1.2894727700225226, -0.9405144690119158,
                  "truncated normal");
    check_cdf_at(x, N, 8.946412804721982, 0.3, "truncated normal");
    surety_xfree(x);

    /* Lognormal with hours mean 8, sd 3; excess kurtosis 2.5637 (SciPy). */
    x = column(sc->hours, N, n, 2);
    check_moments(x, N, 8, 3, 2.563707411289215, "lognormal");
    check_cdf_at(x, N, 6.193096326195346, 0.3, "lognormal");
    check_cdf_at(x, N, 11.923561497114608, 0.9, "lognormal");
    surety_xfree(x);

    /* Uniform(2,5): mean 3.5, sd 3/sqrt(12), excess kurtosis -1.2. */
    x = column(sc->hours, N, n, 3);
    check_moments(x, N, 3.5, 3 / sqrt(12.0), -1.2, "uniform");
    check_cdf_at(x, N, 2.9, 0.3, "uniform");
    surety_xfree(x);

    /* Triangular(2,3,7): mean 4, sd 1.0801234497346435, kappa -0.6
     * (SciPy). */
    x = column(sc->hours, N, n, 4);
    check_moments(x, N, 4, 1.0801234497346435, -0.6, "triangular");
    check_cdf_at(x, N, 3.2583426132260591, 0.3, "triangular");
    surety_xfree(x);

    /* Empirical {1,2,2,3,5,8}: mean 3.5, population sd sqrt(41/12),
     * kappa from the six values (arithmetic below). */
    x = column(sc->hours, N, n, 5);
    double v[6] = {1, 2, 2, 3, 5, 8}, m2 = 0, m4 = 0;
    for (int t = 0; t < 6; t++) {
        m2 += (v[t] - 3.5) * (v[t] - 3.5) / 6;
        m4 += pow(v[t] - 3.5, 4) / 6;
    }
    check_moments(x, N, 3.5, sqrt(m2), m4 / (m2 * m2) - 3, "empirical");
    check_cdf_at(x, N, 2, 0.5, "empirical");
    check_cdf_at(x, N, 5, 5.0 / 6, "empirical");
    surety_xfree(x);

    for (size_t l = 0; l < N; l++)
        cr_assert_eq(sc->hours[l * n + 6], 4.5);

    surety_scenarios_free(sc);
    surety_model_free(model);
}

/* Hours are clamped at 0: an untruncated normal(1, 2) (possible through
 * the C API; the model reader truncates normals at 0 itself) puts
 * Phi(-0.5) = 0.3085375387259869 (SciPy) of its mass below 0, which must
 * land exactly on +0. Profit is the rule clamp(rate*hours + fixed, min,
 * max) of the clamped hours. */
Test(sample, clamp_at_zero_and_profit_rule)
{
    const size_t N = 100000;
    surety_dist d = make_dist(SURETY_DIST_NORMAL, 1, 2, 0, -INFINITY,
                              INFINITY);
    const char *ids[1] = {"W"};
    surety_model *model = struct_model(1, &d, ids);
    model->jobs[0].profit = (surety_profit){SURETY_PROFIT_RULE, 30, 5, 20, 100};
    surety_scenarios *sc = draw(model, SURETY_STREAM_SOLVE, 0, N);
    size_t zeros = 0;
    for (size_t l = 0; l < N; l++) {
        double h = sc->hours[l];
        cr_assert(h >= 0 && !signbit(h), "hours %g", h);
        zeros += h == 0;
        double p = 30 * h + 5;
        p = p < 20 ? 20 : p > 100 ? 100 : p;
        cr_assert_eq(sc->profit[l], p);
    }
    double p0 = 0.3085375387259869;
    cr_assert(fabs((double)zeros / N - p0) < Z5 * sqrt(p0 * (1 - p0) / N),
              "zero fraction %g", (double)zeros / N);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

/* ------------------------------------------------------------------ */
/* Gaussian copula                                                     */
/* ------------------------------------------------------------------ */

/* METHODS.md s.9.2 check values of the rank-correlation helpers. */
Test(copula, rank_correlation_helpers)
{
    cr_assert_float_eq(surety_dist_rho_for_spearman(0.5), 0.5176381, 5e-8);
    cr_assert_float_eq(surety_dist_rho_for_spearman(0.3), 0.3128689, 5e-8);
    cr_assert_float_eq(surety_dist_spearman_of(0.8), 0.7859393, 5e-8);
    cr_assert_float_eq(surety_dist_spearman_of(0.5), 0.4825837, 5e-8);
    /* Kendall (2/pi) asin(0.5) = 1/3 (arithmetic) */
    cr_assert_float_eq(surety_dist_kendall_of(0.5), 1.0 / 3, 1e-15);
}

/* METHODS.md s.9.2: R = [[1,.5,.2],[.5,1,.2],[.2,.2,1]] has L rows
 * (1,0,0), (0.5,0.8660254,0), (0.2,0.11547005,0.97296797). */
Test(copula, cholesky_check_value)
{
    surety_model *model = model_with(
        JOB("A", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}") ", "
        JOB("B", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}") ", "
        JOB("C", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}"),
        "\"correlation\": {\"pairs\": [[\"A\", \"B\", 0.5], "
        "[\"A\", \"C\", 0.2], [\"B\", \"C\", 0.2]]}", 10, 1);
    const double want[9] = {1, 0, 0, 0.5, 0.8660254, 0, 0.2, 0.11547005,
                            0.97296797};
    cr_assert_not_null(model->chol);
    for (int t = 0; t < 9; t++)
        cr_assert(fabs(model->chol[t] - want[t]) < 5e-9, "L[%d] = %.9f", t,
                  model->chol[t]);
    cr_assert_eq(model->corr_repaired, 0);
    surety_model_free(model);
}

/* The normals' Pearson correlation is recovered: sample r has se
 * (1 - rho^2)/sqrt(N) for bivariate normals (Fisher 1915; any statistics
 * text), checked within 5 se. Normal marginals are affine in z, so the
 * hours carry the same correlation. */
Test(copula, pearson_recovered)
{
    const size_t N = 100000;
    surety_model *model = model_with(
        JOB("A", "{\"dist\": \"normal\", \"mean\": 50, \"sd\": 5}") ", "
        JOB("B", "{\"dist\": \"normal\", \"mean\": 40, \"sd\": 4}") ", "
        JOB("C", "{\"dist\": \"normal\", \"mean\": 30, \"sd\": 3}"),
        "\"correlation\": {\"pairs\": [[\"A\", \"B\", 0.6], "
        "[\"A\", \"C\", -0.3], [\"B\", \"C\", 0.2]]}", N, 8);
    surety_scenarios *sc = draw(model, SURETY_STREAM_SOLVE, 0, N);
    double *a = column(sc->hours, N, 3, 0), *b = column(sc->hours, N, 3, 1),
           *c = column(sc->hours, N, 3, 2);
    double want[3] = {0.6, -0.3, 0.2};
    double got[3] = {pearson(a, b, N), pearson(a, c, N), pearson(b, c, N)};
    for (int t = 0; t < 3; t++)
        cr_assert(fabs(got[t] - want[t]) <
                      Z5 * (1 - want[t] * want[t]) / sqrt((double)N),
                  "pair %d: r = %g, expected %g", t, got[t], want[t]);
    check_moments(a, N, 50, 5, 0, "copula normal A");
    surety_xfree(a);
    surety_xfree(b);
    surety_xfree(c);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

/* Rank correlation through arbitrary marginals: Spearman = (6/pi)
 * asin(rho/2) = 0.7859393 for rho = 0.8 and 0.4825837 for 0.5 (METHODS.md
 * s.9.2). Tolerance on Fisher's z scale: var(atanh r_s) ~ 1.06/(N-3)
 * (Fieller, Hartley & Pearson, Biometrika 44, 1957), 5 se. Marginals:
 * uniform, truncated lognormal, triangular, truncated normal: the maps are
 * monotone, so the ranks are those of the normals. */
Test(copula, spearman_through_marginals)
{
    const size_t N = 100000;
    surety_model *model = model_with(
        JOB("A", "{\"dist\": \"uniform\", \"low\": 1, \"high\": 9}") ", "
        JOB("B", "{\"dist\": \"lognormal\", \"mean\": 8, \"sd\": 3, "
                 "\"min\": 5, \"max\": 12}") ", "
        JOB("C", "{\"dist\": \"triangular\", \"low\": 2, \"mode\": 3, "
                 "\"high\": 7}") ", "
        JOB("D", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 2, "
                 "\"min\": 16}"),
        "\"correlation\": {\"pairs\": [[\"A\", \"B\", 0.8], "
        "[\"C\", \"D\", 0.5]]}", N, 13);
    surety_scenarios *sc = draw(model, SURETY_STREAM_SOLVE, 0, N);
    double *x[4];
    for (int j = 0; j < 4; j++)
        x[j] = column(sc->hours, N, 4, (size_t)j);
    double tol = Z5 * sqrt(1.06 / (N - 3));
    double s1 = spearman(x[0], x[1], N), s2 = spearman(x[2], x[3], N);
    cr_assert(fabs(atanh(s1) - atanh(0.7859393)) < tol, "rs = %g", s1);
    cr_assert(fabs(atanh(s2) - atanh(0.4825837)) < tol, "rs = %g", s2);
    /* uncorrelated pairs stay at 0 (null se 1/sqrt(N-1)) */
    double s0 = spearman(x[0], x[2], N);
    cr_assert(fabs(s0) < Z5 / sqrt((double)N - 1), "rs = %g", s0);
    /* marginals keep their truncation; D's mean is SciPy's
     * truncnorm(3, inf, 10, 2).mean() = 16.566197309860879, sd 0.5313 */
    for (size_t l = 0; l < N; l++) {
        cr_assert(x[1][l] >= 5 && x[1][l] <= 12);
        cr_assert(x[3][l] >= 16);
    }
    /* excess kurtosis of D: SciPy truncnorm(3, inf).stats('k') = 3.8024 */
    check_moments(x[3], N, 16.566197309860879, 0.53125958545801644,
                  3.802384508393998, "truncated normal in the copula");
    for (int j = 0; j < 4; j++)
        surety_xfree(x[j]);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

/* J1-J2 0.9, J1-J3 0.9, J2-J3 -0.9 cannot hold together (eigenvalue -0.8,
 * NumPy); the leading minor of order 3 fails, so the message names J3 and
 * its partners J1 and J2. */
static const char *bad_corr =
    "\"correlation\": {\"pairs\": [[\"J1\", \"J2\", 0.9], "
    "[\"J1\", \"J3\", 0.9], [\"J2\", \"J3\", -0.9]]%s}";

static const char *three_jobs =
    JOB("J1", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}") ", "
    JOB("J2", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}") ", "
    JOB("J3", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}");

Test(copula, not_positive_definite_names_jobs)
{
    char corr[512], json[4096];
    snprintf(corr, sizeof corr, bad_corr, "");
    snprintf(json, sizeof json,
             "{\"name\": \"t\", \"risk\": 0.05, \"scenarios\": 10, "
             "\"resources\": [{\"id\": \"shop\", \"capacity\": 100}], "
             "\"jobs\": [%s], %s}", three_jobs, corr);
    surety_model *model = NULL;
    surety_error err;
    surety_code rc = surety_model_parse(json, "t.json", NULL, &model, &err);
    cr_assert_eq(rc, SURETY_EINPUT);
    cr_assert_null(model);
    cr_assert(strstr(err.message, "'J3'"), "%s", err.message);
    cr_assert(strstr(err.message, "'J1' (0.9)"), "%s", err.message);
    cr_assert(strstr(err.message, "'J2' (-0.9)"), "%s", err.message);
    cr_assert(strstr(err.message, "positive definite"), "%s", err.message);

    /* Directly, a 4 x 4 whose first three jobs are consistent (NumPy
     * eigenvalues of the whole: -0.3997, 0.2, 1.48, 2.72): job D fails. */
    surety_model m;
    memset(&m, 0, sizeof m);
    surety_job jobs[4];
    memset(jobs, 0, sizeof jobs);
    const char *ids[4] = {"A", "B", "C", "D"};
    for (int j = 0; j < 4; j++)
        jobs[j].id = (char *)ids[j];
    double R[16] = {1, .8, .8, -.5, .8, 1, .8, .6, .8, .8, 1, .6,
                    -.5, .6, .6, 1};
    m.n = 4;
    m.jobs = jobs;
    m.corr = R;
    rc = surety_model_factor_correlation(&m, 0, &err);
    cr_assert_eq(rc, SURETY_EINPUT);
    cr_assert(strstr(err.message, "job 'D' with 'A' (-0.5), 'B' (0.6), "
                                  "'C' (0.6)"), "%s", err.message);
    cr_assert_null(m.chol);
}

/* Repair by eigenvalue clipping at 1e-6 and rescaling to unit diagonal
 * gives NumPy 1.24.2's result of the same recipe (eigh, maximum(w, 1e-6),
 * V diag(w) V^T, D^-1/2 . D^-1/2): off-diagonals 0.49999960526326165,
 * 0.49999960526326154, -0.499999605263262. The result is a valid
 * correlation matrix: symmetric, unit diagonal, L L^T = R. */
Test(copula, repair_gives_valid_matrix)
{
    char corr[512];
    snprintf(corr, sizeof corr, bad_corr, ", \"repair\": true");
    surety_model *model = model_with(three_jobs, corr, 10, 1);
    cr_assert_eq(model->corr_repaired, 1);
    const double *R = model->corr, *L = model->chol;
    cr_assert_not_null(L);
    cr_assert(fabs(R[1] - 0.49999960526326165) < 1e-9, "%.17g", R[1]);
    cr_assert(fabs(R[2] - 0.49999960526326154) < 1e-9, "%.17g", R[2]);
    cr_assert(fabs(R[5] + 0.499999605263262) < 1e-9, "%.17g", R[5]);
    for (int r = 0; r < 3; r++) {
        cr_assert_eq(R[r * 3 + r], 1.0);
        for (int s = 0; s < 3; s++) {
            cr_assert_eq(R[r * 3 + s], R[s * 3 + r]);
            double acc = 0;
            for (int k = 0; k < 3; k++)
                acc += L[r * 3 + k] * L[s * 3 + k];
            cr_assert(fabs(acc - R[r * 3 + s]) < 1e-12);
        }
    }
    surety_model_free(model);

    /* Same through the 4 x 4 (NumPy: R'[0][1] = 0.6345766288884783,
     * R'[0][3] = -0.3151014395985777, R'[1][2] = 0.8110023415613168). */
    surety_model m;
    memset(&m, 0, sizeof m);
    surety_job jobs[4];
    memset(jobs, 0, sizeof jobs);
    const char *ids[4] = {"A", "B", "C", "D"};
    for (int j = 0; j < 4; j++)
        jobs[j].id = (char *)ids[j];
    double R4[16] = {1, .8, .8, -.5, .8, 1, .8, .6, .8, .8, 1, .6,
                     -.5, .6, .6, 1};
    m.n = 4;
    m.jobs = jobs;
    m.corr = R4;
    surety_error err;
    cr_assert_eq(surety_model_factor_correlation(&m, 1, &err), SURETY_OK);
    cr_assert(fabs(R4[1] - 0.6345766288884783) < 1e-9);
    cr_assert(fabs(R4[3] + 0.3151014395985777) < 1e-9);
    cr_assert(fabs(R4[6] - 0.8110023415613168) < 1e-9);
    surety_xfree(m.chol);
}

/* A job outside the copula keeps its values when other jobs become
 * correlated (their draws turn from uniforms into normals): every job takes
 * exactly one output of the scenario's generator. */
Test(copula, independent_job_unchanged)
{
    const char *jobs =
        JOB("A", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}") ", "
        JOB("B", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 1}") ", "
        JOB("C", "{\"dist\": \"triangular\", \"low\": 1, \"mode\": 2, "
                 "\"high\": 4}");
    surety_model *m0 = model_with(jobs, "", 300, 4);
    surety_model *m1 = model_with(
        jobs, "\"correlation\": {\"pairs\": [[\"A\", \"B\", 0.7]]}", 300, 4);
    surety_scenarios *s0 = draw(m0, 0, 0, 300), *s1 = draw(m1, 0, 0, 300);
    size_t same_b = 0;
    for (size_t l = 0; l < 300; l++) {
        cr_assert_eq(s0->hours[l * 3 + 2], s1->hours[l * 3 + 2]);
        same_b += s0->hours[l * 3 + 1] == s1->hours[l * 3 + 1];
    }
    cr_assert_lt(same_b, 300); /* B itself did change */
    surety_scenarios_free(s0);
    surety_scenarios_free(s1);
    surety_model_free(m0);
    surety_model_free(m1);
}

/* ------------------------------------------------------------------ */
/* Reproducibility                                                     */
/* ------------------------------------------------------------------ */

static const char *mixed_jobs =
    JOB("A", "{\"dist\": \"normal\", \"mean\": 10, \"sd\": 2, \"min\": 0.5}")
    ", " JOB("B", "{\"dist\": \"lognormal\", \"mean\": 8, \"sd\": 3}") ", "
    JOB("C", "{\"dist\": \"uniform\", \"low\": 1, \"high\": 3}") ", "
    JOB("D", "{\"dist\": \"empirical\", \"values\": [3, 4, 6]}") ", "
    JOB("E", "{\"dist\": \"normal\", \"mean\": 5, \"sd\": 1}");

static const char *mixed_corr =
    "\"correlation\": {\"all\": 0.2, \"pairs\": [[\"A\", \"B\", 0.6]]}";

Test(repro, same_seed_same_bytes_and_prefix)
{
    for (int cor = 0; cor < 2; cor++) {
        surety_model *model = model_with(mixed_jobs, cor ? mixed_corr : "",
                                         1000, 99);
        size_t n = 5, N = 1000;
        surety_scenarios *a = draw(model, 0, 0, N), *b = draw(model, 0, 0, N);
        cr_assert(memcmp(a->hours, b->hours, N * n * sizeof(double)) == 0);
        cr_assert(memcmp(a->profit, b->profit, N * n * sizeof(double)) == 0);
        /* 2N extends N: the first N rows are the same bytes */
        surety_scenarios *c = draw(model, 0, 0, 2 * N);
        cr_assert(memcmp(a->hours, c->hours, N * n * sizeof(double)) == 0);
        cr_assert(memcmp(a->profit, c->profit, N * n * sizeof(double)) == 0);
        /* another stream and another seed give other numbers */
        surety_scenarios *d = draw(model, 1, 0, N);
        cr_assert(memcmp(a->hours, d->hours, N * n * sizeof(double)) != 0);
        surety_model_set_seed(model, 100);
        surety_scenarios *e = draw(model, 0, 0, N);
        cr_assert(memcmp(a->hours, e->hours, N * n * sizeof(double)) != 0);
        surety_scenarios_free(a);
        surety_scenarios_free(b);
        surety_scenarios_free(c);
        surety_scenarios_free(d);
        surety_scenarios_free(e);
        surety_model_free(model);
    }
}

/* Any window (first, count), in any order, from one sampler or a fresh
 * one, gives the bytes of the corresponding rows: blocks straddled,
 * single rows, a window far out in the stream. */
Test(repro, windows_equal_rows)
{
    const size_t n = 5, N = 700;
    for (int cor = 0; cor < 2; cor++) {
        surety_model *model = model_with(mixed_jobs, cor ? mixed_corr : "",
                                         N, 7);
        surety_scenarios *ref = draw(model, 3, 0, N);
        surety_sampler *smp = surety_sampler_new(model);
        cr_assert_not_null(smp);
        static const size_t win[][2] = {
            {0, 1},   {63, 2},  {64, 64}, {5, 300}, {699, 1}, {130, 1},
            {1, 698}, {127, 1}, {128, 1}, {200, 57}, {0, 700}, {333, 333},
        };
        double h[700 * 5], p[700 * 5];
        for (size_t w = 0; w < sizeof win / sizeof *win; w++) {
            size_t f = win[w][0], c = win[w][1];
            surety_sampler_fill(smp, 3, f, c, h, p);
            cr_assert(memcmp(h, ref->hours + f * n, c * n * sizeof(double))
                          == 0, "window (%zu, %zu)", f, c);
            cr_assert(memcmp(p, ref->profit + f * n, c * n * sizeof(double))
                          == 0, "window (%zu, %zu)", f, c);
        }
        /* interleaving streams does not disturb the cached block */
        surety_sampler_fill(smp, 4, 10, 3, h, NULL);
        surety_sampler_fill(smp, 3, 10, 3, h, NULL);
        cr_assert(memcmp(h, ref->hours + 10 * n, 3 * n * sizeof(double)) == 0);
        surety_sampler_free(smp);

        /* far out in the stream: surety_sample with first = 10^12 */
        size_t far = 1000000000000ULL + 37;
        surety_scenarios *fs = draw(model, 3, far, 100);
        smp = surety_sampler_new(model);
        surety_sampler_fill(smp, 3, far + 60, 10, h, p);
        cr_assert(memcmp(h, fs->hours + 60 * n, 10 * n * sizeof(double)) == 0);
        surety_sampler_free(smp);
        surety_scenarios_free(fs);
        surety_scenarios_free(ref);
        surety_model_free(model);
    }
}

/* A fill restricted to some jobs (as the checker restricts it to a plan's
 * accepted jobs) writes those jobs' columns with the bytes of the full
 * fill of `surety sample` and leaves the other columns alone. Reference:
 * the full fill itself (the restriction must change no value). Laws: the
 * five mixed jobs independent, all in the copula, and only A and B
 * correlated (C, D, E outside the copula, so their draws are skipped);
 * then the demo model, 18 jobs of four laws under a copula. */
static const char *pair_corr =
    "\"correlation\": {\"pairs\": [[\"A\", \"B\", 0.6]]}";

static void check_restricted(const surety_model *model, const size_t *cols,
                             size_t ncols, size_t first, size_t count)
{
    size_t n = surety_model_jobs(model);
    surety_scenarios *ref = draw(model, 5, first, count);
    surety_sampler *smp = surety_sampler_new(model);
    cr_assert_not_null(smp);
    cr_assert_eq(surety_sampler_restrict(smp, cols, ncols), 0);
    double *h = surety_xmalloc(count * n, sizeof *h);
    double *p = surety_xmalloc(count * n, sizeof *p);
    /* a sentinel in every cell: unwanted columns must keep it */
    for (size_t t = 0; t < count * n; t++)
        h[t] = p[t] = -12345.0;
    surety_sampler_fill(smp, 5, first, count, h, p);
    unsigned char *want = surety_xcalloc(n, 1);
    for (size_t c = 0; c < ncols; c++)
        want[cols[c]] = 1;
    for (size_t l = 0; l < count; l++)
        for (size_t j = 0; j < n; j++) {
            size_t t = l * n + j;
            if (want[j]) {
                cr_assert(memcmp(&h[t], &ref->hours[t], sizeof h[t]) == 0 &&
                              memcmp(&p[t], &ref->profit[t], sizeof p[t]) == 0,
                          "scenario %zu job %zu: %.17g vs %.17g", first + l, j,
                          h[t], ref->hours[t]);
            } else {
                cr_assert(h[t] == -12345.0 && p[t] == -12345.0,
                          "job %zu was not asked for but written", j);
            }
        }
    /* back to every job: the full fill again */
    cr_assert_eq(surety_sampler_restrict(smp, NULL, 0), 0);
    surety_sampler_fill(smp, 5, first, count, h, p);
    cr_assert(memcmp(h, ref->hours, count * n * sizeof *h) == 0);
    cr_assert(memcmp(p, ref->profit, count * n * sizeof *p) == 0);
    surety_xfree(want);
    surety_xfree(h);
    surety_xfree(p);
    surety_sampler_free(smp);
    surety_scenarios_free(ref);
}

Test(repro, restricted_fill_equals_full_fill)
{
    const char *corr[3] = {"", mixed_corr, pair_corr};
    static const size_t sets[][5] = {{0, 1, 2, 3, 4}, {1, 3}, {4}, {2, 4},
                                     {0, 2, 3}};
    static const size_t sizes[] = {5, 2, 1, 2, 3};
    for (int k = 0; k < 3; k++) {
        surety_model *model = model_with(mixed_jobs, corr[k], 100, 11);
        for (size_t s = 0; s < sizeof sizes / sizeof *sizes; s++) {
            check_restricted(model, sets[s], sizes[s], 0, 1000);
            check_restricted(model, sets[s], sizes[s], 37, 150);
        }
        /* no job at all: only the draws */
        check_restricted(model, sets[0], 0, 10, 70);
        surety_model_free(model);
    }

    surety_model *demo = NULL;
    surety_error err;
    cr_assert_eq(surety_model_read(SURETY_SOURCE_ROOT "/instances/demo.json",
                                   &demo, &err),
                 SURETY_OK, "%s", err.message);
    static const size_t plan[7] = {1, 3, 7, 8, 11, 14, 17};
    check_restricted(demo, plan, 7, 0, 2048);
    check_restricted(demo, plan, 7, 100, 333);
    static const size_t odd[3] = {0, 9, 16};
    check_restricted(demo, odd, 3, 1000, 500);
    surety_model_free(demo);
}

Test(repro, restrict_rejects_bad_columns)
{
    surety_model *model = model_with(mixed_jobs, mixed_corr, 100, 11);
    surety_sampler *smp = surety_sampler_new(model);
    static const size_t unsorted[2] = {3, 1}, twice[2] = {2, 2},
                        beyond[2] = {1, 5};
    cr_assert_eq(surety_sampler_restrict(smp, unsorted, 2), -1);
    cr_assert_eq(surety_sampler_restrict(smp, twice, 2), -1);
    cr_assert_eq(surety_sampler_restrict(smp, beyond, 2), -1);
    /* a refused restriction changes nothing: still the full fill */
    surety_scenarios *ref = draw(model, 2, 0, 64);
    double h[64 * 5], p[64 * 5];
    surety_sampler_fill(smp, 2, 0, 64, h, p);
    cr_assert(memcmp(h, ref->hours, sizeof h) == 0);
    cr_assert(memcmp(p, ref->profit, sizeof p) == 0);
    surety_scenarios_free(ref);
    surety_sampler_free(smp);
    surety_model_free(model);
}

/* ------------------------------------------------------------------ */
/* Scenario sets: allocation, tables, CSV                              */
/* ------------------------------------------------------------------ */

Test(sample, alloc_refuses_before_allocating)
{
    surety_scenarios *sc = (surety_scenarios *)1;
    surety_error err;
    /* N*n*16 overflows size_t */
    cr_assert_eq(surety_scenarios_alloc(SIZE_MAX / 8, 30, &sc, &err),
                 SURETY_EINPUT);
    cr_assert_null(sc);
    cr_assert(strstr(err.message, "bytes"), "%s", err.message);
    /* 2^40 scenarios of 30 jobs: 527765581332480 bytes (2^40 * 30 * 16),
     * more than this machine's memory */
    cr_assert_eq(surety_scenarios_alloc((size_t)1 << 40, 30, &sc, &err),
                 SURETY_EINPUT);
    cr_assert(strstr(err.message, "527765581332480 bytes"), "%s",
              err.message);
    /* a set that fits is allocated */
    cr_assert_eq(surety_scenarios_alloc(10, 3, &sc, &err), SURETY_OK);
    cr_assert_eq(surety_scenarios_count(sc), 10);
    cr_assert_eq(surety_scenarios_jobs(sc), 3);
    surety_scenarios_free(sc);
}

Test(sample, unsampleable_models_are_refused)
{
    surety_model *model = model_with(three_jobs,
        "\"correlation\": {\"all\": 0.3}", 10, 1);
    surety_error err;
    surety_scenarios *sc;
    /* correlations present but not factored */
    double *chol = model->chol;
    model->chol = NULL;
    cr_assert_eq(surety_sample(model, 0, 0, 10, &sc, &err), SURETY_EUSAGE);
    cr_assert(strstr(err.message, "factor"), "%s", err.message);
    cr_assert_null(surety_sampler_new(model));
    model->chol = chol;
    /* a job without a distribution */
    model->jobs[1].has_hours = 0;
    cr_assert_eq(surety_sample(model, 0, 0, 10, &sc, &err), SURETY_EINPUT);
    cr_assert(strstr(err.message, "'J2'"), "%s", err.message);
    model->jobs[1].has_hours = 1;
    cr_assert_eq(surety_sample(model, 0, 0, 0, &sc, &err), SURETY_EUSAGE);
    surety_model_free(model);
}

/* Written with %.17g and read back by the scenario-table reader: every
 * value comes back bit for bit (17 significant digits identify a double,
 * IEEE 754-2008 s.5.12.2). */
Test(sample, csv_round_trip_bit_exact)
{
    surety_model *model = model_with(
        JOB("A-1", "{\"dist\": \"lognormal\", \"mean\": 8, \"sd\": 3}") ", "
        JOB("B", "{\"dist\": \"normal\", \"mean\": 1, \"sd\": 2}") ", "
        JOB("C", "{\"dist\": \"triangular\", \"low\": 0.1, \"mode\": 0.2, "
                 "\"high\": 0.7}"),
        "\"correlation\": {\"all\": 0.4}", 500, 17);
    surety_scenarios *sc = draw(model, 0, 0, 500);
    char path[] = "/tmp/surety_test_sample_XXXXXX";
    int fd = mkstemp(path);
    cr_assert(fd >= 0);
    close(fd);
    surety_error err;
    cr_assert_eq(surety_scenarios_write_csv(model, sc, path, &err),
                 SURETY_OK, "%s", err.message);
    FILE *fp = fopen(path, "r");
    char head[256];
    cr_assert_not_null(fgets(head, sizeof head, fp));
    fclose(fp);
    cr_assert_str_eq(head, "A-1.hours,A-1.profit,B.hours,B.profit,"
                           "C.hours,C.profit\n");
    surety_table *t = NULL;
    cr_assert_eq(surety_table_read(model, path, &t, &err), SURETY_OK, "%s",
                 err.message);
    cr_assert_eq(t->N, 500);
    cr_assert(memcmp(t->hours, sc->hours, 500 * 3 * sizeof(double)) == 0);
    cr_assert(memcmp(t->profit, sc->profit, 500 * 3 * sizeof(double)) == 0);
    surety_table_free(t);
    unlink(path);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

/* An id holding a comma or a quote (possible through the C API) is quoted
 * in the header as RFC 4180 says: in double quotes, quotes doubled. */
Test(sample, csv_header_quotes_ids)
{
    surety_dist d[2] = {
        make_dist(SURETY_DIST_FIXED, 2, 0, 0, -INFINITY, INFINITY),
        make_dist(SURETY_DIST_FIXED, 3, 0, 0, -INFINITY, INFINITY)};
    const char *ids[2] = {"a,b", "say \"x\""};
    surety_model *model = struct_model(2, d, ids);
    surety_scenarios *sc = draw(model, 0, 0, 2);
    char path[] = "/tmp/surety_test_sample_XXXXXX";
    int fd = mkstemp(path);
    cr_assert(fd >= 0);
    close(fd);
    surety_error err;
    cr_assert_eq(surety_scenarios_write_csv(model, sc, path, &err),
                 SURETY_OK, "%s", err.message);
    char *text = surety_read_file(path, NULL, &err);
    cr_assert_str_eq(text, "\"a,b.hours\",\"a,b.profit\",\"say \"\"x\"\".hours\","
                           "\"say \"\"x\"\".profit\"\n2,20,3,30\n2,20,3,30\n");
    surety_xfree(text);
    unlink(path);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

/* A model with a scenario table is solved on the table's rows: hours as
 * given, profit from the table where given and from the rule elsewhere. */
Test(sample, model_sample_uses_table)
{
    surety_model *model = model_with(three_jobs, "", 3, 1);
    surety_table *t = surety_xcalloc(1, sizeof *t);
    t->N = 2;
    t->hours = surety_xmalloc(6, sizeof(double));
    t->profit = surety_xmalloc(6, sizeof(double));
    double h[6] = {1, 2, 3, 4, 5, 6};
    double p[6] = {100, NAN, 300, NAN, NAN, 600};
    memcpy(t->hours, h, sizeof h);
    memcpy(t->profit, p, sizeof p);
    model->table = t;
    surety_scenarios *sc;
    surety_error err;
    cr_assert_eq(surety_model_sample(model, &sc, &err), SURETY_OK);
    cr_assert_eq(sc->N, 2);
    const double want[6] = {100, 20, 300, 40, 50, 600}; /* rate 10 */
    for (int t2 = 0; t2 < 6; t2++) {
        cr_assert_eq(surety_scenarios_hours(sc)[t2], h[t2]);
        cr_assert_eq(surety_scenarios_profit(sc)[t2], want[t2]);
    }
    surety_scenarios_free(sc);
    surety_model_free(model);
}
