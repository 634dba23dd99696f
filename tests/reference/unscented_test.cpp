// keel::unscented_transform (sigma.hpp) against closed forms derived below and an independent NumPy
// implementation run at test time, float and double.
#include <doctest/doctest.h>

#include <keel/models/planar.hpp>
#include <keel/sigma.hpp>

#include "../support.hpp"

using namespace keel_test;

namespace {

struct PolarToCartesian {
  template <typename S>
  Eigen::Matrix<S, 2, 1> operator()(const Eigen::Matrix<S, 2, 1>& p) const {
    using std::cos;
    using std::sin;
    return Eigen::Matrix<S, 2, 1>(p(0) * cos(p(1)), p(0) * sin(p(1)));
  }
};

}  // namespace

TEST_CASE_TEMPLATE("unscented transform of a linear map is exact: A m, A P Aᵀ, P Aᵀ", T, float, double) {
  // For g(x) = A x every sigma point maps linearly, the weights sum to one and the symmetric set has covariance P,
  // so the transform returns A m, A P Aᵀ and P Aᵀ exactly in exact arithmetic (Julier & Uhlmann, 1997).
  std::mt19937 rng(11);
  const Eigen::Matrix<T, 3, 4> a = random_matrix<T, 3, 4>(rng);
  keel::Gaussian<T, 4> est;
  est.mean = random_matrix<T, 4, 1>(rng);
  est.cov = random_spd<T, 4>(rng);
  const auto linear = [&](const Eigen::Matrix<T, 4, 1>& x) -> Eigen::Matrix<T, 3, 1> { return a * x; };
  const Eigen::Matrix<double, 3, 4> ad = a.template cast<double>();
  const Eigen::Matrix<double, 4, 4> pd = est.cov.template cast<double>();
  for (const auto& rule : {keel::SigmaRule::scaled(1.0, 2.0, 0.0), keel::SigmaRule::scaled(0.5, 2.0, 1.0),
                           keel::SigmaRule::cubature()}) {
    const auto ut = keel::unscented_transform(linear, est, rule);
    REQUIRE(ut.ok());
    // Sums of 2N+1 terms of O(1) size with weights up to 1/α² ≈ 4: 1e3·ε relative.
    const double tol = static_cast<double>(eps_times<T>(1e3));
    CHECK(rel_error(ut.gaussian.mean, (ad * est.mean.template cast<double>()).eval()) < tol);
    CHECK(rel_error(ut.gaussian.cov, (ad * pd * ad.transpose()).eval()) < tol);
    CHECK(rel_error(ut.cross_cov, (pd * ad.transpose()).eval()) < tol);
  }
}

TEST_CASE_TEMPLATE("polar to Cartesian: closed form, the UT beats linearization, NumPy agrees", T, float, double) {
  // r ~ N(r0, σr²), θ ~ N(θ0, σθ²) independent; x = r cos θ, y = r sin θ. With the characteristic function of a
  // Gaussian, E[cos θ] = cos θ0 e^(−σθ²/2), E[sin θ] = sin θ0 e^(−σθ²/2), and E[cos 2θ] = cos 2θ0 e^(−2σθ²),
  // E[sin 2θ] = sin 2θ0 e^(−2σθ²). With E[r] = r0, E[r²] = r0² + σr²:
  //   mean = r0 e^(−σθ²/2) (cos θ0, sin θ0),
  //   E[x²] = (r0² + σr²)(1 + cos 2θ0 e^(−2σθ²))/2,  E[y²] = (r0² + σr²)(1 − cos 2θ0 e^(−2σθ²))/2,
  //   E[xy] = (r0² + σr²) sin 2θ0 e^(−2σθ²)/2,  cov = E[z zᵀ] − mean meanᵀ.
  const double r0 = 100.0, th0 = 0.6, sr = 1.0, sth = 0.5;  // a 0.5 rad (29°) bearing standard deviation
  const double e1 = std::exp(-sth * sth / 2), e2 = std::exp(-2 * sth * sth), m2 = r0 * r0 + sr * sr;
  Eigen::Vector2d mean(r0 * e1 * std::cos(th0), r0 * e1 * std::sin(th0));
  Eigen::Matrix2d second;
  second << m2 * (1 + std::cos(2 * th0) * e2) / 2, m2 * std::sin(2 * th0) * e2 / 2, m2 * std::sin(2 * th0) * e2 / 2,
      m2 * (1 - std::cos(2 * th0) * e2) / 2;
  const Eigen::Matrix2d cov = second - mean * mean.transpose();

  keel::Gaussian<T, 2> polar;
  polar.mean << T(r0), T(th0);
  polar.cov = Eigen::Matrix<T, 2, 1>(T(sr * sr), T(sth * sth)).asDiagonal();
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 1.0);  // κ = 3 − N
  const auto ut = keel::unscented_transform(PolarToCartesian{}, polar, rule);
  REQUIRE(ut.ok());
  // The linearized (EKF) mean is g(m) = r0 (cos θ0, sin θ0): it ignores the shrinkage e^(−σθ²/2) = 0.88.
  const Eigen::Vector2d linearized(r0 * std::cos(th0), r0 * std::sin(th0));
  const double ut_error = (ut.gaussian.mean.template cast<double>() - mean).norm();
  const double lin_error = (linearized - mean).norm();
  MESSAGE("mean error: unscented " << ut_error << " m, linearized " << lin_error << " m");
  CHECK(ut_error < 0.5 * lin_error);
  // NumPy's independent implementation of the same transform (tests/reference/unscented.py).
  const std::string out = run_python("reference/unscented.py", "1 2 1\n" + to_text(polar.mean) + to_text(polar.cov));
  size_t pos = 0;
  const auto np_mean = from_text<2, 1>(out, pos);
  const auto np_cov = from_text<2, 2>(out, pos);
  const auto np_cross = from_text<2, 2>(out, pos);
  // Five sigma points through cos/sin of O(1) arguments and sums of O(r0²) terms: 1e3·ε relative.
  const double tol = static_cast<double>(eps_times<T>(1e3));
  CHECK(rel_error(ut.gaussian.mean, np_mean) < tol);
  CHECK(rel_error(ut.gaussian.cov, np_cov) < tol);
  CHECK(rel_error(ut.cross_cov, np_cross) < tol);
  // And the UT covariance is within 20% of the true one here (it is a second-order method, not exact).
  CHECK(rel_error(ut.gaussian.cov, cov) < 0.2);
}

TEST_CASE_TEMPLATE("quadratic form xᵀAx: the mean is exact, and the variance too in one dimension", T, float, double) {
  // y = xᵀAx with x ~ N(m, P): E[y] = tr(AP) + mᵀAm (expectation of a quadratic form); the symmetric set
  // integrates every polynomial of degree ≤ 3 exactly, so the UT mean equals it for any α, κ (Julier 2002).
  std::mt19937 rng(12);
  Eigen::Matrix<T, 3, 3> a = random_matrix<T, 3, 3>(rng);
  a = (a + a.transpose()).eval() / T(2);
  keel::Gaussian<T, 3> est;
  est.mean = random_matrix<T, 3, 1>(rng);
  est.cov = random_spd<T, 3>(rng);
  const auto quad = [&](const Eigen::Matrix<T, 3, 1>& x) -> Eigen::Matrix<T, 1, 1> {
    return Eigen::Matrix<T, 1, 1>(x.dot(a * x));
  };
  const Eigen::Matrix3d ad = a.template cast<double>();
  const Eigen::Matrix3d pd = est.cov.template cast<double>();
  const Eigen::Vector3d md = est.mean.template cast<double>();
  const double exact_mean = (ad * pd).trace() + md.dot(ad * md);
  for (const auto& rule : {keel::SigmaRule::scaled(1.0, 2.0, 0.0), keel::SigmaRule::cubature(),
                           keel::SigmaRule::scaled(0.7, 2.0, 2.0)}) {
    const auto ut = keel::unscented_transform(quad, est, rule);
    REQUIRE(ut.ok());
    CHECK(std::abs(double(ut.gaussian.mean(0)) - exact_mean) < static_cast<double>(eps_times<T>(1e3)) *
                                                                      (1 + std::abs(exact_mean)));
  }
  // One dimension, y = a x²: Var y = 2a²p² + 4a²m²p. With κ = 3 − N = 2, α = 1, β = 0 the points are m, m ± √(3p)
  // with weights 2/3, 1/6, 1/6, which match the Gaussian's fourth moment 3p²: expanding Σ W (y_i − ȳ)² gives
  // (2/3)a²p² + (1/6)a²[2·12 m²p + 2·4p²] = 2a²p² + 4a²m²p exactly.
  keel::Gaussian<T, 1> one;
  one.mean(0) = T(0.8);
  one.cov(0, 0) = T(0.3);
  const T a1 = T(1.7);
  const auto square = [&](const Eigen::Matrix<T, 1, 1>& x) -> Eigen::Matrix<T, 1, 1> {
    return Eigen::Matrix<T, 1, 1>(a1 * x(0) * x(0));
  };
  const auto ut1 = keel::unscented_transform(square, one, keel::SigmaRule::scaled(1.0, 0.0, 2.0));
  REQUIRE(ut1.ok());
  const double m = 0.8, p = 0.3, av = double(a1);
  const double var = 2 * av * av * p * p + 4 * av * av * m * m * p;
  CHECK(std::abs(double(ut1.gaussian.cov(0, 0)) - var) < static_cast<double>(eps_times<T>(100)) * var);
  CHECK(std::abs(double(ut1.gaussian.mean(0)) - av * (m * m + p)) < static_cast<double>(eps_times<T>(100)));
}

TEST_CASE_TEMPLATE("a model's own mean: bearings spread across ±π average to ±π", T, float, double) {
  // A target 50 m straight behind the sensor (bearing π) with 2 m of lateral uncertainty: half of the sigma points
  // have bearings near +π and half near −π. Their plain weighted average is ≈ 0 (pointing ahead); the range/bearing
  // model's own mean (wrapped deviations from the centre point) gives π. Closed form of the bearing mean by
  // symmetry: the points are symmetric about the x axis, so the mean bearing is exactly π (or −π).
  keel::models::RangeBearing<T, 2> rb;
  keel::Gaussian<T, 2> target;
  target.mean << T(-50), T(0);
  target.cov = Eigen::Matrix<T, 2, 1>(T(1), T(4)).asDiagonal();
  const auto ut = keel::unscented_transform(rb, target, keel::SigmaRule::scaled(1.0, 2.0, 1.0));
  REQUIRE(ut.ok());
  CHECK(std::abs(std::abs(double(ut.gaussian.mean(1))) - 3.141592653589793) < static_cast<double>(eps_times<T>(100)));
  // The bearing variance is that of atan2(±σ_y·c, 50) about π, not of a jump of 2π: (2/50)² to first order.
  CHECK(double(ut.gaussian.cov(1, 1)) < 2 * 0.04 * 0.04);
}
