/* error.c - error records and the names of enums.
 * SPDX-License-Identifier: MIT */
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "model.h"

void surety_error_clear(surety_error *err)
{
    if (err)
        memset(err, 0, sizeof *err);
}

void surety_error_set(surety_error *err, const char *file, int line,
                      int column, const char *field, const char *fmt, ...)
{
    if (!err)
        return;
    surety_error_clear(err);
    if (file)
        snprintf(err->file, sizeof err->file, "%s", file);
    err->line = line;
    err->column = column;
    if (field)
        snprintf(err->field, sizeof err->field, "%s", field);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(err->message, sizeof err->message, fmt, ap);
    va_end(ap);
}

const char *surety_stop_name(surety_stop stop)
{
    switch (stop) {
    case SURETY_STOP_FINISHED: return "finished";
    case SURETY_STOP_TIME: return "time_limit";
    case SURETY_STOP_NODES: return "node_limit";
    case SURETY_STOP_INTERRUPT: return "interrupted";
    }
    return "unknown";
}

const char *surety_status_name(surety_status status)
{
    switch (status) {
    case SURETY_OPTIMAL: return "optimal";
    case SURETY_FEASIBLE: return "feasible";
    case SURETY_INFEASIBLE: return "infeasible";
    case SURETY_UNKNOWN: return "unknown";
    }
    return "unknown";
}
