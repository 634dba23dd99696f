// ekf_step and ukf_step benchmarks (predict + correct) on scenario 2's models: a coordinated-turn boat (5 states)
// with a GNSS fix and compass (3 measurements). Names `ekf_step/{analytic,autodiff,numeric}/<scalar>/5x3` and
// `ukf_step/{scaled,cubature,sqrt}/<scalar>/5x3`.
#include <cstdlib>
#include <string>

#include <benchmark/benchmark.h>
#include <keel/ekf.hpp>
#include <keel/models/planar.hpp>
#include <keel/ukf.hpp>

#include "kf_step.hpp"

namespace keel_bench {
namespace {

template <typename T>
struct FixAndCompass {
  template <typename S>
  Eigen::Matrix<S, 3, 1> operator()(const Eigen::Matrix<S, 5, 1>& x) const {
    return Eigen::Matrix<S, 3, 1>(x(0), x(1), x(3));
  }
  Eigen::Matrix<T, 3, 5> jacobian(const Eigen::Matrix<T, 5, 1>&) const {
    Eigen::Matrix<T, 3, 5> j = Eigen::Matrix<T, 3, 5>::Zero();
    j(0, 0) = j(1, 1) = j(2, 3) = T(1);
    return j;
  }
  Eigen::Matrix<T, 3, 1> residual(const Eigen::Matrix<T, 3, 1>& z, const Eigen::Matrix<T, 3, 1>& zhat) const {
    return Eigen::Matrix<T, 3, 1>(z(0) - zhat(0), z(1) - zhat(1), keel::models::wrap_angle(z(2) - zhat(2)));
  }
};

template <typename T>
struct Setup {
  keel::models::CoordinatedTurn<T> motion;
  FixAndCompass<T> sensor;
  Eigen::Matrix<T, 5, 5> q;
  Eigen::Matrix<T, 3, 3> r;
  Eigen::Matrix<T, 3, 1> z;
  keel::Gaussian<T, 5> prior;
  T dt = T(0.5);
  Setup() {
    prior.mean << T(0), T(0), T(2), T(0.3), T(0.05);
    prior.cov = Eigen::Matrix<T, 5, 1>(T(4), T(4), T(0.25), T(0.01), T(1e-3)).asDiagonal();
    q = motion.noise(prior.mean, dt, T(0.1), T(0.02));
    q.diagonal().array() += T(1e-6);
    r = Eigen::Matrix<T, 3, 1>(T(2.25), T(2.25), T(0.0025)).asDiagonal();
    z << T(0.5), T(0.2), T(0.3);
  }
};

/// Flops of the linear algebra of one step, model evaluations excluded: the EKF step is the linear Joseph step
/// (kf_step_flops); the UKF step factors P (n³/3), forms 2n+1 points (2n²), and accumulates the predicted
/// covariance (2(2n+1)n²), the measurement covariance and cross-covariance (2(2n+1)(m² + nm)), then the gain and
/// update (2nm² + 2n²m + m³/3).
constexpr double ukf_step_flops(int n, int m) {
  const double N = n, M = m, P = 2 * N + 1;
  return N * N * N / 3 + 2 * N * N + 2 * P * N * N + 2 * P * (M * M + N * M) + 2 * N * M * M + 2 * N * N * M +
         M * M * M / 3;
}

enum class Jac { analytic, autodiff, numeric };

template <typename T, Jac J>
void bm_ekf(benchmark::State& state) {
  const Setup<T> s;
  keel::Gaussian<T, 5> est = s.prior;
  for (auto _ : state) {
    keel::Status st;
    if constexpr (J == Jac::analytic) st = keel::ekf::predict(est, s.motion, s.q, s.dt);
    if constexpr (J == Jac::autodiff) st = keel::ekf::predict(est, keel::autodiff_model(s.motion), s.q, s.dt);
    if constexpr (J == Jac::numeric) st = keel::ekf::predict(est, keel::numeric_model(s.motion), s.q, s.dt);
    keel::Status sc;
    if constexpr (J == Jac::analytic) sc = keel::ekf::correct(est, s.sensor, s.r, s.z).status;
    if constexpr (J == Jac::autodiff) sc = keel::ekf::correct(est, keel::autodiff_model(s.sensor), s.r, s.z).status;
    if constexpr (J == Jac::numeric) sc = keel::ekf::correct(est, keel::numeric_model(s.sensor), s.r, s.z).status;
    if (st != keel::Status::ok || sc != keel::Status::ok) std::abort();
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(kf_step_flops(5, 3), benchmark::Counter::kIsIterationInvariantRate);
}

template <typename T, bool Sqrt>
void bm_ukf(benchmark::State& state, keel::SigmaRule rule) {
  const Setup<T> s;
  std::conditional_t<Sqrt, keel::SqrtGaussian<T, 5>, keel::Gaussian<T, 5>> est;
  if constexpr (Sqrt) {
    if (keel::to_sqrt(s.prior, est) != keel::Status::ok) std::abort();
  } else {
    est = s.prior;
  }
  for (auto _ : state) {
    const keel::Status st = keel::ukf::predict(est, s.motion, s.q, rule, s.dt);
    const keel::Status sc = keel::ukf::correct(est, s.sensor, s.r, s.z, rule).status;
    if (st != keel::Status::ok || sc != keel::Status::ok) std::abort();
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(ukf_step_flops(5, 3), benchmark::Counter::kIsIterationInvariantRate);
}

template <typename T>
void register_scalar() {
  const std::string tail = std::string("/") + scalar_name<T>() + "/5x3";
  benchmark::RegisterBenchmark(("ekf_step/analytic" + tail).c_str(), bm_ekf<T, Jac::analytic>);
  benchmark::RegisterBenchmark(("ekf_step/autodiff" + tail).c_str(), bm_ekf<T, Jac::autodiff>);
  benchmark::RegisterBenchmark(("ekf_step/numeric" + tail).c_str(), bm_ekf<T, Jac::numeric>);
  const keel::SigmaRule scaled = keel::SigmaRule::scaled(0.5, 2.0, 0.0);
  benchmark::RegisterBenchmark(("ukf_step/scaled" + tail).c_str(), bm_ukf<T, false>, scaled);
  benchmark::RegisterBenchmark(("ukf_step/cubature" + tail).c_str(), bm_ukf<T, false>, keel::SigmaRule::cubature());
  benchmark::RegisterBenchmark(("ukf_step/sqrt" + tail).c_str(), bm_ukf<T, true>, scaled);
}

}  // namespace

void register_nonlinear() {
  register_scalar<float>();
  register_scalar<double>();
}

}  // namespace keel_bench
