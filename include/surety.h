/* surety.h - the one public header of the surety library.
 * SPDX-License-Identifier: MIT
 *
 * surety finds the most profitable plan for accepting uncertain jobs into
 * capacity-limited resources such that every capacity holds together with a
 * stated probability (a joint chance constraint), by the sample
 * approximation: N scenarios, at most k = floor(eps*N) of them may overload.
 *
 * Conventions for the whole API:
 *  - Every function that can fail returns a surety_code and, when given a
 *    non-NULL surety_error, fills it with file, line, column, field and a
 *    message. Nothing is printed and nothing exits.
 *  - Objects returned through an out-pointer are owned by the caller and
 *    released with the matching *_free function (which accepts NULL).
 *  - Indexing is 0-based: jobs j = 0..n-1, resources i = 0..m-1,
 *    scenarios l = 0..N-1.
 *  - Thread-safety: distinct handles may be used from distinct threads at
 *    once; a model handle may be shared read-only by any number of threads.
 */
#ifndef SURETY_H
#define SURETY_H

#include <signal.h>
#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

#define SURETY_VERSION "0.1.0"

/* Return codes; they double as the command-line exit codes. */
typedef enum surety_code {
    SURETY_OK = 0,        /* success */
    SURETY_EUSAGE = 1,    /* API misuse or bad command line */
    SURETY_EINPUT = 2,    /* bad input file or value */
    SURETY_EINTERNAL = 3, /* internal error, out of memory, I/O failure */
} surety_code;

/* Where and why something failed. Strings are always NUL-terminated;
 * line and column are 1-based and 0 when they do not apply. */
typedef struct surety_error {
    char file[512];
    int line;
    int column;
    char field[256];   /* e.g. "jobs[3].hours.sd"; empty when none */
    char message[1024];
} surety_error;

/* Clears an error record. */
void surety_error_clear(surety_error *err);

/* ------------------------------------------------------------------ */
/* Model                                                               */
/* ------------------------------------------------------------------ */

typedef struct surety_model surety_model;

/* How the capacities must hold: all together in at least N-k scenarios
 * (joint, the default) or each resource on its own (separate). */
typedef enum surety_constraint {
    SURETY_JOINT = 0,
    SURETY_SEPARATE = 1,
} surety_constraint;

/* Reads and validates a model file (JSON; schema in README.md). A scenario
 * table named in the file is read relative to the model file's folder.
 * On error *out is NULL and err says where. */
surety_code surety_model_read(const char *path, surety_model **out,
                              surety_error *err);

/* Same, from JSON text in memory; `name` is used in error messages and
 * `dir` (may be NULL) resolves a relative scenario table path. */
surety_code surety_model_parse(const char *json, const char *name,
                               const char *dir, surety_model **out,
                               surety_error *err);

void surety_model_free(surety_model *model);

size_t surety_model_jobs(const surety_model *model);      /* n */
size_t surety_model_resources(const surety_model *model); /* m */
const char *surety_model_name(const surety_model *model);
const char *surety_model_job_id(const surety_model *model, size_t j);
const char *surety_model_resource_id(const surety_model *model, size_t i);
double surety_model_capacity(const surety_model *model, size_t i); /* hours */
double surety_model_hours_factor(const surety_model *model, size_t i);
int surety_model_job_required(const surety_model *model, size_t j);
int surety_model_job_allowed(const surety_model *model, size_t j, size_t i);
double surety_model_risk(const surety_model *model);      /* eps in (0,1) */
size_t surety_model_scenarios(const surety_model *model); /* N */
uint64_t surety_model_seed(const surety_model *model);
surety_constraint surety_model_constraint(const surety_model *model);
/* 1 when the model carries its own scenario table (then N is its rows). */
int surety_model_has_table(const surety_model *model);

/* Overrides from the command line or a caller; values are validated. */
surety_code surety_model_set_risk(surety_model *model, double eps,
                                  surety_error *err);
surety_code surety_model_set_scenarios(surety_model *model, size_t N,
                                       surety_error *err);
void surety_model_set_seed(surety_model *model, uint64_t seed);

/* Index of a job or resource by id, or -1. */
long surety_model_find_job(const surety_model *model, const char *id);
long surety_model_find_resource(const surety_model *model, const char *id);

/* Allowance k = floor(eps*N), computed robustly (METHODS.md section 1). */
size_t surety_allowance(double eps, size_t N);

/* ------------------------------------------------------------------ */
/* Scenarios                                                           */
/* ------------------------------------------------------------------ */

typedef struct surety_scenarios surety_scenarios;

/* Random-number streams. Scenario l of stream s depends only on
 * (seed, s, l), so a larger sample extends a smaller one. */
enum {
    SURETY_STREAM_SOLVE = 0,     /* the scenarios a plan is solved on */
    SURETY_STREAM_CHECK = 1,     /* fresh scenarios for checking */
    SURETY_STREAM_REPLICATE = 2, /* replication r uses stream 2 + r */
};

/* Draws scenarios first .. first+N-1 of `stream` from the model's
 * distributions and copula. Refuses before allocating when the arrays would
 * not fit in memory (the message says how much they would need). */
surety_code surety_sample(const surety_model *model, uint64_t stream,
                          size_t first, size_t N, surety_scenarios **out,
                          surety_error *err);

/* The scenarios the model is solved on: its scenario table when it has
 * one, otherwise scenarios 0..N-1 of SURETY_STREAM_SOLVE. */
surety_code surety_model_sample(const surety_model *model,
                                surety_scenarios **out, surety_error *err);

void surety_scenarios_free(surety_scenarios *sc);
size_t surety_scenarios_count(const surety_scenarios *sc); /* N */
size_t surety_scenarios_jobs(const surety_scenarios *sc);  /* n */
/* Scenario-major arrays of N*n values: hours[l*n + j] is job j's base
 * hours in scenario l (hours in resource i are hours_factor_i times it);
 * profit[l*n + j] is its profit if accepted. Owned by the set. */
const double *surety_scenarios_hours(const surety_scenarios *sc);
const double *surety_scenarios_profit(const surety_scenarios *sc);

/* Writes the set as a scenario table (CSV, `<job>.hours` and
 * `<job>.profit` columns, values printed so that they read back exactly).
 * The file is written atomically. */
surety_code surety_scenarios_write_csv(const surety_model *model,
                                       const surety_scenarios *sc,
                                       const char *path, surety_error *err);

/* ------------------------------------------------------------------ */
/* Plans                                                               */
/* ------------------------------------------------------------------ */

typedef struct surety_plan surety_plan;

/* A plan with every job rejected. */
surety_plan *surety_plan_new(const surety_model *model);
surety_plan *surety_plan_copy(const surety_plan *plan);
void surety_plan_free(surety_plan *plan);
/* Resource index job j is placed in, or -1 when rejected. */
long surety_plan_get(const surety_plan *plan, size_t j);
void surety_plan_set(surety_plan *plan, size_t j, long i);

/* Reads a plan file: {"plan": {"<job>": "<resource>", ...}}. Unknown job,
 * unknown resource, a job not allowed there, a job twice, or a required job
 * missing are input errors. */
surety_code surety_plan_read(const surety_model *model, const char *path,
                             surety_plan **out, surety_error *err);
/* Writes a plan file atomically; `extra` (may be NULL) is a JSON object text
 * whose members are added beside "plan" (status, objective...). */
surety_code surety_plan_write(const surety_model *model,
                              const surety_plan *plan, const char *extra,
                              const char *path, surety_error *err);

/* Counts the scenarios of `sc` in which the plan fits: every capacity holds
 * (joint). per_resource (length m, may be NULL) receives, per resource, the
 * scenarios in which that resource holds. Returns the joint count. */
size_t surety_plan_count_fit(const surety_model *model,
                             const surety_plan *plan,
                             const surety_scenarios *sc,
                             size_t *per_resource);

/* Whether the plan satisfies the sampled chance constraint on `sc` at the
 * model's risk (joint or separate, as the model says). */
int surety_plan_feasible(const surety_model *model, const surety_plan *plan,
                         const surety_scenarios *sc);

/* Mean profit of the plan over `sc`. */
double surety_plan_profit(const surety_model *model, const surety_plan *plan,
                          const surety_scenarios *sc);

/* ------------------------------------------------------------------ */
/* Checking a plan out of sample                                       */
/* ------------------------------------------------------------------ */

typedef struct surety_check_options {
    size_t samples;       /* M fresh scenarios; default 100000 */
    double confidence;    /* for the intervals, in (0,1); default 0.95 */
    uint64_t stream;      /* default SURETY_STREAM_CHECK */
    size_t first;         /* first scenario index of that stream; default 0 */
    int in_sample;        /* also evaluate on the model's own scenarios; 1 */
} surety_check_options;

void surety_check_options_init(surety_check_options *opt);

/* Verdicts against the target reliability 1-eps. */
typedef enum surety_verdict {
    SURETY_MET = 0,       /* one-sided lower bound >= target */
    SURETY_UNCERTAIN = 1, /* estimate >= target, lower bound below it */
    SURETY_NOT_MET = 2,   /* estimate below target */
} surety_verdict;

typedef struct surety_resource_check {
    double overload_prob;       /* fraction of fresh scenarios overloaded */
    double overload_lo;         /* its two-sided Clopper-Pearson interval */
    double overload_hi;
    double overload_hours_mean; /* E[max(0, load - capacity)], hours */
    double overload_hours_p95;  /* 95th percentile of the same, hours */
    double load_mean;           /* mean load, hours */
    double load_p95;            /* 95th percentile of the load, hours */
} surety_resource_check;

typedef struct surety_check_report {
    /* in sample (the model's own scenarios); valid when in_sample was set */
    size_t in_N;             /* N */
    size_t in_fit;           /* scenarios where every capacity holds */
    size_t in_k;             /* allowance floor(eps*N) */
    int in_ok;               /* the sampled chance constraint holds */
    /* out of sample */
    size_t M;                /* fresh scenarios */
    size_t fit;              /* of which every capacity holds */
    double reliability;      /* fit / M */
    double lo, hi;           /* two-sided Clopper-Pearson at confidence */
    double lower;            /* one-sided lower bound at confidence */
    double confidence;
    double target;           /* 1 - eps */
    surety_verdict verdict;
    size_t m;
    surety_resource_check *resource; /* m entries, owned by the report */
    double profit_mean, profit_sd, profit_p5, profit_p50, profit_p95;
    double sample_seconds;   /* time drawing fresh scenarios */
    double check_seconds;    /* time evaluating the plan on them */
} surety_check_report;

surety_code surety_check(const surety_model *model, const surety_plan *plan,
                         const surety_check_options *opt,
                         surety_check_report *out, surety_error *err);
void surety_check_report_free(surety_check_report *rep);

/* ------------------------------------------------------------------ */
/* Export of the deterministic equivalent                             */
/* ------------------------------------------------------------------ */

typedef enum surety_bigm {
    SURETY_BIGM_PLAIN = 0,        /* M = sum of hours - capacity */
    SURETY_BIGM_STRENGTHENED = 1, /* order-statistic M (METHODS.md s.6) */
} surety_bigm;

/* Writes the sample approximation on `sc` as a MIP in MPS format: binaries
 * x_<job>_<resource>, one indicator z_<l> per scenario (per scenario and
 * resource when the model is separate), big-M rows, the allowance row and
 * the mean-profit objective (written as a minimisation of minus profit).
 * Written atomically. */
surety_code surety_export_mps(const surety_model *model,
                              const surety_scenarios *sc, surety_bigm bigm,
                              const char *path, surety_error *err);

/* ------------------------------------------------------------------ */
/* Solving                                                             */
/* ------------------------------------------------------------------ */

typedef enum surety_log_level {
    SURETY_LOG_ERROR = 0,
    SURETY_LOG_WARN = 1,
    SURETY_LOG_INFO = 2,
    SURETY_LOG_PROGRESS = 3,
    SURETY_LOG_DEBUG = 4,
} surety_log_level;

typedef void (*surety_log_fn)(void *ctx, surety_log_level level,
                              const char *line);

typedef struct surety_solve_options {
    double time_limit_s;     /* wall-clock limit; <= 0: none */
    double gap;              /* relative gap tolerance; default 1e-9 */
    long node_limit;         /* <= 0: none */
    int threads;             /* default 1 */
    int verbosity;           /* max level passed to log; default INFO */
    double progress_s;       /* seconds between progress lines; <= 0 off */
    surety_log_fn log;       /* NULL: silent */
    void *log_ctx;
    /* polled during the search; when it becomes non-zero the search stops
     * with SURETY_STOP_INTERRUPT (set it from a signal handler) */
    volatile sig_atomic_t *interrupt;
    const surety_plan *start; /* optional starting plan (a hint) */
} surety_solve_options;

void surety_solve_options_init(surety_solve_options *opt);

/* Why the search stopped. */
typedef enum surety_stop {
    SURETY_STOP_FINISHED = 0,
    SURETY_STOP_TIME = 1,
    SURETY_STOP_NODES = 2,
    SURETY_STOP_INTERRUPT = 3,
} surety_stop;

/* What is known of the answer. */
typedef enum surety_status {
    SURETY_OPTIMAL = 0,    /* proven optimal within the gap tolerance */
    SURETY_FEASIBLE = 1,   /* a verified plan, optimality not proven */
    SURETY_INFEASIBLE = 2, /* proven: no plan satisfies the constraint */
    SURETY_UNKNOWN = 3,    /* stopped before any plan was found */
} surety_status;

typedef struct surety_result surety_result;

/* Solves the sample approximation of the model on `sc` exactly by branch
 * and bound. The returned plan (if any) has been re-counted scenario by
 * scenario independently of the search. */
surety_code surety_solve(const surety_model *model, const surety_scenarios *sc,
                         const surety_solve_options *opt, surety_result **out,
                         surety_error *err);
void surety_result_free(surety_result *res);

surety_stop surety_result_stop(const surety_result *res);
surety_status surety_result_status(const surety_result *res);
double surety_result_objective(const surety_result *res); /* mean profit */
double surety_result_bound(const surety_result *res);     /* upper bound */
double surety_result_gap(const surety_result *res);       /* relative */
long surety_result_nodes(const surety_result *res);
double surety_result_seconds(const surety_result *res);
/* The plan, or NULL when none was found; owned by the result. */
const surety_plan *surety_result_plan(const surety_result *res);
/* Scenarios where the plan fits (joint) and the allowance k. */
size_t surety_result_fit(const surety_result *res);
size_t surety_result_allowance(const surety_result *res);
/* A sentence on why the model is infeasible, or "" */
const char *surety_result_reason(const surety_result *res);

const char *surety_stop_name(surety_stop stop);
const char *surety_status_name(surety_status status);

/* ------------------------------------------------------------------ */
/* Statistics                                                          */
/* ------------------------------------------------------------------ */

/* Clopper-Pearson interval for x successes of n at confidence c:
 * two-sided [lo, hi] and one-sided lower bound. (Clopper & Pearson 1934) */
void surety_clopper_pearson(size_t x, size_t n, double c, double *lo,
                            double *hi, double *lower1);

/* P{Bin(N,p) <= k} */
double surety_binom_cdf(long k, long N, double p);

#ifdef __cplusplus
}
#endif

#endif /* SURETY_H */
