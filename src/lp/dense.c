/* dense.c - the only file that calls OpenBLAS (CBLAS) and LAPACKE:
 * Cholesky and eigen-decomposition for the Gaussian copula, and the blocked
 * product that applies the Cholesky factor to many scenarios at once.
 * SPDX-License-Identifier: MIT */
#include "lp/dense.h"

#include <cblas.h>
#include <lapacke.h>
#include <pthread.h>
#include <string.h>

/* The once-flag is the module's only static state: it records that the
 * process-wide OpenBLAS thread count has been set. */
static pthread_once_t single_thread_once = PTHREAD_ONCE_INIT;

static void pin_one_thread(void)
{
    openblas_set_num_threads(1);
}

void surety_dense_single_thread(void)
{
    pthread_once(&single_thread_once, pin_one_thread);
}

int surety_dense_cholesky(double *a, size_t n)
{
    if (n == 0)
        return 0;
    lapack_int info = LAPACKE_dpotrf(LAPACK_ROW_MAJOR, 'L', (lapack_int)n,
                                     a, (lapack_int)n);
    if (info < 0)
        return -1;
    if (info > 0)
        return (int)info;
    for (size_t r = 0; r < n; r++)
        memset(a + r * n + r + 1, 0, (n - r - 1) * sizeof *a);
    return 0;
}

int surety_dense_eigen(double *a, size_t n, double *w)
{
    if (n == 0)
        return 0;
    lapack_int info = LAPACKE_dsyevd(LAPACK_ROW_MAJOR, 'V', 'L',
                                     (lapack_int)n, a, (lapack_int)n, w);
    return (int)info;
}

void surety_dense_lower_apply(double *x, size_t rows, size_t n,
                              const double *L)
{
    if (rows == 0 || n == 0)
        return;
    surety_dense_single_thread();
    /* Right side: X := X * op(L) with op = transpose, L lower, in place. */
    cblas_dtrmm(CblasRowMajor, CblasRight, CblasLower, CblasTrans,
                CblasNonUnit, (int)rows, (int)n, 1.0, L, (int)n, x, (int)n);
}

/* ------------------------------------------------------------------ */
/* Kernels of the dense simplex (src/lp/simplex.c). This block is owned */
/* by the simplex module and appended at the end of the file; please   */
/* keep it here and edit above it.                                      */
/* ------------------------------------------------------------------ */

#include "alloc.h"

void surety_dense_gemv(int trans, size_t m, size_t n, double alpha,
                       const double *A, size_t lda, const double *x,
                       double beta, double *y)
{
    if (m == 0 || n == 0) {
        size_t len = trans ? n : m;
        for (size_t i = 0; i < len; i++)
            y[i] = beta == 0.0 ? 0.0 : beta * y[i];
        return;
    }
    cblas_dgemv(CblasRowMajor, trans ? CblasTrans : CblasNoTrans,
                (int)m, (int)n, alpha, A, (int)lda, x, 1, beta,
                y, 1);
}

void surety_dense_ger(size_t m, size_t n, double alpha, const double *x,
                      const double *y, double *A, size_t lda)
{
    if (m == 0 || n == 0)
        return;
    cblas_dger(CblasRowMajor, (int)m, (int)n, alpha, x, 1, y, 1, A,
               (int)lda);
}

void surety_dense_axpy(size_t len, double f, const double *x, double *y)
{
    if (len > 0)
        cblas_daxpy((int)len, f, x, 1, y, 1);
}

void surety_dense_gemm(int transa, size_t m, size_t n, size_t k, const double *A,
                       size_t lda, const double *B, size_t ldb, double *C,
                       size_t ldc)
{
    if (m == 0 || n == 0)
        return;
    if (k == 0) {
        for (size_t i = 0; i < m; i++)
            for (size_t j = 0; j < n; j++)
                C[i * ldc + j] = 0.0;
        return;
    }
    cblas_dgemm(CblasRowMajor, transa ? CblasTrans : CblasNoTrans,
                CblasNoTrans, (int)m, (int)n, (int)k, 1.0, A, (int)lda, B,
                (int)ldb, 0.0, C, (int)ldc);
}

/* LU with partial pivoting (dgetrf), a 1-norm condition estimate (dgecon)
 * to catch near-singular bases that dgetrf alone would accept, then the
 * explicit inverse (dgetri). */
int surety_dense_invert(size_t k, double *M, size_t ldm, double *rcond)
{
    *rcond = 1.0;
    if (k == 0)
        return 0;
    lapack_int *ipiv = surety_xmalloc(k, sizeof *ipiv);
    if (!ipiv)
        return -1;
    double anorm = LAPACKE_dlange(LAPACK_ROW_MAJOR, '1', (lapack_int)k,
                                  (lapack_int)k, M, (lapack_int)ldm);
    lapack_int info = LAPACKE_dgetrf(LAPACK_ROW_MAJOR, (lapack_int)k,
                                     (lapack_int)k, M, (lapack_int)ldm, ipiv);
    if (info == 0)
        info = LAPACKE_dgecon(LAPACK_ROW_MAJOR, '1', (lapack_int)k, M,
                              (lapack_int)ldm, anorm, rcond);
    else
        *rcond = 0.0;
    if (info == 0)
        info = LAPACKE_dgetri(LAPACK_ROW_MAJOR, (lapack_int)k, M,
                              (lapack_int)ldm, ipiv);
    surety_xfree(ipiv);
    return info == 0 ? 0 : 1;
}
