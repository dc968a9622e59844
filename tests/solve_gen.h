/* solve_gen.h - random job-acceptance instances for the solver's tests and
 * benchmark: a model built directly from the structs of src/model.h and a
 * scenario set drawn by its own small generator (header-only).
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_SOLVE_GEN_H
#define SURETY_SOLVE_GEN_H

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "alloc.h"
#include "model.h"
#include "sample.h"

typedef enum solve_gen_dist {
    SOLVE_GEN_NORMAL = 0,    /* normal hours, clipped at 5% of the mean */
    SOLVE_GEN_LOGNORMAL = 1, /* lognormal hours with the same mean and sd */
    SOLVE_GEN_INTEGER = 2,   /* whole hours 1..10: ties and duplicate rows */
} solve_gen_dist;

typedef struct solve_gen_params {
    size_t n, m, N;
    double eps;          /* risk; k = floor(eps*N) */
    int separate;        /* SURETY_SEPARATE when set */
    double tightness;    /* summed capacity / expected total hours */
    solve_gen_dist dist;
    double p_required;   /* chance a job is required */
    double p_forbid;     /* chance a (job, resource) pair is not allowed */
    double p_negative;   /* chance a job's mean profit is negative */
    int equal_resources; /* identical capacities and factors */
    double noise;        /* profit noise relative to the profit scale */
    uint64_t seed;
} solve_gen_params;

/* xoshiro256** seeded by SplitMix64: the generator's own stream, kept
 * apart from the library's rng so that test data do not depend on it. */
typedef struct solve_gen_rng {
    uint64_t s[4];
} solve_gen_rng;

static inline uint64_t solve_gen_splitmix(uint64_t *x)
{
    uint64_t z = (*x += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

static inline void solve_gen_seed(solve_gen_rng *r, uint64_t seed)
{
    for (int t = 0; t < 4; t++)
        r->s[t] = solve_gen_splitmix(&seed);
}

static inline uint64_t solve_gen_next(solve_gen_rng *r)
{
    uint64_t *s = r->s;
    uint64_t x = s[1] * 5, res = ((x << 7) | (x >> 57)) * 9, t = s[1] << 17;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = (s[3] << 45) | (s[3] >> 19);
    return res;
}

/* uniform on [0,1) */
static inline double solve_gen_unif(solve_gen_rng *r)
{
    return (double)(solve_gen_next(r) >> 11) * 0x1.0p-53;
}

static inline double solve_gen_normal(solve_gen_rng *r)
{
    double u = solve_gen_unif(r), v = solve_gen_unif(r);
    return sqrt(-2 * log(1 - u)) * cos(6.283185307179586 * v);
}

/* The model: jobs J01.., resources R1.. Hours distributions are recorded
 * in the model (mean, sd) for completeness; solve_gen_scenarios draws the
 * scenarios itself. Free with surety_model_destroy. */
static inline surety_model *solve_gen_model(const solve_gen_params *p)
{
    solve_gen_rng r;
    solve_gen_seed(&r, p->seed * 2 + 1);
    surety_model *md = surety_xcalloc(1, sizeof *md);
    md->name = surety_xstrdup("generated");
    md->path = surety_xstrdup("generated");
    md->risk = p->eps;
    md->N = p->N;
    md->seed = p->seed;
    md->constraint = p->separate ? SURETY_SEPARATE : SURETY_JOINT;
    md->n = p->n;
    md->m = p->m;
    md->jobs = surety_xcalloc(p->n ? p->n : 1, sizeof *md->jobs);
    md->resources = surety_xcalloc(p->m ? p->m : 1, sizeof *md->resources);
    double total = 0;
    for (size_t j = 0; j < p->n; j++) {
        surety_job *jb = &md->jobs[j];
        char id[32];
        snprintf(id, sizeof id, "J%02zu", j + 1);
        jb->id = surety_xstrdup(id);
        double mean = p->dist == SOLVE_GEN_INTEGER ? 5.5
                                                   : 2 + 18 * solve_gen_unif(&r);
        double cv = 0.1 + 0.4 * solve_gen_unif(&r);
        jb->hours.kind = p->dist == SOLVE_GEN_LOGNORMAL ? SURETY_DIST_LOGNORMAL
                                                        : SURETY_DIST_NORMAL;
        jb->hours.a = mean;
        jb->hours.b = cv * mean;
        double s2 = log(1 + cv * cv);
        jb->hours.sigma = sqrt(s2);
        jb->hours.mu = log(mean) - s2 / 2;
        jb->hours.lo = -INFINITY;
        jb->hours.hi = INFINITY;
        jb->has_hours = 1;
        total += mean;
        /* profit linked to hours: rate * hours + fixed; a negative fixed
         * part makes some jobs unprofitable on average */
        jb->profit.kind = SURETY_PROFIT_RULE;
        jb->profit.rate = 5 + 10 * solve_gen_unif(&r);
        jb->profit.fixed = solve_gen_unif(&r) < p->p_negative
                               ? -jb->profit.rate * mean * 1.5
                               : 20 * solve_gen_unif(&r);
        jb->profit.min = -INFINITY;
        jb->profit.max = INFINITY;
        jb->required = solve_gen_unif(&r) < p->p_required;
        jb->allowed = surety_xcalloc(p->m ? p->m : 1, 1);
        int any = 0;
        for (size_t i = 0; i < p->m; i++) {
            jb->allowed[i] = solve_gen_unif(&r) >= p->p_forbid;
            any |= jb->allowed[i];
        }
        if (!any && p->m)
            jb->allowed[solve_gen_next(&r) % p->m] = 1;
    }
    for (size_t i = 0; i < p->m; i++) {
        surety_resource *rs = &md->resources[i];
        char id[32];
        snprintf(id, sizeof id, "R%zu", i + 1);
        rs->id = surety_xstrdup(id);
        double c = p->tightness * total / (double)p->m;
        if (p->equal_resources) {
            rs->capacity = p->dist == SOLVE_GEN_INTEGER ? floor(c) + 1 : c;
            rs->hours_factor = 1;
        } else {
            rs->capacity = c * (0.7 + 0.6 * solve_gen_unif(&r));
            rs->hours_factor = 0.8 + 0.45 * solve_gen_unif(&r);
            if (p->dist == SOLVE_GEN_INTEGER) {
                rs->capacity = floor(rs->capacity) + 1;
                rs->hours_factor = 1;
            }
        }
    }
    return md;
}

/* Scenarios for the model (independent jobs). Free with
 * solve_gen_scenarios_free. */
static inline surety_scenarios *solve_gen_scenarios(const surety_model *md,
                                                    const solve_gen_params *p)
{
    solve_gen_rng r;
    solve_gen_seed(&r, p->seed * 2 + 2);
    surety_scenarios *sc = surety_xcalloc(1, sizeof *sc);
    sc->N = p->N;
    sc->n = p->n;
    sc->hours = surety_xmalloc(p->N * (p->n ? p->n : 1), sizeof *sc->hours);
    sc->profit = surety_xmalloc(p->N * (p->n ? p->n : 1), sizeof *sc->profit);
    for (size_t l = 0; l < p->N; l++) {
        for (size_t j = 0; j < p->n; j++) {
            const surety_job *jb = &md->jobs[j];
            double w;
            if (p->dist == SOLVE_GEN_INTEGER) {
                w = (double)(1 + solve_gen_next(&r) % 10);
            } else if (p->dist == SOLVE_GEN_LOGNORMAL) {
                w = exp(jb->hours.mu + jb->hours.sigma * solve_gen_normal(&r));
            } else {
                w = jb->hours.a + jb->hours.b * solve_gen_normal(&r);
                if (w < 0.05 * jb->hours.a)
                    w = 0.05 * jb->hours.a;
            }
            double pr = surety_profit_of(&jb->profit, w);
            if (p->noise > 0)
                pr += p->noise * jb->profit.rate * jb->hours.a *
                      solve_gen_normal(&r);
            sc->hours[l * p->n + j] = w;
            sc->profit[l * p->n + j] = pr;
        }
    }
    return sc;
}

/* Each job may enter one resource only (job j: resource j mod m), so that
 * the decomposition's job prices have nothing to do. */
static inline void solve_gen_one_resource_each(surety_model *md)
{
    for (size_t j = 0; j < md->n; j++)
        for (size_t i = 0; i < md->m; i++)
            md->jobs[j].allowed[i] = i == j % md->m;
}

/* The last resource made a copy of the first (capacity, factor and the
 * jobs it may take), with the others between them left as they are. */
static inline void solve_gen_last_copies_first(surety_model *md)
{
    size_t last = md->m - 1;
    md->resources[last].capacity = md->resources[0].capacity;
    md->resources[last].hours_factor = md->resources[0].hours_factor;
    for (size_t j = 0; j < md->n; j++)
        md->jobs[j].allowed[last] = md->jobs[j].allowed[0];
}

static inline void solve_gen_scenarios_free(surety_scenarios *sc)
{
    if (!sc)
        return;
    surety_xfree(sc->hours);
    surety_xfree(sc->profit);
    surety_xfree(sc);
}

#endif
