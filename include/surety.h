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
/* Fresh scenarios that assure, bounds and frontier screen and certify
 * candidate plans on, kept apart from SURETY_STREAM_CHECK: a plan chosen
 * on them can then be checked on CHECK scenarios that played no part in
 * choosing it. The largest stream id, beyond any replication's. */
#define SURETY_STREAM_SCREEN UINT64_MAX

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
    /* This resource on its own (the separate constraint): the fraction of
     * fresh scenarios in which it holds, its one-sided Clopper-Pearson
     * lower bound and verdict against 1-eps. For a separate model the bound
     * is at confidence 1-(1-c)/m (Bonferroni), so that all m statements
     * hold together with confidence c; for a joint model it is at c and
     * only informative. */
    double reliability;
    double reliability_lower;
    double reliability_confidence; /* the confidence of reliability_lower */
    surety_verdict verdict;
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

/* Evaluates `plan` on the model's own scenarios (when opt->in_sample) and
 * on opt->samples fresh scenarios of opt->stream, drawn in blocks so that
 * memory grows with M only by the kept per-scenario loads and profits
 * (8(m+1) bytes a scenario; refused up front when that exceeds a quarter
 * of physical memory). Percentiles are exact order statistics of the kept
 * values, interpolated linearly between neighbours (position (M-1)q).
 * The verdict is on the joint reliability for a joint model and the worst
 * per-resource verdict for a separate one. opt may be NULL (defaults).
 * On success the caller frees *out with surety_check_report_free. The plan
 * must suit the model (allowed resources, required jobs placed). */
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

/* Writes the sample approximation on `sc` as a MIP in free MPS (read by
 * CBC and by glpsol --freemps): binaries x_<j>_<i> (job and resource
 * indices; comment lines at the top map them to ids), one indicator z_<l>
 * per scenario (z_<l>_<i> when the model is separate), big-M rows
 * cap_<l>_<i>, the allowance row(s), assignment rows assign_<j> and the
 * mean-profit objective (written as a minimisation of minus profit).
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
    int threads;             /* default 1; more run the decomposition's
                              * one-resource solves (price rounds, probes,
                              * restored nodes) side by side, at most m
                              * (and 64) at once; the tree search stays on
                              * one thread. log is called from the
                              * caller's thread only (the workers log
                              * nothing); the workers also read *interrupt
                              * and stop at it. Rounds and probes give the
                              * same values for any value; a restored node
                              * may then solve a resource more than it
                              * needs, which can change the node count,
                              * not the optimum */
    int verbosity;           /* max level passed to log; default INFO */
    double progress_s;       /* seconds between progress lines; <= 0 off */
    surety_log_fn log;       /* NULL: silent */
    void *log_ctx;
    /* polled during the search; when it becomes non-zero the search stops
     * with SURETY_STOP_INTERRUPT (set it from a signal handler) */
    volatile sig_atomic_t *interrupt;
    const surety_plan *start; /* optional starting plan (a hint) */
    /* nodes of one depth-first dive before the search returns to the open
     * node of best bound; 0: the default (4096); < 0: depth first only */
    long dive_nodes;
    /* nodes searched before the LP relaxation of the strengthened big-M
     * formulation is solved at the root, to cap every bound from then on
     * and rule out pairs by reduced cost (an instance that closes sooner
     * never pays for it); 0: the default (65536; where the decomposition
     * bound runs from 65536 nodes on or sooner, that is decomp_after at
     * most 65536 and not negative, at least two resources and lp_restored
     * not above 0, instead right after its first price round, and only if
     * that round searched 131072 one-resource nodes or more and the allowed
     * pairs times N are at most 262144); < 0: never. Needs the
     * best-bound pool (dive_nodes >= 0) and at most 4096 scenario columns
     * (N, or m*N for separate constraints); under a time limit the root LP
     * stops after a quarter of the time left, with a bound that is still
     * valid. */
    long lp_after;
    /* > 0: once the root LP is solved, also bound by the LP (a few rounds
     * of scenario rows) every node restored from the pool and the nodes of
     * the first three levels of its dive; 0: the default, so only where
     * the root LP came after a costly first price round (lp_after), the
     * decomposition ended there because that round's bound was above the
     * LP's, and the allowed pairs times N are at most 32768; < 0: never */
    int lp_restored;
    /* nodes searched before the resource-decomposition bound is computed
     * at the root (each resource's own chance-constrained problem solved
     * by the same search, with prices on "each job once" and, unless
     * decomp_jobs_only, on each resource's failures scenario by scenario;
     * it caps every bound from then on), or the node bounds' work of that
     * many nodes of a joint search where nodes cost more (separate
     * constraints); 0: the default (65536); < 0: never. Needs the
     * best-bound pool and at least two resources. Its rounds then take
     * about ten times the tree's bound work, counted in scenario knapsacks
     * (their nodes are not counted in the result's nodes, nor limited by
     * node_limit; each one-resource solve stops after 200 000 nodes and
     * at the time limit). After its price rounds it
     * probes each (job, resource) pair once: the resource's problem with
     * the job forced in, or kept out when its best plan holds it, which
     * caps every node that takes that decision. From then on each node
     * restored from the pool solves each resource's problem with all of
     * its decisions at once, which caps its subtree, as long as those
     * solves (the rounds' and probes' included) have taken no more
     * scenario knapsacks than the tree since the first round. Where the
     * root LP follows a costly first round (lp_after) and that round's
     * bound is above the LP's, the decomposition ends there. */
    long decomp_after;
    /* most price rounds before the probes; 0 or less: the default (60) */
    int decomp_rounds;
    /* non-zero: after the probes, no restored node solves its own
     * resources' problems (the decomposition bounds the root and its
     * probes only); for comparisons, default 0 */
    int decomp_root_only;
    /* non-zero: the decomposition prices only the rows "each job once".
     * By default, with the joint constraint, it also prices each
     * resource's failures scenario by scenario and adds the k largest
     * summed scenario prices to its bound, which lines the resources'
     * failures up (bench/README.md, "Findings"); for comparisons */
    int decomp_jobs_only;
    /* non-zero: the price rounds move the prices by deflected subgradient
     * steps, as before the bundle method (for comparisons); 0, the
     * default: by a proximal bundle method, which keeps a cutting-plane
     * model of each resource's value, refined by every round, and steps
     * to the model's best point near the best prices so far */
    int decomp_subgradient;
    /* non-zero: keep the scenarios that every feasible plan fits (dominated
     * by k+1 others, or fitting every plan) in the search instead of
     * setting them aside; default 0. The decomposition's one-resource
     * solves turn it on: they seldom find such a scenario, and the search
     * for them cost more than it saved */
    int keep_dominated;
    /* optional failure cost of each scenario (sc->N entries, finite and
     * >= 0; joint constraint only): the objective becomes the mean profit
     * minus the cost of every scenario the plan overloads. For an
     * embedding solver that prices scenario failures (a Lagrangian
     * decomposition); NULL: none, the default */
    const double *scenario_cost;
    /* nodes searched (or their work, counted as for decomp_after) before
     * the search starts to improve its best plan part by part (a large
     * neighbourhood search; src/solve/lns.c): two or three resources
     * chosen at random, about half of the jobs the plan places in them
     * and of the jobs it leaves out (at most 16) are searched again by
     * the same solver, the rest of the plan kept. Parts take a quarter of
     * the tree's work (counted in scenario knapsacks), halved after every
     * 12 parts in a row without a better plan, down to 1/64, and back to
     * a quarter when the best plan changes. 0: the default (65536); < 0:
     * never. Needs at least two resources and no scenario_cost. */
    long improve_after;
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
/* Mean profit of the plan (NaN without one); a valid upper bound on the
 * optimum at any stop (-INFINITY when proven infeasible); their relative
 * gap (bound - objective) / |objective| (INFINITY when unknown). */
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
/* Scenarios the search worked on: the distinct ones (duplicates merged)
 * less those every feasible plan fits, which presolve sets aside (see
 * surety_solve_options.keep_dominated). */
size_t surety_result_searched(const surety_result *res);
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

/* ------------------------------------------------------------------ */
/* Standing behind a plan: sample sizes, assurance, bounds, frontier   */
/* (src/advise.c, src/assure.c, src/frontier.c, src/chart.c)           */
/* ------------------------------------------------------------------ */

/* What a row of sample-size advice rests on. */
typedef enum surety_advice_kind {
    /* Luedtke & Ahmed 2008, finite plan set: with confidence C, EVERY plan
     * that fits all but k of the N scenarios has true risk <= eps. Valid
     * for binary plans, including a time-limited incumbent. */
    SURETY_ADVICE_FINITE = 0,
    /* Campi & Garatti 2011, sampling and discarding: a result for CONVEX
     * programs with d variables (here: the LP relaxation). It certifies no
     * binary plan; shown for comparison only. */
    SURETY_ADVICE_DISCARDING = 1,
    /* Fresh scenarios a finished plan needs to be certified when none of
     * them overloads (one-sided Clopper-Pearson, METHODS.md s.4). */
    SURETY_ADVICE_CHECK = 2,
} surety_advice_kind;

typedef struct surety_advice_row {
    surety_advice_kind kind;
    double alpha;      /* allowance as a share of N (k = floor(alpha*N));
                          NaN when the row fixes k instead */
    long k;            /* fixed allowance, or -1 when k follows alpha */
    size_t N;          /* scenarios asked for: N and every larger count
                          pass (checked over a window); 0 when beyond
                          SURETY_ADVICE_NMAX */
    size_t N_first;    /* smallest passing count (may be below N when the
                          condition is not monotone in N) */
    double chernoff;   /* closed forms of the finite rows (scenarios), NaN */
    double hoeffding;  /* when they do not apply */
    const char *source; /* citation, a static string */
} surety_advice_row;

#define SURETY_ADVICE_NMAX 100000000u

typedef struct surety_advice {
    double eps;        /* risk in (0,1) */
    double confidence; /* C = 1 - delta in (0,1) */
    double log_plans;  /* ln |X|, the natural log of the number of plans */
    size_t d;          /* variables of the LP relaxation (job-resource pairs) */
    size_t nrows;
    surety_advice_row *row; /* nrows entries, owned */
} surety_advice;

/* ln |X| and d for a model: every job may go to any allowed resource or,
 * unless required, stay out; d counts the allowed job-resource pairs. For
 * a separate model the finite-set bound must cover every (plan, resource)
 * pair, so log_plans returns ln(m |X|) there. */
double surety_advise_log_plans(const surety_model *model);
size_t surety_advise_variables(const surety_model *model);

/* Sample sizes for risk eps at confidence C: finite-set rows for k = 0 and
 * allowances alpha = eps/4, eps/2, 3eps/4, a fixed-k row when allow >= 0,
 * sampling-and-discarding rows (k = 0 and k = allow), and the fresh check
 * size. All bounds are sufficient, not necessary: conservative. Release
 * with surety_advice_free. Pure; thread-safe. */
surety_code surety_advise(double eps, double confidence, double log_plans,
                          size_t d, long allow, surety_advice *out,
                          surety_error *err);
void surety_advice_free(surety_advice *a);

/* Assurance: solve, check out of sample, and grow the sample (doubling;
 * the first N scenarios are reused) and/or lower the risk solved at, until
 * the one-sided Clopper-Pearson lower bound reaches the target. */
typedef struct surety_assure_options {
    double target;         /* reliability R in (0,1); <= 0: 1 - model risk */
    double confidence;     /* C in (0,1); default 0.95 */
    size_t samples;        /* fresh scenarios per screening; default 10000 */
    size_t certify_samples; /* fresh scenarios of the final certificate,
                              disjoint from screening; 0: = samples */
    size_t start_scenarios; /* first N; 0: the model's */
    size_t max_scenarios;  /* largest N; 0: 16 times the first N */
    int max_steps;         /* solves at most; default 12 */
    double time_limit_s;   /* whole run; <= 0: none */
    surety_solve_options solve; /* per solve; its time limit is capped by
                                   what remains of time_limit_s */
} surety_assure_options;

void surety_assure_options_init(surety_assure_options *opt);

typedef struct surety_assure_step {
    size_t N;              /* scenarios solved on */
    double risk;           /* risk solved at */
    size_t k;              /* allowance floor(risk*N) */
    surety_status status;
    surety_stop stop;
    double objective;      /* in-sample mean profit; NaN without a plan */
    double bound;          /* solver's upper bound */
    size_t M, fit;         /* screening scenarios and how many fit */
    double reliability, lo, hi, lower; /* Clopper-Pearson at confidence */
    double profit_mean;    /* out-of-sample mean profit */
    double solve_seconds, sample_seconds, check_seconds;
} surety_assure_step;

typedef enum surety_assure_end {
    SURETY_ASSURE_MET = 0,        /* certified on fresh scenarios */
    SURETY_ASSURE_NOT_CERTIFIED = 1, /* screening passed, the fresh
                                     certificate did not */
    SURETY_ASSURE_SCENARIO_LIMIT = 2, /* max_scenarios / max_steps reached */
    SURETY_ASSURE_TIME_LIMIT = 3,
    SURETY_ASSURE_INFEASIBLE = 4, /* no plan at the risk levels tried */
    SURETY_ASSURE_INTERRUPTED = 5,
} surety_assure_end;

typedef struct surety_assure_report {
    double target, confidence;
    size_t nsteps;
    surety_assure_step *step; /* nsteps entries, owned */
    long chosen;           /* step whose plan is returned, or -1 */
    surety_plan *plan;     /* that plan (owned), or NULL */
    surety_assure_end end;
    /* the returned plan on scenarios never used for screening: SCREEN
     * stream, scenarios samples .. samples+certify_samples-1 (screening
     * uses 0 .. samples-1) */
    int certified;         /* cert.lower >= target */
    surety_check_report cert; /* valid when plan != NULL */
    double solve_seconds, sample_seconds, check_seconds, seconds;
} surety_assure_report;

/* The model itself is not changed (risk and N are varied on a copy). */
surety_code surety_assure(const surety_model *model,
                          const surety_assure_options *opt,
                          surety_assure_report *out, surety_error *err);
void surety_assure_report_free(surety_assure_report *rep);
const char *surety_assure_end_name(surety_assure_end end);

/* Statistical bounds on the true optimal profit (Pagnoncelli, Ahmed &
 * Shapiro 2009). */
typedef struct surety_bounds_options {
    size_t replications;   /* M independent samples; default 10 */
    double confidence;     /* of the whole interval; default 0.95 */
    double gamma;          /* risk each replication is solved at; <= 0:
                              the model's eps */
    size_t samples;        /* fresh scenarios for the lower side; 10000 */
    surety_solve_options solve;
} surety_bounds_options;

void surety_bounds_options_init(surety_bounds_options *opt);

typedef struct surety_bounds_report {
    double eps, gamma, confidence;
    size_t N, M;
    double *bound;         /* M dual bounds, most optimistic first */
    double *objective;     /* M incumbents, in the same order */
    long *replication;     /* M replication indexes, same order */
    int all_optimal;       /* every replication proven optimal */
    double theta;          /* theta_N = B(floor(gamma N); N, eps) */
    /* the per-replication success probability L rests on: theta_N, less
     * (m-1)(1-theta_N) for a separate model (Bonferroni over its m
     * constraints), less 0.02 when profits vary (see margin); >= 0 */
    double theta_eff;
    /* added to the L-th bound when profits vary with the hours: the
     * sampled mean profit of the true optimal plan may fall below its
     * true mean, by more than margin with probability <= 0.02 (normal
     * approximation, its sd bounded by the summed per-job profit sd over
     * sqrt(N)); 0 for fixed profits */
    double margin;
    long L;                /* order statistic used, 0 when none exists */
    double upper;          /* the L-th largest bound plus margin, NaN when
                              L = 0 */
    double beta_upper;     /* its error probability */
    /* lower side: the most profitable candidate whose reliability is
     * shown >= 1-eps (Bonferroni over candidates), profit measured on
     * fresh scenarios not used for screening */
    surety_plan *plan;     /* owned, or NULL when none qualified */
    long plan_source;      /* replication index, or -1: an extra solve on the
                              model's own sample at risk plan_risk */
    double plan_risk;      /* risk the lower side's plan was solved at */
    double lower;          /* one-sided lower confidence bound on its mean
                              profit; NaN when no plan */
    double profit_mean, profit_sd;
    double reliability_lower; /* its screening lower bound */
    double beta_lower;     /* error probability of the lower side */
    double solve_seconds, check_seconds, seconds;
} surety_bounds_report;

surety_code surety_bounds(const surety_model *model,
                          const surety_bounds_options *opt,
                          surety_bounds_report *out, surety_error *err);
void surety_bounds_report_free(surety_bounds_report *rep);

/* Frontier: the optimal sampled plan per risk level, checked out of sample
 * on common fresh scenarios. Levels are solved from the smallest risk up,
 * each plan passed as the start of the next (it stays feasible). */
typedef struct surety_frontier_options {
    size_t samples;        /* fresh scenarios per level; default 10000 */
    double confidence;     /* default 0.95 */
    surety_solve_options solve;
} surety_frontier_options;

void surety_frontier_options_init(surety_frontier_options *opt);

typedef struct surety_frontier_point {
    double risk;           /* eps of this level */
    size_t k;
    surety_status status;
    surety_stop stop;
    double objective;      /* in-sample mean profit; NaN without a plan */
    double bound;
    long nodes;
    double solve_seconds;
    surety_plan *plan;     /* owned, or NULL */
    int in_sample_ok;      /* the plan satisfies the sampled constraint */
    size_t M, fit;         /* fresh scenarios, how many fit */
    double reliability, lo, hi, lower; /* Clopper-Pearson at confidence */
    double profit_mean;    /* out of sample */
    double overload_hours; /* E[sum over resources of max(0, load-cap)] */
} surety_frontier_point;

typedef struct surety_frontier_report {
    size_t N;              /* scenarios solved on (shared by all levels) */
    double confidence;
    size_t npoints;
    surety_frontier_point *point; /* in the order of the risks given */
    double sample_seconds, solve_seconds, check_seconds;
} surety_frontier_report;

surety_code surety_frontier(const surety_model *model, const double *risks,
                            size_t nrisks, const surety_frontier_options *opt,
                            surety_frontier_report *out, surety_error *err);
void surety_frontier_report_free(surety_frontier_report *rep);
/* Writes the frontier as CSV (one row per level, header first), atomically. */
surety_code surety_frontier_write_csv(const surety_frontier_report *rep,
                                      const char *path, surety_error *err);

/* Charts (cairo; when built without it, these fail with SURETY_EUSAGE and
 * surety_chart_available() is 0). Files are written atomically. */
typedef enum surety_chart_format {
    SURETY_CHART_SVG = 0,
    SURETY_CHART_PNG = 1,
} surety_chart_format;

int surety_chart_available(void);
/* Profit against out-of-sample reliability, one point per level with its
 * Clopper-Pearson interval; `target` (or <= 0 for none) drawn as a line. */
surety_code surety_chart_frontier(const surety_frontier_report *f,
                                  double target, surety_chart_format fmt,
                                  const char *path, surety_error *err);
/* Each resource's load under the plan over the fresh scenarios named by
 * `opt` (stream, first, samples: the ones surety_check counts), as a
 * histogram against its capacity line. */
surety_code surety_chart_loads(const surety_model *model,
                               const surety_plan *plan,
                               const surety_check_options *opt,
                               surety_chart_format fmt, const char *path,
                               surety_error *err);

#ifdef __cplusplus
}
#endif

#endif /* SURETY_H */
