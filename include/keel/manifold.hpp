#pragma once
/// \file
/// \brief States that are not vectors: the mean lives on a manifold, the covariance on its tangent space
/// (the error-state, or multiplicative, formulation). A *space* describes one such state:
///
///     Space::Scalar, Space::dof (tangent dimension), Space::Mean, Space::Tangent (dof-vector),
///     Space::identity(), Space::boxplus(x, δ) = x ⊞ δ, Space::boxminus(y, x) = y ⊟ x,
///     Space::reset_jacobian(δ), Space::on_manifold(x), Space::project(x), Space::rebind<S>, Space::cast<S>(x)
///
/// with x ⊞ (y ⊟ x) = y and (x ⊞ δ) ⊟ x = δ for small δ (Hertzberg, Wagner, Frese & Schröder, "Integrating
/// generic sensor fusion algorithms with sound state representations through encapsulation of manifolds",
/// Information Fusion, 2013). Ready-made: keel::Euclidean (⊞ = +), keel::So2 (planar heading), keel::So3 (unit
/// quaternion) and keel::Compound (a product of spaces). keel::ManifoldGaussian holds an estimate on a space;
/// the kernels for it are in manifold_filter.hpp.

#include <cmath>
#include <limits>
#include <tuple>
#include <type_traits>
#include <utility>

#include <Eigen/Core>
#include <Eigen/Geometry>

#include "core/linalg.hpp"
#include "gate.hpp"

namespace keel {

namespace detail {

/// The value of a scalar that may be an automatic-differentiation scalar (for branches on magnitudes).
template <typename S>
auto value_of(const S& s) noexcept {
  if constexpr (std::is_arithmetic_v<S>) {
    return s;
  } else {
    return s.value();
  }
}

/// The skew-symmetric (cross-product) matrix: skew(a) b = a × b.
template <typename S>
Eigen::Matrix<S, 3, 3> skew(const Eigen::Matrix<S, 3, 1>& a) noexcept {
  Eigen::Matrix<S, 3, 3> m;
  m << S(0), -a(2), a(1), a(2), S(0), -a(0), -a(1), a(0), S(0);
  return m;
}

/// The real type under a scalar that may be an automatic-differentiation scalar.
template <typename S>
using real_t = std::decay_t<decltype(value_of(std::declval<S>()))>;

}  // namespace detail

/// \brief The plain vector space R^N: ⊞ is +, ⊟ is −. A ManifoldGaussian on it behaves as a Gaussian.
template <typename T, int N>
struct Euclidean {
  using Scalar = T;
  static constexpr int dof = N;
  static constexpr bool flat = true;  ///< the reset Jacobian is the identity
  using Mean = Eigen::Matrix<T, N, 1>;
  using Tangent = Eigen::Matrix<T, N, 1>;
  template <typename S>
  using rebind = Euclidean<S, N>;

  static Mean identity() noexcept { return Mean::Zero(); }
  static Mean boxplus(const Mean& x, const Tangent& d) noexcept { return x + d; }
  static Tangent boxminus(const Mean& y, const Mean& x) noexcept { return y - x; }
  static Eigen::Matrix<T, N, N> reset_jacobian(const Tangent&) noexcept { return Eigen::Matrix<T, N, N>::Identity(); }
  static bool finite(const Mean& x) noexcept { return detail::all_finite(x); }
  static bool on_manifold(const Mean& x) noexcept { return finite(x); }
  static Mean project(const Mean& x) noexcept { return x; }
  template <typename S>
  static typename rebind<S>::Mean cast(const Mean& x) noexcept {
    return x.template cast<S>();
  }
};

/// \brief Planar heading SO(2), held as an angle in radians in [−π, π]. ⊞ and ⊟ add and subtract and wrap the
/// result into [−π, π] (the wrapped difference is the shortest rotation from x to y).
template <typename T>
struct So2 {
  using Scalar = T;
  static constexpr int dof = 1;
  static constexpr bool flat = true;  ///< rotations in the plane commute: the reset Jacobian is 1
  using Mean = T;
  using Tangent = Eigen::Matrix<T, 1, 1>;
  template <typename S>
  using rebind = So2<S>;

  /// The angle wrapped into [−π, π] (the number of turns removed is chosen on the value, so that derivatives
  /// pass through unchanged).
  static T wrap(const T& a) noexcept {
    const double two_pi = 6.283185307179586476925;
    const double turns = std::floor((static_cast<double>(detail::value_of(a)) + 0.5 * two_pi) / two_pi);
    return a - T(static_cast<detail::real_t<T>>(turns * two_pi));
  }
  static Mean identity() noexcept { return T(0); }
  static Mean boxplus(const Mean& x, const Tangent& d) noexcept { return wrap(x + d(0)); }
  static Tangent boxminus(const Mean& y, const Mean& x) noexcept { return Tangent(wrap(y - x)); }
  static Eigen::Matrix<T, 1, 1> reset_jacobian(const Tangent&) noexcept { return Eigen::Matrix<T, 1, 1>(T(1)); }
  static bool finite(const Mean& x) noexcept { return detail::is_finite(x); }
  static bool on_manifold(const Mean& x) noexcept { return finite(x); }
  static Mean project(const Mean& x) noexcept { return wrap(x); }
  template <typename S>
  static S cast(const Mean& x) noexcept {
    return S(x);
  }
};

/// \brief Rotations SO(3) held as a unit quaternion (Eigen::Quaternion, Hamilton convention: q = w + xi + yj + zk,
/// ij = k, and q rotates body-frame vectors into the reference frame, v_ref = q v_body q*, i.e. R(q) v_body).
/// The error is a rotation vector in the *body* frame (right perturbation): \f$ q \boxplus \delta = q \otimes
/// \mathrm{Exp}(\delta) \f$, \f$ p \boxminus q = \mathrm{Log}(q^{-1} \otimes p) \f$ (Solà, "Quaternion kinematics
/// for the error-state Kalman filter", arXiv:1711.02508, 2017, eqs. 101–102 and sec. 4.3).
template <typename T>
struct So3 {
  using Scalar = T;
  static constexpr int dof = 3;
  static constexpr bool flat = false;
  using Mean = Eigen::Quaternion<T>;
  using Tangent = Eigen::Matrix<T, 3, 1>;
  using Matrix3 = Eigen::Matrix<T, 3, 3>;
  template <typename S>
  using rebind = So3<S>;

  /// Below this squared angle the trigonometric ratios are replaced by their series to θ⁴: with θ² < √ε the
  /// first omitted terms (θ⁶/46080 of cos(θ/2), θ⁶/645120 of sin(θ/2)/θ) are below ε^1.5/46080.
  static double series_threshold() noexcept {
    return std::sqrt(static_cast<double>(std::numeric_limits<detail::real_t<T>>::epsilon()));
  }

  static Mean identity() noexcept { return Mean(T(1), T(0), T(0), T(0)); }

  /// \brief Hamilton product a ⊗ b.
  static Mean multiply(const Mean& a, const Mean& b) noexcept {
    return Mean(a.w() * b.w() - a.x() * b.x() - a.y() * b.y() - a.z() * b.z(),
                a.w() * b.x() + a.x() * b.w() + a.y() * b.z() - a.z() * b.y(),
                a.w() * b.y() - a.x() * b.z() + a.y() * b.w() + a.z() * b.x(),
                a.w() * b.z() + a.x() * b.y() - a.y() * b.x() + a.z() * b.w());
  }
  static Mean conjugate(const Mean& q) noexcept { return Mean(q.w(), -q.x(), -q.y(), -q.z()); }

  /// \brief R(q) v: a body-frame vector in the reference frame.
  static Tangent rotate(const Mean& q, const Tangent& v) noexcept {
    const Tangent u(q.x(), q.y(), q.z());
    const Tangent t = T(2) * u.cross(v);
    return v + q.w() * t + u.cross(t);
  }
  /// \brief R(q)ᵀ v: a reference-frame vector in the body frame.
  static Tangent unrotate(const Mean& q, const Tangent& v) noexcept { return rotate(conjugate(q), v); }

  /// \brief Exp(φ) = (cos(θ/2), sin(θ/2) φ/θ), θ = |φ| (Solà 2017, eq. 101); series near θ = 0.
  static Mean exp(const Tangent& phi) noexcept {
    using std::cos;
    using std::sin;
    using std::sqrt;
    const T theta2 = phi.squaredNorm();
    T w, s;  // s = sin(θ/2)/θ
    if (static_cast<double>(detail::value_of(theta2)) < series_threshold()) {
      w = T(1) - theta2 * (T(1) / T(8) - theta2 / T(384));
      s = T(0.5) - theta2 * (T(1) / T(48) - theta2 / T(3840));
    } else {
      const T theta = sqrt(theta2);
      w = cos(T(0.5) * theta);
      s = sin(T(0.5) * theta) / theta;
    }
    return Mean(w, s * phi(0), s * phi(1), s * phi(2));
  }

  /// \brief Log(q): the rotation vector θu with θ ∈ [0, π] (q and −q give the same rotation; the sign with
  /// w ≥ 0 is taken), θ = 2 atan2(|v|, w) (Solà 2017, eq. 105; atan2 keeps full accuracy near 0 and near π);
  /// series of atan(t)/t near |v| = 0.
  static Tangent log(const Mean& q) noexcept {
    using std::atan2;
    using std::sqrt;
    const bool flip = detail::value_of(q.w()) < 0;
    const T w = flip ? T(-q.w()) : q.w();
    const Tangent v = flip ? Tangent(-q.x(), -q.y(), -q.z()) : Tangent(q.x(), q.y(), q.z());
    const T n2 = v.squaredNorm();
    T ratio;  // θ / |v|
    if (static_cast<double>(detail::value_of(n2)) <
        series_threshold() * static_cast<double>(detail::value_of(w * w))) {
      const T t2 = n2 / (w * w);  // atan(t)/t = 1 − t²/3 + t⁴/5 − …, t = |v|/w
      ratio = T(2) / w * (T(1) - t2 * (T(1) / T(3) - t2 / T(5)));
    } else {
      const T n = sqrt(n2);
      ratio = T(2) * atan2(n, w) / n;
    }
    return ratio * v;
  }

  /// \brief Right Jacobian \f$ J_r(\phi) = I - \frac{1-\cos\theta}{\theta^2}[\phi]_\times +
  /// \frac{\theta-\sin\theta}{\theta^3}[\phi]_\times^2 \f$, with Exp(φ + δ) ≈ Exp(φ) Exp(J_r(φ) δ) (Solà 2017,
  /// eq. 183; Chirikjian, "Stochastic Models, Information Theory, and Lie Groups", vol. 2, 2011); series near 0.
  static Matrix3 right_jacobian(const Tangent& phi) noexcept {
    using std::cos;
    using std::sin;
    using std::sqrt;
    const T theta2 = phi.squaredNorm();
    T a, b;
    if (static_cast<double>(detail::value_of(theta2)) < series_threshold()) {
      a = T(0.5) - theta2 / T(24);
      b = T(1) / T(6) - theta2 / T(120);
    } else {
      const T theta = sqrt(theta2);
      a = (T(1) - cos(theta)) / theta2;
      b = (theta - sin(theta)) / (theta2 * theta);
    }
    const Matrix3 k = detail::skew(phi);
    return Matrix3::Identity() - a * k + b * k * k;
  }

  static Mean boxplus(const Mean& x, const Tangent& d) noexcept { return project(multiply(x, exp(d))); }
  static Tangent boxminus(const Mean& y, const Mean& x) noexcept { return log(multiply(conjugate(x), y)); }

  /// \brief Reset Jacobian of the error-state filter after the correction δ moved the mean to x ⊞ δ: the error
  /// e ~ N(δ, P) about x becomes e⁺ ≈ J_r(δ)(e − δ) about x ⊞ δ, so P ← J_r(δ) P J_r(δ)ᵀ (first order, from
  /// Exp(δ + ε) ≈ Exp(δ) Exp(J_r(δ) ε); Solà 2017, sec. 7.2, there as I − [δ/2]×, its first-order term).
  static Matrix3 reset_jacobian(const Tangent& delta) noexcept { return right_jacobian(delta); }

  static bool finite(const Mean& x) noexcept { return detail::all_finite(x.coeffs()); }
  /// A unit quaternion within 10⁻³ in squared norm (looser than any rounding drift, tight enough to reject a
  /// zero or garbage quaternion); kernels renormalize what they write.
  static bool on_manifold(const Mean& x) noexcept {
    return finite(x) && std::abs(static_cast<double>(detail::value_of(x.squaredNorm())) - 1.0) <= 1e-3;
  }
  static Mean project(const Mean& x) noexcept {
    using std::sqrt;
    const T inv = T(1) / sqrt(x.squaredNorm());
    return Mean(x.w() * inv, x.x() * inv, x.y() * inv, x.z() * inv);
  }
  template <typename S>
  static typename rebind<S>::Mean cast(const Mean& x) noexcept {
    return typename rebind<S>::Mean(S(x.w()), S(x.x()), S(x.y()), S(x.z()));
  }
};

/// \brief The product of spaces, e.g. `Compound<So3<T>, Euclidean<T, 3>>` for attitude and gyro bias. The mean is
/// a std::tuple of the parts' means (`std::get<0>(est.mean)`), the tangent stacks the parts' tangents in order,
/// and ⊞, ⊟ and the reset Jacobian act part by part (the reset Jacobian is block-diagonal).
template <typename... Parts>
struct Compound {
  static_assert(sizeof...(Parts) > 0, "keel::Compound: at least one part");
  using Scalar = typename std::tuple_element_t<0, std::tuple<Parts...>>::Scalar;
  static_assert((std::is_same_v<typename Parts::Scalar, Scalar> && ...),
                "keel::Compound: all parts must have the same scalar type");
  static constexpr int dof = (Parts::dof + ...);
  static constexpr bool flat = (Parts::flat && ...);
  using Mean = std::tuple<typename Parts::Mean...>;
  using Tangent = Eigen::Matrix<Scalar, dof, 1>;
  template <typename S>
  using rebind = Compound<typename Parts::template rebind<S>...>;

  /// Offset of part I in the tangent vector.
  template <std::size_t I>
  static constexpr int offset() noexcept {
    constexpr int dofs[] = {Parts::dof...};
    int o = 0;
    for (std::size_t i = 0; i < I; ++i) o += dofs[i];
    return o;
  }
  template <std::size_t I>
  using Part = std::tuple_element_t<I, std::tuple<Parts...>>;

  static Mean identity() noexcept { return Mean(Parts::identity()...); }
  static Mean boxplus(const Mean& x, const Tangent& d) noexcept {
    return boxplus_impl(x, d, std::index_sequence_for<Parts...>{});
  }
  static Tangent boxminus(const Mean& y, const Mean& x) noexcept {
    Tangent t;
    boxminus_impl(y, x, t, std::index_sequence_for<Parts...>{});
    return t;
  }
  static Eigen::Matrix<Scalar, dof, dof> reset_jacobian(const Tangent& d) noexcept {
    Eigen::Matrix<Scalar, dof, dof> g = Eigen::Matrix<Scalar, dof, dof>::Zero();
    reset_impl(d, g, std::index_sequence_for<Parts...>{});
    return g;
  }
  /// \brief P ← G P Gᵀ for the block-diagonal reset Jacobian G, one curved part at a time (rows then columns of
  /// its block; flat parts' blocks of G are identities and cost nothing).
  static void reset_covariance(Eigen::Matrix<Scalar, dof, dof>& p, const Tangent& d) noexcept {
    reset_cov_impl(p, d, std::index_sequence_for<Parts...>{});
  }
  static bool finite(const Mean& x) noexcept { return all_of(x, std::index_sequence_for<Parts...>{}, false); }
  static bool on_manifold(const Mean& x) noexcept { return all_of(x, std::index_sequence_for<Parts...>{}, true); }
  static Mean project(const Mean& x) noexcept { return project_impl(x, std::index_sequence_for<Parts...>{}); }
  template <typename S>
  static typename rebind<S>::Mean cast(const Mean& x) noexcept {
    return cast_impl<S>(x, std::index_sequence_for<Parts...>{});
  }

 private:
  template <std::size_t... I>
  static Mean boxplus_impl(const Mean& x, const Tangent& d, std::index_sequence<I...>) noexcept {
    return Mean(Part<I>::boxplus(std::get<I>(x), typename Part<I>::Tangent(
                                                     d.template segment<Part<I>::dof>(offset<I>())))...);
  }
  template <std::size_t... I>
  static void boxminus_impl(const Mean& y, const Mean& x, Tangent& t, std::index_sequence<I...>) noexcept {
    ((t.template segment<Part<I>::dof>(offset<I>()) = Part<I>::boxminus(std::get<I>(y), std::get<I>(x))), ...);
  }
  template <std::size_t... I>
  static void reset_impl(const Tangent& d, Eigen::Matrix<Scalar, dof, dof>& g, std::index_sequence<I...>) noexcept {
    ((g.template block<Part<I>::dof, Part<I>::dof>(offset<I>(), offset<I>()) =
          Part<I>::reset_jacobian(typename Part<I>::Tangent(d.template segment<Part<I>::dof>(offset<I>())))),
     ...);
  }
  template <std::size_t I>
  static void reset_part(Eigen::Matrix<Scalar, dof, dof>& p, const Tangent& d) noexcept {
    if constexpr (!Part<I>::flat) {
      constexpr int k = Part<I>::dof, o = offset<I>();
      const Eigen::Matrix<Scalar, k, k> g =
          Part<I>::reset_jacobian(typename Part<I>::Tangent(d.template segment<k>(o)));
      const Eigen::Matrix<Scalar, k, dof> rows = g * p.template middleRows<k>(o);
      p.template middleRows<k>(o) = rows;
      const Eigen::Matrix<Scalar, dof, k> cols = p.template middleCols<k>(o) * g.transpose();
      p.template middleCols<k>(o) = cols;
    }
  }
  template <std::size_t... I>
  static void reset_cov_impl(Eigen::Matrix<Scalar, dof, dof>& p, const Tangent& d, std::index_sequence<I...>) noexcept {
    (reset_part<I>(p, d), ...);
  }
  template <std::size_t... I>
  static bool all_of(const Mean& x, std::index_sequence<I...>, bool manifold) noexcept {
    return manifold ? (Part<I>::on_manifold(std::get<I>(x)) && ...) : (Part<I>::finite(std::get<I>(x)) && ...);
  }
  template <std::size_t... I>
  static Mean project_impl(const Mean& x, std::index_sequence<I...>) noexcept {
    return Mean(Part<I>::project(std::get<I>(x))...);
  }
  template <typename S, std::size_t... I>
  static typename rebind<S>::Mean cast_impl(const Mean& x, std::index_sequence<I...>) noexcept {
    return typename rebind<S>::Mean(Part<I>::template cast<S>(std::get<I>(x))...);
  }
};

/// \brief An estimate on a space: the mean on the manifold, the covariance of the tangent-space error
/// e = truth ⊟ mean (dof × dof). For Euclidean<T, N> it is a Gaussian<T, N> by another name.
template <typename Space>
struct ManifoldGaussian {
  using space = Space;
  using Scalar = typename Space::Scalar;
  static constexpr int dim = Space::dof;
  using Mean = typename Space::Mean;
  using Tangent = typename Space::Tangent;
  using Matrix = Eigen::Matrix<Scalar, dim, dim>;
  Mean mean = Space::identity();
  Matrix cov = Matrix::Identity();
};

/// \brief NEES of a manifold estimate against the true state: \f$ e^T P^{-1} e,\ e = x_{true} \boxminus \hat x \f$
/// (Bar-Shalom, Li & Kirubarajan, "Estimation with Applications to Tracking and Navigation", 2001, sec. 5.4.2,
/// with the error taken in the tangent space). NaN on non-finite input, +infinity when P is not positive-definite.
template <typename Space>
typename Space::Scalar nees(const ManifoldGaussian<Space>& est, const typename Space::Mean& truth) noexcept {
  using T = typename Space::Scalar;
  constexpr int D = Space::dof;
  if (!Space::finite(truth) || !Space::finite(est.mean) || !detail::all_finite(est.cov))
    return std::numeric_limits<T>::quiet_NaN();
  Eigen::Matrix<T, D, D> l = est.cov;
  if (!detail::cholesky_in_place(l)) return std::numeric_limits<T>::infinity();
  Eigen::Matrix<T, D, 1> e = Space::boxminus(truth, est.mean);
  detail::forward_substitute(l, e);
  return detail::nees_value(e.squaredNorm());
}

}  // namespace keel
