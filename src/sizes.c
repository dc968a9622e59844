/* sizes.c - sample sizes and bounds built on the binomial tail: Luedtke &
 * Ahmed, the convex scenario bounds, sampling and discarding, certificates.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stddef.h>

#include "sizes.h"
#include "stats.h"
#include "surety.h"

/* ------------------------------------------------------------------ */
/* Sample sizes                                                        */
/* ------------------------------------------------------------------ */

/* Largest N any search or closed form returns; beyond it the answer is
 * reported as 0 (no useful sample size). */
#define N_MAX 1e15

/* Smallest integer N >= v, with a relative guard of 1e-12 so that a value
 * that is an integer in exact arithmetic (d/(eps beta) - 1) is not pushed
 * one up by rounding. At least 1. */
static size_t ceil_count(double v)
{
    if (isnan(v) || v > N_MAX)
        return 0;
    double c = ceil(v - 1e-12 * fabs(v));
    return c < 1.0 ? 1 : (size_t)c;
}

static int prob_ok(double p)
{
    return p > 0.0 && p < 1.0;
}

/* Smallest N > k with ln B(k; N, eps) <= lt (lt = ln of the target). The
 * left side decreases strictly in N for fixed k, so an exponential search
 * followed by bisection finds it. lt >= 0 is met by every N; 1 then. */
static size_t min_n_fixed_k(double eps, size_t k, double lt)
{
    if (lt >= 0.0)
        return 1;
    size_t lo = k, hi = k + 1; /* B(k; k, eps) = 1 fails */
    while (surety_stats_binom_logcdf((long)k, (long)hi, eps) > lt) {
        lo = hi;
        hi = 2 * hi;
        if ((double)hi > N_MAX)
            return 0;
    }
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (surety_stats_binom_logcdf((long)k, (long)mid, eps) <= lt)
            hi = mid;
        else
            lo = mid;
    }
    return hi;
}

size_t surety_stats_la_fixed_k(double eps, size_t k, double delta,
                               double lnX)
{
    if (!prob_ok(eps) || !prob_ok(delta) || !(lnX >= 0.0))
        return 0;
    return min_n_fixed_k(eps, k, log(delta) - lnX);
}

/* The condition of Luedtke & Ahmed (2008) with k = floor(alpha N)
 * (METHODS.md s.3.1).
 * For fixed k it is monotone in N, so the N axis splits into plateaus of
 * constant k on each of which the passing N form a suffix. */
typedef struct la_ctx {
    double eps, alpha, lt; /* lt = ln delta - ln|X| */
} la_ctx;

static int la_pass(const la_ctx *c, size_t N)
{
    size_t k = surety_allowance(c->alpha, N);
    return surety_stats_binom_logcdf((long)k, (long)N, c->eps) <= c->lt;
}

/* Smallest N >= 1 whose allowance is at least k (alpha > 0). */
static size_t plateau_start(double alpha, size_t k)
{
    if (k == 0)
        return 1;
    double g = ceil(((double)k - 1e-9) / alpha);
    size_t N = g < 1.0 ? 1 : (size_t)g;
    while (N > 1 && surety_allowance(alpha, N - 1) >= k)
        N--;
    while (surety_allowance(alpha, N) < k)
        N++;
    return N;
}

/* Smallest passing N in [lo, hi] of one plateau, given that hi passes. */
static size_t plateau_first_pass(const la_ctx *c, size_t lo, size_t hi)
{
    if (la_pass(c, lo))
        return lo;
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (la_pass(c, mid))
            hi = mid;
        else
            lo = mid;
    }
    return hi;
}

/* Beyond this N every N passes: B(k; N, eps) <= exp(-N D(k/N || eps)) for
 * k/N <= eps (the Chernoff bound in Kullback-Leibler form), and
 * D(k/N || eps) >= D(alpha || eps) because k/N <= alpha < eps. One extra
 * unit covers the 1e-9 guard in the allowance. */
static size_t la_cap(const la_ctx *c)
{
    double a = c->alpha, e = c->eps;
    double D = -log1p(-e);
    if (a > 0.0)
        D = a * log(a / e) + (1.0 - a) * (log1p(-a) - log1p(-e));
    double v = -c->lt / D;
    if (!(v <= N_MAX))
        return 0;
    return (size_t)ceil(v * (1.0 + 1e-12)) + 1;
}

static int la_setup(la_ctx *c, double eps, double alpha, double delta,
                    double lnX)
{
    if (!prob_ok(eps) || !prob_ok(delta) || !(lnX >= 0.0) || !(alpha >= 0.0)
        || !(alpha < eps))
        return 0;
    c->eps = eps;
    c->alpha = alpha;
    c->lt = log(delta) - lnX;
    return 1;
}

/* Plateaus visited before giving up (each costs one binomial tail). */
#define PLATEAU_MAX 2000000

size_t surety_stats_la_first(double eps, double alpha, double delta,
                             double lnX)
{
    la_ctx c;
    if (!la_setup(&c, eps, alpha, delta, lnX))
        return 0;
    size_t cap = la_cap(&c);
    if (cap == 0)
        return 0;
    size_t N = 1;
    for (long it = 0; N <= cap && it < PLATEAU_MAX; it++) {
        size_t end = cap;
        if (alpha > 0.0) {
            size_t k = surety_allowance(alpha, N);
            end = plateau_start(alpha, k + 1) - 1;
            if (end > cap)
                end = cap;
        }
        if (la_pass(&c, end))
            return plateau_first_pass(&c, N, end);
        N = end + 1;
    }
    return 0;
}

size_t surety_stats_la_stable(double eps, double alpha, double delta,
                              double lnX)
{
    la_ctx c;
    if (!la_setup(&c, eps, alpha, delta, lnX))
        return 0;
    size_t cap = la_cap(&c);
    if (cap == 0)
        return 0;
    /* Invariant: every N' > N passes. Walk the plateaus downward; within
     * one the first N is the hardest to pass. */
    size_t N = cap;
    for (long it = 0; N >= 1 && it < PLATEAU_MAX; it++) {
        size_t s = alpha > 0.0
                       ? plateau_start(alpha, surety_allowance(alpha, N))
                       : 1;
        if (la_pass(&c, s)) {
            if (s == 1)
                return 1;
            N = s - 1;
            continue;
        }
        if (!la_pass(&c, N))
            return N + 1;
        return plateau_first_pass(&c, s, N);
    }
    return 0;
}

/* Display forms of Luedtke & Ahmed (2008), METHODS.md s.3.1-s.3.2. */
size_t surety_stats_la_chernoff(double eps, double alpha, double delta,
                                double lnX)
{
    if (!prob_ok(eps) || !prob_ok(delta) || !(lnX >= 0.0) || !(alpha >= 0.0)
        || !(alpha < eps))
        return 0;
    double g = eps - alpha;
    return ceil_count(2.0 * eps * (lnX - log(delta)) / (g * g));
}

size_t surety_stats_la_hoeffding(double eps, double alpha, double delta,
                                 double lnX)
{
    if (!prob_ok(eps) || !prob_ok(delta) || !(lnX >= 0.0) || !(alpha >= 0.0)
        || !(alpha < eps))
        return 0;
    double g = eps - alpha;
    return ceil_count((lnX - log(delta)) / (2.0 * g * g));
}

size_t surety_stats_la_zero(double eps, double delta, double lnX)
{
    if (!prob_ok(eps) || !prob_ok(delta) || !(lnX >= 0.0))
        return 0;
    return ceil_count((lnX - log(delta)) / eps);
}

size_t surety_stats_la_lower(double eps, double alpha, double delta)
{
    if (!prob_ok(eps) || !prob_ok(delta) || !(alpha > eps) || !(alpha < 1.0))
        return 0;
    double g = alpha - eps;
    return ceil_count(-log(delta) / (2.0 * g * g));
}

/* Campi & Garatti (2008): the exact binomial condition, monotone in N. */
size_t surety_stats_cg2008(double eps, double beta, size_t d)
{
    if (!prob_ok(eps) || !prob_ok(beta) || d == 0)
        return 0;
    return min_n_fixed_k(eps, d - 1, log(beta));
}

/* Campi, Garatti & Prandini (2009). */
size_t surety_stats_cgp2009(double eps, double beta, size_t d)
{
    if (!prob_ok(eps) || !prob_ok(beta) || d == 0)
        return 0;
    return ceil_count(2.0 / eps * (-log(beta) + (double)d));
}

/* Calafiore & Campi (2006). */
size_t surety_stats_cc2006(double eps, double beta, size_t d)
{
    if (!prob_ok(eps) || !prob_ok(beta) || d == 0)
        return 0;
    double dd = (double)d;
    return ceil_count(2.0 / eps * -log(beta) + 2.0 * dd
                      + 2.0 * dd / eps * log(2.0 / eps));
}

/* Calafiore & Campi (2005). */
size_t surety_stats_cc2005(double eps, double beta, size_t d)
{
    if (!prob_ok(eps) || !prob_ok(beta) || d == 0)
        return 0;
    return ceil_count((double)d / (eps * beta) - 1.0);
}

/* Sampling and discarding, Campi & Garatti (2011):
 * ln[C(k+d-1, k) B(k+d-1; N, eps)]. */
double surety_stats_discard_logprob(size_t N, size_t k, size_t d,
                                    double eps)
{
    if (!prob_ok(eps) || d == 0)
        return NAN;
    double r = (double)k + (double)d - 1.0;
    return surety_stats_log_choose(r, (double)k)
           + surety_stats_binom_logcdf((long)(k + d - 1), (long)N, eps);
}

double surety_stats_discard_prob(size_t N, size_t k, size_t d, double eps)
{
    return exp(surety_stats_discard_logprob(N, k, d, eps));
}

size_t surety_stats_discard_min_n(size_t k, size_t d, double eps,
                                  double beta)
{
    if (!prob_ok(eps) || !prob_ok(beta) || d == 0)
        return 0;
    double lc = surety_stats_log_choose((double)k + (double)d - 1.0,
                                        (double)k);
    return min_n_fixed_k(eps, k + d - 1, log(beta) - lc);
}

/* The right side grows with k (both factors do), so the passing k form a
 * prefix of 0..N-d; beyond N-d the binomial factor is 1 and it fails. */
long surety_stats_discard_max_k(size_t N, size_t d, double eps, double beta)
{
    if (!prob_ok(eps) || !prob_ok(beta) || d == 0 || N < d)
        return -1;
    double lb = log(beta);
    if (surety_stats_discard_logprob(N, 0, d, eps) > lb)
        return -1;
    size_t lo = 0, hi = N - d + 1; /* lo passes, hi fails */
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (surety_stats_discard_logprob(N, mid, d, eps) <= lb)
            lo = mid;
        else
            hi = mid;
    }
    return (long)lo;
}

/* One-sided Clopper-Pearson certificate (METHODS.md s.4): the discarding
 * bound with d = 1. */
size_t surety_stats_certify_min_samples(double eps, double beta, size_t v)
{
    if (!prob_ok(eps) || !prob_ok(beta))
        return 0;
    return min_n_fixed_k(eps, v, log(beta));
}

long surety_stats_certify_max_violations(size_t N, double eps, double beta)
{
    return surety_stats_discard_max_k(N, 1, eps, beta);
}

/* Campi, Garatti & Ramponi (2018), in logs so that C(N, sigma) cannot
 * overflow: eps = 1 - exp((ln beta - ln N - ln C(N,sigma)) / (N-sigma)). */
double surety_stats_cgr2018_eps(size_t N, size_t sigma, double beta)
{
    if (!prob_ok(beta) || N == 0)
        return NAN;
    if (sigma >= N)
        return 1.0;
    double dN = (double)N;
    double l = (log(beta) - log(dN) - surety_stats_log_choose(dN, (double)sigma))
               / (dN - (double)sigma);
    return -expm1(l);
}

/* Pagnoncelli, Ahmed & Shapiro (2009), METHODS.md s.5. */
double surety_stats_pas_theta(size_t N, double gamma, double eps)
{
    if (!prob_ok(eps) || !(gamma >= 0.0) || !(gamma <= 1.0) || N == 0)
        return NAN;
    return surety_stats_binom_cdf((long)surety_allowance(gamma, N), (long)N,
                                  eps);
}

/* B(L-1; M, theta) grows with L, so the admissible L form a prefix. */
size_t surety_stats_pas_rank(size_t M, double theta, double beta)
{
    if (!prob_ok(beta) || !(theta >= 0.0) || !(theta <= 1.0) || M == 0)
        return 0;
    if (surety_stats_binom_cdf(0, (long)M, theta) > beta)
        return 0;
    size_t lo = 1, hi = M + 1; /* L = lo passes, hi is out of range */
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (surety_stats_binom_cdf((long)mid - 1, (long)M, theta) <= beta)
            lo = mid;
        else
            hi = mid;
    }
    return lo;
}
