#pragma once
// The kernels measured on Cortex-M targets and their test vectors, shared by the bare-metal build (one kernel
// per image, kernel.cpp) and the host reference (host_reference.cpp), so both run the same code on the same data.
//
// Scenario (ours): a parcel drone's position and velocity in 3-D (6 states, constant velocity, axis-major
// (p_x, v_x, p_y, v_y, p_z, v_z), 50 Hz). The linear kernels see a position fix (3 measurements); the EKF and
// UKF see the ranges to two ultra-wideband beacons on the landing pad and the barometric altitude (3
// measurements). The attitude kernels (error-state EKF and manifold UKF on attitude and gyro bias, 6 tangent
// dimensions) see a gyro reading and an accelerometer reading (3 measurements) of a drone waiting tilted on its
// pad. Measurements come from a polynomial trajectory and an integer generator, so the target and the
// host get the very same bits (no libm in the data).
#include <cstdint>

#include <keel/ekf.hpp>
#include <keel/linear.hpp>
#include <keel/manifold_filter.hpp>
#include <keel/models/attitude.hpp>
#include <keel/models/kinematic.hpp>
#include <keel/sqrt.hpp>
#include <keel/ud.hpp>
#include <keel/ukf.hpp>

namespace keel_target {

constexpr int kStates = 6;
constexpr int kMeasurements = 3;
constexpr int kSteps = 100;
/// Values a kernel reports: the mean, then the upper triangle of the covariance row by row.
constexpr int kResults = kStates + kStates * (kStates + 1) / 2;

template <typename T>
using Vec = Eigen::Matrix<T, kStates, 1>;
template <typename T>
using Meas = Eigen::Matrix<T, kMeasurements, 1>;

template <typename T>
constexpr T kDt = T(0.02);

/// Uniform noise in [-1/2, 1/2) from a 32-bit linear congruential generator (Numerical Recipes constants).
struct Noise {
  std::uint32_t state = 12345u;
  template <typename T>
  T next() {
    state = 1664525u * state + 1013904223u;
    return T(static_cast<std::int32_t>(state >> 8) - (1 << 23)) / T(1 << 24);
  }
};

/// True position at step k: a climbing, curving path (a cubic in time per axis).
template <typename T>
Eigen::Matrix<T, 3, 1> truth_position(int k) {
  const T t = T(k) * kDt<T>;
  return Eigen::Matrix<T, 3, 1>(T(2) + T(3) * t - T(0.5) * t * t, T(-1) + T(1.5) * t + T(0.2) * t * t * t, T(0.5) + T(2) * t);
}

/// The two beacons' positions (m) on the landing pad.
template <typename T>
Eigen::Matrix<T, 3, 2> beacons() {
  Eigen::Matrix<T, 3, 2> b;
  b << T(0), T(4), T(0), T(0), T(0), T(0);
  return b;
}

/// Ranges to both beacons and the altitude, for a 6-state x (the EKF's measurement model; analytic Jacobian).
template <typename T>
struct BeaconsAndBaro {
  template <typename S>
  Eigen::Matrix<S, 3, 1> operator()(const Eigen::Matrix<S, kStates, 1>& x) const {
    const Eigen::Matrix<T, 3, 2> b = beacons<T>();
    Eigen::Matrix<S, 3, 1> z;
    for (int i = 0; i < 2; ++i) {
      const S dx = x(0) - b(0, i), dy = x(2) - b(1, i), dz = x(4) - b(2, i);
      using std::sqrt;
      z(i) = sqrt(dx * dx + dy * dy + dz * dz);
    }
    z(2) = x(4);
    return z;
  }
  /// ∂z/∂x: range rows (Δx, 0, Δy, 0, Δz, 0)/r (zero at r = 0), altitude row e₅ᵀ.
  Eigen::Matrix<T, 3, kStates> jacobian(const Eigen::Matrix<T, kStates, 1>& x) const {
    const Eigen::Matrix<T, 3, 2> b = beacons<T>();
    Eigen::Matrix<T, 3, kStates> j = Eigen::Matrix<T, 3, kStates>::Zero();
    for (int i = 0; i < 2; ++i) {
      const T dx = x(0) - b(0, i), dy = x(2) - b(1, i), dz = x(4) - b(2, i);
      const T r = std::sqrt(dx * dx + dy * dy + dz * dz);
      if (r > T(0)) {
        j(i, 0) = dx / r;
        j(i, 2) = dy / r;
        j(i, 4) = dz / r;
      }
    }
    j(2, 4) = T(1);
    return j;
  }
};

/// Constant velocity over dt as a motion model for the EKF and UKF (x ↦ F x; Jacobian F).
template <typename T>
struct ConstantVelocity {
  Eigen::Matrix<T, kStates, kStates> f = keel::models::Kinematic<T, 3, 2>::transition(kDt<T>);
  template <typename S>
  Eigen::Matrix<S, kStates, 1> operator()(const Eigen::Matrix<S, kStates, 1>& x) const {
    return f.template cast<S>() * x;
  }
  Eigen::Matrix<T, kStates, kStates> jacobian(const Eigen::Matrix<T, kStates, 1>&) const { return f; }
};

/// The measurements of both sensor sets for all steps, generated once before the timed loop (generate(), not a
/// constructor: a global object of it needs no start-up constructor call on the target).
template <typename T>
struct TestVectors {
  Meas<T> fix[kSteps];     // position fix, uniform noise of σ = 0.6/√12 ≈ 0.17 m
  Meas<T> ranges[kSteps];  // two ranges (σ ≈ 0.058 m) and the altitude (σ ≈ 0.12 m)
  Meas<T> gyro[kSteps];    // at rest: the bias (0.01, −0.02, 0.005) rad/s, uniform noise of σ ≈ 0.006 rad/s
  Meas<T> accel[kSteps];   // gravity seen tilted, (0.5, −0.3, 9.79) m/s², uniform noise of σ ≈ 0.09 m/s²
  void generate() {
    Noise noise;
    Noise imu{777u};  // a stream of its own: the other kernels' data stay as they were
    const Eigen::Matrix<T, 3, 2> b = beacons<T>();
    for (int k = 0; k < kSteps; ++k) {
      const Eigen::Matrix<T, 3, 1> p = truth_position<T>(k + 1);
      for (int i = 0; i < 3; ++i) fix[k](i) = p(i) + T(0.6) * noise.next<T>();
      for (int i = 0; i < 2; ++i) ranges[k](i) = (p - b.col(i)).norm() + T(0.2) * noise.next<T>();
      ranges[k](2) = p(2) + T(0.4) * noise.next<T>();
      gyro[k] = Meas<T>(T(0.01), T(-0.02), T(0.005));
      accel[k] = Meas<T>(T(0.5), T(-0.3), T(9.79));
      for (int i = 0; i < 3; ++i) {
        gyro[k](i) += T(0.02) * imu.next<T>();
        accel[k](i) += T(0.3) * imu.next<T>();
      }
    }
  }
};

enum class Form { joseph, sqrt, ud, ekf, ukf, mekf, ukf_manifold };

template <Form F>
constexpr bool is_attitude = F == Form::mekf || F == Form::ukf_manifold;

/// One filter of the given form with its models and noise matrices; step() is what the targets time.
template <typename T, Form F>
struct Kernel {
  using Attitude = keel::models::AttitudeBias<T>;
  using Estimate = std::conditional_t<
      F == Form::sqrt, keel::SqrtGaussian<T, kStates>,
      std::conditional_t<F == Form::ud, keel::UdGaussian<T, kStates>,
                         std::conditional_t<is_attitude<F>, keel::ManifoldGaussian<Attitude>,
                                            keel::Gaussian<T, kStates>>>>;
  using Model = keel::models::Kinematic<T, 3, 2>;
  Estimate est;
  Eigen::Matrix<T, kStates, kStates> f = Model::transition(kDt<T>);
  Eigen::Matrix<T, kStates, kStates> q = Model::noise_piecewise_constant(kDt<T>, T(0.5));
  Eigen::Matrix<T, kMeasurements, kStates> h = Model::position_matrix();
  Meas<T> r_diag;
  Eigen::Matrix<T, kMeasurements, kMeasurements> r;
  ConstantVelocity<T> motion;
  BeaconsAndBaro<T> sensor;
  keel::models::GyroStrapdown strapdown;
  keel::models::ReferenceDirection<T> gravity{Meas<T>(T(0), T(0), T(9.81))};
  keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0);

  /// Returns 0 on success, else the failing Status's value.
  int init() {
    keel::Gaussian<T, kStates> g;
    g.mean << T(2), T(3), T(-1), T(1.5), T(0.5), T(2);
    g.cov = Vec<T>(T(1), T(1), T(1), T(1), T(1), T(1)).asDiagonal();
    if constexpr (F == Form::ekf || F == Form::ukf)
      r_diag = Meas<T>(T(0.01), T(0.01), T(0.04));
    else
      r_diag = Meas<T>(T(0.09), T(0.09), T(0.09));
    r = r_diag.asDiagonal();
    keel::Status s = keel::Status::ok;
    if constexpr (is_attitude<F>) {
      // Level, heading 0.3 rad (a unit quaternion from literals and one square root: the same bits everywhere),
      // bias unknown: 0.1 rad per axis, 0.02 rad/s; gyro noise 0.006 rad/s over dt, bias walk 1e-5 rad/s per step.
      est.mean = typename Attitude::Mean(keel::So3<T>::project(Eigen::Quaternion<T>(T(0.989), T(0), T(0), T(0.149))),
                                         Meas<T>::Zero());
      est.cov.setZero();
      est.cov.diagonal() << Meas<T>::Constant(T(0.01)), Meas<T>::Constant(T(4e-4));
      q.setZero();
      q.diagonal() << Meas<T>::Constant(T(0.006 * 0.006) * kDt<T> * kDt<T>), Meas<T>::Constant(T(1e-10));
      r = Eigen::Matrix<T, 3, 3>::Identity() * T(0.0081);
    } else if constexpr (F == Form::sqrt) s = keel::to_sqrt(g, est);
    else if constexpr (F == Form::ud) s = keel::to_ud(g, est);
    else est = g;
    return static_cast<int>(s);
  }

  /// predict + correct with this step's position fix (linear forms) or ranges and altitude (EKF, UKF);
  /// returns 0 on success, else the first failing Status's value. The two kernels are called from separate
  /// functions, as firmware calls them (the time update at the model's rate, the correction when a measurement
  /// arrives), so the stack holds one kernel's frame at a time.
  int step(const Meas<T>& fix, const Meas<T>& ranges, const Meas<T>& gyro, const Meas<T>& accel) {
    const int s = time_update(gyro);
    return s != 0 ? s : measurement_update(fix, ranges, accel);
  }

#if defined(__GNUC__) || defined(__clang__)
#define KEEL_TARGET_NOINLINE __attribute__((noinline))
#else
#define KEEL_TARGET_NOINLINE
#endif
  KEEL_TARGET_NOINLINE int time_update(const Meas<T>& gyro) {
    keel::Status s = keel::Status::ok;
    if constexpr (F == Form::mekf) s = keel::ekf::predict(est, strapdown, q, gyro, kDt<T>);
    else if constexpr (F == Form::ukf_manifold) s = keel::ukf::predict(est, strapdown, q, rule, gyro, kDt<T>);
    else if constexpr (F == Form::ekf) s = keel::ekf::predict(est, motion, q);
    else if constexpr (F == Form::ukf) s = keel::ukf::predict(est, motion, q, rule);
    else s = keel::predict(est, f, q);
    return static_cast<int>(s);
  }

  KEEL_TARGET_NOINLINE int measurement_update(const Meas<T>& fix, const Meas<T>& ranges, const Meas<T>& accel) {
    keel::Status s = keel::Status::ok;
    if constexpr (F == Form::mekf) s = keel::ekf::correct(est, gravity, r, accel).status;
    else if constexpr (F == Form::ukf_manifold) s = keel::ukf::correct(est, gravity, r, accel, rule).status;
    else if constexpr (F == Form::ekf) s = keel::ekf::correct(est, sensor, r, ranges).status;
    else if constexpr (F == Form::ukf) s = keel::ukf::correct(est, sensor, r, ranges, rule).status;
    else if constexpr (F == Form::ud) s = keel::correct_sequential(est, h, r_diag, fix).status;
    else s = keel::correct(est, h, r, fix).status;
    return static_cast<int>(s);
  }

  /// Writes kResults values: the mean, then the covariance's upper triangle row by row.
  int results(T* out) const {
    keel::Gaussian<T, kStates> g;
    keel::Status s = keel::Status::ok;
    if constexpr (is_attitude<F>) {
      g.mean << keel::So3<T>::log(std::get<0>(est.mean)), std::get<1>(est.mean);
      g.cov = est.cov;
    } else if constexpr (F == Form::sqrt || F == Form::ud) s = keel::to_gaussian(est, g);
    else g = est;
    int n = 0;
    for (int i = 0; i < kStates; ++i) out[n++] = g.mean(i);
    for (int i = 0; i < kStates; ++i)
      for (int j = i; j < kStates; ++j) out[n++] = g.cov(i, j);
    return static_cast<int>(s);
  }
};

}  // namespace keel_target
