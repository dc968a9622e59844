/* bundle.c - a proximal bundle method over a box, for the decomposition's
 * prices (decomp.c), whose function is a sum of one-resource values.
 *
 * Proximal bundle method (Kiwiel 1990, "Proximity control in bundle
 * methods for convex nondifferentiable minimization", Math. Programming
 * 46; Lemarechal's survey in Handbooks in OR & MS vol. 1, 1989; cited
 * from memory), disaggregated: each component f_c keeps a cutting-plane
 * model of its own (max over its cuts), as in Frangioni's "Generalized
 * bundle methods" (SIAM J. Optim. 13, 2002), which uses the sum's
 * structure where one aggregated model would lose it. The next point
 * minimises the model plus sum_x (y_x - centre_x)^2 / (2 t d_x), d a
 * fixed diagonal metric (1 unless the caller scales: a variable's step
 * is t d_x times its slope, so blocks of prices whose subgradients differ
 * in size by orders of magnitude can move alike); the centre moves to a
 * point whose value fell by at least m1 = 0.1 of the decrease the model
 * predicted for it (a serious step), otherwise the cuts of the point
 * refine the model (a null step).
 *
 * The master problem is solved through its dual: with convex weights
 * alpha over each component's cuts, the minimiser over the box is
 *     y(alpha) = clamp(centre - t D (e + sum alpha_k g_k), lo, hi),
 * and the dual D(alpha) = sum alpha_k (a_k + g_k.y) + e.y
 * + (y - centre)' D^-1 (y - centre) / (2t) is concave and smooth, its
 * gradient the cuts' values at y(alpha), its gradient's Lipschitz
 * constant at most t times the largest eigenvalue of G'DG (G the cuts'
 * slopes). It is maximised by
 * accelerated projected gradient steps on the product of simplices
 * (Beck & Teboulle 2009, FISTA), until the model's value at y(alpha)
 * exceeds D(alpha) by at most a hundredth of the predicted decrease (half
 * of it after 3000 iterations, when a large t or the metric has made the
 * dual ill-conditioned; at most 30 000, fewer when the caller's deadline
 * passes). If the model at the point it stops at lies above f at the
 * centre, the segment back to the centre is searched (segment), so that a
 * step never predicts an increase.
 * However the master is solved, the point it gives is a feasible point
 * of the box: the caller's bound is the function's value there, never
 * the model's.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "clock.h"
#include "solve/bundle.h"

typedef struct bcut {
    double a;      /* the cut's constant */
    size_t *idx;   /* nnz coordinates of its slope */
    double *val;   /* nnz slope entries */
    size_t nnz;
    double alpha;  /* its weight in the master's dual, in [0, 1] */
    double v;      /* scratch: its value a + g.y at the master's point */
    long used;     /* the last step whose master gave it weight */
} bcut;

struct surety_bundle {
    size_t dim, ncomp, cap;
    double *e, *lo, *hi; /* dim each */
    double *centre;      /* dim */
    double *d;           /* dim: the diagonal metric (surety_bundle_scale) */
    double fc;           /* f at the centre */
    int have_centre;
    double t, t0;        /* proximal weight, and the first one */
    bcut *cut;           /* ncomp * cap slots, component c's from c*cap */
    size_t *ncut;        /* ncomp: cuts held */
    double *y, *w;       /* dim scratch: a point, a slope sum */
    double *pa, *pb, *pg; /* the weights' scratch (ncomp * cap each) */
    double *pp, *pq;     /* the master's last weights, the gradient at its
                          * extrapolated ones (ncomp * cap each) */
    double *ps;          /* cap: the simplex projection's scratch */
    long step;           /* steps so far */
    long serious;
    int nnull;           /* null steps since the last serious one */
    double pred;         /* the decrease the last step predicted */
    double deadline;     /* surety_clock_seconds() after which the master
                          * stops past its first 3000 iterations */
};

surety_bundle *surety_bundle_new(size_t dim, size_t ncomp, size_t cap,
                                 const double *e, const double *lo,
                                 const double *hi, double t0)
{
    surety_bundle *b = surety_xcalloc(1, sizeof *b);
    if (!b)
        return NULL;
    b->dim = dim;
    b->ncomp = ncomp;
    b->cap = cap;
    b->t = b->t0 = t0 > 0 ? t0 : 1;
    b->deadline = INFINITY;
    b->e = surety_xmalloc(dim, sizeof *b->e);
    b->lo = surety_xmalloc(dim, sizeof *b->lo);
    b->hi = surety_xmalloc(dim, sizeof *b->hi);
    b->centre = surety_xmalloc(dim, sizeof *b->centre);
    b->d = surety_xmalloc(dim, sizeof *b->d);
    b->y = surety_xmalloc(dim, sizeof *b->y);
    b->w = surety_xmalloc(dim, sizeof *b->w);
    b->cut = surety_xcalloc(ncomp * cap, sizeof *b->cut);
    b->ncut = surety_xcalloc(ncomp, sizeof *b->ncut);
    b->pa = surety_xmalloc(ncomp * cap, sizeof *b->pa);
    b->pb = surety_xmalloc(ncomp * cap, sizeof *b->pb);
    b->pg = surety_xmalloc(ncomp * cap, sizeof *b->pg);
    b->pp = surety_xmalloc(ncomp * cap, sizeof *b->pp);
    b->pq = surety_xmalloc(ncomp * cap, sizeof *b->pq);
    b->ps = surety_xmalloc(cap, sizeof *b->ps);
    if (!b->e || !b->lo || !b->hi || !b->centre || !b->d || !b->y || !b->w ||
        !b->cut || !b->ncut || !b->pa || !b->pb || !b->pg || !b->pp ||
        !b->pq || !b->ps) {
        surety_bundle_free(b);
        return NULL;
    }
    memcpy(b->e, e, dim * sizeof *e);
    memcpy(b->lo, lo, dim * sizeof *lo);
    memcpy(b->hi, hi, dim * sizeof *hi);
    for (size_t x = 0; x < dim; x++)
        b->d[x] = 1;
    return b;
}

void surety_bundle_scale(surety_bundle *b, const double *d)
{
    for (size_t x = 0; x < b->dim; x++)
        b->d[x] = d[x] > 0 && isfinite(d[x]) ? d[x] : 1;
}

void surety_bundle_deadline(surety_bundle *b, double at)
{
    b->deadline = at;
}

void surety_bundle_free(surety_bundle *b)
{
    if (!b)
        return;
    if (b->cut)
        for (size_t q = 0; q < b->ncomp * b->cap; q++) {
            surety_xfree(b->cut[q].idx);
            surety_xfree(b->cut[q].val);
        }
    surety_xfree(b->cut);
    surety_xfree(b->ncut);
    surety_xfree(b->e);
    surety_xfree(b->lo);
    surety_xfree(b->hi);
    surety_xfree(b->centre);
    surety_xfree(b->d);
    surety_xfree(b->y);
    surety_xfree(b->w);
    surety_xfree(b->pa);
    surety_xfree(b->pb);
    surety_xfree(b->pg);
    surety_xfree(b->pp);
    surety_xfree(b->pq);
    surety_xfree(b->ps);
    surety_xfree(b);
}

long surety_bundle_serious(const surety_bundle *b)
{
    return b->serious;
}

/* Makes room in component c's full bundle. A cut the last master gave no
 * weight goes (the one unused longest); when every cut has weight, they
 * are merged into their aggregate sum_k alpha_k (a_k + g_k.y), itself a
 * valid cut, which alone reproduces the last master's solution (unless
 * segment moved its point). Keeping
 * the aggregate is what lets a bounded bundle still converge (the
 * aggregate subgradient of Kiwiel 1985, cited from memory). 0, or -1
 * out of memory. */
static int compress(surety_bundle *b, size_t c)
{
    bcut *base = b->cut + c * b->cap;
    size_t nk = b->ncut[c], q = nk;
    for (size_t r = 0; r < nk; r++)
        if (!(base[r].alpha > 0) && (q == nk || base[r].used < base[q].used))
            q = r;
    if (q < nk) {
        surety_xfree(base[q].idx);
        surety_xfree(base[q].val);
        base[q] = base[nk - 1];
        base[nk - 1] = (bcut){0};
        b->ncut[c]--;
        return 0;
    }
    double a = 0, sum = 0;
    memset(b->w, 0, b->dim * sizeof *b->w);
    for (size_t r = 0; r < nk; r++) {
        a += base[r].alpha * base[r].a;
        sum += base[r].alpha;
        for (size_t t = 0; t < base[r].nnz; t++)
            b->w[base[r].idx[t]] += base[r].alpha * base[r].val[t];
    }
    size_t nnz = 0;
    for (size_t x = 0; x < b->dim; x++)
        nnz += b->w[x] != 0;
    size_t *ci = surety_xmalloc(nnz ? nnz : 1, sizeof *ci);
    double *cv = surety_xmalloc(nnz ? nnz : 1, sizeof *cv);
    if (!ci || !cv) {
        surety_xfree(ci);
        surety_xfree(cv);
        return -1;
    }
    nnz = 0;
    for (size_t x = 0; x < b->dim; x++)
        if (b->w[x] != 0) {
            ci[nnz] = x;
            cv[nnz++] = b->w[x] / sum;
        }
    for (size_t r = 0; r < nk; r++) {
        surety_xfree(base[r].idx);
        surety_xfree(base[r].val);
        base[r] = (bcut){0};
    }
    base[0] = (bcut){.a = a / sum, .idx = ci, .val = cv, .nnz = nnz,
                     .alpha = 1, .used = b->step};
    b->ncut[c] = 1;
    return 0;
}

int surety_bundle_cut(surety_bundle *b, size_t c, double a,
                      const size_t *idx, const double *val, size_t nnz)
{
    size_t n1 = nnz ? nnz : 1;
    size_t *ci = surety_xmalloc(n1, sizeof *ci);
    double *cv = surety_xmalloc(n1, sizeof *cv);
    if (!ci || !cv) {
        surety_xfree(ci);
        surety_xfree(cv);
        return -1;
    }
    if (nnz) { /* idx and val may be NULL for a constant cut */
        memcpy(ci, idx, nnz * sizeof *idx);
        memcpy(cv, val, nnz * sizeof *val);
    }
    bcut *base = b->cut + c * b->cap;
    if (b->ncut[c] == b->cap && compress(b, c) != 0) {
        surety_xfree(ci);
        surety_xfree(cv);
        return -1;
    }
    size_t q = b->ncut[c]++;
    base[q] = (bcut){.a = a, .idx = ci, .val = cv, .nnz = nnz,
                     .alpha = 0, .used = b->step};
    return 0;
}

/* Euclidean projection of v (len) onto the unit simplex, in place
 * (sort-based: Held, Wolfe & Crowder 1974; Duchi et al. 2008). s is
 * scratch of len. */
static int by_desc(const void *x, const void *y)
{
    double a = *(const double *)x, c = *(const double *)y;
    return (a < c) - (a > c);
}

static void proj_simplex(double *v, size_t len, double *s)
{
    memcpy(s, v, len * sizeof *v);
    qsort(s, len, sizeof *s, by_desc);
    double run = 0, tau = 0;
    for (size_t r = 0; r < len; r++) {
        run += s[r];
        double t = (run - 1) / (double)(r + 1);
        if (s[r] - t > 0)
            tau = t;
    }
    for (size_t r = 0; r < len; r++)
        v[r] = v[r] > tau ? v[r] - tau : 0;
}

/* The cut's value a + g.p at the point p (dim). */
static double cut_value(const bcut *u, const double *p)
{
    double v = u->a;
    for (size_t r = 0; r < u->nnz; r++)
        v += u->val[r] * p[u->idx[r]];
    return v;
}

/* y(alpha) for the weights in wt (ncomp * cap layout), and each cut's
 * value there into its v. */
static void master_point(surety_bundle *b, const double *wt)
{
    size_t dim = b->dim;
    memcpy(b->w, b->e, dim * sizeof *b->w);
    for (size_t c = 0; c < b->ncomp; c++)
        for (size_t q = 0; q < b->ncut[c]; q++) {
            const bcut *u = &b->cut[c * b->cap + q];
            double al = wt[c * b->cap + q];
            if (al != 0)
                for (size_t r = 0; r < u->nnz; r++)
                    b->w[u->idx[r]] += al * u->val[r];
        }
    for (size_t x = 0; x < dim; x++) {
        double v = b->centre[x] - b->t * b->d[x] * b->w[x];
        b->y[x] = v < b->lo[x] ? b->lo[x] : v > b->hi[x] ? b->hi[x] : v;
    }
    for (size_t c = 0; c < b->ncomp; c++)
        for (size_t q = 0; q < b->ncut[c]; q++) {
            bcut *u = &b->cut[c * b->cap + q];
            u->v = cut_value(u, b->y);
        }
}

/* The cutting-plane model's value at b->y (after master_point), and into
 * *gap the model's excess over the dual's value for the weights wt. */
static double model_value(const surety_bundle *b, const double *wt,
                          double *gap)
{
    double mv = 0, g = 0;
    for (size_t x = 0; x < b->dim; x++)
        mv += b->e[x] * b->y[x];
    for (size_t c = 0; c < b->ncomp; c++) {
        double top = -INFINITY, mix = 0;
        for (size_t q = 0; q < b->ncut[c]; q++) {
            const bcut *u = &b->cut[c * b->cap + q];
            if (u->v > top)
                top = u->v;
            mix += wt[c * b->cap + q] * u->v;
        }
        mv += top;
        g += top - mix;
    }
    *gap = g;
    return mv;
}

/* The master's dual value at the weights wt, after master_point(b, wt):
 * sum wt_k v_k + e.y + (y - centre)' D^-1 (y - centre) / (2t). */
static double dual_value(const surety_bundle *b, const double *wt)
{
    double d = 0, pr = 0;
    for (size_t c = 0; c < b->ncomp; c++)
        for (size_t q = 0; q < b->ncut[c]; q++)
            d += wt[c * b->cap + q] * b->cut[c * b->cap + q].v;
    for (size_t x = 0; x < b->dim; x++) {
        double dx = b->y[x] - b->centre[x];
        d += b->e[x] * b->y[x];
        pr += dx * dx / b->d[x];
    }
    return d + pr / (2 * b->t);
}

/* Largest eigenvalue of G'DG (G: the cuts' slopes as columns, D the
 * metric), by power iteration; an overestimate by 5% keeps the step
 * safe. */
static double slope_norm2(surety_bundle *b)
{
    size_t cap = b->cap;
    double *v = b->pb, *u = b->pg, lam = 0;
    for (size_t c = 0; c < b->ncomp; c++)
        for (size_t q = 0; q < cap; q++)
            v[c * cap + q] = q < b->ncut[c] ? 1 + 0.37 * (double)q : 0;
    for (int it = 0; it < 30; it++) {
        memset(b->w, 0, b->dim * sizeof *b->w);
        for (size_t c = 0; c < b->ncomp; c++)
            for (size_t q = 0; q < b->ncut[c]; q++) {
                const bcut *k = &b->cut[c * cap + q];
                for (size_t r = 0; r < k->nnz; r++)
                    b->w[k->idx[r]] += v[c * cap + q] * k->val[r];
            }
        double nn = 0, vv = 0;
        for (size_t c = 0; c < b->ncomp; c++)
            for (size_t q = 0; q < b->ncut[c]; q++) {
                const bcut *k = &b->cut[c * cap + q];
                double s = 0;
                for (size_t r = 0; r < k->nnz; r++)
                    s += k->val[r] * b->d[k->idx[r]] * b->w[k->idx[r]];
                u[c * cap + q] = s;
                nn += s * s;
                vv += v[c * cap + q] * v[c * cap + q];
            }
        if (!(nn > 0) || !(vv > 0))
            return 0;
        lam = sqrt(nn / vv);
        double sc = 1 / sqrt(nn);
        for (size_t q = 0; q < b->ncomp * cap; q++)
            v[q] = u[q] * sc;
    }
    return 1.05 * lam + 1e-12;
}

/* The cutting-plane model's value at p (dim). */
static double model_at(const surety_bundle *b, const double *p)
{
    double mv = 0;
    for (size_t x = 0; x < b->dim; x++)
        mv += b->e[x] * p[x];
    for (size_t c = 0; c < b->ncomp; c++) {
        double top = -INFINITY;
        for (size_t q = 0; q < b->ncut[c]; q++) {
            double v = cut_value(&b->cut[c * b->cap + q], p);
            if (v > top)
                top = v;
        }
        mv += top;
    }
    return mv;
}

/* The master stopped short of its tolerance with the model at b->y above
 * f at the centre, where the model is at most f: the point of lowest
 * model value among centre + 2^-r (y - centre), r = 0..30 (all in the
 * box, which is convex), goes to b->y instead, so that the step never
 * predicts an increase. Returns the model's value there. */
static double segment(surety_bundle *b)
{
    double *p = b->w, best = model_at(b, b->y), bs = 1;
    for (int r = 1; r <= 30; r++) {
        double sc = ldexp(1, -r);
        for (size_t x = 0; x < b->dim; x++)
            p[x] = b->centre[x] + sc * (b->y[x] - b->centre[x]);
        double v = model_at(b, p);
        if (v < best) {
            best = v;
            bs = sc;
        }
    }
    for (size_t x = 0; x < b->dim; x++)
        b->y[x] = b->centre[x] + bs * (b->y[x] - b->centre[x]);
    return best;
}

/* Solves the master's dual by FISTA from the last weights; leaves its
 * point in b->y and returns the model's value there. */
static double master(surety_bundle *b)
{
    size_t cap = b->cap, nc = b->ncomp, tot = nc * cap;
    double *al = b->pa, *be = b->pb;
    for (size_t c = 0; c < nc; c++) {
        double sum = 0;
        for (size_t q = 0; q < cap; q++) {
            double v = q < b->ncut[c] ? b->cut[c * cap + q].alpha : 0;
            al[c * cap + q] = v;
            sum += v;
        }
        if (sum > 0) {
            for (size_t q = 0; q < b->ncut[c]; q++)
                al[c * cap + q] /= sum;
        } else if (b->ncut[c]) {
            size_t newest = 0; /* the cut added last: the latest `used` */
            for (size_t q = 1; q < b->ncut[c]; q++)
                if (b->cut[c * cap + q].used >= b->cut[c * cap + newest].used)
                    newest = q;
            al[c * cap + newest] = 1;
        }
    }
    double lip = b->t * slope_norm2(b);
    if (!(lip > 0))
        lip = 1e-12 * b->t; /* grows by backtracking below */
    double *prev = b->pp, *tmp = b->ps, *gb = b->pq;
    double gap = 0, mv = 0;
    memcpy(prev, al, tot * sizeof *al);
    memcpy(be, al, tot * sizeof *al);
    double th = 1;
    for (int it = 0; it < 30000; it++) {
        master_point(b, be);
        double db = dual_value(b, be);
        for (size_t c = 0; c < nc; c++)
            for (size_t q = 0; q < b->ncut[c]; q++)
                gb[c * cap + q] = b->cut[c * cap + q].v;
        /* the step 1/lip, lip doubled until the ascent it promises
         * holds (backtracking: Beck & Teboulle 2009, s. 4) */
        for (int tries = 0; tries < 60; tries++) {
            double lin = 0, sq = 0;
            for (size_t c = 0; c < nc; c++) {
                size_t nk = b->ncut[c];
                double *v = al + c * cap;
                for (size_t q = 0; q < nk; q++)
                    v[q] = be[c * cap + q] + gb[c * cap + q] / lip;
                if (nk)
                    proj_simplex(v, nk, tmp);
                for (size_t q = 0; q < nk; q++) {
                    double dq = v[q] - be[c * cap + q];
                    lin += gb[c * cap + q] * dq;
                    sq += dq * dq;
                }
            }
            master_point(b, al);
            double da = dual_value(b, al);
            if (da >= db + lin - lip / 2 * sq -
                          1e-12 * (fabs(db) + 1))
                break;
            lip *= 2;
        }
        mv = model_value(b, al, &gap);
        double pred = b->fc - mv;
        /* a hundredth of the predicted decrease, half of it after 3000
         * iterations (a large t or a scaled metric can make the dual
         * ill-conditioned, and an inexact master still gives a valid
         * point) */
        double kappa = it < 3000 ? 0.01 : 0.5;
        if (gap <= kappa * (pred > 0 ? pred : 0) + 1e-9 * (fabs(b->fc) + 1))
            break;
        if (it >= 3000 && it % 100 == 0 && b->deadline < INFINITY &&
            surety_clock_seconds() > b->deadline)
            break;
        double th1 = (1 + sqrt(1 + 4 * th * th)) / 2, mom = (th - 1) / th1;
        for (size_t q = 0; q < tot; q++) {
            be[q] = al[q] + mom * (al[q] - prev[q]);
            prev[q] = al[q];
        }
        th = th1;
    }
    master_point(b, al);
    mv = model_value(b, al, &gap);
    if (mv > b->fc)
        mv = segment(b);
    for (size_t c = 0; c < nc; c++)
        for (size_t q = 0; q < b->ncut[c]; q++) {
            bcut *u = &b->cut[c * cap + q];
            u->alpha = al[c * cap + q];
            if (u->alpha > 1e-9)
                u->used = b->step;
        }
    return mv;
}

double surety_bundle_step(surety_bundle *b, const double *x, double fx,
                          double *next)
{
    b->step++;
    if (!b->have_centre) {
        memcpy(b->centre, x, b->dim * sizeof *x);
        b->fc = fx;
        b->have_centre = 1;
    } else if (fx <= b->fc - 0.1 * b->pred) {
        /* serious: a large share of the predicted decrease came true, so
         * the model may be trusted further */
        if (fx <= b->fc - 0.5 * b->pred)
            b->t *= 2;
        memcpy(b->centre, x, b->dim * sizeof *x);
        b->fc = fx;
        b->serious++;
        b->nnull = 0;
    } else if (++b->nnull >= 3 && b->t > 1e-3 * b->t0) {
        b->t /= 2; /* the model keeps promising what f does not give */
        b->nnull = 0;
    }
    double mv = master(b);
    memcpy(next, b->y, b->dim * sizeof *next);
    b->pred = b->fc - mv;
    return b->pred;
}
