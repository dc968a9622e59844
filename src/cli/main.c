/* main.c - `surety COMMAND ...`: dispatch and the helpers every command
 * shares. The CLI includes only surety.h; anything it needs is in the API.
 * SPDX-License-Identifier: MIT */
#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"

volatile sig_atomic_t cli_interrupted = 0;

static void on_interrupt(int sig)
{
    (void)sig;
    cli_interrupted = 1;
}

void cli_catch_interrupt(void)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_interrupt;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGINT, &sa, NULL);
}

int cli_report(const surety_error *err, surety_code code)
{
    if (err->file[0]) {
        fprintf(stderr, "%s", err->file);
        if (err->line > 0) {
            fprintf(stderr, ":%d", err->line);
            if (err->column > 0)
                fprintf(stderr, ":%d", err->column);
        }
        fprintf(stderr, ": ");
    }
    fprintf(stderr, "error: ");
    if (err->field[0])
        fprintf(stderr, "%s: ", err->field);
    fprintf(stderr, "%s\n", err->message[0] ? err->message : "failed");
    return (int)code;
}

int cli_usage_error(const char *cmd, const char *fmt, ...)
{
    va_list ap;
    fprintf(stderr, "surety %s: ", cmd);
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    fprintf(stderr, "\n(try 'surety %s --help')\n", cmd);
    return SURETY_EUSAGE;
}

int cli_parse_size(const char *s, size_t *out)
{
    if (!s || !*s || *s == '-')
        return -1;
    errno = 0;
    char *end;
    unsigned long long v = strtoull(s, &end, 10);
    if (errno || *end)
        return -1;
    *out = (size_t)v;
    return 0;
}

int cli_parse_u64(const char *s, uint64_t *out)
{
    if (!s || !*s || *s == '-')
        return -1;
    errno = 0;
    char *end;
    unsigned long long v = strtoull(s, &end, 0);
    if (errno || *end)
        return -1;
    *out = (uint64_t)v;
    return 0;
}

int cli_parse_double(const char *s, double *out)
{
    if (!s || !*s)
        return -1;
    errno = 0;
    char *end;
    double v = strtod(s, &end);
    if (errno || *end || !isfinite(v))
        return -1;
    *out = v;
    return 0;
}

int cli_writable(const char *path)
{
    if (access(path, F_OK) == 0)
        return access(path, W_OK) == 0;
    const char *slash = strrchr(path, '/');
    if (!slash)
        return access(".", W_OK) == 0;
    if (slash == path)
        return access("/", W_OK) == 0;
    size_t len = (size_t)(slash - path);
    char *dir = malloc(len + 1);
    if (!dir)
        return 0;
    memcpy(dir, path, len);
    dir[len] = '\0';
    int ok = access(dir, W_OK) == 0;
    free(dir);
    return ok;
}

void cli_json_string(FILE *fp, const char *s)
{
    fputc('"', fp);
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        switch (*p) {
        case '"': fputs("\\\"", fp); break;
        case '\\': fputs("\\\\", fp); break;
        case '\n': fputs("\\n", fp); break;
        case '\r': fputs("\\r", fp); break;
        case '\t': fputs("\\t", fp); break;
        default:
            if (*p < 0x20)
                fprintf(fp, "\\u%04x", *p);
            else
                fputc(*p, fp);
        }
    }
    fputc('"', fp);
}

void cli_json_number(FILE *fp, double v)
{
    if (!isfinite(v)) {
        fputs("null", fp);
        return;
    }
    /* The shortest of %.15g, %.16g, %.17g that reads back to the same
     * double: 0.1 stays 0.1, and no value loses a bit. */
    char buf[40];
    for (int digits = 15; digits <= 17; digits++) {
        snprintf(buf, sizeof buf, "%.*g", digits, v);
        if (strtod(buf, NULL) == v)
            break;
    }
    fputs(buf, fp);
}

void cli_print_caution(FILE *fp)
{
    fputs("Caution: the reliability is only as good as the distribution model and the\n"
          "sample it rests on. surety supports the planner's judgement; it does not\n"
          "replace it. Overtime and staffing decisions stay subject to local labour\n"
          "rules and contracts.\n", fp);
}

static const struct command {
    const char *name;
    int (*run)(int argc, char **argv);
    const char *help;
} commands[] = {
    {"solve", cmd_solve, "find the most profitable plan for the sampled chance constraint"},
    {"check", cmd_check, "check a plan in sample and on fresh scenarios"},
    {"sample", cmd_sample, "write the scenarios of a model as a CSV table"},
    {"export", cmd_export, "write the sample approximation as an MPS file"},
    {"advise", cmd_advise, "scenario counts that published theory asks for"},
    {"assure", cmd_assure, "grow the sample until a plan is certified on fresh scenarios"},
    {"bounds", cmd_bounds, "confidence interval for the true optimal profit"},
    {"frontier", cmd_frontier, "profit against reliability over several risk levels"},
};

static void usage(FILE *fp)
{
    fprintf(fp, "usage: surety COMMAND [OPTIONS]\n\ncommands:\n");
    for (size_t c = 0; c < sizeof commands / sizeof *commands; c++)
        fprintf(fp, "  %-9s %s\n", commands[c].name, commands[c].help);
    fprintf(fp, "\n'surety COMMAND --help' describes a command's options.\n"
                "Exit codes: 0 ok, 1 usage, 2 input error, 3 internal error,\n"
                "4 stopped by a limit, 5 interrupted.\n");
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        usage(stderr);
        return SURETY_EUSAGE;
    }
    if (!strcmp(argv[1], "--help") || !strcmp(argv[1], "-h") || !strcmp(argv[1], "help")) {
        usage(stdout);
        return 0;
    }
    if (!strcmp(argv[1], "--version")) {
        printf("surety %s\n", SURETY_VERSION);
        return 0;
    }
    for (size_t c = 0; c < sizeof commands / sizeof *commands; c++)
        if (!strcmp(argv[1], commands[c].name))
            return commands[c].run(argc - 1, argv + 1);
    fprintf(stderr, "surety: unknown command '%s'\n", argv[1]);
    usage(stderr);
    return SURETY_EUSAGE;
}
