/* stats.h - statistics for surety: normal distribution, binomial tails,
 * incomplete beta, confidence intervals and sample-size formulas.
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

/* ------------------------------------------------------------------ */
/* Checking a plan out of sample (METHODS.md s.4)                      */
/* ------------------------------------------------------------------ */

/* Reliability 1-eps is certified at confidence 1-beta by v violations of
 * N fresh scenarios iff B(v; N, eps) <= beta (one-sided Clopper-Pearson).
 * Smallest N that certifies with v violations (0 when invalid), and the
 * largest v that certifies with N scenarios (-1 when none does). */
size_t surety_stats_certify_min_samples(double eps, double beta, size_t v);
long surety_stats_certify_max_violations(size_t N, double eps, double beta);

/* ------------------------------------------------------------------ */
/* Sample size before solving (METHODS.md s.3)                         */
/* ------------------------------------------------------------------ */
/* Closed forms return the smallest integer N satisfying the stated
 * inequality (a ceiling taken with a 1e-12 relative guard, so that an
 * exact integer is not pushed up by rounding); 0 for invalid input.
 * Searches return 0 for invalid input or when the answer exceeds 1e15. */

/* Luedtke & Ahmed (2008), finite decision set X (ln|X| = lnX), sampled
 * risk alpha < eps, confidence 1-delta; the condition on N is
 *   lnX + ln B(floor(alpha N); N, eps) <= ln delta,
 * with floor(alpha N) taken as surety_allowance(alpha, N).
 * _first: the smallest N meeting it. It is not monotone in N (the
 * allowance jumps), so
 * _stable: the smallest N0 such that every N >= N0 meets it (proved
 * beyond a Chernoff-Kullback-Leibler cap, scanned below it).
 * _fixed_k: the smallest N meeting lnX + ln B(k; N, eps) <= ln delta for a
 * fixed allowance k (monotone in N). */
size_t surety_stats_la_first(double eps, double alpha, double delta,
                             double lnX);
size_t surety_stats_la_stable(double eps, double alpha, double delta,
                              double lnX);
size_t surety_stats_la_fixed_k(double eps, size_t k, double delta,
                               double lnX);
/* Closed forms for display (Luedtke & Ahmed 2008; METHODS.md s.3.1):
 * Chernoff N >= 2 eps ln(|X|/delta) / (eps-alpha)^2,
 * Hoeffding N >= ln(|X|/delta) / (2 (eps-alpha)^2),
 * alpha = 0: N >= ln(|X|/delta) / eps. */
size_t surety_stats_la_chernoff(double eps, double alpha, double delta,
                                double lnX);
size_t surety_stats_la_hoeffding(double eps, double alpha, double delta,
                                 double lnX);
size_t surety_stats_la_zero(double eps, double delta, double lnX);
/* Lower bound side, alpha > eps (Luedtke & Ahmed 2008, s.3.2): the sample
 * optimum bounds the true one with probability >= 1-delta once
 * N >= ln(1/delta) / (2 (alpha-eps)^2). */
size_t surety_stats_la_lower(double eps, double alpha, double delta);

/* Convex scenario programs with d decision variables (informational; not
 * valid for binary plans), violation probability eps, confidence 1-beta:
 * Campi & Garatti (2008): smallest N with B(d-1; N, eps) <= beta;
 * Campi, Garatti & Prandini (2009): N >= (2/eps)(ln(1/beta) + d);
 * Calafiore & Campi (2006): N >= (2/eps) ln(1/beta) + 2d
 *                                + (2d/eps) ln(2/eps);
 * Calafiore & Campi (2005): N >= d/(eps beta) - 1. */
size_t surety_stats_cg2008(double eps, double beta, size_t d);
size_t surety_stats_cgp2009(double eps, double beta, size_t d);
size_t surety_stats_cc2006(double eps, double beta, size_t d);
size_t surety_stats_cc2005(double eps, double beta, size_t d);

/* Sampling and discarding (Campi & Garatti 2011): with k of N sampled
 * constraints removed, P{V > eps} <= C(k+d-1, k) B(k+d-1; N, eps).
 * _logprob/_prob: the right side (log form finite far below 1e-300);
 * _min_n: smallest N making it <= beta (0 when invalid);
 * _max_k: largest k making it <= beta for given N (-1 when none).
 * With d = 1 this is the one-sided Clopper-Pearson test. */
double surety_stats_discard_logprob(size_t N, size_t k, size_t d,
                                    double eps);
double surety_stats_discard_prob(size_t N, size_t k, size_t d, double eps);
size_t surety_stats_discard_min_n(size_t k, size_t d, double eps,
                                  double beta);
long surety_stats_discard_max_k(size_t N, size_t d, double eps, double beta);

/* Campi, Garatti & Ramponi (2018): a plan computed with all N scenarios
 * enforced and a support set of size sigma violates with probability at
 * most eps(sigma) = 1 - (beta / (N C(N,sigma)))^{1/(N-sigma)}, with
 * confidence 1-beta. Returns 1 for sigma >= N, NaN when invalid. */
double surety_stats_cgr2018_eps(size_t N, size_t sigma, double beta);

/* Statistical upper bound on the optimum (Pagnoncelli, Ahmed & Shapiro
 * 2009; METHODS.md s.5).
 * _theta: theta_N = B(floor(gamma N); N, eps), floor as surety_allowance.
 * _rank: the largest L in 1..M with B(L-1; M, theta) <= beta, or 0 when
 * none; the L-th most optimistic of M replicated dual bounds bounds the
 * true optimum with confidence 1-beta. */
double surety_stats_pas_theta(size_t N, double gamma, double eps);
size_t surety_stats_pas_rank(size_t M, double theta, double beta);

#endif
