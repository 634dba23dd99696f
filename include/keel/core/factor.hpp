#pragma once
/// \file
/// \brief Factorization helpers for the square-root and UD filters (namespace keel::detail; not for direct use):
/// a semi-definite Cholesky, a UD factorization, a structure-exploiting Householder triangularization and
/// a Givens re-triangularization after a rank-1 change. Fixed-size, heap-free, noexcept.

#include <cmath>

#include <Eigen/Core>

#include "linalg.hpp"

namespace keel::detail {

/// \brief Zero-pivot test shared by the semi-definite factorizations. A pivot \f$ d_j \le n\varepsilon a_{jj} \f$
/// is numerically zero; the matrix is still semi-definite only if the rest of that Schur-complement column is
/// zero too, to the same scale: \f$ s_{ij}^2 \le n\varepsilon\, a_{jj} a_{ii} \f$ (the 2×2 minor
/// \f$ [d_j, s_{ij}; s_{ij}, a_{ii}] \f$ must not be indefinite beyond rounding). A pivot below
/// \f$ -n\varepsilon a_{jj} \f$ means the matrix is indefinite.
/// \brief Floor on a *squared* pivot that a factored form computed without squaring (a diagonal of S_e, or a
/// sum of non-negative terms as in Bierman's update): the factor carries the standard deviation, accurate to
/// rounding relative to the square root of the scale, so the test is \f$ \sigma > n\varepsilon\sqrt{s} \f$,
/// i.e. \f$ \sigma^2 > (n\varepsilon)^2 s \f$ — the conventional floor \f$ n\varepsilon s \f$ would reject
/// well-determined updates that only the factored forms can compute (Dyer & McReynolds' example).
template <typename T, int N>
constexpr T factored_floor_factor() noexcept {
  return pivot_floor_factor<T, N>() * pivot_floor_factor<T, N>();
}

enum class Pivot { positive, zero, indefinite };

template <typename T, int N>
Pivot classify_pivot(T d, T ajj) noexcept {
  const T floor = pivot_floor_factor<T, N>() * ajj;
  if (d > floor) return Pivot::positive;
  if (d >= -floor) return Pivot::zero;
  return Pivot::indefinite;
}

template <typename T, int N>
bool negligible_coupling(T s, T ajj, T aii) noexcept {
  return s * s <= pivot_floor_factor<T, N>() * ajj * aii;
}

/// \brief In-place lower factor A = L Lᵀ of a symmetric positive *semi*-definite A (reads the lower triangle,
/// zeroes the upper). A numerically zero pivot gives a zero column (Golub & Van Loan, "Matrix Computations",
/// 4th ed., 2013, sec. 4.2.8, semidefinite case). \returns false when A is indefinite or not finite.
template <typename T, int N>
bool psd_cholesky_in_place(Eigen::Matrix<T, N, N>& a) noexcept {
  for (int j = 0; j < N; ++j) {
    const T ajj = a(j, j);
    T d = ajj;
    for (int k = 0; k < j; ++k) d -= a(j, k) * a(j, k);
    if (!is_finite(d)) return false;
    const Pivot kind = classify_pivot<T, N>(d, ajj);
    if (kind == Pivot::indefinite) return false;
    if (kind == Pivot::positive) {
      const T ljj = std::sqrt(d);
      a(j, j) = ljj;
      const T inv = T(1) / ljj;
      for (int i = j + 1; i < N; ++i) {
        T s = a(i, j);
        for (int k = 0; k < j; ++k) s -= a(i, k) * a(j, k);
        a(i, j) = s * inv;
      }
    } else {
      for (int i = j + 1; i < N; ++i) {
        T s = a(i, j);
        for (int k = 0; k < j; ++k) s -= a(i, k) * a(j, k);
        if (!negligible_coupling<T, N>(s, ajj, a(i, i))) return false;
      }
      for (int i = j; i < N; ++i) a(i, j) = T(0);
    }
    for (int i = 0; i < j; ++i) a(i, j) = T(0);
  }
  return true;
}

/// \brief UD factorization P = U diag(d) Uᵀ of a symmetric positive semi-definite P, U unit upper-triangular
/// (Bierman, "Factorization Methods for Discrete Sequential Estimation", 1977, ch. III). Columns are taken
/// from the last to the first: \f$ d_j = p_{jj} - \sum_{k>j} d_k u_{jk}^2,\;
/// u_{ij} = (p_{ij} - \sum_{k>j} d_k u_{ik} u_{jk}) / d_j \f$. A numerically zero d_j gives a unit column.
/// Reads the upper triangle of P. \returns false when P is indefinite or not finite.
template <typename T, int N>
bool ud_factor(const Eigen::Matrix<T, N, N>& p, Eigen::Matrix<T, N, N>& u, Eigen::Matrix<T, N, 1>& d) noexcept {
  u.setIdentity();
  for (int j = N - 1; j >= 0; --j) {
    T dj = p(j, j);
    for (int k = j + 1; k < N; ++k) dj -= d(k) * u(j, k) * u(j, k);
    if (!is_finite(dj)) return false;
    const Pivot kind = classify_pivot<T, N>(dj, p(j, j));
    if (kind == Pivot::indefinite) return false;
    d(j) = kind == Pivot::positive ? dj : T(0);
    for (int i = 0; i < j; ++i) {
      T s = p(i, j);
      for (int k = j + 1; k < N; ++k) s -= d(k) * u(i, k) * u(j, k);
      if (kind == Pivot::positive) {
        u(i, j) = s / dj;
      } else if (!negligible_coupling<T, N>(s, p(j, j), p(i, i))) {
        return false;
      }
    }
  }
  return true;
}

/// \brief One Householder step (Golub & Van Loan, "Matrix Computations", 4th ed., 2013, alg. 5.1.1): zeroes
/// column k of `a` in the rows [b1, e1) ∪ [b2, e2) against the pivot a(k, k) and applies the reflector to
/// columns k+1.. of those rows. All other rows are assumed zero in column k and are not touched, which is how
/// callers exploit the structure of their pre-arrays. Afterwards a(k, k) ≥ 0 (the sign convention of every
/// factor keel returns: the triangular factor has a non-negative diagonal).
template <typename Mat>
void reflect_column(Mat& a, int k, int b1, int e1, int b2, int e2) noexcept {
  using T = typename Mat::Scalar;
  const int cols = static_cast<int>(a.cols());
  T sigma = T(0);
  for (int i = b1; i < e1; ++i) sigma += a(i, k) * a(i, k);
  for (int i = b2; i < e2; ++i) sigma += a(i, k) * a(i, k);
  const T x0 = a(k, k);
  if (sigma == T(0)) {
    if (x0 < T(0))
      for (int j = k; j < cols; ++j) a(k, j) = -a(k, j);
    return;
  }
  const T alpha = std::sqrt(x0 * x0 + sigma);
  // H = I − τ v vᵀ with v = [1, x_rest / v0] maps x to α e₁, α > 0; v0 is formed without cancellation.
  const T v0 = x0 <= T(0) ? x0 - alpha : -sigma / (x0 + alpha);
  const T tau = T(2) * v0 * v0 / (sigma + v0 * v0);
  const T inv_v0 = T(1) / v0;
  for (int i = b1; i < e1; ++i) a(i, k) *= inv_v0;
  for (int i = b2; i < e2; ++i) a(i, k) *= inv_v0;
  for (int j = k + 1; j < cols; ++j) {
    T w = a(k, j);
    for (int i = b1; i < e1; ++i) w += a(i, k) * a(i, j);
    for (int i = b2; i < e2; ++i) w += a(i, k) * a(i, j);
    w *= tau;
    a(k, j) -= w;
    for (int i = b1; i < e1; ++i) a(i, j) -= w * a(i, k);
    for (int i = b2; i < e2; ++i) a(i, j) -= w * a(i, k);
  }
  a(k, k) = alpha;
  for (int i = b1; i < e1; ++i) a(i, k) = T(0);
  for (int i = b2; i < e2; ++i) a(i, k) = T(0);
}

/// \brief Householder triangularization of a stacked pre-array: on entry `a` is the (N+K)×N array whose top
/// N rows are full and whose bottom K rows are upper triangular (bottom row i is zero left of column i); on
/// return its top N×N block is the upper-triangular R with RᵀR = AᵀA and a non-negative diagonal, and the rest
/// is zero. The reflector of column k touches only top rows k..N−1 and bottom rows 0..min(k, K−1), and the
/// bottom block stays upper triangular in the columns not yet reduced: about 2N³ flops for K = N instead of
/// 10N³/3 for a dense QR.
template <typename T, int N, int K>
void triangularize_stacked(Eigen::Matrix<T, N + K, N>& a) noexcept {
  for (int k = 0; k < N; ++k) reflect_column(a, k, k + 1, N, N, N + (k < K ? k + 1 : K));
}

/// \brief Givens rotation [c s; −s c] taking (a, b) to (r, 0), r = hypot(a, b) ≥ 0.
template <typename T>
void givens(T a, T b, T& c, T& s) noexcept {
  const T r = std::hypot(a, b);
  if (r == T(0)) {
    c = T(1);
    s = T(0);
  } else {
    c = a / r;
    s = b / r;
  }
}

/// \brief Replaces the lower-triangular L by the lower-triangular L' with \f$ L'L'^T = (L + w\,u^T)(L + w\,u^T)^T \f$
/// using 2(N−1) Givens rotations on column pairs, O(N²): the column form of the QR update of Golub & Van Loan
/// (2013, sec. 6.5.1) applied to \f$ (L + w u^T)^T = L^T + u w^T \f$. First rotations in planes (k−1, k),
/// k = N−1..1, reduce u to ‖u‖e₁ (L becomes upper-Hessenberg-transposed), then ‖u‖·w is added to column 0,
/// and rotations in planes (k, k+1) restore the lower-triangular form. Diagonal made non-negative.
template <typename T, int N>
void lower_rank1_retriangularize(Eigen::Matrix<T, N, N>& l, Eigen::Matrix<T, N, 1> u,
                                 const Eigen::Matrix<T, N, 1>& w) noexcept {
  T c = T(1);
  T s = T(0);
  for (int k = N - 1; k >= 1; --k) {
    givens(u(k - 1), u(k), c, s);
    u(k - 1) = c * u(k - 1) + s * u(k);
    u(k) = T(0);
    for (int i = k - 1; i < N; ++i) {
      const T a = l(i, k - 1);
      const T b = l(i, k);
      l(i, k - 1) = c * a + s * b;
      l(i, k) = -s * a + c * b;
    }
  }
  l.col(0) += u(0) * w;
  for (int k = 0; k + 1 < N; ++k) {
    givens(l(k, k), l(k, k + 1), c, s);
    for (int i = k; i < N; ++i) {
      const T a = l(i, k);
      const T b = l(i, k + 1);
      l(i, k) = c * a + s * b;
      l(i, k + 1) = -s * a + c * b;
    }
    l(k, k + 1) = T(0);
  }
  for (int k = 0; k < N; ++k)
    if (l(k, k) < T(0)) l.col(k) *= T(-1);
}

/// \brief The lower-triangular L with L Lᵀ = A Aᵀ for a square A, by Householder triangularization of Aᵀ
/// (Aᵀ = Q R gives A Aᵀ = Rᵀ R, L = Rᵀ). Orthogonal, so it keeps the accuracy of the factor A.
template <typename T, int N>
Eigen::Matrix<T, N, N> lower_factor_of(const Eigen::Matrix<T, N, N>& a) noexcept {
  Eigen::Matrix<T, N + 0, N> pre = a.transpose();
  triangularize_stacked<T, N, 0>(pre);
  return pre.transpose();
}

}  // namespace keel::detail
