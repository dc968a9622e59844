/* solve.h - the solver state shared by the branch-and-bound modules
 * (presolve, bound, heur, tree) of src/solve/.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_SOLVE_H
#define SURETY_SOLVE_H

#include <stddef.h>
#include <stdint.h>

#include "model.h"
#include "plan.h"
#include "rng.h"
#include "sample.h"
#include "surety.h"

/* Relative slack of the "clearly overloaded" test used for pruning. The
 * search keeps loads incrementally (sums in another order than the
 * canonical recount of plan.h), so a scenario is counted as overloaded by
 * the search only when it exceeds capacity by this much; borderline cases
 * stay live (a weaker, still valid bound) and the exact recount decides. */
#define SURETY_SOLVE_LOAD_TOL 1e-9

/* Four doubles and four 64-bit integers as GCC vector types, for the
 * loops over scenarios (two SSE2 registers each, or one in an AVX2 clone:
 * on x86-64 the functions using them are compiled for both, SURETY_CLONES). */
typedef double surety_v4d __attribute__((vector_size(32)));
typedef int64_t surety_v4i __attribute__((vector_size(32)));
#if defined(__x86_64__) && defined(__GNUC__) && !defined(SURETY_NO_CLONES)
#define SURETY_CLONES __attribute__((target_clones("avx2", "default")))
#else
#define SURETY_CLONES /* other targets: one generic version */
#endif

/* Job state during the search. */
enum { SURETY_JOB_FREE = -2, SURETY_JOB_OUT = -1 };

/* A job at the current node, for the knapsacks (bound.c): decided (or
 * not branched on), open with a possible pair in every open resource, or
 * open with only some. */
enum { SURETY_JK_DECIDED = 0, SURETY_JK_ALL = 1, SURETY_JK_SOME = 2 };

/* Dead flags of a (group, scenario): live, overloaded by the committed
 * load, or fixed as failed by the quantile bound (METHODS.md s.7 rule 4). */
enum { SURETY_LIVE = 0, SURETY_DEAD_LOAD = 1, SURETY_DEAD_BOUND = 2 };

typedef struct surety_solver surety_solver;

/* A live scenario in the cost bound (bound.c): its bound, weight, cost. */
typedef struct solve_cq {
    double v, mu;
    size_t w;
} solve_cq;
/* priced.c: a scenario's value in a resource's walk, and a node's record
 * of a resource's part */
typedef struct solve_pcq {
    double v, mu;
    size_t w;
    uint32_t l;
} solve_pcq;
typedef struct solve_prec {
    double v;   /* the part's bound */
    double fc;  /* prices of the scenarios overloaded outside the list */
    size_t fw;  /* their weight */
    size_t nl;  /* the list's length */
} solve_prec;
typedef struct solve_lp solve_lp; /* lpbound.c */
typedef struct solve_dec solve_dec; /* decomp.c */
/* Classes of a restored node's distance to the cutoff (tree.c) */
enum { SURETY_RN_CLASSES = 16 };
/* The decomposition's phases, as its counts are kept (dec_nodes) */
enum { SURETY_DEC_ROUNDS, SURETY_DEC_PROBES, SURETY_DEC_NODES };
typedef struct solve_lns solve_lns; /* lns.c */

/* A price round of the decomposition (decomp.c) as a watcher sees it,
 * indexed as the caller's model and scenarios; tests/test_solve.c
 * evaluates the bound at the round's prices on its own. */
typedef struct surety_dec_round {
    size_t n, m, N;    /* jobs, resources, scenarios as given */
    const unsigned char *pairs; /* n*m: (j, i) is in resource i's problem */
    const double *lam; /* n job prices; 0 for a job decided at the root */
    const double *mu;  /* m*N scenario prices (mu[i*N + l]), or NULL */
    double bound;      /* the round's value */
    /* NULL during the rounds. After them, once per probed job, with the
     * best round's prices and value above: probed[(j*m + i)*(m + 1) +
     * c + 1] is what surety_dec_probed gives for every job j, resource i
     * and decision c (-1: rejected), the cap on resource i's part that
     * deciding j as c selects; v[i] is the best round's part of i. */
    const double *probed;
    const double *v;
    size_t job;        /* the job just probed */
} surety_dec_round;
typedef void (*surety_dec_watch)(void *ctx, const surety_dec_round *r);

/* An open node waiting in the best-bound pool (tree.c): the resources
 * (or SURETY_JOB_OUT) of the first `depth` jobs of the branching order,
 * and a bound on every completion of it (its parent's). */
typedef struct solve_open {
    double bound;
    size_t depth;
    long *dec;
} solve_open;

/* One search depth's undo record (the trail keeps the rest). */
typedef struct solve_frame {
    size_t trail_mark;   /* trail length before this depth's changes */
    size_t ubt_mark;     /* the same for the trail of scenario bounds */
    size_t klt_mark;     /* the same for the per-resource values */
    double kp;           /* kp of the resource placed in, before */
    long res;            /* resource whose load column was saved, or -1 */
    double ltot;         /* that resource's total load before */
    size_t job;          /* job decided at this depth */
    double fixed_profit; /* P_A before */
    double rej_lam;      /* rejected jobs' decomposition prices before */
    double req_profit;   /* profit of undecided required jobs before */
    size_t req_left;     /* undecided required jobs before */
} solve_frame;

struct surety_solver {
    const surety_model *model;
    const surety_scenarios *sc;
    const surety_solve_options *opt;

    /* ---- problem after presolve ---- */
    size_t n, m;         /* jobs, resources */
    size_t N0;           /* scenarios as given */
    size_t N;            /* scenarios searched: distinct after merging
                          * duplicates, less those set aside */
    size_t N_aside;      /* distinct scenarios every feasible plan fits,
                          * set aside (presolve.c) */
    size_t W;            /* weight of the N scenarios searched (sum cnt) */
    size_t k;            /* allowance floor(eps*N0), counts given scenarios */
    int separate;        /* 1: a chance constraint per resource */
    size_t G;            /* constraint groups: 1 (joint) or m (separate) */
    double *w;           /* N*n base hours, scenario-major, merged rows */
    double *wt;          /* n*N the same, job-major (load updates) */
    unsigned *cnt;       /* N multiplicities (sum = W <= N0) */
    size_t *row_of;      /* N0: the searched row of each given scenario,
                          * SIZE_MAX when it is set aside */
    double *mu;          /* N failure costs (the copies' sum), with
                          * opt->scenario_cost; else NULL */
    solve_cq *cq, *cq2;  /* N each: scratch of the cost bound (bound.c) */
    double *cqv;         /* N: its values, for a selection */
    unsigned *cqw;       /* N: their weights */
    double *cap;         /* m capacities in base hours, C_i / f_i */
    double *cap_hi;      /* m: above this a load is clearly overloaded */
    double *p;           /* n mean profits (sum over l / N0) */
    unsigned char *allowed; /* n*m allowed pairs after presolve */
    unsigned char *required; /* n */
    unsigned char *cand; /* n: optional job worth taking (p > 0, allowed) */
    size_t *order;       /* nb jobs to branch on, in branching order */
    double *bkey;        /* n branching keys (larger first) */
    size_t nb;
    size_t ncand;        /* candidate jobs */
    uint32_t *eff;       /* N*ncand: per scenario, candidates by p/w desc */
    unsigned char *erank; /* N*n: a candidate's position in its scenario's
                           * eff, or NULL (more than 64 candidates) */
    /* (job, resource) pairs still possible at a node: a pair that alone
     * overloads more live scenarios than the node may still fail is out
     * for the whole subtree (bound.c, possible_pairs) */
    unsigned char *pxs;  /* (nb+2)*n*m per depth */
    uint32_t *pxo;       /* (nb+2)*n*m: the live weight a possible pair
                          * overloads alone */
    size_t *ppmark;      /* nb+2: trail length when the row was filled */
    size_t *died;        /* G*N scratch: scenarios dead since the parent's */
    const unsigned char *pxcur; /* the current node's row of pxs */
    unsigned char *ropen; /* m: some open job can still enter resource i */
    unsigned char *jk;   /* n: SURETY_JK_* of each job at the current node */
    uint32_t *freec;     /* n: the open candidates of the current node */
    uint32_t *pbits;     /* n: resources an open job may enter, as bits
                          * (m <= 32) */
    unsigned char *kfit; /* n: knapsack scratch, the job fits alone (0 for
                          * decided jobs) */
    size_t nfree;
    uint32_t *light;     /* N*nb: per scenario, jobs to decide by hours asc */
    int *rclass;         /* m: identical-resource class (symmetry) */
    double pscale;       /* sum |p_j|, for absolute tolerances */

    /* ---- search state ---- */
    long *state;         /* n: SURETY_JOB_FREE, SURETY_JOB_OUT or resource */
    size_t *nin;         /* m: jobs placed in resource i */
    double *load;        /* m*N, resource-major: base hours placed */
    double *ltot;        /* m: sum of load over the N scenario rows */
    double *wtot;        /* n: sum of wt over the N scenario rows */
    unsigned char *dead; /* G*N flags */
    int64_t *lw;         /* G*N: the scenario's weight when live, else 0 */
    size_t *dead_w;      /* G: weight of dead scenarios */
    size_t *trail;       /* (g*N + l) << 2 | old flag */
    size_t trail_len, trail_cap;
    double *saved_load;  /* (nb+1)*N: load column saved per depth */
    size_t *saved_dead_w; /* (nb+1)*G */
    solve_frame *frames; /* nb+1 */
    double fixed_profit; /* P_A: profit of placed jobs */
    double req_profit;   /* profit of undecided required jobs */
    size_t req_left;
    /* bound scratch */
    double *ub;          /* N values */
    unsigned *ubw;       /* N weights */
    double *kn;          /* m scratch: residuals when m > 64 */
    /* per-scenario bounds (absolute) of the current node; a child
     * overwrites only those it recomputes, the old values go on a trail */
    double *ubv;         /* N */
    uint32_t *ubt_l;     /* (nb+1)*N trail: scenario */
    double *ubt_v;       /* (nb+1)*N trail: its value before */
    size_t ubt_len;
    /* per depth, the scenarios a child of a node at that depth recomputes
     * (the ones that can decide its quantile), or all of them */
    uint32_t *rl;        /* (nb+2)*rlcap */
    size_t *rln;         /* nb+2: list lengths; SIZE_MAX: every scenario */
    size_t rlcap;
#ifdef SURETY_CHECK_INVARIANTS
    double *chk_ub;      /* (nb+2)*N: the values ubv must hold per depth */
    double *chk_nodec;   /* m: the least value the restored node's own
                          * solves gave (decomp.c), INFINITY before them */
#endif
    unsigned long evals; /* bound evaluations (refresh schedule) */
    /* scenario knapsacks evaluated by the node bounds (bound.c): the
     * work in which the decomposition's share is counted (tree.c) */
    unsigned long long knaps;
    size_t *rix;         /* N: scenarios recomputed by the last evaluation */
    size_t nrix;
    int rix_all;         /* the last evaluation recomputed every scenario */
    /* per-resource bound with Lagrangian prices on "each job once" */
    double *lam;         /* n prices, 0 <= lam_j <= p_j (0 off candidates) */
    double *rp;          /* n reduced profits max(p_j - lam_j, 0) */
    uint32_t *leff;      /* N*nl: per scenario, jobs with rp > 0 by rp/w */
    size_t nl;
    double *kl;          /* m*N per-resource knapsack values (upper bounds
                          * where kept from an ancestor: lagr_quantiles) */
    /* the per-resource values kept down the tree (bound.c, lagr_quantiles),
     * or klv NULL when they would take too much memory (then every node
     * evaluates them all): klv holds a value plus kp_i of the node that
     * computed it, kp the reduced profits of the jobs the path placed in
     * each resource, and the trail the values a node overwrote */
    double *klv;         /* m*N */
    double *kp;          /* m */
    double *qk;          /* (nb+1)*m: each row's per-resource quantile plus
                          * its kp, the next row's threshold */
    uint32_t *klt_e;     /* (nb+1)*m*N trail: entry i*N + l */
    double *klt_v;       /* (nb+1)*m*N trail: its value before */
    size_t klt_len;
    unsigned long kevals; /* per-resource evaluations (refresh schedule) */
    double *ql;          /* m per-resource quantiles */
    double *lx;          /* n scratch: fractions taken */
    int use_lagr;        /* evaluate the per-resource bound at nodes */
    double root_agg, root_lagr; /* the two bounds at the root */

    /* heuristic scratch (heur.c) */
    double *hload;       /* m*N resource-major loads, base hours */
    unsigned char *hover; /* m*N: resource overloaded (capacity test) */
    unsigned *hov;       /* G*N: overloaded resources of the group */
    size_t *hfail;       /* G: weight of failed scenarios */
    double *htot;        /* m: total load over scenarios, for tie-breaks */
    double *hkey;        /* n: greedy key p_j / (N-k)-th smallest hours */
    size_t *hord;        /* ncand candidates by hkey desc */
    size_t *hordp;       /* ncand candidates by p desc */
    long *hplan;         /* n */
    long *hsave;         /* n */
    long *tplan, *tfix;  /* n each: plans built by the tree */
    uint64_t hseed;      /* random sequence of the search's improvement runs */
    size_t hiters;       /* improvement iterations per run in the tree */
    /* the tree's improvement runs that found nothing space themselves
     * out (tree.c, dive): a run every 2^ils_step turns; ils_miss runs in
     * a row without a better plan at that step; ils_inc the best plan's
     * value when the step was last reset */
    unsigned ils_step, ils_miss;
    size_t ils_turn;
    double ils_inc;

    /* ---- incumbent ---- */
    int have_inc;
    double inc;          /* objective of the incumbent (canonical sum) */
    long *inc_plan;      /* n */
    size_t inc_fit;

    /* ---- limits and statistics ---- */
    double t0;           /* start, seconds on the monotonic clock */
    double last_log;
    unsigned long log_lines;
    long nodes;
    int stop;            /* 0 running, else a surety_stop + 1 */
    double root_bound;
    double *open_bound;  /* nb+1: best bound of unvisited children per depth */
    solve_open *pool;    /* max-heap on bound of the open nodes not on the path */
    size_t npool, cpool;
    long spill_at;       /* node count at which the dive hands its open
                          * children to the pool; 0: never */
    size_t restart_row;  /* depth of the node restored from the pool: its
                          * row has no valid parent row (bound.c) */
    size_t depth;

    /* ---- LP bound (lpbound.c) ---- */
    solve_lp *lpb;       /* NULL: not used */
    long lp_after;       /* nodes after which the root LP is solved */
    int lp_costly;       /* where lp_after < 0: set up and solved once the
                          * price rounds prove costly (tree.c, lp_due) */
    int lp_on;           /* the root LP has been solved */
    int lp_nodes;        /* the LP also bounds each restored node and the
                          * first levels of its dive (tree.c, lp_bound) */
    size_t dive_top;     /* depth of the node the current dive started at */
    long lp_solves, lp_iters, lp_prunes, lp_fixed, lp_bounded;
    double lp_root;      /* the LP bound at the root, or INFINITY */
    /* ---- resource-decomposition bound (decomp.c) ---- */
    solve_dec *dec;      /* NULL until the first round */
    long dec_after;      /* tree nodes before the first round; < 0 never */
    int dec_done;        /* no more rounds or probes */
    int dec_ended;       /* ended after a costly first round (tree.c) */
    double dec_root;     /* the best round's value, or INFINITY */
    long dec_iters;      /* price rounds */
    /* the one-resource solves' nodes and the time spent, apart for the
     * rounds, the probes and the restored nodes (SURETY_DEC_*): each has
     * its own line in the log */
    long dec_nodes[3];
    double dec_secs[3];
    long dec_twins;      /* sub-solves answered by an identical one's */
    long dec_found; /* incumbents made from the rounds' plans */
    long dec_made;  /* plans made from them (every round while they pay,
                     * then fewer: decomp.c, price_round) */
    unsigned long long dec_knaps; /* knapsacks of the sub-solves */
    unsigned long long dec_knaps0; /* knaps when the first step came */
    int dec_started;     /* the first step has come */
    double dec_master_secs; /* the bundle's master problems' share */
    double dec_heur_secs;   /* the rounds' plans' share (surety_heur_from) */
    double *dec_lam;     /* n: the prices of the best round (dec_root) */
    double rej_lam;      /* sum of dec_lam over the jobs rejected on the
                          * current path: a node's bound is at most
                          * dec_root - rej_lam (tree.c, dec_cap) */
    double *dec_v;       /* m: the best round's V_i bounds */
    double *dec_mu;      /* m*N0: the best round's scenario prices, or
                          * NULL (joint constraint only) */
    double *dec_mtot;    /* N0: their sums over the resources */
    double *dec_mrow;    /* N: dec_mtot summed over each searched row's
                          * given copies */
    size_t *dec_msrt;    /* N0: the given scenarios by dec_mtot, largest
                          * first */
    double *dec_mpre;    /* k+1: the d largest dec_mtot summed, d = 0..k;
                          * dec_mpre[k] is the scenario prices' share of
                          * dec_lsum, summed as top_k sums it, and
                          * dec_mpre[d] the most that d dead scenarios take
                          * from it (tree.c, dead_share) */
    double dec_lsum;     /* its sum of prices (dec_root = dec_lsum + the
                          * sum of dec_v) */
    /* after the rounds, probes (decomp.c): n x m bounds on V_i at the best
     * round's prices with job j forced into resource i (dec_vin) or kept
     * out of it (dec_vout); dec_c holds the current path's V_i caps, the
     * smallest entry its decisions select, saved per depth */
    double *dec_vin, *dec_vout, *dec_c, *dec_saved_c;
    long dec_probes, dec_ruled; /* one-resource probes; pairs ruled out */
    long dec_nsolves;    /* one-resource solves at restored nodes */
    long dec_npruned;    /* restored nodes those solves pruned */
    long dec_nleft;      /* restored nodes left without them (tree.c,
                          * node_split: at their distance such solves
                          * took off little) */
    /* per distance class (tree.c, dist_class): restored nodes solved,
     * and the share of their distance to the cutoff that the solves took
     * off, summed (a pruned node's as 1); skipped nodes counted for the
     * probe */
    long rn_tried[SURETY_RN_CLASSES];
    double rn_took[SURETY_RN_CLASSES];
    long rn_skips;
    long dec_ntwins;     /* besides those, values copied from an identical
                          * resource solved at the same node */
    int dec_nodes_on;    /* restored nodes solve their own V_i (tree.c) */
    /* each resource's part of a node's cap bounded at the node (priced.c),
     * from the best round's prices once the probes start */
    int pc_state;        /* 0 not built yet, 1 on, -1 off */
    size_t pc_nq;        /* open jobs of positive reduced profit at the root */
    uint32_t *pc_job;    /* pc_nq: those jobs */
    double *pc_q;        /* pc_nq: their reduced profits p_j - lam_j */
    uint32_t *pc_ord;    /* N*pc_nq: per searched row, positions in pc_job
                          * by reduced profit per hour, largest first */
    unsigned char *pc_rank; /* N*pc_nq: each one's place in its row's
                             * order, or NULL (more than 64 jobs) */
    double *pc_mu;       /* m*N: each resource's prices per searched row */
    uint32_t *pc_ok;     /* pc_nq: scratch, the open ones of a resource */
    solve_pcq *pc_cq;    /* N: scratch of the walk */
    double *pc_v;        /* N: its values, for a selection */
    unsigned *pc_w;      /* N: their weights */
    size_t pc_L;         /* scenarios a child recomputes (its parent's
                          * list): k+17, at most N */
    solve_prec *pc_rec;  /* (nb+2)*m: per depth and resource, its value */
    uint32_t *pc_rows;   /* (nb+2)*m*pc_L: and its list, by value */
    size_t *pc_src;      /* (nb+2)*m: where the node's record is (a
                          * child keeps its parent's for the resources
                          * it places no job in) */
    unsigned char *pc_have; /* nb+2: the records of that depth are the
                             * current path's node's */
    long pc_cuts;        /* nodes whose bound it took to the cutoff */
    double dec_rule_inc; /* the incumbent when pairs were last ruled out */
    surety_dec_watch dec_watch; /* called after each price round, or NULL */
    void *dec_watch_ctx;
    /* ---- parts of the incumbent solved again (lns.c) ---- */
    solve_lns *lns;      /* NULL until the first part */
    long lns_after;      /* tree nodes (or their work) before the first
                          * part; < 0 never */
    int lns_started;
    unsigned long long lns_knaps0; /* knaps when the first part came */
    unsigned long long lns_knaps;  /* knapsacks of the parts' searches */
    long lns_nodes, lns_parts, lns_found; /* their nodes, parts, plans */
    long lns_kept;       /* parts that pinned a placed job the search leaves
                          * out (a caller's starting plan's) */
    double lns_secs;     /* their time */
    double lns_share;    /* their share of the tree's knapsacks */
    int lns_idle;        /* parts in a row without a better plan */
    double lns_inc;      /* the incumbent when the last part ended */
    /* the smaller of lp_root and dec_root: caps every open node */
    double root_cap;
    double lp_deadline;  /* monotonic seconds after which an LP call stops */
};

/* presolve.c: fills the problem part of the state from model and sc.
 * Returns SURETY_OK, or an error; `reason` receives an infeasibility
 * sentence when the model is proven infeasible already (then *infeasible
 * is set). */
surety_code surety_presolve_run(surety_solver *s, char *reason,
                                size_t reason_len, int *infeasible,
                                surety_error *err);
void surety_presolve_free(surety_solver *s);

/* bound.c: quantile bound of the current node with scenario fixing
 * (METHODS.md s.7 rules 1, 3, 4). Returns the bound, or -INFINITY when the
 * node is pruned by more than k dead scenarios. Pushes fixings onto the
 * trail. `cutoff` is the value a completion must exceed to matter; `row`
 * is the node's depth (decisions made), whose row of ubst it fills from
 * the row above. */
double surety_bound_node(surety_solver *s, double cutoff, size_t row);

/* bound.c: chooses the Lagrangian prices at the root by subgradient steps
 * (needs the search arrays), except in a light joint solve, where the
 * aggregated bound alone is used; 0, or -1 when out of memory. */
int surety_bound_init(surety_solver *s, int light);
void surety_bound_free(surety_solver *s);

/* heur.c: greedy insertion with a violation budget and local search
 * (METHODS.md s.8). Completes the partial assignment `fixed` (n entries,
 * SURETY_JOB_FREE for open jobs) into plan (n entries); returns 1 when the plan
 * satisfies the allowance by the heuristic's own count. */
int surety_heur_complete(surety_solver *s, const long *fixed, long *plan,
                         int polish);

/* heur.c: the iterated local search from a complete plan (the
 * incumbent), `iters` iterations continuing the solver's own random
 * sequence, then local search; returns 1 when plan became more profitable
 * and stays within the allowance by the heuristic's count. */
int surety_heur_improve(surety_solver *s, long *plan, size_t iters);

/* heur.c: a plan from a price round's one-resource plans (want: n*m
 * flags, the resources whose plans hold each job), repaired to the
 * allowance and improved by the local search; 1 when one is found. */
int surety_heur_from(surety_solver *s, const unsigned char *want, long *plan,
                     uint64_t *seed);

void surety_heur_free(surety_solver *s);

/* solve.c: offers a candidate plan (n entries); it is re-counted exactly
 * and becomes the incumbent when feasible and better. Returns 1 when
 * accepted. */
int surety_solve_offer(surety_solver *s, const long *plan);
double surety_solve_now(void);
void surety_solve_log_progress(surety_solver *s, int force, char mark);

/* priced.c: sum over the resources of the smaller of dec_c[i] and
 * resource i's part of the current node's completions that beat the
 * cutoff, bounded at the node at the best round's prices; NAN where it
 * does not apply (yet). */
#define SURETY_PC_ALL (-3L) /* surety_priced_parts: every resource anew */
double surety_priced_parts(surety_solver *s, size_t depth, long last);
/* the node at depth `depth` was bounded without it */
static inline void surety_priced_forget(surety_solver *s, size_t depth)
{
    if (s->pc_have)
        s->pc_have[depth] = 0;
}
void surety_priced_free(surety_solver *s);

/* solve.c: surety_solve, with `light` non-zero for a solve inside
 * another (decomp.c, lns.c), whose caller passes a good start: the root's
 * greedy runs without its local search, which would otherwise take most
 * of the work of a short one-resource solve, and a joint solve bounds by
 * the aggregated bound alone (surety_bound_init). */
surety_code surety_solve_inner(const surety_model *model,
                               const surety_scenarios *sc,
                               const surety_solve_options *opt, int light,
                               surety_result **out, surety_error *err);

/* solve.c: surety_solve with `watch` called after each price round of the
 * decomposition (for tests). */
surety_code surety_solve_watched(const surety_model *model,
                                 const surety_scenarios *sc,
                                 const surety_solve_options *opt,
                                 surety_dec_watch watch, void *watch_ctx,
                                 surety_result **out, surety_error *err);

#ifdef SURETY_CHECK_INVARIANTS
/* solve.c, invariant build only: the best completion of the current node
 * on the pairs possible at the root (row 0 of pxs; decided jobs kept
 * where they are), found by this solver without the decomposition (a
 * path tested against enumeration and CBC on its own); NAN when that
 * solve does not prove an optimum. */
double surety_chk_completion(const surety_solver *s);
/* the same on the pairs px allows (a node's row of pxs) */
double surety_chk_completion_on(const surety_solver *s,
                                const unsigned char *px);
#endif

/* solve.c: the scenario knapsacks a solve's node bounds evaluated (the
 * work unit of tree.c's decomposition share). */
unsigned long long surety_result_knaps(const surety_result *res);

/* The probed bound on resource i's part (decomp.c) that deciding job j
 * selects: c == i places j in i (forced-in table), anything else keeps it
 * out of i (kept-out table). Only once the tables exist (s->dec_vin). */
static inline double surety_dec_probed(const surety_solver *s, size_t j,
                                       size_t i, long c)
{
    size_t e = j * s->m + i;
    return (long)i == c ? s->dec_vin[e] : s->dec_vout[e];
}

/* decomp.c: one step of the resource-decomposition bound, at the root
 * state (between dives): a price round, or once the rounds are over, the
 * probes of the next job in the branching order (the first call sets it
 * up; the call that ends the rounds sets up the probe tables). Sub-solves
 * stop at `deadline` (monotonic seconds; INFINITY: none). A round that
 * improves lowers s->dec_root, a bound on every plan that beats the
 * cutoff. Returns 0 when more steps may help (including the call after
 * the last round: the probes come next), 1 when none will (m < 2, probes
 * done, gap closed, or a limit came first), -1 out of memory (then no
 * probe table is left allocated). */
int surety_decomp_round(surety_solver *s, double deadline);
/* Rules out of the root's row of pxs the pairs whose probed cap alone
 * (once the probes have run) leaves no plan above the cutoff; for when the
 * incumbent has improved. */
void surety_decomp_rule(surety_solver *s);
/* decomp.c: the problems of resources i0 .. i0+cnt-1 at a restored node
 * with all of its decisions, which lower their dec_c; 0, or 2 when a limit
 * stopped one. They run at once on up to surety_decomp_threads(s) threads
 * (opt->threads, at most m; the rounds and probes use them as well). */
int surety_decomp_node(surety_solver *s, size_t i0, size_t cnt,
                       double deadline);
/* The most threads the one-resource solves run on (opt->threads beyond
 * it, or beyond the resources, adds none). */
#define SURETY_DEC_MAX_THREADS 64
size_t surety_decomp_threads(const surety_solver *s);
void surety_decomp_free(surety_solver *s);

/* lns.c: one part of the incumbent solved again (two or three resources
 * chosen at random, about half of their jobs and of the jobs left out
 * freed, the rest kept), its search stopping at `deadline`. Returns 1
 * when it made a better plan (accepted by surety_solve_offer), 0 when
 * not (also when m < 2 or nothing was freed), -1 out of memory. */
int surety_lns_step(surety_solver *s, double deadline);
void surety_lns_free(surety_solver *s);

/* lpbound.c: the LP relaxation of the strengthened formulation as a
 * second node bound. init returns 0, 1 when there is nothing to decide
 * (no LP), -1 when out of memory. node is called after
 * surety_bound_node(s, cutoff, row) found qbound > cutoff; it returns the
 * smaller of qbound and the LP's safe bound, solving with up to `rounds`
 * rounds of added scenario rows and about `work` simplex work (dual
 * iterations times rows times columns), and rules out of row `row` of pxs the
 * pairs whose reduced cost shows they lead to no plan above cutoff
 * (their count in *fixed). */
int surety_lpb_init(surety_solver *s);
double surety_lpb_node(surety_solver *s, double cutoff, size_t row,
                       double qbound, int rounds, double work,
                       size_t *fixed);
void surety_lpb_free(surety_solver *s);
/* The LP's pair columns: the allowed (job, resource) pairs it decides. */
size_t surety_lpb_pairs(const surety_solver *s);

/* tree.c: the value a bound must beat: the incumbent plus the user's gap
 * tolerance (never below rounding noise), -INFINITY before any plan. */
double surety_cutoff(const surety_solver *s);
/* bound.c: the value at weighted rank b (0-based) of vals[0..c-1], weights
 * wts; reorders both; needs total weight > b */
double surety_select_weighted(double *vals, unsigned *wts, size_t c,
                              size_t b);

/* tree.c: 1 when a limit (time, nodes, interrupt) has stopped the search;
 * sets s->stop. */
int surety_tree_stopped(surety_solver *s);

/* tree.c: the depth-first branch and bound. Returns the best bound of the
 * open part of the tree when stopped early, or -INFINITY when finished. */
double surety_tree_search(surety_solver *s);

#endif
