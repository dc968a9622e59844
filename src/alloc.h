/* alloc.h - the one allocation wrapper: overflow-checked sizes.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_ALLOC_H
#define SURETY_ALLOC_H

#include <stddef.h>

/* n * size bytes, or NULL when the product overflows or memory is short. */
void *surety_xmalloc(size_t n, size_t size);
/* Same, zero-filled. */
void *surety_xcalloc(size_t n, size_t size);
/* Resize to n * size bytes; on failure returns NULL and leaves p valid. */
void *surety_xrealloc(void *p, size_t n, size_t size);
void surety_xfree(void *p);
/* strdup through the wrapper; NULL in, NULL out. */
char *surety_xstrdup(const char *s);
/* 1 when n * size overflows size_t. */
int surety_mul_overflows(size_t n, size_t size);
/* Bytes of physical memory, or 0 when unknown. */
size_t surety_physical_memory(void);

/* Growable array of fixed-size elements. */
typedef struct surety_vec {
    void *data;
    size_t len;  /* elements in use */
    size_t cap;  /* elements allocated */
    size_t elem; /* bytes per element */
} surety_vec;

void surety_vec_init(surety_vec *v, size_t elem);
/* Appends one element copied from `item`; returns 0, or -1 when out of
 * memory (v unchanged). */
int surety_vec_push(surety_vec *v, const void *item);
/* Makes room for at least `n` elements; 0 or -1. */
int surety_vec_reserve(surety_vec *v, size_t n);
void surety_vec_free(surety_vec *v);

#endif
