// keel_bench: kf_step, predict and correct benchmarks against the baselines (kf_step_size.cpp, one translation
// unit per size), ekf_step and ukf_step, and the machine's own GEMM peak measured in the same run.
#include <benchmark/benchmark.h>

#include <Eigen/Core>

#include "kf_step.hpp"

namespace {

/// peak/gemm: a 256×256 matrix product through Eigen's blocked GEMM, 2·256³ flops.
template <typename T>
void bm_gemm(benchmark::State& state) {
  using Mat = Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>;
  const Mat a = Mat::Random(256, 256), b = Mat::Random(256, 256);
  Mat c(256, 256);
  for (auto _ : state) {
    c.noalias() = a * b;
    benchmark::DoNotOptimize(c.data());
    benchmark::ClobberMemory();
  }
  state.counters["flops"] = benchmark::Counter(2.0 * 256 * 256 * 256, benchmark::Counter::kIsIterationInvariantRate);
}

}  // namespace

int main(int argc, char** argv) {
  for (void (*r)() : keel_bench::size_registrars()) r();
  keel_bench::register_nonlinear();
  keel_bench::register_manifold();
  benchmark::RegisterBenchmark("peak/gemm/float/256x256", bm_gemm<float>);
  benchmark::RegisterBenchmark("peak/gemm/double/256x256", bm_gemm<double>);
  benchmark::Initialize(&argc, argv);
  if (benchmark::ReportUnrecognizedArguments(argc, argv)) return 1;
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  return 0;
}
