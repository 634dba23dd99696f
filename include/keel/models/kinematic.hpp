#pragma once
/// \file
/// \brief Ready-made kinematic motion models: constant velocity and constant acceleration in 1–3 axes, each with
/// the discrete (piecewise-constant) and the continuous white-noise process-noise models.

#include <Eigen/Core>

namespace keel::models {

/// \brief A chain of integrators per axis: Order 2 is constant velocity (position, velocity), Order 3 constant
/// acceleration (position, velocity, acceleration). The state is axis-major: for Axes = 2, Order = 2 it is
/// (p_x, v_x, p_y, v_y). Each axis is independent; all matrices are block-diagonal with one block per axis.
template <typename T, int Axes, int Order>
struct Kinematic {
  static_assert(Axes >= 1 && Axes <= 3, "keel::models::Kinematic: 1 to 3 axes");
  static_assert(Order == 2 || Order == 3, "keel::models::Kinematic: Order 2 (constant velocity) or 3 (constant acceleration)");
  static constexpr int dim = Axes * Order;
  using Vector = Eigen::Matrix<T, dim, 1>;
  using Matrix = Eigen::Matrix<T, dim, dim>;
  using Block = Eigen::Matrix<T, Order, Order>;

  /// \brief Transition over dt: per axis \f$ F_{ij} = dt^{\,j-i}/(j-i)! \f$ for j ≥ i (exact for the chain).
  static Matrix transition(T dt) noexcept {
    Block b = Block::Zero();
    for (int i = 0; i < Order; ++i) {
      T term = T(1);
      for (int j = i; j < Order; ++j) {
        b(i, j) = term;
        term = term * dt / T(j - i + 1);
      }
    }
    return per_axis(b);
  }

  /// \brief Continuous white-noise model: white noise of intensity q (units²/time of the highest state's rate)
  /// drives the last state of each axis; \f$ Q = q\int_0^{dt} g(s) g(s)^T ds \f$ with
  /// \f$ g_i(s) = s^{a_i}/a_i!,\ a_i = \mathrm{Order}-1-i \f$, i.e.
  /// \f$ Q_{ij} = q\, dt^{a_i+a_j+1} / ((a_i+a_j+1)\, a_i!\, a_j!) \f$: for constant velocity
  /// q [[dt³/3, dt²/2], [dt²/2, dt]] (Bar-Shalom, Li & Kirubarajan, "Estimation with Applications to Tracking and
  /// Navigation", 2001, sec. 6.2; from memory). Equals keel::discretize of the same continuous model.
  static Matrix noise_continuous(T dt, T intensity) noexcept {
    Block b;
    for (int i = 0; i < Order; ++i)
      for (int j = 0; j < Order; ++j) {
        const int ai = Order - 1 - i;
        const int aj = Order - 1 - j;
        const int e = ai + aj + 1;
        T v = intensity;
        for (int k = 0; k < e; ++k) v *= dt;
        b(i, j) = v / (T(e) * factorial(ai) * factorial(aj));
      }
    return per_axis(b);
  }

  /// \brief Discrete (piecewise-constant) white-noise model \f$ Q = \sigma^2 G G^T \f$ per axis
  /// (Bar-Shalom, Li & Kirubarajan, 2001, sec. 6.3; from memory). Constant velocity: the acceleration is
  /// constant over each step with standard deviation σ, \f$ G = (dt^2/2,\ dt) \f$. Constant acceleration: the
  /// acceleration receives a white increment of standard deviation σ at the start of each step, so
  /// \f$ G = F e_3 = (dt^2/2,\ dt,\ 1) \f$.
  static Matrix noise_piecewise_constant(T dt, T sigma) noexcept {
    Eigen::Matrix<T, Order, 1> g;
    if constexpr (Order == 2) {
      g << dt * dt / T(2), dt;
    } else {
      g << dt * dt / T(2), dt, T(1);
    }
    return per_axis(Block((sigma * sigma) * g * g.transpose()));
  }

  /// \brief Measurement matrix picking each axis's position.
  static Eigen::Matrix<T, Axes, dim> position_matrix() noexcept {
    Eigen::Matrix<T, Axes, dim> h = Eigen::Matrix<T, Axes, dim>::Zero();
    for (int a = 0; a < Axes; ++a) h(a, a * Order) = T(1);
    return h;
  }

 private:
  static constexpr T factorial(int n) noexcept {
    T f = T(1);
    for (int k = 2; k <= n; ++k) f *= T(k);
    return f;
  }
  static Matrix per_axis(const Block& b) noexcept {
    Matrix m = Matrix::Zero();
    for (int a = 0; a < Axes; ++a) m.template block<Order, Order>(a * Order, a * Order) = b;
    return m;
  }
};

template <typename T, int Axes>
using ConstantVelocity = Kinematic<T, Axes, 2>;
template <typename T, int Axes>
using ConstantAcceleration = Kinematic<T, Axes, 3>;

}  // namespace keel::models
