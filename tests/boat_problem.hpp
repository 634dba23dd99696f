#pragma once
// Scenario 2 (ours, demo numbers) shared by the nonlinear-filter tests: a survey boat on a lake with state
// (x, y, speed, heading, turn rate), a coordinated-turn motion model, GNSS position fixes and a compass.

#include <keel/models/planar.hpp>

#include "support.hpp"

namespace keel_test {

/// GNSS position fix: z = (x, y), a model for the nonlinear filters (call operator templated over the scalar).
template <typename T>
struct Fix {
  template <typename S>
  Eigen::Matrix<S, 2, 1> operator()(const Eigen::Matrix<S, 5, 1>& x) const {
    return Eigen::Matrix<S, 2, 1>(x(0), x(1));
  }
};

/// GNSS position and compass heading in one report: z = (x, y, ψ), the heading residual wrapped.
template <typename T>
struct FixAndCompass {
  template <typename S>
  Eigen::Matrix<S, 3, 1> operator()(const Eigen::Matrix<S, 5, 1>& x) const {
    return Eigen::Matrix<S, 3, 1>(x(0), x(1), x(3));
  }
  Eigen::Matrix<T, 3, 1> residual(const Eigen::Matrix<T, 3, 1>& z, const Eigen::Matrix<T, 3, 1>& zhat) const {
    return Eigen::Matrix<T, 3, 1>(z(0) - zhat(0), z(1) - zhat(1), keel::models::wrap_angle(z(2) - zhat(2)));
  }
};

template <typename T>
struct Boat {
  T dt = T(0.5);
  keel::models::CoordinatedTurn<T> motion;
  FixAndCompass<T> sensor;
  Eigen::Matrix<T, 5, 5> q;
  Eigen::Matrix<T, 3, 3> r;
  keel::Gaussian<T, 5> prior;
  Boat() {
    Eigen::Matrix<T, 5, 1> x0;
    x0 << T(0), T(0), T(2), T(0.3), T(0.05);
    q = motion.noise(x0, dt, T(0.1), T(0.02));
    q.diagonal().array() += T(1e-6);  // keep Q positive-definite (the model noise is rank 2)
    r = Eigen::Matrix<T, 3, 1>(T(1.5 * 1.5), T(1.5 * 1.5), T(0.05 * 0.05)).asDiagonal();
    prior.mean = x0;
    prior.cov = Eigen::Matrix<T, 5, 1>(T(4), T(4), T(0.25), T(0.01), T(1e-3)).asDiagonal();
  }
};

}  // namespace keel_test
