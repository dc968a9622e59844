/* stats.h - statistics for surety: normal distribution, binomial tails,
 * incomplete beta and confidence intervals (sample sizes are in sizes.h).
 * SPDX-License-Identifier: MIT
 *
 * Every function here is pure (no state, no allocation, no errors to
 * report) and thread-safe. Invalid arguments give NaN for real-valued
 * results and 0 (or -1 where stated) for counts; the callers validate
 * user input before reaching this module.
 *
 * Notation follows METHODS.md: B(k; N, p) = P{Bin(N,p) <= k},
 * I_x(a,b) the regularized incomplete beta, eps the risk, beta (or delta)
 * one minus the confidence, d the number of decision variables. */
#ifndef SURETY_STATS_H
#define SURETY_STATS_H

#include <stddef.h>

/* ------------------------------------------------------------------ */
/* Normal distribution                                                 */
/* ------------------------------------------------------------------ */

/* Standard normal CDF, Phi(x) = 0.5 erfc(-x/sqrt 2). Accurate in both
 * tails (no cancellation for x << 0); Phi(-inf) = 0, Phi(inf) = 1, NaN
 * for NaN. */
double surety_norm_cdf(double x);

/* Phi of x[0..count-1] in place, the same bits as surety_norm_cdf on each
 * element; for the sampler's inner loops. */
void surety_norm_cdf_batch(double *x, size_t count);

/* Standard normal quantile Phi^{-1}(p) for p in (0,1), by Wichura's
 * algorithm AS 241 (PPND16), relative error about 1e-16.
 * p = 0 gives -INFINITY, p = 1 gives +INFINITY, p outside [0,1] or NaN
 * gives NaN. (Wichura 1988, Applied Statistics 37:477-484.) */
double surety_norm_quantile(double p);

/* Phi^{-1} of p[0..count-1] in place, the same bits as
 * surety_norm_quantile on each element (NaN, 0 and 1 included), faster
 * on long arrays; for the sampler's inner loops. */
void surety_norm_quantile_batch(double *p, size_t count);

/* ------------------------------------------------------------------ */
/* Binomial distribution and incomplete beta                           */
/* ------------------------------------------------------------------ */

/* ln C(n, k) for real 0 <= k <= n (integers in practice); -INFINITY
 * outside that range. Uses the saddle-point form of Loader (2000), so it
 * keeps about 1e-15 relative accuracy where the plain lgamma difference
 * would cancel (n in the millions). */
double surety_stats_log_choose(double n, double k);

/* P{Bin(N,p) = k} and its logarithm. 0 / -INFINITY for k outside
 * [0, N]; NaN for N < 0 or p outside [0,1]. The log form stays finite
 * far below the smallest double (Loader 2000). */
double surety_stats_binom_pmf(long k, long N, double p);
double surety_stats_binom_logpmf(long k, long N, double p);

/* B(k; N, p) = P{Bin(N,p) <= k}, its logarithm, and the upper tail
 * P{Bin(N,p) > k} = 1 - B(k; N, p) computed without cancellation.
 * Edge cases (METHODS.md s.2): k < 0 -> 0; k >= N -> 1; p = 0 -> 1;
 * p = 1 -> 0 for k < N. The tail away from the mode is summed term by
 * term from the mode side when that converges within 100000 terms,
 * otherwise it is I_{1-p}(N-k, k+1) by the continued fraction; the other
 * tail is its complement. Measured against 60-digit values for N up to
 * 1e8 (tests/ref/stats_ref.h): relative error below 5e-13 in both tails,
 * and in the logs; a linear value near 1e-280 inherits the conditioning
 * of exp (6e-13). The log form is needed when B < 1e-300 (sample-size
 * searches with a large decision set). */
double surety_stats_binom_cdf(long k, long N, double p);
double surety_stats_binom_logcdf(long k, long N, double p);
double surety_stats_binom_sf(long k, long N, double p);
double surety_stats_binom_logsf(long k, long N, double p);

/* Regularized incomplete beta I_x(a,b) for a, b > 0, x in [0,1], and its
 * complement 1 - I_x(a,b) computed without cancellation. Integer a, b go
 * through the binomial tails above. Otherwise the continued fraction of
 * the incomplete beta by the modified Lentz method (Lentz 1976; Thompson &
 * Barnett 1986), on whichever side of the mean it converges, with the
 * prefactor x^a (1-x)^b / (a B(a,b)) from Loader's (2000) saddle-point
 * form; measured relative error below 1e-12 for a, b up to 3e4 (the
 * rounding of 1 - x, amplified by a + b, is the limit). NaN for invalid
 * arguments. */
double surety_stats_ibeta(double x, double a, double b);
double surety_stats_ibetac(double x, double a, double b);

/* Inverse: the x in [0,1] with I_x(a,b) = y. Found by bisection on the
 * bit patterns of doubles (at most 62 evaluations of I_x), so the result
 * is the double nearest the root as far as I_x resolves it; measured
 * relative error below 1e-13. y = 0 -> 0, y = 1 -> 1, NaN for invalid
 * arguments. */
double surety_stats_ibeta_inv(double y, double a, double b);

/* ------------------------------------------------------------------ */
/* Intervals for a proportion, x successes of n, confidence c in (0,1)  */
/* ------------------------------------------------------------------ */

/* One-sided Clopper-Pearson bounds (Clopper & Pearson 1934):
 * lower L1 = Beta^{-1}(1-c; x, n-x+1), 0 when x = 0;
 * upper U1 = Beta^{-1}(c; x+1, n-x), 1 when x = n.
 * U1 is also the p solving B(x; n, p) = 1-c (METHODS.md s.4).
 * NaN when x > n, n = 0 or c outside (0,1). The two-sided interval and
 * the one-sided lower bound together are surety_clopper_pearson. */
double surety_stats_cp_lower1(size_t x, size_t n, double c);
double surety_stats_cp_upper1(size_t x, size_t n, double c);

/* Wilson score interval (Wilson 1927; formula as in METHODS.md s.4),
 * clipped to [0,1]: two-sided (sides = 2, z = Phi^{-1}(1-(1-c)/2)) or
 * the pair of one-sided bounds (sides = 1, z = Phi^{-1}(c)). For display
 * beside Clopper-Pearson; it is not a certificate. NaN when invalid. */
void surety_stats_wilson(size_t x, size_t n, double c, int sides,
                         double *lo, double *hi);

#endif
