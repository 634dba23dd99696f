// Unit tests of the rank-1 Cholesky update and downdate (core/linalg.hpp), float and double.
#include <doctest/doctest.h>

#include <keel/core/linalg.hpp>

#include "support.hpp"

using namespace keel_test;

namespace {
template <typename T, int N>
Eigen::Matrix<T, N, N> lower_factor(const Eigen::Matrix<T, N, N>& a) {
  return Eigen::LLT<Eigen::Matrix<T, N, N>>(a).matrixL();
}
}  // namespace

TEST_CASE_TEMPLATE("cholesky_update and cholesky_downdate reproduce the factor of A ± v vᵀ", T, float, double) {
  // Closed form: the factor is unique (positive diagonal), so it must equal the Cholesky factor of the updated
  // matrix computed directly. A has κ ≤ 13 (random_spd) and v is scaled so A − v vᵀ keeps κ below ~50:
  // O(N) rotations each of O(ε) relative error, so 100·N·ε bounds the difference with margin.
  for (unsigned seed = 0; seed < 10; ++seed) {
    std::mt19937 rng(seed);
    const Eigen::Matrix<T, 6, 6> a = random_spd<T, 6>(rng);
    const Eigen::Matrix<T, 6, 1> v = random_matrix<T, 6, 1>(rng, 0.15);
    Eigen::Matrix<T, 6, 6> l = lower_factor(a);
    REQUIRE(keel::cholesky_update(l, v) == keel::Status::ok);
    const double tol = static_cast<double>(eps_times<T>(600));
    CHECK(rel_error(l, lower_factor<T, 6>((a + v * v.transpose()).eval())) < tol);
    l = lower_factor(a);
    REQUIRE(keel::cholesky_downdate(l, v) == keel::Status::ok);
    CHECK(rel_error(l, lower_factor<T, 6>((a - v * v.transpose()).eval())) < tol);
    CHECK(l.template triangularView<Eigen::StrictlyUpper>().toDenseMatrix().isZero());
  }
}

TEST_CASE_TEMPLATE("a downdate that would lose positive-definiteness fails and leaves the factor", T, float,
                   double) {
  // A = I, v = e₀: I − e₀e₀ᵀ is singular, and v = 2e₀ makes it indefinite; both must be refused.
  Eigen::Matrix<T, 3, 3> l = Eigen::Matrix<T, 3, 3>::Identity();
  const auto before = l;
  Eigen::Matrix<T, 3, 1> v = Eigen::Matrix<T, 3, 1>::Unit(0);
  CHECK(keel::cholesky_downdate(l, v) == keel::Status::not_positive_definite);
  CHECK(same_bits(l, before));
  v(0) = T(2);
  CHECK(keel::cholesky_downdate(l, v) == keel::Status::not_positive_definite);
  CHECK(same_bits(l, before));
  v(0) = std::numeric_limits<T>::quiet_NaN();
  CHECK(keel::cholesky_update(l, v) == keel::Status::non_finite);
  CHECK(same_bits(l, before));
  // Closed form: I₃ − (0.6 e₀)(0.6 e₀)ᵀ = diag(0.64, 1, 1), whose factor is diag(0.8, 1, 1).
  v = Eigen::Matrix<T, 3, 1>::Unit(0) * T(0.6);
  REQUIRE(keel::cholesky_downdate(l, v) == keel::Status::ok);
  CHECK(static_cast<double>(l(0, 0)) == doctest::Approx(0.8).epsilon(static_cast<double>(eps_times<T>(8))));
  CHECK(l(1, 1) == T(1));
}
