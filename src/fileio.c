/* fileio.c - atomic output files and whole-file reads.
 * SPDX-License-Identifier: MIT */
#include "fileio.h"

#include <errno.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "alloc.h"
#include "model.h"

surety_code surety_outfile_open(surety_outfile *f, const char *path,
                                surety_error *err)
{
    memset(f, 0, sizeof *f);
    size_t len = strlen(path);
    f->path = surety_xstrdup(path);
    if (!f->path) {
        surety_error_set(err, path, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    /* Only a regular file (or a new one) is replaced by renaming: renaming
     * over /dev/null, a pipe or a terminal would put a plain file in place
     * of the device, so those are written in place. */
    struct stat st;
    if (stat(path, &st) == 0 && !S_ISREG(st.st_mode)) {
        f->fp = fopen(path, "w");
        if (!f->fp) {
            surety_error_set(err, path, 0, 0, NULL, "cannot open: %s",
                             strerror(errno));
            surety_outfile_abort(f);
            return SURETY_EINPUT;
        }
        return SURETY_OK;
    }
    f->tmp = surety_xmalloc(len + 16, 1);
    if (!f->tmp) {
        surety_outfile_abort(f);
        surety_error_set(err, path, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    snprintf(f->tmp, len + 16, "%s.tmpXXXXXX", path);
    int fd = mkstemp(f->tmp);
    if (fd < 0) {
        /* the temporary file's name means nothing to the user: the
         * folder of `path` is what cannot be written */
        surety_error_set(err, path, 0, 0, NULL, "cannot write here: %s",
                         strerror(errno));
        surety_xfree(f->tmp);
        f->tmp = NULL;
        surety_outfile_abort(f);
        return SURETY_EINPUT;
    }
    f->fp = fdopen(fd, "w");
    if (!f->fp) {
        close(fd);
        surety_error_set(err, path, 0, 0, NULL, "cannot open %s: %s",
                         f->tmp, strerror(errno));
        surety_outfile_abort(f);
        return SURETY_EINTERNAL;
    }
    return SURETY_OK;
}

surety_code surety_outfile_commit(surety_outfile *f, surety_error *err)
{
    int bad = ferror(f->fp);
    if (fflush(f->fp) != 0)
        bad = 1;
    /* a device or pipe written in place has nothing to sync or rename */
    if (!bad && f->tmp && fsync(fileno(f->fp)) != 0)
        bad = 1;
    int saved = errno;
    if (fclose(f->fp) != 0)
        bad = 1;
    f->fp = NULL;
    if (bad) {
        surety_error_set(err, f->path, 0, 0, NULL, "write failed: %s",
                         strerror(saved ? saved : EIO));
        surety_outfile_abort(f);
        return SURETY_EINTERNAL;
    }
    if (f->tmp && rename(f->tmp, f->path) != 0) {
        surety_error_set(err, f->path, 0, 0, NULL, "cannot rename into place: %s",
                         strerror(errno));
        surety_outfile_abort(f);
        return SURETY_EINTERNAL;
    }
    surety_xfree(f->tmp);
    surety_xfree(f->path);
    memset(f, 0, sizeof *f);
    return SURETY_OK;
}

void surety_outfile_abort(surety_outfile *f)
{
    if (f->fp)
        fclose(f->fp);
    if (f->tmp)
        unlink(f->tmp);
    surety_xfree(f->tmp);
    surety_xfree(f->path);
    memset(f, 0, sizeof *f);
}

char *surety_read_file(const char *path, size_t *len, surety_error *err)
{
    FILE *fp = fopen(path, "rb");
    if (!fp) {
        surety_error_set(err, path, 0, 0, NULL, "cannot open: %s",
                         strerror(errno));
        return NULL;
    }
    size_t cap = 1 << 16, n = 0;
    char *buf = surety_xmalloc(cap, 1);
    while (buf) {
        size_t got = fread(buf + n, 1, cap - n - 1, fp);
        n += got;
        if (n + 1 < cap)
            break;
        char *nb = surety_xrealloc(buf, cap, 2);
        if (!nb) {
            surety_xfree(buf);
            buf = NULL;
            break;
        }
        buf = nb;
        cap *= 2;
    }
    int bad = ferror(fp);
    fclose(fp);
    if (!buf || bad) {
        surety_xfree(buf);
        surety_error_set(err, path, 0, 0, NULL, "cannot read file");
        return NULL;
    }
    buf[n] = '\0';
    if (len)
        *len = n;
    return buf;
}
