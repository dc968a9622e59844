/* alloc.c - overflow-checked allocation and a growable array.
 * SPDX-License-Identifier: MIT */
#include "alloc.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

int surety_mul_overflows(size_t n, size_t size)
{
    return size != 0 && n > SIZE_MAX / size;
}

void *surety_xmalloc(size_t n, size_t size)
{
    if (surety_mul_overflows(n, size))
        return NULL;
    size_t bytes = n * size;
    return malloc(bytes ? bytes : 1);
}

void *surety_xcalloc(size_t n, size_t size)
{
    if (surety_mul_overflows(n, size))
        return NULL;
    return calloc(n ? n : 1, size ? size : 1);
}

void *surety_xrealloc(void *p, size_t n, size_t size)
{
    if (surety_mul_overflows(n, size))
        return NULL;
    size_t bytes = n * size;
    return realloc(p, bytes ? bytes : 1);
}

void surety_xfree(void *p)
{
    free(p);
}

char *surety_xstrdup(const char *s)
{
    if (!s)
        return NULL;
    size_t len = strlen(s) + 1;
    char *d = surety_xmalloc(len, 1);
    if (d)
        memcpy(d, s, len);
    return d;
}

size_t surety_physical_memory(void)
{
    long pages = sysconf(_SC_PHYS_PAGES);
    long page = sysconf(_SC_PAGE_SIZE);
    if (pages <= 0 || page <= 0)
        return 0;
    return (size_t)pages * (size_t)page;
}

void surety_vec_init(surety_vec *v, size_t elem)
{
    v->data = NULL;
    v->len = 0;
    v->cap = 0;
    v->elem = elem;
}

int surety_vec_reserve(surety_vec *v, size_t n)
{
    if (n <= v->cap)
        return 0;
    size_t cap = v->cap ? v->cap : 8;
    while (cap < n) {
        if (cap > SIZE_MAX / 2)
            return -1;
        cap *= 2;
    }
    void *d = surety_xrealloc(v->data, cap, v->elem);
    if (!d)
        return -1;
    v->data = d;
    v->cap = cap;
    return 0;
}

int surety_vec_push(surety_vec *v, const void *item)
{
    if (surety_vec_reserve(v, v->len + 1))
        return -1;
    memcpy((char *)v->data + v->len * v->elem, item, v->elem);
    v->len++;
    return 0;
}

void surety_vec_free(surety_vec *v)
{
    surety_xfree(v->data);
    surety_vec_init(v, v->elem);
}
