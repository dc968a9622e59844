/* stats.h - statistics for surety: normal distribution, binomial tails,
 * incomplete beta, confidence intervals and sample-size formulas.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_STATS_H
#define SURETY_STATS_H

/* Standard normal CDF, Phi(x) = 0.5 erfc(-x/sqrt 2). Accurate in both
 * tails (no cancellation for x << 0). Pure, thread-safe. */
double surety_norm_cdf(double x);

/* Standard normal quantile Phi^{-1}(p) for p in (0,1), by Wichura's
 * algorithm AS 241 (PPND16), relative error about 1e-16.
 * p = 0 gives -INFINITY, p = 1 gives +INFINITY, p outside [0,1] or NaN
 * gives NaN. (Wichura 1988, Applied Statistics 37:477-484.) */
double surety_norm_quantile(double p);

#endif
