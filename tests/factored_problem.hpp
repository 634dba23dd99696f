#pragma once
// Seeded random runs shared by the factored-form tests: a stable, observable linear system simulated for
// `steps` steps, filtered side by side by the conventional (Joseph), square-root and UD forms.

#include <keel/sqrt.hpp>
#include <keel/ud.hpp>

#include <doctest/doctest.h>

#include "support.hpp"

namespace keel_test {

template <typename T, int N, int M>
struct Run {
  Eigen::Matrix<T, N, N> f;
  Eigen::Matrix<T, N, N> q;
  Eigen::Matrix<T, M, N> h;
  Eigen::Matrix<T, M, M> r;  // full (QR array / whitened updates)
  Eigen::Matrix<T, M, 1> r_diag;  // its diagonal (sequential updates, run with R = diag(r_diag))
  Eigen::Matrix<T, N, 1> x0;
  Eigen::Matrix<T, N, N> p0;
};

/// F = 0.9 I + 0.05 G/√N with G standard normal: its eigenvalues lie within 0.9 ± 0.05·(1 + small) (circular
/// law), so the system is stable; Q, R and P0 well conditioned (κ ≤ 41 by random_spd's bound).
template <typename T, int N, int M>
Run<T, N, M> make_run(unsigned seed) {
  std::mt19937 rng(seed);
  Run<T, N, M> run;
  run.f = (0.9 * Eigen::Matrix<double, N, N>::Identity() +
           (0.05 / std::sqrt(double(N))) * random_matrix<double, N, N>(rng))
              .template cast<T>();
  run.q = random_spd<T, N>(rng, 0.01, 0.1);
  run.h = random_matrix<T, M, N>(rng);
  run.r = random_spd<T, M>(rng, 0.1, 1.0);
  run.r_diag = run.r.diagonal();
  run.x0 = random_matrix<T, N, 1>(rng);
  run.p0 = random_spd<T, N>(rng);
  return run;
}

/// The structural invariants the kernels promise: S lower-triangular with a non-negative diagonal; U unit
/// upper-triangular (exactly), d non-negative.
template <typename T, int N>
inline void check_structure(const keel::SqrtGaussian<T, N>& s) {
  for (int j = 0; j < N; ++j) {
    CHECK(s.sqrt_cov(j, j) >= T(0));
    for (int i = 0; i < j; ++i) CHECK(s.sqrt_cov(i, j) == T(0));
  }
}
template <typename T, int N>
inline void check_structure(const keel::UdGaussian<T, N>& u) {
  for (int j = 0; j < N; ++j) {
    CHECK(u.u(j, j) == T(1));
    CHECK(u.d(j) >= T(0));
    for (int i = j + 1; i < N; ++i) CHECK(u.u(i, j) == T(0));
  }
}

}  // namespace keel_test
