/* stats.c - normal distribution, binomial tails, incomplete beta,
 * Clopper-Pearson and Wilson intervals.
 * SPDX-License-Identifier: MIT */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <string.h>

#include "stats.h"
#include "surety.h"

/* Phi(x) = 0.5 erfc(z), z = -x/sqrt 2. In the lower tail erfc(z) has
 * condition number about 2 z^2, so the rounding of z alone would cost
 * 1e-13 relative at x = -30. The part of z lost to rounding (from fma and
 * the low half of 1/sqrt 2) is put back to first order:
 * erfc(z + dz) = erfc(z) - dz (2/sqrt pi) exp(-z^2). */
double surety_norm_cdf(double x)
{
    const double s_hi = M_SQRT1_2, s_lo = -4.833646656726457e-17;
    double z = -x * s_hi;
    if (z < 1.0)
        return 0.5 * erfc(z);
    /* At x = -INFINITY the correction's fma(inf, s, -inf) is NaN; every
     * finite x keeps it finite (exp(-z*z) is 0 long before z overflows). */
    if (isinf(z))
        return 0.0;
    double dz = fma(-x, s_hi, -z) - x * s_lo;
    return 0.5 * (erfc(z) - dz * M_2_SQRTPI * exp(-z * z));
}

/* The common case (x > -sqrt 2, about 92% of standard normals) is the
 * first line of surety_norm_cdf inlined, so the same bits; the rest go
 * through the scalar routine. */
void surety_norm_cdf_batch(double *x, size_t count)
{
    for (size_t t = 0; t < count; t++) {
        double z = -x[t] * M_SQRT1_2;
        x[t] = z < 1.0 ? 0.5 * erfc(z) : surety_norm_cdf(x[t]);
    }
}

/* Horner evaluation of c[0] + c[1] x + ... + c[7] x^7. */
static double poly7(const double *c, double x)
{
    double r = c[7];
    for (int i = 6; i >= 0; i--)
        r = r * x + c[i];
    return r;
}

/* Wichura (1988), AS 241, PPND16: rational approximations on three
 * regions: |q| <= 0.425 in q^2; then r = sqrt(-ln min(p,1-p)) split at 5.
 * Coefficients as published: a/b central, c/d intermediate, e/f tail. */
static const double ppnd_a[8] = {
    3.3871328727963666080e0, 1.3314166789178437745e+2,
    1.9715909503065514427e+3, 1.3731693765509461125e+4,
    4.5921953931549871457e+4, 6.7265770927008700853e+4,
    3.3430575583588128105e+4, 2.5090809287301226727e+3};
static const double ppnd_b[8] = {
    1.0, 4.2313330701600911252e+1,
    6.8718700749205790830e+2, 5.3941960214247511077e+3,
    2.1213794301586595867e+4, 3.9307895800092710610e+4,
    2.8729085735721942674e+4, 5.2264952788528545610e+3};
static const double ppnd_c[8] = {
    1.42343711074968357734e0, 4.63033784615654529590e0,
    5.76949722146069140550e0, 3.64784832476320460504e0,
    1.27045825245236838258e0, 2.41780725177450611770e-1,
    2.27238449892691845833e-2, 7.74545014278341407640e-4};
static const double ppnd_d[8] = {
    1.0, 2.05319162663775882187e0,
    1.67638483018380384940e0, 6.89767334985100004550e-1,
    1.48103976427480074590e-1, 1.51986665636164571966e-2,
    5.47593808499534494600e-4, 1.05075007164441684324e-9};
static const double ppnd_e[8] = {
    6.65790464350110377720e0, 5.46378491116411436990e0,
    1.78482653991729133580e0, 2.96560571828504891230e-1,
    2.65321895265761230930e-2, 1.24266094738807843860e-3,
    2.71155556874348757815e-5, 2.01033439929228813265e-7};
static const double ppnd_f[8] = {
    1.0, 5.99832206555887937690e-1,
    1.36929880922735805310e-1, 1.48753612908506148525e-2,
    7.86869131145613259100e-4, 1.84631831751005468180e-5,
    1.42151175831644588870e-7, 2.04426310338993978564e-15};

double surety_norm_quantile(double p)
{
    if (isnan(p) || p < 0.0 || p > 1.0)
        return NAN;
    if (p == 0.0)
        return -INFINITY;
    if (p == 1.0)
        return INFINITY;
    double q = p - 0.5;
    if (fabs(q) <= 0.425) {
        double r = 0.180625 - q * q;
        return q * poly7(ppnd_a, r) / poly7(ppnd_b, r);
    }
    double r = q < 0.0 ? p : 1.0 - p;
    r = sqrt(-log(r));
    double x;
    if (r <= 5.0) {
        r -= 1.6;
        x = poly7(ppnd_c, r) / poly7(ppnd_d, r);
    } else {
        r -= 5.0;
        x = poly7(ppnd_e, r) / poly7(ppnd_f, r);
    }
    return q < 0.0 ? -x : x;
}

/* The batch runs AS 241's central rational approximation on every element
 * without a branch, so the CPU overlaps the independent evaluations instead
 * of stalling on one dependency chain and on mispredicted region tests; the
 * elements outside |p - 1/2| <= 0.425 (about 15% of uniform p) are then
 * redone by the scalar routine. The central formula is the scalar one
 * operation for operation (Horner in the same order, then q*num/den), so
 * the results are the same bits. */
enum { QPASS = 64 };

/* The central formula on exactly QPASS values: the fixed trip count and
 * the restrict pointers let the compiler run it on SIMD lanes, whose
 * lane-wise IEEE operations give each value the scalar's bits. */
static void central_pass(const double *restrict x, double *restrict w)
{
    for (size_t t = 0; t < QPASS; t++) {
        double q = x[t] - 0.5, r = 0.180625 - q * q;
        double num = ppnd_a[7], den = ppnd_b[7];
        for (int i = 6; i >= 0; i--) {
            num = num * r + ppnd_a[i];
            den = den * r + ppnd_b[i];
        }
        w[t] = q * num / den;
    }
}

/* The elements tail[0 .. nt-1] of `in` outside the central region, into
 * x: the scalar routine's intermediate formula, operation for operation,
 * inline. The scalar's q < 0 ? p : 1 - p is the smaller of the two here
 * (no tail element lies at 1/2), which compiles to a minimum instead of a
 * jump that a random mix of sides mispredicts on every other element;
 * the result takes q's sign (copysign: the value is positive there). An
 * argument of log outside (0, 1) is replaced first, so log raises nothing
 * the scalar would not; the rare others (beyond r = 5, about
 * p < 1.4e-11, and 0, 1, NaN or out of range) then go through the scalar
 * routine. */
static void tail_pass(const double *in, const size_t *tail, size_t nt,
                      double *x)
{
    for (size_t k = 0; k < nt; k++) {
        double p = in[tail[k]], q = p - 0.5, c = 1.0 - p;
        double a = p < c ? p : c;
        double r = sqrt(-log(a > 0.0 ? a : 0.5));
        if (!(p > 0.0 && p < 1.0 && r <= 5.0)) {
            x[tail[k]] = surety_norm_quantile(p);
            continue;
        }
        r -= 1.6;
        x[tail[k]] = copysign(poly7(ppnd_c, r) / poly7(ppnd_d, r), q);
    }
}

void surety_norm_quantile_batch(double *p, size_t count)
{
    double in[QPASS], w[QPASS];
    for (size_t at = 0; at < count; at += QPASS) {
        size_t len = count - at < QPASS ? count - at : QPASS;
        double *x = p + at;
        memcpy(in, x, len * sizeof *x);
        for (size_t t = len; t < QPASS; t++)
            in[t] = 0.5;
        central_pass(in, w);
        /* the tail elements listed without a branch, then redone, so a
         * random mix of regions costs no mispredicted jumps */
        size_t tail[QPASS], nt = 0;
        for (size_t t = 0; t < len; t++) {
            tail[nt] = t;
            nt += !(fabs(x[t] - 0.5) <= 0.425);
            x[t] = w[t];
        }
        tail_pass(in, tail, nt, x);
    }
}

/* ------------------------------------------------------------------ */
/* Binomial probabilities: Loader's saddle-point form                  */
/* ------------------------------------------------------------------ */

#define LN_SQRT_2PI 0.918938533204672741780329736406
#define LN_2PI 1.837877066409345483560659472811

/* stirlerr(n) = ln Gamma(n+1) - (n+1/2) ln n + n - ln sqrt(2 pi), the error
 * of Stirling's formula (Loader 2000, "Fast and accurate computation of
 * binomial probabilities"). Exact values at the half-integers up to 15
 * (computed once with 50-digit decimal arithmetic from exact factorials and
 * double factorials); the asymptotic series above. stirlerr(0) is unused
 * and set to 0 as in the original. */
static double stirlerr(double n)
{
    static const double halves[31] = {
        0.0, 1.534264097200273452914e-1,
        8.106146679532725821967e-2, 5.481412105191765389614e-2,
        4.134069595540929409382e-2, 3.316287351993628748511e-2,
        2.767792568499833914879e-2, 2.374616365629749597133e-2,
        2.079067210376509311152e-2, 1.848845053267318523078e-2,
        1.664469118982119216319e-2, 1.513497322191737887351e-2,
        1.387612882307074799875e-2, 1.281046524292022692425e-2,
        1.189670994589177009506e-2, 1.110455975820691732663e-2,
        1.041126526197209649748e-2, 9.799416126158803298390e-3,
        9.255462182712732917729e-3, 8.768700134139385462955e-3,
        8.330563433362871256469e-3, 7.934114564314020547250e-3,
        7.573675487951840794972e-3, 7.244554301320383179546e-3,
        6.942840107209529865664e-3, 6.665247032707682442356e-3,
        6.408994188004207068440e-3, 6.171712263039457647535e-3,
        5.951370112758847735624e-3, 5.746216513010115682026e-3,
        5.554733551962801371039e-3,
    };
    const double S0 = 1.0 / 12, S1 = 1.0 / 360, S2 = 1.0 / 1260,
                 S3 = 1.0 / 1680, S4 = 1.0 / 1188;
    if (n <= 15.0) {
        double nn = n + n;
        if (nn == floor(nn))
            return halves[(int)nn];
        /* Off the half-integers (only reached from the incomplete beta
         * with real a, b): the cancellation costs about 1e-14 absolute,
         * which is a relative error of the same size in the result. */
        return lgamma(n + 1.0) - (n + 0.5) * log(n) + n - LN_SQRT_2PI;
    }
    double nn = n * n;
    if (n > 500)
        return (S0 - S1 / nn) / n;
    if (n > 80)
        return (S0 - (S1 - S2 / nn) / nn) / n;
    if (n > 35)
        return (S0 - (S1 - (S2 - S3 / nn) / nn) / nn) / n;
    return (S0 - (S1 - (S2 - (S3 - S4 / nn) / nn) / nn) / nn) / n;
}

/* bd0(x, np) = x ln(x/np) + np - x, the deviance term, summed as a series
 * when x is close to np where the direct form cancels (Loader 2000). */
static double bd0(double x, double np)
{
    if (fabs(x - np) < 0.1 * (x + np)) {
        double v = (x - np) / (x + np);
        double s = (x - np) * v;
        if (fabs(s) < DBL_MIN)
            return s;
        double ej = 2 * x * v;
        v = v * v;
        for (int j = 1; j < 1000; j++) {
            ej *= v;
            double s1 = s + ej / (2 * j + 1);
            if (s1 == s)
                return s1;
            s = s1;
        }
    }
    return x * log(x / np) + np - x;
}

/* ln [Gamma(n+1) / (Gamma(x+1) Gamma(n-x+1)) p^x q^(n-x)] for real
 * 0 <= x <= n, with q = 1-p passed separately so that neither loses
 * precision near 0 (Loader 2000). */
static double log_dbinom_raw(double x, double n, double p, double q)
{
    if (p == 0.0)
        return x == 0.0 ? 0.0 : -INFINITY;
    if (q == 0.0)
        return x == n ? 0.0 : -INFINITY;
    if (x < 0.0 || x > n)
        return -INFINITY;
    if (x == 0.0)
        return n == 0.0 ? 0.0 : n * (p < 0.5 ? log1p(-p) : log(q));
    if (x == n)
        return n * (q < 0.5 ? log1p(-q) : log(p));
    /* Far from the mode bd0(x, np) is sensitive to np (derivative
     * 1 - x/np), so the rounding of the products is put back to first
     * order. The smaller of p, q is taken as exact and the larger as one
     * minus it: callers pass q = 1 - p rounded, or the reverse. */
    double np = n * p, nq = n * q;
    double ep = fma(n, p, -np), eq = fma(n, q, -nq);
    if (p <= q)
        eq += n * ((1.0 - q) - p);
    else
        ep += n * ((1.0 - p) - q);
    double lc = stirlerr(n) - stirlerr(x) - stirlerr(n - x)
                - (bd0(x, np) + ep * (1.0 - x / np))
                - (bd0(n - x, nq) + eq * (1.0 - (n - x) / nq));
    /* ln(2 pi x (n-x)/n); n - x is exact when x >= n/2 (Sterbenz), where
     * log1p(-x/n) would inherit the rounding of x/n relative to 1 - x/n */
    double lf = LN_2PI + log(x)
                + (x < 0.5 * n ? log1p(-x / n) : log((n - x) / n));
    return lc - 0.5 * lf;
}

/* ln(1 - e^x) for x <= 0 without cancellation (Maechler's log1mexp). */
static double log1mexp(double x)
{
    if (x > -M_LN2)
        return log(-expm1(x));
    return log1p(-exp(x));
}

double surety_stats_log_choose(double n, double k)
{
    if (isnan(n) || isnan(k) || k < 0.0 || k > n)
        return -INFINITY;
    if (k == 0.0 || k == n)
        return 0.0;
    /* C(n,k) 2^-n is the Bin(n, 1/2) probability of k. */
    return log_dbinom_raw(k, n, 0.5, 0.5) + n * M_LN2;
}

static int binom_args_ok(long N, double p)
{
    return N >= 0 && !isnan(p) && p >= 0.0 && p <= 1.0;
}

double surety_stats_binom_logpmf(long k, long N, double p)
{
    if (!binom_args_ok(N, p))
        return NAN;
    if (k < 0 || k > N)
        return -INFINITY;
    return log_dbinom_raw((double)k, (double)N, p, 1.0 - p);
}

double surety_stats_binom_pmf(long k, long N, double p)
{
    return exp(surety_stats_binom_logpmf(k, N, p));
}

/* ------------------------------------------------------------------ */
/* Regularized incomplete beta                                         */
/* ------------------------------------------------------------------ */

/* Continued fraction of I_x(a,b) / [x^a (1-x)^b / (a B(a,b))],
 *   1 / (1 + d1 / (1 + d2 / (1 + ...))),
 *   d_{2m+1} = -(a+m)(a+b+m) x / ((a+2m)(a+2m+1)),
 *   d_{2m}   =  m (b-m) x / ((a+2m-1)(a+2m)),
 * by the modified Lentz method (Lentz 1976; Thompson & Barnett 1986). It
 * converges quickly for x < (a+1)/(a+b+2), in O(sqrt(min(a,b))) terms near
 * that point. */
static double beta_cf(double x, double a, double b)
{
    const double tiny = 1e-300, eps = 1e-16;
    double qab = a + b, qap = a + 1.0, qam = a - 1.0;
    double c = 1.0, d = 1.0 - qab * x / qap;
    if (fabs(d) < tiny)
        d = tiny;
    d = 1.0 / d;
    double h = d;
    long maxit = 100000 + (long)(20.0 * sqrt(fmin(a, b)));
    for (long m = 1; m <= maxit; m++) {
        double m2 = 2.0 * (double)m, dm = (double)m;
        double aa = dm * (b - dm) * x / ((qam + m2) * (a + m2));
        d = 1.0 + aa * d;
        if (fabs(d) < tiny)
            d = tiny;
        c = 1.0 + aa / c;
        if (fabs(c) < tiny)
            c = tiny;
        d = 1.0 / d;
        h *= d * c;
        aa = -(a + dm) * (qab + dm) * x / ((a + m2) * (qap + m2));
        d = 1.0 + aa * d;
        if (fabs(d) < tiny)
            d = tiny;
        c = 1.0 + aa / c;
        if (fabs(c) < tiny)
            c = tiny;
        d = 1.0 / d;
        double del = d * c;
        h *= del;
        if (fabs(del - 1.0) < eps)
            break;
    }
    return h;
}

/* ln I_x(a,b) and ln(1 - I_x(a,b)) for a, b > 0, 0 < x < 1, y = 1-x.
 * The continued fraction is applied on the side where it converges and
 * gives the smaller tail there; the other is its complement. Prefactor:
 * x^a y^b / (a B(a,b)) = dbinom(a; a+b, x) * b/(a+b), which Loader's form
 * evaluates without the cancellation of ln Gamma differences. */
static void ibeta_log_cf(double x, double y, double a, double b,
                         double *lI, double *lIc)
{
    if (x > (a + 1.0) / (a + b + 2.0)) {
        ibeta_log_cf(y, x, b, a, lIc, lI);
        return;
    }
    double lpre = log_dbinom_raw(a, a + b, x, y) + log(b / (a + b));
    *lI = lpre + log(beta_cf(x, a, b));
    if (*lI > 0.0)
        *lI = 0.0;
    *lIc = log1mexp(*lI);
}

static void binom_log_tails(long k, long N, double p, double *lcdf,
                            double *lsf);

/* ln I_x(a,b) and ln(1 - I_x(a,b)) for 0 < x < 1 given exactly. With
 * integer a and b (Clopper-Pearson always) I_x(a,b) = P{Bin(a+b-1, x) >= a}
 * (METHODS.md s.1), and the binomial tail sums are used: near the mean of
 * a tight beta law, x close to 1, the fraction starts with 1 - (a+b)x/(a+1)
 * and loses digits to cancellation (about 1e-11 at a + b = 1e6). */
static void ibeta_log(double x, double a, double b, double *lI, double *lIc)
{
    if (a == floor(a) && b == floor(b) && a + b < 4e18) {
        binom_log_tails((long)a - 1, (long)(a + b) - 1, x, lIc, lI);
        return;
    }
    ibeta_log_cf(x, 1.0 - x, a, b, lI, lIc);
}

static int ibeta_args_ok(double x, double a, double b)
{
    return !isnan(x) && a > 0.0 && b > 0.0 && isfinite(a) && isfinite(b)
           && x >= 0.0 && x <= 1.0;
}

/* I_x(a,b) when upper is 0, its complement when upper is 1. */
static double ibeta_side(double x, double a, double b, int upper)
{
    if (!ibeta_args_ok(x, a, b))
        return NAN;
    if (x == 0.0 || x == 1.0)
        return (x == 1.0) != upper ? 1.0 : 0.0;
    double lI, lIc;
    ibeta_log(x, a, b, &lI, &lIc);
    return exp(upper ? lIc : lI);
}

double surety_stats_ibeta(double x, double a, double b)
{
    return ibeta_side(x, a, b, 0);
}

double surety_stats_ibetac(double x, double a, double b)
{
    return ibeta_side(x, a, b, 1);
}

static uint64_t double_bits(double x)
{
    uint64_t u;
    memcpy(&u, &x, sizeof u);
    return u;
}

static double bits_double(uint64_t u)
{
    double x;
    memcpy(&x, &u, sizeof x);
    return x;
}

/* The x with I_x(a,b) = y, given y and yc = 1-y separately so that the
 * smaller of the two carries full precision. Positive doubles are ordered
 * like their bit patterns, so bisecting the patterns between 0 and 1 ends
 * in at most 62 steps with two adjacent doubles around the root, whatever
 * its size (1e-200 as well as 0.5). The comparison is made on the smaller
 * tail, in logs, so that it stays exact far out in the tails. */
static double beta_root(double y, double yc, double a, double b)
{
    if (y <= 0.0)
        return 0.0;
    if (yc <= 0.0)
        return 1.0;
    int use_lower = y <= yc;
    double target = use_lower ? log(y) : log(yc);
    uint64_t lo = 0, hi = double_bits(1.0);
    double flo = use_lower ? -INFINITY : 0.0;
    double fhi = use_lower ? 0.0 : -INFINITY;
    while (hi - lo > 1) {
        uint64_t mid = lo + (hi - lo) / 2;
        double x = bits_double(mid), lI, lIc;
        ibeta_log(x, a, b, &lI, &lIc);
        double f = use_lower ? lI : lIc;
        int below = use_lower ? f < target : f > target;
        if (below) {
            lo = mid;
            flo = f;
        } else {
            hi = mid;
            fhi = f;
        }
    }
    return fabs(flo - target) < fabs(fhi - target) ? bits_double(lo)
                                                   : bits_double(hi);
}

double surety_stats_ibeta_inv(double y, double a, double b)
{
    if (isnan(y) || y < 0.0 || y > 1.0 || !ibeta_args_ok(0.5, a, b))
        return NAN;
    return beta_root(y, 1.0 - y, a, b);
}

/* ------------------------------------------------------------------ */
/* Binomial tails                                                      */
/* ------------------------------------------------------------------ */

/* Terms summed before falling back to the continued fraction (enough for
 * 10 standard deviations up to N = 4e8 at p = 1/2). Each term carries a
 * relative error of at most (terms so far) ulp, so the sum is within 1e-11
 * even at the cap, and far better in practice (errors add at random and
 * the late terms are small). */
#define TAIL_TERMS 100000

/* ln P{X <= k} and ln P{X > k} for X ~ Bin(N,p), 0 <= k < N, 0 < p < 1.
 * The tail that excludes the mode is summed outward from its term nearest
 * the mode (the largest), as a multiple of that term so that nothing
 * underflows; when it would need more than TAIL_TERMS terms it is
 * I_{1-p}(N-k, k+1) (lower) or I_p(k+1, N-k) (upper), METHODS.md s.1. */
static void binom_log_tails(long k, long N, double p, double *lcdf,
                            double *lsf)
{
    double q = 1.0 - p, dN = (double)N;
    double mode = floor((dN + 1.0) * p);
    double s = 1.0, t = 1.0;
    long steps = 0;
    if ((double)k < mode) {
        long j = k;
        for (; j >= 1 && steps < TAIL_TERMS; j--, steps++) {
            t *= (double)j * q / ((dN - (double)j + 1.0) * p);
            s += t;
            if (t < 1e-17 * s)
                break;
        }
        if (steps < TAIL_TERMS) {
            *lcdf = surety_stats_binom_logpmf(k, N, p) + log(s);
            *lsf = log1mexp(*lcdf);
        } else {
            ibeta_log_cf(q, p, dN - (double)k, (double)k + 1.0, lcdf, lsf);
        }
    } else {
        long j = k + 1;
        for (; j < N && steps < TAIL_TERMS; j++, steps++) {
            t *= (dN - (double)j) * p / (((double)j + 1.0) * q);
            s += t;
            if (t < 1e-17 * s)
                break;
        }
        if (steps < TAIL_TERMS) {
            *lsf = surety_stats_binom_logpmf(k + 1, N, p) + log(s);
            *lcdf = log1mexp(*lsf);
        } else {
            ibeta_log_cf(p, q, (double)k + 1.0, dN - (double)k, lsf,
                         lcdf);
        }
    }
}

double surety_stats_binom_logcdf(long k, long N, double p)
{
    if (!binom_args_ok(N, p))
        return NAN;
    if (k < 0)
        return -INFINITY;
    if (k >= N || p == 0.0)
        return 0.0;
    if (p == 1.0)
        return -INFINITY;
    double lcdf, lsf;
    binom_log_tails(k, N, p, &lcdf, &lsf);
    return lcdf;
}

double surety_stats_binom_logsf(long k, long N, double p)
{
    if (!binom_args_ok(N, p))
        return NAN;
    if (k < 0)
        return 0.0;
    if (k >= N || p == 0.0)
        return -INFINITY;
    if (p == 1.0)
        return 0.0;
    double lcdf, lsf;
    binom_log_tails(k, N, p, &lcdf, &lsf);
    return lsf;
}

double surety_stats_binom_cdf(long k, long N, double p)
{
    return exp(surety_stats_binom_logcdf(k, N, p));
}

double surety_stats_binom_sf(long k, long N, double p)
{
    return exp(surety_stats_binom_logsf(k, N, p));
}

double surety_binom_cdf(long k, long N, double p)
{
    return surety_stats_binom_cdf(k, N, p);
}

/* ------------------------------------------------------------------ */
/* Intervals                                                           */
/* ------------------------------------------------------------------ */

/* Clopper & Pearson (1934) with tail probability t on one side:
 * lower = Beta^{-1}(t; x, n-x+1), upper = Beta^{-1}(1-t; x+1, n-x), with
 * the closed forms at x = 0 and x = n. */
static double cp_lower(size_t x, size_t n, double t)
{
    if (x == 0)
        return 0.0;
    if (x == n)
        return exp(log(t) / (double)n);
    return beta_root(t, 1.0 - t, (double)x, (double)(n - x) + 1.0);
}

static double cp_upper(size_t x, size_t n, double t)
{
    if (x == n)
        return 1.0;
    if (x == 0)
        return -expm1(log(t) / (double)n);
    return beta_root(1.0 - t, t, (double)x + 1.0, (double)(n - x));
}

static int interval_args_ok(size_t x, size_t n, double c)
{
    return n > 0 && x <= n && c > 0.0 && c < 1.0;
}

double surety_stats_cp_lower1(size_t x, size_t n, double c)
{
    if (!interval_args_ok(x, n, c))
        return NAN;
    return cp_lower(x, n, 1.0 - c);
}

double surety_stats_cp_upper1(size_t x, size_t n, double c)
{
    if (!interval_args_ok(x, n, c))
        return NAN;
    return cp_upper(x, n, 1.0 - c);
}

void surety_clopper_pearson(size_t x, size_t n, double c, double *lo,
                            double *hi, double *lower1)
{
    double l = NAN, h = NAN, l1 = NAN;
    if (interval_args_ok(x, n, c)) {
        double a = 1.0 - c;
        l = cp_lower(x, n, 0.5 * a);
        h = cp_upper(x, n, 0.5 * a);
        l1 = cp_lower(x, n, a);
    }
    if (lo)
        *lo = l;
    if (hi)
        *hi = h;
    if (lower1)
        *lower1 = l1;
}

/* Wilson (1927) score interval; z from the lower tail, -Phi^{-1}(t),
 * which is exact where 1 - t would round. At x = 0 the lower end and at
 * x = n the upper end are exactly 0 and 1. */
void surety_stats_wilson(size_t x, size_t n, double c, int sides,
                         double *lo, double *hi)
{
    double l = NAN, h = NAN;
    if (interval_args_ok(x, n, c) && (sides == 1 || sides == 2)) {
        double a = 1.0 - c;
        double z = -surety_norm_quantile(sides == 2 ? 0.5 * a : a);
        double dn = (double)n, ph = (double)x / dn, z2 = z * z;
        double den = 1.0 + z2 / dn;
        double centre = (ph + z2 / (2.0 * dn)) / den;
        double half = z * sqrt(ph * (1.0 - ph) / dn + z2 / (4.0 * dn * dn))
                      / den;
        l = x == 0 ? 0.0 : fmax(0.0, centre - half);
        h = x == n ? 1.0 : fmin(1.0, centre + half);
    }
    if (lo)
        *lo = l;
    if (hi)
        *hi = h;
}
