/* json_pos.h - locating a field path in raw JSON text (line and column),
 * since a parsed jansson document keeps no positions.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_JSON_POS_H
#define SURETY_JSON_POS_H

#include <stddef.h>

/* One step of a field path from the document root. */
typedef struct surety_jsonpos_step {
    const char *key; /* object member (UTF-8, as decoded), or NULL for an
                        array element */
    size_t index;    /* 0-based array index when key is NULL */
} surety_jsonpos_step;

/* Follows the first `depth` steps of `path` through `text`, which must be a
 * NUL-terminated document a JSON parser has already accepted (valid JSON,
 * unique keys). Returns a pointer into `text` at the start of the value
 * reached, or at its key when want_key is set and the last step is a
 * member; NULL when the path is not in the text. Pure; thread-safe. */
const char *surety_jsonpos_locate(const char *text,
                                  const surety_jsonpos_step *path, int depth,
                                  int want_key);

/* 1-based line and column of p, a pointer into `text`; columns count
 * characters (UTF-8 lead bytes), as jansson's own error positions do.
 * Pure; thread-safe. */
void surety_jsonpos_position(const char *text, const char *p, int *line,
                             int *col);

#endif
