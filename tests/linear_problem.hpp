#pragma once
// A seeded random linear estimation problem shared by the linear-kernel tests.

#include <keel/linear.hpp>

#include "support.hpp"

namespace keel_test {

template <typename T, int N, int M>
struct Problem {
  keel::Gaussian<T, N> est;
  Eigen::Matrix<T, N, N> f;
  Eigen::Matrix<T, N, N> q;
  Eigen::Matrix<T, M, N> h;
  Eigen::Matrix<T, M, M> r;
  Eigen::Matrix<T, M, 1> z;
};

template <typename T, int N, int M>
Problem<T, N, M> make_problem(unsigned seed) {
  std::mt19937 rng(seed);
  Problem<T, N, M> p;
  p.est.mean = random_matrix<T, N, 1>(rng);
  p.est.cov = random_spd<T, N>(rng);
  p.f = Eigen::Matrix<T, N, N>::Identity() + random_matrix<T, N, N>(rng, 0.2);
  p.q = random_spd<T, N>(rng, 0.01, 0.1);
  p.h = random_matrix<T, M, N>(rng);
  p.r = random_spd<T, M>(rng, 0.1, 1.0);
  p.z = random_matrix<T, M, 1>(rng);
  return p;
}

}  // namespace keel_test
