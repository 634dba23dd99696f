#pragma once
/// \file
/// \brief Error-state (multiplicative) EKF and UKF on manifold states: keel::ekf::predict / correct and
/// keel::ukf::predict / correct for keel::ManifoldGaussian (spaces in manifold.hpp).
///
/// The mean x lives on the space, the covariance P is that of the tangent error e = x_true ⊟ x. A motion model
/// maps a mean to a mean (f(x, args...) → Space::Mean); a measurement model maps a mean to an Eigen vector
/// (with an optional `residual(z, zhat)` as for vector states). Jacobians are taken with respect to the tangent
/// error, \f$ F = \partial (f(x \boxplus e) \boxminus f(x)) / \partial e\,|_{e=0} \f$ and
/// \f$ H = \partial h(x \boxplus e)/\partial e\,|_{e=0} \f$, from the model's own `jacobian(x, args...)` (which
/// must return these tangent Jacobians), else by automatic differentiation when the call operator is a template
/// over the scalar (the mean then arrives as `Space::rebind<S>::Mean`), else, on request through
/// keel::numeric_model, by central differences along the tangent directions.

#include <array>
#include <cmath>
#include <limits>
#include <type_traits>

#include <Eigen/Core>
#include <unsupported/Eigen/AutoDiff>

#include "core/factor.hpp"
#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/linalg.hpp"
#include "core/model.hpp"
#include "core/status.hpp"
#include "ekf.hpp"
#include "gate.hpp"
#include "linear.hpp"
#include "manifold.hpp"
#include "sigma.hpp"
#include "ukf.hpp"

namespace keel {
namespace detail {

template <typename F>
struct is_numeric_model : std::false_type {};
template <typename F>
struct is_numeric_model<NumericModel<F>> : std::true_type {};

template <typename F>
const F& unwrap_numeric(const F& f) noexcept {
  return f;
}
template <typename F>
const F& unwrap_numeric(const NumericModel<F>& f) noexcept {
  return f.model;
}

/// The space a model's value lives in: Euclidean for an Eigen vector, else the state's own space.
template <typename Space, typename Out, bool = is_eigen<Out>::value>
struct output_space {
  using type = Space;
};
template <typename Space, typename Out>
struct output_space<Space, Out, true> {
  using type = Euclidean<typename Space::Scalar, rows_v<Out>>;
};
template <typename Space, typename F, typename... A>
using model_output_space_t = typename output_space<
    Space, std::decay_t<decltype(std::declval<const F&>()(std::declval<const typename Space::Mean&>(),
                                                          std::declval<const A&>()...))>>::type;

template <typename F, typename Space, typename = void, typename... A>
struct autodiff_on_manifold : std::false_type {};
template <typename F, typename Space, typename... A>
struct autodiff_on_manifold<
    F, Space,
    std::void_t<decltype(std::declval<const F&>()(
        std::declval<const typename Space::template rebind<AutodiffScalar<typename Space::Scalar, Space::dof>>::Mean&>(),
        lift<AutodiffScalar<typename Space::Scalar, Space::dof>>(std::declval<const A&>())...))>,
    A...> : std::true_type {};

/// Value f(x, args...) (on the output space Out) and the tangent Jacobian
/// ∂(f(x ⊞ e) ⊟ f(x))/∂e at e = 0, from the source the model offers (see the file comment).
template <typename Space, typename F, typename... A>
void tangent_value_and_jacobian(const F& f, const typename Space::Mean& x,
                                typename model_output_space_t<Space, F, A...>::Mean& value,
                                Eigen::Matrix<typename Space::Scalar, model_output_space_t<Space, F, A...>::dof,
                                              Space::dof>& jac,
                                const A&... args) noexcept {
  using T = typename Space::Scalar;
  using Out = model_output_space_t<Space, F, A...>;
  constexpr int D = Space::dof;
  if constexpr (is_numeric_model<F>::value) {
    // Central differences along each tangent direction, divided by the step actually represented.
    const auto& g = unwrap_numeric(f);
    value = g(x, args...);
    const T h = std::cbrt(std::numeric_limits<T>::epsilon());
    for (int j = 0; j < D; ++j) {
      const typename Space::Mean xp = Space::boxplus(x, Eigen::Matrix<T, D, 1>::Unit(j) * h);
      const typename Space::Mean xm = Space::boxplus(x, Eigen::Matrix<T, D, 1>::Unit(j) * -h);
      const T step = Space::boxminus(xp, xm)(j);
      if constexpr (is_eigen<typename Out::Mean>::value) {  // a measurement: its own residual (wrapped angles)
        const typename Out::Mean vp = g(xp, args...), vm = g(xm, args...);
        jac.col(j) = (model_residual(g, vp, value) - model_residual(g, vm, value)) / step;
      } else {
        jac.col(j) = (Out::boxminus(g(xp, args...), value) - Out::boxminus(g(xm, args...), value)) / step;
      }
    }
  } else if constexpr (has_jacobian_impl<F, typename Space::Mean, void, A...>::value) {
    value = f(x, args...);
    jac = f.jacobian(x, args...);
  } else if constexpr (autodiff_on_manifold<F, Space, void, A...>::value) {
    using Ad = AutodiffScalar<T, D>;
    using SpaceAd = typename Space::template rebind<Ad>;
    using OutAd = typename Out::template rebind<Ad>;
    Eigen::Matrix<Ad, D, 1> e;
    for (int i = 0; i < D; ++i) e(i) = Ad(T(0), Eigen::Matrix<T, D, 1>::Unit(i));
    const typename OutAd::Mean ya = f(SpaceAd::boxplus(Space::template cast<Ad>(x), e), lift<Ad>(args)...);
    if constexpr (Out::flat && std::is_same_v<typename Out::Mean, typename Out::Tangent>) {
      for (int i = 0; i < Out::dof; ++i) {
        value(i) = ya(i).value();
        jac.row(i) = ya(i).derivatives().transpose();
      }
    } else {
      value = f(x, args...);
      const Eigen::Matrix<Ad, Out::dof, 1> t = OutAd::boxminus(ya, Out::template cast<Ad>(value));
      for (int i = 0; i < Out::dof; ++i) jac.row(i) = t(i).derivatives().transpose();
    }
  } else {
    static_assert(has_jacobian_impl<F, typename Space::Mean, void, A...>::value,
                  "keel: the manifold model has no jacobian(x, ...) and its call operator is not a template over "
                  "the scalar (for automatic differentiation); wrap it in keel::numeric_model(f) for central "
                  "differences");
  }
}

/// The measurement model seen from the tangent space at x: e ↦ h(x ⊞ e), with h's residual and mean.
template <typename Space, typename H>
struct LocalChart {
  using Value = typename std::decay_t<decltype(std::declval<const H&>()(
      std::declval<const typename Space::Mean&>()))>::PlainObject;
  const typename Space::Mean& x;
  const H& h;
  Value operator()(const typename Space::Tangent& e) const noexcept { return h(Space::boxplus(x, e)); }
  Value residual(const Value& z, const Value& zhat) const noexcept { return model_residual(h, z, zhat); }
  template <typename Points, typename Weights, typename Model = H>  // Model: keeps the check in SFINAE
  auto mean(const Points& points, const Weights& weights) const noexcept
      -> decltype(std::declval<const Model&>().mean(points, weights)) {
    return h.mean(points, weights);
  }
};

/// Checks shared by the manifold kernels: ok, non_finite, not_on_manifold or negative_variance.
template <typename Space>
Status check_manifold_estimate(const ManifoldGaussian<Space>& est) noexcept {
  if (!Space::finite(est.mean) || !all_finite(est.cov)) return Status::non_finite;
  if (!Space::on_manifold(est.mean)) return Status::not_on_manifold;
  if (diagonal_has_negative(est.cov)) return Status::negative_variance;
  return Status::ok;
}

template <typename Space, typename = void>
struct has_block_reset : std::false_type {};
template <typename Space>
struct has_block_reset<Space, std::void_t<decltype(Space::reset_covariance(
                                  std::declval<Eigen::Matrix<typename Space::Scalar, Space::dof, Space::dof>&>(),
                                  std::declval<const typename Space::Tangent&>()))>> : std::true_type {};

/// P ← G P Gᵀ with the space's reset Jacobian at δ (skipped for flat spaces, where G = I; block by block for a
/// Compound).
template <typename Space>
void reset_covariance(Eigen::Matrix<typename Space::Scalar, Space::dof, Space::dof>& p,
                      const typename Space::Tangent& delta) noexcept {
  if constexpr (has_block_reset<Space>::value) {
    Space::reset_covariance(p, delta);
    symmetrize(p);
  } else if constexpr (!Space::flat) {
    const auto g = Space::reset_jacobian(delta);
    const Eigen::Matrix<typename Space::Scalar, Space::dof, Space::dof> gp = g * p;
    p.noalias() = gp * g.transpose();
    symmetrize(p);
  }
}

/// The tail of every manifold correction: δ = K y has been formed and P⁺ about the old mean; reset P to the
/// new mean, move the mean by ⊞, validate, commit.
template <typename Space>
Status commit_correction(ManifoldGaussian<Space>& est, const typename Space::Tangent& delta,
                         Eigen::Matrix<typename Space::Scalar, Space::dof, Space::dof>& p) noexcept {
  reset_covariance<Space>(p, delta);
  const typename Space::Mean x = Space::boxplus(est.mean, delta);
  if (!Space::finite(x) || !all_finite(p)) return Status::non_finite;
  if (!diagonal_nonnegative(p)) return Status::not_positive_definite;
  est.mean = x;
  est.cov = p;
  return Status::ok;
}

}  // namespace detail

/// \brief The tangent Jacobian keel's manifold kernels use for f at x (from whichever source the model offers):
/// ∂(f(x ⊞ e) ⊟ f(x))/∂e for a motion model, ∂h(x ⊞ e)/∂e for a measurement model; for tests and tools.
template <typename Space, typename F, typename... A>
auto tangent_jacobian(const F& f, const typename Space::Mean& x, const A&... args) noexcept {
  using Out = detail::model_output_space_t<Space, F, A...>;
  typename Out::Mean value;
  Eigen::Matrix<typename Space::Scalar, Out::dof, Space::dof> jac;
  detail::tangent_value_and_jacobian<Space>(f, x, value, jac, args...);
  return jac;
}

namespace ekf {

/// \brief Error-state EKF time update on a manifold state: \f$ x^- = f(x, \ldots),
/// F = \partial (f(x \boxplus e) \boxminus f(x))/\partial e\,|_0,\ P^- = F P F^T + Q \f$ (Q on the tangent space;
/// Solà, "Quaternion kinematics for the error-state Kalman filter", 2017, sec. 5.3 and 7). The new mean is
/// projected onto the manifold (a quaternion renormalized).
/// \returns ok, non_finite, not_on_manifold (the mean, or f's value), negative_variance or
/// not_positive_definite as keel::predict; `est` unchanged unless ok.
template <typename Space, typename F, typename DQ, typename... A>
[[nodiscard]] Status predict(ManifoldGaussian<Space>& est, const F& f, const Eigen::MatrixBase<DQ>& q,
                             const A&... args) noexcept {
  using T = typename Space::Scalar;
  constexpr int D = Space::dof;
  static_assert(std::is_same_v<detail::model_output_space_t<Space, F, A...>, Space>,
                "keel::ekf::predict: the motion model must map the state's mean to a mean of the same space");
  static_assert(detail::rows_v<DQ> == D && detail::cols_v<DQ> == D && std::is_same_v<typename DQ::Scalar, T>,
                "keel::ekf::predict: Q must be dof×dof (the tangent dimension) with the estimate's scalar type");
  const Status checked = detail::check_manifold_estimate(est);
  if (checked != Status::ok) return checked;
  typename Space::Mean x;
  Eigen::Matrix<T, D, D> jac;
  detail::tangent_value_and_jacobian<Space>(f, est.mean, x, jac, args...);
  if (!Space::finite(x) || !detail::all_finite(jac)) return Status::non_finite;
  if (!Space::on_manifold(x)) return Status::not_on_manifold;
  Gaussian<T, D> tangent;
  tangent.mean.setZero();
  tangent.cov = est.cov;
  const Status s = keel::predict(tangent, jac, q);
  if (s != Status::ok) return s;
  est.mean = Space::project(x);
  est.cov = tangent.cov;
  return Status::ok;
}

/// \brief Error-state EKF measurement update on a manifold state: \f$ \hat z = h(x),\ H = \partial h(x \boxplus
/// e)/\partial e\,|_0,\ y = z \boxminus \hat z,\ \delta = K y \f$ with the Joseph-form covariance of keel::correct,
/// then the mean moves to \f$ x \boxplus \delta \f$ and the covariance is reset to the new mean's tangent space,
/// \f$ P \leftarrow G P G^T,\ G = \f$ Space::reset_jacobian(δ) (J_r(δ) for So3, I for flat parts; Solà 2017,
/// sec. 7.2). NIS, gate and statuses as keel::correct, plus not_on_manifold; `est` unchanged unless ok.
template <typename Space, typename H, typename DR, typename DZ>
[[nodiscard]] Innovation<typename Space::Scalar, detail::rows_v<DZ>> correct(
    ManifoldGaussian<Space>& est, const H& h, const Eigen::MatrixBase<DR>& r, const Eigen::MatrixBase<DZ>& z,
    const Gate<typename Space::Scalar>& gate = Gate<typename Space::Scalar>{}) noexcept {
  using T = typename Space::Scalar;
  constexpr int D = Space::dof;
  constexpr int M = detail::rows_v<DZ>;
  using Out = detail::model_output_space_t<Space, H>;
  static_assert(std::is_same_v<Out, Euclidean<T, M>>,
                "keel::ekf::correct: the measurement model must return a vector with as many entries as z");
  static_assert(detail::rows_v<DR> == M && detail::cols_v<DR> == M && std::is_same_v<typename DR::Scalar, T> &&
                    std::is_same_v<typename DZ::Scalar, T>,
                "keel::ekf::correct: R must be M×M and R, z must have the estimate's scalar type");
  Innovation<T, M> inn;
  inn.status = detail::check_manifold_estimate(est);
  if (inn.status != Status::ok) return inn;
  inn.status = Status::non_finite;
  Eigen::Matrix<T, M, 1> zhat;
  Eigen::Matrix<T, M, D> jac;
  detail::tangent_value_and_jacobian<Space>(h, est.mean, zhat, jac);
  const Eigen::Matrix<T, M, 1> y = detail::model_residual(h, Eigen::Matrix<T, M, 1>(z), zhat);
  if (!detail::all_finite(jac)) return inn;
  Gaussian<T, D> tangent;
  tangent.mean.setZero();
  tangent.cov = est.cov;
  Eigen::Matrix<T, D, M> pht;
  Eigen::Matrix<T, D, M> k;
  inn = detail::innovate_and_gain(tangent, jac, Eigen::Matrix<T, M, M>(r), y, gate, pht, k);
  if (inn.status != Status::ok) return inn;
  inn.status = detail::apply_gain(tangent, inn.cov, inn.residual, pht, k, joseph_form);
  if (inn.status != Status::ok) return inn;
  inn.status = detail::commit_correction(est, Eigen::Matrix<T, D, 1>(tangent.mean), tangent.cov);
  return inn;
}

}  // namespace ekf

namespace ukf {

/// \brief UKF time update on a manifold state (Hauberg, Lauze & Pedersen, "Unscented Kalman filtering on
/// Riemannian manifolds", J. Math. Imaging Vision, 2013; Hertzberg et al. 2013, sec. 4): sigma points
/// \f$ \chi_0 = x,\ \chi_i = x \boxplus c L_i,\ \chi_{N+i} = x \boxplus (-c L_i) \f$ (L the lower Cholesky factor
/// of P, c and the weights from `rule`), \f$ \mathcal{Y}_i = f(\chi_i, \ldots) \f$, the weighted mean found by
/// iterating \f$ \bar y \leftarrow \bar y \boxplus \sum W^m_i (\mathcal{Y}_i \boxminus \bar y) \f$ from
/// \f$ \mathcal{Y}_0 \f$ (cap and tolerance in `rule`), and \f$ P^- = \sum W^c_i (\mathcal{Y}_i \boxminus \bar y)
/// (\cdot)^T + Q \f$.
/// \returns ok, non_finite, not_on_manifold, negative_variance, not_positive_definite (P or the result) or
/// not_converged (the mean iteration reached its cap); `est` unchanged unless ok.
template <typename Space, typename F, typename DQ, typename... A>
[[nodiscard]] Status predict(ManifoldGaussian<Space>& est, const F& f, const Eigen::MatrixBase<DQ>& q,
                             const SigmaRule& rule, const A&... args) noexcept {
  using T = typename Space::Scalar;
  constexpr int D = Space::dof;
  constexpr int P = 2 * D + 1;
  static_assert(std::is_same_v<detail::model_output_space_t<Space, F, A...>, Space>,
                "keel::ukf::predict: the motion model must map the state's mean to a mean of the same space");
  static_assert(detail::rows_v<DQ> == D && detail::cols_v<DQ> == D && std::is_same_v<typename DQ::Scalar, T>,
                "keel::ukf::predict: Q must be dof×dof (the tangent dimension) with the estimate's scalar type");
  const Eigen::Matrix<T, D, D> qm = q;
  if (!detail::all_finite(qm)) return Status::non_finite;
  if (!detail::diagonal_nonnegative(qm)) return Status::negative_variance;
  const Status checked = detail::check_manifold_estimate(est);
  if (checked != Status::ok) return checked;
  Eigen::Matrix<T, D, D> l = est.cov;
  detail::symmetrize(l);
  if (!detail::psd_cholesky_in_place(l)) return Status::not_positive_definite;
  const SigmaWeights<T> w = rule.weights<T, D>();
  const Eigen::Matrix<T, D, P> offsets = detail::sigma_points(Eigen::Matrix<T, D, 1>::Zero().eval(), l, w.spread);
  std::array<typename Space::Mean, P> y;
  for (int i = 0; i < P; ++i) {
    y[static_cast<std::size_t>(i)] = f(Space::boxplus(est.mean, offsets.col(i)), args...);
    if (!Space::finite(y[static_cast<std::size_t>(i)])) return Status::non_finite;
    if (!Space::on_manifold(y[static_cast<std::size_t>(i)])) return Status::not_on_manifold;
  }
  const Eigen::Matrix<T, P, 1> wm = detail::mean_weights<T, D>(w);
  typename Space::Mean mean = Space::project(y[0]);
  Eigen::Matrix<T, D, P> dev;
  const T tol = std::max(static_cast<T>(rule.mean_tolerance), T(64) * std::numeric_limits<T>::epsilon()) *
                (T(1) + Space::boxminus(mean, Space::identity()).norm());
  bool converged = false;
  for (int it = 0; it < rule.mean_iterations && !converged; ++it) {
    for (int i = 0; i < P; ++i) dev.col(i) = Space::boxminus(y[static_cast<std::size_t>(i)], mean);
    const Eigen::Matrix<T, D, 1> step = dev * wm;
    if (!detail::all_finite(step)) return Status::non_finite;
    mean = Space::boxplus(mean, step);
    converged = step.norm() <= tol;
  }
  if (!converged) return Status::not_converged;
  for (int i = 0; i < P; ++i) dev.col(i) = Space::boxminus(y[static_cast<std::size_t>(i)], mean);
  Eigen::Matrix<T, D, D> p = detail::weighted_outer<T, D>(dev, dev, w);
  p += qm;
  if (!detail::symmetrize_finite(p)) return Status::non_finite;
  if (!detail::diagonal_nonnegative(p)) return Status::not_positive_definite;
  est.mean = mean;
  est.cov = p;
  return Status::ok;
}

/// \brief UKF measurement update on a manifold state: the unscented transform of the tangent-space Gaussian
/// N(0, P) through the local chart e ↦ h(x ⊞ e) gives ẑ, P_z and the cross-covariance P_ez (the sigma points'
/// tangent offsets are exactly ±c Lᵢ); \f$ S = P_z + R,\ K = P_{ez} S^{-1},\ y = z \boxminus \hat z,
/// \delta = K y,\ P^+ = P - K S K^T \f$, then \f$ x \boxplus \delta \f$ and the covariance reset of
/// ekf::correct (G = Space::reset_jacobian(δ)). NIS, gate and statuses as ukf::correct, plus not_on_manifold.
template <typename Space, typename H, typename DR, typename DZ>
[[nodiscard]] Innovation<typename Space::Scalar, detail::rows_v<DZ>> correct(
    ManifoldGaussian<Space>& est, const H& h, const Eigen::MatrixBase<DR>& r, const Eigen::MatrixBase<DZ>& z,
    const SigmaRule& rule, const Gate<typename Space::Scalar>& gate = Gate<typename Space::Scalar>{}) noexcept {
  using T = typename Space::Scalar;
  constexpr int D = Space::dof;
  constexpr int M = detail::rows_v<DZ>;
  static_assert(std::is_same_v<detail::model_output_space_t<Space, H>, Euclidean<T, M>>,
                "keel::ukf::correct: the measurement model must return a vector with as many entries as z");
  static_assert(detail::rows_v<DR> == M && detail::cols_v<DR> == M && std::is_same_v<typename DR::Scalar, T> &&
                    std::is_same_v<typename DZ::Scalar, T>,
                "keel::ukf::correct: R must be M×M and R, z must have the estimate's scalar type");
  const Eigen::Matrix<T, M, M> rm = r;
  const Eigen::Matrix<T, M, 1> zm = z;
  Innovation<T, M> inn;
  inn.status = detail::check_noise_and_measurement(rm, zm);
  if (inn.status == Status::ok) inn.status = detail::check_manifold_estimate(est);
  if (inn.status != Status::ok) return inn;
  Gaussian<T, D> tangent;
  tangent.mean.setZero();
  tangent.cov = est.cov;
  const auto ut = unscented_transform(detail::LocalChart<Space, H>{est.mean, h}, tangent, rule);
  if (!ut.ok()) {
    inn.status = ut.status;
    return inn;
  }
  Eigen::Matrix<T, D, 1> delta;
  Eigen::Matrix<T, D, D> p;
  inn = detail::unscented_gain(ut, h, zm, rm, est.cov, gate, delta, p);
  if (inn.status != Status::ok) return inn;
  inn.status = detail::commit_correction(est, delta, p);
  return inn;
}

}  // namespace ukf
}  // namespace keel
