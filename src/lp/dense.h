/* dense.h - dense linear-algebra kernels; the only place that calls
 * OpenBLAS (CBLAS) and LAPACKE. Matrices are row-major.
 * SPDX-License-Identifier: MIT */
#ifndef SURETY_DENSE_H
#define SURETY_DENSE_H

#include <stddef.h>

/* Pins OpenBLAS to one thread, once per process (thread-safe). Threaded
 * BLAS may split a product differently from run to run, and surety
 * promises bit-identical scenarios; the kernels used here are small enough
 * that one thread loses nothing. This changes OpenBLAS's process-wide
 * setting, which the caller's own BLAS calls share. */
void surety_dense_single_thread(void);

/* Cholesky factor of the symmetric positive definite n x n matrix `a`
 * (row-major; only the lower triangle is read) in place: on success the
 * lower triangle holds L with A = L L^T and the strict upper triangle is
 * zeroed. Returns 0, or k > 0 when the leading minor of order k is not
 * positive definite (LAPACK dpotrf's info), or -1 on a bad argument. */
int surety_dense_cholesky(double *a, size_t n);

/* Eigen-decomposition of the symmetric n x n matrix `a` (row-major) by
 * LAPACK dsyevd: w receives the n eigenvalues ascending and `a` is
 * overwritten with the eigenvectors as columns (a[r*n + c] is component r
 * of eigenvector c). Returns 0, or the LAPACK info when it fails. */
int surety_dense_eigen(double *a, size_t n, double *w);

/* X := X L^T in place, X rows x n row-major (one scenario a row), L the
 * n x n lower-triangular factor (row-major, upper triangle ignored): each
 * row x becomes L x. BLAS dtrmm, one thread. The value of each row depends
 * only on that row, `rows`, and its position, so callers wanting
 * bit-reproducible rows must keep `rows` and positions fixed. */
void surety_dense_lower_apply(double *x, size_t rows, size_t n,
                              const double *L);

#endif

/* ------------------------------------------------------------------ */
/* Kernels of the dense simplex (src/lp/simplex.c), appended block.     */
/* All matrices are row-major with leading dimension lda >= columns.   */
/* ------------------------------------------------------------------ */

#ifndef SURETY_DENSE_SIMPLEX_H
#define SURETY_DENSE_SIMPLEX_H

#include <stddef.h>

/* y = alpha * op(A) x + beta * y, A m x n; op(A) = A^T when trans != 0
 * (then x has m entries and y has n). */
void surety_dense_gemv(int trans, size_t m, size_t n, double alpha,
                       const double *A, size_t lda, const double *x,
                       double beta, double *y);

/* A += alpha * x y^T, A m x n, x of length m, y of length n. */
void surety_dense_ger(size_t m, size_t n, double alpha, const double *x,
                      const double *y, double *A, size_t lda);

/* y += f x, vectors of length len. */
void surety_dense_axpy(size_t len, double f, const double *x, double *y);

/* C = op(A) B, row-major: op(A) m x k (A^T when transa != 0, A then
 * stored k x m), B k x n, C m x n. */
void surety_dense_gemm(int transa, size_t m, size_t n, size_t k,
                       const double *A, size_t lda, const double *B,
                       size_t ldb, double *C, size_t ldc);

/* Replaces the k x k matrix M by its inverse. Stores the reciprocal
 * 1-norm condition estimate of M in *rcond. Returns 0 on success, 1 when
 * M is exactly singular (M is then garbage), -1 when out of memory. */
int surety_dense_invert(size_t k, double *M, size_t ldm, double *rcond);

#endif
