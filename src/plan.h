/* plan.h - a plan: the resource of every job, or -1 (rejected).
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_PLAN_H
#define SURETY_PLAN_H

#include <stddef.h>

#include "surety.h"

struct surety_plan {
    size_t n;
    long *resource; /* n entries, -1 or 0..m-1 */
};

/* Relative slack of the capacity test. Capacities, hours and factors are
 * written in decimal and stored in binary, so a load that equals its
 * capacity in decimal can come out a few units in the last place above it
 * (1.35 x 11 = 14.850000000000001 > 14.85). A sum of n terms rounds by at
 * most about n x 1.1e-16 relative, so 1e-12 absorbs that for any plan of
 * up to several thousand jobs, and it is 3.6 nanoseconds in a 1000-hour
 * capacity: no load that overloads a resource by anything measurable is
 * counted as fitting. The search's own load margins (1e-9 relative,
 * SURETY_SOLVE_LOAD_TOL) are wider, so its bounds still admit every plan
 * this test admits. The MPS export writes the capacity as given; general
 * solvers accept far larger violations (about 1e-6) anyway. */
#define SURETY_CAPACITY_SLACK 1e-12

/* The one capacity test of the project: resource i holds in a scenario iff
 * hours_factor_i * (sum of the base hours of its jobs, added in ascending
 * job order) <= capacity_i * (1 + SURETY_CAPACITY_SLACK). Written as a
 * product on the left, never as sum <= capacity_i / factor_i, which rounds
 * differently; every counter (plan.c, check.c, the solver's recount, the
 * chart) uses this function. surety_plan_limit is its right-hand side, for
 * loops that test many sums against one capacity at once. */
static inline double surety_plan_limit(double capacity)
{
    return capacity * (1 + SURETY_CAPACITY_SLACK);
}

static inline int surety_plan_holds(double factor, double sum, double capacity)
{
    return factor * sum <= surety_plan_limit(capacity);
}

/* The summed cost[l] of the scenarios of `sc` in which the plan overloads
 * some resource, counted as surety_plan_count_fit counts (for the solver's
 * scenario_cost option). */
double surety_plan_fail_cost(const surety_model *model,
                             const surety_plan *plan,
                             const surety_scenarios *sc, const double *cost);

#endif
