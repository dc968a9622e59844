/* lpbound.c - the LP bound of the search: the LP relaxation of the
 * strengthened big-M formulation (Luedtke 2014; Qiu, Ahmed, Dey & Wolsey
 * 2014; METHODS.md s.6) over the node's open jobs and live scenarios,
 * solved with src/lp's dual simplex, scenario rows added lazily.
 *
 *   max  sum p_j x_ji
 *   s.t. sum_i x_ji <= 1 (= 1 for a required job)            job rows
 *        sum_l z'_gl <= k - (dead weight without a column)   allowance
 *        sum_j w_lj x_ji - (M_li / c_l) z'_gl <= cap_i + min(M_li, 0)
 *                                                   scenario rows (l, i)
 *        x_ji in [0, 1], z'_gl in [0, c_l]
 *
 * z'_gl = c_l z_gl is scenario l's failure weighted by its multiplicity
 * c_l, so the allowance row needs no coefficient that depends on which
 * scenario a column serves: the LP's columns are fixed at creation, and a
 * pool of z columns is handed to scenarios as their rows enter. M_li is
 * the quantile big-M of bigm.c, computed when row (l, i) is first needed.
 * Nodes fix columns: decided jobs, pairs the node has ruled out, and the
 * z of every dead scenario at its full weight (a completion that can beat
 * the incumbent fails it; METHODS.md s.7 rule 4); a dead scenario's row
 * still bounds its load by cap_i + M_li, which every plan respects.
 *
 * Why next to the quantile bound: the quantile bound asks, scenario by
 * scenario, what a plan fitting that one scenario could earn; the LP has
 * one x for all scenarios at once, which is what makes instances with
 * many jobs hard (bench/README.md, "Findings").
 *
 * The bound used is never the simplex's own objective but the Lagrangian
 * value of its row duals y, recomputed here,
 *     L(y) = sum_r y_r rhs_r + sum_c max(d_c lo_c, d_c hi_c),
 *     d = c - A^T y,
 * which is an upper bound for ANY y of the right signs, so a stop by
 * cutoff or iteration limit, rows not yet added, or rounding in the
 * simplex cannot make it invalid (the safe bound of Neumaier & Shcherbina
 * 2004, for variables that are all bounded). The same d gives reduced-cost
 * fixing: a pair (j, i) at 0 whose L + d_ji cannot beat the incumbent is
 * out for the subtree.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "bigm.h"
#include "lp/simplex.h"
#include "solve/solve.h"

enum { ROW_JOB = 0, ROW_CARD = 1, ROW_SCEN = 2 };

typedef struct lp_row {
    unsigned char kind;
    size_t a;     /* job j, group g, or l*m + i */
    long slot;    /* z column of a scenario row, or -1 */
    double coef;  /* its coefficient (-M/c_l) */
    double rhs;   /* upper side */
} lp_row;

struct solve_lp {
    surety_lp *lp;
    size_t nx, nslot, ncol;
    long *xcol;          /* n*m: column of pair (j, i), or -1 */
    size_t *xj, *xi;     /* nx */
    long *zslot;         /* G*N: z column offset of (g, l) - nx, or -1 */
    size_t *slot_gl;     /* nslot: g*N + l served by a slot */
    size_t *slot_next;   /* G: next free slot of group g */
    size_t slots_per_g;
    lp_row *rows;
    size_t nrow, maxrow;
    size_t card0;        /* row of group 0's allowance row */
    unsigned char *inrow; /* N*m: scenario row present (1), or only its
                           * form without z for a dead scenario (2) */
    double *M;           /* N*m: quantile big-M, NAN until needed */
    surety_bigm_res *bm; /* m */
    unsigned char *bm_ok; /* m: 1 ready, 2 failed */
    double *buf;         /* ncol: a row being built */
    double *x, *d, *y;   /* ncol, ncol, maxrow */
    double *ld;          /* m*N loads of the LP point */
    double *viol;        /* N*m violations of candidate rows */
    size_t *cand;        /* N*m */
    size_t *jobs;        /* n scratch */
    const unsigned char *px; /* the node's possible pairs */
};

static double scen_rhs(const surety_solver *s, size_t i, double M)
{
    double cap = s->cap[i] * (1 + 1e-9);
    return M < 0 ? cap + M * (1 - 1e-9) : cap;
}

void surety_lpb_free(surety_solver *s)
{
    solve_lp *q = s->lpb;
    if (!q)
        return;
    surety_lp_free(q->lp);
    if (q->bm && q->bm_ok) /* bm_ok may be missing after a failed set-up */
        for (size_t i = 0; i < s->m; i++)
            if (q->bm_ok[i] == 1)
                surety_bigm_free(&q->bm[i]);
    surety_xfree(q->bm);
    surety_xfree(q->bm_ok);
    surety_xfree(q->xcol);
    surety_xfree(q->xj);
    surety_xfree(q->xi);
    surety_xfree(q->zslot);
    surety_xfree(q->slot_gl);
    surety_xfree(q->slot_next);
    surety_xfree(q->rows);
    surety_xfree(q->inrow);
    surety_xfree(q->M);
    surety_xfree(q->buf);
    surety_xfree(q->x);
    surety_xfree(q->d);
    surety_xfree(q->y);
    surety_xfree(q->ld);
    surety_xfree(q->viol);
    surety_xfree(q->cand);
    surety_xfree(q->jobs);
    surety_xfree(q);
    s->lpb = NULL;
}

static int add_lp_row(solve_lp *q, const double *a, double lo, double hi,
                      lp_row r)
{
    if (q->nrow == q->maxrow)
        return -1;
    if (surety_lp_add_row(q->lp, a, lo, hi) < 0)
        return -1;
    q->rows[q->nrow++] = r;
    return 0;
}

size_t surety_lpb_pairs(const surety_solver *s)
{
    return s->lpb ? s->lpb->nx : 0;
}

int surety_lpb_init(surety_solver *s)
{
    size_t n = s->n, m = s->m, N = s->N, G = s->G;
    solve_lp *q = surety_xcalloc(1, sizeof *q);
    if (!q)
        return -1;
    s->lpb = q;
    q->xcol = surety_xmalloc(n * m, sizeof *q->xcol);
    if (!q->xcol)
        return -1;
    for (size_t e = 0; e < n * m; e++)
        q->xcol[e] = -1;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        for (size_t i = 0; i < m; i++)
            if (s->allowed[j * m + i])
                q->xcol[j * m + i] = (long)q->nx++;
    }
    if (q->nx == 0)
        return 1; /* nothing to decide: no LP */
    /* z columns: one per (group, scenario), since the root LPs measured
     * give most scenarios a row (n=40, N=1000: 919 rows, 600-900 with a
     * z); the dense simplex's work per iteration grows with the columns,
     * so beyond 4096 of them there is no LP */
    if (G * N > 4096)
        return 1;
    size_t per = N;
    q->slots_per_g = per;
    q->nslot = per * G;
    q->ncol = q->nx + q->nslot;
    size_t rowcap = (size_t)(48u << 20) / (8 * q->ncol);
    if (rowcap > 4 * q->nslot + 64)
        rowcap = 4 * q->nslot + 64;
    q->maxrow = n + G + rowcap;
    q->xj = surety_xmalloc(q->nx, sizeof *q->xj);
    q->xi = surety_xmalloc(q->nx, sizeof *q->xi);
    q->zslot = surety_xmalloc(G * N, sizeof *q->zslot);
    q->slot_gl = surety_xmalloc(q->nslot, sizeof *q->slot_gl);
    q->slot_next = surety_xcalloc(G, sizeof *q->slot_next);
    q->rows = surety_xmalloc(q->maxrow, sizeof *q->rows);
    q->inrow = surety_xcalloc(N * m, 1);
    q->M = surety_xmalloc(N * m, sizeof *q->M);
    q->bm = surety_xcalloc(m, sizeof *q->bm);
    q->bm_ok = surety_xcalloc(m, 1);
    q->buf = surety_xmalloc(q->ncol, sizeof *q->buf);
    q->x = surety_xmalloc(q->ncol, sizeof *q->x);
    q->d = surety_xmalloc(q->ncol, sizeof *q->d);
    q->y = surety_xmalloc(q->maxrow, sizeof *q->y);
    q->ld = surety_xmalloc(m * N, sizeof *q->ld);
    q->viol = surety_xmalloc(N * m, sizeof *q->viol);
    q->cand = surety_xmalloc(N * m, sizeof *q->cand);
    q->jobs = surety_xmalloc(n, sizeof *q->jobs);
    if (!q->xj || !q->xi || !q->zslot || !q->slot_gl || !q->slot_next ||
        !q->rows || !q->inrow || !q->M || !q->bm || !q->bm_ok || !q->buf ||
        !q->x || !q->d || !q->y || !q->ld || !q->viol || !q->cand || !q->jobs)
        return -1;
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            if (q->xcol[j * m + i] >= 0) {
                q->xj[q->xcol[j * m + i]] = j;
                q->xi[q->xcol[j * m + i]] = i;
            }
    for (size_t e = 0; e < G * N; e++)
        q->zslot[e] = -1;
    for (size_t e = 0; e < N * m; e++)
        q->M[e] = NAN;

    double *c = q->buf, *hi = q->x;
    for (size_t v = 0; v < q->ncol; v++) {
        c[v] = v < q->nx ? s->p[q->xj[v]] : 0;
        hi[v] = v < q->nx ? 1 : 0; /* z columns open when handed out */
    }
    q->lp = surety_lp_create(q->ncol, c, NULL, hi);
    if (!q->lp)
        return -1;
    for (size_t j = 0; j < n; j++) {
        memset(c, 0, q->ncol * sizeof *c);
        int any = 0;
        for (size_t i = 0; i < m; i++)
            if (q->xcol[j * m + i] >= 0) {
                c[q->xcol[j * m + i]] = 1;
                any = 1;
            }
        if (any &&
            add_lp_row(q, c, s->required[j] ? 1 : -INFINITY, 1,
                       (lp_row){ROW_JOB, j, -1, 0, 1}) != 0)
            return -1;
    }
    q->card0 = q->nrow; /* rows are never deleted: group g's is card0 + g */
    for (size_t g = 0; g < G; g++) {
        memset(c, 0, q->ncol * sizeof *c);
        for (size_t u = 0; u < per; u++)
            c[q->nx + g * per + u] = 1;
        if (add_lp_row(q, c, -INFINITY, (double)s->k,
                       (lp_row){ROW_CARD, g, -1, 0, (double)s->k}) != 0)
            return -1;
    }
    return 0;
}

/* Quantile big-M of row (l, i) in base hours, with a margin for rounding;
 * the plain one when the resource's data could not be prepared. */
static double row_bigm(surety_solver *s, size_t l, size_t i)
{
    solve_lp *q = s->lpb;
    double *M = &q->M[l * s->m + i];
    if (!isnan(*M))
        return *M;
    if (q->bm_ok[i] == 0) {
        size_t nj = 0;
        size_t *jobs = q->jobs;
        for (size_t j = 0; j < s->n; j++)
            if (q->xcol[j * s->m + i] >= 0)
                jobs[nj++] = j;
        q->bm_ok[i] = surety_bigm_init(&q->bm[i], s->w, s->n, jobs, nj, s->N,
                                       s->cnt, 1.0, s->cap[i], s->k) == 0
                          ? 1
                          : 2;
    }
    double v;
    if (q->bm_ok[i] == 1) {
        v = surety_bigm_row(&q->bm[i], l);
    } else {
        v = -s->cap[i];
        for (size_t v0 = 0; v0 < q->nx; v0++)
            if (q->xi[v0] == i)
                v += s->w[l * s->n + q->xj[v0]];
    }
    *M = v + 1e-9 * (s->cap[i] + fabs(v));
    return *M;
}

/* Adds scenario row (l, i); returns 0, or -1 when the LP is full or no
 * z column is left for its group. */
static int add_scen_row(surety_solver *s, size_t l, size_t i)
{
    solve_lp *q = s->lpb;
    size_t m = s->m, N = s->N, g = s->separate ? i : 0;
    double M = row_bigm(s, l, i);
    /* a dead scenario's row without z: load <= cap + M holds for every
     * plan of the sample (bigm.c), here and at every other node */
    int dead = s->dead[g * N + l] != SURETY_LIVE && M > 0;
    long slot = -1;
    if (M > 0 && !dead) {
        slot = q->zslot[g * N + l];
        if (slot < 0) {
            if (q->slot_next[g] == q->slots_per_g)
                return -1;
            slot = (long)(g * q->slots_per_g + q->slot_next[g]++);
            q->zslot[g * N + l] = slot;
            q->slot_gl[slot] = g * N + l;
            surety_lp_set_col_bounds(q->lp, q->nx + (size_t)slot, 0,
                                     (double)s->cnt[l]);
        }
    }
    double *a = q->buf;
    memset(a, 0, q->ncol * sizeof *a);
    for (size_t v = 0; v < q->nx; v++)
        if (q->xi[v] == i)
            a[v] = s->w[l * s->n + q->xj[v]];
    double coef = 0;
    if (slot >= 0) {
        coef = -M / (double)s->cnt[l];
        a[q->nx + (size_t)slot] = coef;
    }
    double rhs = dead ? s->cap[i] * (1 + 1e-9) + M : scen_rhs(s, i, M);
    if (add_lp_row(q, a, -INFINITY, rhs,
                   (lp_row){ROW_SCEN, l * m + i, slot, coef, rhs}) != 0)
        return -1;
    q->inrow[l * m + i] = dead ? 2 : 1;
    return 0;
}

/* Column bounds and allowance right-hand sides of the current node. */
static void node_bounds(surety_solver *s, const unsigned char *px)
{
    solve_lp *q = s->lpb;
    size_t m = s->m, N = s->N, G = s->G;
    for (size_t v = 0; v < q->nx; v++) {
        size_t j = q->xj[v], i = q->xi[v];
        long st = s->state[j];
        double lo = 0, hi = 0;
        if (st == SURETY_JOB_FREE)
            hi = px[j * m + i] ? 1 : 0;
        else if (st == (long)i)
            lo = hi = 1;
        surety_lp_set_col_bounds(q->lp, v, lo, hi);
    }
    for (size_t g = 0; g < G; g++) {
        double rhs = (double)s->k - (double)s->dead_w[g];
        for (size_t u = 0; u < q->slot_next[g]; u++) {
            size_t slot = g * q->slots_per_g + u, l = q->slot_gl[slot] - g * N;
            double c = s->cnt[l];
            if (s->dead[g * N + l] != SURETY_LIVE) {
                rhs += c; /* counted in dead_w: its column carries it */
                surety_lp_set_col_bounds(q->lp, q->nx + slot, c, c);
            } else {
                surety_lp_set_col_bounds(q->lp, q->nx + slot, 0, c);
            }
        }
        size_t r = q->card0 + g;
        q->rows[r].rhs = rhs;
        surety_lp_set_row_bounds(q->lp, r, -INFINITY, rhs);
    }
}

/* L(y) of the file comment, with d = c - A^T y left in q->d; clips the
 * duals of the wrong sign. The column bounds are the node's. *mag gets
 * the sum of the magnitudes of every product and term that enters L
 * (|y_r rhs_r|, |y_r a_rc| times the column's largest bound, |c_c| times
 * it): the rounding error of L in double precision is below
 * (terms summed) x 2^-53 x mag, which the caller's margin covers. */
static double lagrangian(surety_solver *s, double *mag)
{
    solve_lp *q = s->lpb;
    size_t m = s->m, N = s->N;
    double *y = q->y, *d = q->d;
    surety_lp_get_row_duals(q->lp, y);
    *mag = INFINITY; /* until known */
    double M = 0;
    for (size_t v = 0; v < q->ncol; v++) {
        d[v] = v < q->nx ? s->p[q->xj[v]] : 0;
        M += fabs(d[v]);
    }
    double L = 0;
    for (size_t r = 0; r < q->nrow; r++) {
        const lp_row *w = &q->rows[r];
        double yr = y[r];
        if (!isfinite(yr))
            return INFINITY;
        if (w->kind == ROW_JOB && s->required[w->a]) {
            /* an equality: any sign */
        } else if (yr < 0) {
            yr = 0;
        }
        if (yr == 0)
            continue;
        L += yr * w->rhs;
        double ay = fabs(yr), rowmag = 0;
        M += fabs(yr * w->rhs);
        if (w->kind == ROW_JOB) {
            for (size_t i = 0; i < m; i++) {
                long v = q->xcol[w->a * m + i];
                if (v >= 0) {
                    d[v] -= yr;
                    rowmag += 1;
                }
            }
        } else if (w->kind == ROW_CARD) {
            for (size_t u = 0; u < q->slot_next[w->a]; u++) {
                size_t slot = w->a * q->slots_per_g + u;
                d[q->nx + slot] -= yr;
                rowmag += s->cnt[q->slot_gl[slot] - w->a * N];
            }
        } else {
            size_t l = w->a / m, i = w->a % m;
            const double *wl = s->w + l * s->n;
            for (size_t v = 0; v < q->nx; v++)
                if (q->xi[v] == i) {
                    d[v] -= yr * wl[q->xj[v]];
                    rowmag += fabs(wl[q->xj[v]]);
                }
            if (w->slot >= 0) {
                d[q->nx + (size_t)w->slot] -= yr * w->coef;
                rowmag += fabs(w->coef) * s->cnt[l];
            }
        }
        M += ay * rowmag;
    }
    *mag = M;
    /* the columns at the node's bounds */
    for (size_t v = 0; v < q->nx; v++) {
        size_t j = q->xj[v], i = q->xi[v];
        long st = s->state[j];
        double lo = 0, hi = 0;
        if (st == SURETY_JOB_FREE)
            hi = q->px[j * m + i] ? 1 : 0;
        else if (st == (long)i)
            lo = hi = 1;
        L += d[v] > 0 ? d[v] * hi : d[v] * lo;
    }
    for (size_t g = 0; g < s->G; g++)
        for (size_t u = 0; u < q->slot_next[g]; u++) {
            size_t slot = g * q->slots_per_g + u, l = q->slot_gl[slot] - g * N;
            double c = s->cnt[l], v = d[q->nx + slot];
            int dead = s->dead[g * N + l] != SURETY_LIVE;
            L += v > 0 ? v * c : (dead ? v * c : 0);
        }
    return L;
}

/* Moves the `most` largest of viol[0..nc) (with their cand) to the front,
 * largest first: a partial selection sort, most is small. */
static void top(solve_lp *q, size_t nc, size_t most)
{
    for (size_t t = 0; t < nc && t < most; t++) {
        size_t best = t;
        for (size_t u = t + 1; u < nc; u++)
            if (q->viol[u] > q->viol[best])
                best = u;
        double tv = q->viol[t];
        q->viol[t] = q->viol[best];
        q->viol[best] = tv;
        size_t tc = q->cand[t];
        q->cand[t] = q->cand[best];
        q->cand[best] = tc;
    }
}

/* Adds up to `most` of the scenario rows the LP point violates most;
 * returns how many were added. */
static size_t separate(surety_solver *s, size_t most)
{
    solve_lp *q = s->lpb;
    size_t m = s->m, N = s->N;
    surety_lp_get_x(q->lp, q->x);
    memset(q->ld, 0, m * N * sizeof *q->ld);
    for (size_t v = 0; v < q->nx; v++) {
        double xv = q->x[v];
        if (xv < 1e-9)
            continue;
        const double *wj = s->wt + q->xj[v] * N;
        double *ld = q->ld + q->xi[v] * N;
        for (size_t l = 0; l < N; l++)
            ld[l] += xv * wj[l];
    }
    /* candidates by their violation with z = 0 and M >= 0, which needs no
     * big-M; then the 4 * most largest get their M (computed once per
     * row, O(N n) each) and their true violation */
    size_t nc = 0;
    for (size_t i = 0; i < m; i++) {
        size_t g = s->separate ? i : 0;
        double cap = s->cap[i];
        const double *ld = q->ld + i * N;
        for (size_t l = 0; l < N; l++) {
            int dead = s->dead[g * N + l] != SURETY_LIVE;
            if (!(ld[l] > cap * (1 + 1e-9)) || q->inrow[l * m + i] == 1 ||
                (dead && q->inrow[l * m + i]))
                continue;
            q->viol[nc] = (ld[l] - cap) / cap;
            q->cand[nc++] = l * m + i;
        }
    }
    top(q, nc, 4 * most);
    if (nc > 4 * most)
        nc = 4 * most;
    size_t nv = 0;
    for (size_t t = 0; t < nc; t++) {
        size_t l = q->cand[t] / m, i = q->cand[t] % m;
        size_t g = s->separate ? i : 0;
        double cap = s->cap[i], M = row_bigm(s, l, i), z = 0;
        long slot = q->zslot[g * N + l];
        if (s->dead[g * N + l] != SURETY_LIVE)
            z = 1; /* at its full weight: only load <= cap + M binds */
        else if (slot >= 0)
            z = q->x[q->nx + (size_t)slot] / (double)s->cnt[l];
        double v = q->ld[i * N + l] - scen_rhs(s, i, M) - (M > 0 ? M * z : 0);
        if (v > 1e-9 * cap) {
            q->viol[nv] = v / cap;
            q->cand[nv++] = q->cand[t];
        }
    }
    nc = nv;
    top(q, nc, most);
    size_t added = 0;
    for (size_t t = 0; t < nc && t < most; t++)
        if (add_scen_row(s, q->cand[t] / m, q->cand[t] % m) == 0)
            added++;
    return added;
}

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>
#include <stdlib.h> /* abort */
/* Invariant build only: pair column v, just ruled out by its reduced cost,
 * is forced to 1 and the LP (the node's bounds and rows) solved again by
 * the simplex: its optimum must not beat the cutoff, or the rule ruled
 * out a pair some point of the relaxation, and so possibly some plan,
 * needs. The rule reads the bound off the duals (Lq + d_v); this solve
 * does not, so a wrong sign or factor in the rule shows here whatever the
 * incumbent. The column and the basis are put back; the cutoff and the
 * iteration limit are set again at the start of every surety_lpb_node,
 * the only other place that solves this LP. */
static void chk_fixing(surety_solver *s, size_t v, double cutoff)
{
    solve_lp *q = s->lpb;
    size_t nb = surety_lp_ncols(q->lp) + surety_lp_nrows(q->lp);
    signed char *basis = surety_xmalloc(nb, 1);
    if (!basis)
        return;
    surety_lp_get_basis(q->lp, basis);
    surety_lp_set_cutoff(q->lp, -INFINITY);
    surety_lp_set_iter_limit(q->lp, 1000000);
    surety_lp_set_col_bounds(q->lp, v, 1, 1);
    surety_lp_status st = surety_lp_solve(q->lp);
    double obj = surety_lp_obj(q->lp);
    if (st == SURETY_LP_OPTIMAL && obj > cutoff + 1e-6 * (fabs(cutoff) + 1)) {
        fprintf(stderr, "invariant: pair (job %zu, resource %zu) ruled out "
                "by its reduced cost, yet the LP with it reaches %.17g "
                "above the cutoff %.17g\n", q->xj[v], q->xi[v], obj, cutoff);
        abort();
    }
    surety_lp_set_col_bounds(q->lp, v, 0, 1);
    surety_lp_set_basis(q->lp, basis, surety_lp_nrows(q->lp));
    surety_xfree(basis);
}
#endif

double surety_lpb_node(surety_solver *s, double cutoff, size_t row,
                       double qbound, int rounds, double work,
                       size_t *fixed)
{
    solve_lp *q = s->lpb;
    *fixed = 0;
    if (!q || !q->lp)
        return qbound;
    size_t m = s->m;
    unsigned char *px = s->pxs + row * s->n * m;
    q->px = px;
    /* the basis left by the previous solve is the warm start: the nodes
     * solved are the root and nodes restored from the pool, whose parent
     * was solved long before if at all; the dual simplex keeps any basis
     * dual feasible under the new column bounds */
    node_bounds(s, px);
    double margin = 1e-9 * (s->pscale + 1);
    surety_lp_set_cutoff(q->lp, cutoff - margin);
    /* L: the best bound of the rounds; Lq: the last solve's, whose
     * reduced costs q->d hold. A solve is cut into pieces of 256
     * iterations so that limits and the work cap (iterations times the
     * LP's rows and columns) are seen; any piece's duals give a valid
     * bound. */
    double L = INFINITY, Lq = INFINITY, spent = 0;
    surety_lp_set_iter_limit(q->lp, 256);
    for (int r = 0; r <= rounds;) {
        surety_lp_status st = surety_lp_solve(q->lp);
        long it = surety_lp_iterations(q->lp);
        s->lp_iters += it;
        s->lp_solves++;
        spent += (double)it * (double)q->nrow * (double)q->ncol;
        double mag;
        Lq = lagrangian(s, &mag);
        /* rounding: at most (rows + columns + 2) x 2^-53 x mag, far below
         * 1e-11 x mag for any LP this solver builds */
        Lq += margin > 1e-11 * mag ? margin : 1e-11 * mag;
        if (Lq < L)
            L = Lq;
        if (L <= cutoff || spent > work || surety_tree_stopped(s) ||
            surety_solve_now() > s->lp_deadline)
            break;
        if (st == SURETY_LP_ITER_LIMIT)
            continue;
        if (st != SURETY_LP_OPTIMAL || r++ == rounds || separate(s, 64) == 0)
            break;
    }
    if (L > cutoff && Lq < INFINITY) {
        /* reduced-cost fixing: x_ji = 1 would cost -d_ji */
        for (size_t v = 0; v < q->nx; v++) {
            size_t j = q->xj[v], i = q->xi[v];
            if (s->state[j] != SURETY_JOB_FREE || !px[j * m + i])
                continue;
            double dv = q->d[v];
            if (dv < 0 && Lq + dv <= cutoff) {
                px[j * m + i] = 0;
                (*fixed)++;
#ifdef SURETY_CHECK_INVARIANTS
                chk_fixing(s, v, cutoff);
#endif
            }
        }
    }
    return L < qbound ? L : qbound;
}

