/* stats_live.c - reads one query per line on stdin and prints the
 * statistics module's answer, for check_stats_live.py to compare with SciPy.
 * SPDX-License-Identifier: MIT */
#include <stdio.h>
#include <string.h>

#include "sizes.h"
#include "stats.h"
#include "surety.h"

int main(void)
{
    char line[512], fn[32];
    while (fgets(line, sizeof line, stdin)) {
        double a = 0, b = 0, c = 0, d = 0, lo, hi, l1;
        int n = sscanf(line, "%31s %lf %lf %lf %lf", fn, &a, &b, &c, &d);
        if (n < 1)
            continue;
        if (!strcmp(fn, "cdf"))
            printf("%.17g\n", surety_binom_cdf((long)a, (long)b, c));
        else if (!strcmp(fn, "logcdf"))
            printf("%.17g\n", surety_stats_binom_logcdf((long)a, (long)b, c));
        else if (!strcmp(fn, "sf"))
            printf("%.17g\n", surety_stats_binom_sf((long)a, (long)b, c));
        else if (!strcmp(fn, "logsf"))
            printf("%.17g\n", surety_stats_binom_logsf((long)a, (long)b, c));
        else if (!strcmp(fn, "pmf"))
            printf("%.17g\n", surety_stats_binom_pmf((long)a, (long)b, c));
        else if (!strcmp(fn, "logpmf"))
            printf("%.17g\n", surety_stats_binom_logpmf((long)a, (long)b, c));
        else if (!strcmp(fn, "ibeta"))
            printf("%.17g\n", surety_stats_ibeta(a, b, c));
        else if (!strcmp(fn, "ibetac"))
            printf("%.17g\n", surety_stats_ibetac(a, b, c));
        else if (!strcmp(fn, "ibetainv"))
            printf("%.17g\n", surety_stats_ibeta_inv(a, b, c));
        else if (!strcmp(fn, "normq"))
            printf("%.17g\n", surety_norm_quantile(a));
        else if (!strcmp(fn, "normcdf"))
            printf("%.17g\n", surety_norm_cdf(a));
        else if (!strcmp(fn, "cp")) {
            surety_clopper_pearson((size_t)a, (size_t)b, c, &lo, &hi, &l1);
            printf("%.17g %.17g %.17g %.17g\n", lo, hi, l1,
                   surety_stats_cp_upper1((size_t)a, (size_t)b, c));
        } else if (!strcmp(fn, "wilson")) {
            surety_stats_wilson((size_t)a, (size_t)b, c, (int)d, &lo, &hi);
            printf("%.17g %.17g\n", lo, hi);
        } else if (!strcmp(fn, "la_first"))
            printf("%zu\n", surety_stats_la_first(a, b, c, d));
        else if (!strcmp(fn, "la_stable"))
            printf("%zu\n", surety_stats_la_stable(a, b, c, d));
        else if (!strcmp(fn, "la_fixed_k"))
            printf("%zu\n", surety_stats_la_fixed_k(a, (size_t)b, c, d));
        else if (!strcmp(fn, "chernoff"))
            printf("%zu\n", surety_stats_la_chernoff(a, b, c, d));
        else if (!strcmp(fn, "hoeffding"))
            printf("%zu\n", surety_stats_la_hoeffding(a, b, c, d));
        else if (!strcmp(fn, "cg2008"))
            printf("%zu\n", surety_stats_cg2008(a, b, (size_t)c));
        else if (!strcmp(fn, "discard_min_n"))
            printf("%zu\n", surety_stats_discard_min_n((size_t)a, (size_t)b,
                                                        c, d));
        else if (!strcmp(fn, "discard_max_k"))
            printf("%ld\n", surety_stats_discard_max_k((size_t)a, (size_t)b,
                                                        c, d));
        else if (!strcmp(fn, "discard_logprob"))
            printf("%.17g\n", surety_stats_discard_logprob(
                                   (size_t)a, (size_t)b, (size_t)c, d));
        else if (!strcmp(fn, "pas_rank"))
            printf("%zu\n", surety_stats_pas_rank((size_t)a, b, c));
        else
            printf("nan\n");
        fflush(stdout);
    }
    return 0;
}
