#pragma once
/// \file
/// \brief UD-factorized Kalman filter kernels on keel::UdGaussian: Thornton's time update, Bierman's scalar
/// measurement update (sequential, and for a full R after whitening), and the conversions between all three
/// representations (Gaussian, SqrtGaussian, UdGaussian).
///
/// cov = U diag(d) Uᵀ is carried without square roots, with the accuracy of the square-root filter
/// (Bierman, "Factorization Methods for Discrete Sequential Estimation", 1977). Same rules as every kernel:
/// noexcept, heap-free, `est` unchanged on any non-ok Status.

#include <limits>
#include <type_traits>

#include <Eigen/Core>

#include "core/factor.hpp"
#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/linalg.hpp"
#include "core/status.hpp"
#include "gate.hpp"
#include "linear.hpp"
#include "sqrt.hpp"

namespace keel {

namespace detail {

/// The unit upper-triangular matrix the kernels read from `u` (strict upper triangle; diagonal 1).
template <typename T, int N>
Eigen::Matrix<T, N, N> unit_upper_part(const Eigen::Matrix<T, N, N>& u) noexcept {
  Eigen::Matrix<T, N, N> v = u;
  for (int j = 0; j < N; ++j) {
    v(j, j) = T(1);
    for (int i = j + 1; i < N; ++i) v(i, j) = T(0);
  }
  return v;
}

/// \brief Validation shared by the UD kernels: finite mean, U and d; d ≥ 0. Writes the unit upper U read.
template <typename T, int N>
Status check_ud(const UdGaussian<T, N>& est, Eigen::Matrix<T, N, N>& u) noexcept {
  u = unit_upper_part(est.u);
  if (!all_finite(est.mean) || !all_finite(u) || !all_finite(est.d)) return Status::non_finite;
  if (!(est.d.minCoeff() >= T(0))) return Status::negative_variance;
  return Status::ok;
}

/// \brief Bierman's scalar measurement update of (x, U, d) in place (Bierman, 1977, ch. V, "U-D measurement
/// update"): with \f$ f = U^T h^T,\ v = D f,\ \alpha_{-1} = r \f$, for j = 0..N−1:
/// \f$ \alpha_j = \alpha_{j-1} + f_j v_j,\ d_j \leftarrow d_j \alpha_{j-1}/\alpha_j,
/// \ \lambda_j = -f_j/\alpha_{j-1},\ u_{ij} \leftarrow u_{ij} + \lambda_j b_i,\ b_i \leftarrow b_i + u_{ij}^{old} v_j\ (i<j),
/// \ b_j = v_j \f$; then the gain is \f$ b/\alpha_{N-1} \f$ and \f$ \alpha_{N-1} = hPh^T + r \f$.
/// With r = 0 the zero α's are the limits: a column seen after no variance keeps its d_j, and λ_j is 0 when
/// all b_i are 0. Returns the innovation variance α_{N−1} (the caller checks it), and the scalar residual.
template <typename T, int N>
T bierman_update(Eigen::Matrix<T, N, 1>& x, Eigen::Matrix<T, N, N>& u, Eigen::Matrix<T, N, 1>& d,
                 const Eigen::Matrix<T, 1, N>& h, T r, T z, T& y) noexcept {
  Eigen::Matrix<T, N, 1> f;
  f.noalias() = u.transpose() * h.transpose();
  const Eigen::Matrix<T, N, 1> v = d.cwiseProduct(f);
  Eigen::Matrix<T, N, 1> b = Eigen::Matrix<T, N, 1>::Zero();
  T alpha = r;
  for (int j = 0; j < N; ++j) {
    const T alpha_prev = alpha;
    alpha += f(j) * v(j);
    if (alpha > T(0)) d(j) *= alpha_prev / alpha;
    const T lambda = alpha_prev > T(0) ? -f(j) / alpha_prev : T(0);
    for (int i = 0; i < j; ++i) {
      const T uij = u(i, j);
      u(i, j) = uij + lambda * b(i);
      b(i) += uij * v(j);
    }
    b(j) = v(j);
  }
  y = z - h.dot(x);
  if (alpha > T(0)) x += (y / alpha) * b;
  return alpha;
}

/// \brief The sequential Bierman sweep shared by correct and correct_sequential: rows of (h, r, z) in order,
/// each checked against the rounding floor of its innovation variance; accumulates NIS = Σ y_i²/α_i.
template <typename T, int N, int M>
Status bierman_sweep(Eigen::Matrix<T, N, 1>& x, Eigen::Matrix<T, N, N>& u, Eigen::Matrix<T, N, 1>& d,
                     const Eigen::Matrix<T, M, N>& h, const Eigen::Matrix<T, M, 1>& r,
                     const Eigen::Matrix<T, M, 1>& z, const Eigen::Matrix<T, M, 1>& floor_scale, T& nis) noexcept {
  nis = T(0);
  for (int i = 0; i < M; ++i) {
    T y = T(0);
    const T alpha = bierman_update(x, u, d, Eigen::Matrix<T, 1, N>(h.row(i)), r(i), z(i), y);
    if (!is_finite(alpha)) return Status::non_finite;
    // α is a sum of non-negative terms (no cancellation): the factored-form floor applies.
    if (!(alpha > factored_floor_factor<T, M>() * floor_scale(i))) return Status::not_positive_definite;
    nis += y * y / alpha;
  }
  if (!is_finite(nis) || !all_finite(x) || !all_finite(u) || !all_finite(d)) return Status::non_finite;
  return Status::ok;
}

/// HPHᵀ from the factors: (HU) diag(d) (HU)ᵀ.
template <typename T, int N, int M>
Eigen::Matrix<T, M, M> ud_project(const Eigen::Matrix<T, N, N>& u, const Eigen::Matrix<T, N, 1>& d,
                                  const Eigen::Matrix<T, M, N>& h) noexcept {
  Eigen::Matrix<T, M, N> hu;
  hu.noalias() = h.lazyProduct(u);
  const Eigen::Matrix<T, M, N> hud = hu * d.asDiagonal();
  Eigen::Matrix<T, M, M> out;
  out.noalias() = hud.lazyProduct(hu.transpose());
  return out;
}

}  // namespace detail

/// \brief UD time update by Thornton's modified weighted Gram–Schmidt (MWGS) algorithm (Thornton & Bierman,
/// "Gram–Schmidt algorithms for covariance propagation", 1977; Bierman, 1977, ch. VI): with Q = U_Q D_Q U_Qᵀ
/// (factored here; Q may be semi-definite), the rows \f$ w_k \f$ of \f$ W = [F U,\ U_Q] \f$ are made
/// orthogonal in the weight \f$ D_W = \mathrm{diag}(d, d_Q) \f$ from the last to the first:
/// \f$ d_k^- = w_k D_W w_k^T,\; u_{jk}^- = w_j D_W w_k^T / d_k^-,\; w_j \leftarrow w_j - u_{jk}^- w_k \f$ (j < k),
/// so that \f$ U^- D^- U^{-T} = W D_W W^T = F P F^T + Q \f$; \f$ x^- = F x \f$.
/// \returns ok, non_finite, negative_variance (d or Q has a negative entry) or not_positive_definite (Q
/// indefinite); on any non-ok status `est` is unchanged.
template <typename T, int N, typename DF, typename DQ>
[[nodiscard]] Status predict(UdGaussian<T, N>& est, const Eigen::MatrixBase<DF>& f,
                             const Eigen::MatrixBase<DQ>& q) noexcept {
  detail::check_predict_dims<T, N, DF, DQ>();
  const Eigen::Matrix<T, N, N> fm = f;
  const Eigen::Matrix<T, N, N> qm = q;
  Eigen::Matrix<T, N, N> u;
  Status st = detail::check_ud(est, u);
  if (st != Status::ok) return st;
  if (!detail::all_finite(fm) || !detail::all_finite(qm)) return Status::non_finite;
  if (!detail::diagonal_nonnegative(qm)) return Status::negative_variance;
  Eigen::Matrix<T, N, N> uq;
  Eigen::Matrix<T, N, 1> dq;
  if (!detail::ud_factor(qm, uq, dq)) return Status::not_positive_definite;

  // Wᵀ stored by columns: column k of wt is row k of W, so the inner products run over contiguous memory.
  Eigen::Matrix<T, 2 * N, N> wt;
  wt.template topRows<N>().noalias() = u.transpose().lazyProduct(fm.transpose());
  wt.template bottomRows<N>() = uq.transpose();
  Eigen::Matrix<T, 2 * N, 1> dw;
  dw << est.d, dq;
  Eigen::Matrix<T, N, N> u_next = Eigen::Matrix<T, N, N>::Identity();
  Eigen::Matrix<T, N, 1> d_next;
  Eigen::Matrix<T, 2 * N, 1> c;
  for (int k = N - 1; k >= 0; --k) {
    c = dw.cwiseProduct(wt.col(k));
    const T dk = wt.col(k).dot(c);
    d_next(k) = dk;
    if (!(dk > T(0))) continue;  // dk = Σ dw·w² = 0 only when D_W w_k = 0: nothing to remove from other rows
    c /= dk;
    for (int j = 0; j < k; ++j) {
      const T ujk = wt.col(j).dot(c);
      u_next(j, k) = ujk;
      wt.col(j) -= ujk * wt.col(k);
    }
  }
  Eigen::Matrix<T, N, 1> x;
  x.noalias() = fm * est.mean;
  if (!detail::all_finite(x) || !detail::all_finite(u_next) || !detail::all_finite(d_next)) return Status::non_finite;
  est.mean = x;
  est.u = u_next;
  est.d = d_next;
  return Status::ok;
}

/// \brief Sequential scalar UD measurement update for a diagonal R = diag(r) by Bierman's algorithm (Bierman,
/// 1977, ch. V), one row of H at a time; O(N²) per row, no square roots, no inverse. NIS, residual,
/// innovation covariance and gating mean the same as in the conventional correct_sequential.
/// \returns Innovation with status ok, non_finite, negative_variance (r or d), not_positive_definite (a scalar
/// innovation variance at or below rounding level) or gated; on any non-ok status `est` is unchanged.
template <typename T, int N, typename DH, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct_sequential(
    UdGaussian<T, N>& est, const Eigen::MatrixBase<DH>& h, const Eigen::MatrixBase<DR>& r_diag,
    const Eigen::MatrixBase<DZ>& z, const Gate<T>& gate = Gate<T>{}) noexcept {
  detail::check_sequential_dims<T, N, DH, DR, DZ>();
  constexpr int M = detail::rows_v<DZ>;
  const Eigen::Matrix<T, M, N> hm = h;
  const Eigen::Matrix<T, M, 1> r = r_diag;
  const Eigen::Matrix<T, M, 1> zm = z;
  Eigen::Matrix<T, N, N> u;
  Innovation<T, M> inn;
  inn.status = detail::check_ud(est, u);
  if (inn.status != Status::ok) return inn;
  if (!detail::all_finite(hm) || !detail::all_finite(r) || !detail::all_finite(zm)) {
    inn.status = Status::non_finite;
    return inn;
  }
  if (!(r.minCoeff() >= T(0))) {
    inn.status = Status::negative_variance;
    return inn;
  }
  inn.residual = zm;
  inn.residual.noalias() -= hm * est.mean;
  inn.cov = detail::ud_project(u, est.d, hm);
  inn.cov.diagonal() += r;
  detail::symmetrize(inn.cov);
  if (detail::innovation_overflowed(inn)) return inn;
  Eigen::Matrix<T, N, 1> x = est.mean;
  Eigen::Matrix<T, N, 1> d = est.d;
  T nis = T(0);
  inn.status = detail::bierman_sweep(x, u, d, hm, r, zm, Eigen::Matrix<T, M, 1>(inn.cov.diagonal()), nis);
  if (inn.status != Status::ok) return inn;
  inn.nis = nis;
  if (!gate.accepts(nis)) {
    inn.status = Status::gated;
    return inn;
  }
  est.mean = x;
  est.u = u;
  est.d = d;
  return inn;
}

/// \brief UD measurement update for a full R: the measurement is whitened with the Cholesky factor of R,
/// \f$ R = L L^T,\; \tilde z = L^{-1} z,\; \tilde H = L^{-1} H,\; \tilde R = I \f$, and Bierman's scalar update
/// is applied row by row (Bierman, 1977, ch. V: decorrelation of correlated measurements). The reported
/// residual, innovation covariance and NIS are those of the original measurement (the NIS is invariant).
/// \returns Innovation with status ok, non_finite, negative_variance (R or d), not_positive_definite (R not
/// positive-definite, or a scalar innovation variance at rounding level) or gated; `est` unchanged unless ok.
template <typename T, int N, typename DH, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct(UdGaussian<T, N>& est, const Eigen::MatrixBase<DH>& h,
                                                           const Eigen::MatrixBase<DR>& r,
                                                           const Eigen::MatrixBase<DZ>& z,
                                                           const Gate<T>& gate = Gate<T>{}) noexcept {
  detail::check_correct_dims<T, N, DH, DR, DZ>();
  constexpr int M = detail::rows_v<DZ>;
  const Eigen::Matrix<T, M, N> hm = h;
  const Eigen::Matrix<T, M, M> rm = r;
  const Eigen::Matrix<T, M, 1> zm = z;
  Eigen::Matrix<T, N, N> u;
  Innovation<T, M> inn;
  inn.status = detail::check_ud(est, u);
  if (inn.status != Status::ok) return inn;
  if (!detail::all_finite(hm) || !detail::all_finite(rm) || !detail::all_finite(zm)) {
    inn.status = Status::non_finite;
    return inn;
  }
  if (!detail::diagonal_nonnegative(rm)) {
    inn.status = Status::negative_variance;
    return inn;
  }
  Eigen::Matrix<T, M, M> l = rm;
  detail::symmetrize(l);
  if (!detail::cholesky_in_place(l)) {
    inn.status = Status::not_positive_definite;
    return inn;
  }
  inn.residual = zm;
  inn.residual.noalias() -= hm * est.mean;
  inn.cov = detail::ud_project(u, est.d, hm);
  inn.cov += rm;
  detail::symmetrize(inn.cov);
  if (detail::innovation_overflowed(inn)) return inn;
  Eigen::Matrix<T, M, N> hw;
  for (int j = 0; j < N; ++j) {
    Eigen::Matrix<T, M, 1> col = hm.col(j);
    detail::forward_substitute(l, col);
    hw.col(j) = col;
  }
  Eigen::Matrix<T, M, 1> zw = zm;
  detail::forward_substitute(l, zw);
  // Whitened innovation variances are scale-free: the floor of row i is measured against (L⁻¹ S L⁻ᵀ)_ii,
  // which is ≥ 1 (R̃ = I), so a floor scale of 1 is the tighter, still rounding-level, bound.
  const Eigen::Matrix<T, M, 1> ones = Eigen::Matrix<T, M, 1>::Ones();
  Eigen::Matrix<T, N, 1> x = est.mean;
  Eigen::Matrix<T, N, 1> d = est.d;
  T nis = T(0);
  inn.status = detail::bierman_sweep(x, u, d, hw, ones, zw, ones, nis);
  if (inn.status != Status::ok) return inn;
  inn.nis = nis;
  if (!gate.accepts(nis)) {
    inn.status = Status::gated;
    return inn;
  }
  est.mean = x;
  est.u = u;
  est.d = d;
  return inn;
}

/// \brief The conventional estimate of a UD one: cov = U diag(d) Uᵀ. \returns ok, non_finite or
/// negative_variance (d has a negative entry); `out` is written only on ok.
template <typename T, int N>
[[nodiscard]] Status to_gaussian(const UdGaussian<T, N>& in, Gaussian<T, N>& out) noexcept {
  Eigen::Matrix<T, N, N> u;
  const Status st = detail::check_ud(in, u);
  if (st != Status::ok) return st;
  const Eigen::Matrix<T, N, N> ud = u * in.d.asDiagonal();
  Eigen::Matrix<T, N, N> p;
  p.noalias() = ud.lazyProduct(u.transpose());
  detail::symmetrize(p);
  if (!detail::all_finite(p)) return Status::non_finite;
  out.mean = in.mean;
  out.cov = p;
  return Status::ok;
}

/// \brief The UD estimate of a conventional one (UD factorization, Bierman 1977, ch. III). A semi-definite
/// cov is accepted (a zero d_j with a unit column). \returns ok, non_finite, negative_variance or
/// not_positive_definite (cov indefinite); `out` is written only on ok.
template <typename T, int N>
[[nodiscard]] Status to_ud(const Gaussian<T, N>& in, UdGaussian<T, N>& out) noexcept {
  if (!detail::all_finite(in.mean) || !detail::all_finite(in.cov)) return Status::non_finite;
  if (!detail::diagonal_nonnegative(in.cov)) return Status::negative_variance;
  Eigen::Matrix<T, N, N> p = in.cov;
  detail::symmetrize(p);
  Eigen::Matrix<T, N, N> u;
  Eigen::Matrix<T, N, 1> d;
  if (!detail::ud_factor(p, u, d)) return Status::not_positive_definite;
  out.mean = in.mean;
  out.u = u;
  out.d = d;
  return Status::ok;
}

/// \brief The square-root estimate of a UD one without forming the covariance: the lower-triangular S with
/// S Sᵀ = A Aᵀ for A = U diag(√d), by orthogonal triangularization of Aᵀ (keeps the factor's accuracy).
/// \returns ok, non_finite or negative_variance; `out` is written only on ok.
template <typename T, int N>
[[nodiscard]] Status to_sqrt(const UdGaussian<T, N>& in, SqrtGaussian<T, N>& out) noexcept {
  Eigen::Matrix<T, N, N> u;
  const Status st = detail::check_ud(in, u);
  if (st != Status::ok) return st;
  const Eigen::Matrix<T, N, N> a = u * in.d.cwiseSqrt().asDiagonal();
  const Eigen::Matrix<T, N, N> s = detail::lower_factor_of(a);
  if (!detail::all_finite(s)) return Status::non_finite;
  out.mean = in.mean;
  out.sqrt_cov = s;
  return Status::ok;
}

/// \brief The UD estimate of a square-root one without forming the covariance: with J the reversal
/// permutation, the lower factor L₂ of (J S)(J S)ᵀ gives the upper-triangular A = J L₂ J with A Aᵀ = S Sᵀ;
/// then \f$ d_k = a_{kk}^2,\; U = A\,\mathrm{diag}(1/a_{kk}) \f$. When S Sᵀ is singular the triangularization
/// (without column pivoting) may leave a zero a_kk above a nonzero column, which no unit column can hold; then
/// the UD factorization of S Sᵀ is used instead (exact for such a semi-definite matrix, at the cost of squaring
/// the condition number). \returns ok, non_finite, or not_positive_definite if rounding makes that S Sᵀ
/// indefinite beyond the factorization's tolerance; `out` is written only on ok.
template <typename T, int N>
[[nodiscard]] Status to_ud(const SqrtGaussian<T, N>& in, UdGaussian<T, N>& out) noexcept {
  const Eigen::Matrix<T, N, N> s = detail::lower_part(in.sqrt_cov);
  if (!detail::all_finite(in.mean) || !detail::all_finite(s)) return Status::non_finite;
  const Eigen::Matrix<T, N, N> l2 = detail::lower_factor_of(Eigen::Matrix<T, N, N>(s.colwise().reverse()));
  const Eigen::Matrix<T, N, N> a = l2.reverse();  // J L₂ J: rows and columns reversed
  Eigen::Matrix<T, N, N> u = Eigen::Matrix<T, N, N>::Identity();
  Eigen::Matrix<T, N, 1> d;
  bool degenerate = false;
  for (int k = 0; k < N; ++k) {
    const T akk = a(k, k);
    d(k) = akk * akk;
    if (akk > T(0)) {
      for (int i = 0; i < k; ++i) u(i, k) = a(i, k) / akk;
    } else {
      for (int i = 0; i < k; ++i) degenerate = degenerate || a(i, k) != T(0);
    }
  }
  if (degenerate) {
    Eigen::Matrix<T, N, N> p;
    p.noalias() = s.lazyProduct(s.transpose());
    if (!detail::ud_factor(p, u, d)) return detail::all_finite(p) ? Status::not_positive_definite : Status::non_finite;
  }
  if (!detail::all_finite(u) || !detail::all_finite(d)) return Status::non_finite;
  out.mean = in.mean;
  out.u = u;
  out.d = d;
  return Status::ok;
}

/// \brief NEES \f$ e^T (U D U^T)^{-1} e = \sum_i v_i^2 / d_i \f$ with \f$ U v = e = x - \hat x \f$ of a UD
/// estimate against the true state (simulation studies); NaN when an input holds NaN or Inf, +infinity when
/// some d_i is not positive or the value overflows.
template <typename T, int N, typename Derived>
T nees(const UdGaussian<T, N>& est, const Eigen::MatrixBase<Derived>& truth) noexcept {
  static_assert(detail::rows_v<Derived> == N && detail::cols_v<Derived> == 1,
                "keel::nees: truth must be an N-vector, N the state dimension");
  const Eigen::Matrix<T, N, 1> t = truth;
  if (!detail::all_finite(t) || !detail::all_finite(est.mean) || !detail::all_finite(est.u) ||
      !detail::all_finite(est.d))
    return std::numeric_limits<T>::quiet_NaN();
  if (!(est.d.minCoeff() > T(0))) return std::numeric_limits<T>::infinity();
  Eigen::Matrix<T, N, 1> v = t - est.mean;
  T sum = T(0);
  for (int i = N - 1; i >= 0; --i) {
    for (int k = i + 1; k < N; ++k) v(i) -= est.u(i, k) * v(k);
    sum += v(i) * v(i) / est.d(i);
  }
  return detail::nees_value(sum);
}

}  // namespace keel
