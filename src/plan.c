/* plan.c - plans (the resource of every job) and their in-sample counts:
 * scenarios that fit, sampled chance constraint, mean profit.
 * SPDX-License-Identifier: MIT */
#include "plan.h"

#include <string.h>

#include "alloc.h"
#include "model.h"
#include "sample.h"

surety_plan *surety_plan_new(const surety_model *model)
{
    if (!model)
        return NULL;
    surety_plan *plan = surety_xmalloc(1, sizeof *plan);
    if (!plan)
        return NULL;
    plan->n = model->n;
    plan->resource = surety_xmalloc(model->n, sizeof *plan->resource);
    if (!plan->resource) {
        surety_xfree(plan);
        return NULL;
    }
    for (size_t j = 0; j < plan->n; j++)
        plan->resource[j] = -1;
    return plan;
}

surety_plan *surety_plan_copy(const surety_plan *plan)
{
    if (!plan)
        return NULL;
    surety_plan *c = surety_xmalloc(1, sizeof *c);
    if (!c)
        return NULL;
    c->n = plan->n;
    c->resource = surety_xmalloc(plan->n, sizeof *c->resource);
    if (!c->resource) {
        surety_xfree(c);
        return NULL;
    }
    if (plan->n)
        memcpy(c->resource, plan->resource, plan->n * sizeof *c->resource);
    return c;
}

void surety_plan_free(surety_plan *plan)
{
    if (!plan)
        return;
    surety_xfree(plan->resource);
    surety_xfree(plan);
}

long surety_plan_get(const surety_plan *plan, size_t j)
{
    if (!plan || j >= plan->n)
        return -1;
    return plan->resource[j];
}

void surety_plan_set(surety_plan *plan, size_t j, long i)
{
    if (!plan || j >= plan->n)
        return;
    plan->resource[j] = i < 0 ? -1 : i;
}

/* Jobs of the plan grouped by resource, ascending job order inside each
 * group: jobs[start[i] .. start[i+1]-1] are resource i's. Returns 0, or -1
 * when out of memory. Jobs placed in an index >= m are ignored (a plan
 * built for another model); the caller's model decides what exists. */
static int group_jobs(const surety_model *model, const surety_plan *plan,
                      size_t **jobs_out, size_t **start_out)
{
    size_t n = model->n < plan->n ? model->n : plan->n, m = model->m;
    size_t *start = surety_xcalloc(m + 1, sizeof *start);
    size_t *jobs = surety_xmalloc(n ? n : 1, sizeof *jobs);
    if (!start || !jobs) {
        surety_xfree(start);
        surety_xfree(jobs);
        return -1;
    }
    for (size_t j = 0; j < n; j++) {
        long i = plan->resource[j];
        if (i >= 0 && (size_t)i < m)
            start[i + 1]++;
    }
    for (size_t i = 0; i < m; i++)
        start[i + 1] += start[i];
    /* fill with a moving cursor per resource; start[] is restored after */
    for (size_t j = 0; j < n; j++) {
        long i = plan->resource[j];
        if (i >= 0 && (size_t)i < m)
            jobs[start[i]++] = j;
    }
    for (size_t i = m; i > 0; i--)
        start[i] = start[i - 1];
    start[0] = 0;
    *jobs_out = jobs;
    *start_out = start;
    return 0;
}

/* Load of resource i in one scenario row, base hours added in ascending
 * job order (the order fixed by surety_plan_holds). Fallback path that
 * needs no memory: scans every job. */
static double load_scan(const surety_plan *plan, size_t n, long i,
                        const double *row)
{
    double sum = 0;
    for (size_t j = 0; j < n; j++)
        if (plan->resource[j] == i)
            sum += row[j];
    return sum;
}

/* The joint count of surety_plan_count_fit; with `cost`, also the summed
 * cost of the scenarios in which some resource overloads, into *paid. */
static size_t count_fit(const surety_model *model, const surety_plan *plan,
                        const surety_scenarios *sc, size_t *per_resource,
                        const double *cost, double *paid)
{
    size_t m = model->m, N = sc->N, n = sc->n;
    size_t jn = model->n < plan->n ? model->n : plan->n;
    if (jn > n)
        jn = n;
    if (per_resource)
        for (size_t i = 0; i < m; i++)
            per_resource[i] = 0;

    size_t *jobs = NULL, *start = NULL;
    int grouped = group_jobs(model, plan, &jobs, &start) == 0;
    size_t fit = 0;
    for (size_t l = 0; l < N; l++) {
        const double *row = sc->hours + l * n;
        int all = 1;
        for (size_t i = 0; i < m; i++) {
            double sum = 0;
            if (grouped) {
                for (size_t t = start[i]; t < start[i + 1]; t++)
                    if (jobs[t] < jn)
                        sum += row[jobs[t]];
            } else {
                sum = load_scan(plan, jn, (long)i, row);
            }
            if (surety_plan_holds(model->resources[i].hours_factor, sum,
                                  model->resources[i].capacity)) {
                if (per_resource)
                    per_resource[i]++;
            } else {
                all = 0;
                if (!per_resource)
                    break; /* the joint count needs no more resources */
            }
        }
        fit += (size_t)all;
        if (cost && !all)
            *paid += cost[l];
    }
    surety_xfree(jobs);
    surety_xfree(start);
    return fit;
}

size_t surety_plan_count_fit(const surety_model *model,
                             const surety_plan *plan,
                             const surety_scenarios *sc,
                             size_t *per_resource)
{
    if (!model || !plan || !sc)
        return 0;
    return count_fit(model, plan, sc, per_resource, NULL, NULL);
}

double surety_plan_fail_cost(const surety_model *model,
                             const surety_plan *plan,
                             const surety_scenarios *sc, const double *cost)
{
    double paid = 0;
    if (model && plan && sc && cost)
        count_fit(model, plan, sc, NULL, cost, &paid);
    return paid;
}

int surety_plan_feasible(const surety_model *model, const surety_plan *plan,
                         const surety_scenarios *sc)
{
    if (!model || !plan || !sc)
        return 0;
    size_t N = sc->N, m = model->m;
    size_t k = surety_allowance(model->risk, N);
    if (model->constraint == SURETY_JOINT)
        return surety_plan_count_fit(model, plan, sc, NULL) + k >= N;

    /* separate: every resource on its own holds in at least N-k scenarios */
    size_t *per = surety_xmalloc(m ? m : 1, sizeof *per);
    if (!per) {
        /* without memory, test resource by resource without the array */
        for (size_t i = 0; i < m; i++) {
            size_t holds = 0;
            for (size_t l = 0; l < N; l++) {
                double sum = load_scan(plan, plan->n < sc->n ? plan->n : sc->n,
                                       (long)i, sc->hours + l * sc->n);
                holds += (size_t)surety_plan_holds(
                    model->resources[i].hours_factor, sum,
                    model->resources[i].capacity);
            }
            if (holds + k < N)
                return 0;
        }
        return 1;
    }
    surety_plan_count_fit(model, plan, sc, per);
    int ok = 1;
    for (size_t i = 0; i < m; i++)
        if (per[i] + k < N)
            ok = 0;
    surety_xfree(per);
    return ok;
}

/* Mean profit over the N scenarios, computed as sum over accepted jobs (in
 * ascending job order) of that job's mean profit (sum over l, divided by
 * N). This is the same number as the MPS objective's coefficients, so an
 * external solver's optimum compares with it directly. */
double surety_plan_profit(const surety_model *model, const surety_plan *plan,
                          const surety_scenarios *sc)
{
    if (!model || !plan || !sc || sc->N == 0)
        return 0;
    size_t n = sc->n, N = sc->N;
    size_t jn = plan->n < n ? plan->n : n;
    double total = 0;
    for (size_t j = 0; j < jn; j++) {
        long i = plan->resource[j];
        if (i < 0 || (size_t)i >= model->m)
            continue;
        double s = 0;
        for (size_t l = 0; l < N; l++)
            s += sc->profit[l * n + j];
        total += s / (double)N;
    }
    return total;
}
