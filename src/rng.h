/* rng.h - reproducible per-scenario random streams: xoshiro256** seeded by
 * SplitMix64 from a hash of (seed, stream, scenario).
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_RNG_H
#define SURETY_RNG_H

#include <stdint.h>

/* xoshiro256** 1.0 (Blackman & Vigna, "Scrambled linear pseudorandom
 * number generators", ACM TOMS 47(4), 2021). State must not be all zero;
 * seeding through SplitMix64 guarantees that. One generator per scenario:
 * a scenario draws at most a few hundred numbers, far below the period
 * 2^256 - 1, and distinct scenarios start from hash-separated states. */
typedef struct surety_rng {
    uint64_t s[4];
} surety_rng;

/* The generator of scenario l of stream `stream` under master seed `seed`:
 * the four state words are successive SplitMix64 outputs (Steele, Lea &
 * Flood 2014) started from surety_hash_stream(seed, stream, l). Returned
 * by value so that callers keep it in registers. */
surety_rng surety_rng_at(uint64_t seed, uint64_t stream, uint64_t l);

/* SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom
 * number generators"; cited from memory), the seeding Vigna recommends for
 * xoshiro: it never yields four zero words from any start. The solver's
 * heuristics also draw their fixed, seeded sequences from it. */
static inline uint64_t surety_rng_splitmix64(uint64_t *x)
{
    uint64_t z = (*x += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

/* The generator started from a single 64-bit value (the SplitMix64
 * start). Inline: the sampler seeds one generator per scenario, and the
 * seeding of neighbouring scenarios then overlaps. */
static inline surety_rng surety_rng_from(uint64_t x)
{
    surety_rng r;
    for (int w = 0; w < 4; w++)
        r.s[w] = surety_rng_splitmix64(&x);
    return r;
}

static inline uint64_t surety_rng_rotl(uint64_t x, int k)
{
    return (x << k) | (x >> (64 - k));
}

/* Next 64 random bits. */
static inline uint64_t surety_rng_next(surety_rng *r)
{
    uint64_t *s = r->s;
    uint64_t out = surety_rng_rotl(s[1] * 5, 7) * 9;
    uint64_t t = s[1] << 17;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = surety_rng_rotl(s[3], 45);
    return out;
}

/* Uniform in the open interval (0,1): the top 52 bits k give (k + 1/2) /
 * 2^52, exactly representable, symmetric about 1/2, never 0 or 1, so every
 * inverse CDF stays finite. (With 53 bits, k + 1/2 would need 54 and round:
 * the largest k would give exactly 1.) */
static inline double surety_rng_uniform(surety_rng *r)
{
    return ((double)(surety_rng_next(r) >> 12) + 0.5) * 0x1.0p-52;
}

/* Ziggurat tables, 256 layers: x[i] layer edges (x[0] = v/f(r), x[1] = r,
 * x[256] = 0), f[i] = exp(-x[i]^2/2), k[i] = x[i+1]/x[i]. */
extern const double surety_rng_zig_x[257];
extern const double surety_rng_zig_f[257];
extern const double surety_rng_zig_k[256];

/* The rare branches of the ziggurat (wedges, the tail, retries) for layer
 * i and abscissa u in (-1,1) of a failed first try; further numbers come
 * from `aux`. */
double surety_rng_normal_slow(surety_rng *aux, unsigned i, double u);

/* The ziggurat's first try from one 64-bit output: the layer index from
 * the low 8 bits, the abscissa u in (-1,1) from the top 52 bits (disjoint
 * bits, which avoids the dependence Doornik (2005, "An improved ziggurat
 * method to generate normal random samples") found in the 32-bit
 * original). Returns 1 with *z set when the point falls inside the layer's
 * rectangle, as about 99% do. */
static inline int surety_rng_zig_try(uint64_t bits, double *z, unsigned *i,
                                     double *u)
{
    *i = (unsigned)(bits & 0xff);
    *u = ((double)(bits >> 12) + 0.5) * 0x1.0p-51 - 1.0;
    double a = *u < 0 ? -*u : *u;
    if (a < surety_rng_zig_k[*i]) {
        *z = *u * surety_rng_zig_x[*i];
        return 1;
    }
    return 0;
}

/* Standard normal by the ziggurat method (Marsaglia & Tsang, "The ziggurat
 * method for generating random variables", J. Stat. Softw. 5(8), 2000),
 * exact up to rounding. Uses a varying number of outputs of r. */
static inline double surety_rng_normal(surety_rng *r)
{
    double z, u;
    unsigned i;
    if (surety_rng_zig_try(surety_rng_next(r), &z, &i, &u))
        return z;
    /* Only a copy's address escapes, so the caller's generator can live in
     * registers (a spilled state costs store-forwarding stalls). */
    surety_rng t = *r;
    z = surety_rng_normal_slow(&t, i, u);
    *r = t;
    return z;
}

/* The same law taking exactly one output of r: the numbers a wedge or the
 * tail needs (about 1% of draws) come from an auxiliary generator started
 * from `key`. A scenario then uses one output per job whatever the jobs'
 * kinds, so one job's numbers never depend on another's law. */
static inline double surety_rng_normal_keyed(surety_rng *r, uint64_t key)
{
    double z, u;
    unsigned i;
    if (surety_rng_zig_try(surety_rng_next(r), &z, &i, &u))
        return z;
    surety_rng aux = surety_rng_from(key);
    return surety_rng_normal_slow(&aux, i, u);
}

#endif
