/* bigm.h - quantile big-M coefficients of the scenario rows, one resource
 * at a time (Luedtke 2014; Qiu, Ahmed, Dey & Wolsey 2014; Song, Luedtke &
 * Kucukyavuz 2014; METHODS.md s.6). Shared by the MPS export, which needs
 * every row, and the solver's LP bound, which asks for rows as they enter.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_BIGM_H
#define SURETY_BIGM_H

#include <stddef.h>

struct surety_bigm_keyed {
    double key;
    size_t l;
};

/* One resource's data and scratch. */
typedef struct surety_bigm_res {
    size_t N, nj, k;
    double C;            /* capacity, in the units of a */
    const unsigned *cnt; /* N multiplicities (counting against k), or NULL */
    double *a;           /* N*nj: hours of the resource's jobs, [l*nj + t] */
    double *total;       /* N: load of scenario l with every job in */
    struct surety_bigm_keyed *order; /* N: scenarios by decreasing total */
    double *wbar;        /* nj: mean of a over the scenarios */
    double *ratio;       /* nj scratch */
    size_t *idx;         /* nj scratch */
    size_t *pi;          /* nj scratch */
    double *heap;        /* k+1: max-heap of the smallest values so far */
} surety_bigm_res;

/* Prepares resource data: scenario l's hours are w[l*stride + jobs[t]]
 * (t < nj, the jobs allowed in the resource), multiplied by `factor`, and
 * the capacity is C in the same units as factor * w. cnt gives the
 * multiplicity of each of the N rows (NULL: all 1); k is the allowance in
 * scenarios counted with multiplicity. Returns 0, or -1 when out of
 * memory (r then needs no free). */
int surety_bigm_init(surety_bigm_res *r, const double *w, size_t stride,
                     const size_t *jobs, size_t nj, size_t N,
                     const unsigned *cnt, double factor, double C, size_t k);
void surety_bigm_free(surety_bigm_res *r);

/* The plain big-M of row l: its load with every job in, minus C. */
double surety_bigm_plain(const surety_bigm_res *r, size_t l);

/* The quantile big-M of row l: every plan that fits all but at most k
 * scenarios (with multiplicity) has load_l - C <= the returned value,
 * which is at most the plain one. O(N nj) in the worst case. */
double surety_bigm_row(surety_bigm_res *r, size_t l);

#endif
