/* sample.h - a scenario set: contiguous scenario-major arrays.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_SAMPLE_H
#define SURETY_SAMPLE_H

#include <stddef.h>

#include "surety.h"

struct surety_scenarios {
    size_t N;       /* scenarios */
    size_t n;       /* jobs */
    double *hours;  /* N*n, hours[l*n + j]: base hours */
    double *profit; /* N*n, profit[l*n + j] */
};

/* Allocates an empty set of N scenarios for n jobs, refusing (with a
 * message stating the bytes needed) when it would not fit in memory. */
surety_code surety_scenarios_alloc(size_t N, size_t n, surety_scenarios **out,
                                   surety_error *err);

#endif
