/* sizes.h - sample sizes and bounds for surety, from the binomial tail of
 * stats.h: certificates, Luedtke & Ahmed, convex scenario programs.
 * SPDX-License-Identifier: MIT
 *
 * Every function here is pure (no state, no allocation, no errors to
 * report) and thread-safe. Invalid arguments give NaN for real-valued
 * results and 0 (or -1 where stated) for counts; the callers validate
 * user input before reaching this module.
 *
 * Notation follows METHODS.md: B(k; N, p) = P{Bin(N,p) <= k}, eps the
 * risk, beta (or delta) one minus the confidence, d the number of decision
 * variables. */
#ifndef SURETY_SIZES_H
#define SURETY_SIZES_H

#include <stddef.h>

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
