/* fileio.h - atomic output files: write to a temporary file beside the
 * target, flush, then rename over it, so a failed run never leaves a
 * half-written or truncated file.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_FILEIO_H
#define SURETY_FILEIO_H

#include <stdio.h>

#include "surety.h"

typedef struct surety_outfile {
    FILE *fp;         /* write here */
    char *path;       /* final path */
    char *tmp;        /* temporary path beside it */
} surety_outfile;

/* Opens a temporary file beside `path`; when `path` exists and is not a
 * regular file (/dev/null, a pipe), opens it directly instead. */
surety_code surety_outfile_open(surety_outfile *f, const char *path,
                                surety_error *err);
/* Flushes, syncs and renames the temporary file over `path`; on any
 * failure removes the temporary file and leaves `path` untouched. */
surety_code surety_outfile_commit(surety_outfile *f, surety_error *err);
/* Abandons the file: the temporary is removed, `path` untouched. */
void surety_outfile_abort(surety_outfile *f);

/* Reads a whole file into a NUL-terminated buffer (caller frees). */
char *surety_read_file(const char *path, size_t *len, surety_error *err);

#endif
