// Extended Kalman filter (ekf.hpp), float and double: the three Jacobian sources agree on the scenario-2 models;
// on a linear model the EKF is the linear filter; Gaussian and SqrtGaussian EKFs agree; the iterated update
// lowers the MAP cost; angle residuals wrap; bad input returns its Status with the estimate unchanged.
#include <doctest/doctest.h>

#include <keel/ekf.hpp>

#include "boat_problem.hpp"

using namespace keel_test;

TEST_CASE_TEMPLATE("analytic, autodiff and numeric Jacobians agree on the scenario-2 models", T, float, double) {
  const keel::models::CoordinatedTurn<T> ct;
  keel::models::RangeBearing<T, 5> rb;
  rb.origin << T(40), T(-25);
  // Autodiff differentiates the same expressions exactly, so it matches the analytic Jacobian to rounding
  // (100·ε relative); central differences with the ε^(1/3) step are accurate to about ε^(2/3) of the scale of
  // the second derivatives (here O(1)): 1e3·ε^(2/3) allows for it (Press et al., 2007, sec. 5.7; from memory).
  const double tol_ad = static_cast<double>(eps_times<T>(100));
  const double tol_num = 1e3 * std::pow(static_cast<double>(std::numeric_limits<T>::epsilon()), 2.0 / 3.0);
  for (double rate : {0.3, 1e-5, 0.0}) {
    Eigen::Matrix<T, 5, 1> x;
    x << T(3), T(-4), T(2.5), T(0.8), T(rate);
    const auto ja = keel::model_jacobian(ct, x, T(0.5));
    CHECK(rel_error(keel::model_jacobian(keel::autodiff_model(ct), x, T(0.5)), ja) < tol_ad);
    CHECK(rel_error(keel::model_jacobian(keel::numeric_model(ct), x, T(0.5)), ja) < tol_num);
    const auto jr = keel::model_jacobian(rb, x);
    CHECK(rel_error(keel::model_jacobian(keel::autodiff_model(rb), x), jr) < tol_ad);
    CHECK(rel_error(keel::model_jacobian(keel::numeric_model(rb), x), jr) < tol_num);
  }
  // A model with no jacobian() is differentiated automatically (its call operator is a template).
  const FixAndCompass<T> fc;
  Eigen::Matrix<T, 5, 1> x = Eigen::Matrix<T, 5, 1>::Ones();
  Eigen::Matrix<T, 3, 5> expected = Eigen::Matrix<T, 3, 5>::Zero();
  expected(0, 0) = expected(1, 1) = expected(2, 3) = T(1);
  CHECK(keel::model_jacobian(fc, x) == expected);
}

TEST_CASE_TEMPLATE("on a linear model the EKF is the linear Kalman filter", T, float, double) {
  std::mt19937 rng(40);
  const Eigen::Matrix<T, 4, 4> f = Eigen::Matrix<T, 4, 4>::Identity() + random_matrix<T, 4, 4>(rng, 0.1);
  const Eigen::Matrix<T, 2, 4> h = random_matrix<T, 2, 4>(rng);
  const Eigen::Matrix<T, 4, 4> q = random_spd<T, 4>(rng, 0.01, 0.1);
  const Eigen::Matrix<T, 2, 2> r = random_spd<T, 2>(rng, 0.1, 1.0);
  const auto motion = [&](const Eigen::Matrix<T, 4, 1>& x) -> Eigen::Matrix<T, 4, 1> { return f * x; };
  struct Linear {
    Eigen::Matrix<T, 2, 4> h;
    Eigen::Matrix<T, 2, 1> operator()(const Eigen::Matrix<T, 4, 1>& x) const { return h * x; }
    Eigen::Matrix<T, 2, 4> jacobian(const Eigen::Matrix<T, 4, 1>&) const { return h; }
  };
  keel::Gaussian<T, 4> kf;
  kf.mean = random_matrix<T, 4, 1>(rng);
  kf.cov = random_spd<T, 4>(rng);
  auto ekf = kf;
  const auto numeric_motion = keel::numeric_model(motion);
  for (int k = 0; k < 20; ++k) {
    const Eigen::Matrix<T, 2, 1> z = random_matrix<T, 2, 1>(rng);
    REQUIRE(keel::predict(kf, f, q) == keel::Status::ok);
    REQUIRE(keel::ekf::predict(ekf, numeric_motion, q) == keel::Status::ok);
    REQUIRE(keel::correct(kf, h, r, z).ok());
    REQUIRE(keel::ekf::correct(ekf, Linear{h}, r, z).ok());
  }
  // The numeric Jacobian of a linear map is F up to ε^(2/3) relative (the differences are exact up to rounding
  // of the step): 1e3·ε^(2/3) as above, over 20 contractive steps.
  const double tol = 1e3 * std::pow(static_cast<double>(std::numeric_limits<T>::epsilon()), 2.0 / 3.0);
  CHECK(rel_error(ekf.mean, kf.mean) < tol);
  CHECK(rel_error(ekf.cov, kf.cov) < tol);
}

TEST_CASE_TEMPLATE("EKF on Gaussian and SqrtGaussian agree over 100 steps of scenario 2", T, float, double) {
  const Boat<T> boat;
  std::mt19937 rng(41);
  keel::Gaussian<T, 5> g = boat.prior;
  keel::SqrtGaussian<T, 5> s;
  REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
  Eigen::Matrix<double, 5, 1> truth = boat.prior.mean.template cast<double>();
  const keel::models::CoordinatedTurn<double> ctd;
  for (int k = 0; k < 100; ++k) {
    truth = ctd(truth, 0.5);
    Eigen::Matrix<T, 3, 1> z(T(truth(0)), T(truth(1)), T(keel::models::wrap_angle(truth(3))));
    z += (boat.r.diagonal().cwiseSqrt().template cast<double>().cwiseProduct(random_matrix<double, 3, 1>(rng)))
             .template cast<T>();
    REQUIRE(keel::ekf::predict(g, boat.motion, boat.q, boat.dt) == keel::Status::ok);
    REQUIRE(keel::ekf::predict(s, boat.motion, boat.q, boat.dt) == keel::Status::ok);
    const auto ig = keel::ekf::correct(g, boat.sensor, boat.r, z);
    const auto is = keel::ekf::correct(s, boat.sensor, boat.r, z);
    REQUIRE(ig.ok());
    REQUIRE(is.ok());
  }
  // Same linearization points up to rounding, well-conditioned updates, contractive filter: 1e4·ε (as in
  // factored_equivalence_test.cpp).
  const double tol = static_cast<double>(eps_times<T>(1e4));
  CHECK(rel_error(s.mean, g.mean) < tol);
  CHECK(rel_error(cov_in_double(s), cov_in_double(g)) < tol);
}

TEST_CASE_TEMPLATE("iterated EKF: Gauss–Newton lowers the MAP cost; residuals wrap across ±π", T, float, double) {
  // J(x) = ½ (z ⊟ h(x))ᵀ R⁻¹ (z ⊟ h(x)) + ½ (x − x⁻)ᵀ P⁻¹ (x − x⁻): the iterated update is Gauss–Newton on J
  // (Bell & Cathey, 1993), so from the EKF's single step it can only lower J on this mildly nonlinear problem.
  keel::models::RangeBearing<T, 5> rb;
  rb.origin << T(5), T(5);
  keel::Gaussian<T, 5> prior;
  prior.mean << T(0), T(0), T(1), T(0), T(0);
  prior.cov = Eigen::Matrix<T, 5, 1>(T(9), T(9), T(1), T(1), T(1)).asDiagonal();
  const Eigen::Matrix<T, 2, 2> r = Eigen::Matrix<T, 2, 1>(T(0.01), T(1e-4)).asDiagonal();
  const Eigen::Matrix<T, 2, 1> z(T(9.0), T(-2.0));  // the boat is further and more to the south than believed
  auto cost = [&](const Eigen::Matrix<T, 5, 1>& x) {
    const Eigen::Matrix<double, 2, 1> e = rb.residual(z, rb(x)).template cast<double>();
    const Eigen::Matrix<double, 5, 1> d = (x - prior.mean).template cast<double>();
    return 0.5 * e.dot(r.template cast<double>().inverse() * e) +
           0.5 * d.dot(prior.cov.template cast<double>().inverse() * d);
  };
  auto ekf = prior;
  auto iekf = prior;
  REQUIRE(keel::ekf::correct(ekf, rb, r, z).ok());
  REQUIRE(keel::ekf::correct_iterated(iekf, rb, r, z, keel::ekf::Iterations{20, 1e-9}).ok());
  MESSAGE("MAP cost: prior " << cost(prior.mean) << ", EKF " << cost(ekf.mean) << ", iterated " << cost(iekf.mean));
  CHECK(cost(iekf.mean) < cost(ekf.mean));
  // With one iteration the iterated update is the EKF update (same equations, same order).
  auto one = prior;
  REQUIRE(keel::ekf::correct_iterated(one, rb, r, z, keel::ekf::Iterations{1, 0.0}).ok());
  CHECK(rel_error(one.mean, ekf.mean) < static_cast<double>(eps_times<T>(100)));

  // Compass across the ±π cut: believed heading −179.4°, measured +179.4°: a 1.2° correction, not 358.8°.
  const Boat<T> boat;
  auto est = boat.prior;
  const T pi = T(3.14159265358979323846);
  est.mean(3) = -pi + T(0.01);
  const Eigen::Matrix<T, 3, 1> z3(T(0), T(0), pi - T(0.01));
  const auto inn = keel::ekf::correct(est, boat.sensor, boat.r, z3);
  REQUIRE(inn.ok());
  CHECK(std::abs(double(inn.residual(2)) + 0.02) < static_cast<double>(eps_times<T>(100)));
  CHECK(std::abs(double(est.mean(3) - (-pi + T(0.01)))) < 0.03);
}

TEST_CASE_TEMPLATE("EKF: bad input returns its Status and leaves the estimate unchanged", T, float, double) {
  const Boat<T> boat;
  const T nan = std::numeric_limits<T>::quiet_NaN();
  auto est = boat.prior;
  const auto before = est;
  Eigen::Matrix<T, 3, 1> z(T(1), T(2), T(0.3));
  auto bad_z = z;
  bad_z(1) = nan;
  CHECK(keel::ekf::correct(est, boat.sensor, boat.r, bad_z).status == keel::Status::non_finite);
  CHECK(keel::ekf::correct_iterated(est, boat.sensor, boat.r, bad_z).status == keel::Status::non_finite);
  Eigen::Matrix<T, 3, 3> bad_r = boat.r;
  bad_r(2, 2) = T(-1);
  CHECK(keel::ekf::correct(est, boat.sensor, bad_r, z).status == keel::Status::negative_variance);
  CHECK(keel::ekf::predict(est, boat.motion, boat.q, nan) == keel::Status::non_finite);  // dt NaN: f(x) NaN
  Eigen::Matrix<T, 5, 5> bad_q = boat.q;
  bad_q(0, 0) = T(-1);
  CHECK(keel::ekf::predict(est, boat.motion, bad_q, boat.dt) == keel::Status::negative_variance);
  const keel::Gate<T> tight{T(0)};
  CHECK(keel::ekf::correct(est, boat.sensor, boat.r, z, tight).status == keel::Status::gated);
  CHECK(same_bits(est, before));
  keel::SqrtGaussian<T, 5> s;
  REQUIRE(keel::to_sqrt(boat.prior, s) == keel::Status::ok);
  const auto s_before = s;
  CHECK(keel::ekf::correct(s, boat.sensor, boat.r, bad_z).status == keel::Status::non_finite);
  CHECK(keel::ekf::predict(s, boat.motion, bad_q, boat.dt) == keel::Status::negative_variance);
  CHECK(same_bits(s, s_before));
}
