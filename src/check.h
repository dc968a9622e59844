/* check.h - one plan compiled for fast evaluation on scenario rows; shared
 * by the out-of-sample checker and loops that re-check plans many times.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_CHECK_H
#define SURETY_CHECK_H

#include <stddef.h>

#include "plan.h"
#include "surety.h"

/* The accepted jobs of a plan grouped by resource. Sums over a group run in
 * ascending job order and are tested with surety_plan_holds, so every count
 * made through it equals surety_plan_count_fit bit for bit. */
typedef struct surety_plan_eval {
    size_t n;         /* jobs per scenario row */
    size_t m;         /* resources */
    size_t *jobs;     /* accepted jobs, jobs[start[i] .. start[i+1]-1] in
                         resource i, ascending */
    size_t *start;    /* m+1 offsets into jobs */
    double *factor;   /* m hours factors */
    double *capacity; /* m capacities, hours */
} surety_plan_eval;

/* Compiles `plan` for `model`. Fails (EUSAGE/EINPUT, message naming the
 * job) when the plan has another job count, places a job in a resource
 * that does not exist or is not allowed, or rejects a required job. */
surety_code surety_check_eval_init(surety_plan_eval *ev,
                                   const surety_model *model,
                                   const surety_plan *plan, surety_error *err);
void surety_check_eval_free(surety_plan_eval *ev);

/* 1 when every capacity holds in one scenario row (n base hours); stops at
 * the first overloaded resource. */
static inline int surety_check_row_fits(const surety_plan_eval *ev,
                                        const double *row)
{
    for (size_t i = 0; i < ev->m; i++) {
        double sum = 0;
        for (size_t t = ev->start[i]; t < ev->start[i + 1]; t++)
            sum += row[ev->jobs[t]];
        if (!surety_plan_holds(ev->factor[i], sum, ev->capacity[i]))
            return 0;
    }
    return 1;
}

/* Scenario rows among `count` (scenario-major, ev->n values each) in which
 * every capacity holds; early exit per row at the first overload. */
size_t surety_check_count(const surety_plan_eval *ev, const double *hours,
                          size_t count);

/* The same joint count, plus per resource the rows in which it holds
 * (per_resource has m entries and is added to, not cleared). */
size_t surety_check_count_resources(const surety_plan_eval *ev,
                                    const double *hours, size_t count,
                                    size_t *per_resource);

/* surety_check on fresh scenarios first .. first+samples-1 of
 * SURETY_STREAM_SCREEN at `confidence`, without the in-sample part: the
 * screening and certificates of assure, bounds and frontier, kept off the
 * CHECK stream that `surety check` uses. On failure *rep holds nothing to
 * free. */
surety_code surety_check_fresh(const surety_model *model,
                               const surety_plan *plan, size_t samples,
                               size_t first, double confidence,
                               surety_check_report *rep, surety_error *err);

#endif
