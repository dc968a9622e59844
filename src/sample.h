/* sample.h - a scenario set: contiguous scenario-major arrays.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_SAMPLE_H
#define SURETY_SAMPLE_H

#include <stddef.h>
#include <stdint.h>

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

/* Block sampler for callers that must not hold all scenarios at once (the
 * out-of-sample checker). Scenario l of a stream gives the same bytes
 * whatever window it is drawn in: correlated scenarios are computed in
 * blocks aligned to absolute multiples of SURETY_SAMPLE_BLOCK, each at a
 * fixed position of a fixed-size product. A sampler keeps scratch space and
 * the last block: one sampler per thread; the model must outlive it and
 * stay unchanged. */
typedef struct surety_sampler surety_sampler;

#define SURETY_SAMPLE_BLOCK 64

/* Why the model cannot be sampled (a job without an hours distribution, an
 * invalid distribution, correlations not yet factored), or SURETY_OK. */
surety_code surety_sampler_check(const surety_model *model,
                                 surety_error *err);

/* A sampler for the model, or NULL when surety_sampler_check fails or
 * memory is short. */
surety_sampler *surety_sampler_new(const surety_model *model);

/* Scenarios first .. first+count-1 of `stream`, scenario-major:
 * hours[r*n + j] and profit[r*n + j] (profit may be NULL) for row r =
 * scenario first + r. Hours are clamped at >= 0. */
void surety_sampler_fill(surety_sampler *smp, uint64_t stream, size_t first,
                         size_t count, double *hours, double *profit);

/* Limits the marginal transforms of later fills to the jobs cols[0 ..
 * ncols-1] (ascending, each < n; the jobs a plan accepts, say): their
 * columns of hours and profit get exactly the bytes a full fill gives,
 * while the other columns are left unwritten. Every job's random numbers
 * are still drawn and the copula still applied to all of them, so a
 * scenario stays a function of (seed, stream, l) alone. cols = NULL
 * restores all jobs. Returns 0, or -1 (nothing changed) when cols is not
 * ascending or names a job out of range. */
int surety_sampler_restrict(surety_sampler *smp, const size_t *cols,
                            size_t ncols);

void surety_sampler_free(surety_sampler *smp);

#endif
