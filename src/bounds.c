/* bounds.c - a confidence interval for the true optimal profit from
 * replicated sample approximations (Pagnoncelli, Ahmed & Shapiro 2009).
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "check.h"
#include "clock.h"
#include "model.h"
#include "plan.h"
#include "sizes.h"
#include "stats.h"

void surety_bounds_options_init(surety_bounds_options *opt)
{
    if (!opt)
        return;
    memset(opt, 0, sizeof *opt);
    opt->replications = 10;
    opt->confidence = 0.95;
    opt->samples = 10000;
    surety_solve_options_init(&opt->solve);
}

void surety_bounds_report_free(surety_bounds_report *rep)
{
    if (!rep)
        return;
    surety_xfree(rep->bound);
    surety_xfree(rep->objective);
    surety_xfree(rep->replication);
    surety_plan_free(rep->plan);
    memset(rep, 0, sizeof *rep);
}

static int same_plan(const surety_plan *a, const surety_plan *b)
{
    return a->n == b->n && !memcmp(a->resource, b->resource, a->n * sizeof *a->resource);
}

/* Share of the upper side's per-replication success probability given up
 * so that the sampled mean profit of the true optimal plan is covered too
 * (see surety_bounds). A fixed choice: smaller makes the margin wider,
 * larger makes L smaller. */
#define BOUNDS_ETA 0.02

/* Sum over jobs of the sample standard deviation of the job's profit in
 * `sc`. By Minkowski's inequality it bounds the standard deviation of any
 * plan's profit, a sum of some of these columns. */
static double profit_sd_sum(const surety_scenarios *sc)
{
    size_t N = surety_scenarios_count(sc), n = surety_scenarios_jobs(sc);
    const double *p = surety_scenarios_profit(sc);
    if (N < 2)
        return 0;
    double sum = 0;
    for (size_t j = 0; j < n; j++) {
        double mean = 0, ss = 0;
        for (size_t l = 0; l < N; l++)
            mean += p[l * n + j];
        mean /= (double)N;
        for (size_t l = 0; l < N; l++) {
            double d = p[l * n + j] - mean;
            ss += d * d;
        }
        sum += sqrt(ss / (double)(N - 1));
    }
    return sum;
}

/* Solves one sample at `risk`; fills bound/objective, copies the plan and,
 * when sd_sum is given, raises it to the sample's profit_sd_sum. */
static surety_code solve_one(const surety_model *model, uint64_t stream, size_t N,
                             double risk, const surety_solve_options *sopt,
                             double *bound, double *objective, int *optimal,
                             surety_plan **plan, double *seconds, double *sd_sum,
                             surety_error *err)
{
    surety_scenarios *sc = NULL;
    surety_code code;
    if (stream == SURETY_STREAM_SOLVE)
        code = surety_model_sample(model, &sc, err);
    else
        code = surety_sample(model, stream, 0, N, &sc, err);
    if (code)
        return code;
    if (sd_sum) {
        double s = profit_sd_sum(sc);
        if (s > *sd_sum)
            *sd_sum = s;
    }
    surety_model level = *model; /* shallow: only the risk changes */
    level.risk = risk;
    surety_result *res = NULL;
    code = surety_solve(&level, sc, sopt, &res, err);
    surety_scenarios_free(sc);
    if (code)
        return code;
    *bound = surety_result_bound(res);
    *objective = surety_result_objective(res);
    *optimal = surety_result_status(res) == SURETY_OPTIMAL ||
               surety_result_status(res) == SURETY_INFEASIBLE;
    *seconds += surety_result_seconds(res);
    *plan = NULL;
    if (surety_result_plan(res)) {
        *plan = surety_plan_copy(surety_result_plan(res));
        if (!*plan) {
            surety_result_free(res);
            surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
            return SURETY_EINTERNAL;
        }
    } else {
        *objective = -INFINITY;
    }
    surety_result_free(res);
    return SURETY_OK;
}

/* The error probability beta = 1 - C is split three ways (Bonferroni):
 * beta/2 for the upper bound, beta/4 for "every plan that passes screening
 * truly meets 1-eps" (itself divided among the K distinct candidates), and
 * beta/4 for the lower confidence bound on the chosen plan's mean profit.
 * The interval [lower, upper] then holds with probability >= C.
 *
 * Upper side (Pagnoncelli, Ahmed & Shapiro 2009, METHODS.md s.5): replication
 * r solves stream SURETY_STREAM_REPLICATE + r at risk gamma. The true
 * optimal plan x* fits the sample with probability >= theta_N =
 * B(floor(gamma N); N, eps), and then the sample optimum is at least x*'s
 * objective in the sample; so the L-th largest dual bound, L the largest
 * with B(L-1; M, theta) <= beta/2, is an upper bound with confidence
 * 1 - beta/2. The dual bound (not the incumbent) is used so that a search
 * stopped by a limit still gives a valid value. Two corrections keep that
 * claim true here:
 *  - PAS 2009 has a deterministic objective; ours is the mean profit over
 *    the sample, which for x* falls below its true mean about half the
 *    time. With sigma_S the summed per-job profit sd (>= the sd of x*'s
 *    profit), x*'s sampled mean is below v* - z sigma_S / sqrt(N),
 *    z = Phi^{-1}(1 - eta), with probability about eta (central limit
 *    theorem), so bound + z sigma_S / sqrt(N) reaches v* with probability
 *    >= theta_N - eta (union bound); the margin is added to the L-th bound.
 *  - A separate model's x* fits the sample only if each of its m
 *    constraints does: probability >= 1 - m (1 - theta_N) (Bonferroni). */
surety_code surety_bounds(const surety_model *model, const surety_bounds_options *opt,
                          surety_bounds_report *out, surety_error *err)
{
    if (out)
        memset(out, 0, sizeof *out);
    if (!model || !out) {
        surety_error_set(err, NULL, 0, 0, NULL, "surety_bounds: model and out are required");
        return SURETY_EUSAGE;
    }
    surety_bounds_options defaults;
    if (!opt) {
        surety_bounds_options_init(&defaults);
        opt = &defaults;
    }
    if (!(opt->confidence > 0 && opt->confidence < 1) || opt->replications == 0 ||
        opt->samples == 0 || !(opt->gamma < 1)) {
        surety_error_set(err, NULL, 0, 0, "replications",
                         "need replications >= 1, samples >= 1, confidence and gamma in (0,1)");
        return SURETY_EUSAGE;
    }
    if (surety_model_has_table(model)) {
        surety_error_set(err, NULL, 0, 0, "scenario_table",
                         "bounds need independent samples; a model with a fixed scenario "
                         "table has only one");
        return SURETY_EINPUT;
    }
    double t0 = surety_clock_seconds();
    size_t M = opt->replications;
    double beta = 1 - opt->confidence;
    out->eps = surety_model_risk(model);
    out->gamma = opt->gamma > 0 ? opt->gamma : out->eps;
    out->confidence = opt->confidence;
    out->N = surety_model_scenarios(model);
    out->M = M;
    out->beta_upper = beta / 2;
    out->beta_lower = beta / 2;
    out->plan_source = -1;
    out->upper = out->lower = NAN;
    out->profit_mean = out->profit_sd = out->reliability_lower = NAN;
    out->bound = surety_xmalloc(M, sizeof *out->bound);
    out->objective = surety_xmalloc(M, sizeof *out->objective);
    out->replication = surety_xmalloc(M, sizeof *out->replication);
    /* candidates: the M replication plans and two plans solved at eps/2
     * and eps/4 on the model's own sample, which have a fair chance to
     * truly meet 1-eps when the replication plans (solved near eps) fall
     * just short */
    surety_plan **cand = surety_xcalloc(M + 2, sizeof *cand);
    long *src = surety_xmalloc(M + 2, sizeof *src);
    double *cand_risk = surety_xmalloc(M + 2, sizeof *cand_risk);
    surety_code code = SURETY_OK;
    if (!out->bound || !out->objective || !out->replication || !cand || !src || !cand_risk) {
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        code = SURETY_EINTERNAL;
        goto done;
    }
    out->all_optimal = 1;
    size_t K = 0;
    double sd_sum = 0;
    for (size_t r = 0; r < M; r++) {
        int optimal = 0;
        surety_plan *plan = NULL;
        code = solve_one(model, SURETY_STREAM_REPLICATE + r, out->N, out->gamma, &opt->solve,
                         &out->bound[r], &out->objective[r], &optimal, &plan,
                         &out->solve_seconds, &sd_sum, err);
        if (code)
            goto done;
        out->replication[r] = (long)r;
        out->all_optimal &= optimal;
        if (plan) {
            cand[K] = plan;
            src[K++] = (long)r;
        }
        if (opt->solve.interrupt && *opt->solve.interrupt) {
            code = SURETY_EINTERNAL;
            surety_error_set(err, NULL, 0, 0, NULL, "interrupted");
            goto done;
        }
    }
    /* extra candidates on the model's own sample at eps/2 and eps/4 */
    for (size_t c = 0; c < K; c++)
        cand_risk[c] = out->gamma;
    for (int e = 1; e <= 2; e++) {
        double b, o, risk = out->eps / (double)(2 * e);
        int optimal;
        surety_plan *plan = NULL;
        code = solve_one(model, SURETY_STREAM_SOLVE, out->N, risk, &opt->solve, &b, &o,
                         &optimal, &plan, &out->solve_seconds, NULL, err);
        if (code)
            goto done;
        if (plan) {
            cand[K] = plan;
            cand_risk[K] = risk;
            src[K++] = -1;
        }
    }
    /* most optimistic first (insertion sort; M is small) */
    for (size_t a = 1; a < M; a++)
        for (size_t q = a; q > 0 && out->bound[q] > out->bound[q - 1]; q--) {
            double t = out->bound[q];
            out->bound[q] = out->bound[q - 1];
            out->bound[q - 1] = t;
            t = out->objective[q];
            out->objective[q] = out->objective[q - 1];
            out->objective[q - 1] = t;
            long u = out->replication[q];
            out->replication[q] = out->replication[q - 1];
            out->replication[q - 1] = u;
        }
    out->theta = surety_stats_pas_theta(out->N, out->gamma, out->eps);
    double theta = out->theta;
    size_t m = surety_model_resources(model);
    if (surety_model_constraint(model) == SURETY_SEPARATE && m > 1)
        theta = 1 - (double)m * (1 - theta);
    if (sd_sum > 0) {
        theta -= BOUNDS_ETA;
        out->margin = -surety_norm_quantile(BOUNDS_ETA) * sd_sum / sqrt((double)out->N);
    }
    out->theta_eff = theta > 0 ? theta : 0;
    out->L = (long)surety_stats_pas_rank(M, out->theta_eff, out->beta_upper);
    if (out->L > 0)
        out->upper = out->bound[out->L - 1] + out->margin;

    /* Lower side. Identical plans are one hypothesis: drop duplicates
     * before counting K for the Bonferroni split. */
    size_t distinct = 0;
    for (size_t c = 0; c < K; c++) {
        surety_plan *p = cand[c];
        cand[c] = NULL;
        int dup = 0;
        for (size_t e = 0; e < distinct && !dup; e++)
            dup = same_plan(p, cand[e]);
        if (dup) {
            surety_plan_free(p);
            continue;
        }
        cand[distinct] = p;
        cand_risk[distinct] = cand_risk[c];
        src[distinct++] = src[c];
    }
    K = distinct;
    double beta_feas = beta / 4, beta_mean = beta / 4;
    long best = -1;
    double best_profit = -INFINITY;
    surety_model level = *model;
    for (size_t c = 0; c < K; c++) {
        surety_check_report rep;
        code = surety_check_fresh(&level, cand[c], opt->samples, 0,
                                  1 - beta_feas / (double)K, &rep, err);
        if (code)
            goto done;
        out->check_seconds += rep.sample_seconds + rep.check_seconds;
        if (rep.lower >= 1 - out->eps && rep.profit_mean > best_profit) {
            best_profit = rep.profit_mean;
            best = (long)c;
            out->reliability_lower = rep.lower;
        }
        surety_check_report_free(&rep);
    }
    if (best >= 0) {
        /* the chosen plan's profit on scenarios no candidate was screened
         * on: SCREEN stream samples .. 2*samples-1, so the choice of the
         * best screened mean does not inflate it */
        surety_check_report rep;
        code = surety_check_fresh(&level, cand[best], opt->samples,
                                  opt->samples, opt->confidence, &rep, err);
        if (code)
            goto done;
        out->check_seconds += rep.sample_seconds + rep.check_seconds;
        out->profit_mean = rep.profit_mean;
        out->profit_sd = rep.profit_sd;
        /* one-sided lower bound on the mean: normal approximation (central
         * limit theorem over rep.M i.i.d. scenarios) */
        double z = surety_norm_quantile(1 - beta_mean);
        out->lower = rep.profit_mean - z * rep.profit_sd / sqrt((double)rep.M);
        surety_check_report_free(&rep);
        out->plan = cand[best];
        cand[best] = NULL;
        out->plan_source = src[best];
        out->plan_risk = cand_risk[best];
    }
    code = SURETY_OK;
done:
    surety_xfree(cand_risk);
    if (cand)
        for (size_t c = 0; c < M + 2; c++)
            surety_plan_free(cand[c]);
    surety_xfree(cand);
    surety_xfree(src);
    out->seconds = surety_clock_seconds() - t0;
    if (code)
        surety_bounds_report_free(out);
    return code;
}
