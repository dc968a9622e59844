/* clock.h - the monotonic wall clock behind every "seconds" in reports.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_CLOCK_H
#define SURETY_CLOCK_H

#include <time.h>

/* Seconds on CLOCK_MONOTONIC: only differences mean anything. */
static inline double surety_clock_seconds(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

#endif
