/* priced.c - each resource's part of a node's decomposition cap, bounded
 * scenario by scenario at the best round's prices.
 *
 * The cap of a node (tree.c, dec_cap_of) is the sum of prices plus, for
 * each resource i, a bound on its part
 *     P_i = sum_{j in S_i} (p_j - lam_j) - sum_{l in F_i} mu_il
 * over the job sets S_i that the node's completions may give it, F_i the
 * scenarios S_i overloads (decomp.c, the head of the file). The probes and
 * the restored nodes' own solves bound P_i by solving resource i's problem
 * for a superset of the node's decisions (dec_c). Here P_i is bounded at
 * the node itself, as the one-resource search bounds its own root
 * (bound.c, cost_bound): in a scenario l that S_i fits, its free jobs fit
 * the residual capacity r_il, so their reduced profit is at most the
 * fractional knapsack u_il of the free jobs that may still enter i, with
 * positive reduced profit, into r_il (the greedy by profit per hour:
 * Dantzig 1957, cited from memory). F_i holds every scenario whose
 * committed load already overloads i, weighs at most k, and its prices
 * are at least 0, so
 *     P_i <= fixed_i + max_F [ min_{l not in F} u_il - mu_i(F) ],
 * fixed_i the reduced profit of the jobs placed in i; for a threshold the
 * cheapest F is the scenarios below it, so the maximum is a walk up the
 * sorted u_il (the scenarios of smallest value failed first).
 *
 * The probes' and restored nodes' values bound P_i for every plan; this
 * one for the completions that beat the cutoff (the pairs still possible
 * at the node, bound.c possible_pairs, are ruled out for the others), so
 * it only caps the node's bound and is not kept in dec_c. Deep in the
 * tree, where a node's placements leave each resource few open jobs, it is
 * often below both the probed values and the aggregated quantile bound
 * (bench/README.md, "Each resource's part bounded at the node").
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "solve/solve.h"

void surety_priced_free(surety_solver *s)
{
    surety_xfree(s->pc_job);
    surety_xfree(s->pc_q);
    surety_xfree(s->pc_ord);
    surety_xfree(s->pc_rank);
    surety_xfree(s->pc_mu);
    surety_xfree(s->pc_ok);
    surety_xfree(s->pc_cq);
    surety_xfree(s->pc_v);
    surety_xfree(s->pc_w);
    surety_xfree(s->pc_rec);
    surety_xfree(s->pc_rows);
    surety_xfree(s->pc_src);
    surety_xfree(s->pc_have);
    s->pc_rec = NULL;
    s->pc_rows = NULL;
    s->pc_src = NULL;
    s->pc_have = NULL;
    s->pc_job = NULL;
    s->pc_ord = NULL;
    s->pc_rank = NULL;
    s->pc_q = s->pc_mu = s->pc_v = NULL;
    s->pc_ok = NULL;
    s->pc_cq = NULL;
    s->pc_w = NULL;
}

/* Row l's jobs (positions in pc_job) by reduced profit per hour, largest
 * first; a job of no hours in l first of all. Insertion: nq is the jobs
 * of positive reduced profit, a few dozen. */
static void order_row(surety_solver *s, size_t l, double *e)
{
    size_t nq = s->pc_nq;
    const double *row = s->w + l * s->n;
    uint32_t *ord = s->pc_ord + l * nq;
    for (size_t t = 0; t < nq; t++) {
        double w = row[s->pc_job[t]];
        double ef = w > 0 ? s->pc_q[t] / w : INFINITY;
        size_t u = t;
        while (u > 0 && e[u - 1] < ef) {
            e[u] = e[u - 1];
            ord[u] = ord[u - 1];
            u--;
        }
        e[u] = ef;
        ord[u] = (uint32_t)t;
    }
    if (s->pc_rank)
        for (size_t u = 0; u < nq; u++)
            s->pc_rank[l * nq + ord[u]] = (unsigned char)u;
}

/* A row keeps each job's rank in its order when at most 64 jobs are
 * priced, so that a knapsack reads its open jobs as the bits of one word
 * (row_value); with more it walks the whole order. The invariant build
 * walks the whole order on models of an even number of jobs too, so that
 * the tests, whose models are small, check both (tests/test_invariants.c,
 * parts_bounded_at_the_node_hold_for_every_job_set). */
#ifdef SURETY_CHECK_INVARIANTS
#define RANKED(s, nq) ((nq) <= 64 && (s)->n % 2 == 1)
#else
#define RANKED(s, nq) ((nq) <= 64)
#endif

/* Built once the prices are final (the probes start after the last
 * round, with dec_c). Returns 0, or -1 out of memory. */
static int priced_init(surety_solver *s)
{
    size_t n = s->n, m = s->m, N = s->N, N0 = s->N0;
    s->pc_job = surety_xmalloc(n ? n : 1, sizeof *s->pc_job);
    s->pc_q = surety_xmalloc(n ? n : 1, sizeof *s->pc_q);
    s->pc_ok = surety_xmalloc(n ? n : 1, sizeof *s->pc_ok);
    if (!s->pc_job || !s->pc_q || !s->pc_ok)
        return -1;
    /* the jobs open at the root (the branching order), whatever the
     * node this runs at has decided */
    size_t nq = 0;
    for (size_t t = 0; t < s->nb; t++) {
        size_t j = s->order[t];
        double q = s->p[j] - s->dec_lam[j];
        if (q > 0) {
            s->pc_job[nq] = (uint32_t)j;
            s->pc_q[nq++] = q;
        }
    }
    s->pc_nq = nq;
    size_t cells = N * (nq ? nq : 1);
    s->pc_ord = surety_xmalloc(cells, sizeof *s->pc_ord);
    s->pc_rank = RANKED(s, nq) ? surety_xmalloc(cells, 1) : NULL;
    s->pc_mu = surety_xcalloc(m * N, sizeof *s->pc_mu);
    s->pc_cq = surety_xmalloc(N, sizeof *s->pc_cq);
    s->pc_v = surety_xmalloc(N, sizeof *s->pc_v);
    s->pc_w = surety_xmalloc(N, sizeof *s->pc_w);
    size_t L = s->k + 17, D = (s->nb + 2) * m;
    s->pc_L = L < N ? L : N;
    s->pc_rec = surety_xmalloc(D, sizeof *s->pc_rec);
    s->pc_rows =
        surety_xmalloc(D * (s->pc_L ? s->pc_L : 1), sizeof *s->pc_rows);
    s->pc_src = surety_xmalloc(D, sizeof *s->pc_src);
    s->pc_have = surety_xcalloc(s->nb + 2, 1);
    double *e = surety_xmalloc(nq ? nq : 1, sizeof *e);
    if (!s->pc_ord || (RANKED(s, nq) && !s->pc_rank) || !s->pc_mu ||
        !s->pc_cq || !s->pc_v || !s->pc_w || !s->pc_rec || !s->pc_rows ||
        !s->pc_src || !s->pc_have || !e) {
        surety_xfree(e);
        return -1;
    }
    for (size_t l = 0; l < N; l++)
        order_row(s, l, e);
    surety_xfree(e);
    /* each resource's prices summed over a searched row's given copies;
     * those set aside fit every feasible plan and fail in none */
    if (s->dec_mu)
        for (size_t i = 0; i < m; i++)
            for (size_t l0 = 0; l0 < N0; l0++)
                if (s->row_of[l0] != SIZE_MAX)
                    s->pc_mu[i * N + s->row_of[l0]] += s->dec_mu[i * N0 + l0];
    return 0;
}

static int cmp_cq(const void *a, const void *b)
{
    double x = ((const solve_pcq *)a)->v, y = ((const solve_pcq *)b)->v;
    return x < y ? -1 : x > y;
}

/* Job t (a position in pc_job) into the residual *r of a row: whole when
 * it fits (1), else the fraction that fills *r, which ends the knapsack
 * (0). */
static inline int take(const surety_solver *s, const double *row,
                       uint32_t t, double *r, double *v)
{
    double w = row[s->pc_job[t]];
    if (w <= *r) {
        *v += s->pc_q[t];
        *r -= w;
        return 1;
    }
    *v += s->pc_q[t] * (*r / w);
    return 0;
}

/* The fractional knapsack of resource i's open jobs ok[0..no)
 * (positions in pc_job, reduced profits summed in qall) into residual r
 * in row l. */
static double row_value(const surety_solver *s, size_t i, size_t l,
                        const uint32_t *ok, size_t no, double qall, double r)
{
    size_t nq = s->pc_nq;
    const double *row = s->w + l * s->n;
    const uint32_t *ord = s->pc_ord + l * nq;
    double hsum = 0, v = 0;
    if (s->pc_rank) {
        const unsigned char *rk = s->pc_rank + l * nq;
        uint64_t bits = 0;
        for (size_t t = 0; t < no; t++) {
            hsum += row[s->pc_job[ok[t]]];
            bits |= (uint64_t)1 << rk[ok[t]];
        }
        if (hsum <= r)
            return qall;
        for (; bits; bits &= bits - 1)
            if (!take(s, row, ord[__builtin_ctzll(bits)], &r, &v))
                break;
        return v;
    }
    for (size_t t = 0; t < no; t++)
        hsum += row[s->pc_job[ok[t]]];
    if (hsum <= r)
        return qall;
    for (size_t u = 0; u < nq; u++) {
        size_t j = s->pc_job[ord[u]];
        if (s->state[j] == SURETY_JOB_FREE && s->pxcur[j * s->m + i] &&
            !take(s, row, ord[u], &r, &v))
            break;
    }
    return v;
}

/* Resource i's rows rows[0..nr) (every row, 0..nr-1, when rows is NULL)
 * into pc_cq with their values; those its committed load overloads
 * already (in every F) go into *fw and *fc instead. Returns how many went
 * into pc_cq. */
static size_t gather(surety_solver *s, size_t i, const uint32_t *rows,
                     size_t nr, const uint32_t *ok, size_t no, double qall,
                     size_t *fw, double *fc)
{
    size_t N = s->N, c = 0;
    const double *ld = s->load + i * N, *mu = s->pc_mu + i * N;
    double hi = s->cap_hi[i];
    for (size_t t = 0; t < nr; t++) {
        size_t l = rows ? rows[t] : t;
        double r = hi - ld[l];
        if (r < 0) {
            *fc += mu[l];
            *fw += s->cnt[l];
            continue;
        }
        double v = no ? row_value(s, i, l, ok, no, qall, r) : 0;
        s->pc_cq[c++] = (solve_pcq){.v = v, .mu = mu[l], .w = s->cnt[l],
                                    .l = (uint32_t)l};
    }
    /* the tree's work, which paces the decomposition and the parts, is
     * counted in scenario knapsacks (tree.c, decomp_round): these are
     * some (on 0.3 seeds 2, 6, 7 and 8 the proofs take the same time
     * counted or not) */
    s->knaps += c;
    return c;
}

/* The walk over items a[0..c) sorted by value (the scenarios of smallest
 * value failed first), paid and fw already failed, at most k in all:
 * the best threshold's value less the prices of the scenarios below it.
 * *done is 0 when every item could fail, so the walk would go on past the
 * last one (to the values of the scenarios not among the items). */
static double walk(const surety_solver *s, const solve_pcq *a, size_t c,
                   size_t fw, double *paid, int *done)
{
    double best = -INFINITY;
    size_t wsum = fw;
    *done = 0;
    for (size_t t = 0; t < c; t++) {
        if (a[t].v - *paid > best)
            best = a[t].v - *paid;
        if (wsum + a[t].w > s->k) {
            *done = 1;
            break;
        }
        wsum += a[t].w;
        *paid += a[t].mu;
    }
    return best;
}

/* Resource i's part at the node from every scenario (the head of this
 * file), into rec; rows gets the L scenarios of smallest value (all the
 * valued ones when fewer), which its children recompute. */
static double part_full(surety_solver *s, size_t i, solve_prec *rec,
                        uint32_t *rows, const uint32_t *ok, size_t no,
                        double qall)
{
    size_t N = s->N, k = s->k, L = s->pc_L, fw = 0;
    double fc = 0;
    solve_pcq *a = s->pc_cq;
    size_t c = gather(s, i, NULL, N, ok, no, qall, &fw, &fc);
    rec->fw = fw;
    rec->fc = fc;
    rec->nl = 0;
    if (fw > k)
        return -INFINITY;
    size_t nl = c;
    if (c > L) {
        /* the L smallest to the front, sorted; the rest above them */
        for (size_t t = 0; t < c; t++) {
            s->pc_v[t] = a[t].v;
            s->pc_w[t] = 1;
        }
        double q = surety_select_weighted(s->pc_v, s->pc_w, c, L - 1);
        size_t lt = 0;
        for (size_t t = 0; t < c; t++)
            if (a[t].v < q) {
                solve_pcq x = a[lt];
                a[lt++] = a[t];
                a[t] = x;
            }
        for (size_t t = lt; t < c && lt < L; t++)
            if (a[t].v == q) {
                solve_pcq x = a[lt];
                a[lt++] = a[t];
                a[t] = x;
            }
        nl = L;
    }
    qsort(a, nl, sizeof *a, cmp_cq);
    for (size_t t = 0; t < nl; t++)
        rows[t] = a[t].l;
    rec->nl = nl;
    /* a list cut short holds L = k+17 rows, which weigh more than k: the
     * walk ends within it. Only a list of every valued row can be walked
     * to its end, and then every scenario may fail */
    double paid = fc;
    int done;
    double best = walk(s, a, nl, fw, &paid, &done);
    if (!done && qall - paid > best)
        best = qall - paid;
    return best;
}

/* Resource i's part at a child from its parent's list (prec, prows):
 * only those scenarios' values are recomputed, and the walk goes up
 * them alone. Why that is enough: take any F that holds the overloaded
 * rows and weighs at most k, and t* the first list row in the walk's
 * order that F leaves out. The walk reaches t*, since F holds the list
 * rows before it and their weight fits; the plan's value is at most
 * u(t*), and F's prices at least what the walk has paid by then (they
 * are at least 0). So the walk's best is at least the plan's, whatever
 * the rows off the list are worth. Rows overloaded since, off the list,
 * are simply not counted as failed (a relaxation). Returns NAN when the
 * walk would pass the list's end (then every list row fits in F; the
 * caller takes the part from every scenario); the list's weight with
 * the overloaded rows' is the same all down the path, more than k when
 * the list was made, so that does not happen as the lists are sized. */
static double part_list(surety_solver *s, size_t i, const solve_prec *prec,
                        const uint32_t *prows, solve_prec *rec,
                        uint32_t *rows, const uint32_t *ok, size_t no,
                        double qall)
{
    size_t k = s->k, fw = prec->fw;
    double fc = prec->fc;
    solve_pcq *a = s->pc_cq;
    size_t c = gather(s, i, prows, prec->nl, ok, no, qall, &fw, &fc);
    if (fw > k) {
        rec->nl = 0;
        rec->fw = fw;
        rec->fc = fc;
        return -INFINITY;
    }
    /* the list comes in the order of its values where it was made: on a
     * short list, insertion (quicker there than qsort on the 40-job
     * instances); a long one, whose order a placed job may change much,
     * is sorted */
    if (c > 128) {
        qsort(a, c, sizeof *a, cmp_cq);
    } else {
        for (size_t t = 1; t < c; t++) {
            solve_pcq x = a[t];
            size_t u = t;
            while (u > 0 && a[u - 1].v > x.v) {
                a[u] = a[u - 1];
                u--;
            }
            a[u] = x;
        }
    }
    double paid = fc;
    int done;
    double best = walk(s, a, c, fw, &paid, &done);
    if (!done)
        return NAN;
    for (size_t t = 0; t < c; t++)
        rows[t] = a[t].l;
    rec->nl = c;
    rec->fw = fw;
    rec->fc = fc;
    return best;
}

#ifdef SURETY_CHECK_INVARIANTS
#include <stdio.h>
/* Built only for tests/test_invariants.c: resource i's bound v against
 * every job set S of its open jobs (those the node's row allows it) with
 * the jobs placed in it, scenario by scenario: S fails the rows its load
 * takes above cap_hi, which must weigh at most k, and is worth its
 * reduced profit less their prices; v may be no lower (the head of this
 * file: a plan fails at least those rows), its prices summed anew from
 * the best round's. Whatever the cutoff; up to 10 open jobs. Aborts. */
static void chk_part(const surety_solver *s, size_t i, double v)
{
    size_t n = s->n, m = s->m, N = s->N, no = 0, job[10];
    double fixed = 0;
    for (size_t j = 0; j < n; j++) {
        if (s->state[j] == (long)i)
            fixed += s->p[j] - s->dec_lam[j];
        if (s->state[j] == SURETY_JOB_FREE && s->pxcur[j * m + i]) {
            if (no == 10)
                return;
            job[no++] = j;
        }
    }
    /* the prices again from the best round's, not from pc_mu */
    double *mu = calloc(N ? N : 1, sizeof *mu);
    if (!mu)
        return;
    for (size_t l0 = 0; s->dec_mu && l0 < s->N0; l0++)
        if (s->row_of[l0] != SIZE_MAX)
            mu[s->row_of[l0]] += s->dec_mu[i * s->N0 + l0];
    const double *ld = s->load + i * N;
    for (unsigned set = 0; set < 1u << no; set++) {
        double q = fixed, paid = 0;
        size_t fw = 0;
        for (size_t t = 0; t < no; t++)
            if (set >> t & 1)
                q += s->p[job[t]] - s->dec_lam[job[t]];
        for (size_t l = 0; l < N && fw <= s->k; l++) {
            double load = ld[l];
            for (size_t t = 0; t < no; t++)
                if (set >> t & 1)
                    load += s->w[l * n + job[t]];
            if (load > s->cap_hi[i]) {
                fw += s->cnt[l];
                paid += mu[l];
            }
        }
        double tol = 1e-9 * (s->pscale + fabs(q) + paid + 1);
        if (fw <= s->k && v < q - paid - tol) {
            fprintf(stderr, "invariant: resource %zu's part bounded at the "
                    "node %.12g, below a job set's %.12g\n", i, v,
                    q - paid);
            abort();
        }
    }
    free(mu);
}
#endif

/* Resource i's part of the node's completions that beat the cutoff, at
 * most (the head of this file), into rec/rows; from the parent's list
 * when prec is given. -INFINITY when its committed load alone overloads
 * more than the allowance. */
static double part_of(surety_solver *s, size_t i, const solve_prec *prec,
                      const uint32_t *prows, solve_prec *rec,
                      uint32_t *rows)
{
    size_t n = s->n, m = s->m, nq = s->pc_nq;
    double fixed = 0, qall = 0;
    for (size_t j = 0; j < n; j++)
        if (s->state[j] == (long)i)
            fixed += s->p[j] - s->dec_lam[j];
    size_t no = 0;
    for (size_t t = 0; t < nq; t++) {
        size_t j = s->pc_job[t];
        if (s->state[j] == SURETY_JOB_FREE && s->pxcur[j * m + i]) {
            s->pc_ok[no++] = (uint32_t)t;
            qall += s->pc_q[t];
        }
    }
    double best = prec ? part_list(s, i, prec, prows, rec, rows, s->pc_ok,
                                   no, qall)
                       : NAN;
    if (isnan(best))
        best = part_full(s, i, rec, rows, s->pc_ok, no, qall);
    /* sums in another order than the plans' own: a margin */
    double v = best == -INFINITY ? -INFINITY : fixed + best;
    if (v > -INFINITY)
        v += 1e-9 * (fabs(fixed) + qall + fabs(best) + s->pscale + 1);
    rec->v = v;
#ifdef SURETY_CHECK_INVARIANTS
    chk_part(s, i, v);
#endif
    return v;
}

/* sum_i min(P_i bound, dec_c[i]) at the current node, at depth `depth`,
 * or NAN where this bound does not apply (before the probes, separate
 * constraints, out of memory). pxcur must be the node's row
 * (surety_bound_node has run). `last` is the node's last decision when
 * its parent, at depth - 1, was bounded here as well (a resource, or
 * SURETY_JOB_OUT), else SURETY_PC_ALL: a child's completions are among
 * its parent's, so it keeps the parent's values of the resources its
 * decision does not place a job in, and bounds the one it does from the
 * parent's list. */
double surety_priced_parts(surety_solver *s, size_t depth, long last)
{
    if (s->pc_state == 0) {
        if (s->separate || !s->dec_lam) {
            s->pc_state = -1;
        } else if (!s->dec_c || !(s->dec_lsum < INFINITY)) {
            return NAN; /* the prices may still change */
        } else if (priced_init(s) != 0) {
            surety_priced_free(s);
            s->pc_state = -1;
        } else {
            s->pc_state = 1;
        }
    }
    if (s->pc_state < 0)
        return NAN;
    size_t m = s->m, L = s->pc_L;
    int inherit = depth > 0 && last != SURETY_PC_ALL && s->pc_have[depth - 1];
    double sum = 0;
    for (size_t i = 0; i < m; i++) {
        size_t at = depth * m + i, v;
        if (inherit && (long)i != last) {
            s->pc_src[at] = s->pc_src[at - m]; /* the parent's own */
        } else {
            const solve_prec *prec = NULL;
            const uint32_t *prows = NULL;
            if (inherit) {
                size_t p = s->pc_src[at - m];
                prec = &s->pc_rec[p];
                prows = s->pc_rows + p * L;
            }
            part_of(s, i, prec, prows, &s->pc_rec[at], s->pc_rows + at * L);
            s->pc_src[at] = at;
        }
        v = s->pc_src[at];
        double w = s->pc_rec[v].v;
        sum += w < s->dec_c[i] ? w : s->dec_c[i];
    }
    s->pc_have[depth] = 1;
    return sum;
}
