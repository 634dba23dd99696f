#pragma once
/// \file
/// \brief Extended Kalman filter: keel::ekf::predict / correct / correct_iterated on Gaussian (and predict /
/// correct on SqrtGaussian), with the Jacobian from one of three sources chosen at compile time:
/// 1. the model's own `jacobian(x, args...)`;
/// 2. forward-mode automatic differentiation when the model's call operator is a template over the scalar
///    (Eigen's AutoDiffScalar with a fixed-size derivative vector: heap-free);
/// 3. central differences, on request, by wrapping the model in keel::numeric_model(f).
/// A model may supply `residual(z, zhat)` (angle wrapping); the library uses it wherever a residual is formed.

#include <cmath>
#include <limits>
#include <type_traits>
#include <utility>

#include <Eigen/Core>
#include <unsupported/Eigen/AutoDiff>

#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/linalg.hpp"
#include "core/model.hpp"
#include "core/status.hpp"
#include "gate.hpp"
#include "linear.hpp"
#include "sqrt.hpp"

namespace keel {

namespace detail {

template <typename T, int N>
using AutodiffScalar = Eigen::AutoDiffScalar<Eigen::Matrix<T, N, 1>>;

template <typename F, typename X, typename = void, typename... A>
struct has_jacobian_impl : std::false_type {};
template <typename F, typename X, typename... A>
struct has_jacobian_impl<F, X, std::void_t<decltype(std::declval<const F&>().jacobian(std::declval<const X&>(),
                                                                                         std::declval<const A&>()...))>,
                         A...> : std::true_type {};

template <typename F, typename T, int N, typename = void, typename... A>
struct autodiff_callable_impl : std::false_type {};
template <typename F, typename T, int N, typename... A>
struct autodiff_callable_impl<
    F, T, N,
    std::void_t<decltype(std::declval<const F&>()(std::declval<const Eigen::Matrix<AutodiffScalar<T, N>, N, 1>&>(),
                                                  lift<AutodiffScalar<T, N>>(std::declval<const A&>())...))>,
    A...> : std::true_type {};

/// Value f(x, args...) and Jacobian ∂f/∂x from the source the model offers (see the file comment).
template <typename F, typename T, int N, int M, typename... A>
void value_and_jacobian(const F& f, const Eigen::Matrix<T, N, 1>& x, Eigen::Matrix<T, M, 1>& value,
                        Eigen::Matrix<T, M, N>& jac, const A&... args) noexcept {
  if constexpr (has_jacobian_impl<F, Eigen::Matrix<T, N, 1>, void, A...>::value) {
    value = f(x, args...);
    jac = f.jacobian(x, args...);
  } else if constexpr (autodiff_callable_impl<F, T, N, void, A...>::value) {
    using Ad = AutodiffScalar<T, N>;
    Eigen::Matrix<Ad, N, 1> xa;
    for (int i = 0; i < N; ++i) xa(i) = Ad(x(i), Eigen::Matrix<T, N, 1>::Unit(i));
    const Eigen::Matrix<Ad, M, 1> ya = f(xa, lift<Ad>(args)...);
    for (int i = 0; i < M; ++i) {
      value(i) = ya(i).value();
      jac.row(i) = ya(i).derivatives().transpose();
    }
  } else {
    static_assert(has_jacobian_impl<F, Eigen::Matrix<T, N, 1>, void, A...>::value,
                  "keel::ekf: the model has no jacobian(x, ...) and its call operator is not a template over the "
                  "scalar (for automatic differentiation); wrap it in keel::numeric_model(f) for central differences");
  }
}

}  // namespace detail

/// \brief Jacobian of f at x by central differences, column j from f(x ± h_j e_j) with
/// \f$ h_j = \varepsilon^{1/3} \max(|x_j|, 1) \f$: the step that balances the O(h²) truncation error against the
/// O(ε/h) rounding error of a central difference (Press et al., "Numerical Recipes", 3rd ed., 2007, sec. 5.7;
/// from memory). Expect about ε^(2/3) relative accuracy: 5e-11 in double, 2.4e-5 in float.
template <typename F, typename T, int N, typename... A>
auto numeric_jacobian(const F& f, const Eigen::Matrix<T, N, 1>& x, const A&... args) noexcept {
  using Value = detail::model_value_t<F, T, N, A...>;
  constexpr int M = detail::rows_v<Value>;
  Eigen::Matrix<T, M, N> jac;
  const T root3_eps = std::cbrt(std::numeric_limits<T>::epsilon());
  for (int j = 0; j < N; ++j) {
    const T h = root3_eps * std::max(std::abs(x(j)), T(1));
    Eigen::Matrix<T, N, 1> xp = x;
    Eigen::Matrix<T, N, 1> xm = x;
    xp(j) += h;
    xm(j) -= h;
    const T step = xp(j) - xm(j);  // the step actually taken after rounding
    jac.col(j) = (Value(f(xp, args...)) - Value(f(xm, args...))) / step;
  }
  return jac;
}

/// \brief A model whose Jacobian comes from keel::numeric_jacobian (central differences): the explicit request
/// for the third Jacobian source. Forwards the call and, when the model has one, its residual.
template <typename F>
struct NumericModel {
  F model;
  template <typename X, typename... A>
  auto operator()(const X& x, const A&... args) const noexcept {
    return model(x, args...);
  }
  template <typename X, typename... A>
  auto jacobian(const X& x, const A&... args) const noexcept {
    return numeric_jacobian(model, x, args...);
  }
  template <typename Z>
  auto residual(const Z& z, const Z& zhat) const noexcept -> decltype(detail::model_residual(model, z, zhat)) {
    return detail::model_residual(model, z, zhat);
  }
};
template <typename F>
NumericModel<F> numeric_model(const F& f) noexcept {
  return NumericModel<F>{f};
}

/// \brief A model differentiated automatically even when it has its own jacobian (to compare or benchmark the
/// sources): forwards the templated call and the residual, hides `jacobian`.
template <typename F>
struct AutodiffModel {
  F model;
  template <typename X, typename... A>
  auto operator()(const X& x, const A&... args) const noexcept {
    return model(x, args...);
  }
  template <typename Z>
  auto residual(const Z& z, const Z& zhat) const noexcept -> decltype(detail::model_residual(model, z, zhat)) {
    return detail::model_residual(model, z, zhat);
  }
};
template <typename F>
AutodiffModel<F> autodiff_model(const F& f) noexcept {
  return AutodiffModel<F>{f};
}

/// \brief The Jacobian keel's EKF uses for f at x (from whichever source the model offers), for tests and tools.
template <typename F, typename T, int N, typename... A>
auto model_jacobian(const F& f, const Eigen::Matrix<T, N, 1>& x, const A&... args) noexcept {
  using Value = detail::model_value_t<F, T, N, A...>;
  constexpr int M = detail::rows_v<Value>;
  Eigen::Matrix<T, M, 1> value;
  Eigen::Matrix<T, M, N> jac;
  detail::value_and_jacobian(f, x, value, jac, args...);
  return jac;
}

namespace ekf {

/// \brief EKF time update: \f$ x^- = f(x, \ldots),\; F = \partial f/\partial x\,|_x,\; P^- = F P F^T + Q \f$
/// (linearization about the current mean: Jazwinski, "Stochastic Processes and Filtering Theory", 1970; from
/// memory). Extra arguments (dt, a control u) are passed to f after x. Works on Gaussian and SqrtGaussian (for
/// the latter the covariance factor is propagated by the QR array algorithm with F).
/// \returns as keel::predict(est, F, Q); also non_finite when f(x) is not finite. `est` unchanged on failure.
template <template <typename, int> class E, typename T, int N, typename F, typename DQ, typename... A>
[[nodiscard]] Status predict(E<T, N>& est, const F& f, const Eigen::MatrixBase<DQ>& q, const A&... args) noexcept {
  static_assert(std::is_same_v<E<T, N>, Gaussian<T, N>> || std::is_same_v<E<T, N>, SqrtGaussian<T, N>>,
                "keel::ekf::predict: the estimate must be a Gaussian or a SqrtGaussian");
  using Value = detail::model_value_t<F, T, N, A...>;
  static_assert(detail::rows_v<Value> == N && detail::cols_v<Value> == 1,
                "keel::ekf::predict: the motion model must return an N-vector, N the state dimension");
  if (!detail::all_finite(est.mean)) return Status::non_finite;
  Eigen::Matrix<T, N, 1> x;
  Eigen::Matrix<T, N, N> jac;
  detail::value_and_jacobian(f, est.mean, x, jac, args...);
  if (!detail::all_finite(x) || !detail::all_finite(jac)) return Status::non_finite;
  E<T, N> next = est;
  const Status s = keel::predict(next, jac, q);
  if (s != Status::ok) return s;
  next.mean = x;
  est = next;
  return Status::ok;
}

/// \brief EKF measurement update: \f$ \hat z = h(x),\; H = \partial h/\partial x\,|_x,\; y = z \boxminus \hat z \f$
/// (the model's residual, e.g. wrapped angles), then the linear update with H and y: Joseph form on Gaussian,
/// the QR array algorithm on SqrtGaussian; NIS, gate and statuses as keel::correct.
template <template <typename, int> class E, typename T, int N, typename H, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct(E<T, N>& est, const H& h, const Eigen::MatrixBase<DR>& r,
                                                           const Eigen::MatrixBase<DZ>& z,
                                                           const Gate<T>& gate = Gate<T>{}) noexcept {
  static_assert(std::is_same_v<E<T, N>, Gaussian<T, N>> || std::is_same_v<E<T, N>, SqrtGaussian<T, N>>,
                "keel::ekf::correct: the estimate must be a Gaussian or a SqrtGaussian");
  constexpr int M = detail::rows_v<DZ>;
  using Value = detail::model_value_t<H, T, N>;
  static_assert(detail::rows_v<Value> == M && detail::cols_v<Value> == 1,
                "keel::ekf::correct: the measurement model must return a vector with as many entries as z");
  static_assert(detail::rows_v<DR> == M && detail::cols_v<DR> == M,
                "keel::ekf::correct: R must be M×M, M the number of entries of z");
  static_assert(std::is_same_v<typename DR::Scalar, T> && std::is_same_v<typename DZ::Scalar, T>,
                "keel::ekf::correct: R and z must have the estimate's scalar type");
  Innovation<T, M> inn;
  if (!detail::all_finite(est.mean)) return inn;
  Eigen::Matrix<T, M, 1> zhat;
  Eigen::Matrix<T, M, N> jac;
  detail::value_and_jacobian(h, est.mean, zhat, jac);
  const Eigen::Matrix<T, M, 1> y = detail::model_residual(h, Eigen::Matrix<T, M, 1>(z), zhat);
  const Eigen::Matrix<T, M, M> rm = r;
  if constexpr (std::is_same_v<E<T, N>, Gaussian<T, N>>) {
    Eigen::Matrix<T, N, M> pht;
    Eigen::Matrix<T, N, M> k;
    inn = detail::innovate_and_gain(est, jac, rm, y, gate, pht, k);
    if (inn.status != Status::ok) return inn;
    inn.status = detail::apply_gain(est, inn.cov, inn.residual, pht, k, joseph_form);
    return inn;
  } else {
    return detail::sqrt_correct_residual(est, jac, rm, y, gate);
  }
}

/// \brief Stopping rule of the iterated EKF: at most `max_iterations` Gauss–Newton steps, stopping early when
/// the step \f$ \|x_{i+1} - x_i\| \le \mathrm{tolerance}\cdot(1 + \|x_i\|) \f$.
struct Iterations {
  int max_iterations = 10;
  double tolerance = 1e-6;
};

/// \brief Iterated EKF measurement update (Bell & Cathey, "The iterated Kalman filter update as a Gauss–Newton
/// method", IEEE Trans. Automatic Control, 1993): from \f$ x_0 = x^- \f$,
/// \f$ H_i = \partial h/\partial x\,|_{x_i},\; K_i = P H_i^T (H_i P H_i^T + R)^{-1},\;
/// x_{i+1} = x^- + K_i\,(z \boxminus h(x_i) - H_i (x^- - x_i)) \f$, then the Joseph-form covariance with the last
/// H and K. The first iteration is the EKF update. NIS and gate use the innovation at the prior (as the EKF).
/// Reaching the iteration cap is not a failure (the last iterate is used).
/// \returns Innovation with the statuses of ekf::correct; `est` unchanged unless ok.
template <typename T, int N, typename H, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct_iterated(Gaussian<T, N>& est, const H& h,
                                                                    const Eigen::MatrixBase<DR>& r,
                                                                    const Eigen::MatrixBase<DZ>& z,
                                                                    Iterations control = Iterations{},
                                                                    const Gate<T>& gate = Gate<T>{}) noexcept {
  constexpr int M = detail::rows_v<DZ>;
  const Eigen::Matrix<T, M, M> rm = r;
  const Eigen::Matrix<T, M, 1> zm = z;
  Innovation<T, M> inn;
  if (!detail::all_finite(est.mean)) return inn;
  Eigen::Matrix<T, M, 1> zhat;
  Eigen::Matrix<T, M, N> jac;
  detail::value_and_jacobian(h, est.mean, zhat, jac);
  Eigen::Matrix<T, N, M> pht;
  detail::Ldl<T, M> l;
  inn = detail::innovate_residual(est, jac, rm, detail::model_residual(h, zm, zhat), gate, pht, l);
  if (inn.status != Status::ok) return inn;
  Eigen::Matrix<T, N, M> k;
  detail::right_solve_spd(l, pht, k);
  Eigen::Matrix<T, N, 1> xi = est.mean + k * inn.residual;
  Eigen::Matrix<T, M, M> s = inn.cov;  // S at the last linearization point
  for (int it = 1; it < control.max_iterations; ++it) {
    detail::value_and_jacobian(h, xi, zhat, jac);
    if (!detail::all_finite(xi) || !detail::all_finite(jac)) {
      inn.status = Status::non_finite;
      return inn;
    }
    pht.noalias() = est.cov.lazyProduct(jac.transpose());
    s = rm;
    s.noalias() += jac.lazyProduct(pht);
    detail::symmetrize(s);
    if (!detail::ldl_factor(s, l)) {
      inn.status = Status::not_positive_definite;
      return inn;
    }
    detail::right_solve_spd(l, pht, k);
    Eigen::Matrix<T, M, 1> yi = detail::model_residual(h, zm, zhat);
    yi.noalias() -= jac * (est.mean - xi);
    const Eigen::Matrix<T, N, 1> next = est.mean + k * yi;
    const T step = (next - xi).norm();
    xi = next;
    if (static_cast<double>(step) <= control.tolerance * (1.0 + static_cast<double>(xi.norm()))) break;
  }
  Eigen::Matrix<T, N, N> p;
  if (!detail::joseph_covariance(est.cov, s, pht, k, p) || !detail::all_finite(xi)) {
    inn.status = Status::non_finite;
    return inn;
  }
  if (!detail::diagonal_nonnegative(p)) {
    inn.status = Status::not_positive_definite;
    return inn;
  }
  est.mean = xi;
  est.cov = p;
  inn.status = Status::ok;
  return inn;
}

}  // namespace ekf
}  // namespace keel
