// Attitude benchmarks on the manifold state (attitude on SO(3), gyro bias; 6 tangent dimensions) with one
// 3-axis reference-direction measurement (accelerometer) per step: `mekf_step/{analytic,autodiff}/<scalar>/6x3`
// (error-state EKF: predict + correct + covariance reset) and `ukf_step/manifold/<scalar>/6x3` (sigma points by ⊞,
// iterated mean on SO(3)). The 6x3 vector kf_step and the 5x3 ekf_step are the neighbours to compare with.
#include <cstdlib>
#include <string>

#include <benchmark/benchmark.h>
#include <keel/manifold_filter.hpp>
#include <keel/models/attitude.hpp>

#include "kf_step.hpp"

namespace keel_bench {
namespace {

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

template <typename T, bool Autodiff>
void bm_mekf(benchmark::State& state) {
  const AttitudeSetup<T> s;
  auto est = s.prior;
  for (auto _ : state) {
    est = s.prior;  // the same prior each iteration (the covariance would otherwise converge)
    keel::Status st, sc;
    if constexpr (Autodiff) {
      st = keel::ekf::predict(est, keel::autodiff_model(s.motion), s.q, s.omega, s.dt);
      sc = keel::ekf::correct(est, keel::autodiff_model(s.accel), s.r, s.z).status;
    } else {
      st = keel::ekf::predict(est, s.motion, s.q, s.omega, s.dt);
      sc = keel::ekf::correct(est, s.accel, s.r, s.z).status;
    }
    if (st != keel::Status::ok || sc != keel::Status::ok) std::abort();
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(mekf_step_flops(6, 3), benchmark::Counter::kIsIterationInvariantRate);
}

template <typename T>
void bm_ukf_manifold(benchmark::State& state) {
  const AttitudeSetup<T> s;
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0);
  auto est = s.prior;
  for (auto _ : state) {
    est = s.prior;
    const keel::Status st = keel::ukf::predict(est, s.motion, s.q, rule, s.omega, s.dt);
    const keel::Status sc = keel::ukf::correct(est, s.accel, s.r, s.z, rule).status;
    if (st != keel::Status::ok || sc != keel::Status::ok) std::abort();
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  // The vector UKF's count (nonlinear_step.cpp's formula, restated: factor, points, three weighted sums, gain and
  // update) plus the reset (4n³); the iterated mean's few extra passes over the points are not counted.
  const double n = 6, m = 3, p = 2 * n + 1;
  const double flops = n * n * n / 3 + 2 * n * n + 2 * p * n * n + 2 * p * (m * m + n * m) + 2 * n * m * m +
                       2 * n * n * m + m * m * m / 3 + 4 * n * n * n;
  state.counters["flops"] = benchmark::Counter(flops, benchmark::Counter::kIsIterationInvariantRate);
}

template <typename T>
void register_scalar() {
  const std::string tail = std::string("/") + scalar_name<T>() + "/6x3";
  benchmark::RegisterBenchmark(("mekf_step/analytic" + tail).c_str(), bm_mekf<T, false>);
  benchmark::RegisterBenchmark(("mekf_step/autodiff" + tail).c_str(), bm_mekf<T, true>);
  benchmark::RegisterBenchmark(("ukf_step/manifold" + tail).c_str(), bm_ukf_manifold<T>);
}

}  // namespace

void register_manifold() {
  register_scalar<float>();
  register_scalar<double>();
}

}  // namespace keel_bench
