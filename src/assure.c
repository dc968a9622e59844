/* assure.c - solve, check out of sample, and grow the sample or lower the
 * risk solved at until the reliability target is shown with confidence.
 * SPDX-License-Identifier: MIT */
#include <math.h>
#include <string.h>

#include "alloc.h"
#include "check.h"
#include "clock.h"
#include "model.h"
#include "sample.h"
#include "stats.h"

void surety_assure_options_init(surety_assure_options *opt)
{
    if (!opt)
        return;
    memset(opt, 0, sizeof *opt);
    opt->confidence = 0.95;
    opt->samples = 10000;
    opt->max_steps = 12;
    surety_solve_options_init(&opt->solve);
}

const char *surety_assure_end_name(surety_assure_end end)
{
    switch (end) {
    case SURETY_ASSURE_MET: return "met";
    case SURETY_ASSURE_NOT_CERTIFIED: return "not_certified";
    case SURETY_ASSURE_SCENARIO_LIMIT: return "scenario_limit";
    case SURETY_ASSURE_TIME_LIMIT: return "time_limit";
    case SURETY_ASSURE_INFEASIBLE: return "infeasible";
    case SURETY_ASSURE_INTERRUPTED: return "interrupted";
    }
    return "unknown";
}

void surety_assure_report_free(surety_assure_report *rep)
{
    if (!rep)
        return;
    surety_xfree(rep->step);
    surety_plan_free(rep->plan);
    surety_check_report_free(&rep->cert);
    memset(rep, 0, sizeof *rep);
}

/* The solve stream's scenarios 0..N-1 as one set, reusing `old` (its first
 * scenarios) and drawing only the new ones: scenario l depends on (seed,
 * stream, l) alone, so the prefix is the same either way. */
static surety_code grow_sample(const surety_model *model, surety_scenarios *old,
                               size_t N, surety_scenarios **out, surety_error *err)
{
    size_t have = old ? old->N : 0;
    size_t n = surety_model_jobs(model);
    surety_scenarios *add = NULL, *sc = NULL;
    surety_code code = surety_sample(model, SURETY_STREAM_SOLVE, have, N - have, &add, err);
    if (code)
        return code;
    if (!old) {
        *out = add;
        return SURETY_OK;
    }
    code = surety_scenarios_alloc(N, n, &sc, err);
    if (code) {
        surety_scenarios_free(add);
        return code;
    }
    memcpy(sc->hours, old->hours, have * n * sizeof *sc->hours);
    memcpy(sc->profit, old->profit, have * n * sizeof *sc->profit);
    memcpy(sc->hours + have * n, add->hours, (N - have) * n * sizeof *sc->hours);
    memcpy(sc->profit + have * n, add->profit, (N - have) * n * sizeof *sc->profit);
    surety_scenarios_free(add);
    surety_scenarios_free(old);
    *out = sc;
    return SURETY_OK;
}

static int push_step(surety_assure_report *rep, size_t *cap, const surety_assure_step *st)
{
    if (rep->nsteps == *cap) {
        size_t c = *cap ? 2 * *cap : 8;
        surety_assure_step *p = surety_xrealloc(rep->step, c, sizeof *p);
        if (!p)
            return -1;
        rep->step = p;
        *cap = c;
    }
    rep->step[rep->nsteps++] = *st;
    return 0;
}

/* Steering rule (a rule of thumb, not a guarantee; the guarantee is the
 * final certificate). The optimal plan of a sample approximation solved at
 * risk a tends to overload a little more often than a out of sample: it is
 * chosen because it just fits the sample. Its observed violation v scales
 * roughly with a, so the next risk is a * aim / v, where `aim` is the
 * violation that would let a one-sided Clopper-Pearson bound on M fresh
 * scenarios clear the target (normal approximation of the interval's half
 * width). Doubling N at the same time shrinks the sample's own noise. */
static double next_risk(double a, double v, double target_eps, double conf, size_t M)
{
    double z = surety_norm_quantile(conf);
    double aim = target_eps - z * sqrt(target_eps * (1 - target_eps) / (double)M);
    if (aim < 0.25 * target_eps)
        aim = 0.25 * target_eps;
    double r = v > aim ? aim / v : 0.9;
    if (r < 0.25)
        r = 0.25;
    if (r > 0.9)
        r = 0.9;
    return a * r;
}

surety_code surety_assure(const surety_model *model, const surety_assure_options *opt,
                          surety_assure_report *out, surety_error *err)
{
    if (out)
        memset(out, 0, sizeof *out);
    if (!model || !out) {
        surety_error_set(err, NULL, 0, 0, NULL, "surety_assure: model and out are required");
        return SURETY_EUSAGE;
    }
    surety_assure_options defaults;
    if (!opt) {
        surety_assure_options_init(&defaults);
        opt = &defaults;
    }
    double R = opt->target > 0 ? opt->target : 1 - surety_model_risk(model);
    if (!(R > 0 && R < 1)) {
        surety_error_set(err, NULL, 0, 0, "target", "the target reliability must lie in (0,1)");
        return SURETY_EUSAGE;
    }
    if (!(opt->confidence > 0 && opt->confidence < 1) || opt->samples == 0) {
        surety_error_set(err, NULL, 0, 0, "confidence",
                         "confidence must lie in (0,1) and samples be positive");
        return SURETY_EUSAGE;
    }
    out->target = R;
    out->confidence = opt->confidence;
    out->chosen = -1;
    out->end = SURETY_ASSURE_SCENARIO_LIMIT;

    double t0 = surety_clock_seconds();
    int table = surety_model_has_table(model);
    size_t N = opt->start_scenarios ? opt->start_scenarios : surety_model_scenarios(model);
    if (table)
        N = surety_model_scenarios(model);
    size_t Nmax = opt->max_scenarios ? opt->max_scenarios : 16 * N;
    if (table || Nmax < N)
        Nmax = N;
    int max_steps = opt->max_steps > 0 ? opt->max_steps : 12;
    size_t Mc = opt->certify_samples ? opt->certify_samples : opt->samples;

    surety_model level = *model; /* shallow: only the risk changes */
    double alpha = 1 - R;
    surety_scenarios *sc = NULL;
    surety_code code;
    size_t cap = 0;
    double best_lower = -1;
    const surety_plan *hint = NULL;
    surety_plan **plans = surety_xcalloc((size_t)max_steps, sizeof *plans);
    if (!plans) {
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }

    for (int s = 0; s < max_steps; s++) {
        double t = surety_clock_seconds();
        if (table) {
            if (!sc)
                code = surety_model_sample(model, &sc, err);
            else
                code = SURETY_OK;
        } else {
            code = (!sc || sc->N < N) ? grow_sample(model, sc, N, &sc, err) : SURETY_OK;
        }
        out->sample_seconds += surety_clock_seconds() - t;
        if (code)
            goto fail;

        surety_assure_step st;
        memset(&st, 0, sizeof st);
        st.N = sc->N;
        st.risk = alpha;
        st.k = surety_allowance(alpha, sc->N);
        st.objective = st.bound = NAN;
        st.reliability = st.lo = st.hi = st.lower = st.profit_mean = NAN;

        surety_solve_options sopt = opt->solve;
        sopt.start = hint;
        if (opt->time_limit_s > 0) {
            double left = opt->time_limit_s - (surety_clock_seconds() - t0);
            if (left <= 0) {
                out->end = SURETY_ASSURE_TIME_LIMIT;
                break;
            }
            if (sopt.time_limit_s <= 0 || sopt.time_limit_s > left)
                sopt.time_limit_s = left;
        }
        level.risk = alpha;
        surety_result *res = NULL;
        code = surety_solve(&level, sc, &sopt, &res, err);
        if (code)
            goto fail;
        st.status = surety_result_status(res);
        st.stop = surety_result_stop(res);
        st.bound = surety_result_bound(res);
        st.solve_seconds = surety_result_seconds(res);
        out->solve_seconds += st.solve_seconds;
        const surety_plan *plan = surety_result_plan(res);
        if (plan) {
            st.objective = surety_result_objective(res);
            plans[s] = surety_plan_copy(plan);
            if (!plans[s]) {
                surety_result_free(res);
                surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
                code = SURETY_EINTERNAL;
                goto fail;
            }
        }
        surety_result_free(res);

        if (plans[s]) {
            /* Screening: every candidate on the same fresh scenarios, SCREEN
             * stream 0..M-1 (common random numbers). */
            surety_check_report rep;
            code = surety_check_fresh(&level, plans[s], opt->samples, 0,
                                      opt->confidence, &rep, err);
            if (code)
                goto fail;
            st.M = rep.M;
            st.fit = rep.fit;
            st.reliability = rep.reliability;
            st.lo = rep.lo;
            st.hi = rep.hi;
            st.lower = rep.lower;
            st.profit_mean = rep.profit_mean;
            st.sample_seconds = rep.sample_seconds;
            st.check_seconds = rep.check_seconds;
            out->sample_seconds += rep.sample_seconds;
            out->check_seconds += rep.check_seconds;
            surety_check_report_free(&rep);
            hint = plans[s];
        }
        if (push_step(out, &cap, &st)) {
            surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
            code = SURETY_EINTERNAL;
            goto fail;
        }
        if (plans[s] && (st.lower > best_lower ||
                         (st.lower == best_lower && out->chosen >= 0 &&
                          st.profit_mean > out->step[out->chosen].profit_mean))) {
            best_lower = st.lower;
            out->chosen = s;
        }
        if (plans[s] && st.lower >= R) {
            out->chosen = s;
            out->end = SURETY_ASSURE_MET;
            break;
        }
        if (opt->solve.interrupt && *opt->solve.interrupt) {
            out->end = SURETY_ASSURE_INTERRUPTED;
            break;
        }
        if (st.stop == SURETY_STOP_TIME && opt->time_limit_s > 0 &&
            surety_clock_seconds() - t0 >= opt->time_limit_s) {
            out->end = SURETY_ASSURE_TIME_LIMIT;
            break;
        }
        if (!plans[s]) {
            /* No plan at this risk on this sample: a smaller risk cannot
             * help; a larger sample might only when the search stopped. */
            if (st.status == SURETY_INFEASIBLE) {
                out->end = SURETY_ASSURE_INFEASIBLE;
                break;
            }
        } else {
            alpha = next_risk(alpha, 1 - st.reliability, 1 - R, opt->confidence, st.M);
        }
        if (N < Nmax)
            N = 2 * N < Nmax ? 2 * N : Nmax;
        if (s + 1 == max_steps)
            out->end = SURETY_ASSURE_SCENARIO_LIMIT;
    }

    if (out->chosen >= 0) {
        out->plan = plans[out->chosen];
        plans[out->chosen] = NULL;
        /* The certificate: the chosen plan on SCREEN scenarios samples ..
         * samples+Mc-1, none of which took part in screening, so the
         * selection among candidates does not bias it (METHODS.md s.4). */
        level.risk = 1 - R;
        code = surety_check_fresh(&level, out->plan, Mc, opt->samples,
                                  opt->confidence, &out->cert, err);
        if (code)
            goto fail;
        out->sample_seconds += out->cert.sample_seconds;
        out->check_seconds += out->cert.check_seconds;
        out->certified = out->cert.lower >= R;
        if (out->end == SURETY_ASSURE_MET && !out->certified)
            out->end = SURETY_ASSURE_NOT_CERTIFIED;
    }
    for (int s = 0; s < max_steps; s++)
        surety_plan_free(plans[s]);
    surety_xfree(plans);
    surety_scenarios_free(sc);
    out->seconds = surety_clock_seconds() - t0;
    return SURETY_OK;
fail:
    for (int s = 0; s < max_steps; s++)
        surety_plan_free(plans[s]);
    surety_xfree(plans);
    surety_scenarios_free(sc);
    surety_assure_report_free(out);
    return code;
}
