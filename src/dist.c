/* dist.c - hours distributions by inverse CDF with exact truncation, and
 * the Cholesky factor (or repair) of the Gaussian copula's correlations.
 * SPDX-License-Identifier: MIT */
#include "dist.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "alloc.h"
#include "lp/dense.h"
#include "stats.h"

/* Values per pass of the batched inverse CDF. */
#define QBATCH 64

void surety_dist_lognormal_params(double mean, double sd, double *mu,
                                  double *sigma)
{
    /* Moments of the lognormal: E = exp(mu + s^2/2), Var = E^2 (e^{s^2}-1),
     * solved for (mu, s); log1p keeps small coefficients of variation
     * exact. */
    double cv = sd / mean;
    double s2 = log1p(cv * cv);
    *sigma = sqrt(s2);
    *mu = log(mean) - 0.5 * s2;
}

/* Triangular CDF on [a, c] with mode b (a < c, a <= b <= c). */
static double tri_cdf(double a, double b, double c, double x)
{
    if (x <= a)
        return 0.0;
    if (x >= c)
        return 1.0;
    if (x <= b)
        return (x - a) * (x - a) / ((c - a) * (b - a));
    return 1.0 - (c - x) * (c - x) / ((c - a) * (c - b));
}

static double tri_quantile(const surety_marginal *mg, double p)
{
    double a = mg->a, b = mg->b, c = mg->c;
    if (p <= mg->fc)
        return a + sqrt(p * (c - a) * (b - a));
    return c - sqrt((1.0 - p) * (c - a) * (c - b));
}

static surety_code bad(surety_error *err, const char *job, const char *field,
                       const char *what)
{
    surety_error_set(err, NULL, 0, 0, field, "job '%s': %s", job ? job : "?",
                     what);
    return SURETY_EINPUT;
}

/* Phi with the infinite bounds of an untruncated side handled here, so
 * that nothing depends on how the CDF treats infinities. */
static double phi_at(double x)
{
    if (x == -INFINITY)
        return 0.0;
    if (x == INFINITY)
        return 1.0;
    return surety_norm_cdf(x);
}

/* Normal-family truncation on the standard scale: alpha, beta are the
 * standardised bounds. Works with the survival function when alpha > 0:
 * Phi(alpha) is then close to 1 and F(hi) - F(lo) would cancel, while
 * Phi(-alpha) - Phi(-beta) keeps full relative precision. */
static int normal_window(surety_marginal *mg, double alpha, double beta)
{
    if (alpha > 0) {
        mg->flip = 1;
        mg->p0 = phi_at(-alpha);
        mg->pw = mg->p0 - phi_at(-beta);
    } else {
        mg->flip = 0;
        mg->p0 = phi_at(alpha);
        mg->pw = phi_at(beta) - mg->p0;
    }
    return mg->pw > 0;
}

surety_code surety_dist_prepare(surety_marginal *mg, const surety_dist *d,
                                const char *job, const char *field,
                                surety_error *err)
{
    memset(mg, 0, sizeof *mg);
    mg->kind = d->kind;
    double lo = d->lo, hi = d->hi;
    if (isnan(lo) || isnan(hi) || lo > hi)
        return bad(err, job, field,
                   "the truncation bounds must satisfy min <= max");
    mg->lo = lo;
    mg->hi = hi;
    switch (d->kind) {
    case SURETY_DIST_FIXED:
        if (!isfinite(d->a))
            return bad(err, job, field, "the fixed hours must be finite");
        if (d->a < lo || d->a > hi)
            return bad(err, job, field,
                       "the fixed hours lie outside its min/max bounds");
        mg->a = d->a;
        return SURETY_OK;
    case SURETY_DIST_NORMAL:
        if (!isfinite(d->a) || !(d->b > 0) || !isfinite(d->b))
            return bad(err, job, field,
                       "a normal needs a finite mean and a positive sd");
        mg->a = d->a;
        mg->b = d->b;
        mg->direct = lo == -INFINITY && hi == INFINITY;
        if (!mg->direct &&
            !normal_window(mg, (lo - d->a) / d->b, (hi - d->a) / d->b))
            return bad(err, job, field,
                       "its min/max bounds leave no probability (they lie "
                       "too far in a tail of the normal)");
        return SURETY_OK;
    case SURETY_DIST_LOGNORMAL:
        if (!(d->a > 0) || !isfinite(d->a) || !(d->b > 0) || !isfinite(d->b))
            return bad(err, job, field,
                       "a lognormal needs a positive mean and sd");
        surety_dist_lognormal_params(d->a, d->b, &mg->a, &mg->b);
        mg->direct = lo <= 0 && hi == INFINITY;
        if (hi <= 0)
            return bad(err, job, field,
                       "a lognormal is positive but its max bound is not");
        if (!mg->direct) {
            double alpha = lo > 0 ? (log(lo) - mg->a) / mg->b : -INFINITY;
            double beta = (log(hi) - mg->a) / mg->b;
            if (!normal_window(mg, alpha, beta))
                return bad(err, job, field,
                           "its min/max bounds leave no probability");
        }
        return SURETY_OK;
    case SURETY_DIST_UNIFORM:
        if (!isfinite(d->a) || !isfinite(d->b) || !(d->a < d->b))
            return bad(err, job, field,
                       "a uniform needs finite low < high");
        /* A truncated uniform is the uniform on the intersection. */
        mg->a = fmax(d->a, lo);
        mg->b = fmin(d->b, hi);
        if (mg->a > mg->b)
            return bad(err, job, field,
                       "its min/max bounds do not meet [low, high]");
        return SURETY_OK;
    case SURETY_DIST_TRIANGULAR:
        if (!isfinite(d->a) || !isfinite(d->c) || !(d->a <= d->b) ||
            !(d->b <= d->c) || !(d->a < d->c))
            return bad(err, job, field,
                       "a triangular needs low <= mode <= high, low < high");
        mg->a = d->a;
        mg->b = d->b;
        mg->c = d->c;
        mg->fc = (d->b - d->a) / (d->c - d->a);
        mg->p0 = tri_cdf(d->a, d->b, d->c, lo);
        mg->pw = tri_cdf(d->a, d->b, d->c, hi) - mg->p0;
        if (!(mg->pw > 0))
            return bad(err, job, field,
                       "its min/max bounds leave no probability");
        return SURETY_OK;
    case SURETY_DIST_EMPIRICAL: {
        if (!d->values || d->nvalues == 0)
            return bad(err, job, field, "an empirical needs observations");
        for (size_t t = 0; t < d->nvalues; t++) {
            if (!isfinite(d->values[t]) ||
                (t > 0 && d->values[t] < d->values[t - 1]))
                return bad(err, job, field,
                           "empirical observations must be finite and "
                           "sorted ascending");
        }
        /* Truncation of an equally likely sample keeps the observations in
         * [lo, hi], still equally likely: the exact inverse-CDF rule for a
         * discrete law. */
        size_t s = 0, e = d->nvalues;
        while (s < e && d->values[s] < lo)
            s++;
        while (e > s && d->values[e - 1] > hi)
            e--;
        if (s == e)
            return bad(err, job, field,
                       "no observation lies within its min/max bounds");
        mg->values = d->values + s;
        mg->vcount = e - s;
        return SURETY_OK;
    }
    }
    return bad(err, job, field, "unknown distribution kind");
}

/* Standard-scale quantile of the normal family within the window. */
static double window_z(const surety_marginal *mg, double u)
{
    if (mg->flip)
        return -surety_norm_quantile(mg->p0 - u * mg->pw);
    return surety_norm_quantile(mg->p0 + u * mg->pw);
}

static double clamp(double x, double lo, double hi)
{
    return x < lo ? lo : x > hi ? hi : x;
}

double surety_dist_from_uniform(const surety_marginal *mg, double u)
{
    switch (mg->kind) {
    case SURETY_DIST_FIXED:
        return mg->a;
    case SURETY_DIST_NORMAL:
        if (mg->direct)
            return mg->a + mg->b * surety_norm_quantile(u);
        /* Rounding may step a hair past a bound; the law puts no mass
         * outside, so clamping is exact. */
        return clamp(mg->a + mg->b * window_z(mg, u), mg->lo, mg->hi);
    case SURETY_DIST_LOGNORMAL:
        if (mg->direct)
            return exp(mg->a + mg->b * surety_norm_quantile(u));
        return clamp(exp(mg->a + mg->b * window_z(mg, u)), mg->lo, mg->hi);
    case SURETY_DIST_UNIFORM:
        return mg->a + u * (mg->b - mg->a);
    case SURETY_DIST_TRIANGULAR:
        return clamp(tri_quantile(mg, mg->p0 + u * mg->pw), mg->lo, mg->hi);
    case SURETY_DIST_EMPIRICAL: {
        /* Inverse of the empirical CDF, Q(u) = min{x : F(x) >= u}: the
         * ceil(u*count)-th observation. */
        double k = ceil(u * (double)mg->vcount);
        size_t t = k >= 1.0 ? (size_t)k - 1 : 0;
        return mg->values[t < mg->vcount ? t : mg->vcount - 1];
    }
    }
    return NAN;
}

double surety_dist_from_normal(const surety_marginal *mg, double z)
{
    if (mg->direct) {
        if (mg->kind == SURETY_DIST_NORMAL)
            return mg->a + mg->b * z;
        return exp(mg->a + mg->b * z);
    }
    if (mg->kind == SURETY_DIST_FIXED)
        return mg->a;
    return surety_dist_from_uniform(mg, surety_norm_cdf(z));
}

/* Truncated normal or lognormal over a batch, the hot case of real models
 * (the model reader truncates every normal at 0): the same arithmetic as
 * surety_dist_from_uniform, bit for bit, in passes over QBATCH values.
 * `in` holds uniforms, or normals when from_normal is set. */
static void window_batch(const surety_marginal *mg, int from_normal,
                         const double *in, size_t istride, size_t count,
                         double *out, size_t ostride)
{
    double a = mg->a, b = mg->b, lo = mg->lo, hi = mg->hi, p0 = mg->p0;
    double sgn = mg->flip ? -1.0 : 1.0, spw = mg->flip ? -mg->pw : mg->pw;
    int logn = mg->kind == SURETY_DIST_LOGNORMAL;
    double p[QBATCH];
    for (size_t at = 0; at < count; at += QBATCH) {
        size_t len = count - at < QBATCH ? count - at : QBATCH;
        const double *src = in + at * istride;
        for (size_t r = 0; r < len; r++)
            p[r] = src[r * istride];
        if (from_normal)
            surety_norm_cdf_batch(p, len);
        for (size_t r = 0; r < len; r++)
            p[r] = p0 + p[r] * spw;
        surety_norm_quantile_batch(p, len);
        double *dst = out + at * ostride;
        for (size_t r = 0; r < len; r++) {
            double x = a + b * (sgn * p[r]);
            if (logn)
                x = exp(x);
            dst[r * ostride] = clamp(x, lo, hi);
        }
    }
}

void surety_dist_apply_uniform(const surety_marginal *mg, const double *in,
                               size_t istride, size_t count, double *out,
                               size_t ostride)
{
    size_t r;
    switch (mg->kind) {
    case SURETY_DIST_FIXED:
        for (r = 0; r < count; r++)
            out[r * ostride] = mg->a;
        return;
    case SURETY_DIST_UNIFORM: {
        double a = mg->a, w = mg->b - mg->a;
        for (r = 0; r < count; r++)
            out[r * ostride] = a + in[r * istride] * w;
        return;
    }
    case SURETY_DIST_TRIANGULAR: {
        /* tri_quantile with both sides computed and one chosen: the side
         * of a random p is a coin toss the branch predictor loses, and
         * each side is the scalar expression, so the same bits */
        double p0 = mg->p0, pw = mg->pw, lo = mg->lo, hi = mg->hi;
        double a = mg->a, b = mg->b, c = mg->c, fc = mg->fc;
        for (r = 0; r < count; r++) {
            double p = p0 + in[r * istride] * pw;
            double left = a + sqrt(p * (c - a) * (b - a));
            double right = c - sqrt((1.0 - p) * (c - a) * (c - b));
            out[r * ostride] = clamp(p <= fc ? left : right, lo, hi);
        }
        return;
    }
    case SURETY_DIST_NORMAL:
    case SURETY_DIST_LOGNORMAL:
        if (!mg->direct) {
            window_batch(mg, 0, in, istride, count, out, ostride);
            return;
        }
        break;
    default:
        break;
    }
    for (r = 0; r < count; r++)
        out[r * ostride] = surety_dist_from_uniform(mg, in[r * istride]);
}

void surety_dist_apply_normal(const surety_marginal *mg, const double *in,
                              size_t istride, size_t count, double *out,
                              size_t ostride)
{
    size_t r;
    if (mg->direct && mg->kind == SURETY_DIST_NORMAL) {
        double a = mg->a, b = mg->b;
        for (r = 0; r < count; r++)
            out[r * ostride] = a + b * in[r * istride];
        return;
    }
    if (mg->direct) {
        double a = mg->a, b = mg->b;
        for (r = 0; r < count; r++)
            out[r * ostride] = exp(a + b * in[r * istride]);
        return;
    }
    if (mg->kind == SURETY_DIST_NORMAL || mg->kind == SURETY_DIST_LOGNORMAL) {
        window_batch(mg, 1, in, istride, count, out, ostride);
        return;
    }
    /* Other laws: the copula's uniforms Phi(z), then their quantiles. */
    double u[QBATCH];
    for (size_t at = 0; at < count; at += QBATCH) {
        size_t len = count - at < QBATCH ? count - at : QBATCH;
        for (r = 0; r < len; r++)
            u[r] = in[(at + r) * istride];
        surety_norm_cdf_batch(u, len);
        surety_dist_apply_uniform(mg, u, 1, len, out + at * ostride, ostride);
    }
}

double surety_dist_quantile(const surety_dist *d, double u)
{
    surety_marginal mg;
    if (surety_dist_prepare(&mg, d, NULL, NULL, NULL) != SURETY_OK)
        return NAN;
    return surety_dist_from_uniform(&mg, u);
}

double surety_dist_spearman_of(double rho)
{
    return 6.0 / M_PI * asin(rho / 2.0);
}

double surety_dist_kendall_of(double rho)
{
    return 2.0 / M_PI * asin(rho);
}

double surety_dist_rho_for_spearman(double rs)
{
    return 2.0 * sin(M_PI * rs / 6.0);
}

/* ------------------------------------------------------------------ */
/* Correlation factor                                                  */
/* ------------------------------------------------------------------ */

/* "job 'C' with 'A' (0.9), 'B' (-0.9)": the earlier jobs that job f is
 * correlated with, capped so the message stays readable. */
static void name_partners(char *buf, size_t len, const surety_model *model,
                          size_t f)
{
    const double *R = model->corr;
    size_t n = model->n, shown = 0, more = 0, at = 0;
    buf[0] = '\0';
    for (size_t k = 0; k < f; k++) {
        if (R[f * n + k] == 0.0)
            continue;
        if (shown == 8) {
            more++;
            continue;
        }
        int w = snprintf(buf + at, len - at, "%s'%s' (%g)", shown ? ", " : "",
                         model->jobs[k].id, R[f * n + k]);
        if (w < 0 || (size_t)w >= len - at)
            break;
        at += (size_t)w;
        shown++;
    }
    if (more && at < len)
        snprintf(buf + at, len - at, " and %zu more", more);
}

/* Nearest valid correlation matrix by eigenvalue clipping: R = V diag(w)
 * V^T, eigenvalues below SURETY_CORR_EIGEN_FLOOR raised to it, then
 * rescaled to unit diagonal D^{-1/2} R' D^{-1/2} (a congruence, so it stays
 * positive definite). This is the common practice; it is close to, but not
 * exactly, the nearest correlation matrix in the Frobenius norm, which
 * Higham's alternating projections (IMA J. Numer. Anal. 22, 2002) find. */
static int clip_repair(double *R, size_t n)
{
    double *V = surety_xmalloc(n * n, sizeof *V);
    double *w = surety_xmalloc(n, sizeof *w);
    double *T = surety_xmalloc(n * n, sizeof *T);
    int rc = -1;
    if (!V || !w || !T)
        goto done;
    memcpy(V, R, n * n * sizeof *V);
    if (surety_dense_eigen(V, n, w) != 0)
        goto done;
    for (size_t c = 0; c < n; c++)
        if (w[c] < SURETY_CORR_EIGEN_FLOOR)
            w[c] = SURETY_CORR_EIGEN_FLOOR;
    /* T = V diag(w) V^T, summed in a fixed order (n is small). */
    for (size_t r = 0; r < n; r++)
        for (size_t s = 0; s <= r; s++) {
            double acc = 0;
            for (size_t c = 0; c < n; c++)
                acc += V[r * n + c] * w[c] * V[s * n + c];
            T[r * n + s] = T[s * n + r] = acc;
        }
    for (size_t r = 0; r < n; r++)
        for (size_t s = 0; s < r; s++) {
            double v = T[r * n + s] / sqrt(T[r * n + r] * T[s * n + s]);
            R[r * n + s] = R[s * n + r] = clamp(v, -1.0, 1.0);
        }
    for (size_t r = 0; r < n; r++)
        R[r * n + r] = 1.0;
    rc = 0;
done:
    surety_xfree(V);
    surety_xfree(w);
    surety_xfree(T);
    return rc;
}

surety_code surety_model_factor_correlation(surety_model *model, int repair,
                                            surety_error *err)
{
    size_t n = model->n;
    surety_xfree(model->chol);
    model->chol = NULL;
    model->corr_repaired = 0;
    if (!model->corr)
        return SURETY_OK;
    double *R = model->corr;
    int any = 0;
    for (size_t r = 0; r < n; r++) {
        if (R[r * n + r] != 1.0) {
            surety_error_set(err, model->path, 0, 0, "correlation",
                             "the correlation of job '%s' with itself must "
                             "be 1", model->jobs[r].id);
            return SURETY_EINPUT;
        }
        for (size_t s = 0; s < r; s++) {
            double v = R[r * n + s];
            if (!(v >= -1.0 && v <= 1.0) || v != R[s * n + r]) {
                surety_error_set(err, model->path, 0, 0, "correlation",
                                 "the correlation of jobs '%s' and '%s' must "
                                 "be symmetric and within [-1, 1]",
                                 model->jobs[s].id, model->jobs[r].id);
                return SURETY_EINPUT;
            }
            any |= v != 0.0;
        }
    }
    if (!any)
        return SURETY_OK; /* independent jobs: no copula needed */

    double *L = surety_xmalloc(n * n, sizeof *L);
    if (!L) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "out of memory for the correlation factor");
        return SURETY_EINTERNAL;
    }
    memcpy(L, R, n * n * sizeof *L);
    int info = surety_dense_cholesky(L, n);
    if (info > 0 && !repair) {
        /* dpotrf stops at the first leading minor that is not positive
         * definite: jobs 0..info-1 cannot hold together, and the last of
         * them, with its correlations to earlier jobs, is what breaks. */
        size_t f = (size_t)info - 1;
        char partners[700];
        name_partners(partners, sizeof partners, model, f);
        surety_error_set(err, model->path, 0, 0, "correlation",
                         "the correlations are inconsistent (the matrix is "
                         "not positive definite): those of job '%s' with %s "
                         "cannot hold together with the correlations among "
                         "the earlier jobs; change them or ask for the "
                         "nearest valid matrix",
                         model->jobs[f].id, partners[0] ? partners : "none");
        surety_xfree(L);
        return SURETY_EINPUT;
    }
    if (info > 0) {
        if (clip_repair(R, n) != 0) {
            surety_xfree(L);
            surety_error_set(err, NULL, 0, 0, "correlation",
                             "could not repair the correlation matrix "
                             "(eigen-decomposition failed)");
            return SURETY_EINTERNAL;
        }
        model->corr_repaired = 1;
        memcpy(L, R, n * n * sizeof *L);
        info = surety_dense_cholesky(L, n);
    }
    if (info != 0) {
        surety_xfree(L);
        surety_error_set(err, NULL, 0, 0, "correlation",
                         "the Cholesky factorisation failed (LAPACK info %d)",
                         info);
        return SURETY_EINTERNAL;
    }
    model->chol = L;
    return SURETY_OK;
}
