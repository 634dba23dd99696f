// Unit tests of the square-root (sqrt.hpp) and UD (ud.hpp) filters in float and double: the structure of the
// factors, the conversions, semi-definite process noise, control input, gating and the Givens helper
// (equivalence with the Joseph form over long runs: factored_equivalence_test.cpp).
#include <doctest/doctest.h>

#include "factored_problem.hpp"

using namespace keel_test;

TEST_CASE_TEMPLATE("conversions between the three representations", T, float, double) {
  std::mt19937 rng(5);
  keel::Gaussian<T, 5> g;
  g.mean = random_matrix<T, 5, 1>(rng);
  g.cov = random_spd<T, 5>(rng);
  const Eigen::Matrix<double, 5, 5> p = g.cov.template cast<double>();
  keel::SqrtGaussian<T, 5> s;
  keel::UdGaussian<T, 5> u;
  REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
  REQUIRE(keel::to_ud(g, u) == keel::Status::ok);
  check_structure(s);
  check_structure(u);
  // Each factorization reproduces P to the rounding of a Cholesky-type factorization of a matrix with κ ≤ 41
  // (Higham, "Accuracy and Stability of Numerical Algorithms", 2002, thm. 10.3: backward error O(nε)): 100ε.
  const double tol = static_cast<double>(eps_times<T>(100));
  CHECK(rel_error(cov_in_double(s), p) < tol);
  CHECK(rel_error(cov_in_double(u), p) < tol);
  CHECK(same_bits(s.mean, g.mean));
  // Factor to factor without forming P (orthogonal triangularizations): same bound.
  keel::UdGaussian<T, 5> u_from_s;
  keel::SqrtGaussian<T, 5> s_from_u;
  REQUIRE(keel::to_ud(s, u_from_s) == keel::Status::ok);
  REQUIRE(keel::to_sqrt(u, s_from_u) == keel::Status::ok);
  check_structure(u_from_s);
  check_structure(s_from_u);
  CHECK(rel_error(cov_in_double(u_from_s), p) < tol);
  CHECK(rel_error(cov_in_double(s_from_u), p) < tol);
  // The lower Cholesky factor with a positive diagonal is unique, so the two routes agree entrywise.
  CHECK(rel_error(s_from_u.sqrt_cov, s.sqrt_cov) < tol);
  keel::Gaussian<T, 5> back;
  REQUIRE(keel::to_gaussian(s, back) == keel::Status::ok);
  CHECK(rel_error(back.cov, p) < tol);
  CHECK(back.cov == back.cov.transpose());
  REQUIRE(keel::to_gaussian(u, back) == keel::Status::ok);
  CHECK(rel_error(back.cov, p) < tol);

  // Semi-definite covariance (state 2 known exactly): accepted, zero column / zero d.
  keel::Gaussian<T, 3> psd;
  psd.cov << T(2), T(1), T(0), T(1), T(2), T(0), T(0), T(0), T(0);
  keel::SqrtGaussian<T, 3> s3;
  keel::UdGaussian<T, 3> u3;
  REQUIRE(keel::to_sqrt(psd, s3) == keel::Status::ok);
  REQUIRE(keel::to_ud(psd, u3) == keel::Status::ok);
  CHECK(s3.sqrt_cov(2, 2) == T(0));
  CHECK(u3.d(2) == T(0));
  CHECK(rel_error(cov_in_double(s3), psd.cov.template cast<double>()) < tol);
  CHECK(rel_error(cov_in_double(u3), psd.cov.template cast<double>()) < tol);

  // Indefinite covariance: refused, output untouched.
  keel::Gaussian<T, 2> bad;
  bad.cov << T(1), T(2), T(2), T(1);
  keel::SqrtGaussian<T, 2> s2;
  keel::UdGaussian<T, 2> u2;
  const auto s2_before = s2;
  const auto u2_before = u2;
  CHECK(keel::to_sqrt(bad, s2) == keel::Status::not_positive_definite);
  CHECK(keel::to_ud(bad, u2) == keel::Status::not_positive_definite);
  CHECK(same_bits(s2, s2_before));
  CHECK(same_bits(u2, u2_before));
}

TEST_CASE_TEMPLATE("semi-definite process noise and control input in the factored time updates", T, float, double) {
  // Constant-velocity-like 4-state model with noise on the two velocities only: Q is singular, which the
  // factored forms must take without a Cholesky failure (they factor Q semi-definitely).
  std::mt19937 rng(9);
  Eigen::Matrix<T, 4, 4> f = Eigen::Matrix<T, 4, 4>::Identity();
  f(0, 2) = T(0.1);
  f(1, 3) = T(0.1);
  Eigen::Matrix<T, 4, 4> q = Eigen::Matrix<T, 4, 4>::Zero();
  q(2, 2) = T(0.02);
  q(3, 3) = T(0.03);
  q(2, 3) = q(3, 2) = T(0.01);
  Eigen::Matrix<T, 4, 2> b = random_matrix<T, 4, 2>(rng);
  const Eigen::Matrix<T, 2, 1> u(T(0.5), T(-1));
  keel::Gaussian<T, 4> g;
  g.mean = random_matrix<T, 4, 1>(rng);
  g.cov = random_spd<T, 4>(rng);
  keel::SqrtGaussian<T, 4> s;
  keel::UdGaussian<T, 4> d;
  REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
  REQUIRE(keel::to_ud(g, d) == keel::Status::ok);
  for (int k = 0; k < 10; ++k) {
    REQUIRE(keel::predict(g, f, b, u, q) == keel::Status::ok);
    REQUIRE(keel::predict(s, f, b, u, q) == keel::Status::ok);
    REQUIRE(keel::predict(d, f, b, u, q) == keel::Status::ok);
  }
  // Ten time updates of a κ ≤ 41 problem, each O(N) roundings per entry: 1e3·ε.
  const double tol = static_cast<double>(eps_times<T>(1e3));
  CHECK(rel_error(s.mean, g.mean) < tol);
  CHECK(rel_error(d.mean, g.mean) < tol);
  CHECK(rel_error(cov_in_double(s), cov_in_double(g)) < tol);
  CHECK(rel_error(cov_in_double(d), cov_in_double(g)) < tol);
  check_structure(s);
  check_structure(d);
  // From a perfectly known state, the predicted covariance is exactly Q's pattern: singular, still factored.
  keel::SqrtGaussian<T, 4> s0;
  s0.sqrt_cov.setZero();
  keel::UdGaussian<T, 4> d0;
  d0.d.setZero();
  REQUIRE(keel::predict(s0, f, q) == keel::Status::ok);
  REQUIRE(keel::predict(d0, f, q) == keel::Status::ok);
  CHECK(rel_error(cov_in_double(s0), q.template cast<double>()) < tol);
  CHECK(rel_error(cov_in_double(d0), q.template cast<double>()) < tol);
}

TEST_CASE_TEMPLATE("the gate rejects in every form alike and leaves the factors unchanged", T, float, double) {
  const auto run = make_run<T, 4, 2>(3);
  keel::Gaussian<T, 4> g;
  g.mean = run.x0;
  g.cov = run.p0;
  keel::SqrtGaussian<T, 4> s;
  keel::UdGaussian<T, 4> u;
  REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
  REQUIRE(keel::to_ud(g, u) == keel::Status::ok);
  // An outlier 50 standard deviations out; gate at the 99.9% point of chi-square with 2 degrees of freedom.
  Eigen::Matrix<T, 2, 1> z = run.h * run.x0;
  z(0) += T(50) * std::sqrt(run.r(0, 0) + (run.h.row(0) * run.p0 * run.h.row(0).transpose())(0));
  const keel::Gate<T> gate{static_cast<T>(keel::chi2_quantile(2, 0.999))};
  const auto s_before = s;
  const auto u_before = u;
  const auto ig = keel::correct(g, run.h, run.r, z, gate);
  const auto is = keel::correct(s, run.h, run.r, z, gate);
  const auto iu = keel::correct(u, run.h, run.r, z, gate);
  const auto ip = keel::correct_sequential(s, run.h, run.r_diag, z, gate);
  const auto ib = keel::correct_sequential(u, run.h, run.r_diag, z, gate);
  CHECK(ig.status == keel::Status::gated);
  CHECK(is.status == keel::Status::gated);
  CHECK(iu.status == keel::Status::gated);
  CHECK(ip.status == keel::Status::gated);
  CHECK(ib.status == keel::Status::gated);
  CHECK(same_bits(s, s_before));
  CHECK(same_bits(u, u_before));
  // The rejected measurement's NIS is reported, equal across forms (one correction of a κ ≤ 41 problem: 1e3·ε).
  const double tol = static_cast<double>(eps_times<T>(1e3));
  CHECK(std::abs(double(is.nis) - double(ig.nis)) < tol * double(ig.nis));
  CHECK(std::abs(double(iu.nis) - double(ig.nis)) < tol * double(ig.nis));
  CHECK(ip.nis > gate.threshold);
  CHECK(ib.nis > gate.threshold);
}

TEST_CASE_TEMPLATE("triangular Potter update equals P − b bᵀ / s", T, float, double) {
  // S' S'ᵀ = P − b bᵀ/s with φ = Sᵀh, s = φᵀφ + r, b = Sφ (the scalar Kalman covariance update, Kalman 1960);
  // S' lower-triangular with a non-negative diagonal. Also r = 0 (a perfect measurement: S' singular).
  std::mt19937 rng(21);
  for (int trial = 0; trial < 20; ++trial) {
    Eigen::Matrix<T, 7, 7> l = random_spd<T, 7>(rng);
    REQUIRE(keel::detail::cholesky_in_place(l));
    const Eigen::Matrix<T, 1, 7> h = random_matrix<T, 1, 7>(rng);
    const T r = trial % 5 == 0 ? T(0) : static_cast<T>(0.1 + 0.1 * trial);
    const Eigen::Matrix<T, 7, 1> phi = l.transpose() * h.transpose();
    const T s = phi.squaredNorm() + r;
    const Eigen::Matrix<double, 7, 7> ld0 = l.template cast<double>();
    const Eigen::Matrix<double, 7, 1> b = ld0 * phi.template cast<double>();
    const Eigen::Matrix<double, 7, 7> expected = ld0 * ld0.transpose() - b * b.transpose() / double(s);
    keel::detail::potter_triangular(l, phi, s, r);
    const Eigen::Matrix<double, 7, 7> ld = l.template cast<double>();
    // N rotations per entry, O(1) roundings each, on factors with κ ≤ 7 (random_spd): 1e3·ε relative to P.
    CHECK(rel_error((ld * ld.transpose()).eval(), expected) < double(eps_times<T>(1e3)));
    for (int j = 0; j < 7; ++j) {
      CHECK(l(j, j) >= T(0));
      for (int i = 0; i < j; ++i) CHECK(l(i, j) == T(0));
    }
  }
}
