/* test_export.c - the MPS export, solved by CBC and GLPK and read back.
 * SPDX-License-Identifier: MIT */
#include <criterion/criterion.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "alloc.h"
#include "cbc_util.h"
#include "model.h"
#include "plan.h"
#include "sample.h"
#include "surety.h"

/* A model of n jobs and m resources, every job allowed everywhere, hours
 * and profits given by the scenario set (the distributions are unused). */
static surety_model *make_model(size_t n, size_t m, const double *capacity,
                                const double *factor, double eps,
                                surety_constraint constraint)
{
    surety_model *model = surety_xcalloc(1, sizeof *model);
    cr_assert_not_null(model);
    model->name = surety_xstrdup("export test");
    model->risk = eps;
    model->N = 1;
    model->seed = 1;
    model->constraint = constraint;
    model->n = n;
    model->m = m;
    model->jobs = surety_xcalloc(n, sizeof *model->jobs);
    model->resources = surety_xcalloc(m, sizeof *model->resources);
    for (size_t j = 0; j < n; j++) {
        char id[32];
        snprintf(id, sizeof id, "J%02zu", j);
        model->jobs[j].id = surety_xstrdup(id);
        model->jobs[j].hours.kind = SURETY_DIST_FIXED;
        model->jobs[j].hours.a = 1;
        model->jobs[j].hours.lo = -INFINITY;
        model->jobs[j].hours.hi = INFINITY;
        model->jobs[j].has_hours = 1;
        model->jobs[j].profit.kind = SURETY_PROFIT_FIXED;
        model->jobs[j].allowed = surety_xmalloc(m, 1);
        memset(model->jobs[j].allowed, 1, m);
    }
    for (size_t i = 0; i < m; i++) {
        char id[32];
        snprintf(id, sizeof id, "R%zu", i);
        model->resources[i].id = surety_xstrdup(id);
        model->resources[i].capacity = capacity[i];
        model->resources[i].hours_factor = factor ? factor[i] : 1.0;
    }
    return model;
}

static surety_scenarios *make_scenarios(size_t N, size_t n)
{
    surety_scenarios *sc = NULL;
    cr_assert_eq(surety_scenarios_alloc(N, n, &sc, NULL), SURETY_OK);
    return sc;
}

/* Small deterministic generator for test data (64-bit LCG, Knuth's MMIX
 * constants); the data only has to be varied, not random in any strong
 * sense. */
static double unif(uint64_t *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*state >> 11) * 0x1.0p-53;
}

/* The toy instance of METHODS.md s.7: 5 jobs, capacities (10, 8), profits
 * (10,7,6,5,4), bin-independent weights by scenario. */
static const double toy_w[6][5] = {
    {5, 4, 3, 3, 2}, {6, 4, 3, 2, 2}, {4, 5, 4, 3, 1},
    {7, 3, 3, 4, 2}, {5, 6, 2, 3, 3}, {8, 4, 5, 2, 2},
};
static const double toy_p[5] = {10, 7, 6, 5, 4};

static surety_scenarios *toy_scenarios(void)
{
    surety_scenarios *sc = make_scenarios(6, 5);
    for (size_t l = 0; l < 6; l++)
        for (size_t j = 0; j < 5; j++) {
            sc->hours[l * 5 + j] = toy_w[l][j];
            sc->profit[l * 5 + j] = toy_p[j];
        }
    return sc;
}

/* eps giving allowance k of N exactly (the middle of the interval) */
static double eps_for(size_t k, size_t N)
{
    return ((double)k + 0.5) / (double)N;
}

/* Coefficient of column `col` in row `row` of an MPS file written by the
 * export (one entry per line), or NAN when absent. */
static double mps_coef(const char *path, const char *col, const char *row)
{
    FILE *fp = fopen(path, "r");
    cr_assert_not_null(fp);
    char line[512], c[128], r[128];
    double v, found = NAN;
    while (fgets(line, sizeof line, fp))
        if (sscanf(line, " %127s %127s %lf", c, r, &v) == 3 &&
            strcmp(c, col) == 0 && strcmp(r, row) == 0)
            found = v;
    fclose(fp);
    return found;
}

/* Reads CBC's x values back into a plan; every listed x must be 0 or 1. */
static surety_plan *plan_from_cbc(const surety_model *model,
                                  const cbc_solution *s)
{
    surety_plan *plan = surety_plan_new(model);
    cr_assert_not_null(plan);
    for (size_t j = 0; j < model->n; j++)
        for (size_t i = 0; i < model->m; i++) {
            if (!model->jobs[j].allowed[i])
                continue;
            char name[64];
            snprintf(name, sizeof name, "x_%zu_%zu", j, i);
            double v = cbc_value(s, name);
            cr_assert(fabs(v) < 1e-6 || fabs(v - 1) < 1e-6,
                      "%s = %g is not binary", name, v);
            if (v > 0.5) {
                cr_assert_eq(surety_plan_get(plan, j), -1,
                             "job %zu placed twice", j);
                surety_plan_set(plan, j, (long)i);
            }
        }
    return plan;
}

/* Best mean profit by enumerating every plan ((m+1)^n of them), or -INFINITY
 * when none satisfies the sampled constraint. Independent of the MPS path:
 * it uses only the plan counting of plan.c. */
static double enumerate_best(const surety_model *model,
                             const surety_scenarios *sc)
{
    size_t n = model->n, m = model->m, total = 1;
    for (size_t j = 0; j < n; j++)
        total *= m + 1;
    surety_plan *plan = surety_plan_new(model);
    double best = -INFINITY;
    for (size_t code = 0; code < total; code++) {
        size_t c = code;
        int ok = 1;
        for (size_t j = 0; j < n; j++) {
            long i = (long)(c % (m + 1)) - 1;
            c /= m + 1;
            if (i < 0 && model->jobs[j].required)
                ok = 0;
            if (i >= 0 && !model->jobs[j].allowed[i])
                ok = 0;
            surety_plan_set(plan, j, i);
        }
        if (!ok || !surety_plan_feasible(model, plan, sc))
            continue;
        double p = surety_plan_profit(model, plan, sc);
        if (p > best)
            best = p;
    }
    surety_plan_free(plan);
    return best;
}

typedef struct solved {
    double cbc_obj;   /* CBC's objective (minus profit) */
    double glpk_obj;  /* GLPK's */
    double profit;    /* surety_plan_profit of CBC's plan */
    int infeasible;
} solved;

/* Exports, solves with CBC and GLPK, reads the plan back and checks it on
 * the sample with the project's own counting. */
static solved export_and_solve(const surety_model *model,
                               const surety_scenarios *sc, surety_bigm bigm)
{
    solved r = {0};
    cr_assert(cbc_available(),
              "cbc is not installed (Debian package coinor-cbc)");
    char *dir = cbc_tempdir();
    cr_assert_not_null(dir);
    char mps[1100];
    snprintf(mps, sizeof mps, "%s/model.mps", dir);
    surety_error err;
    cr_assert_eq(surety_export_mps(model, sc, bigm, mps, &err), SURETY_OK,
                 "%s", err.message);
    cbc_solution s;
    cbc_status st = cbc_solve_mps(mps, dir, 60, &s);
    cr_assert(st == CBC_OPTIMAL || st == CBC_INFEASIBLE,
              "cbc failed on %s (status %d)", mps, (int)st);
    double g = 0;
    int gl = glpk_solve_mps(mps, dir, &g);
    if (st == CBC_INFEASIBLE) {
        r.infeasible = 1;
        cr_assert_neq(gl, 0, "GLPK found a solution CBC calls infeasible");
    } else {
        r.cbc_obj = s.objective;
        cr_assert_eq(gl, 0, "glpsol did not solve %s", mps);
        r.glpk_obj = g;
        surety_plan *plan = plan_from_cbc(model, &s);
        size_t N = sc->N, k = surety_allowance(model->risk, N);
        /* every required job placed */
        for (size_t j = 0; j < model->n; j++)
            if (model->jobs[j].required)
                cr_assert_geq(surety_plan_get(plan, j), 0);
        /* the project's own recount: the plan satisfies the sampled
         * chance constraint (joint: fits N-k scenarios) */
        if (model->constraint == SURETY_JOINT)
            cr_assert_geq(surety_plan_count_fit(model, plan, sc, NULL) + k, N);
        cr_assert(surety_plan_feasible(model, plan, sc));
        r.profit = surety_plan_profit(model, plan, sc);
        surety_plan_free(plan);
    }
    cbc_solution_free(&s);
    cbc_rmdir(dir);
    free(dir);
    return r;
}

static int close_rel(double a, double b, double tol)
{
    return fabs(a - b) <= tol * fmax(1.0, fmax(fabs(a), fabs(b)));
}

Test(export, quantile_bigm_check_values)
{
    /* METHODS.md s.6: single bin, capacity 10, N = 6, k = 2, weights of
     * s.7: naive M = (7,7,7,9,9,11); quantile M = (0.5, 0.7142857, 1.2,
     * 3.0, 3.0, 4.0) (computed there by the same pairwise knapsacks). */
    const double cap = 10;
    surety_model *model = make_model(5, 1, &cap, NULL, eps_for(2, 6),
                                     SURETY_JOINT);
    surety_scenarios *sc = toy_scenarios();
    const double plain[6] = {7, 7, 7, 9, 9, 11};
    const double quant[6] = {0.5, 0.7142857142857143, 1.2, 3.0, 3.0, 4.0};
    char *dir = cbc_tempdir();
    char path[1100];
    snprintf(path, sizeof path, "%s/m.mps", dir);
    for (int strong = 0; strong <= 1; strong++) {
        cr_assert_eq(surety_export_mps(model, sc,
                                       strong ? SURETY_BIGM_STRENGTHENED
                                              : SURETY_BIGM_PLAIN,
                                       path, NULL),
                     SURETY_OK);
        for (size_t l = 0; l < 6; l++) {
            char z[32], row[32];
            snprintf(z, sizeof z, "z_%zu", l);
            snprintf(row, sizeof row, "cap_%zu_0", l);
            double M = -mps_coef(path, z, row);
            double want = strong ? quant[l] : plain[l];
            cr_assert(fabs(M - want) < 1e-9, "%s M_%zu = %.17g, expected %g",
                      strong ? "quantile" : "plain", l, M, want);
        }
    }
    cbc_rmdir(dir);
    free(dir);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

Test(export, toy_instance_optimum_by_allowance)
{
    /* METHODS.md s.7 (exhaustive enumeration there): optimal profit by k:
     * 0 -> 25, 1 -> 26, 2 -> 28, 3 -> 32. Solved here by CBC and GLPK. */
    const double cap[2] = {10, 8};
    const double want[4] = {25, 26, 28, 32};
    surety_scenarios *sc = toy_scenarios();
    for (size_t k = 0; k <= 3; k++) {
        surety_model *model = make_model(5, 2, cap, NULL, eps_for(k, 6),
                                         SURETY_JOINT);
        cr_assert_eq(surety_allowance(model->risk, 6), k);
        for (int strong = 0; strong <= 1; strong++) {
            solved r = export_and_solve(model, sc,
                                        strong ? SURETY_BIGM_STRENGTHENED
                                               : SURETY_BIGM_PLAIN);
            cr_assert(!r.infeasible);
            cr_assert(close_rel(-r.cbc_obj, want[k], 1e-7),
                      "k=%zu strong=%d: CBC %g, expected %g", k, strong,
                      -r.cbc_obj, want[k]);
            cr_assert(close_rel(-r.glpk_obj, want[k], 1e-7),
                      "k=%zu strong=%d: GLPK %g, expected %g", k, strong,
                      -r.glpk_obj, want[k]);
            cr_assert(close_rel(r.profit, want[k], 1e-9));
        }
        /* the project's own counting agrees with the enumeration values */
        cr_assert(close_rel(enumerate_best(model, sc), want[k], 1e-12));
        surety_model_free(model);
    }
    surety_scenarios_free(sc);
}

/* A random instance: n jobs, m resources with factors in [0.8, 1.25],
 * some pairs not allowed, some jobs required, hours lognormal-like around a
 * base, profit rate times hours. Capacity `tight` times the mean load of a
 * share of the jobs, so that plans must choose. */
static void random_instance(uint64_t seed, size_t n, size_t m, size_t N,
                            double eps, surety_constraint con, int required,
                            surety_model **model_out, surety_scenarios **sc_out)
{
    uint64_t st = seed;
    double cap[8], fac[8];
    for (size_t i = 0; i < m; i++) {
        fac[i] = 0.8 + 0.45 * unif(&st);
        cap[i] = 0;
    }
    double base[16], rate[16];
    for (size_t j = 0; j < n; j++) {
        base[j] = 2 + 8 * unif(&st);
        rate[j] = 50 + 50 * unif(&st);
    }
    double sum = 0;
    for (size_t j = 0; j < n; j++)
        sum += base[j];
    for (size_t i = 0; i < m; i++)
        cap[i] = sum / (double)(m + 1) * (0.8 + 0.4 * unif(&st));
    surety_model *model = make_model(n, m, cap, fac, eps, con);
    for (size_t j = 0; j < n; j++) {
        if (m > 1 && unif(&st) < 0.3)
            model->jobs[j].allowed[(size_t)(unif(&st) * (double)m) % m] = 0;
        if (required && j < 2)
            model->jobs[j].required = 1;
    }
    surety_scenarios *sc = make_scenarios(N, n);
    for (size_t l = 0; l < N; l++) {
        double common = exp(0.2 * (unif(&st) - 0.5));
        for (size_t j = 0; j < n; j++) {
            double h = base[j] * common * exp(0.6 * (unif(&st) - 0.5));
            sc->hours[l * n + j] = h;
            sc->profit[l * n + j] = rate[j] * h;
        }
    }
    *model_out = model;
    *sc_out = sc;
}

static void compare_exports(uint64_t seed, size_t n, size_t m, size_t N,
                            double eps, surety_constraint con, int required)
{
    surety_model *model;
    surety_scenarios *sc;
    random_instance(seed, n, m, N, eps, con, required, &model, &sc);
    solved a = export_and_solve(model, sc, SURETY_BIGM_PLAIN);
    solved b = export_and_solve(model, sc, SURETY_BIGM_STRENGTHENED);
    double best = enumerate_best(model, sc);
    cr_assert_eq(a.infeasible, b.infeasible);
    cr_assert_eq(a.infeasible, best == -INFINITY,
                 "seed %llu: CBC infeasible=%d, enumeration %g",
                 (unsigned long long)seed, a.infeasible, best);
    if (!a.infeasible) {
        /* plain and strengthened: the same optimum (CBC prints 8
         * decimals; 1e-6 relative is far above that) */
        cr_assert(close_rel(a.cbc_obj, b.cbc_obj, 1e-6),
                  "seed %llu: plain %.10g, strengthened %.10g",
                  (unsigned long long)seed, a.cbc_obj, b.cbc_obj);
        cr_assert(close_rel(a.glpk_obj, a.cbc_obj, 1e-6));
        cr_assert(close_rel(b.glpk_obj, b.cbc_obj, 1e-6));
        cr_assert(close_rel(-a.cbc_obj, a.profit, 1e-6));
        cr_assert(close_rel(-b.cbc_obj, b.profit, 1e-6));
        cr_assert(close_rel(best, a.profit, 1e-6),
                  "seed %llu: enumeration %.10g, CBC %.10g",
                  (unsigned long long)seed, best, a.profit);
    }
    surety_scenarios_free(sc);
    surety_model_free(model);
}

Test(export, joint_random_plain_equals_strengthened)
{
    for (uint64_t seed = 1; seed <= 3; seed++)
        compare_exports(seed, 6, 2, 30, 0.1, SURETY_JOINT, seed % 2);
    compare_exports(11, 5, 3, 40, 0.2, SURETY_JOINT, 0);
}

Test(export, separate_random_plain_equals_strengthened)
{
    for (uint64_t seed = 21; seed <= 23; seed++)
        compare_exports(seed, 6, 2, 30, 0.1, SURETY_SEPARATE, seed % 2);
}

Test(export, hours_factor_and_tight_allowance)
{
    /* k = 0 (robust) and a large allowance, with factors != 1 */
    compare_exports(31, 6, 2, 25, 0.01, SURETY_JOINT, 0);
    compare_exports(32, 6, 2, 25, 0.45, SURETY_JOINT, 1);
}

/* The quantile big-M of every row of a larger export (N = 300, k = 15,
 * two resources with factors and restricted pairs) against a plain
 * reference in Python: per pair (l, l') the fractional knapsack by sorting
 * the ratios (Dantzig's greedy), M = the (k+1)-th smallest, rows dropped
 * when the all-in load fits, z dropped when M <= 0. This checks the
 * export's pruned scan and quickselect knapsack on many rows at once. */
Test(export, quantile_bigm_matches_sorted_reference)
{
    surety_model *model;
    surety_scenarios *sc;
    random_instance(77, 12, 2, 300, 0.05, SURETY_JOINT, 0, &model, &sc);
    char *dir = cbc_tempdir();
    char mps[1100], data[1100], prog[1100];
    snprintf(mps, sizeof mps, "%s/q.mps", dir);
    snprintf(data, sizeof data, "%s/q.txt", dir);
    snprintf(prog, sizeof prog, "%s/q.py", dir);
    cr_assert_eq(surety_export_mps(model, sc, SURETY_BIGM_STRENGTHENED, mps,
                                   NULL),
                 SURETY_OK);
    size_t n = model->n, m = model->m, N = sc->N;
    FILE *fp = fopen(data, "w");
    fprintf(fp, "%zu %zu %zu %zu\n", N, n, m, surety_allowance(0.05, N));
    for (size_t i = 0; i < m; i++) {
        fprintf(fp, "%.17g %.17g", model->resources[i].hours_factor,
                model->resources[i].capacity);
        for (size_t j = 0; j < n; j++)
            fprintf(fp, " %d", model->jobs[j].allowed[i]);
        fprintf(fp, "\n");
    }
    for (size_t l = 0; l < N; l++) {
        for (size_t j = 0; j < n; j++)
            fprintf(fp, "%s%.17g", j ? " " : "", sc->hours[l * n + j]);
        fprintf(fp, "\n");
    }
    fclose(fp);
    fp = fopen(prog, "w");
    fprintf(fp,
            "import sys\n"
            "lines = open(sys.argv[1]).read().split('\\n')\n"
            "N, n, m, k = map(int, lines[0].split())\n"
            "res = [list(map(float, lines[1 + i].split())) for i in range(m)]\n"
            "H = [list(map(float, lines[1 + m + l].split())) for l in range(N)]\n"
            "coef = {}\n"
            "rows = set()\n"
            "for line in open(sys.argv[2]):\n"
            "    f = line.split()\n"
            "    if len(f) == 2 and f[0] == 'L' and f[1].startswith('cap_'):\n"
            "        rows.add(f[1])\n"
            "    if len(f) == 3 and f[0].startswith('z_') and f[1].startswith('cap_'):\n"
            "        coef[f[1]] = -float(f[2])\n"
            "def knap(a, b, C):\n"
            "    v = sum(x for x, y in zip(a, b) if y <= 0)\n"
            "    items = sorted(((x / y, x, y) for x, y in zip(a, b) if y > 0 and x > 0), reverse=True)\n"
            "    for r, x, y in items:\n"
            "        if y <= C:\n"
            "            v += x; C -= y\n"
            "        else:\n"
            "            return v + x * C / y\n"
            "    return v\n"
            "bad = checked = 0\n"
            "for i in range(m):\n"
            "    f, C = res[i][0], res[i][1]\n"
            "    J = [j for j in range(n) if res[i][2 + j] > 0]\n"
            "    A = [[f * H[l][j] for j in J] for l in range(N)]\n"
            "    for l in range(N):\n"
            "        name = 'cap_%%d_%%d' %% (l, i)\n"
            "        plain = f * sum(H[l][j] for j in J) - C\n"
            "        if plain <= 0:\n"
            "            bad += name in rows\n"
            "            continue\n"
            "        M = sorted(knap(A[l], A[q], C) - C for q in range(N))[k]\n"
            "        checked += 1\n"
            "        if M > 1e-9:\n"
            "            got = coef.get(name)\n"
            "            bad += got is None or abs(got - M) > 1e-9 * max(1, abs(M))\n"
            "        elif M < -1e-9:\n"
            "            bad += name not in rows or name in coef\n"
            "print(bad, checked)\n");
    fclose(fp);
    char cmd[4096];
    snprintf(cmd, sizeof cmd, "/usr/bin/python3 '%s' '%s' '%s'", prog, data, mps);
    FILE *p = popen(cmd, "r");
    long bad = -1, checked = -1;
    cr_assert_eq(fscanf(p, "%ld %ld", &bad, &checked), 2);
    cr_assert_eq(pclose(p), 0);
    cr_assert_eq(bad, 0, "%ld of %ld rows differ from the reference", bad,
                 checked);
    cr_assert_gt(checked, 300, "too few rows to mean anything: %ld", checked);
    cbc_rmdir(dir);
    free(dir);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

Test(export, rejects_mismatched_scenarios)
{
    const double cap = 10;
    surety_model *model = make_model(5, 1, &cap, NULL, 0.1, SURETY_JOINT);
    surety_scenarios *sc = make_scenarios(4, 3);
    surety_error err;
    char *dir = cbc_tempdir();
    char path[1100];
    snprintf(path, sizeof path, "%s/bad.mps", dir);
    cr_assert_eq(surety_export_mps(model, sc, SURETY_BIGM_PLAIN, path, &err),
                 SURETY_EUSAGE);
    cr_assert(strstr(err.message, "jobs") != NULL);
    FILE *fp = fopen(path, "r");
    cr_assert_null(fp, "nothing may be written on error");
    cbc_rmdir(dir);
    free(dir);
    surety_scenarios_free(sc);
    surety_model_free(model);
}

/* Output to something that is not a regular file (a FIFO here, /dev/null
 * or a terminal in use) is written in place: the atomic rename would
 * replace the device by a plain file, which as root destroys /dev/null
 * for the whole machine. The FIFO must still be a FIFO afterwards and
 * carry the whole file (a reader is opened first so the writer does not
 * block; the file is far below the pipe's buffer). */
Test(export, writes_into_a_fifo_without_replacing_it)
{
    const double cap = 10;
    surety_model *model = make_model(2, 1, &cap, NULL, 0.5, SURETY_JOINT);
    surety_scenarios *sc = make_scenarios(2, 2);
    for (size_t t = 0; t < 4; t++) {
        sc->hours[t] = 1 + (double)t;
        sc->profit[t] = 3;
    }
    char *dir = cbc_tempdir();
    cr_assert_not_null(dir);
    char path[1100];
    snprintf(path, sizeof path, "%s/out.mps", dir);
    cr_assert_eq(mkfifo(path, 0600), 0);
    int rd = open(path, O_RDONLY | O_NONBLOCK);
    cr_assert_geq(rd, 0);
    surety_error err;
    cr_assert_eq(surety_export_mps(model, sc, SURETY_BIGM_PLAIN, path, &err),
                 SURETY_OK, "%s", err.message);
    struct stat st;
    cr_assert_eq(stat(path, &st), 0);
    cr_expect(S_ISFIFO(st.st_mode), "the FIFO was replaced by a file");
    char buf[16384];
    ssize_t got = read(rd, buf, sizeof buf - 1);
    close(rd);
    cr_assert_gt(got, 0, "nothing came through the FIFO");
    buf[got] = '\0';
    cr_expect(strstr(buf, "ENDATA") != NULL, "incomplete MPS:\n%s", buf);
    cbc_rmdir(dir);
    free(dir);
    surety_scenarios_free(sc);
    surety_model_free(model);
}
