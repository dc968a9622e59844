/* simplex.c - dense bounded-variable dual simplex: bound-flipping Harris
 * ratio test, steepest-edge pricing, artificial bounds, perturbation, and
 * a primal clean-up phase. The working basis is in basis.c.
 * SPDX-License-Identifier: MIT */
#include "lp/simplex.h"

#include <math.h>
#include <stdint.h>
#include <string.h>

#include "lp/basis.h"
#include "lp/state.h"
#include "surety_config.h"

/* Method.
 *
 * Internally the LP is min cost^T x with cost = -c, and every row i gets
 * a logical variable s_i (index n + i) with A x - s = 0, rlo_i <= s_i <=
 * rhi_i, so the n + m variables have bounds and the basis has m members.
 * The algorithm is the dual simplex for bounded variables as laid out in
 * A. Koberstein, "The dual simplex method, techniques for a fast and
 * stable implementation", PhD thesis, Paderborn 2005 (ch. 3: pricing,
 * ratio test with bound flipping and Harris tolerances, updates; ch. 4:
 * dual phase 1 by artificial bounds; ch. 6: cost perturbation and
 * shifting), with the revised-simplex bookkeeping of V. Chvatal, Linear
 * Programming, Freeman 1983 (ch. 7-8) and I. Maros, Computational
 * Techniques of the Simplex Method, Kluwer 2003 (ch. 9-10). */

#define FEAS_TOL 1e-9       /* primal feasibility, relative to 1+|bound| */
#define OPT_TOL 1e-9        /* dual feasibility of reduced costs */
#define PIVOT_TOL 1e-9      /* smallest acceptable |pivot| */
/* Updates of K^-1 between LU rebuilds: an update costs O(k^2) and a
 * rebuild O(k^3), so with a large basis rebuilds are spaced k/2 updates
 * apart (never fewer than 64) to keep them a fixed share of the work. */
#define REFACTOR_EVERY(lp) ((lp)->k / 2 > 64 ? (lp)->k / 2 : 64)
#define ARTIFICIAL_BOX 1e6  /* first artificial bound distance */
#define ARTIFICIAL_MAX 1e13 /* give up enlarging the box beyond this */
#define STALL_PERTURB 25    /* degenerate dual steps before perturbing */
#define MAX_ROUNDS 8        /* dual/primal alternations per solve */

static double urand(surety_lp *lp)
{
    lp->rng ^= lp->rng >> 12;
    lp->rng ^= lp->rng << 25;
    lp->rng ^= lp->rng >> 27;
    return (double)((lp->rng * 2685821657736338717ULL) >> 11) * 0x1.0p-53;
}

static double ftol(double bound)
{
    return FEAS_TOL * (1.0 + fabs(bound));
}

static int boxed(const surety_lp *lp, size_t j)
{
    return isfinite(lp->wlb[j]) && isfinite(lp->wub[j]);
}

/* 1 when the nonbasic j's reduced cost has the sign its position needs. */
static int dual_ok(const surety_lp *lp, size_t j)
{
    if (lp->wlb[j] == lp->wub[j])
        return 1;
    switch (lp->stat[j]) {
    case SURETY_LP_AT_LOWER:
        return lp->d[j] >= -OPT_TOL;
    case SURETY_LP_AT_UPPER:
        return lp->d[j] <= OPT_TOL;
    case SURETY_LP_AT_ZERO:
        return fabs(lp->d[j]) <= OPT_TOL;
    default:
        return 1;
    }
}

/* After a rebuild the recomputed reduced costs may have drifted past the
 * tolerance: boxed variables move to the other bound (primal change),
 * others get their cost shifted so d_j = 0 (Koberstein 2005, sec. 6.2,
 * cost shifting). Returns 1 when some value moved. */
static int flip_boxed(surety_lp *lp)
{
    int moved = 0;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || dual_ok(lp, j))
            continue;
        if (boxed(lp, j) && lp->stat[j] != SURETY_LP_AT_ZERO) {
            lp->stat[j] = lp->d[j] > 0 ? SURETY_LP_AT_LOWER : SURETY_LP_AT_UPPER;
            moved = 1;
        }
    }
    return moved;
}

static void shift_costs(surety_lp *lp)
{
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || dual_ok(lp, j))
            continue;
        lp->cost[j] -= lp->d[j];
        lp->d[j] = 0.0;
        lp->perturbed = 1;
    }
}

static int repair_dual(surety_lp *lp)
{
    int moved = flip_boxed(lp);
    shift_costs(lp);
    return moved;
}

static int rebuild(surety_lp *lp)
{
    int rc = surety_basis_refactor(lp);
    if (rc < -1)
        return -1;
    surety_basis_dual(lp);
    repair_dual(lp);
    surety_basis_primal(lp);
    return rc;
}

/* Places every nonbasic variable at the bound its reduced cost asks for.
 * Where that bound is infinite, an artificial bound at distance `box`
 * stands in (Koberstein 2005, sec. 4.2, artificial bounding); a later
 * primal phase removes it. */
static void place_nonbasics(surety_lp *lp)
{
    size_t nv = lp->n + lp->m;
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC)
            continue;
        double l = lp->lb[j], u = lp->ub[j], dj = lp->d[j];
        if (l == u) {
            lp->stat[j] = SURETY_LP_AT_LOWER;
            continue;
        }
        if (dual_ok(lp, j) && lp->stat[j] != SURETY_LP_AT_ZERO &&
            isfinite(lp->stat[j] == SURETY_LP_AT_LOWER ? l : u))
            continue;
        if (dj > OPT_TOL) {
            lp->stat[j] = SURETY_LP_AT_LOWER;
            if (!isfinite(l)) {
                lp->wlb[j] = (isfinite(u) ? u : 0.0) - lp->box;
                lp->artificial = 1;
            }
        } else if (dj < -OPT_TOL) {
            lp->stat[j] = SURETY_LP_AT_UPPER;
            if (!isfinite(u)) {
                lp->wub[j] = (isfinite(l) ? l : 0.0) + lp->box;
                lp->artificial = 1;
            }
        } else if (lp->stat[j] == SURETY_LP_AT_ZERO) {
            continue;
        } else if (isfinite(l)) {
            lp->stat[j] = SURETY_LP_AT_LOWER;
        } else if (isfinite(u)) {
            lp->stat[j] = SURETY_LP_AT_UPPER;
        } else {
            lp->stat[j] = SURETY_LP_AT_ZERO;
            lp->x[j] = 0.0;
        }
    }
}

/* Drops the artificial bounds: variables resting on one become nonbasic
 * at their value (SURETY_LP_AT_ZERO), for the primal phase to move. */
static void drop_artificial(surety_lp *lp)
{
    size_t nv = lp->n + lp->m;
    for (size_t j = 0; j < nv; j++) {
        if (lp->wlb[j] == lp->lb[j] && lp->wub[j] == lp->ub[j])
            continue;
        if (lp->stat[j] == SURETY_LP_AT_LOWER && lp->wlb[j] != lp->lb[j])
            lp->stat[j] = SURETY_LP_AT_ZERO;
        if (lp->stat[j] == SURETY_LP_AT_UPPER && lp->wub[j] != lp->ub[j])
            lp->stat[j] = SURETY_LP_AT_ZERO;
        lp->wlb[j] = lp->lb[j];
        lp->wub[j] = lp->ub[j];
    }
    lp->artificial = 0;
}

/* Cost perturbation against stalling (Koberstein 2005, sec. 6.2.2):
 * each nonbasic cost moves by a small random amount in the direction
 * that makes its reduced cost more feasible, breaking dual ties. */
static void perturb(surety_lp *lp)
{
    size_t nv = lp->n + lp->m;
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || lp->wlb[j] == lp->wub[j])
            continue;
        double base = j < lp->n ? fabs(lp->obj[j]) : 0.0;
        double delta = (1e-7 + 1e-7 * base) * (0.5 + urand(lp));
        if (lp->stat[j] == SURETY_LP_AT_LOWER) {
            lp->cost[j] += delta;
            lp->d[j] += delta;
        } else if (lp->stat[j] == SURETY_LP_AT_UPPER) {
            lp->cost[j] -= delta;
            lp->d[j] -= delta;
        }
    }
    lp->perturbed = 1;
}

static void restore_cost(surety_lp *lp)
{
    for (size_t j = 0; j < lp->n; j++)
        lp->cost[j] = -lp->obj[j];
    for (size_t i = 0; i < lp->m; i++)
        lp->cost[lp->n + i] = 0.0;
    lp->perturbed = 0;
}

/* Largest primal infeasibility of a basic variable, 0 when feasible. */
static double infeas(const surety_lp *lp, size_t j, double *target)
{
    double v = lp->x[j];
    if (v < lp->wlb[j] - ftol(lp->wlb[j])) {
        *target = lp->wlb[j];
        return lp->wlb[j] - v;
    }
    if (v > lp->wub[j] + ftol(lp->wub[j])) {
        *target = lp->wub[j];
        return v - lp->wub[j];
    }
    return 0.0;
}

static int primal_feasible(const surety_lp *lp)
{
    double t;
    for (size_t j = 0; j < lp->n + lp->m; j++)
        if (lp->stat[j] == SURETY_LP_BASIC && infeas(lp, j, &t) > 0.0)
            return 0;
    return 1;
}

/* Bound-flipping ratio test with Harris tolerances (Koberstein 2005,
 * sec. 3.1.4, algorithm "BFRT with Harris' tolerance"): candidates in
 * order of their dual ratio are passed, and flipped to their other bound,
 * while the primal infeasibility `slope` of the leaving row stays
 * positive; within each Harris group the largest |alpha| is preferred.
 * Sets *q to the entering variable (or -1) and returns the count of
 * flipped candidates, which are left in cand[0..flips-1]. */
static size_t ratio_test(surety_lp *lp, double sgn, double slope, long *q)
{
    size_t nv = lp->n + lp->m, nc = 0;
    size_t *cand = lp->cand;
    double amax = 0.0;
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || lp->wlb[j] == lp->wub[j])
            continue;
        double a = fabs(lp->alpha[j]);
        if (a > amax)
            amax = a;
    }
    double ptol = PIVOT_TOL * (amax > 1.0 ? amax : 1.0);
    for (size_t j = 0; j < nv; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC || lp->wlb[j] == lp->wub[j])
            continue;
        double a = sgn * lp->alpha[j];
        if (fabs(a) <= ptol)
            continue;
        int s = lp->stat[j];
        if ((s == SURETY_LP_AT_LOWER && a > 0) || (s == SURETY_LP_AT_UPPER && a < 0) ||
            s == SURETY_LP_AT_ZERO)
            cand[nc++] = j;
    }
    *q = -1;
    size_t flips = 0;
    size_t lo = 0; /* cand[0..flips) flipped, cand[lo..nc) still open */
    lo = 0;
    while (lo < nc) {
        double tmax = INFINITY;
        for (size_t t = lo; t < nc; t++) {
            size_t j = cand[t];
            double r = (fabs(lp->d[j]) + OPT_TOL) / fabs(lp->alpha[j]);
            if (r < tmax)
                tmax = r;
        }
        /* Move the group with ratio <= tmax to the front of the open part. */
        size_t g = lo;
        double drop = 0.0;
        for (size_t t = lo; t < nc; t++) {
            size_t j = cand[t];
            if (fabs(lp->d[j]) / fabs(lp->alpha[j]) <= tmax) {
                cand[t] = cand[g];
                cand[g++] = j;
                if (lp->stat[j] == SURETY_LP_AT_ZERO || !boxed(lp, j))
                    drop = INFINITY;
                else
                    drop += fabs(lp->alpha[j]) * (lp->wub[j] - lp->wlb[j]);
            }
        }
        if (g < nc && slope - drop > 0.0) {
            /* the whole group can be passed: flip it */
            slope -= drop;
            for (size_t t = lo; t < g; t++)
                cand[flips++] = cand[t];
            lo = g;
            continue;
        }
        double best = -1.0;
        for (size_t t = lo; t < g; t++) {
            size_t j = cand[t];
            if (fabs(lp->alpha[j]) > best) {
                best = fabs(lp->alpha[j]);
                *q = (long)j;
            }
        }
        break;
    }
    return flips;
}

/* When the ratio test finds no entering variable the leaving row cannot
 * be repaired: the LP is infeasible, unless the proof leans on an
 * artificial bound; then the box is enlarged and 1 returned. */
static int enlarge_box(surety_lp *lp)
{
    if (!lp->artificial || lp->box >= ARTIFICIAL_MAX)
        return 0;
    int used = 0;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->stat[j] == SURETY_LP_BASIC)
            continue;
        if ((lp->wlb[j] != lp->lb[j] || lp->wub[j] != lp->ub[j]) && fabs(lp->alpha[j]) > PIVOT_TOL)
            used = 1;
    }
    if (!used)
        return 0;
    double grow = 1e3;
    lp->box *= grow;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        if (lp->wlb[j] != lp->lb[j])
            lp->wlb[j] = (isfinite(lp->ub[j]) ? lp->ub[j] : 0.0) - lp->box;
        if (lp->wub[j] != lp->ub[j])
            lp->wub[j] = (isfinite(lp->lb[j]) ? lp->lb[j] : 0.0) + lp->box;
    }
    surety_basis_primal(lp);
    return 1;
}

/* Dual simplex iterations until primal feasible (returns OPTIMAL for the
 * costs and bounds in use), infeasible, or a limit. Dual feasibility is
 * kept throughout. Pricing by dual steepest edge: the leaving variable
 * maximises infeasibility^2 / ||row of B^-1||^2, the weights updated by
 * the recurrence of J. J. Forrest and D. Goldfarb, "Steepest-edge simplex
 * algorithms for linear programming", Math. Programming 57 (1992)
 * 341-374, in the form of Koberstein 2005, sec. 3.3 (weights start at 1
 * where unknown, a common practice). */
static surety_lp_status dual_phase(surety_lp *lp, int allow_perturb)
{
    size_t n = lp->n;
    int stall = 0, retried = 0;
    if (lp->weights_stale) {
        surety_basis_dse_weights(lp);
        lp->weights_stale = 0;
    }
    for (;;) {
        size_t nv = n + lp->m;
        if (lp->nupd >= (int)REFACTOR_EVERY(lp)) {
            if (rebuild(lp) < 0)
                return SURETY_LP_NUMERIC;
        }
        long r = -1;
        double best = 0.0, target = 0.0;
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] != SURETY_LP_BASIC)
                continue;
            double t, v = infeas(lp, j, &t);
            if (v > 0.0 && v * v > best * lp->wgt[j]) {
                best = v * v / lp->wgt[j];
                r = (long)j;
                target = t;
            }
        }
        if (r < 0)
            return SURETY_LP_OPTIMAL;
        if (lp->iters >= lp->iter_limit)
            return SURETY_LP_ITER_LIMIT;
        /* Every basis met here is dual feasible for the costs in use, so
         * with the true costs and bounds c^T x bounds the optimum from
         * above (weak duality) and only decreases. */
        if (lp->cutoff > -INFINITY && !lp->perturbed && !lp->artificial) {
            double v = 0.0;
            for (size_t j = 0; j < n; j++)
                v += lp->obj[j] * lp->x[j];
            if (v <= lp->cutoff)
                return SURETY_LP_CUTOFF;
        }
        double delta = lp->x[r] - target; /* > 0: leaves to its upper */
        double sgn = delta > 0 ? 1.0 : -1.0;
        surety_basis_btran_row(lp, (size_t)r);
        double beta_r = 0.0;
        for (size_t i = 0; i < lp->m; i++)
            beta_r += lp->rho[i] * lp->rho[i];
        lp->wgt[r] = beta_r;
        long q;
        size_t flips = ratio_test(lp, sgn, fabs(delta), &q);
        if (q < 0) {
            if (enlarge_box(lp))
                continue;
            if (lp->nupd > 0 && !retried) {
                retried = 1;
                if (rebuild(lp) < 0)
                    return SURETY_LP_NUMERIC;
                continue;
            }
            return SURETY_LP_INFEASIBLE;
        }
        surety_basis_dual_columns(lp, (size_t)q, flips);
        double arq_col = -lp->dv[r], arq_row = lp->alpha[q];
        if (fabs(arq_col - arq_row) > 1e-8 * (1.0 + fabs(arq_col)) || fabs(arq_col) <= PIVOT_TOL) {
            /* The updated inverse has drifted: rebuild and price again. */
            if (lp->nupd > 0 && !retried) {
                retried = 1;
                if (rebuild(lp) < 0)
                    return SURETY_LP_NUMERIC;
                continue;
            }
            if (fabs(arq_col) <= PIVOT_TOL)
                return SURETY_LP_NUMERIC;
        }
        retried = 0;
        /* dual step; a slightly infeasible d_q (Harris) is shifted to 0 */
        double dq = lp->d[q];
        if ((lp->stat[q] == SURETY_LP_AT_LOWER && dq < 0) ||
            (lp->stat[q] == SURETY_LP_AT_UPPER && dq > 0) || lp->stat[q] == SURETY_LP_AT_ZERO) {
            lp->cost[q] -= dq;
            dq = 0.0;
            if (lp->d[q] != 0.0)
                lp->perturbed = 1;
        }
        double thd = dq / arq_row;
        for (size_t j = 0; j < nv; j++)
            if (lp->stat[j] != SURETY_LP_BASIC)
                lp->d[j] -= thd * lp->alpha[j];
        lp->d[r] = -thd;
        lp->d[q] = 0.0;
        if (fabs(thd) <= 1e-12) {
            if (++stall >= STALL_PERTURB && allow_perturb && !lp->perturbed) {
                perturb(lp);
                lp->stats.perturbations++;
                stall = 0;
            }
        } else {
            stall = 0;
        }
        /* bound flips move the basics by fl */
        lp->stats.bound_flips += (long)flips;
        if (flips > 0) {
            for (size_t j = 0; j < nv; j++)
                if (lp->stat[j] == SURETY_LP_BASIC)
                    lp->x[j] += lp->fl[j];
            for (size_t t = 0; t < flips; t++) {
                size_t j = lp->cand[t];
                if (lp->stat[j] == SURETY_LP_AT_LOWER) {
                    lp->stat[j] = SURETY_LP_AT_UPPER;
                    lp->x[j] = lp->wub[j];
                } else {
                    lp->stat[j] = SURETY_LP_AT_LOWER;
                    lp->x[j] = lp->wlb[j];
                }
            }
        }
        /* primal step: x_r reaches its violated bound */
        double thp = (target - lp->x[r]) / lp->dv[r];
        for (size_t j = 0; j < nv; j++)
            if (lp->dv[j] != 0.0 && (lp->stat[j] == SURETY_LP_BASIC || j == (size_t)q))
                lp->x[j] += thp * lp->dv[j];
        lp->x[r] = target;
        /* steepest-edge weights: alpha_iq / alpha_rq = dv_i / dv_r */
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] != SURETY_LP_BASIC || j == (size_t)r || lp->dv[j] == 0.0)
                continue;
            double f = lp->dv[j] / lp->dv[r];
            double wj = SURETY_LP_DSE_EXACT ? lp->wgt[j] - 2.0 * f * lp->tau[j] + f * f * beta_r
                                            : lp->wgt[j];
            lp->wgt[j] =
                SURETY_LP_DSE_EXACT ? fmax(wj, fmax(f * f, 1e-12)) : fmax(wj, f * f * beta_r);
        }
        lp->wgt[q] = fmax(beta_r / (arq_col * arq_col), 1e-12);
        lp->stat[q] = SURETY_LP_BASIC;
        lp->stat[r] = delta > 0 ? SURETY_LP_AT_UPPER : SURETY_LP_AT_LOWER;
        surety_basis_pivot(lp, (size_t)q, (size_t)r);
        lp->d[q] = 0.0;
        lp->iters++;
        lp->stats.dual_iterations++;
    }
}

/* Primal simplex from a primal feasible basis (Chvatal 1983, ch. 8, for
 * bounded variables; Dantzig pricing, two-pass Harris ratio test).
 * Removes the dual infeasibilities left by artificial bounds, cost
 * shifts and perturbation; proves unboundedness. After bland_after
 * degenerate steps in a row it switches to Bland's smallest-index rule
 * with the exact ratio test, which cannot cycle (R. G. Bland, "New finite
 * pivoting rules for the simplex method", Math. Oper. Res. 2 (1977)
 * 103-107). */
static surety_lp_status primal_phase(surety_lp *lp)
{
    size_t n = lp->n;
    long degenerate = 0;
    int bland = lp->bland_after == 0;
    surety_basis_dual(lp);
    for (;;) {
        size_t nv = n + lp->m;
        if (lp->nupd >= (int)REFACTOR_EVERY(lp)) {
            int rc = surety_basis_refactor(lp);
            if (rc < -1)
                return SURETY_LP_NUMERIC;
            surety_basis_dual(lp);
            if (rc > 0) {
                /* singular: the all-logical basis replaced it; make it
                 * dual feasible and hand back to the dual phase */
                repair_dual(lp);
                surety_basis_primal(lp);
                return SURETY_LP_UNSOLVED;
            }
            surety_basis_primal(lp);
        }
        long q = -1;
        double best = 0.0, dir = 0.0;
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] == SURETY_LP_BASIC || dual_ok(lp, j))
                continue;
            double dj = lp->d[j], sj = dj < 0 ? 1.0 : -1.0;
            if (lp->stat[j] == SURETY_LP_AT_LOWER && dj > 0)
                continue;
            if (lp->stat[j] == SURETY_LP_AT_UPPER && dj < 0)
                continue;
            if (bland ? q < 0 : fabs(dj) > best) {
                best = fabs(dj);
                q = (long)j;
                dir = sj;
            }
        }
        if (q < 0)
            return SURETY_LP_OPTIMAL;
        if (lp->iters >= lp->iter_limit)
            return SURETY_LP_ITER_LIMIT;
        surety_basis_ftran(lp, (size_t)q);
        double amax = 0.0;
        for (size_t j = 0; j < nv; j++)
            if (lp->stat[j] == SURETY_LP_BASIC && fabs(lp->dv[j]) > amax)
                amax = fabs(lp->dv[j]);
        double ptol = PIVOT_TOL * (amax > 1.0 ? amax : 1.0);
        double tmax = INFINITY;
        for (size_t j = 0; j < nv; j++) {
            if (lp->stat[j] != SURETY_LP_BASIC)
                continue;
            double g = dir * lp->dv[j];
            if (g > ptol && isfinite(lp->wub[j])) {
                double slack = bland ? 0.0 : ftol(lp->wub[j]);
                double t = (lp->wub[j] + slack - lp->x[j]) / g;
                if (t < tmax)
                    tmax = t;
            } else if (g < -ptol && isfinite(lp->wlb[j])) {
                double slack = bland ? 0.0 : ftol(lp->wlb[j]);
                double t = (lp->wlb[j] - slack - lp->x[j]) / g;
                if (t < tmax)
                    tmax = t;
            }
        }
        long r = -1;
        double gbest = 0.0, theta = 0.0;
        if (isfinite(tmax)) {
            for (size_t j = 0; j < nv; j++) {
                if (lp->stat[j] != SURETY_LP_BASIC)
                    continue;
                double g = dir * lp->dv[j], t;
                if (g > ptol && isfinite(lp->wub[j]))
                    t = (lp->wub[j] - lp->x[j]) / g;
                else if (g < -ptol && isfinite(lp->wlb[j]))
                    t = (lp->wlb[j] - lp->x[j]) / g;
                else
                    continue;
                if (t <= tmax && (bland ? r < 0 : fabs(g) > gbest)) {
                    gbest = fabs(g);
                    r = (long)j;
                    theta = t > 0 ? t : 0.0;
                }
            }
        }
        double range = dir > 0 ? lp->wub[q] - lp->x[q] : lp->x[q] - lp->wlb[q];
        if (r < 0 && !isfinite(range))
            return SURETY_LP_UNBOUNDED;
        lp->iters++;
        lp->stats.primal_iterations++;
        if (r < 0 || range <= theta) {
            /* bound flip of the entering variable */
            for (size_t j = 0; j < nv; j++)
                if (lp->stat[j] == SURETY_LP_BASIC)
                    lp->x[j] += dir * range * lp->dv[j];
            lp->stat[q] = dir > 0 ? SURETY_LP_AT_UPPER : SURETY_LP_AT_LOWER;
            lp->x[q] = dir > 0 ? lp->wub[q] : lp->wlb[q];
            continue;
        }
        if (theta <= 1e-12) {
            if (++degenerate >= lp->bland_after)
                bland = 1;
        } else {
            degenerate = 0;
        }
        int to_upper = dir * lp->dv[r] > 0;
        for (size_t j = 0; j < nv; j++)
            if (lp->stat[j] == SURETY_LP_BASIC)
                lp->x[j] += dir * theta * lp->dv[j];
        lp->x[q] += dir * theta;
        lp->x[r] = to_upper ? lp->wub[r] : lp->wlb[r];
        if (r >= (long)n)
            surety_basis_btran_row(lp, (size_t)r);
        lp->stat[q] = SURETY_LP_BASIC;
        lp->stat[r] = to_upper ? SURETY_LP_AT_UPPER : SURETY_LP_AT_LOWER;
        lp->weights_stale = 1;
        surety_basis_pivot(lp, (size_t)q, (size_t)r);
        surety_basis_dual(lp);
    }
}

static void finish(surety_lp *lp, surety_lp_status st)
{
    if (SURETY_EXPENSIVE_CHECKS && lp->factored &&
        (st == SURETY_LP_OPTIMAL || st == SURETY_LP_ITER_LIMIT))
        surety_basis_check(lp);
    lp->status = st;
    double v = 0.0;
    for (size_t j = 0; j < lp->n; j++)
        v += lp->obj[j] * lp->x[j];
    lp->objval = st == SURETY_LP_INFEASIBLE ? -INFINITY : st == SURETY_LP_UNBOUNDED ? INFINITY : v;
}

/* One solve: rebuild from the statuses, place the nonbasics by their
 * reduced costs (artificial bounds where needed), then alternate the dual
 * phase and, when costs were shifted or bounds were artificial, a clean-up
 * primal phase on the true costs and bounds. */
surety_lp_status surety_lp_solve(surety_lp *lp)
{
    if (!lp)
        return SURETY_LP_NUMERIC;
    long limit = lp->iter_limit > 0 ? lp->iter_limit : 1000 + 20 * (long)(lp->n + lp->m);
    long saved_limit = lp->iter_limit;
    lp->iter_limit = limit;
    lp->iters = 0;
    lp->box = ARTIFICIAL_BOX;
    lp->artificial = 0;
    for (size_t j = 0; j < lp->n + lp->m; j++) {
        lp->wlb[j] = lp->lb[j];
        lp->wub[j] = lp->ub[j];
    }
    restore_cost(lp);
    surety_lp_status st = SURETY_LP_NUMERIC;
    if (!lp->factored || lp->nupd >= (int)REFACTOR_EVERY(lp))
        if (surety_basis_refactor(lp) < -1)
            goto done;
    surety_basis_dual(lp);
    place_nonbasics(lp);
    lp->stats.solves++;
    lp->stats.artificial += lp->artificial;
    surety_basis_primal(lp);
    int round;
    for (round = 0; round < MAX_ROUNDS; round++) {
        st = dual_phase(lp, round < 2);
        if (st != SURETY_LP_OPTIMAL)
            break;
        if (!lp->perturbed && !lp->artificial) {
            /* the basics were updated step by step: recompute them once
             * and go on if rounding left one infeasible */
            surety_basis_primal(lp);
            if (primal_feasible(lp))
                break;
            continue;
        }
        /* Back to the true costs and bounds: boxed variables whose reduced
         * cost changed sign move to their other bound; if that leaves the
         * basics feasible, the primal phase removes what dual
         * infeasibility remains, else the costs are shifted once more and
         * the dual phase resumes. */
        restore_cost(lp);
        drop_artificial(lp);
        surety_basis_dual(lp);
        if (flip_boxed(lp))
            surety_basis_primal(lp);
        if (!primal_feasible(lp)) {
            shift_costs(lp);
            continue;
        }
        st = primal_phase(lp);
        if (st == SURETY_LP_UNSOLVED)
            continue;
        if (st != SURETY_LP_OPTIMAL)
            break;
        surety_basis_primal(lp);
        if (primal_feasible(lp))
            break;
    }
    if (round == MAX_ROUNDS)
        st = SURETY_LP_NUMERIC;
    if (st == SURETY_LP_OPTIMAL || st == SURETY_LP_ITER_LIMIT) {
        if (lp->perturbed)
            restore_cost(lp);
        surety_basis_dual(lp);
    }
done:
    lp->iter_limit = saved_limit;
    finish(lp, st);
    return st;
}
