/* dist.h - hours distributions by inverse CDF, with exact truncation, and
 * the Gaussian copula's correlation factor.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_DIST_H
#define SURETY_DIST_H

#include <stddef.h>

#include "model.h"

/* A distribution prepared for fast sampling: validated, truncation bounds
 * intersected with the support and their CDF values precomputed. The
 * sampler maps a uniform u in (0,1) (independent job) or a standard normal
 * z (job in the copula) to hours; both maps are non-decreasing, so the
 * copula's rank correlations carry over to the hours unchanged. */
typedef struct surety_marginal {
    surety_dist_kind kind;
    int direct;     /* normal/lognormal without truncation: x from z with
                       no round trip through Phi */
    int flip;       /* truncation window in the upper half: work with the
                       survival function, which keeps its precision there */
    double a, b, c; /* normal: mean, sd; lognormal: mu, sigma of log hours;
                       uniform: lo', hi' (support within truncation);
                       triangular: low, mode, high; fixed: the value */
    double lo, hi;  /* truncation bounds intersected with the support */
    double p0, pw;  /* truncation by inverse CDF: p = p0 + u*pw (flip:
                       p = p0 - u*pw of the survival function) */
    double fc;      /* triangular: CDF at the mode */
    const double *values; /* empirical: the observations within [lo, hi],
                             pointing into the surety_dist (not owned) */
    size_t vcount;
} surety_marginal;

/* Validates `d` and prepares `mg`. `job` names the job and `field` the
 * model field (e.g. "jobs[3].hours") in error messages. The prepared
 * marginal refers to d->values, which must outlive it. Errors: a parameter
 * out of range or a truncation window holding no probability (EINPUT). */
surety_code surety_dist_prepare(surety_marginal *mg, const surety_dist *d,
                                const char *job, const char *field,
                                surety_error *err);

/* Hours for u in (0,1): the (truncated) quantile F^{-1}(u). */
double surety_dist_from_uniform(const surety_marginal *mg, double u);

/* Hours for a standard normal z: F^{-1}(Phi(z)), computed directly as
 * mean + sd*z or exp(mu + sigma*z) when the marginal is direct. */
double surety_dist_from_normal(const surety_marginal *mg, double z);

/* Batched forms: out[r*ostride] = from_uniform(in[r*istride]) (or
 * from_normal) for r = 0..count-1; the kind is dispatched once. */
void surety_dist_apply_uniform(const surety_marginal *mg, const double *in,
                               size_t istride, size_t count, double *out,
                               size_t ostride);
void surety_dist_apply_normal(const surety_marginal *mg, const double *in,
                              size_t istride, size_t count, double *out,
                              size_t ostride);

/* The quantile F^{-1}(u) of `d` with its truncation, for u in (0,1); NaN
 * when `d` is invalid. Prepares on every call: for tests and one-offs. */
double surety_dist_quantile(const surety_dist *d, double u);

/* Lognormal parameters from the mean and sd of the hours (mean, sd > 0):
 * sigma^2 = ln(1 + sd^2/mean^2), mu = ln(mean) - sigma^2/2. */
void surety_dist_lognormal_params(double mean, double sd, double *mu,
                                  double *sigma);

/* Rank correlations of a Gaussian copula with Pearson correlation rho of
 * the normals (Kruskal 1958; METHODS.md s.9.2): Spearman
 * (6/pi) asin(rho/2), Kendall (2/pi) asin(rho); and the rho that gives a
 * target Spearman rs, 2 sin(pi rs / 6). For documentation and for users
 * who state correlations as ranks. */
double surety_dist_spearman_of(double rho);
double surety_dist_kendall_of(double rho);
double surety_dist_rho_for_spearman(double rs);

/* Eigenvalue floor used when repairing a correlation matrix. */
#define SURETY_CORR_EIGEN_FLOOR 1e-6

#endif
