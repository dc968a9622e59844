/* tree.c - depth-first branch and bound on job placements with a trail
 * (undo stack) for loads and dead scenarios (METHODS.md s.7).
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "solve/solve.h"

static size_t group_of(const surety_solver *s, size_t i)
{
    return s->separate ? i : 0;
}

/* Absolute slack under which a bound counts as not beating the incumbent:
 * the user's relative gap, and never below rounding noise of the sums. */
double surety_cutoff(const surety_solver *s)
{
    if (!s->have_inc)
        return -INFINITY;
    double tol = s->opt->gap * fabs(s->inc);
    double noise = 1e-12 * (s->pscale + 1);
    return s->inc + (tol > noise ? tol : noise);
}

/* Scenario l of group g is overloaded by the committed load: dead, on
 * the trail. */
static void overload(surety_solver *s, size_t g, size_t l)
{
    size_t idx = g * s->N + l;
    unsigned char *dead = s->dead + idx;
    if (*dead == SURETY_DEAD_LOAD)
        return;
    if (*dead == SURETY_LIVE) {
        s->dead_w[g] += s->cnt[l];
        s->lw[idx] = 0;
    }
    s->trail[s->trail_len++] = idx << 2 | *dead;
    *dead = SURETY_DEAD_LOAD;
}

/* ld += wj over the N scenarios; those now above hi are overloaded. Four
 * scenarios at a time (most blocks have none above hi). */
SURETY_CLONES
static void add_load(surety_solver *s, size_t g, double *ld, const double *wj,
                     double hi)
{
    size_t N = s->N, l = 0;
    const surety_v4d h = {hi, hi, hi, hi};
    for (; l + 4 <= N; l += 4) {
        surety_v4d a, w;
        memcpy(&a, ld + l, sizeof a);
        memcpy(&w, wj + l, sizeof w);
        a += w;
        memcpy(ld + l, &a, sizeof a);
        surety_v4i o = (surety_v4i)(a > h);
        if (o[0] | o[1] | o[2] | o[3])
            for (size_t u = l; u < l + 4; u++)
                if (ld[u] > hi)
                    overload(s, g, u);
    }
    for (; l < N; l++) {
        ld[l] += wj[l];
        if (ld[l] > hi)
            overload(s, g, l);
    }
}

/* Decides job j at depth d: c >= 0 places it in resource c, SURETY_JOB_OUT
 * rejects it. Returns 0 when the node is already infeasible (more than k
 * scenarios clearly overloaded in a group). O(N) work. */
static int apply(surety_solver *s, size_t d, size_t j, long c)
{
    size_t N = s->N, G = s->G;
    solve_frame *f = &s->frames[d];
    f->trail_mark = s->trail_len;
    f->ubt_mark = s->ubt_len;
    f->klt_mark = s->klt_len;
    f->res = c;
    f->job = j;
    f->fixed_profit = s->fixed_profit;
    f->rej_lam = s->rej_lam;
    f->req_profit = s->req_profit;
    f->req_left = s->req_left;
    memcpy(s->saved_dead_w + d * G, s->dead_w, G * sizeof *s->dead_w);
    s->state[j] = c;
    if (s->required[j]) {
        s->req_left--;
        s->req_profit -= s->p[j];
    }
    if (s->dec_c) {
        /* the probed V_i bounds this decision selects (decomp.c) */
        size_t m = s->m;
        memcpy(s->dec_saved_c + d * m, s->dec_c, m * sizeof *s->dec_c);
        for (size_t i = 0; i < m; i++) {
            double v = surety_dec_probed(s, j, i, c);
            if (v < s->dec_c[i])
                s->dec_c[i] = v;
        }
    }
    if (c < 0) {
        if (s->dec_lam)
            s->rej_lam += s->dec_lam[j];
        return 1;
    }
    size_t i = (size_t)c, g = group_of(s, i);
    if (s->klv) {
        f->kp = s->kp[i];
        s->kp[i] += s->rp[j];
    }
    s->fixed_profit += s->p[j];
    s->nin[i]++;
    f->ltot = s->ltot[i];
    s->ltot[i] += s->wtot[j];
    double *ld = s->load + i * N;
    memcpy(s->saved_load + d * N, ld, N * sizeof *ld);
    add_load(s, g, ld, s->wt + j * N, s->cap_hi[i]);
    return s->dead_w[g] <= s->k;
}

static void undo(surety_solver *s, size_t d)
{
    size_t N = s->N, G = s->G;
    solve_frame *f = &s->frames[d];
    while (s->trail_len > f->trail_mark) {
        size_t e = s->trail[--s->trail_len];
        s->dead[e >> 2] = (unsigned char)(e & 3);
        s->lw[e >> 2] = (e & 3) == SURETY_LIVE ? s->cnt[(e >> 2) % N] : 0;
    }
    while (s->ubt_len > f->ubt_mark) {
        s->ubt_len--;
        s->ubv[s->ubt_l[s->ubt_len]] = s->ubt_v[s->ubt_len];
    }
    while (s->klt_len > f->klt_mark) {
        s->klt_len--;
        s->klv[s->klt_e[s->klt_len]] = s->klt_v[s->klt_len];
    }
    memcpy(s->dead_w, s->saved_dead_w + d * G, G * sizeof *s->dead_w);
    if (f->res >= 0) {
        memcpy(s->load + (size_t)f->res * N, s->saved_load + d * N,
               N * sizeof *s->load);
        s->nin[f->res]--;
        s->ltot[f->res] = f->ltot;
        if (s->klv)
            s->kp[f->res] = f->kp;
    }
    if (s->dec_c)
        memcpy(s->dec_c, s->dec_saved_c + d * s->m, s->m * sizeof *s->dec_c);
    s->state[f->job] = SURETY_JOB_FREE;
    s->fixed_profit = f->fixed_profit;
    s->rej_lam = f->rej_lam;
    s->req_profit = f->req_profit;
    s->req_left = f->req_left;
}

/* The partial plan with every undecided job rejected is itself a plan when
 * no required job is open; offer it when it would beat the incumbent and
 * the search's own count keeps every group within the allowance. */
static void try_partial(surety_solver *s)
{
    if (s->req_left || !(s->fixed_profit > surety_cutoff(s)))
        return;
    for (size_t g = 0; g < s->G; g++) {
        size_t w = 0;
        for (size_t l = 0; l < s->N; l++)
            if (s->dead[g * s->N + l] == SURETY_DEAD_LOAD)
                w += s->cnt[l];
        if (w > s->k)
            return;
    }
    long *plan = s->tplan;
    for (size_t j = 0; j < s->n; j++)
        plan[j] = s->state[j] >= 0 ? s->state[j] : SURETY_JOB_OUT;
    if (surety_solve_offer(s, plan))
        surety_solve_log_progress(s, 1, '*');
}

int surety_tree_stopped(surety_solver *s)
{
    const surety_solve_options *o = s->opt;
    if (s->stop)
        return 1;
    if (o->interrupt && *o->interrupt)
        s->stop = SURETY_STOP_INTERRUPT + 1;
    else if (o->node_limit > 0 && s->nodes >= o->node_limit)
        s->stop = SURETY_STOP_NODES + 1;
    else if (o->time_limit_s > 0 &&
             surety_solve_now() - s->t0 >= o->time_limit_s)
        s->stop = SURETY_STOP_TIME + 1;
    return s->stop != 0;
}

/* ---- the pool of open nodes: a max-heap on bound ---- */

static int pool_before(const solve_open *a, const solve_open *b)
{
    /* larger bound first; among equal bounds the deeper node */
    if (a->bound != b->bound)
        return a->bound > b->bound;
    return a->depth > b->depth;
}

/* Adds the node "decisions of depths 0..d-1 as on the path, then c at
 * depth d" with the given bound. Returns 0 when out of memory (the caller
 * then keeps searching depth first). */
static int pool_push(surety_solver *s, size_t d, long c, double bound)
{
    if (s->npool == s->cpool) {
        size_t cap = s->cpool ? 2 * s->cpool : 256;
        solve_open *np = surety_xrealloc(s->pool, cap, sizeof *np);
        if (!np)
            return 0;
        s->pool = np;
        s->cpool = cap;
    }
    long *dec = surety_xmalloc(d + 1, sizeof *dec);
    if (!dec)
        return 0;
    for (size_t t = 0; t < d; t++)
        dec[t] = s->state[s->order[t]];
    dec[d] = c;
    size_t at = s->npool++;
    solve_open e = {bound, d + 1, dec};
    while (at > 0 && pool_before(&e, &s->pool[(at - 1) / 2])) {
        s->pool[at] = s->pool[(at - 1) / 2];
        at = (at - 1) / 2;
    }
    s->pool[at] = e;
    return 1;
}

static solve_open pool_pop(surety_solver *s)
{
    solve_open top = s->pool[0], last = s->pool[--s->npool];
    size_t at = 0, n = s->npool;
    for (;;) {
        size_t c = 2 * at + 1;
        if (c >= n)
            break;
        if (c + 1 < n && pool_before(&s->pool[c + 1], &s->pool[c]))
            c++;
        if (!pool_before(&s->pool[c], &last))
            break;
        s->pool[at] = s->pool[c];
        at = c;
    }
    if (n > 0)
        s->pool[at] = last;
    return top;
}

/* The pool holds at most about 256 MB of open nodes; beyond it the dives
 * run to the end (depth first), which needs no more memory. */
static size_t pool_max(const surety_solver *s)
{
    return ((size_t)256 << 20) / (sizeof(solve_open) + (s->nb + 1) * sizeof(long));
}

/* The LP bound (lpbound.c) of a node at depth `row` whose other bounds
 * came to b > cut, with a few rounds of scenario rows, where the search
 * bounds nodes by their LP (lp_nodes): each node restored from the pool,
 * and the nodes of the first SURETY_LP_TOP levels of its dive. Returns
 * the node's bound. Those nodes head the largest subtrees, and the pool
 * orders them by bound: with the branching order fixed, a node's LP falls
 * only as the jobs the LP splits get decided, a few levels down. On `gen.py
 * diff -n 60 -m 3 -N 100 --seed 2` the restored nodes alone took the 60-s
 * gap from 9.10% to 7.32%, and with the first 1 / 3 / 6 levels of their
 * dives to 7.20 / 7.13 / 7.73% (bench/README.md, "The LP at the top of
 * each dive"). */
#define SURETY_LP_TOP 3

static double lp_bound(surety_solver *s, size_t row, double cut, double b)
{
    if (!s->lp_nodes || !s->lp_on || !(b > cut))
        return b;
    size_t fixed = 0;
    s->lp_deadline = INFINITY;
    double lb = surety_lpb_node(s, cut, row, b, 3, 1e9, &fixed);
    s->lp_bounded++;
    s->lp_fixed += (long)fixed;
    if (!(lb > cut))
        s->lp_prunes++;
    return lb;
}

/* The root LP, once the search has run lp_after nodes without closing
 * (the search state is the root's: between dives): solved to the end of
 * its rows, it caps every bound from then on, and its reduced costs rule
 * pairs out of the root's row, which every restored node starts from. */
static void root_lp(surety_solver *s)
{
    size_t fixed = 0;
    double cut = surety_cutoff(s);
    /* under a time limit, at most a quarter of the time left */
    double now = surety_solve_now(), tl = s->opt->time_limit_s;
    s->lp_deadline = tl > 0 ? now + 0.25 * (s->t0 + tl - now) : INFINITY;
    /* about 15 s of this machine's dense simplex (bench/README.md) */
    s->lp_root = surety_lpb_node(s, cut, 0, INFINITY, 1000, 3e10, &fixed);
    s->lp_fixed += (long)fixed;
    s->lp_on = 1;
    if (s->lp_root < s->root_cap)
        s->root_cap = s->lp_root;
    surety_solve_log_progress(s, 1, 'R');
}

/* Is the root LP due? LP_BY_NODES once the tree has run lp_after nodes;
 * or, where the decomposition bound starts instead (lp_costly),
 * LP_BY_ROUND once its first price round has searched SURETY_LP_COSTLY
 * one-resource nodes or more. Such rounds come with 60 jobs and more,
 * whose one-resource problems hold many jobs each: on `gen.py diff -n 60
 * -m 3` the first round searched 316 000 nodes at N=100 and 600 000 at
 * N=1000, where the first rounds of the 40-job instances search 1
 * 600-36 000 (the most at capacity 0.5). There the LP, seconds at most, is
 * far below what the rounds reach within a minute (N=1000: 60 199 against
 * 65 661 after 6 rounds in 51 s; bench/README.md, "The root LP where the
 * price rounds are costly"). The LP is set up then, once, and kept only if
 * it is small enough to end soon: at most SURETY_LP_SMALL pair-scenario
 * coefficients (pair columns times N). With 180-240 pairs at 1000
 * scenarios it took about 4-5 s; with 500 and 1000 pairs it had not ended
 * after a quarter of a 60-s limit, its bound far above the tree's. */
#define SURETY_LP_COSTLY 131072
#define SURETY_LP_SMALL 262144.0
/* ... and where it is smaller still, SURETY_LP_NODES pair-scenario
 * coefficients at most, and the decomposition has ended above it
 * (costly_rounds_end), the LP also bounds the nodes that head the largest
 * subtrees (lp_bound), unless the caller says. Measured in 60-s runs of
 * `gen.py` models of 60-100 jobs and 3 resources (bench/README.md, "The
 * LP at the top of each dive"):
 * - 100 scenarios, 18 000-30 000 coefficients: the gaps fell on eight of
 *   nine models, by 0.7-3.5 points, and stayed on the ninth; at 100 jobs
 *   only after about 30 s, until when the node LPs cost the tree more
 *   than they prune;
 * - 200 scenarios, 48 000: 0.5 points, on the one model measured; the
 *   mark stays below it;
 * - 54 000-60 000: the same bound, and one plan worse;
 * - 1000 scenarios: a call of the simplex took about 60 ms (3 ms at 100);
 *   the node LPs pruned nothing in a minute and left the tree a twentieth
 *   of its nodes.
 * Where the rounds go on, node LPs showed no clear gain (15.19% to 14.39%,
 * 6.18% to 6.28%, on two models of 80 jobs): the time stays theirs. */
#define SURETY_LP_NODES 32768.0
enum { LP_NOT_DUE, LP_BY_NODES, LP_BY_ROUND };

static int lp_due(surety_solver *s)
{
    if (s->lp_on)
        return LP_NOT_DUE;
    if (s->lp_after > 0)
        return s->lpb && s->nodes >= s->lp_after ? LP_BY_NODES : LP_NOT_DUE;
    if (!s->lp_costly || s->dec_iters != 1 ||
        s->dec_nodes[SURETY_DEC_ROUNDS] < SURETY_LP_COSTLY)
        return LP_NOT_DUE;
    s->lp_costly = 0; /* one try: the LP is set up here or not at all */
    if (surety_lpb_init(s) != 0 ||
        (double)surety_lpb_pairs(s) * (double)s->N > SURETY_LP_SMALL) {
        surety_lpb_free(s); /* nothing to decide, too large, or no memory:
                             * the search goes on without the LP */
        return LP_NOT_DUE;
    }
    return LP_BY_ROUND;
}

/* After the LP that a costly first round called for: where that round's
 * bound is above the LP's, the decomposition ends (rounds, probes and the
 * restored nodes' solves), and the best round's bound keeps capping the
 * nodes; elsewhere the rounds go on, and each bound caps the other's. Its
 * one-resource problems are searches of their own there, some stopped by
 * their node limit, and the rounds seldom got below the LP within a
 * minute: on `gen.py diff -n 60 -m 3 -N 100 --seed 2` 27 rounds stalled at
 * 60 865.1, above the LP's 60 717.5 (bench/README.md, "The root LP where
 * the price rounds are costly"). Left to the tree, that time found better
 * plans on the four such instances measured, with the same bound. The
 * LP, if small, then bounds the top of each dive too (SURETY_LP_NODES). */
static void costly_rounds_end(surety_solver *s)
{
    if (s->dec_done || !(s->dec_root > s->lp_root))
        return;
    s->dec_done = 1;
    s->dec_ended = 1;
    surety_decomp_free(s);
    if (s->opt->lp_restored == 0 &&
        (double)surety_lpb_pairs(s) * (double)s->N <= SURETY_LP_NODES)
        s->lp_nodes = 1;
}

/* Has the tree searched `after` nodes, or, under separate constraints,
 * evaluated the scenario knapsacks of that many joint nodes (the quantile
 * window of bound.c)? The second counts for searches whose nodes cost
 * more. A joint search counts nodes only: its nodes evaluate more than
 * the window on average (every 32nd and each restored node recompute
 * every scenario), most of all at large N, where the knapsacks reached
 * the mark after about three fifths of the nodes and started the
 * decomposition in trees that close soon after (bench/README.md, "The
 * decomposition's start counted in nodes for joint searches"). */
static int work_reached(const surety_solver *s, long after)
{
    if (s->nodes >= after)
        return 1;
    if (!s->separate)
        return 0;
    double win = 2.0 * (double)(s->k + 1) + 16;
    return (double)s->knaps >= (double)after * win;
}

/* The tree's scenario knapsacks per one-resource solve's knapsack while
 * the decomposition works: a tenth, so that its rounds and probes get
 * about ten elevenths of the work. At one to one, the tree's half of the
 * rounds' time found no better plan and pruned little on the 40-job,
 * 1000-scenario instances, whose proofs wait for the rounds and probes
 * (bench/README.md, "The decomposition's share raised to four fifths");
 * against a quarter, a tenth lowers every 60-s bound of ten such
 * instances at capacity 0.5 and proves the 0.3 ones as fast or faster
 * ("The decomposition's share raised to ten elevenths"). */
#define SURETY_DEC_TREE_SHARE 0.1

/* A step of the resource-decomposition bound (decomp.c): a price round,
 * or once the rounds are over, the probes of one job. The first comes
 * once the search has run dec_after nodes without closing, or the
 * knapsacks of dec_after nodes of a joint search (the quantile window of
 * bound.c) where a node costs more: with separate constraints a node
 * evaluates a knapsack per resource and live scenario, about 30 times a
 * joint node's at n=40, m=4, N=1000. The next step comes whenever the
 * tree's node bounds have evaluated SURETY_DEC_TREE_SHARE times as many
 * scenario knapsacks since the first as the one-resource solves have in
 * all (counted in nodes, the separate searches gave the rounds under 1%
 * of their time: bench/README.md, "Findings"); after the probes, pairs
 * are ruled out again whenever the incumbent has improved. The unit is
 * rough: a one-resource knapsack and a joint one differ in cost. The
 * one-resource solves stop at the time limit, not at the node limit, and
 * their nodes are not in the reported count. Each improvement caps every
 * bound from then on. */
static void decomp_round(surety_solver *s)
{
    if (s->dec_done && s->dec_vin && s->have_inc && s->inc > s->dec_rule_inc) {
        /* a better incumbent: the probes may rule more pairs out */
        surety_decomp_rule(s);
        s->dec_rule_inc = s->inc;
    }
    if (s->dec_done || s->dec_after <= 0)
        return;
    if (!s->dec_started) {
        if (!work_reached(s, s->dec_after))
            return;
        s->dec_started = 1;
        s->dec_knaps0 = s->knaps;
    } else if (SURETY_DEC_TREE_SHARE * (double)s->dec_knaps >
               (double)(s->knaps - s->dec_knaps0)) {
        return;
    }
    double tl = s->opt->time_limit_s;
    double before = s->dec_root;
    long found = s->dec_found;
    int r = surety_decomp_round(s, tl > 0 ? s->t0 + tl : INFINITY);
    if (r != 0) {
        s->dec_done = 1;
        /* kept for the restored nodes' own solves (node_split) */
        if (r < 0 || !s->dec_nodes_on || !s->dec_c)
            surety_decomp_free(s);
    }
    if (s->dec_root < s->root_cap)
        s->root_cap = s->dec_root;
    if (s->dec_found > found)
        surety_solve_log_progress(s, 1, 'S');
    if (s->dec_root < before)
        surety_solve_log_progress(s, 1, 'D');
}

/* Parts of the incumbent searched again (lns.c) from lns_after nodes on
 * (or their work in knapsacks, as decomp_round counts it): a part runs
 * whenever the parts' searches have evaluated fewer scenario knapsacks
 * than a share of the tree's since the first. A search that has not
 * closed by then is unlikely to close soon, and its plan matters more:
 * the share starts at SURETY_LNS_SHARE. Each SURETY_LNS_PATIENCE parts
 * in a row without a better plan halve it, down to a sixteenth of it, so
 * that a search whose plan is already the best pays little; a better
 * plan, from a part or from elsewhere, restores it. The two constants
 * were set, not tuned; what the parts gain and cost on the 40-job
 * instances is in bench/README.md ("Findings", "Parts of the best plan
 * searched again"). */
#define SURETY_LNS_SHARE 0.25
#define SURETY_LNS_PATIENCE 12
static void lns_round(surety_solver *s)
{
    if (s->lns_after <= 0 || !s->have_inc || s->npool == 0)
        return;
    double best = s->pool[0].bound < s->root_cap ? s->pool[0].bound
                                                 : s->root_cap;
    if (!(best > surety_cutoff(s)))
        return; /* the search is about to close: no part can pay */
    if (!s->lns_started) {
        if (!work_reached(s, s->lns_after))
            return;
        s->lns_started = 1;
        s->lns_knaps0 = s->knaps;
        s->lns_share = SURETY_LNS_SHARE;
    } else if (s->inc != s->lns_inc) {
        /* a better plan from elsewhere: new parts to search */
        s->lns_share = SURETY_LNS_SHARE;
        s->lns_idle = 0;
    }
    s->lns_inc = s->inc;
    if ((double)s->lns_knaps >
        s->lns_share * (double)(s->knaps - s->lns_knaps0))
        return;
    double now = surety_solve_now(), tl = s->opt->time_limit_s;
    int r = surety_lns_step(s, tl > 0 ? s->t0 + tl : INFINITY);
    s->lns_secs += surety_solve_now() - now;
    if (r < 0) {
        s->lns_after = -1; /* out of memory: no more parts */
        surety_lns_free(s);
    }
    s->lns_inc = s->inc;
    if (r > 0) {
        surety_solve_log_progress(s, 1, 'P');
        s->lns_share = SURETY_LNS_SHARE;
        s->lns_idle = 0;
    } else if (++s->lns_idle >= SURETY_LNS_PATIENCE) {
        s->lns_idle = 0;
        if (s->lns_share > SURETY_LNS_SHARE / 16)
            s->lns_share *= 0.5;
    }
}

/* b capped by the decomposition bound of the node: the root's value less
 * the best round's prices of the jobs the node has rejected. Why: for any
 * completion, value = sum_j lam_j y_j + sum_i sum_j (p_j - lam_j) x_ji
 * with y_j = sum_i x_ji; each resource's part is at most its root value
 * V_i (its jobs were open at the root and fit it in all but k scenarios),
 * y_j <= 1 with lam_j >= 0 for an optional job, y_j = 1 for a required
 * one, and y_j = 0 for a rejected job, whose lam_j >= 0 then drops out.
 * Once pairs are probed, resource i's part is at most the smallest probed
 * bound among the node's decisions (each is V_i of a problem that keeps
 * only job sets with that one decision, a superset of the node's), or
 * the value of a restored ancestor's own problem (node_split: all of the
 * ancestor's decisions, again a superset), so the sum of prices plus the
 * dec_c caps bounds the node as well. `share` (0 or less) replaces the
 * scenario prices' share of the sum of prices with the node's own
 * (dead_share below).
 * Rounds change the prices only at the root, where nothing is rejected,
 * and probing starts only after the last round. */
static double dec_cap_of(const surety_solver *s, double b, double share)
{
    double c = s->dec_root - s->rej_lam + share;
    if (s->dec_c) {
        double e = s->dec_lsum - s->rej_lam + share;
        for (size_t i = 0; i < s->m; i++)
            e += s->dec_c[i];
        if (e < c)
            c = e;
    }
    return b < c ? b : c;
}

/* What the node's failed scenarios take from the scenario prices' share
 * of the cap (0 or less). That share, T = the k largest summed prices
 * M_l of the best round, bounds sum_l M_l z_l over any k failed
 * scenarios (decomp.c). A completion that beats the cutoff fails the
 * node's dead scenarios D (overloaded, or fixed by a bound), so its failed
 * scenarios sum to at most M(D) plus the k - |D| largest of the others:
 * the cap may use that sum in place of T. Given scenarios are counted one
 * by one (copies merged into one row die together: dec_mrow sums their
 * prices), those set aside count as live. O(k) a call for the dead rows,
 * and the walk down the largest prices; skipped (0) when it cannot take
 * the cap c to the cutoff: |D| dead scenarios take at most the |D|
 * largest prices. */
static double dead_share(const surety_solver *s, double c)
{
    if (!s->dec_mu || !(s->dec_root < INFINITY) || s->separate ||
        s->dead_w[0] == 0 || s->dead_w[0] > s->k)
        return 0;
    size_t N0 = s->N0, N = s->N, k = s->k, d = s->dead_w[0];
    if (c - s->dec_mpre[d] > surety_cutoff(s))
        return 0;
    const double *M = s->dec_mtot;
    const size_t *row = s->row_of, *srt = s->dec_msrt;
    /* the dead rows are those the trail took from live: each at most once
     * on the path, and at most twice k entries in all (a row fixed by a
     * bound may be overloaded later), where a pass over the rows read N */
    double t = 0;
    for (size_t e = 0; e < s->trail_len; e++) {
        size_t x = s->trail[e];
        if ((x & 3) == SURETY_LIVE && (x >> 2) < N)
            t += s->dec_mrow[x >> 2];
    }
    for (size_t r = 0; r < N0 && d < k; r++) {
        size_t l = srt[r];
        if (row[l] == SIZE_MAX || s->dead[row[l]] == SURETY_LIVE) {
            t += M[l];
            d++;
        }
    }
    /* summed in another order than T = dec_mpre[k]: a margin */
    double T = s->dec_mpre[k];
    double v = t - T + 1e-12 * (t + T + 1);
    return v < 0 ? v : 0;
}

/* The cap of the node as it stands, its dead scenarios counted (the
 * share lowers both of dec_cap_of's terms alike). */
static double dec_cap(const surety_solver *s, double b)
{
    double c = dec_cap_of(s, INFINITY, 0);
    c += dead_share(s, c);
    return b < c ? b : c;
}

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>
#include <stdlib.h>
/* Built only for tests/test_invariants.c: a node's decomposition cap
 * against its best completion on the pairs possible at the root
 * (surety_chk_completion). The rounds, the probes and the restored
 * nodes' own solves bound every plan on those pairs, whatever the cutoff,
 * so the cap without the dead scenarios' share must not be below it; with
 * that share (dead_share: scenarios fixed dead by a bound fail only in
 * the completions that beat the cutoff), not when the completion beats
 * the cutoff. Small models only. Aborts. */
static void chk_cap(const surety_solver *s)
{
    double cap = dec_cap_of(s, INFINITY, 0);
    if (s->n > 12 || !(cap < INFINITY))
        return;
    double best = surety_chk_completion(s);
    double tol = 1e-9 * (s->pscale + 1);
    double dead = dec_cap_of(s, INFINITY, dead_share(s, -INFINITY));
    if (cap < best - tol || (best > surety_cutoff(s) && dead < best - tol)) {
        fprintf(stderr, "invariant: a node's decomposition cap %.12g "
                "(%.12g with its dead scenarios) is below its best "
                "completion %.12g\n", cap, dead, best);
        abort();
    }
}
#endif

/* b capped by the node's cap with each resource's part also bounded at
 * the node itself (priced.c; the node at `depth`, its last decision
 * `last` as surety_priced_parts takes it), the dead scenarios' share
 * counted as dec_cap counts it. Valid for the completions that beat the
 * cutoff, which is all a node's bound is for; not kept in dec_c. */
static double priced_cap(surety_solver *s, double b, size_t depth,
                         long last)
{
    double parts = surety_priced_parts(s, depth, last);
    if (isnan(parts))
        return b;
    double c = s->dec_lsum - s->rej_lam + parts;
#ifdef SURETY_CHECK_INVARIANTS
    double c0 = c;
#endif
    c += dead_share(s, c);
#ifdef SURETY_CHECK_INVARIANTS
    if (s->n <= 12) {
        /* without the share, against every completion on the pairs the
         * node allows (each part bounds every job set on them, whatever
         * the cutoff); with it, against those that beat the cutoff */
        double near = surety_chk_completion_on(s, s->pxcur);
        double best = surety_chk_completion(s);
        double tol = 1e-9 * (s->pscale + 1);
        if (c0 < near - tol || (best > surety_cutoff(s) && c < best - tol)) {
            fprintf(stderr, "invariant: a node's priced cap %.12g (%.12g "
                    "with its dead scenarios) is below its best completion "
                    "%.12g on its own pairs, or %.12g, which beats the "
                    "cutoff\n", c0, c, near, best);
            abort();
        }
    }
#endif
    if (!(c < b))
        return b;
    if (b > surety_cutoff(s) && !(c > surety_cutoff(s)))
        s->pc_cuts++;
    return c;
}

/* A restored node's solves prune it when they lower its cap by its
 * distance to the cutoff; otherwise what they take off still helps its
 * dive. How much of the distance they take off falls with the distance,
 * at a rate that differs between instances: on a 1000-scenario 0.3 proof
 * the nodes 249-498 above the cutoff lost a ninth of it on average (3 of
 * 445 pruned) and took 38% of the solves' work, where a 100-scenario proof
 * pruned 49% of its nodes 217-434 above (bench/README.md, "Restored nodes
 * whose solves take little off"). So the distances are put in classes of
 * powers of two (relative to the incumbent), and a class whose nodes lost
 * on average less than 1/SURETY_RN_SHARE of their distance in at least
 * SURETY_RN_LEARN tries is skipped, except every SURETY_RN_PROBE-th node
 * skipped, which is solved so that the class's mean follows the search.
 * The constants were set, not tuned. */
#define SURETY_RN_SHARE 4
#define SURETY_RN_LEARN 16
#define SURETY_RN_PROBE 8
static size_t dist_class(const surety_solver *s, double dist)
{
    double x = dist / (1e-4 * (fabs(s->inc) + 1));
    if (!(x >= 1))
        return 0;
    int e = ilogb(x);
    return e >= SURETY_RN_CLASSES - 1 ? SURETY_RN_CLASSES - 1 : (size_t)e + 1;
}

/* The bound b of a node restored from the pool, capped by its own
 * one-resource problems once the probes are done (decomp.c,
 * surety_decomp_node): they lower dec_c, which the node's dive inherits
 * and undo() restores with the node's last decision. Only while the
 * one-resource solves, the rounds' and probes' included, have taken no
 * more scenario knapsacks than the tree since the first round: after the
 * probes, which ran with most of the work (SURETY_DEC_TREE_SHARE), the
 * tree catches up before restored nodes solve their own (one to one counted from the
 * probes' end, or a quarter, proved the 0.3-capacity instances slower:
 * bench/README.md, "The decomposition's share raised to four fifths").
 * Restored nodes are those of the best bound, which hold the reported
 * bound up. On 40-job, 100-scenario instances this halves the proofs'
 * time (bench/README.md, "Findings"). A node whose distance to the cutoff
 * lies where such solves have taken off little is left without them
 * (dist_class above). */
static double node_split(surety_solver *s, double b)
{
    if (!s->dec_done || !s->dec || s->dec_knaps > s->knaps - s->dec_knaps0)
        return b;
    double c0 = dec_cap(s, b), cut = surety_cutoff(s);
    if (!(c0 > cut))
        return c0; /* no solve needed */
    size_t cl = dist_class(s, c0 - cut);
    if (s->rn_tried[cl] >= SURETY_RN_LEARN &&
        s->rn_took[cl] * SURETY_RN_SHARE < (double)s->rn_tried[cl] &&
        ++s->rn_skips % SURETY_RN_PROBE != 0) {
        s->dec_nleft++;
        return c0;
    }
    double tl = s->opt->time_limit_s;
    /* resource by resource (as many at once as there are threads),
     * until the cap prunes the node: the other resources' solves would
     * change nothing */
    size_t step = surety_decomp_threads(s);
    for (size_t i = 0; i < s->m && dec_cap(s, b) > surety_cutoff(s);
         i += step)
        if (surety_decomp_node(s, i, step,
                               tl > 0 ? s->t0 + tl : INFINITY) != 0)
            break;
#ifdef SURETY_CHECK_INVARIANTS
    chk_cap(s);
#endif
    double c = dec_cap(s, b);
    s->rn_tried[cl]++;
    if (!(c > surety_cutoff(s))) {
        s->dec_npruned++;
        s->rn_took[cl] += 1;
    } else if (c < c0) {
        s->rn_took[cl] += (c0 - c) / (c0 - cut);
    }
    return c;
}

/* Improvement runs in a row without a better plan after which the
 * tree's runs come half as often (dive); set, not tuned, as the parts'
 * SURETY_LNS_PATIENCE is. */
#define SURETY_ILS_MISSES 8

typedef struct child {
    long c;
    double b;
} child;

/* Node at depth d (jobs order[0..d-1] decided), already evaluated. */
static void dive(surety_solver *s, size_t d, double node_bound)
{
    s->open_bound[d] = node_bound;
    if (surety_tree_stopped(s))
        return;
    s->nodes++;
    s->depth = d;
    surety_solve_log_progress(s, 0, ' ');
    if (d == s->nb) {
        s->open_bound[d] = -INFINITY;
        return;
    }
    if ((s->nodes & 1023) == 0) {
        /* periodic greedy completion of this node (METHODS.md s.8) */
        memcpy(s->tfix, s->state, s->n * sizeof *s->tfix);
        if (surety_heur_complete(s, s->tfix, s->tplan, 0) &&
            surety_solve_offer(s, s->tplan))
            surety_solve_log_progress(s, 1, 'H');
        /* and a few iterations of the local search from the incumbent,
         * sized in solve.c to a small share of the search's work; a search
         * that runs long is unlikely to close soon, so its plan matters
         * more: the share grows with the node count, up to 8 times. After
         * every SURETY_ILS_MISSES runs in a row that find nothing, the
         * runs come every other turn, down to one turn in 16, until the
         * best plan changes, whoever finds it: on the 0.3 proofs they
         * found better plans only in the first seconds, and after a
         * better plan from the parts (bench/README.md, "Improvement runs
         * that find nothing spaced out") */
        if (s->have_inc && s->inc != s->ils_inc) {
            s->ils_inc = s->inc;
            s->ils_step = 0;
            s->ils_miss = 0;
        }
        if (s->have_inc && s->hiters > 0 &&
            (s->ils_turn++ & (((size_t)1 << s->ils_step) - 1)) == 0) {
            size_t grow = 1 + (size_t)s->nodes / 131072;
            memcpy(s->tplan, s->inc_plan, s->n * sizeof *s->tplan);
            if (surety_heur_improve(s, s->tplan,
                                    s->hiters * (grow < 8 ? grow : 8)) &&
                surety_solve_offer(s, s->tplan)) {
                surety_solve_log_progress(s, 1, 'L');
            } else if (++s->ils_miss >= SURETY_ILS_MISSES) {
                s->ils_miss = 0;
                if (s->ils_step < 4)
                    s->ils_step++;
            }
        }
    }
    size_t j = s->order[d], m = s->m;
    child ch[m + 1];
    size_t nc = 0;
    /* pairs ruled out at this node (bound.c, possible_pairs: row d is
     * this node's) lead to no improving plan */
    const unsigned char *px = s->pxs + d * s->n * m;
    for (size_t i = 0; i < m; i++) {
        if (!px[j * m + i])
            continue;
        /* symmetry: among identical empty resources only the first */
        int skip = 0;
        if (s->nin[i] == 0)
            for (size_t h = 0; h < i && !skip; h++)
                skip = s->rclass[h] == s->rclass[i] && s->nin[h] == 0 &&
                       s->allowed[j * m + h];
        if (!skip)
            ch[nc++].c = (long)i;
    }
    if (!s->required[j])
        ch[nc++].c = SURETY_JOB_OUT;
    /* children in the order of the greedy insertion (METHODS.md s.8): the
     * resource where j overloads the fewest live scenarios (the exact
     * count the pair rule kept for this node), then the least loaded;
     * rejecting j last. Each child is evaluated once, when visited; until
     * then its bound is at most this node's. */
    const uint32_t *po = s->pxo + d * s->n * m;
    for (size_t t = 0; t < nc; t++) {
        if (ch[t].c < 0) {
            ch[t].b = -INFINITY;
            continue;
        }
        size_t i = (size_t)ch[t].c;
        double kill = po[j * m + i];
        ch[t].b = -(kill * 1e6 * (double)s->N + s->ltot[i] / s->cap[i]);
    }
    for (size_t t = 1; t < nc; t++) {
        child x = ch[t];
        size_t u = t;
        while (u > 0 && ch[u - 1].b < x.b) {
            ch[u] = ch[u - 1];
            u--;
        }
        ch[u] = x;
    }
    for (size_t t = 0; t < nc; t++) {
        double cut = surety_cutoff(s);
        if (!(node_bound > cut))
            break;
        if (s->spill_at > 0 && s->nodes >= s->spill_at &&
            s->npool < pool_max(s)) {
            /* the dive has had its share: the children not yet visited
             * wait in the pool, and the search moves to the best bound */
            size_t u = t;
            while (u < nc && pool_push(s, d, ch[u].c, node_bound))
                u++;
            if (u == nc)
                break;
            t = u; /* out of memory: go on depth first */
        }
        s->open_bound[d] = t + 1 < nc ? node_bound : -INFINITY;
        double cap;
        int ok = apply(s, d, j, ch[t].c);
#ifdef SURETY_CHECK_INVARIANTS
        if (ok)
            chk_cap(s);
#endif
        if (ok && (cap = dec_cap(s, INFINITY)) > cut) {
            double b = surety_bound_node(s, cut, d + 1);
            if (b > cap)
                b = cap;
            if (b > cut) /* the bound may have fixed more scenarios dead */
                b = dec_cap(s, b);
            if (b > cut && s->dec_c)
                b = priced_cap(s, b, d + 1, ch[t].c);
            else
                surety_priced_forget(s, d + 1);
            if (b > node_bound)
                b = node_bound; /* the parent's bound covers the child */
            if (d + 1 <= s->dive_top + SURETY_LP_TOP)
                b = lp_bound(s, d + 1, cut, b);
            if (b > cut) {
                try_partial(s);
                if (b > surety_cutoff(s))
                    dive(s, d + 1, b);
            }
        }
        undo(s, d);
        if (s->stop)
            return; /* keep open_bound[d] for the reported bound */
    }
    s->open_bound[d] = -INFINITY;
}

/* Best bound with depth-first dives: the open node of best bound is
 * restored (its decisions applied from the root: loads and overloads are
 * exact, the scenarios its ancestors fixed are recomputed by its own
 * bound, whose row then has no parent row) and searched depth first for
 * `dive_nodes` nodes; the children its dive has not visited by then go
 * back to the pool. The root is the first such node. */
double surety_tree_search(surety_solver *s)
{
    long budget = s->opt->dive_nodes == 0 ? 4096 : s->opt->dive_nodes;
    double stopped_at = -INFINITY; /* bound of the node a limit stopped */
    double cut = surety_cutoff(s);
    double b = surety_bound_node(s, cut, 0);
    s->root_bound = b;
    if (b > cut) {
        try_partial(s);
        s->spill_at = budget > 0 ? s->nodes + budget : 0;
        dive(s, 0, b);
    }
    while (!s->stop && s->npool > 0) {
        int due = lp_due(s);
        if (due != LP_NOT_DUE) {
            root_lp(s);
            if (due == LP_BY_ROUND)
                costly_rounds_end(s);
        }
        /* before the pop, so that its progress line sees every open node */
        decomp_round(s);
        lns_round(s);
        solve_open e = pool_pop(s);
        if (e.bound > s->root_cap)
            e.bound = s->root_cap;
        cut = surety_cutoff(s);
        if (!(e.bound > cut)) {
            /* the best waiting bound cannot win: neither can the rest */
            surety_xfree(e.dec);
            while (s->npool > 0)
                surety_xfree(pool_pop(s).dec);
            break;
        }
        size_t d = 0;
        int ok = 1;
#ifdef SURETY_CHECK_INVARIANTS
        /* a new restored node: no solves of its own yet */
        if (!s->chk_nodec)
            s->chk_nodec = malloc(s->m * sizeof *s->chk_nodec);
        if (s->chk_nodec)
            for (size_t i = 0; i < s->m; i++)
                s->chk_nodec[i] = INFINITY;
#endif
        for (; d < e.depth && ok; d++)
            ok = apply(s, d, s->order[d], e.dec[d]);
        /* d decisions applied (the last one may have failed) */
        double cap = ok ? dec_cap(s, INFINITY) : -INFINITY;
        if (cap > cut) {
            s->restart_row = d;
            s->open_bound[d] = e.bound; /* reported while it is evaluated */
            s->depth = d;
            double nb = surety_bound_node(s, cut, d);
            if (nb > cap)
                nb = cap;
            if (nb > e.bound)
                nb = e.bound;
            nb = lp_bound(s, d, cut, nb);
            if (nb > cut && s->dec_c)
                nb = priced_cap(s, nb, d, SURETY_PC_ALL);
            else
                surety_priced_forget(s, d);
            if (nb > cut && d > 0)
                nb = node_split(s, nb);
            s->restart_row = 0;
            if (nb > cut) {
                try_partial(s);
                if (nb > surety_cutoff(s)) {
                    s->spill_at = s->nodes + budget;
                    s->dive_top = d;
                    dive(s, d, nb);
                }
            }
            s->open_bound[d] = -INFINITY;
        }
        while (d > 0)
            undo(s, --d);
        surety_xfree(e.dec);
        if (s->stop) {
            /* the node's bound covers whatever its dive left open */
            stopped_at = e.bound;
            break;
        }
    }
    if (!s->stop)
        return -INFINITY;
    double open = stopped_at;
    for (size_t d = 0; d <= s->nb; d++)
        if (s->open_bound[d] > open)
            open = s->open_bound[d];
    if (s->npool > 0 && s->pool[0].bound > open)
        open = s->pool[0].bound;
    return open < s->root_cap ? open : s->root_cap;
}
