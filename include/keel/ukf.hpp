#pragma once
/// \file
/// \brief Unscented Kalman filter: keel::ukf::predict / correct on Gaussian, and the square-root UKF on
/// SqrtGaussian. Additive noise (Q added after the transform, R to the predicted measurement covariance).
/// For non-additive noise, augment the state with the noise: filter x_a = (x, w) with cov diag(P, Q_w), a model
/// f_a(x_a) = (f(x, w), 0) and zero additive Q; the same kernels then apply.

#include <type_traits>

#include <Eigen/Core>

#include "core/factor.hpp"
#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/linalg.hpp"
#include "core/status.hpp"
#include "gate.hpp"
#include "linear.hpp"
#include "sigma.hpp"
#include "sqrt.hpp"

namespace keel {
namespace detail {

/// \brief The unscented corrections' input check on R and z: ok, non_finite or negative_variance.
template <typename T, int M>
Status check_noise_and_measurement(const Eigen::Matrix<T, M, M>& r, const Eigen::Matrix<T, M, 1>& z) noexcept {
  if (!all_finite(r) || !all_finite(z)) return Status::non_finite;
  return diagonal_nonnegative(r) ? Status::ok : Status::negative_variance;
}

/// \brief The middle of every unscented correction: from the transform's ẑ, P_z and cross-covariance P_xz,
/// \f$ y = z \boxminus \hat z,\ S = P_z + R \f$ (Cholesky), NIS and gate; when that is ok, the step
/// \f$ \delta = K y \f$ and \f$ P - K S K^T \f$ (symmetrized) with \f$ K = P_{xz} S^{-1} \f$. The caller validates
/// and commits.
template <typename T, int N, int M, typename H>
Innovation<T, M> unscented_gain(const Transformed<T, N, M>& ut, const H& h, const Eigen::Matrix<T, M, 1>& z,
                                const Eigen::Matrix<T, M, M>& r, const Eigen::Matrix<T, N, N>& p0,
                                const Gate<T>& gate, Eigen::Matrix<T, N, 1>& delta,
                                Eigen::Matrix<T, N, N>& p) noexcept {
  Innovation<T, M> inn;
  inn.residual = model_residual(h, z, ut.gaussian.mean);
  inn.cov = ut.gaussian.cov + r;
  symmetrize(inn.cov);
  Eigen::Matrix<T, M, M> l = inn.cov;
  if (!cholesky_in_place(l)) {
    inn.status = all_finite(inn.cov) ? Status::not_positive_definite : Status::non_finite;
    return inn;
  }
  inn.status = nis_and_gate(l, inn, gate);
  if (inn.status != Status::ok) return inn;
  Eigen::Matrix<T, N, M> k;
  right_solve_spd(l, ut.cross_cov, k);
  delta.noalias() = k * inn.residual;
  Eigen::Matrix<T, N, M> ks;
  ks.noalias() = k * inn.cov;
  p = p0;
  p.noalias() -= ks.lazyProduct(k.transpose());
  symmetrize(p);
  return inn;
}

}  // namespace detail

namespace ukf {

/// \brief UKF time update (Julier & Uhlmann, 1997; Wan & van der Merwe, 2000): the unscented transform of the
/// estimate through f (extra arguments such as dt or u go to f after x), plus Q:
/// \f$ x^- = \bar y,\ P^- = P_y + Q \f$. On SqrtGaussian the square-root UKF (van der Merwe & Wan, "The
/// square-root unscented Kalman filter for state and parameter estimation", 2001): \f$ S^- \f$ is the
/// triangular factor of \f$ [\sqrt{W_1}(\mathcal{Y}_{1:2N} - \bar y),\ L_Q] \f$ (orthogonal triangularization),
/// then a rank-1 Cholesky update with \f$ \sqrt{|W^c_0|}(\mathcal{Y}_0 - \bar y) \f$, a downdate when W^c_0 < 0.
/// \returns ok, non_finite, negative_variance (P or Q), not_positive_definite (P or Q indefinite, or the downdate
/// of a negative centre weight would lose positive-definiteness); `est` unchanged unless ok.
template <template <typename, int> class E, typename T, int N, typename F, typename DQ, typename... A>
[[nodiscard]] Status predict(E<T, N>& est, const F& f, const Eigen::MatrixBase<DQ>& q, const SigmaRule& rule,
                             const A&... args) noexcept {
  static_assert(detail::rows_v<DQ> == N && detail::cols_v<DQ> == N && std::is_same_v<typename DQ::Scalar, T>,
                "keel::ukf::predict: Q must be N×N with the estimate's scalar type");
  const Eigen::Matrix<T, N, N> qm = q;
  if (!detail::all_finite(qm)) return Status::non_finite;
  if (!detail::diagonal_nonnegative(qm)) return Status::negative_variance;
  if constexpr (std::is_same_v<E<T, N>, Gaussian<T, N>>) {
    const auto ut = unscented_transform(f, est, rule, args...);
    if (!ut.ok()) return ut.status;
    Eigen::Matrix<T, N, N> p = ut.gaussian.cov + qm;
    detail::symmetrize(p);
    if (!detail::all_finite(p)) return Status::non_finite;
    if (!detail::diagonal_nonnegative(p)) return Status::not_positive_definite;
    est.mean = ut.gaussian.mean;
    est.cov = p;
    return Status::ok;
  } else {
    static_assert(std::is_same_v<E<T, N>, SqrtGaussian<T, N>>,
                  "keel::ukf::predict: the estimate must be a Gaussian or a SqrtGaussian");
    const Eigen::Matrix<T, N, N> s = detail::lower_part(est.sqrt_cov);
    if (!detail::all_finite(est.mean) || !detail::all_finite(s)) return Status::non_finite;
    Eigen::Matrix<T, N, N> lq = qm;
    if (!detail::psd_factor_in_place(lq)) return Status::not_positive_definite;
    const SigmaWeights<T> w = rule.weights<T, N>();
    const auto x = detail::sigma_points(est.mean, s, w.spread);
    const auto y = detail::propagate(f, x, w, args...);
    Eigen::Matrix<T, 3 * N, N> pre;
    pre.template topRows<2 * N>() = std::sqrt(w.others) * y.deviations.template rightCols<2 * N>().transpose();
    pre.template bottomRows<N>() = lq.transpose();
    Eigen::Matrix<T, N, N> s_next = detail::gram_schmidt_lower(pre);
    const Eigen::Matrix<T, N, 1> d0 = std::sqrt(std::abs(w.cov0)) * y.deviations.col(0);
    if (w.cov0 != T(0)) {
      const Status st = w.cov0 > T(0) ? cholesky_update(s_next, d0) : cholesky_downdate(s_next, d0);
      if (st != Status::ok) return st;
    }
    if (!detail::all_finite(y.mean) || !detail::all_finite(s_next)) return Status::non_finite;
    est.mean = y.mean;
    est.sqrt_cov = s_next;
    return Status::ok;
  }
}

/// \brief UKF measurement update: the unscented transform of the estimate through h gives \f$ \hat z \f$, P_z and
/// P_xz; \f$ S = P_z + R,\ K = P_{xz} S^{-1}\ (\text{Cholesky of } S),\ y = z \boxminus \hat z,\ x^+ = x + K y,
/// \ P^+ = P - K S K^T \f$ (symmetrized). On SqrtGaussian the square-root UKF (van der Merwe & Wan, 2001): S_z
/// from the triangularization of \f$ [\sqrt{W_1}(\mathcal{Z}_{1:2N} - \hat z),\ L_R] \f$ and a rank-1 update
/// with the centre point, \f$ K = P_{xz} S_z^{-T} S_z^{-1} \f$, and \f$ S^+ \f$ from M rank-1 Cholesky
/// downdates of S by the columns of \f$ K S_z \f$. NIS \f$ = y^T S^{-1} y \f$, gate and statuses as keel::correct;
/// a downdate that would lose positive-definiteness returns not_positive_definite. `est` unchanged unless ok.
template <template <typename, int> class E, typename T, int N, typename H, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct(E<T, N>& est, const H& h, const Eigen::MatrixBase<DR>& r,
                                                           const Eigen::MatrixBase<DZ>& z, const SigmaRule& rule,
                                                           const Gate<T>& gate = Gate<T>{}) noexcept {
  constexpr int M = detail::rows_v<DZ>;
  static_assert(detail::rows_v<detail::model_value_t<H, T, N>> == M,
                "keel::ukf::correct: the measurement model must return a vector with as many entries as z");
  static_assert(detail::rows_v<DR> == M && detail::cols_v<DR> == M && std::is_same_v<typename DR::Scalar, T> &&
                    std::is_same_v<typename DZ::Scalar, T>,
                "keel::ukf::correct: R must be M×M and R, z must have the estimate's scalar type");
  const Eigen::Matrix<T, M, M> rm = r;
  const Eigen::Matrix<T, M, 1> zm = z;
  Innovation<T, M> inn;
  inn.status = detail::check_noise_and_measurement(rm, zm);
  if (inn.status != Status::ok) return inn;
  if constexpr (std::is_same_v<E<T, N>, Gaussian<T, N>>) {
    const auto ut = unscented_transform(h, est, rule);
    if (!ut.ok()) {
      inn.status = ut.status;
      return inn;
    }
    Eigen::Matrix<T, N, 1> x;
    Eigen::Matrix<T, N, N> p;
    inn = detail::unscented_gain(ut, h, zm, rm, est.cov, gate, x, p);
    if (inn.status != Status::ok) return inn;
    x += est.mean;
    if (!detail::all_finite(x) || !detail::all_finite(p)) {
      inn.status = Status::non_finite;
      return inn;
    }
    if (!detail::diagonal_nonnegative(p)) {
      inn.status = Status::not_positive_definite;
      return inn;
    }
    est.mean = x;
    est.cov = p;
    inn.status = Status::ok;
    return inn;
  } else {
    static_assert(std::is_same_v<E<T, N>, SqrtGaussian<T, N>>,
                  "keel::ukf::correct: the estimate must be a Gaussian or a SqrtGaussian");
    const Eigen::Matrix<T, N, N> s = detail::lower_part(est.sqrt_cov);
    if (!detail::all_finite(est.mean) || !detail::all_finite(s)) {
      inn.status = Status::non_finite;
      return inn;
    }
    Eigen::Matrix<T, M, M> lr = rm;
    if (!detail::psd_factor_in_place(lr)) {
      inn.status = Status::not_positive_definite;
      return inn;
    }
    const SigmaWeights<T> w = rule.weights<T, N>();
    const auto x = detail::sigma_points(est.mean, s, w.spread);
    const auto zp = detail::propagate(h, x, w);
    Eigen::Matrix<T, 2 * N + M, M> pre;
    pre.template topRows<2 * N>() = std::sqrt(w.others) * zp.deviations.template rightCols<2 * N>().transpose();
    pre.template bottomRows<M>() = lr.transpose();
    Eigen::Matrix<T, M, M> sz = detail::gram_schmidt_lower(pre);
    if (w.cov0 != T(0)) {
      const Eigen::Matrix<T, M, 1> d0 = std::sqrt(std::abs(w.cov0)) * zp.deviations.col(0);
      const Status st = w.cov0 > T(0) ? cholesky_update(sz, d0) : cholesky_downdate(sz, d0);
      if (st != Status::ok) {
        inn.status = st;
        return inn;
      }
    }
    inn.cov.noalias() = sz * sz.transpose();
    inn.residual = detail::model_residual(h, zm, zp.mean);
    for (int i = 0; i < M; ++i) {
      if (!(sz(i, i) * sz(i, i) > detail::factored_floor_factor<T, M>() * inn.cov(i, i))) {
        inn.status = detail::all_finite(sz) ? Status::not_positive_definite : Status::non_finite;
        return inn;
      }
    }
    inn.status = detail::nis_and_gate(sz, inn, gate);
    if (inn.status != Status::ok) return inn;
    Eigen::Matrix<T, N, 2 * N + 1> dx = x;
    dx.colwise() -= est.mean;
    const Eigen::Matrix<T, N, M> pxz = detail::weighted_outer<T, N>(dx, zp.deviations, w);
    Eigen::Matrix<T, N, M> k;
    detail::right_solve_spd(sz, pxz, k);
    Eigen::Matrix<T, N, 1> xn = est.mean;
    xn.noalias() += k * inn.residual;
    const Eigen::Matrix<T, N, M> u = k * sz;
    Eigen::Matrix<T, N, N> s_next = s;
    for (int j = 0; j < M; ++j) {
      const Status st = cholesky_downdate(s_next, Eigen::Matrix<T, N, 1>(u.col(j)));
      if (st != Status::ok) {
        inn.status = st;
        return inn;
      }
    }
    if (!detail::all_finite(xn)) {
      inn.status = Status::non_finite;
      return inn;
    }
    est.mean = xn;
    est.sqrt_cov = s_next;
    inn.status = Status::ok;
    return inn;
  }
}

}  // namespace ukf
}  // namespace keel
