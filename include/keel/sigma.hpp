#pragma once
/// \file
/// \brief Sigma-point rules (scaled symmetric set, third-degree spherical–radial cubature) and the unscented
/// transform of a Gaussian through a nonlinear function: keel::SigmaRule, keel::unscented_transform.

#include <cmath>
#include <type_traits>

#include <Eigen/Core>

#include "core/factor.hpp"
#include "core/gaussian.hpp"
#include "core/linalg.hpp"
#include "core/model.hpp"
#include "core/status.hpp"

namespace keel {

/// \brief Weights of a symmetric sigma set of 2N+1 points for dimension N: χ₀ = m, χᵢ = m + c·Lᵢ,
/// χₙ₊ᵢ = m − c·Lᵢ (Lᵢ the i-th column of the lower Cholesky factor of P, c = `spread`).
template <typename T>
struct SigmaWeights {
  T mean0;   ///< weight of χ₀ in the mean
  T cov0;    ///< weight of χ₀ in the covariances (may be negative)
  T others;  ///< weight of each other point, in mean and covariances
  T spread;  ///< c = √(N + λ)
};

/// \brief A sigma-point rule. `scaled(α, β, κ)`: the scaled unscented set, λ = α²(N + κ) − N,
/// \f$ W^m_0 = \lambda/(N+\lambda),\ W^c_0 = W^m_0 + 1 - \alpha^2 + \beta,\ W_i = 1/(2(N+\lambda)) \f$
/// (Julier, "The scaled unscented transformation", 2002; Wan & van der Merwe, "The unscented Kalman filter for
/// nonlinear estimation", 2000). `cubature()`: the third-degree spherical–radial rule, 2N points m ± √N·Lᵢ
/// with weights 1/(2N) (Arasaratnam & Haykin, "Cubature Kalman filters", 2009) — the scaled set with α = 1,
/// β = 0, κ = 0, whose centre weight is zero.
struct SigmaRule {
  double alpha = 1.0;
  double beta = 0.0;
  double kappa = 0.0;
  /// Manifold states only: the weighted mean of the sigma points is found by iteration (manifold_filter.hpp),
  /// stopping when the step is at most `mean_tolerance`·(1 + |x̄ ⊟ identity|) (never below 64 ε of the scalar),
  /// or failing with not_converged after `mean_iterations` steps.
  int mean_iterations = 20;
  double mean_tolerance = 1e-9;

  static constexpr SigmaRule scaled(double alpha, double beta, double kappa) noexcept {
    return SigmaRule{alpha, beta, kappa};
  }
  static constexpr SigmaRule cubature() noexcept { return SigmaRule{1.0, 0.0, 0.0}; }
  /// The same rule with another iteration cap and tolerance for the mean on a manifold.
  constexpr SigmaRule with_mean_iterations(int iterations, double tolerance) const noexcept {
    SigmaRule r = *this;
    r.mean_iterations = iterations;
    r.mean_tolerance = tolerance;
    return r;
  }

  /// \brief Weights for dimension N (computed in double, then rounded to T once).
  template <typename T, int N>
  SigmaWeights<T> weights() const noexcept {
    const double n = N;
    const double lambda = alpha * alpha * (n + kappa) - n;
    const double c2 = n + lambda;
    SigmaWeights<T> w;
    w.mean0 = static_cast<T>(lambda / c2);
    w.cov0 = static_cast<T>(lambda / c2 + 1.0 - alpha * alpha + beta);
    w.others = static_cast<T>(1.0 / (2.0 * c2));
    w.spread = static_cast<T>(std::sqrt(c2));
    return w;
  }
};

/// \brief The unscented transform of an N-dimensional Gaussian through g: the Gaussian of g(x) (M-dimensional)
/// and the cross-covariance Cov(x, g(x)).
template <typename T, int N, int M>
struct Transformed {
  Gaussian<T, M> gaussian;
  Eigen::Matrix<T, N, M> cross_cov = Eigen::Matrix<T, N, M>::Zero();
  Status status = Status::non_finite;
  constexpr bool ok() const noexcept { return status == Status::ok; }
};

namespace detail {

template <typename F, typename P, typename W, typename = void>
struct has_mean : std::false_type {};
template <typename F, typename P, typename W>
struct has_mean<F, P, W,
                std::void_t<decltype(std::declval<const F&>().mean(std::declval<const P&>(), std::declval<const W&>()))>>
    : std::true_type {};

/// Sigma points (columns) of mean m and lower factor l (cov = l lᵀ).
template <typename T, int N>
Eigen::Matrix<T, N, 2 * N + 1> sigma_points(const Eigen::Matrix<T, N, 1>& m, const Eigen::Matrix<T, N, N>& l,
                                            T spread) noexcept {
  Eigen::Matrix<T, N, 2 * N + 1> x;
  x.col(0) = m;
  for (int i = 0; i < N; ++i) {
    x.col(1 + i) = m + spread * l.col(i);
    x.col(1 + N + i) = m - spread * l.col(i);
  }
  return x;
}

template <typename T, int N>
Eigen::Matrix<T, 2 * N + 1, 1> mean_weights(const SigmaWeights<T>& w) noexcept {
  Eigen::Matrix<T, 2 * N + 1, 1> v = Eigen::Matrix<T, 2 * N + 1, 1>::Constant(w.others);
  v(0) = w.mean0;
  return v;
}

/// The propagated points Y (columns), their weighted mean (the model's `mean(Y, weights)` when it has one)
/// and their deviations from it (the model's residual when it has one).
template <typename G, typename T, int N, typename... A>
struct Propagated {
  using Value = model_value_t<G, T, N, A...>;
  static constexpr int M = rows_v<Value>;
  Eigen::Matrix<T, M, 2 * N + 1> points;
  Eigen::Matrix<T, M, 1> mean;
  Eigen::Matrix<T, M, 2 * N + 1> deviations;
};

template <typename G, typename T, int N, typename... A>
Propagated<G, T, N, A...> propagate(const G& g, const Eigen::Matrix<T, N, 2 * N + 1>& x, const SigmaWeights<T>& w,
                                    const A&... args) noexcept {
  Propagated<G, T, N, A...> out;
  constexpr int M = Propagated<G, T, N, A...>::M;
  for (int i = 0; i < 2 * N + 1; ++i) out.points.col(i) = g(Eigen::Matrix<T, N, 1>(x.col(i)), args...);
  const Eigen::Matrix<T, 2 * N + 1, 1> wm = mean_weights<T, N>(w);
  if constexpr (has_mean<G, Eigen::Matrix<T, M, 2 * N + 1>, Eigen::Matrix<T, 2 * N + 1, 1>>::value) {
    out.mean = g.mean(out.points, wm);
  } else {
    out.mean.noalias() = out.points * wm;
  }
  for (int i = 0; i < 2 * N + 1; ++i)
    out.deviations.col(i) = model_residual(g, Eigen::Matrix<T, M, 1>(out.points.col(i)), out.mean);
  return out;
}

/// Σ W^c_i a_i b_iᵀ over the columns of a and b.
template <typename T, int N, int R, int C>
Eigen::Matrix<T, R, C> weighted_outer(const Eigen::Matrix<T, R, 2 * N + 1>& a, const Eigen::Matrix<T, C, 2 * N + 1>& b,
                                      const SigmaWeights<T>& w) noexcept {
  Eigen::Matrix<T, R, C> out;
  out.noalias() = (w.others * a.template rightCols<2 * N>()).lazyProduct(b.template rightCols<2 * N>().transpose());
  out.noalias() += (w.cov0 * a.col(0)).lazyProduct(b.col(0).transpose());
  return out;
}

}  // namespace detail

/// \brief Unscented transform of `est` through g (Julier & Uhlmann, "A new extension of the Kalman filter to
/// nonlinear systems", 1997; the weights of `rule`): sigma points χ from the lower Cholesky factor of the
/// covariance (semi-definite allowed; a SqrtGaussian's own factor), \f$ \mathcal{Y}_i = g(\chi_i, \ldots) \f$,
/// \f$ \bar y = \sum W^m_i \mathcal{Y}_i \f$ (or g.mean(Y, Wm)), \f$ P_y = \sum W^c_i (\mathcal{Y}_i \boxminus
/// \bar y)(\cdot)^T,\ P_{xy} = \sum W^c_i (\chi_i - m)(\mathcal{Y}_i \boxminus \bar y)^T \f$.
/// Extra arguments are passed to g after x.
/// \returns Transformed with status ok, non_finite (an input, the rule's weights or the result is not finite),
/// negative_variance (the covariance has a negative diagonal entry), or not_positive_definite (the covariance is
/// indefinite, or the transformed covariance has a negative diagonal entry, which a negative centre weight can
/// cause).
template <template <typename, int> class E, typename T, int N, typename G, typename... A>
[[nodiscard]] auto unscented_transform(const G& g, const E<T, N>& est, const SigmaRule& rule,
                                       const A&... args) noexcept {
  constexpr int M = detail::rows_v<detail::model_value_t<G, T, N, A...>>;
  Transformed<T, N, M> out;
  Eigen::Matrix<T, N, N> l;
  if constexpr (std::is_same_v<E<T, N>, SqrtGaussian<T, N>>) {
    l = detail::lower_part(est.sqrt_cov);
    if (!detail::all_finite(est.mean) || !detail::all_finite(l)) return out;
  } else {
    static_assert(std::is_same_v<E<T, N>, Gaussian<T, N>>,
                  "keel::unscented_transform: the estimate must be a Gaussian or a SqrtGaussian");
    l = est.cov;
    if (!detail::all_finite(est.mean) || !detail::all_finite(l)) return out;
    if (!detail::diagonal_nonnegative(l)) {
      out.status = Status::negative_variance;
      return out;
    }
    detail::symmetrize(l);
    if (!detail::psd_cholesky_in_place(l)) {
      out.status = Status::not_positive_definite;
      return out;
    }
  }
  const SigmaWeights<T> w = rule.weights<T, N>();
  const Eigen::Matrix<T, N, 2 * N + 1> x = detail::sigma_points(est.mean, l, w.spread);
  const auto y = detail::propagate(g, x, w, args...);
  Eigen::Matrix<T, N, 2 * N + 1> dx = x;
  dx.colwise() -= est.mean;
  out.gaussian.mean = y.mean;
  out.gaussian.cov = detail::weighted_outer<T, N>(y.deviations, y.deviations, w);
  detail::symmetrize(out.gaussian.cov);
  out.cross_cov = detail::weighted_outer<T, N>(dx, y.deviations, w);
  if (!detail::all_finite(out.gaussian.mean) || !detail::all_finite(out.gaussian.cov) ||
      !detail::all_finite(out.cross_cov)) {
    out.status = Status::non_finite;
  } else if (!detail::diagonal_nonnegative(out.gaussian.cov)) {
    out.status = Status::not_positive_definite;  // a negative centre weight outweighed the others
  } else {
    out.status = Status::ok;
  }
  return out;
}

}  // namespace keel
