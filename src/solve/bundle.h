/* bundle.h - a proximal bundle method for minimising a sum of convex
 * piecewise-linear functions over a box (the decomposition's prices).
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_SOLVE_BUNDLE_H
#define SURETY_SOLVE_BUNDLE_H

#include <stddef.h>

/* f(x) = e.x + sum_c f_c(x) over lo <= x <= hi, each f_c convex and known
 * through cuts f_c(y) >= a + g.y (a linearisation from an evaluation, or
 * any valid minorant). Not thread-safe; one per caller. */
typedef struct surety_bundle surety_bundle;

/* dim coordinates, ncomp components, at most `cap` cuts kept per
 * component; e, lo and hi (dim each; +-INFINITY for no bound) are copied.
 * t0 > 0 is the first proximal weight (the step a cut's slope takes).
 * NULL when out of memory. */
surety_bundle *surety_bundle_new(size_t dim, size_t ncomp, size_t cap,
                                 const double *e, const double *lo,
                                 const double *hi, double t0);
void surety_bundle_free(surety_bundle *b);

/* A time (surety_clock_seconds, clock.h) after which a master problem
 * that has run 3000 iterations stops where it is; INFINITY (the default)
 * for none. Its point is still one of the box. */
void surety_bundle_deadline(surety_bundle *b, double at);

/* A diagonal metric d (dim entries, copied; an entry not positive and
 * finite counts as 1): the proximal term becomes
 * sum_x (y_x - centre_x)^2 / (2 t d_x), so coordinate x steps t d_x times
 * its slope. All 1 unless set; set it before the first step. */
void surety_bundle_scale(surety_bundle *b, const double *d);

/* Adds the cut f_c(y) >= a + sum_q val[q] y[idx[q]] (nnz entries, copied);
 * when component c holds `cap` cuts, the one unused longest goes. Returns
 * 0, or -1 when out of memory (the bundle is unchanged). */
int surety_bundle_cut(surety_bundle *b, size_t c, double a,
                      const size_t *idx, const double *val, size_t nnz);

/* f was evaluated at x (dim) with value fx, and the cuts of that
 * evaluation were added. Moves the centre to x when fx is low enough (a
 * serious step), then solves the proximal master problem
 *     min over lo <= y <= hi of  e.y + sum_c max_cuts (a + g.y)
 *                                + sum_x (y_x - centre_x)^2 / (2 t d_x)
 * and writes its solution, the next point to evaluate, to next (dim).
 * Returns the predicted decrease: the centre's value less the cutting-
 * plane model's value at next (>= 0 up to the master's tolerance; small
 * when the centre is near a minimum of f). */
double surety_bundle_step(surety_bundle *b, const double *x, double fx,
                          double *next);

/* Serious steps taken so far (for logs and tests). */
long surety_bundle_serious(const surety_bundle *b);

#endif
