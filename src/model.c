/* model.c - model accessors, overrides and release.
 * SPDX-License-Identifier: MIT */
#include "model.h"

#include <math.h>
#include <string.h>

#include "alloc.h"

size_t surety_allowance(double eps, size_t N)
{
    /* METHODS.md s.1: 1 - 0.9 is 0.09999999999999998 in double, so a plain
     * floor would lose one scenario; the 1e-9 guard restores it. */
    double k = floor(eps * (double)N + 1e-9);
    if (k < 0)
        return 0;
    if (k > (double)N)
        return N;
    return (size_t)k;
}

void surety_model_destroy(surety_model *model)
{
    if (!model)
        return;
    for (size_t j = 0; j < model->n && model->jobs; j++) {
        surety_xfree(model->jobs[j].id);
        surety_xfree(model->jobs[j].hours.values);
        surety_xfree(model->jobs[j].allowed);
    }
    for (size_t i = 0; i < model->m && model->resources; i++)
        surety_xfree(model->resources[i].id);
    surety_xfree(model->jobs);
    surety_xfree(model->resources);
    surety_xfree(model->chol);
    surety_xfree(model->corr);
    surety_table_free(model->table);
    surety_xfree(model->name);
    surety_xfree(model->path);
    surety_xfree(model);
}

void surety_model_free(surety_model *model)
{
    surety_model_destroy(model);
}

size_t surety_model_jobs(const surety_model *model) { return model->n; }
size_t surety_model_resources(const surety_model *model) { return model->m; }
const char *surety_model_name(const surety_model *model)
{
    return model->name ? model->name : "";
}
const char *surety_model_job_id(const surety_model *model, size_t j)
{
    return j < model->n ? model->jobs[j].id : NULL;
}
const char *surety_model_resource_id(const surety_model *model, size_t i)
{
    return i < model->m ? model->resources[i].id : NULL;
}
double surety_model_capacity(const surety_model *model, size_t i)
{
    return model->resources[i].capacity;
}
double surety_model_hours_factor(const surety_model *model, size_t i)
{
    return model->resources[i].hours_factor;
}
int surety_model_job_required(const surety_model *model, size_t j)
{
    return model->jobs[j].required;
}
int surety_model_job_allowed(const surety_model *model, size_t j, size_t i)
{
    return model->jobs[j].allowed[i] != 0;
}
double surety_model_risk(const surety_model *model) { return model->risk; }
size_t surety_model_scenarios(const surety_model *model) { return model->N; }
uint64_t surety_model_seed(const surety_model *model) { return model->seed; }
surety_constraint surety_model_constraint(const surety_model *model)
{
    return model->constraint;
}
int surety_model_has_table(const surety_model *model)
{
    return model->table != NULL;
}

surety_code surety_model_set_risk(surety_model *model, double eps,
                                  surety_error *err)
{
    if (!(eps > 0 && eps < 1)) {
        surety_error_set(err, NULL, 0, 0, "risk",
                         "risk must lie strictly between 0 and 1 (got %g)", eps);
        return SURETY_EUSAGE;
    }
    model->risk = eps;
    return SURETY_OK;
}

surety_code surety_model_set_scenarios(surety_model *model, size_t N,
                                       surety_error *err)
{
    if (N == 0) {
        surety_error_set(err, NULL, 0, 0, "scenarios",
                         "the scenario count must be at least 1");
        return SURETY_EUSAGE;
    }
    if (model->table && N != model->table->N) {
        surety_error_set(err, NULL, 0, 0, "scenarios",
                         "the model uses a scenario table of %zu rows; "
                         "its scenario count cannot be changed",
                         model->table->N);
        return SURETY_EUSAGE;
    }
    model->N = N;
    return SURETY_OK;
}

void surety_model_set_seed(surety_model *model, uint64_t seed)
{
    model->seed = seed;
}

long surety_model_find_job(const surety_model *model, const char *id)
{
    for (size_t j = 0; j < model->n; j++)
        if (strcmp(model->jobs[j].id, id) == 0)
            return (long)j;
    return -1;
}

long surety_model_find_resource(const surety_model *model, const char *id)
{
    for (size_t i = 0; i < model->m; i++)
        if (strcmp(model->resources[i].id, id) == 0)
            return (long)i;
    return -1;
}
