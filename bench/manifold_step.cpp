// Attitude benchmarks on the manifold state (attitude on SO(3), gyro bias; 6 tangent dimensions), predicting with a
// gyro reading and correcting with the accelerometer (6x3) or with accelerometer and magnetometer stacked (6x6):
// `mekf_step/{analytic,autodiff}/<scalar>/6x{3,6}` (error-state EKF: predict + correct + covariance reset) and
// `ukf_step/manifold/<scalar>/6x{3,6}` (sigma points by ⊞, iterated mean on SO(3)). The 5x3 ekf_step and
// ukf_step of nonlinear_step.cpp are the vector neighbours to compare with.
#include <cstdlib>
#include <string>

#include <benchmark/benchmark.h>
#include <keel/manifold_filter.hpp>
#include <keel/models/attitude.hpp>

#include "kf_step.hpp"

namespace keel_bench {
namespace {

/// Accelerometer and magnetometer in one 6-vector: two reference directions stacked (analytic tangent Jacobian
/// from models::ReferenceDirection's, rows stacked).
template <typename T>
struct AccelAndField {
  keel::models::ReferenceDirection<T> accel{Eigen::Matrix<T, 3, 1>(T(0), T(0), T(9.81))};
  keel::models::ReferenceDirection<T> field{Eigen::Matrix<T, 3, 1>(T(0.19), T(-0.02), T(-0.44))};
  template <typename S>
  Eigen::Matrix<S, 6, 1> operator()(const std::tuple<Eigen::Quaternion<S>, Eigen::Matrix<S, 3, 1>>& x) const noexcept {
    Eigen::Matrix<S, 6, 1> z;
    z << accel(x), field(x);
    return z;
  }
  Eigen::Matrix<T, 6, 6> jacobian(const typename keel::models::AttitudeBias<T>::Mean& x) const noexcept {
    Eigen::Matrix<T, 6, 6> h;
    h << accel.jacobian(x), field.jacobian(x);
    return h;
  }
};

template <typename T>
struct AttitudeSetup {
  using Space = keel::models::AttitudeBias<T>;
  using V = Eigen::Matrix<T, 3, 1>;
  keel::models::GyroStrapdown motion;
  keel::models::ReferenceDirection<T> accel{V(T(0), T(0), T(9.81))};
  Eigen::Matrix<T, 6, 6> q = Eigen::Matrix<T, 6, 6>::Zero();
  Eigen::Matrix<T, 3, 3> r = Eigen::Matrix<T, 3, 3>::Identity() * T(0.0925);
  V omega{T(0.2), T(-0.1), T(0.4)};
  V z{T(0.1), T(-0.2), T(9.8)};
  AccelAndField<T> both;
  Eigen::Matrix<T, 6, 6> r6 = Eigen::Matrix<T, 6, 1>(T(0.0925), T(0.0925), T(0.0925), T(1e-5), T(1e-5), T(1e-5))
                                  .asDiagonal();
  Eigen::Matrix<T, 6, 1> z6 = (Eigen::Matrix<T, 6, 1>() << T(0.1), T(-0.2), T(9.8), T(0.15), T(-0.1), T(-0.45))
                                  .finished();
  T dt = T(0.005);
  keel::ManifoldGaussian<Space> prior;
  AttitudeSetup() {
    q.diagonal() << V::Constant(T(4e-10)), V::Constant(T(1e-10));
    prior.mean = typename Space::Mean(keel::So3<T>::exp(V(T(0.05), T(-0.02), T(0.7))), V(T(0.01), T(0), T(0)));
    prior.cov.setZero();
    prior.cov.diagonal() << V::Constant(T(1e-3)), V::Constant(T(1e-4));
  }
};

/// Flops of the linear algebra of one error-state EKF step, model evaluations excluded: the linear Joseph step
/// (kf_step_flops) plus the covariance reset G P Gᵀ (two 6×6 products, 4n³).
constexpr double mekf_step_flops(int n, int m) { return kf_step_flops(n, m) + 4.0 * n * n * n; }

/// The measurement of a 6xM step: the accelerometer (M = 3) or accelerometer and magnetometer (M = 6).
template <int M, bool Autodiff, typename T>
keel::Status correct_once(keel::ManifoldGaussian<keel::models::AttitudeBias<T>>& est, const AttitudeSetup<T>& s) {
  if constexpr (M == 3 && Autodiff) return keel::ekf::correct(est, keel::autodiff_model(s.accel), s.r, s.z).status;
  if constexpr (M == 3 && !Autodiff) return keel::ekf::correct(est, s.accel, s.r, s.z).status;
  if constexpr (M == 6 && Autodiff) return keel::ekf::correct(est, keel::autodiff_model(s.both), s.r6, s.z6).status;
  if constexpr (M == 6 && !Autodiff) return keel::ekf::correct(est, s.both, s.r6, s.z6).status;
}

template <typename T, int M, bool Autodiff>
void bm_mekf(benchmark::State& state) {
  const AttitudeSetup<T> s;
  auto est = s.prior;
  for (auto _ : state) {
    est = s.prior;  // the same prior each iteration (the covariance would otherwise converge)
    keel::Status st;
    if constexpr (Autodiff) st = keel::ekf::predict(est, keel::autodiff_model(s.motion), s.q, s.omega, s.dt);
    else st = keel::ekf::predict(est, s.motion, s.q, s.omega, s.dt);
    const keel::Status sc = correct_once<M, Autodiff>(est, s);
    if (st != keel::Status::ok || sc != keel::Status::ok) std::abort();
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(mekf_step_flops(6, M), benchmark::Counter::kIsIterationInvariantRate);
}

template <typename T, int M>
void bm_ukf_manifold(benchmark::State& state) {
  const AttitudeSetup<T> s;
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0);
  auto est = s.prior;
  for (auto _ : state) {
    est = s.prior;
    const keel::Status st = keel::ukf::predict(est, s.motion, s.q, rule, s.omega, s.dt);
    keel::Status sc;
    if constexpr (M == 3) sc = keel::ukf::correct(est, s.accel, s.r, s.z, rule).status;
    else sc = keel::ukf::correct(est, s.both, s.r6, s.z6, rule).status;
    if (st != keel::Status::ok || sc != keel::Status::ok) std::abort();
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  // The vector UKF's count (nonlinear_step.cpp's formula, restated: factor, points, three weighted sums, gain and
  // update) plus the reset (4n³); the iterated mean's few extra passes over the points are not counted.
  const double n = 6, m = M, p = 2 * n + 1;
  const double flops = n * n * n / 3 + 2 * n * n + 2 * p * n * n + 2 * p * (m * m + n * m) + 2 * n * m * m +
                       2 * n * n * m + m * m * m / 3 + 4 * n * n * n;
  state.counters["flops"] = benchmark::Counter(flops, benchmark::Counter::kIsIterationInvariantRate);
}

template <typename T>
void register_scalar() {
  const std::string tail = std::string("/") + scalar_name<T>();
  benchmark::RegisterBenchmark(("mekf_step/analytic" + tail + "/6x3").c_str(), bm_mekf<T, 3, false>);
  benchmark::RegisterBenchmark(("mekf_step/autodiff" + tail + "/6x3").c_str(), bm_mekf<T, 3, true>);
  benchmark::RegisterBenchmark(("ukf_step/manifold" + tail + "/6x3").c_str(), bm_ukf_manifold<T, 3>);
  benchmark::RegisterBenchmark(("mekf_step/analytic" + tail + "/6x6").c_str(), bm_mekf<T, 6, false>);
  benchmark::RegisterBenchmark(("mekf_step/autodiff" + tail + "/6x6").c_str(), bm_mekf<T, 6, true>);
  benchmark::RegisterBenchmark(("ukf_step/manifold" + tail + "/6x6").c_str(), bm_ukf_manifold<T, 6>);
}

}  // namespace

void register_manifold() {
  register_scalar<float>();
  register_scalar<double>();
}

}  // namespace keel_bench
