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

/* The one capacity test of the project: resource i holds in a scenario iff
 * hours_factor_i * (sum of the base hours of its jobs, added in ascending
 * job order) <= capacity_i. Written as a product on the left, never as
 * sum <= capacity_i / factor_i, which rounds differently; every counter
 * (plan.c, check.c, the solver's recount, the MPS rows) uses this form. */
static inline int surety_plan_holds(double factor, double sum, double capacity)
{
    return factor * sum <= capacity;
}

#endif
