/* check.c - a plan on the model's own scenarios and on fresh ones: fit
 * counts, Clopper-Pearson intervals, verdict, overload, load and profit.
 * SPDX-License-Identifier: MIT */
#include "check.h"

#include <math.h>
#include <string.h>

#include "alloc.h"
#include "clock.h"
#include "model.h"
#include "sample.h"
#include "stats.h"

/* Fresh scenarios drawn per block: a multiple of the sampler's alignment
 * so no block straddles two of its products, small enough (n * 8 KiB per
 * job row array) to stay in cache next to the kept values. */
#define CHECK_BLOCK (16 * SURETY_SAMPLE_BLOCK)

surety_code surety_check_eval_init(surety_plan_eval *ev,
                                   const surety_model *model,
                                   const surety_plan *plan, surety_error *err)
{
    memset(ev, 0, sizeof *ev);
    if (!model || !plan) {
        surety_error_set(err, NULL, 0, 0, NULL, "check: no model or plan");
        return SURETY_EUSAGE;
    }
    size_t n = model->n, m = model->m;
    if (plan->n != n) {
        surety_error_set(err, NULL, 0, 0, NULL,
                         "the plan has %zu jobs, the model %zu", plan->n, n);
        return SURETY_EUSAGE;
    }
    for (size_t j = 0; j < n; j++) {
        long i = plan->resource[j];
        const surety_job *job = &model->jobs[j];
        if (i < 0) {
            if (job->required) {
                surety_error_set(err, NULL, 0, 0, "plan",
                                 "job %s is required but the plan rejects it",
                                 job->id);
                return SURETY_EINPUT;
            }
            continue;
        }
        if ((size_t)i >= m) {
            surety_error_set(err, NULL, 0, 0, "plan",
                             "job %s is placed in resource %ld of %zu",
                             job->id, i, m);
            return SURETY_EUSAGE;
        }
        if (!job->allowed[i]) {
            surety_error_set(err, NULL, 0, 0, "plan",
                             "job %s is not allowed in resource %s", job->id,
                             model->resources[i].id);
            return SURETY_EINPUT;
        }
    }
    ev->n = n;
    ev->m = m;
    ev->jobs = surety_xmalloc(n ? n : 1, sizeof *ev->jobs);
    ev->start = surety_xcalloc(m + 1, sizeof *ev->start);
    ev->factor = surety_xmalloc(m ? m : 1, sizeof *ev->factor);
    ev->capacity = surety_xmalloc(m ? m : 1, sizeof *ev->capacity);
    if (!ev->jobs || !ev->start || !ev->factor || !ev->capacity) {
        surety_check_eval_free(ev);
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    size_t t = 0;
    for (size_t i = 0; i < m; i++) {
        ev->start[i] = t;
        for (size_t j = 0; j < n; j++)
            if (plan->resource[j] == (long)i)
                ev->jobs[t++] = j;
        ev->factor[i] = model->resources[i].hours_factor;
        ev->capacity[i] = model->resources[i].capacity;
    }
    ev->start[m] = t;
    return SURETY_OK;
}

void surety_check_eval_free(surety_plan_eval *ev)
{
    if (!ev)
        return;
    surety_xfree(ev->jobs);
    surety_xfree(ev->start);
    surety_xfree(ev->factor);
    surety_xfree(ev->capacity);
    memset(ev, 0, sizeof *ev);
}

size_t surety_check_count(const surety_plan_eval *ev, const double *hours,
                          size_t count)
{
    size_t fit = 0;
    for (size_t r = 0; r < count; r++)
        fit += (size_t)surety_check_row_fits(ev, hours + r * ev->n);
    return fit;
}

size_t surety_check_count_resources(const surety_plan_eval *ev,
                                    const double *hours, size_t count,
                                    size_t *per_resource)
{
    size_t fit = 0;
    for (size_t r = 0; r < count; r++) {
        const double *row = hours + r * ev->n;
        int all = 1;
        for (size_t i = 0; i < ev->m; i++) {
            double sum = 0;
            for (size_t t = ev->start[i]; t < ev->start[i + 1]; t++)
                sum += row[ev->jobs[t]];
            if (surety_plan_holds(ev->factor[i], sum, ev->capacity[i]))
                per_resource[i]++;
            else
                all = 0;
        }
        fit += (size_t)all;
    }
    return fit;
}

void surety_check_options_init(surety_check_options *opt)
{
    if (!opt)
        return;
    opt->samples = 100000;
    opt->confidence = 0.95;
    opt->stream = SURETY_STREAM_CHECK;
    opt->first = 0;
    opt->in_sample = 1;
}

void surety_check_report_free(surety_check_report *rep)
{
    if (!rep)
        return;
    surety_xfree(rep->resource);
    memset(rep, 0, sizeof *rep);
}

static void swap_at(double *v, size_t a, size_t b)
{
    double t = v[a];
    v[a] = v[b];
    v[b] = t;
}

/* Rearranges v[left..right] so that v[k] holds its (k-left)-th smallest
 * value, everything before it is <= and everything after it >= (no NaN).
 * Floyd & Rivest (1975), "Algorithm 489: The algorithm SELECT", CACM
 * 18(3):173: on a long range, first select within a sample window of
 * about n^(2/3) elements placed around the expected rank, so the pivot
 * v[k] lands within a few elements of its final place and the one
 * partition pass over the range discards nearly all of it; about
 * n + min(k, n-k) comparisons against 2n to 3n for median-of-three
 * quickselect. The sentinels at both ends keep the scans in range. */
static void select_range(double *v, size_t left, size_t right, size_t k)
{
    while (right > left) {
        if (right - left > 600) {
            double n = (double)(right - left + 1);
            double i = (double)(k - left + 1);
            double z = log(n);
            double s = 0.5 * exp(2.0 * z / 3.0);
            double sd = 0.5 * sqrt(z * s * (n - s) / n) *
                        (i < 0.5 * n ? -1.0 : 1.0);
            double nl = (double)k - i * s / n + sd;
            double nr = (double)k + (n - i) * s / n + sd;
            size_t lo = nl > (double)left ? (size_t)nl : left;
            size_t hi = nr < (double)right ? (size_t)nr : right;
            select_range(v, lo, hi, k);
        }
        double t = v[k];
        size_t i = left, j = right;
        swap_at(v, left, k);
        if (v[right] > t)
            swap_at(v, right, left);
        while (i < j) {
            swap_at(v, i, j);
            i++;
            j--;
            while (v[i] < t)
                i++;
            while (v[j] > t)
                j--;
        }
        if (v[left] == t) {
            swap_at(v, left, j);
        } else {
            j++;
            swap_at(v, j, right);
        }
        /* now v[left..j-1] <= t = v[j] <= v[j+1..right] */
        if (j == k)
            return;
        if (j < k)
            left = j + 1;
        else
            right = j - 1;
    }
}

/* The k-th smallest (0-based) of v[0..len-1]; reorders v as
 * select_range does. */
static double select_kth(double *v, size_t len, size_t k)
{
    select_range(v, 0, len - 1, k);
    return v[k];
}

/* Smallest of v[from..len-1]. */
static double min_from(const double *v, size_t from, size_t len)
{
    double x = v[from];
    for (size_t t = from + 1; t < len; t++)
        if (v[t] < x)
            x = v[t];
    return x;
}

/* Largest of v[0..end-1], end >= 1. */
static double max_to(const double *v, size_t end)
{
    double x = v[0];
    for (size_t t = 1; t < end; t++)
        if (v[t] > x)
            x = v[t];
    return x;
}

/* Percentile q of `zeros` implicit zeros followed by the values v[0..len-1]
 * (all >= 0 when zeros > 0): linear interpolation between the order
 * statistics at position h = (total-1) q, the rule of R's type 7 and of
 * numpy.percentile's default. The neighbouring order statistic is the
 * extreme of the shorter side left by the selection. */
static double percentile(double *v, size_t len, size_t zeros, double q)
{
    size_t total = len + zeros;
    if (total == 0)
        return NAN;
    double h = (double)(total - 1) * q;
    size_t k = (size_t)floor(h);
    if (k >= total - 1)
        k = total - 1;
    double frac = h - (double)k;
    double x, y;
    if (k + 1 < zeros) {
        return 0;
    } else if (k < zeros) {
        x = 0;
        y = len ? min_from(v, 0, len) : 0;
    } else {
        size_t kk = k - zeros;
        if (!(frac > 0) || kk + 1 >= len) {
            x = y = select_kth(v, len, kk);
        } else if (kk < len / 2) {
            y = select_kth(v, len, kk + 1);
            x = max_to(v, kk + 1);
        } else {
            x = select_kth(v, len, kk);
            y = min_from(v, kk + 1, len);
        }
    }
    return frac > 0 ? x + frac * (y - x) : x;
}

static surety_verdict verdict_of(double estimate, double lower, double target)
{
    if (lower >= target)
        return SURETY_MET;
    if (estimate >= target)
        return SURETY_UNCERTAIN;
    return SURETY_NOT_MET;
}

/* Running state of the out-of-sample pass. */
typedef struct check_acc {
    size_t M;           /* scenarios evaluated so far */
    size_t fit;
    size_t *holds;      /* m */
    double *load;       /* m*Mtotal, resource-major: load[i*Mtotal + r] */
    surety_vec *excess; /* m growable arrays of the positive overloads
                           (hours); rare when a plan is reliable */
    double *excess_sum; /* m */
    double *profit;     /* Mtotal */
    size_t *accepted;   /* accepted jobs ascending, naccepted of them */
    size_t naccepted;
    int oom;            /* an overload could not be kept */
} check_acc;

/* Evaluates one block of `count` scenario rows. Loads are formed exactly
 * as in surety_plan_holds (factor times the sum in job order). */
static void eval_block(const surety_plan_eval *ev, check_acc *a,
                       size_t Mtotal, const double *hours,
                       const double *profit, size_t count)
{
    size_t n = ev->n, m = ev->m;
    for (size_t r = 0; r < count; r++) {
        const double *row = hours + r * n;
        size_t at = a->M + r;
        int all = 1;
        for (size_t i = 0; i < m; i++) {
            double sum = 0;
            for (size_t t = ev->start[i]; t < ev->start[i + 1]; t++)
                sum += row[ev->jobs[t]];
            double load = ev->factor[i] * sum;
            a->load[i * Mtotal + at] = load;
            if (surety_plan_holds(ev->factor[i], sum, ev->capacity[i])) {
                a->holds[i]++;
            } else {
                double x = load - ev->capacity[i];
                all = 0;
                if (surety_vec_push(&a->excess[i], &x) != 0)
                    a->oom = 1;
                a->excess_sum[i] += x;
            }
        }
        a->fit += (size_t)all;
        const double *prow = profit + r * n;
        double p = 0;
        for (size_t t = 0; t < a->naccepted; t++)
            p += prow[a->accepted[t]];
        a->profit[at] = p;
    }
    a->M += count;
}

static void free_acc(check_acc *a, size_t m)
{
    for (size_t i = 0; a->excess && i < m; i++)
        surety_vec_free(&a->excess[i]);
    surety_xfree(a->holds);
    surety_xfree(a->load);
    surety_xfree(a->excess);
    surety_xfree(a->excess_sum);
    surety_xfree(a->profit);
    surety_xfree(a->accepted);
}

static surety_code in_sample(const surety_model *model,
                             const surety_plan_eval *ev,
                             surety_check_report *out, surety_error *err)
{
    surety_scenarios *sc = NULL;
    surety_code rc = surety_model_sample(model, &sc, err);
    if (rc != SURETY_OK)
        return rc;
    size_t N = sc->N, m = model->m;
    out->in_N = N;
    out->in_k = surety_allowance(model->risk, N);
    if (model->constraint == SURETY_JOINT) {
        out->in_fit = surety_check_count(ev, sc->hours, N);
        out->in_ok = out->in_fit + out->in_k >= N;
    } else {
        size_t *per = surety_xcalloc(m ? m : 1, sizeof *per);
        if (!per) {
            surety_scenarios_free(sc);
            surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
            return SURETY_EINTERNAL;
        }
        out->in_fit = surety_check_count_resources(ev, sc->hours, N, per);
        out->in_ok = 1;
        for (size_t i = 0; i < m; i++)
            if (per[i] + out->in_k < N)
                out->in_ok = 0;
        surety_xfree(per);
    }
    surety_scenarios_free(sc);
    return SURETY_OK;
}

/* Per-resource and profit summaries from the kept values; reorders them. */
static void summarise(const surety_model *model, check_acc *a, size_t M,
                      double c, surety_check_report *out)
{
    size_t m = model->m;
    /* Bonferroni: m one-sided statements at 1-(1-c)/m hold together at c */
    double c_each = model->constraint == SURETY_SEPARATE && m > 1
                        ? 1 - (1 - c) / (double)m
                        : c;
    out->verdict = SURETY_MET;
    for (size_t i = 0; i < m; i++) {
        surety_resource_check *q = &out->resource[i];
        size_t over = M - a->holds[i];
        double lo, hi, lower;
        surety_clopper_pearson(over, M, c, &lo, &hi, &lower);
        q->overload_prob = (double)over / (double)M;
        q->overload_lo = lo;
        q->overload_hi = hi;
        q->overload_hours_mean = a->excess_sum[i] / (double)M;
        size_t nx = a->excess[i].len;
        q->overload_hours_p95 = percentile(a->excess[i].data, nx, M - nx,
                                           0.95);
        double *load = a->load + i * M, s = 0;
        for (size_t r = 0; r < M; r++)
            s += load[r];
        q->load_mean = s / (double)M;
        q->load_p95 = percentile(load, M, 0, 0.95);
        q->reliability = (double)a->holds[i] / (double)M;
        surety_clopper_pearson(a->holds[i], M, c_each, &lo, &hi, &lower);
        q->reliability_lower = lower;
        q->reliability_confidence = c_each;
        q->verdict = verdict_of(q->reliability, lower, out->target);
        if (model->constraint == SURETY_SEPARATE && q->verdict > out->verdict)
            out->verdict = q->verdict;
    }
    if (model->constraint == SURETY_JOINT)
        out->verdict = verdict_of(out->reliability, out->lower, out->target);

    /* profit: two-pass mean and sample standard deviation */
    double s = 0, ss = 0;
    for (size_t r = 0; r < M; r++)
        s += a->profit[r];
    double mean = s / (double)M;
    for (size_t r = 0; r < M; r++) {
        double d = a->profit[r] - mean;
        ss += d * d;
    }
    out->profit_mean = mean;
    out->profit_sd = M > 1 ? sqrt(ss / (double)(M - 1)) : 0;
    out->profit_p5 = percentile(a->profit, M, 0, 0.05);
    out->profit_p50 = percentile(a->profit, M, 0, 0.50);
    out->profit_p95 = percentile(a->profit, M, 0, 0.95);
}

surety_code surety_check(const surety_model *model, const surety_plan *plan,
                         const surety_check_options *opt,
                         surety_check_report *out, surety_error *err)
{
    if (!out) {
        surety_error_set(err, NULL, 0, 0, NULL, "check: no report to fill");
        return SURETY_EUSAGE;
    }
    memset(out, 0, sizeof *out);
    surety_check_options defaults;
    if (!opt) {
        surety_check_options_init(&defaults);
        opt = &defaults;
    }
    if (opt->samples == 0) {
        surety_error_set(err, NULL, 0, 0, "samples",
                         "check: at least one fresh scenario is needed");
        return SURETY_EUSAGE;
    }
    if (!(opt->confidence > 0 && opt->confidence < 1)) {
        surety_error_set(err, NULL, 0, 0, "confidence",
                         "check: the confidence must lie strictly between 0 "
                         "and 1 (got %g)", opt->confidence);
        return SURETY_EUSAGE;
    }
    surety_plan_eval ev;
    surety_code rc = surety_check_eval_init(&ev, model, plan, err);
    if (rc != SURETY_OK)
        return rc;
    rc = surety_sampler_check(model, err);
    if (rc != SURETY_OK) {
        surety_check_eval_free(&ev);
        return rc;
    }

    size_t M = opt->samples, m = model->m, n = model->n;
    /* kept values: m loads and one profit per scenario (overloads are
     * kept too, but only where they occur) */
    size_t per = m + 1;
    size_t phys = surety_physical_memory();
    if (surety_mul_overflows(M, per * sizeof(double)) ||
        (phys && M * per * sizeof(double) > phys / 4)) {
        surety_check_eval_free(&ev);
        surety_error_set(err, NULL, 0, 0, "samples",
                         "check: %zu fresh scenarios would keep %.3g GB of "
                         "per-scenario values, more than a quarter of this "
                         "machine's memory; use fewer samples",
                         M, (double)M * (double)per * 8 / 1e9);
        return SURETY_EUSAGE;
    }

    out->confidence = opt->confidence;
    out->target = 1 - model->risk;
    out->m = m;
    out->resource = surety_xcalloc(m ? m : 1, sizeof *out->resource);
    if (!out->resource) {
        surety_check_eval_free(&ev);
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    if (opt->in_sample) {
        rc = in_sample(model, &ev, out, err);
        if (rc != SURETY_OK) {
            surety_check_eval_free(&ev);
            surety_check_report_free(out);
            return rc;
        }
    }

    check_acc a;
    memset(&a, 0, sizeof a);
    size_t B = M < CHECK_BLOCK ? M : CHECK_BLOCK;
    a.holds = surety_xcalloc(m ? m : 1, sizeof *a.holds);
    a.excess_sum = surety_xcalloc(m ? m : 1, sizeof *a.excess_sum);
    a.load = surety_xmalloc(M, (m ? m : 1) * sizeof *a.load);
    a.excess = surety_xcalloc(m ? m : 1, sizeof *a.excess);
    for (size_t i = 0; a.excess && i < m; i++)
        surety_vec_init(&a.excess[i], sizeof(double));
    a.profit = surety_xmalloc(M, sizeof *a.profit);
    a.accepted = surety_xmalloc(n ? n : 1, sizeof *a.accepted);
    double *hours = surety_xmalloc(B, (n ? n : 1) * sizeof *hours);
    double *profit = surety_xmalloc(B, (n ? n : 1) * sizeof *profit);
    surety_sampler *smp = surety_sampler_new(model);
    if (!a.holds || !a.excess_sum || !a.load || !a.excess || !a.profit ||
        !a.accepted || !hours || !profit || !smp) {
        free_acc(&a, m);
        surety_xfree(hours);
        surety_xfree(profit);
        surety_sampler_free(smp);
        surety_check_eval_free(&ev);
        surety_check_report_free(out);
        surety_error_set(err, NULL, 0, 0, NULL,
                         "check: out of memory for %zu scenarios", M);
        return SURETY_EINTERNAL;
    }
    for (size_t j = 0; j < n; j++)
        if (plan->resource[j] >= 0)
            a.accepted[a.naccepted++] = j;
    /* Only the accepted jobs' hours and profits are read below: the
     * sampler skips the marginal transforms of the others, which leaves
     * every accepted job's values the bytes of a full fill. (The list is
     * ascending and in range, so the restriction cannot be refused.) */
    surety_sampler_restrict(smp, a.accepted, a.naccepted);

    /* Blocks start at opt->first + multiples of B; B is a multiple of the
     * sampler's alignment, so when `first` is aligned too every block is
     * exactly a run of the sampler's own products. */
    double t_sample = 0, t_check = 0;
    for (size_t done = 0; done < M; done += B) {
        size_t count = M - done < B ? M - done : B;
        double t0 = surety_clock_seconds();
        surety_sampler_fill(smp, opt->stream, opt->first + done, count, hours,
                            profit);
        double t1 = surety_clock_seconds();
        eval_block(&ev, &a, M, hours, profit, count);
        t_check += surety_clock_seconds() - t1;
        t_sample += t1 - t0;
    }
    surety_sampler_free(smp);
    surety_xfree(hours);
    surety_xfree(profit);
    if (a.oom) {
        free_acc(&a, m);
        surety_check_eval_free(&ev);
        surety_check_report_free(out);
        surety_error_set(err, NULL, 0, 0, NULL,
                         "check: out of memory keeping overload hours");
        return SURETY_EINTERNAL;
    }

    double t0 = surety_clock_seconds();
    out->M = M;
    out->fit = a.fit;
    out->reliability = (double)a.fit / (double)M;
    surety_clopper_pearson(a.fit, M, opt->confidence, &out->lo, &out->hi,
                           &out->lower);
    summarise(model, &a, M, opt->confidence, out);
    t_check += surety_clock_seconds() - t0;
    out->sample_seconds = t_sample;
    out->check_seconds = t_check;
    free_acc(&a, m);
    surety_check_eval_free(&ev);
    return SURETY_OK;
}

surety_code surety_check_fresh(const surety_model *model,
                               const surety_plan *plan, size_t samples,
                               size_t first, double confidence,
                               surety_check_report *rep, surety_error *err)
{
    surety_check_options opt;
    surety_check_options_init(&opt);
    opt.samples = samples;
    opt.stream = SURETY_STREAM_SCREEN;
    opt.first = first;
    opt.confidence = confidence;
    opt.in_sample = 0;
    surety_code rc = surety_check(model, plan, &opt, rep, err);
    if (rc != SURETY_OK)
        surety_check_report_free(rep);
    return rc;
}
