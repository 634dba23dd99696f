#pragma once
/// \file
/// \brief Factorization helpers for the square-root and UD filters (namespace keel::detail; not for direct use):
/// a semi-definite Cholesky, a UD factorization, an orthogonal triangularization (modified Gram–Schmidt) and
/// the triangular form of Potter's scalar update. Fixed-size, heap-free, noexcept.

#include <cmath>

#include <Eigen/Core>

#include "linalg.hpp"

namespace keel::detail {

/// The lower triangle of s (what the kernels read from a SqrtGaussian's factor), the rest zero.
template <typename T, int N>
Eigen::Matrix<T, N, N> lower_part(const Eigen::Matrix<T, N, N>& s) noexcept {
  Eigen::Matrix<T, N, N> l = s;
  for (int j = 1; j < N; ++j)
    for (int i = 0; i < j; ++i) l(i, j) = T(0);
  return l;
}

/// \brief Floor on a *squared* pivot that a factored form computed without squaring (a diagonal of S_e, or a
/// sum of non-negative terms as in Bierman's update): the factor carries the standard deviation, accurate to
/// rounding relative to the square root of the scale, so the test is \f$ \sigma > n\varepsilon\sqrt{s} \f$,
/// i.e. \f$ \sigma^2 > (n\varepsilon)^2 s \f$ — the conventional floor \f$ n\varepsilon s \f$ would reject
/// well-determined updates that only the factored forms can compute (Dyer & McReynolds' example).
template <typename T, int N>
constexpr T factored_floor_factor() noexcept {
  return pivot_floor_factor<T, N>() * pivot_floor_factor<T, N>();
}

/// \brief Zero-pivot test shared by the semi-definite factorizations. A pivot \f$ d_j \le n\varepsilon a_{jj} \f$
/// is numerically zero; the matrix is still semi-definite only if the rest of that Schur-complement column is
/// zero too, to the same scale: \f$ s_{ij}^2 \le n\varepsilon\, a_{jj} a_{ii} \f$ (the 2×2 minor
/// \f$ [d_j, s_{ij}; s_{ij}, a_{ii}] \f$ must not be indefinite beyond rounding). A pivot below
/// \f$ -n\varepsilon a_{jj} \f$ means the matrix is indefinite.
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

/// True when every off-diagonal entry of a is exactly zero.
template <typename T, int N>
bool is_diagonal(const Eigen::Matrix<T, N, N>& a) noexcept {
  for (int j = 0; j < N; ++j)
    for (int i = 0; i < N; ++i)
      if (i != j && a(i, j) != T(0)) return false;
  return true;
}

/// \brief psd_cholesky_in_place with a shortcut for the common diagonal case (process noise is very often
/// diagonal): the factor of a diagonal matrix is the square root of its diagonal, no elimination needed.
template <typename T, int N>
bool psd_factor_in_place(Eigen::Matrix<T, N, N>& a) noexcept {
  if (!is_diagonal(a)) return psd_cholesky_in_place(a);
  for (int j = 0; j < N; ++j) {
    if (!(a(j, j) >= T(0)) || !is_finite(a(j, j))) return false;
    a(j, j) = std::sqrt(a(j, j));
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
  if (is_diagonal(p)) {  // the common diagonal process noise: U = I, d = diag(P)
    d = p.diagonal();
    return (d.array() >= T(0)).all() && all_finite(d);
  }
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

/// \brief The lower-triangular L (non-negative diagonal) with \f$ L L^T = W W^T \f$ for an N×R matrix W given by
/// its transpose `wt` (R×N, so that each row w_k of W is a contiguous column), by modified Gram–Schmidt on the
/// rows of W: for k = 0..N−1, \f$ l_{kk} = \|w_k\|,\; q_k = w_k / l_{kk},\; l_{jk} = w_j \cdot q_k,\;
/// w_j \leftarrow w_j - l_{jk} q_k \f$ (j > k), i.e. \f$ W = L Q^T \f$ with orthonormal rows of Qᵀ. MGS computes
/// this triangular factor as accurately as Householder QR does (it is numerically Householder QR of the
/// augmented matrix [0; Wᵀ]: Björck & Paige, "Loss and recapture of orthogonality in the modified Gram–Schmidt
/// algorithm", 1992); only Q loses orthogonality, and Q is never used. Every operation is on a whole fixed-size
/// column, so it vectorizes. A zero row (rank deficiency) gives a zero column of L. `wt` is overwritten.
template <typename T, int R, int N>
Eigen::Matrix<T, N, N> gram_schmidt_lower(Eigen::Matrix<T, R, N>& wt) noexcept {
  Eigen::Matrix<T, N, N> l = Eigen::Matrix<T, N, N>::Zero();
  for (int k = 0; k < N; ++k) {
    const T norm = wt.col(k).norm();
    l(k, k) = norm;
    if (!(norm > T(0))) continue;
    wt.col(k) *= T(1) / norm;
    for (int j = k + 1; j < N; ++j) {
      const T ljk = wt.col(j).dot(wt.col(k));
      l(j, k) = ljk;
      wt.col(j) -= ljk * wt.col(k);
    }
  }
  return l;
}

/// \brief The triangular form of Potter's scalar update: replaces the lower-triangular S (non-negative diagonal)
/// by the lower-triangular S' with \f$ S'S'^T = S (I - \varphi\varphi^T/s) S^T = P - b b^T/s \f$, where
/// \f$ \varphi = S^T h^T,\ s = \varphi^T\varphi + r,\ b = S\varphi \f$ (Potter & Stern, 1963).
/// Potter's own factor \f$ S(I - \gamma\varphi\varphi^T/s) \f$ is not triangular; the equivalent orthogonal
/// re-triangularization is LINPACK's Cholesky downdate (Dongarra, Bunch, Moler & Stewart, "LINPACK Users' Guide",
/// 1979, ch. 10, routine xCHDD) with its two sensitive quantities known here exactly, without cancellation: the
/// solution of S p = b/√s is p = φ/√s, and \f$ \alpha = \sqrt{1 - \|p\|^2} = \sqrt{r/s} \f$. Rotations
/// taking (α, p_i) to (‖·‖, 0) for i = N−1..0 are computed first, then applied to the columns of S, each a
/// contiguous vector operation: O(N²), N square roots. The rotated lengths are
/// \f$ \alpha_i = \sqrt{r/s + \sum_{l \ge i} p_l^2} \f$ (each rotation adds p_i² to the squared length): formed from
/// that suffix sum (additions only), the square roots and the N reciprocals are independent and vectorize, where the
/// chain \f$ \alpha_i = \sqrt{\alpha_{i+1}^2 + p_i^2} \f$ waits on one square root and two divisions per
/// element. r = 0 is allowed (S' singular).
template <typename T, int N>
void potter_triangular(Eigen::Matrix<T, N, N>& l, const Eigen::Matrix<T, N, 1>& phi, T s, T r) noexcept {
  const Eigen::Matrix<T, N, 1> p = phi * (T(1) / std::sqrt(s));
  Eigen::Matrix<T, N + 1, 1> alpha;  // α_i² first (|p_i| ≤ 1 and r/s ≤ 1: no overflow), then α_i
  alpha(N) = r / s;
  for (int i = N - 1; i >= 0; --i) alpha(i) = alpha(i + 1) + p(i) * p(i);
  alpha = alpha.cwiseSqrt();
  const auto positive = alpha.template head<N>().array() > T(0);
  const Eigen::Matrix<T, N, 1> inv = positive.select(alpha.template head<N>().cwiseInverse(), T(0));
  // α_i = 0 only when r = 0 and p_l = 0 for all l ≥ i: the identity rotation.
  const Eigen::Matrix<T, N, 1> c = positive.select(alpha.template tail<N>().cwiseProduct(inv), T(1));
  const Eigen::Matrix<T, N, 1> sn = p.cwiseProduct(inv);
  Eigen::Matrix<T, N, 1> acc = Eigen::Matrix<T, N, 1>::Zero();
  for (int i = N - 1; i >= 0; --i) {
    const int len = N - i;
    auto col = l.col(i).tail(len);
    auto a = acc.tail(len);
    for (int j = 0; j < len; ++j) {
      const T t = c(i) * a(j) + sn(i) * col(j);
      col(j) = c(i) * col(j) - sn(i) * a(j);
      a(j) = t;
    }
  }
}

/// \brief The lower-triangular L with L Lᵀ = A Aᵀ for a square A, by orthogonal triangularization (above), so
/// it keeps the accuracy of the factor A instead of squaring its condition number.
template <typename T, int N>
Eigen::Matrix<T, N, N> lower_factor_of(const Eigen::Matrix<T, N, N>& a) noexcept {
  Eigen::Matrix<T, N, N> wt = a.transpose();
  return gram_schmidt_lower(wt);
}

}  // namespace keel::detail
