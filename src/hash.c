/* hash.c - the one user of xxHash: stream seeds and row hashes.
 * SPDX-License-Identifier: MIT */
#include "hash.h"

#include <math.h>
#include <string.h>

#define XXH_INLINE_ALL
#include <xxhash.h>

/* Little-endian bytes whatever the host order, so that a seed gives the
 * same scenarios on every machine. */
static void put_le64(unsigned char *p, uint64_t x)
{
    for (int b = 0; b < 8; b++)
        p[b] = (unsigned char)(x >> (8 * b));
}

uint64_t surety_hash_stream(uint64_t seed, uint64_t stream, uint64_t l)
{
    unsigned char key[16];
    put_le64(key, stream);
    put_le64(key + 8, l);
    return XXH3_64bits_withSeed(key, sizeof key, seed);
}

uint64_t surety_hash_doubles(const double *v, size_t n)
{
    /* Fast path: no negative zero, hash the bytes where they lie. */
    size_t j = 0;
    while (j < n && !(v[j] == 0.0 && signbit(v[j])))
        j++;
    if (j == n)
        return XXH3_64bits(v, n * sizeof *v);

    /* Otherwise stream through a small buffer with -0.0 replaced by +0.0;
     * XXH3's streaming form gives the same value as the one-shot form. */
    XXH3_state_t st;
    XXH3_64bits_reset(&st);
    double buf[64];
    for (size_t at = 0; at < n;) {
        size_t len = n - at < 64 ? n - at : 64;
        for (size_t r = 0; r < len; r++)
            buf[r] = v[at + r] == 0.0 ? 0.0 : v[at + r];
        XXH3_64bits_update(&st, buf, len * sizeof *buf);
        at += len;
    }
    return XXH3_64bits_digest(&st);
}
