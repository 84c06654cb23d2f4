/*
 * Loadline's optional native BLAS binding: a thin Node-API layer over OpenBLAS's CBLAS (Debian libopenblas-dev) for
 * the estimation engine's big products on row-major Float64Arrays. Every call checks that the operands' extents fit
 * inside the arrays it was given, so a wrong size throws instead of reading or writing out of bounds.
 * The engine keeps pure-JS kernels for when this addon is missing (server/engine/linalg/native.ts).
 */
#include <node_api.h>
#include <cblas.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

/* LAPACK's divide-and-conquer symmetric eigensolver, as OpenBLAS ships it (Fortran calling convention). */
extern void dsyevd_(const char *jobz, const char *uplo, const int *n, double *a, const int *lda, double *w, double *work,
                    const int *lwork, int *iwork, const int *liwork, int *info, size_t jobz_len, size_t uplo_len);

#define CHECK(call)                                                                 \
  do {                                                                              \
    if ((call) != napi_ok) {                                                        \
      napi_throw_error(env, NULL, "loadline_blas: Node-API call failed: " #call);    \
      return NULL;                                                                  \
    }                                                                               \
  } while (0)

static bool get_f64(napi_env env, napi_value value, double **data, size_t *length, const char *name) {
  bool is_typed = false;
  if (napi_is_typedarray(env, value, &is_typed) != napi_ok || !is_typed) {
    char msg[128];
    snprintf(msg, sizeof msg, "loadline_blas: %s must be a Float64Array", name);
    napi_throw_type_error(env, NULL, msg);
    return false;
  }
  napi_typedarray_type type;
  void *raw = NULL;
  if (napi_get_typedarray_info(env, value, &type, length, &raw, NULL, NULL) != napi_ok || type != napi_float64_array) {
    char msg[128];
    snprintf(msg, sizeof msg, "loadline_blas: %s must be a Float64Array", name);
    napi_throw_type_error(env, NULL, msg);
    return false;
  }
  *data = (double *)raw;
  return true;
}

static bool get_int(napi_env env, napi_value value, int64_t *out, const char *name) {
  if (napi_get_value_int64(env, value, out) != napi_ok || *out < 0 || *out > INT32_MAX) {
    char msg[128];
    snprintf(msg, sizeof msg, "loadline_blas: %s must be a non-negative 32-bit integer", name);
    napi_throw_range_error(env, NULL, msg);
    return false;
  }
  return true;
}

static bool get_double(napi_env env, napi_value value, double *out, const char *name) {
  if (napi_get_value_double(env, value, out) != napi_ok) {
    char msg[128];
    snprintf(msg, sizeof msg, "loadline_blas: %s must be a number", name);
    napi_throw_type_error(env, NULL, msg);
    return false;
  }
  return true;
}

static bool get_bool(napi_env env, napi_value value, bool *out) {
  return napi_get_value_bool(env, value, out) == napi_ok;
}

/* A row-major rows × cols operand with leading dimension ld must fit in length entries. */
static bool fits(napi_env env, size_t length, int64_t rows, int64_t cols, int64_t ld, const char *name) {
  if (rows == 0 || cols == 0) return true;
  if (ld < cols || (uint64_t)((rows - 1) * ld + cols) > (uint64_t)length) {
    char msg[160];
    snprintf(msg, sizeof msg, "loadline_blas: %s (%lld × %lld, leading dimension %lld) does not fit its array of %zu", name,
             (long long)rows, (long long)cols, (long long)ld, length);
    napi_throw_range_error(env, NULL, msg);
    return false;
  }
  return true;
}

/* gemm(transA, transB, m, n, k, alpha, A, lda, B, ldb, beta, C, ldc): C = alpha·op(A)·op(B) + beta·C, row-major. */
static napi_value gemm(napi_env env, napi_callback_info info) {
  size_t argc = 13;
  napi_value argv[13];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  if (argc != 13) {
    napi_throw_type_error(env, NULL, "loadline_blas: gemm takes 13 arguments");
    return NULL;
  }
  bool ta, tb;
  int64_t m, n, k, lda, ldb, ldc;
  double alpha, beta, *a, *b, *c;
  size_t la, lb, lc;
  if (!get_bool(env, argv[0], &ta) || !get_bool(env, argv[1], &tb)) {
    napi_throw_type_error(env, NULL, "loadline_blas: transA and transB must be booleans");
    return NULL;
  }
  if (!get_int(env, argv[2], &m, "m") || !get_int(env, argv[3], &n, "n") || !get_int(env, argv[4], &k, "k") ||
      !get_double(env, argv[5], &alpha, "alpha") || !get_f64(env, argv[6], &a, &la, "A") ||
      !get_int(env, argv[7], &lda, "lda") || !get_f64(env, argv[8], &b, &lb, "B") || !get_int(env, argv[9], &ldb, "ldb") ||
      !get_double(env, argv[10], &beta, "beta") || !get_f64(env, argv[11], &c, &lc, "C") ||
      !get_int(env, argv[12], &ldc, "ldc"))
    return NULL;
  if (!fits(env, la, ta ? k : m, ta ? m : k, lda, "A") || !fits(env, lb, tb ? n : k, tb ? k : n, ldb, "B") ||
      !fits(env, lc, m, n, ldc, "C"))
    return NULL;
  if (m == 0 || n == 0) return NULL;
  cblas_dgemm(CblasRowMajor, ta ? CblasTrans : CblasNoTrans, tb ? CblasTrans : CblasNoTrans, (int)m, (int)n, (int)k, alpha,
              a, (int)(lda > 0 ? lda : 1), b, (int)(ldb > 0 ? ldb : 1), beta, c, (int)ldc);
  return NULL;
}

/* syrk(trans, n, k, alpha, A, lda, beta, C, ldc): lower triangle of C = alpha·A·Aᵀ + beta·C (trans: AᵀA), row-major. */
static napi_value syrk(napi_env env, napi_callback_info info) {
  size_t argc = 9;
  napi_value argv[9];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  if (argc != 9) {
    napi_throw_type_error(env, NULL, "loadline_blas: syrk takes 9 arguments");
    return NULL;
  }
  bool trans;
  int64_t n, k, lda, ldc;
  double alpha, beta, *a, *c;
  size_t la, lc;
  if (!get_bool(env, argv[0], &trans)) {
    napi_throw_type_error(env, NULL, "loadline_blas: trans must be a boolean");
    return NULL;
  }
  if (!get_int(env, argv[1], &n, "n") || !get_int(env, argv[2], &k, "k") || !get_double(env, argv[3], &alpha, "alpha") ||
      !get_f64(env, argv[4], &a, &la, "A") || !get_int(env, argv[5], &lda, "lda") ||
      !get_double(env, argv[6], &beta, "beta") || !get_f64(env, argv[7], &c, &lc, "C") || !get_int(env, argv[8], &ldc, "ldc"))
    return NULL;
  if (!fits(env, la, trans ? k : n, trans ? n : k, lda, "A") || !fits(env, lc, n, n, ldc, "C")) return NULL;
  if (n == 0) return NULL;
  cblas_dsyrk(CblasRowMajor, CblasLower, trans ? CblasTrans : CblasNoTrans, (int)n, (int)k, alpha, a, (int)(lda > 0 ? lda : 1),
              beta, c, (int)ldc);
  return NULL;
}

/*
 * syev(n, A, w): all eigenpairs of the symmetric n × n matrix in A (row-major; both triangles hold it). On return
 * w holds the eigenvalues in ascending order and row i of A the eigenvector of w[i] (LAPACK dsyevd). Returns info.
 */
static napi_value syev(napi_env env, napi_callback_info info) {
  size_t argc = 3;
  napi_value argv[3];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  if (argc != 3) {
    napi_throw_type_error(env, NULL, "loadline_blas: syev takes 3 arguments");
    return NULL;
  }
  int64_t n;
  double *a, *w;
  size_t la, lw;
  if (!get_int(env, argv[0], &n, "n") || !get_f64(env, argv[1], &a, &la, "A") || !get_f64(env, argv[2], &w, &lw, "w")) return NULL;
  if (n > 46000 || !fits(env, la, n, n, n, "A") || !fits(env, lw, 1, n, n, "w")) return NULL;
  napi_value out;
  if (n == 0) {
    CHECK(napi_create_int32(env, 0, &out));
    return out;
  }
  const int nn = (int)n;
  const int lwork = 1 + 6 * nn + 2 * nn * nn;
  const int liwork = 3 + 5 * nn;
  double *work = malloc(sizeof(double) * (size_t)lwork);
  int *iwork = malloc(sizeof(int) * (size_t)liwork);
  if (!work || !iwork) {
    free(work);
    free(iwork);
    napi_throw_error(env, NULL, "loadline_blas: syev could not allocate its workspace");
    return NULL;
  }
  int status = 0;
  dsyevd_("V", "L", &nn, a, &nn, w, work, &lwork, iwork, &liwork, &status, 1, 1);
  free(work);
  free(iwork);
  CHECK(napi_create_int32(env, status, &out));
  return out;
}

/* setThreads(count): OpenBLAS's thread count, fixed once at load so results are reproducible. */
static napi_value set_threads(napi_env env, napi_callback_info info) {
  size_t argc = 1;
  napi_value argv[1];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  int64_t count;
  if (argc != 1 || !get_int(env, argv[0], &count, "count")) return NULL;
  openblas_set_num_threads(count < 1 ? 1 : (int)count);
  return NULL;
}

static napi_value get_threads(napi_env env, napi_callback_info info) {
  (void)info;
  napi_value out;
  CHECK(napi_create_int32(env, openblas_get_num_threads(), &out));
  return out;
}

static napi_value get_config(napi_env env, napi_callback_info info) {
  (void)info;
  napi_value out;
  CHECK(napi_create_string_utf8(env, openblas_get_config(), NAPI_AUTO_LENGTH, &out));
  return out;
}

NAPI_MODULE_INIT() {
  napi_property_descriptor props[] = {
      {"gemm", NULL, gemm, NULL, NULL, NULL, napi_enumerable, NULL},
      {"syrk", NULL, syrk, NULL, NULL, NULL, napi_enumerable, NULL},
      {"syev", NULL, syev, NULL, NULL, NULL, napi_enumerable, NULL},
      {"setThreads", NULL, set_threads, NULL, NULL, NULL, napi_enumerable, NULL},
      {"threads", NULL, get_threads, NULL, NULL, NULL, napi_enumerable, NULL},
      {"config", NULL, get_config, NULL, NULL, NULL, napi_enumerable, NULL},
  };
  if (napi_define_properties(env, exports, sizeof props / sizeof props[0], props) != napi_ok) return NULL;
  return exports;
}
