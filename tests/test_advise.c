/* test_advise.c - sample-size advice against the METHODS.md s.3 tables
 * (SciPy 1.10.1 values) and a direct SciPy binomial evaluation.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "surety.h"

#define PYTHON "/usr/bin/python3" /* the interpreter with SciPy 1.10.1 */

static surety_advice advise(double eps, double conf, double lnX, size_t d, long allow)
{
    surety_advice a;
    surety_error err;
    surety_error_clear(&err);
    cr_assert_eq(surety_advise(eps, conf, lnX, d, allow, &a, &err), SURETY_OK, "%s",
                 err.message);
    return a;
}

static const surety_advice_row *finite_alpha(const surety_advice *a, double alpha)
{
    for (size_t r = 0; r < a->nrows; r++)
        if (a->row[r].kind == SURETY_ADVICE_FINITE && a->row[r].k < 0 &&
            fabs(a->row[r].alpha - alpha) < 1e-12)
            return &a->row[r];
    cr_assert_fail("no finite row for alpha %g", alpha);
    return NULL;
}

static const surety_advice_row *find_kind_k(const surety_advice *a, surety_advice_kind kind,
                                            long k)
{
    for (size_t r = 0; r < a->nrows; r++)
        if (a->row[r].kind == kind && a->row[r].k == k)
            return &a->row[r];
    cr_assert_fail("no row of kind %d with k %ld", (int)kind, k);
    return NULL;
}

/* METHODS.md s.3.1 table (SciPy 1.10.1, delta = 0.01): n = 20, m = 3,
 * ln|X| = 20 ln 4 = 27.726. */
Test(advise, finite_set_table_20x3)
{
    surety_advice a = advise(0.05, 0.99, 20 * log(4.0), 60, -1);
    const surety_advice_row *r0 = finite_alpha(&a, 0);
    cr_expect_eq(r0->N, 631);
    cr_expect_eq(r0->N_first, 631);
    cr_expect_eq((long)r0->chernoff, 1294);
    cr_expect_eq((long)r0->hoeffding, 6467);
    const surety_advice_row *r = finite_alpha(&a, 0.025);
    cr_expect_eq(r->N, 3723, "stable N %zu", r->N);
    cr_expect_eq(r->N_first, 3668, "first N %zu", r->N_first);
    cr_expect_eq((long)r->chernoff, 5173);
    cr_expect_eq((long)r->hoeffding, 25865);
    surety_advice_free(&a);

    a = advise(0.10, 0.99, 20 * log(4.0), 60, -1);
    r = finite_alpha(&a, 0.05);
    cr_expect_eq(r->N, 1782);
    cr_expect_eq(r->N_first, 1754);
    cr_expect_eq((long)r->chernoff, 2587);
    cr_expect_eq((long)r->hoeffding, 6467);
    surety_advice_free(&a);
}

/* Same table, n = 20, m = 1 and n = 50, m = 5 (SciPy 1.10.1). */
Test(advise, finite_set_table_other_sizes)
{
    surety_advice a = advise(0.05, 0.99, 20 * log(2.0), 20, -1);
    cr_expect_eq(finite_alpha(&a, 0)->N, 361);
    cr_expect_eq((long)finite_alpha(&a, 0)->chernoff, 739);
    surety_advice_free(&a);
    a = advise(0.05, 0.99, 50 * log(6.0), 250, -1);
    cr_expect_eq(finite_alpha(&a, 0)->N, 1837);
    cr_expect_eq(finite_alpha(&a, 0.025)->N, 11371);
    cr_expect_eq(finite_alpha(&a, 0.025)->N_first, 11316);
    cr_expect_eq((long)finite_alpha(&a, 0.025)->hoeffding, 75355);
    surety_advice_free(&a);
}

/* METHODS.md s.3.3 sampling and discarding checks (SciPy 1.10.1), eps =
 * 0.05, beta = 0.01, d = 10: k = 0 -> 371, 5 -> 760, 10 -> 1030; and the
 * fresh-sample size of s.4: eps = 0.05, beta = 0.01 -> 90. */
Test(advise, discarding_and_check_rows)
{
    surety_advice a = advise(0.05, 0.99, 10 * log(2.0), 10, 5);
    cr_expect_eq(find_kind_k(&a, SURETY_ADVICE_DISCARDING, 0)->N, 371);
    cr_expect_eq(find_kind_k(&a, SURETY_ADVICE_DISCARDING, 5)->N, 760);
    cr_expect_eq(find_kind_k(&a, SURETY_ADVICE_CHECK, 0)->N, 90);
    surety_advice_free(&a);
    a = advise(0.05, 0.99, 10 * log(2.0), 10, 10);
    cr_expect_eq(find_kind_k(&a, SURETY_ADVICE_DISCARDING, 10)->N, 1030);
    surety_advice_free(&a);
}

/* Direct SciPy evaluation of the fixed-k condition of Luedtke & Ahmed
 * (2008): ln|X| + ln B(k; N, eps) <= ln delta must hold at the reported N
 * and fail at N - 1 (scipy.stats.binom.logcdf, SciPy 1.10.1). */
Test(advise, fixed_k_rows_agree_with_scipy)
{
    if (access(PYTHON, X_OK) != 0)
        cr_skip_test("no %s", PYTHON);
    static const struct { double eps, conf, lnX; long k; } cases[] = {
        {0.05, 0.99, 27.725887222397812, 10},
        {0.10, 0.95, 89.58797346140275, 25},
        {0.02, 0.999, 13.862943611198906, 3},
    };
    for (size_t c = 0; c < sizeof cases / sizeof *cases; c++) {
        surety_advice a = advise(cases[c].eps, cases[c].conf, cases[c].lnX, 30, cases[c].k);
        size_t N = find_kind_k(&a, SURETY_ADVICE_FINITE, cases[c].k)->N;
        size_t N0 = finite_alpha(&a, 0)->N;
        surety_advice_free(&a);
        cr_assert_gt(N, 0);
        char cmd[1024];
        snprintf(cmd, sizeof cmd,
                 PYTHON " -c \"from scipy.stats import binom; import math; "
                        "e,d,X,k,N,N0=%.17g,%.17g,%.17g,%ld,%zu,%zu; "
                        "f=lambda k,N: X+binom.logcdf(k,N,e)<=math.log(d); "
                        "print(int(f(k,N)), int(f(k,N-1)), int(f(0,N0)), int(f(0,N0-1)))\"",
                 cases[c].eps, 1 - cases[c].conf, cases[c].lnX, cases[c].k, N, N0);
        FILE *p = popen(cmd, "r");
        cr_assert(p);
        int a1 = -1, a2 = -1, a3 = -1, a4 = -1;
        int got = fscanf(p, "%d %d %d %d", &a1, &a2, &a3, &a4);
        pclose(p);
        cr_assert_eq(got, 4, "python did not answer");
        cr_expect_eq(a1, 1, "case %zu: condition fails at N = %zu", c, N);
        cr_expect_eq(a2, 0, "case %zu: condition already holds at N - 1 = %zu", c, N - 1);
        cr_expect_eq(a3, 1, "case %zu: k = 0 fails at N = %zu", c, N0);
        cr_expect_eq(a4, 0, "case %zu: k = 0 holds at N - 1", c);
    }
}

/* ln|X| counts each job's allowed resources plus "out" unless required. */
Test(advise, plan_count_of_a_model)
{
    static const char json[] =
        "{\"name\": \"count\", \"risk\": 0.05, \"scenarios\": 10, \"seed\": 1,\n"
        " \"resources\": [{\"id\": \"r1\", \"capacity\": 10}, {\"id\": \"r2\", \"capacity\": 10},\n"
        "                {\"id\": \"r3\", \"capacity\": 10}],\n"
        " \"jobs\": [\n"
        "  {\"id\": \"a\", \"hours\": 1, \"profit\": 1},\n"
        "  {\"id\": \"b\", \"hours\": 1, \"profit\": 1, \"allowed\": [\"r1\"]},\n"
        "  {\"id\": \"c\", \"hours\": 1, \"profit\": 1, \"allowed\": [\"r1\", \"r2\"],\n"
        "   \"required\": true}]}\n";
    surety_model *m = NULL;
    surety_error err;
    cr_assert_eq(surety_model_parse(json, "count.json", NULL, &m, &err), SURETY_OK, "%s",
                 err.message);
    /* a: 3 resources or out = 4; b: r1 or out = 2; c: r1 or r2 = 2 */
    cr_expect_float_eq(surety_advise_log_plans(m), log(16.0), 1e-12);
    cr_expect_eq(surety_advise_variables(m), 3 + 1 + 2);
    surety_model_free(m);

    /* Separate constraints: Luedtke & Ahmed's union bound covers each of
     * the 3 per-resource statements of the 16 plans: ln 48 */
    char sep[sizeof json + 32];
    snprintf(sep, sizeof sep, "{\"constraint\": \"separate\", %s", json + 1);
    cr_assert_eq(surety_model_parse(sep, "count.json", NULL, &m, &err), SURETY_OK, "%s",
                 err.message);
    cr_expect_float_eq(surety_advise_log_plans(m), log(48.0), 1e-12);
    cr_expect_eq(surety_advise_variables(m), 3 + 1 + 2);
    surety_model_free(m);
}

Test(advise, bad_input)
{
    surety_advice a;
    surety_error err;
    cr_expect_eq(surety_advise(0, 0.99, 1, 1, -1, &a, &err), SURETY_EUSAGE);
    cr_expect_eq(surety_advise(0.05, 1, 1, 1, -1, &a, &err), SURETY_EUSAGE);
    cr_expect_eq(surety_advise(0.05, 0.9, 1, 0, -1, &a, &err), SURETY_EUSAGE);
}
