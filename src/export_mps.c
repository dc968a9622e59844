/* export_mps.c - the sample approximation as a mixed-integer program in
 * free MPS, with plain or order-statistic (quantile) big-M coefficients.
 * SPDX-License-Identifier: MIT */
#include <ctype.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "alloc.h"
#include "fileio.h"
#include "model.h"
#include "sample.h"

/* What becomes of capacity row (l, i). */
enum {
    ROW_DROP = 0, /* can never bind: not written */
    ROW_HARD = 1, /* written without indicator: load <= capacity */
    ROW_BIGM = 2, /* load - M z <= capacity */
};

struct keyed {
    double key;
    size_t l;
};

typedef struct export_ctx {
    const surety_model *model;
    const surety_scenarios *sc;
    size_t n, m, N, k;
    double *bigm;        /* N*m, M_li at [l*m + i] */
    unsigned char *row;  /* N*m, ROW_* at [l*m + i] */
    /* scratch for the strengthened M of one resource */
    size_t *jobs;        /* jobs allowed in the resource, <= n */
    double *a;           /* N*nj: factor_i * hours, [l*nj + t] */
    double *total;       /* N: sum over allowed jobs of a */
    struct keyed *order; /* N: scenarios by decreasing total */
    double *ratio;       /* nj */
    size_t *idx;         /* nj */
    double *wbar;        /* nj: mean of a over the scenarios */
    size_t *pi;          /* nj: scenario l's jobs by decreasing a/wbar */
    double *heap;        /* k+1: max-heap of the smallest values so far */
} export_ctx;

/* Plain big-M: the load with every allowed job in the resource, minus the
 * capacity. Computed with the same product form as surety_plan_holds. */
static void plain_bigm(export_ctx *c)
{
    const surety_model *model = c->model;
    for (size_t l = 0; l < c->N; l++) {
        const double *w = c->sc->hours + l * c->n;
        for (size_t i = 0; i < c->m; i++) {
            double sum = 0;
            for (size_t j = 0; j < c->n; j++)
                if (model->jobs[j].allowed[i])
                    sum += w[j];
            double M = model->resources[i].hours_factor * sum -
                       model->resources[i].capacity;
            c->bigm[l * c->m + i] = M;
            c->row[l * c->m + i] = M > 0 ? ROW_BIGM : ROW_DROP;
        }
    }
}

/* A feasible point of the same fractional knapsack, filled in the fixed
 * order pi (taken prefix, one fractional item, nothing after): its value is
 * a lower bound. */
static double fixed_order_fill(const double *a, const double *b,
                               const size_t *pi, size_t nj, double C)
{
    double cap = C, v = 0;
    for (size_t p = 0; p < nj; p++) {
        size_t t = pi[p];
        if (b[t] <= cap) {
            v += a[t];
            cap -= b[t];
        } else {
            v += a[t] * (cap / b[t]);
            break;
        }
    }
    return v;
}

/* Value of max sum_t a[t] x_t subject to sum_t b[t] x_t <= C, 0 <= x <= 1:
 * the fractional knapsack, whose optimum takes items by decreasing a/b and
 * the last one fractionally (Dantzig's rule); items with b = 0 are always
 * taken. Instead of sorting, the critical ratio is found by a weighted
 * quickselect on the ratios (three-way partitions around a median-of-three
 * pivot, recursing into the side that holds the capacity boundary), O(nj)
 * expected (Balas & Zemel 1980). idx and r are nj scratch entries. */
static double frac_knapsack(const double *a, const double *b, size_t nj,
                            double C, double *r, size_t *idx)
{
    double v = 0, cap = C;
    size_t q = 0;
    for (size_t t = 0; t < nj; t++) {
        if (b[t] <= 0) {
            v += a[t];
        } else if (a[t] > 0) {
            r[t] = a[t] / b[t];
            idx[q++] = t;
        }
    }
    size_t lo = 0, hi = q;
    while (lo < hi) {
        double x = r[idx[lo]], y = r[idx[lo + (hi - lo) / 2]], z = r[idx[hi - 1]];
        double p = x < y ? (y < z ? y : (x < z ? z : x))
                         : (x < z ? x : (y < z ? z : y));
        /* idx[lo..gt) > p, idx[gt..i) == p, idx[lt..hi) < p */
        size_t gt = lo, i = lo, lt = hi;
        while (i < lt) {
            size_t t = idx[i];
            if (r[t] > p) {
                idx[i] = idx[gt];
                idx[gt++] = t;
                i++;
            } else if (r[t] < p) {
                idx[i] = idx[--lt];
                idx[lt] = t;
            } else {
                i++;
            }
        }
        double bg = 0, ag = 0;
        for (size_t u = lo; u < gt; u++) {
            bg += b[idx[u]];
            ag += a[idx[u]];
        }
        if (bg > cap) {
            hi = gt; /* the boundary lies among the larger ratios */
            continue;
        }
        v += ag;
        cap -= bg;
        double be = 0, ae = 0;
        for (size_t u = gt; u < lt; u++) {
            be += b[idx[u]];
            ae += a[idx[u]];
        }
        if (be >= cap)
            return v + p * cap; /* equal ratios: a = p b */
        v += ae;
        cap -= be;
        lo = lt;
    }
    return v;
}

static void heap_sift_down(double *h, size_t len, size_t p)
{
    for (;;) {
        size_t c = 2 * p + 1;
        if (c >= len)
            return;
        if (c + 1 < len && h[c + 1] > h[c])
            c++;
        if (h[p] >= h[c])
            return;
        double t = h[p];
        h[p] = h[c];
        h[c] = t;
        p = c;
    }
}

static void heap_push(double *h, size_t *len, double v)
{
    size_t p = (*len)++;
    h[p] = v;
    while (p > 0) {
        size_t q = (p - 1) / 2;
        if (h[q] >= h[p])
            break;
        double t = h[p];
        h[p] = h[q];
        h[q] = t;
        p = q;
    }
}

static int by_key_desc(const void *x, const void *y)
{
    const struct keyed *a = x, *b = y;
    if (a->key > b->key)
        return -1;
    if (a->key < b->key)
        return 1;
    return a->l < b->l ? -1 : a->l > b->l;
}

/* Quantile big-M for resource i (Luedtke 2014; Qiu, Ahmed, Dey & Wolsey
 * 2014; Song, Luedtke & Kucukyavuz 2014; METHODS.md s.6). A plan feasible
 * for the sample satisfies at least N-k scenarios, so among any k+1
 * scenarios one holds resource i. With m(l,l') = max over the LP
 * relaxation of resource i of load_l - C_i subject to load_l' <= C_i,
 * every feasible plan has load_l - C_i <= m(l,l') for some l' among the
 * k+1 scenarios of smallest m(l,.), so M_li = the (k+1)-th smallest
 * m(l,l') over l' is a valid big-M (also for separate constraints, which
 * hold resource i in N-k scenarios on its own).
 *
 * Speed, keeping M exact: scenarios l' are visited in order of decreasing
 * total load B_l' (sorted once per resource), so small values come first
 * and the current (k+1)-th smallest T drops fast. For each pair, cheap
 * lower bounds on m(l,l') decide whether the exact knapsack is needed:
 *  - scaling every x_j by min(1, C/B_l') is feasible, so
 *    m >= A_l min(1, C/B_l') - C; it only grows along the visiting order,
 *    so once it reaches T no later l' can enter and the scan stops;
 *  - a fill in a fixed order per l (jobs by a_lj over their mean weight,
 *    which is close to the ratio order of most l') is feasible too; when
 *    its value is >= T the pair is skipped.
 * The remaining pairs get the exact value from frac_knapsack. Every skip is a value >= T, so the result is the
 * exact (k+1)-th smallest; rounding in the tests can at worst skip a value
 * within an ulp of T, which makes M larger (looser), never invalid.
 * Cost: O(N^2 nj) per resource, with small constants. */
static int quantile_bigm(export_ctx *c, size_t i)
{
    const surety_model *model = c->model;
    size_t n = c->n, N = c->N, nj = 0;
    double f = model->resources[i].hours_factor;
    double C = model->resources[i].capacity;
    for (size_t j = 0; j < n; j++)
        if (model->jobs[j].allowed[i])
            c->jobs[nj++] = j;
    double *a = surety_xmalloc(N, (nj ? nj : 1) * sizeof *a);
    if (!a)
        return -1;
    c->a = a;
    for (size_t l = 0; l < N; l++) {
        const double *w = c->sc->hours + l * n;
        double sum = 0;
        for (size_t t = 0; t < nj; t++) {
            a[l * nj + t] = f * w[c->jobs[t]];
            sum += w[c->jobs[t]];
        }
        /* A_l in the product form of surety_plan_holds */
        c->total[l] = f * sum;
        c->order[l].key = c->total[l];
        c->order[l].l = l;
    }
    qsort(c->order, N, sizeof *c->order, by_key_desc);
    for (size_t t = 0; t < nj; t++) {
        double s = 0;
        for (size_t l = 0; l < N; l++)
            s += a[l * nj + t];
        c->wbar[t] = s / (double)N;
    }

    size_t need = c->k + 1;
    for (size_t l = 0; l < N; l++) {
        double A = c->total[l];
        double plain = A - C;
        double M = plain;
        if (plain > 0 && need <= N) {
            const double *al = a + l * nj;
            /* pi: jobs by decreasing a_lj / wbar_j (jobs never seen with
             * hours first), insertion sort on the small nj */
            for (size_t t = 0; t < nj; t++) {
                double r = c->wbar[t] > 0 ? al[t] / c->wbar[t] : INFINITY;
                size_t p = t;
                while (p > 0 && c->ratio[p - 1] < r) {
                    c->ratio[p] = c->ratio[p - 1];
                    c->pi[p] = c->pi[p - 1];
                    p--;
                }
                c->ratio[p] = r;
                c->pi[p] = t;
            }
            size_t len = 0;
            for (size_t r = 0; r < N; r++) {
                size_t lp = c->order[r].l;
                double B = c->order[r].key;
                double lower = (B > C ? A * (C / B) : A) - C;
                if (len == need && lower >= c->heap[0])
                    break;
                double v;
                if (B <= C) {
                    v = A - C; /* every allowed job fits scenario l' */
                } else {
                    v = fixed_order_fill(al, a + lp * nj, c->pi, nj, C) - C;
                    if (len == need && v >= c->heap[0])
                        continue;
                    v = frac_knapsack(al, a + lp * nj, nj, C, c->ratio,
                                      c->idx) - C;
                }
                if (len < need) {
                    heap_push(c->heap, &len, v);
                } else if (v < c->heap[0]) {
                    c->heap[0] = v;
                    heap_sift_down(c->heap, len, 0);
                }
            }
            M = c->heap[0];
            if (M > plain)
                M = plain;
        }
        c->bigm[l * c->m + i] = M;
        if (plain <= 0)
            c->row[l * c->m + i] = ROW_DROP;
        else
            c->row[l * c->m + i] = M > 0 ? ROW_BIGM : ROW_HARD;
    }
    surety_xfree(a);
    c->a = NULL;
    return 0;
}

static void free_ctx(export_ctx *c)
{
    surety_xfree(c->bigm);
    surety_xfree(c->row);
    surety_xfree(c->jobs);
    surety_xfree(c->a);
    surety_xfree(c->total);
    surety_xfree(c->order);
    surety_xfree(c->ratio);
    surety_xfree(c->idx);
    surety_xfree(c->wbar);
    surety_xfree(c->pi);
    surety_xfree(c->heap);
}

/* The model name with anything but letters, digits, '_', '-', '.' replaced,
 * so the NAME line is a single free-MPS token. */
static void write_name(FILE *fp, const char *name)
{
    if (!name || !*name)
        name = "surety";
    for (const char *p = name; *p; p++) {
        unsigned char ch = (unsigned char)*p;
        fputc(isalnum(ch) || ch == '_' || ch == '-' || ch == '.' ? ch : '_',
              fp);
    }
}

static void write_mps(const export_ctx *c, surety_bigm bigm, FILE *fp)
{
    const surety_model *model = c->model;
    const surety_scenarios *sc = c->sc;
    size_t n = c->n, m = c->m, N = c->N;
    int separate = model->constraint == SURETY_SEPARATE;

    /* per-job mean profit over the N scenarios, summed in scenario order
     * and divided by N exactly as surety_plan_profit does */
    fprintf(fp, "* sample approximation of a %s chance constraint\n",
            separate ? "separate" : "joint");
    fprintf(fp, "* N = %zu scenarios, allowance k = %zu, %s big-M\n", N,
            c->k, bigm == SURETY_BIGM_PLAIN ? "plain" : "strengthened");
    fprintf(fp, "* objective: minimise minus the mean profit\n");
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            if (model->jobs[j].allowed[i])
                fprintf(fp, "* x_%zu_%zu = job %s in resource %s\n", j, i,
                        model->jobs[j].id, model->resources[i].id);
    fprintf(fp, "NAME ");
    write_name(fp, model->name);
    fprintf(fp, "\nROWS\n N obj\n");
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] != ROW_DROP)
                fprintf(fp, " L cap_%zu_%zu\n", l, i);
    /* allowance rows, only when some indicator exists */
    size_t *zcount = surety_xcalloc(m + 1, sizeof *zcount);
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] == ROW_BIGM && zcount)
                zcount[separate ? i : 0]++;
    for (size_t i = 0; i < (separate ? m : 1); i++)
        if (!zcount || zcount[i]) {
            if (separate)
                fprintf(fp, " L allow_%zu\n", i);
            else
                fprintf(fp, " L allow\n");
        }
    for (size_t j = 0; j < n; j++) {
        int any = 0;
        for (size_t i = 0; i < m; i++)
            any |= model->jobs[j].allowed[i] != 0;
        if (any || model->jobs[j].required)
            fprintf(fp, " %c assign_%zu\n", model->jobs[j].required ? 'E' : 'L',
                    j);
    }

    fprintf(fp, "COLUMNS\n");
    fprintf(fp, "    MARKER 'MARKER' 'INTORG'\n");
    for (size_t j = 0; j < n; j++) {
        double p = 0;
        for (size_t l = 0; l < N; l++)
            p += sc->profit[l * n + j];
        p /= (double)N;
        for (size_t i = 0; i < m; i++) {
            if (!model->jobs[j].allowed[i])
                continue;
            double f = model->resources[i].hours_factor;
            if (p != 0)
                fprintf(fp, "    x_%zu_%zu obj %.17g\n", j, i, -p);
            for (size_t l = 0; l < N; l++) {
                double w = f * sc->hours[l * n + j];
                if (c->row[l * m + i] != ROW_DROP && w != 0)
                    fprintf(fp, "    x_%zu_%zu cap_%zu_%zu %.17g\n", j, i, l,
                            i, w);
            }
            fprintf(fp, "    x_%zu_%zu assign_%zu 1\n", j, i, j);
        }
    }
    for (size_t l = 0; l < N; l++) {
        if (separate) {
            for (size_t i = 0; i < m; i++)
                if (c->row[l * m + i] == ROW_BIGM) {
                    fprintf(fp, "    z_%zu_%zu cap_%zu_%zu %.17g\n", l, i, l, i,
                            -c->bigm[l * m + i]);
                    fprintf(fp, "    z_%zu_%zu allow_%zu 1\n", l, i, i);
                }
            continue;
        }
        int any = 0;
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] == ROW_BIGM) {
                fprintf(fp, "    z_%zu cap_%zu_%zu %.17g\n", l, l, i,
                        -c->bigm[l * m + i]);
                any = 1;
            }
        if (any)
            fprintf(fp, "    z_%zu allow 1\n", l);
    }
    fprintf(fp, "    MARKER 'MARKER' 'INTEND'\n");

    fprintf(fp, "RHS\n");
    for (size_t l = 0; l < N; l++)
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] != ROW_DROP)
                fprintf(fp, "    rhs cap_%zu_%zu %.17g\n", l, i,
                        model->resources[i].capacity);
    for (size_t i = 0; i < (separate ? m : 1); i++)
        if ((!zcount || zcount[i]) && c->k > 0) {
            if (separate)
                fprintf(fp, "    rhs allow_%zu %zu\n", i, c->k);
            else
                fprintf(fp, "    rhs allow %zu\n", c->k);
        }
    for (size_t j = 0; j < n; j++)
        fprintf(fp, "    rhs assign_%zu 1\n", j);

    fprintf(fp, "BOUNDS\n");
    for (size_t j = 0; j < n; j++)
        for (size_t i = 0; i < m; i++)
            if (model->jobs[j].allowed[i])
                fprintf(fp, " UP bnd x_%zu_%zu 1\n", j, i);
    for (size_t l = 0; l < N; l++) {
        if (separate) {
            for (size_t i = 0; i < m; i++)
                if (c->row[l * m + i] == ROW_BIGM)
                    fprintf(fp, " UP bnd z_%zu_%zu 1\n", l, i);
            continue;
        }
        for (size_t i = 0; i < m; i++)
            if (c->row[l * m + i] == ROW_BIGM) {
                fprintf(fp, " UP bnd z_%zu 1\n", l);
                break;
            }
    }
    fprintf(fp, "ENDATA\n");
    surety_xfree(zcount);
}

surety_code surety_export_mps(const surety_model *model,
                              const surety_scenarios *sc, surety_bigm bigm,
                              const char *path, surety_error *err)
{
    if (!model || !sc || !path) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "export: model, scenarios and path are required");
        return SURETY_EUSAGE;
    }
    if (sc->n != model->n) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "export: the scenarios have %zu jobs, the model %zu",
                         sc->n, model->n);
        return SURETY_EUSAGE;
    }
    if (sc->N == 0) {
        surety_error_set(err, NULL, 0, 0, NULL, "export: no scenarios");
        return SURETY_EUSAGE;
    }
    if (bigm != SURETY_BIGM_PLAIN && bigm != SURETY_BIGM_STRENGTHENED) {
        surety_error_set(err, NULL, 0, 0, NULL, "export: unknown big-M kind");
        return SURETY_EUSAGE;
    }

    export_ctx c;
    memset(&c, 0, sizeof c);
    c.model = model;
    c.sc = sc;
    c.n = model->n;
    c.m = model->m;
    c.N = sc->N;
    c.k = surety_allowance(model->risk, sc->N);
    c.bigm = surety_xmalloc(c.N, (c.m ? c.m : 1) * sizeof *c.bigm);
    c.row = surety_xmalloc(c.N, c.m ? c.m : 1);
    int bad = !c.bigm || !c.row;
    if (!bad && bigm == SURETY_BIGM_STRENGTHENED) {
        size_t nn = c.n ? c.n : 1;
        c.jobs = surety_xmalloc(nn, sizeof *c.jobs);
        c.total = surety_xmalloc(c.N, sizeof *c.total);
        c.order = surety_xmalloc(c.N, sizeof *c.order);
        c.ratio = surety_xmalloc(nn, sizeof *c.ratio);
        c.idx = surety_xmalloc(nn, sizeof *c.idx);
        c.wbar = surety_xmalloc(nn, sizeof *c.wbar);
        c.pi = surety_xmalloc(nn, sizeof *c.pi);
        c.heap = surety_xmalloc(c.k + 1, sizeof *c.heap);
        bad = !c.jobs || !c.total || !c.order || !c.ratio || !c.idx ||
              !c.wbar || !c.pi || !c.heap;
        for (size_t i = 0; i < c.m && !bad; i++)
            bad = quantile_bigm(&c, i) != 0;
    } else if (!bad) {
        plain_bigm(&c);
    }
    if (bad) {
        free_ctx(&c);
        surety_error_set(err, path, 0, 0, NULL,
                         "export: out of memory for %zu scenarios", sc->N);
        return SURETY_EINTERNAL;
    }

    surety_outfile out;
    surety_code rc = surety_outfile_open(&out, path, err);
    if (rc != SURETY_OK) {
        free_ctx(&c);
        return rc;
    }
    write_mps(&c, bigm, out.fp);
    free_ctx(&c);
    return surety_outfile_commit(&out, err);
}
