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

#endif
