/* advise.c - how many scenarios published theory asks for, row by row, each
 * with its source and what it does (and does not) certify.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "model.h"
#include "sizes.h"

/* Each job goes to one of its allowed resources or, unless required, stays
 * out: |X| <= prod_j (a_j + [not required]) (Luedtke & Ahmed 2008 use
 * n ln(m+1); counting the allowed pairs is the same bound, tighter). Their
 * guarantee is a union bound over X; with separate constraints a plan
 * makes m statements, one per resource, so the union runs over m |X|. */
double surety_advise_log_plans(const surety_model *model)
{
    if (!model)
        return NAN;
    double lnX = 0;
    for (size_t j = 0; j < model->n; j++) {
        size_t a = model->jobs[j].required ? 0 : 1;
        for (size_t i = 0; i < model->m; i++)
            a += model->jobs[j].allowed[i] != 0;
        if (a > 1)
            lnX += log((double)a);
    }
    /* Separate constraints: the union bound of Luedtke & Ahmed runs over
     * the m per-resource statements of every plan. */
    if (model->constraint == SURETY_SEPARATE && model->m > 1)
        lnX += log((double)model->m);
    return lnX;
}

size_t surety_advise_variables(const surety_model *model)
{
    if (!model)
        return 0;
    size_t d = 0;
    for (size_t j = 0; j < model->n; j++)
        for (size_t i = 0; i < model->m; i++)
            d += model->jobs[j].allowed[i] != 0;
    return d;
}

void surety_advice_free(surety_advice *a)
{
    if (!a)
        return;
    surety_xfree(a->row);
    memset(a, 0, sizeof *a);
}

static size_t cap_n(size_t N)
{
    return N > SURETY_ADVICE_NMAX ? 0 : N;
}

static void add_row(surety_advice *a, surety_advice_kind kind, double alpha, long k,
                    size_t N, size_t N_first, double chernoff, double hoeffding,
                    const char *source)
{
    surety_advice_row *r = &a->row[a->nrows++];
    r->kind = kind;
    r->alpha = alpha;
    r->k = k;
    r->N = cap_n(N);
    r->N_first = cap_n(N_first);
    r->chernoff = chernoff;
    r->hoeffding = hoeffding;
    r->source = source;
}

static double closed(size_t v)
{
    return v == 0 ? NAN : (double)v;
}

surety_code surety_advise(double eps, double confidence, double log_plans, size_t d,
                          long allow, surety_advice *out, surety_error *err)
{
    if (out)
        memset(out, 0, sizeof *out);
    if (!out) {
        surety_error_set(err, NULL, 0, 0, NULL, "surety_advise: out is required");
        return SURETY_EUSAGE;
    }
    if (!(eps > 0 && eps < 1)) {
        surety_error_set(err, NULL, 0, 0, "risk", "the risk must lie in (0,1), not %g", eps);
        return SURETY_EUSAGE;
    }
    if (!(confidence > 0 && confidence < 1)) {
        surety_error_set(err, NULL, 0, 0, "confidence",
                         "the confidence must lie in (0,1), not %g", confidence);
        return SURETY_EUSAGE;
    }
    if (!(log_plans >= 0) || !isfinite(log_plans) || d == 0) {
        surety_error_set(err, NULL, 0, 0, "jobs",
                         "need at least one job that may go to a resource");
        return SURETY_EUSAGE;
    }
    out->row = surety_xcalloc(10, sizeof *out->row);
    if (!out->row) {
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    out->eps = eps;
    out->confidence = confidence;
    out->log_plans = log_plans;
    out->d = d;
    double delta = 1 - confidence;
    static const char la[] = "Luedtke & Ahmed 2008, finite plan set, exact binomial form";
    static const char cg[] = "Campi & Garatti 2011, sampling and discarding (convex only)";
    static const char cp[] = "Clopper & Pearson 1934, one-sided, no overload among fresh";

    /* k = 0: fixed allowance, monotone in N (METHODS.md s.3.1) */
    size_t n0 = surety_stats_la_fixed_k(eps, 0, delta, log_plans);
    add_row(out, SURETY_ADVICE_FINITE, 0.0, -1, n0, n0,
            closed(surety_stats_la_chernoff(eps, 0, delta, log_plans)),
            closed(surety_stats_la_hoeffding(eps, 0, delta, log_plans)), la);
    /* allowances proportional to N: report the stable N (every larger N
     * passes), and the first passing N beside it */
    static const double share[3] = {0.25, 0.5, 0.75};
    for (int s = 0; s < 3; s++) {
        double alpha = share[s] * eps;
        add_row(out, SURETY_ADVICE_FINITE, alpha, -1,
                surety_stats_la_stable(eps, alpha, delta, log_plans),
                surety_stats_la_first(eps, alpha, delta, log_plans),
                closed(surety_stats_la_chernoff(eps, alpha, delta, log_plans)),
                closed(surety_stats_la_hoeffding(eps, alpha, delta, log_plans)), la);
    }
    if (allow > 0) {
        size_t nk = surety_stats_la_fixed_k(eps, (size_t)allow, delta, log_plans);
        add_row(out, SURETY_ADVICE_FINITE, NAN, allow, nk, nk, NAN, NAN, la);
    }
    size_t nd = surety_stats_discard_min_n(0, d, eps, delta);
    add_row(out, SURETY_ADVICE_DISCARDING, NAN, 0, nd, nd, NAN, NAN, cg);
    if (allow > 0) {
        nd = surety_stats_discard_min_n((size_t)allow, d, eps, delta);
        add_row(out, SURETY_ADVICE_DISCARDING, NAN, allow, nd, nd, NAN, NAN, cg);
    }
    size_t nc = surety_stats_certify_min_samples(eps, delta, 0);
    add_row(out, SURETY_ADVICE_CHECK, NAN, 0, nc, nc, NAN, NAN, cp);
    return SURETY_OK;
}
