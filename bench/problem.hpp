#pragma once
// The benchmark problem: a deterministic, well-conditioned n-state / m-measurement linear model, the same
// for keel and the baselines, and the analytic flop count used by every kf_step benchmark.
#include <Eigen/Core>

namespace keel_bench {

/// Flops of one naive predict + Joseph correct step, counting a multiply-add as 2 flops:
/// predict F x, F P, (F P) Fᵀ: 4n³ + 2n²; correct H P Hᵀ: 2n²m + 2nm², Cholesky m³/3, gain K = P Hᵀ S⁻¹: 2n²m +
/// 2nm², I − KH: 2n²m, (I − KH) P (I − KH)ᵀ: 4n³, K R Kᵀ: 2nm² + 2n²m; total 8n³ + 8n²m + 6nm² + m³/3
/// (lower-order terms dropped). keel's Joseph step does fewer (rank-m corrections instead of 4n³), so the flop
/// rate reported from this count is an effective rate: what a naive implementation would need to run as fast.
constexpr double kf_step_flops(int n, int m) {
  const double N = n, M = m;
  return 8 * N * N * N + 8 * N * N * M + 6 * N * M * M + M * M * M / 3;
}

/// The predict and the correct parts of kf_step_flops (F x, F P, (F P) Fᵀ: 4n³ + 2n²; the rest of the step).
constexpr double predict_flops(int n) { return 4.0 * n * n * n + 2.0 * n * n; }
constexpr double correct_flops(int n, int m) { return kf_step_flops(n, m) - 4.0 * n * n * n; }

template <typename T, int N, int M>
struct Problem {
  Eigen::Matrix<T, N, N> f, q, p0;
  Eigen::Matrix<T, M, N> h;
  Eigen::Matrix<T, M, M> r;
  Eigen::Matrix<T, M, 1> z;
  Eigen::Matrix<T, M, 1> r_diag;  // R is diagonal: the sequential variants take its diagonal
  Eigen::Matrix<T, N, 1> x0;

  Problem() {
    f.setIdentity();
    for (int i = 0; i + 1 < N; ++i) f(i, i + 1) = T(0.05);  // chained integrators
    q.setIdentity();
    q *= T(1e-3);
    p0.setIdentity();
    h.setZero();
    for (int i = 0; i < M; ++i) {
      h(i, (i * N) / M) = T(1);
      h(i, (i * N + 1) % N) += T(0.25);  // couple neighbouring states
    }
    r.setIdentity();
    r *= T(0.1);
    r_diag = r.diagonal();
    for (int i = 0; i < M; ++i) z(i) = T(0.1) * T(i + 1);
    for (int i = 0; i < N; ++i) x0(i) = T(0.01) * T(i);
  }
};

}  // namespace keel_bench
