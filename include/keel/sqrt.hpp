#pragma once
/// \file
/// \brief Square-root Kalman filter kernels on keel::SqrtGaussian: QR array time and measurement updates,
/// Potter's sequential scalar update, and the conversions to and from keel::Gaussian.
///
/// The factor S (cov = S Sᵀ) is propagated by orthogonal transformations only, so the covariance it stands
/// for is symmetric and positive semi-definite by construction and its condition number is the square root
/// of the covariance's: in float this is the difference between a filter that keeps working and one that
/// diverges (Kaminski, Bryson & Schmidt, "Discrete square root filtering: a survey of current techniques", 1971).
/// Same rules as every kernel: noexcept, heap-free, `est` unchanged on any non-ok Status.

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

namespace keel {

namespace detail {

/// \brief Validation shared by the square-root corrections: finite inputs (only the lower triangle of S is
/// read), non-negative measurement variances. `r_diag` is R's diagonal or r itself.
template <typename T, int N, int M, typename RD>
Status check_sqrt_inputs(const SqrtGaussian<T, N>& est, const Eigen::Matrix<T, N, N>& s,
                         const Eigen::Matrix<T, M, N>& h, const RD& r, const Eigen::Matrix<T, M, 1>& z) noexcept {
  if (!all_finite(est.mean) || !all_finite(s) || !all_finite(h) || !all_finite(r) || !all_finite(z))
    return Status::non_finite;
  return Status::ok;
}

/// \brief The QR-array measurement update of `correct` with the residual y already formed (z − Hx, or the
/// EKF's residual(z, h(x))).
template <typename T, int N, int M>
Innovation<T, M> sqrt_correct_residual(SqrtGaussian<T, N>& est, const Eigen::Matrix<T, M, N>& hm,
                                       const Eigen::Matrix<T, M, M>& r, const Eigen::Matrix<T, M, 1>& y,
                                       const Gate<T>& gate) noexcept {
  Eigen::Matrix<T, M, M> lr = r;
  const Eigen::Matrix<T, N, N> s = lower_part(est.sqrt_cov);
  Innovation<T, M> inn;
  inn.status = check_sqrt_inputs(est, s, hm, lr, y);
  if (inn.status != Status::ok) return inn;
  if (!diagonal_nonnegative(lr)) {
    inn.status = Status::negative_variance;
    return inn;
  }
  inn.cov = lr;  // R, before it is factored
  if (!psd_cholesky_in_place(lr)) {
    inn.status = Status::not_positive_definite;
    return inn;
  }
  Eigen::Matrix<T, M, N> hs;
  hs.noalias() = hm.lazyProduct(s);
  inn.cov.noalias() += hs.lazyProduct(hs.transpose());
  symmetrize(inn.cov);
  inn.residual = y;
  if (innovation_overflowed(inn)) return inn;

  Eigen::Matrix<T, M + N, M + N> pre;
  pre.template topLeftCorner<M, M>() = lr.transpose();
  pre.template topRightCorner<M, N>().setZero();
  pre.template bottomLeftCorner<N, M>() = hs.transpose();
  pre.template bottomRightCorner<N, N>() = s.transpose();
  const Eigen::Matrix<T, M + N, M + N> post = gram_schmidt_lower(pre);
  if (!all_finite(post)) {
    inn.status = Status::non_finite;
    return inn;
  }
  const Eigen::Matrix<T, M, M> se = post.template topLeftCorner<M, M>();
  for (int i = 0; i < M; ++i) {
    if (!(se(i, i) * se(i, i) > factored_floor_factor<T, M>() * inn.cov(i, i))) {
      inn.status = Status::not_positive_definite;
      return inn;
    }
  }
  inn.status = nis_and_gate(se, inn, gate);
  if (inn.status != Status::ok) return inn;
  Eigen::Matrix<T, M, 1> w = inn.residual;  // x⁺ = x + K̄ S_e⁻¹ y
  forward_substitute(se, w);
  Eigen::Matrix<T, N, 1> x = est.mean;
  x.noalias() += post.template bottomLeftCorner<N, M>() * w;
  if (!all_finite(x)) {
    inn.status = Status::non_finite;
    return inn;
  }
  est.mean = x;
  est.sqrt_cov = post.template bottomRightCorner<N, N>();
  inn.status = Status::ok;
  return inn;
}

}  // namespace detail

/// \brief Square-root time update by the QR array algorithm: the pre-array \f$ A = [S^T F^T;\ L_Q^T] \f$
/// (2N×N, \f$ L_Q L_Q^T = Q \f$) is triangularized by an orthogonal transformation, \f$ A = \Theta [R; 0] \f$,
/// and \f$ S^- = R^T \f$, since \f$ R^T R = A^T A = F S S^T F^T + Q \f$; \f$ x^- = F x \f$ (Kaminski, Bryson &
/// Schmidt, 1971). The triangularization is modified Gram–Schmidt on the columns of A (core/factor.hpp), as
/// accurate for R as Householder QR and vectorized over whole columns. Q may be semi-definite; its factor is
/// computed here by a semi-definite Cholesky.
/// \returns ok, non_finite, negative_variance (Q has a negative diagonal entry) or not_positive_definite
/// (Q indefinite); on any non-ok status `est` is unchanged.
template <typename T, int N, typename DF, typename DQ>
[[nodiscard]] Status predict(SqrtGaussian<T, N>& est, const Eigen::MatrixBase<DF>& f,
                             const Eigen::MatrixBase<DQ>& q) noexcept {
  detail::check_predict_dims<T, N, DF, DQ>();
  const Eigen::Matrix<T, N, N> fm = f;
  Eigen::Matrix<T, N, N> lq = q;
  const Eigen::Matrix<T, N, N> s = detail::lower_part(est.sqrt_cov);
  if (!detail::all_finite(est.mean) || !detail::all_finite(s) || !detail::all_finite(fm) || !detail::all_finite(lq))
    return Status::non_finite;
  if (!detail::diagonal_nonnegative(lq)) return Status::negative_variance;
  if (!detail::psd_factor_in_place(lq)) return Status::not_positive_definite;
  Eigen::Matrix<T, 2 * N, N> pre;
  pre.template topRows<N>().noalias() = s.transpose().lazyProduct(fm.transpose());
  pre.template bottomRows<N>() = lq.transpose();
  const Eigen::Matrix<T, N, N> s_next = detail::gram_schmidt_lower(pre);
  Eigen::Matrix<T, N, 1> x;
  x.noalias() = fm * est.mean;
  if (!detail::all_finite(x) || !detail::all_finite(s_next)) return Status::non_finite;
  est.mean = x;
  est.sqrt_cov = s_next;
  return Status::ok;
}

/// \brief Square-root measurement update by the QR array algorithm for a full R (Morf & Kailath, "Square-root
/// algorithms for least-squares estimation", 1975): the (M+N)×(M+N) pre-array
/// \f$ A = \begin{bmatrix} L_R^T & 0 \\ S^T H^T & S^T \end{bmatrix} \f$ is triangularized,
/// \f$ \Theta A = \begin{bmatrix} S_e^T & \bar K^T \\ 0 & S^{+T} \end{bmatrix} \f$, which gives
/// \f$ S_e S_e^T = HPH^T + R \f$, \f$ \bar K = P H^T S_e^{-T} \f$ and \f$ S^+ S^{+T} = P - \bar K \bar K^T \f$
/// (compare AᵀA blockwise). Then \f$ w = S_e^{-1} y,\; x^+ = x + \bar K w,\; \mathrm{NIS} = \|w\|^2 \f$:
/// no inverse, no squared condition number. The triangularization is modified Gram–Schmidt on the columns of
/// A, which yields the lower-triangular \f$ \begin{bmatrix} S_e & 0 \\ \bar K & S^+ \end{bmatrix} \f$ directly.
/// \param gate measurements whose NIS exceeds the gate's threshold are rejected (Status::gated).
/// \returns Innovation with status ok, non_finite, negative_variance (R), not_positive_definite (R indefinite,
/// or HPHᵀ + R not positive-definite) or gated; on any non-ok status `est` is unchanged.
template <typename T, int N, typename DH, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct(SqrtGaussian<T, N>& est, const Eigen::MatrixBase<DH>& h,
                                                           const Eigen::MatrixBase<DR>& r,
                                                           const Eigen::MatrixBase<DZ>& z,
                                                           const Gate<T>& gate = Gate<T>{}) noexcept {
  detail::check_correct_dims<T, N, DH, DR, DZ>();
  constexpr int M = detail::rows_v<DZ>;
  const Eigen::Matrix<T, M, N> hm = h;
  Eigen::Matrix<T, M, 1> y = z;
  y.noalias() -= hm * est.mean;
  return detail::sqrt_correct_residual(est, hm, Eigen::Matrix<T, M, M>(r), y, gate);
}

/// \brief Sequential scalar square-root update for a diagonal R = diag(r), one row of H at a time, by Potter's
/// algorithm (Potter & Stern, "Statistical filtering of space navigation measurements", 1963; Bierman, 1977,
/// ch. V): with \f$ \varphi = S^T h^T,\; s = \varphi^T\varphi + r,\; b = S\varphi = P h^T \f$,
/// \f$ x \leftarrow x + b\,(z - hx)/s \f$ and \f$ S \leftarrow S\,(I - \gamma\varphi\varphi^T / s) \f$ with
/// \f$ \gamma = 1/(1 + \sqrt{r/s}) \f$, for which \f$ (I - \gamma\varphi\varphi^T/s)^2 = I - \varphi\varphi^T/s \f$.
/// Potter's factor is not triangular; keel computes the lower-triangular factor of the same product by N
/// orthogonal rotations built from φ and √(r/s) alone (detail::potter_triangular), O(N²) per row.
/// NIS, residual, innovation covariance and gating mean the same as in the conventional correct_sequential.
/// \returns Innovation with status ok, non_finite, negative_variance (r), not_positive_definite (a scalar
/// innovation variance at or below rounding level) or gated; on any non-ok status `est` is unchanged.
template <typename T, int N, typename DH, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct_sequential(
    SqrtGaussian<T, N>& est, const Eigen::MatrixBase<DH>& h, const Eigen::MatrixBase<DR>& r_diag,
    const Eigen::MatrixBase<DZ>& z, const Gate<T>& gate = Gate<T>{}) noexcept {
  detail::check_sequential_dims<T, N, DH, DR, DZ>();
  constexpr int M = detail::rows_v<DZ>;
  const Eigen::Matrix<T, M, N> hm = h;
  const Eigen::Matrix<T, M, 1> r = r_diag;
  const Eigen::Matrix<T, M, 1> zm = z;
  Eigen::Matrix<T, N, N> s = detail::lower_part(est.sqrt_cov);
  Innovation<T, M> inn;
  inn.status = detail::check_sqrt_inputs(est, s, hm, r, zm);
  if (inn.status != Status::ok) return inn;
  if (!(r.minCoeff() >= T(0))) {
    inn.status = Status::negative_variance;
    return inn;
  }
  inn.residual = zm;
  inn.residual.noalias() -= hm * est.mean;
  {
    Eigen::Matrix<T, M, N> hs;
    hs.noalias() = hm.lazyProduct(s);
    inn.cov.noalias() = hs.lazyProduct(hs.transpose());
    inn.cov.diagonal() += r;
    detail::symmetrize(inn.cov);
  }
  if (detail::innovation_overflowed(inn)) return inn;
  Eigen::Matrix<T, N, 1> x = est.mean;
  Eigen::Matrix<T, N, 1> phi;
  Eigen::Matrix<T, N, 1> b;
  T nis = T(0);
  for (int i = 0; i < M; ++i) {
    phi.noalias() = s.transpose() * hm.row(i).transpose();
    const T sv = phi.squaredNorm() + r(i);
    if (!(sv > detail::factored_floor_factor<T, M>() * inn.cov(i, i)) || !detail::is_finite(sv)) {
      inn.status = detail::is_finite(sv) ? Status::not_positive_definite : Status::non_finite;
      return inn;
    }
    b.noalias() = s * phi;
    const T yi = zm(i) - hm.row(i).dot(x);
    x += (yi / sv) * b;
    nis += yi * yi / sv;
    detail::potter_triangular(s, phi, sv, r(i));
  }
  inn.nis = nis;
  if (!detail::is_finite(nis) || !detail::all_finite(x) || !detail::all_finite(s)) {
    inn.status = Status::non_finite;
    return inn;
  }
  if (!gate.accepts(nis)) {
    inn.status = Status::gated;
    return inn;
  }
  est.mean = x;
  est.sqrt_cov = s;
  inn.status = Status::ok;
  return inn;
}

/// \brief The conventional estimate of a square-root one: cov = S Sᵀ (lower triangle of S read).
/// \returns ok or non_finite; `out` is written only on ok.
template <typename T, int N>
[[nodiscard]] Status to_gaussian(const SqrtGaussian<T, N>& in, Gaussian<T, N>& out) noexcept {
  const Eigen::Matrix<T, N, N> s = detail::lower_part(in.sqrt_cov);
  Eigen::Matrix<T, N, N> p;
  p.noalias() = s.lazyProduct(s.transpose());
  detail::symmetrize(p);
  if (!detail::all_finite(in.mean) || !detail::all_finite(p)) return Status::non_finite;
  out.mean = in.mean;
  out.cov = p;
  return Status::ok;
}

/// \brief The square-root estimate of a conventional one: S = the lower Cholesky factor of cov. A positive
/// semi-definite cov is accepted (a numerically zero pivot gives a zero column of S, Golub & Van Loan 2013,
/// sec. 4.2.8). \returns ok, non_finite, negative_variance or not_positive_definite (cov indefinite);
/// `out` is written only on ok.
template <typename T, int N>
[[nodiscard]] Status to_sqrt(const Gaussian<T, N>& in, SqrtGaussian<T, N>& out) noexcept {
  if (!detail::all_finite(in.mean) || !detail::all_finite(in.cov)) return Status::non_finite;
  if (!detail::diagonal_nonnegative(in.cov)) return Status::negative_variance;
  Eigen::Matrix<T, N, N> s = in.cov;
  detail::symmetrize(s);
  if (!detail::psd_cholesky_in_place(s)) return Status::not_positive_definite;
  out.mean = in.mean;
  out.sqrt_cov = s;
  return Status::ok;
}

/// \brief NEES \f$ (x - \hat x)^T (S S^T)^{-1} (x - \hat x) = \|S^{-1}(x - \hat x)\|^2 \f$ of a square-root
/// estimate against the true state (simulation studies); NaN when an input holds NaN or Inf, +infinity when S
/// has a non-positive diagonal entry or the value overflows.
template <typename T, int N, typename Derived>
T nees(const SqrtGaussian<T, N>& est, const Eigen::MatrixBase<Derived>& truth) noexcept {
  static_assert(detail::rows_v<Derived> == N && detail::cols_v<Derived> == 1,
                "keel::nees: truth must be an N-vector, N the state dimension");
  const Eigen::Matrix<T, N, N> s = detail::lower_part(est.sqrt_cov);
  const Eigen::Matrix<T, N, 1> t = truth;
  if (!detail::all_finite(t) || !detail::all_finite(est.mean) || !detail::all_finite(s))
    return std::numeric_limits<T>::quiet_NaN();
  if (!(s.diagonal().minCoeff() > T(0))) return std::numeric_limits<T>::infinity();
  Eigen::Matrix<T, N, 1> e = t - est.mean;
  detail::forward_substitute(s, e);
  return detail::nees_value(e.squaredNorm());
}

}  // namespace keel
