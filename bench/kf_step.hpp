#pragma once
// kf_step benchmarks (predict + correct) for keel's linear kernels and the two baselines, registered under
// `kf_step/<variant>/<scalar>/<n>x<m>`, plus the start-up check that the baselines compute what keel computes.
#include <cmath>
#include <cstdio>
#include <string>
#include <vector>

#include <benchmark/benchmark.h>
#include <keel/linear.hpp>
#include <keel/sqrt.hpp>
#include <keel/ud.hpp>

#include "baselines/baselines.hpp"
#include "baselines/loops_baseline.hpp"
#include "problem.hpp"

namespace keel_bench {

template <typename T>
const char* scalar_name() {
  return sizeof(T) == 4 ? "float" : "double";
}

/// joseph, standard, sequential: Gaussian; sqrt: SqrtGaussian with the QR array time and measurement updates;
/// sqrt_sequential: SqrtGaussian with the QR array time update and Potter's scalar updates; ud: UdGaussian with
/// Thornton's time update and Bierman's scalar updates (the problem's R is diagonal).
enum class Variant { joseph, standard, sequential, sqrt, sqrt_sequential, ud };

template <typename T, int N, Variant V>
using EstimateFor = std::conditional_t<V == Variant::ud, keel::UdGaussian<T, N>,
                                       std::conditional_t<V == Variant::sqrt || V == Variant::sqrt_sequential,
                                                          keel::SqrtGaussian<T, N>, keel::Gaussian<T, N>>>;

template <typename T, int N, int M, Variant V>
void keel_step(EstimateFor<T, N, V>& est, const Problem<T, N, M>& pr) {
  if (keel::predict(est, pr.f, pr.q) != keel::Status::ok) std::abort();
  keel::Status s;
  if constexpr (V == Variant::joseph || V == Variant::sqrt) s = keel::correct(est, pr.h, pr.r, pr.z).status;
  if constexpr (V == Variant::standard) s = keel::correct(est, pr.h, pr.r, pr.z, keel::standard_form).status;
  if constexpr (V == Variant::sequential || V == Variant::sqrt_sequential || V == Variant::ud)
    s = keel::correct_sequential(est, pr.h, pr.r_diag, pr.z).status;
  if (s != keel::Status::ok) std::abort();
}

template <typename T, int N, int M, Variant V>
EstimateFor<T, N, V> initial_estimate(const Problem<T, N, M>& pr) {
  keel::Gaussian<T, N> g;
  g.mean = pr.x0;
  g.cov = pr.p0;
  if constexpr (std::is_same_v<EstimateFor<T, N, V>, keel::Gaussian<T, N>>) {
    return g;
  } else {
    EstimateFor<T, N, V> e;
    keel::Status s;
    if constexpr (V == Variant::ud) s = keel::to_ud(g, e);
    else s = keel::to_sqrt(g, e);
    if (s != keel::Status::ok) std::abort();
    return e;
  }
}

template <typename T, int N, int M, Variant V>
void bm_keel(benchmark::State& state) {
  const Problem<T, N, M> pr;
  EstimateFor<T, N, V> est = initial_estimate<T, N, M, V>(pr);
  for (auto _ : state) {
    keel_step<T, N, M, V>(est, pr);
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(kf_step_flops(N, M), benchmark::Counter::kIsIterationInvariantRate);
}

/// predict/joseph and correct/joseph: one kernel alone, each iteration from the same prior (copied in: N² + N
/// scalars, included in the time), so the covariance neither grows without bound nor converges.
template <typename T, int N, int M, bool Predict>
void bm_alone(benchmark::State& state) {
  const Problem<T, N, M> pr;
  const keel::Gaussian<T, N> prior = initial_estimate<T, N, M, Variant::joseph>(pr);
  keel::Gaussian<T, N> est;
  for (auto _ : state) {
    est = prior;
    benchmark::DoNotOptimize(est);
    keel::Status s;
    if constexpr (Predict) s = keel::predict(est, pr.f, pr.q);
    else s = keel::correct(est, pr.h, pr.r, pr.z).status;
    if (s != keel::Status::ok) std::abort();
    benchmark::DoNotOptimize(est);
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(Predict ? predict_flops(N) : correct_flops(N, M),
                                               benchmark::Counter::kIsIterationInvariantRate);
}

/// alignas(64): g++ 12.2 at -O3 -march=native (AVX-512) vectorized the copies into these arrays with 32-byte
/// aligned stores while placing the object 16-byte aligned on the stack (a crash at 24x12 float).
template <typename T, int N, int M>
struct alignas(64) LoopsState {
  T x[N], p[N][N], f[N][N], q[N][N], h[M][N], r[M][M], z[M];
  explicit LoopsState(const Problem<T, N, M>& pr) {
    for (int i = 0; i < N; ++i) {
      x[i] = pr.x0(i);
      for (int j = 0; j < N; ++j) {
        p[i][j] = pr.p0(i, j);
        f[i][j] = pr.f(i, j);
        q[i][j] = pr.q(i, j);
      }
    }
    for (int i = 0; i < M; ++i) {
      z[i] = pr.z(i);
      for (int j = 0; j < N; ++j) h[i][j] = pr.h(i, j);
      for (int j = 0; j < M; ++j) r[i][j] = pr.r(i, j);
    }
  }
  void step() { loops_step<T, N, M>(x, p, f, q, h, r, z); }
};

template <typename T, int N, int M>
struct DynamicState {
  using Mat = Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>;
  using Vec = Eigen::Matrix<T, Eigen::Dynamic, 1>;
  Vec x, z;
  Mat p, f, q, h, r;
  explicit DynamicState(const Problem<T, N, M>& pr)
      : x(pr.x0), z(pr.z), p(pr.p0), f(pr.f), q(pr.q), h(pr.h), r(pr.r) {}
  void step() { dynamic_step<T>(x, p, f, q, h, r, z); }
};

template <typename S, typename T, int N, int M>
void bm_baseline(benchmark::State& state) {
  S s{Problem<T, N, M>{}};
  for (auto _ : state) {
    s.step();
    benchmark::DoNotOptimize(s);
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(kf_step_flops(N, M), benchmark::Counter::kIsIterationInvariantRate);
}

/// The factored variants after the same 20 steps must stand for the Joseph filter's estimate (100·ε relative:
/// same equations, different rounding; the problem is well conditioned).
template <typename T, int N, int M, Variant V>
void check_factored_agree(const keel::Gaussian<T, N>& joseph) {
  const Problem<T, N, M> pr;
  EstimateFor<T, N, V> est = initial_estimate<T, N, M, V>(pr);
  for (int i = 0; i < 20; ++i) keel_step<T, N, M, V>(est, pr);
  keel::Gaussian<T, N> g;
  if (keel::to_gaussian(est, g) != keel::Status::ok) std::abort();
  const double err = std::fmax((g.mean - joseph.mean).cwiseAbs().maxCoeff(), (g.cov - joseph.cov).cwiseAbs().maxCoeff());
  if (!(err <= 100.0 * static_cast<double>(std::numeric_limits<T>::epsilon()))) {
    std::fprintf(stderr, "factored variant %d disagrees with Joseph at %s %dx%d: %g\n", static_cast<int>(V),
                 scalar_name<T>(), N, M, err);
    std::abort();
  }
}

/// Runs 20 steps of keel's Joseph step and of both baselines from the same start and aborts the whole suite
/// when they disagree by more than 100·ε relative (the same equations, different rounding order).
template <typename T, int N, int M>
void check_baselines_agree() {
  const Problem<T, N, M> pr;
  keel::Gaussian<T, N> est = initial_estimate<T, N, M, Variant::joseph>(pr);
  LoopsState<T, N, M> loops(pr);
  DynamicState<T, N, M> dyn(pr);
  for (int i = 0; i < 20; ++i) {
    keel_step<T, N, M, Variant::joseph>(est, pr);
    loops.step();
    dyn.step();
  }
  const double tol = 100.0 * static_cast<double>(std::numeric_limits<T>::epsilon());
  double err = 0;
  for (int i = 0; i < N; ++i) {
    err = std::fmax(err, std::fabs(static_cast<double>(loops.x[i] - est.mean(i))));
    err = std::fmax(err, std::fabs(static_cast<double>(dyn.x(i) - est.mean(i))));
    for (int j = 0; j < N; ++j) {
      err = std::fmax(err, std::fabs(static_cast<double>(loops.p[i][j] - est.cov(i, j))));
      err = std::fmax(err, std::fabs(static_cast<double>(dyn.p(i, j) - est.cov(i, j))));
    }
  }
  if (!(err <= tol)) {
    std::fprintf(stderr, "baselines disagree with keel at %s %dx%d: %g > %g\n", scalar_name<T>(), N, M, err, tol);
    std::abort();
  }
  check_factored_agree<T, N, M, Variant::sqrt>(est);
  check_factored_agree<T, N, M, Variant::sqrt_sequential>(est);
  check_factored_agree<T, N, M, Variant::ud>(est);
}

template <typename T, int N, int M>
void register_kf_step() {
  check_baselines_agree<T, N, M>();
  const std::string tail = std::string("/") + scalar_name<T>() + "/" + std::to_string(N) + "x" + std::to_string(M);
  benchmark::RegisterBenchmark(("kf_step/joseph" + tail).c_str(), bm_keel<T, N, M, Variant::joseph>);
  benchmark::RegisterBenchmark(("kf_step/standard" + tail).c_str(), bm_keel<T, N, M, Variant::standard>);
  benchmark::RegisterBenchmark(("kf_step/sequential" + tail).c_str(), bm_keel<T, N, M, Variant::sequential>);
  benchmark::RegisterBenchmark(("kf_step/sqrt" + tail).c_str(), bm_keel<T, N, M, Variant::sqrt>);
  benchmark::RegisterBenchmark(("kf_step/sqrt_sequential" + tail).c_str(), bm_keel<T, N, M, Variant::sqrt_sequential>);
  benchmark::RegisterBenchmark(("kf_step/ud" + tail).c_str(), bm_keel<T, N, M, Variant::ud>);
  benchmark::RegisterBenchmark(("kf_step/dynamic_baseline" + tail).c_str(),
                               bm_baseline<DynamicState<T, N, M>, T, N, M>);
  benchmark::RegisterBenchmark(("kf_step/loops_baseline" + tail).c_str(), bm_baseline<LoopsState<T, N, M>, T, N, M>);
  benchmark::RegisterBenchmark(("predict/joseph" + tail).c_str(), bm_alone<T, N, M, true>);
  benchmark::RegisterBenchmark(("correct/joseph" + tail).c_str(), bm_alone<T, N, M, false>);
}

void register_nonlinear();  // nonlinear_step.cpp: ekf_step and ukf_step
void register_manifold();   // manifold_step.cpp: mekf_step and ukf_step/manifold

/// The per-size translation units add their registration here before main runs; main calls them (the start-up
/// checks then run inside main, not during static initialization).
inline std::vector<void (*)()>& size_registrars() {
  static std::vector<void (*)()> r;
  return r;
}

}  // namespace keel_bench
