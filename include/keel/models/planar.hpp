#pragma once
/// \file
/// \brief Ready-made planar nonlinear models: the coordinated turn (motion) and range/bearing and heading
/// (measurement) with angle-wrapping residuals. Call operators are templates over the scalar so that the
/// forward-mode automatic differentiation of the EKF can run through them; analytic Jacobians are supplied.

#include <cmath>

#include <Eigen/Core>

namespace keel::models {

/// \brief Wraps an angle to (−π, π].
template <typename S>
S wrap_angle(S a) noexcept {
  using std::floor;
  const S two_pi = S(6.283185307179586476925286766559);
  const S pi = S(3.1415926535897932384626433832795);
  S w = a - two_pi * floor((a + pi) / two_pi);  // [−π, π)
  if (w <= -pi) w += two_pi;
  return w;
}

namespace detail {
/// sin(u)/u and its derivative (u cos u − sin u)/u², by their Taylor series below |u| < 1e-2 (error < u⁶/5040
/// and u⁵/840 relative to the leading terms: below double's ε there), exact expressions above.
template <typename S>
void sinc_and_derivative(S u, S& s, S& ds) noexcept {
  using std::cos;
  using std::sin;
  if (u * u < S(1) / S(10000)) {  // |u| < 1e-2
    const S u2 = u * u;
    s = S(1) - u2 / S(6) + u2 * u2 / S(120);
    ds = u * (S(-1) / S(3) + u2 / S(30));
  } else {
    s = sin(u) / u;
    ds = (u * cos(u) - sin(u)) / (u * u);
  }
}
}  // namespace detail

/// \brief Coordinated turn in the plane with state (x, y, speed v, heading ψ, turn rate ω): constant speed and
/// turn rate over each step. In the form valid for every ω, including ω = 0 (no division by ω), with
/// \f$ u = \omega\,dt/2,\ \theta = \psi + u \f$:
/// \f$ x^+ = x + v\,dt\,\mathrm{sinc}(u)\cos\theta,\ y^+ = y + v\,dt\,\mathrm{sinc}(u)\sin\theta,
/// \ \psi^+ = \psi + \omega\,dt \f$, v and ω unchanged — the chord of the arc of radius v/ω (from
/// \f$ \sin(\psi+\omega dt) - \sin\psi = 2\cos\theta\sin u \f$; the model of Bar-Shalom, Li & Kirubarajan, 2001,
/// sec. 11.7, in polar velocity; from memory). ψ is not wrapped (the mean stays continuous); measurement
/// models wrap their residuals.
template <typename T>
struct CoordinatedTurn {
  static constexpr int dim = 5;
  using Vector = Eigen::Matrix<T, 5, 1>;
  using Matrix = Eigen::Matrix<T, 5, 5>;

  template <typename S>
  Eigen::Matrix<S, 5, 1> operator()(const Eigen::Matrix<S, 5, 1>& x, S dt) const noexcept {
    using std::cos;
    using std::sin;
    S s;
    S ds;
    detail::sinc_and_derivative(S(x(4) * dt / S(2)), s, ds);
    const S theta = x(3) + x(4) * dt / S(2);
    Eigen::Matrix<S, 5, 1> out = x;
    out(0) += x(2) * dt * s * cos(theta);
    out(1) += x(2) * dt * s * sin(theta);
    out(3) += x(4) * dt;
    return out;
  }

  /// \brief ∂f/∂x, differentiated from the form above (s = sinc(u), s' its derivative).
  Matrix jacobian(const Vector& x, T dt) const noexcept {
    using std::cos;
    using std::sin;
    T s;
    T ds;
    detail::sinc_and_derivative(T(x(4) * dt / T(2)), s, ds);
    const T theta = x(3) + x(4) * dt / T(2);
    const T c = cos(theta);
    const T sn = sin(theta);
    const T v = x(2);
    Matrix j = Matrix::Identity();
    j(0, 2) = dt * s * c;
    j(0, 3) = -v * dt * s * sn;
    j(0, 4) = v * dt * dt / T(2) * (ds * c - s * sn);
    j(1, 2) = dt * s * sn;
    j(1, 3) = v * dt * s * c;
    j(1, 4) = v * dt * dt / T(2) * (ds * sn + s * c);
    j(3, 4) = dt;
    return j;
  }

  /// \brief Piecewise-constant accelerations over the step: a linear acceleration (std σ_a) along the heading
  /// and an angular acceleration (std σ_α): \f$ Q = \sigma_a^2 g_a g_a^T + \sigma_\alpha^2 g_\alpha g_\alpha^T \f$,
  /// \f$ g_a = (\tfrac{dt^2}{2}\cos\psi,\ \tfrac{dt^2}{2}\sin\psi,\ dt,\ 0,\ 0),\ g_\alpha = (0, 0, 0,\ \tfrac{dt^2}{2},\ dt) \f$.
  Matrix noise(const Vector& x, T dt, T sigma_accel, T sigma_turn_accel) const noexcept {
    using std::cos;
    using std::sin;
    Vector ga = Vector::Zero();
    ga << dt * dt / T(2) * cos(x(3)), dt * dt / T(2) * sin(x(3)), dt, T(0), T(0);
    Vector gw = Vector::Zero();
    gw << T(0), T(0), T(0), dt * dt / T(2), dt;
    return (sigma_accel * sigma_accel) * ga * ga.transpose() + (sigma_turn_accel * sigma_turn_accel) * gw * gw.transpose();
  }
};

/// \brief Range and bearing from a sensor at `origin` to the planar position held in states IX, IY of an
/// N-state vector: \f$ z = (\sqrt{\Delta x^2 + \Delta y^2},\ \mathrm{atan2}(\Delta y, \Delta x)) \f$, bearing
/// counter-clockwise from the x axis; the residual wraps the bearing difference to (−π, π].
template <typename T, int N, int IX = 0, int IY = 1>
struct RangeBearing {
  static_assert(IX >= 0 && IX < N && IY >= 0 && IY < N && IX != IY,
                "keel::models::RangeBearing: IX and IY must be distinct state indices");
  Eigen::Matrix<T, 2, 1> origin = Eigen::Matrix<T, 2, 1>::Zero();

  template <typename S>
  Eigen::Matrix<S, 2, 1> operator()(const Eigen::Matrix<S, N, 1>& x) const noexcept {
    using std::atan2;
    using std::sqrt;
    const S dx = x(IX) - S(origin(0));
    const S dy = x(IY) - S(origin(1));
    return Eigen::Matrix<S, 2, 1>(sqrt(dx * dx + dy * dy), atan2(dy, dx));
  }

  /// \brief ∂z/∂x: range row (Δx, Δy)/r, bearing row (−Δy, Δx)/r² (undefined at r = 0: returns zeros there).
  Eigen::Matrix<T, 2, N> jacobian(const Eigen::Matrix<T, N, 1>& x) const noexcept {
    const T dx = x(IX) - origin(0);
    const T dy = x(IY) - origin(1);
    const T r2 = dx * dx + dy * dy;
    Eigen::Matrix<T, 2, N> j = Eigen::Matrix<T, 2, N>::Zero();
    if (!(r2 > T(0))) return j;
    const T r = std::sqrt(r2);
    j(0, IX) = dx / r;
    j(0, IY) = dy / r;
    j(1, IX) = -dy / r2;
    j(1, IY) = dx / r2;
    return j;
  }

  Eigen::Matrix<T, 2, 1> residual(const Eigen::Matrix<T, 2, 1>& z, const Eigen::Matrix<T, 2, 1>& zhat) const noexcept {
    return Eigen::Matrix<T, 2, 1>(z(0) - zhat(0), wrap_angle(z(1) - zhat(1)));
  }

  /// \brief Weighted mean of sigma points (columns) for the unscented transform: the bearing is averaged as
  /// wrapped deviations from the first point, \f$ \bar b = b_0 + \sum_i w_i\,\mathrm{wrap}(b_i - b_0) \f$, so a
  /// spread across ±π (a target behind the sensor) averages to ≈ ±π instead of ≈ 0; valid for any weights,
  /// negative ones included, while the spread stays below π.
  template <int P>
  Eigen::Matrix<T, 2, 1> mean(const Eigen::Matrix<T, 2, P>& points, const Eigen::Matrix<T, P, 1>& weights) const noexcept {
    T range = T(0);
    T offset = T(0);
    for (int i = 0; i < P; ++i) {
      range += weights(i) * points(0, i);
      offset += weights(i) * wrap_angle(points(1, i) - points(1, 0));
    }
    return Eigen::Matrix<T, 2, 1>(range, wrap_angle(points(1, 0) + offset));
  }
};

/// \brief A heading (compass) measurement of state I: z = ψ, residual wrapped to (−π, π].
template <typename T, int N, int I>
struct Heading {
  static_assert(I >= 0 && I < N, "keel::models::Heading: I must be a state index");

  template <typename S>
  Eigen::Matrix<S, 1, 1> operator()(const Eigen::Matrix<S, N, 1>& x) const noexcept {
    return Eigen::Matrix<S, 1, 1>(x(I));
  }
  Eigen::Matrix<T, 1, N> jacobian(const Eigen::Matrix<T, N, 1>&) const noexcept {
    Eigen::Matrix<T, 1, N> j = Eigen::Matrix<T, 1, N>::Zero();
    j(0, I) = T(1);
    return j;
  }
  Eigen::Matrix<T, 1, 1> residual(const Eigen::Matrix<T, 1, 1>& z, const Eigen::Matrix<T, 1, 1>& zhat) const noexcept {
    return Eigen::Matrix<T, 1, 1>(wrap_angle(z(0) - zhat(0)));
  }
};

}  // namespace keel::models
