/* hash.h - 64-bit hashes for stream seeding and duplicate detection.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_HASH_H
#define SURETY_HASH_H

#include <stddef.h>
#include <stdint.h>

/* Seed material for scenario l of stream `stream` under the master seed:
 * XXH3-64 of the 16 little-endian bytes (stream, l) keyed by `seed`. The
 * value is the same on every platform, so a scenario's numbers depend only
 * on (seed, stream, l). Pure function; thread-safe. */
uint64_t surety_hash_stream(uint64_t seed, uint64_t stream, uint64_t l);

/* Hash of n doubles (a scenario row) for finding duplicate rows: rows that
 * compare equal element by element with == hash equally (-0.0 is hashed as
 * +0.0). NaN rows never compare equal, so their hash is of no concern.
 * Pure function; thread-safe. */
uint64_t surety_hash_doubles(const double *v, size_t n);

#endif
