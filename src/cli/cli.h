/* cli.h - shared pieces of the command-line front end.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_CLI_H
#define SURETY_CLI_H

#include <signal.h>
#include <stdio.h>

#include "surety.h"

/* Exit codes beyond surety_code: a run stopped by a limit or an interrupt
 * still prints and writes its best plan, and says so by its exit code. */
enum {
    CLI_EXIT_LIMIT = 4,     /* stopped by a time or node limit */
    CLI_EXIT_INTERRUPT = 5, /* stopped by Ctrl-C (SIGINT) */
};

/* The one mutable global of the program: set by the SIGINT handler. */
extern volatile sig_atomic_t cli_interrupted;
void cli_catch_interrupt(void);

/* Prints `file:line:col: error: message` (parts that are unknown are left
 * out) to stderr and returns the code. */
int cli_report(const surety_error *err, surety_code code);
/* Prints `surety CMD: message` to stderr; returns SURETY_EUSAGE. */
int cli_usage_error(const char *cmd, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Strict number parsing: the whole string must be a number in range. */
int cli_parse_size(const char *s, size_t *out);
int cli_parse_u64(const char *s, uint64_t *out);
int cli_parse_double(const char *s, double *out);

/* 1 when `path` can be written: it exists and is writable, or its folder
 * is writable (errno tells why not). */
int cli_writable(const char *path);

/* JSON string literal of s (with quotes) to fp. */
void cli_json_string(FILE *fp, const char *s);
/* A JSON number: finite values with %.17g, others as null. */
void cli_json_number(FILE *fp, double v);

/* The caution every report carries. */
void cli_print_caution(FILE *fp);

/* Reads MODEL and applies the -n, --seed and --risk overrides given (NULL:
 * keep the model's). Returns 0 or an exit code after printing why. */
int cli_load_model(const char *cmd, const char *path, const char *n_arg,
                   const char *seed_arg, const char *risk_arg,
                   surety_model **out);

/* The human-readable check report. */
void cli_print_check(const surety_model *model, const surety_check_report *r);

int cmd_sample(int argc, char **argv);
int cmd_check(int argc, char **argv);
int cmd_export(int argc, char **argv);
int cmd_solve(int argc, char **argv);
int cmd_advise(int argc, char **argv);
int cmd_assure(int argc, char **argv);
int cmd_bounds(int argc, char **argv);
int cmd_frontier(int argc, char **argv);

#endif
