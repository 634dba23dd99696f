// Unscented Kalman filter (ukf.hpp), float and double: the UKF and the square-root UKF agree over 200 steps of
// scenario 2 for several sigma rules (including a negative centre weight); on a linear model the UKF is the
// linear filter; gating and bad input leave the estimate unchanged.
#include <doctest/doctest.h>

#include <keel/ukf.hpp>

#include "boat_problem.hpp"

using namespace keel_test;

TEST_CASE_TEMPLATE("UKF and square-root UKF agree over 200 steps of scenario 2", T, float, double) {
  const Boat<T> boat;
  // α = 0.5 (β = 2): W^c_0 = −0.75 + 1 − 0.25 + 2 > 0... and α = 0.3: W^c_0 < 0, exercising the downdate.
  for (const auto& rule : {keel::SigmaRule::scaled(0.5, 2.0, 0.0), keel::SigmaRule::scaled(0.3, 2.0, 0.0),
                           keel::SigmaRule::cubature()}) {
    CAPTURE(rule.alpha);
    std::mt19937 rng(42);
    keel::Gaussian<T, 5> g = boat.prior;
    keel::SqrtGaussian<T, 5> s;
    REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
    Eigen::Matrix<double, 5, 1> truth = boat.prior.mean.template cast<double>();
    const keel::models::CoordinatedTurn<double> ctd;
    for (int k = 0; k < 200; ++k) {
      truth = ctd(truth, 0.5);
      Eigen::Matrix<T, 3, 1> z(T(truth(0)), T(truth(1)), T(keel::models::wrap_angle(truth(3))));
      z += (boat.r.diagonal().cwiseSqrt().template cast<double>().cwiseProduct(random_matrix<double, 3, 1>(rng)))
               .template cast<T>();
      REQUIRE(keel::ukf::predict(g, boat.motion, boat.q, rule, boat.dt) == keel::Status::ok);
      REQUIRE(keel::ukf::predict(s, boat.motion, boat.q, rule, boat.dt) == keel::Status::ok);
      const auto ig = keel::ukf::correct(g, boat.sensor, boat.r, z, rule);
      const auto is = keel::ukf::correct(s, boat.sensor, boat.r, z, rule);
      REQUIRE(ig.ok());
      REQUIRE(is.ok());
    }
    // Same sigma points up to the rounding of the factor, contractive filter: 1e4·ε as for the linear forms,
    // times 1/|W^c_0| ≤ 10 for the negative-weight rule (its downdate amplifies rounding by that much).
    const double tol = static_cast<double>(eps_times<T>(1e5));
    CHECK(rel_error(s.mean, g.mean) < tol);
    CHECK(rel_error(cov_in_double(s), cov_in_double(g)) < tol);
  }
}

TEST_CASE_TEMPLATE("on a linear model the UKF is the linear Kalman filter", T, float, double) {
  std::mt19937 rng(43);
  const Eigen::Matrix<T, 4, 4> f = Eigen::Matrix<T, 4, 4>::Identity() + random_matrix<T, 4, 4>(rng, 0.1);
  const Eigen::Matrix<T, 2, 4> h = random_matrix<T, 2, 4>(rng);
  const Eigen::Matrix<T, 4, 4> q = random_spd<T, 4>(rng, 0.01, 0.1);
  const Eigen::Matrix<T, 2, 2> r = random_spd<T, 2>(rng, 0.1, 1.0);
  const auto motion = [&](const Eigen::Matrix<T, 4, 1>& x) -> Eigen::Matrix<T, 4, 1> { return f * x; };
  const auto sensor = [&](const Eigen::Matrix<T, 4, 1>& x) -> Eigen::Matrix<T, 2, 1> { return h * x; };
  keel::Gaussian<T, 4> kf;
  kf.mean = random_matrix<T, 4, 1>(rng);
  kf.cov = random_spd<T, 4>(rng);
  auto ukf = kf;
  keel::SqrtGaussian<T, 4> sr;
  REQUIRE(keel::to_sqrt(kf, sr) == keel::Status::ok);
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0);
  for (int k = 0; k < 20; ++k) {
    const Eigen::Matrix<T, 2, 1> z = random_matrix<T, 2, 1>(rng);
    REQUIRE(keel::predict(kf, f, q) == keel::Status::ok);
    REQUIRE(keel::ukf::predict(ukf, motion, q, rule) == keel::Status::ok);
    REQUIRE(keel::ukf::predict(sr, motion, q, rule) == keel::Status::ok);
    REQUIRE(keel::correct(kf, h, r, z).ok());
    REQUIRE(keel::ukf::correct(ukf, sensor, r, z, rule).ok());
    REQUIRE(keel::ukf::correct(sr, sensor, r, z, rule).ok());
  }
  // The transform is exact for linear maps (unscented_test.cpp), so only rounding differs: 1e4·ε.
  const double tol = static_cast<double>(eps_times<T>(1e4));
  CHECK(rel_error(ukf.mean, kf.mean) < tol);
  CHECK(rel_error(ukf.cov, kf.cov) < tol);
  CHECK(rel_error(sr.mean, kf.mean) < tol);
  CHECK(rel_error(cov_in_double(sr), cov_in_double(kf)) < tol);
}

TEST_CASE_TEMPLATE("UKF: gating and bad input leave the estimate unchanged", T, float, double) {
  const Boat<T> boat;
  const keel::SigmaRule rule = keel::SigmaRule::cubature();
  auto g = boat.prior;
  keel::SqrtGaussian<T, 5> s;
  REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
  const auto g0 = g;
  const auto s0 = s;
  const Eigen::Matrix<T, 3, 1> z(T(50), T(0), T(0.3));  // 50 m off: NIS ≈ 600
  const keel::Gate<T> gate{static_cast<T>(keel::chi2_quantile(3, 0.999))};
  const auto ig = keel::ukf::correct(g, boat.sensor, boat.r, z, rule, gate);
  const auto is = keel::ukf::correct(s, boat.sensor, boat.r, z, rule, gate);
  CHECK(ig.status == keel::Status::gated);
  CHECK(is.status == keel::Status::gated);
  // The two forms report the same NIS for the rejected report (one transform, κ ≤ 10: 1e3·ε).
  CHECK(std::abs(double(ig.nis - is.nis)) < static_cast<double>(eps_times<T>(1e3)) * double(ig.nis));
  Eigen::Matrix<T, 3, 1> bad_z = z;
  bad_z(0) = std::numeric_limits<T>::infinity();
  CHECK(keel::ukf::correct(g, boat.sensor, boat.r, bad_z, rule).status == keel::Status::non_finite);
  CHECK(keel::ukf::correct(s, boat.sensor, boat.r, bad_z, rule).status == keel::Status::non_finite);
  Eigen::Matrix<T, 5, 5> bad_q = boat.q;
  bad_q(4, 4) = T(-1);
  CHECK(keel::ukf::predict(g, boat.motion, bad_q, rule, boat.dt) == keel::Status::negative_variance);
  CHECK(keel::ukf::predict(s, boat.motion, bad_q, rule, boat.dt) == keel::Status::negative_variance);
  CHECK(keel::ukf::predict(g, boat.motion, boat.q, rule, std::numeric_limits<T>::quiet_NaN()) ==
        keel::Status::non_finite);
  CHECK(keel::ukf::predict(s, boat.motion, boat.q, rule, std::numeric_limits<T>::quiet_NaN()) ==
        keel::Status::non_finite);
  auto indefinite = g;
  indefinite.cov(0, 1) = indefinite.cov(1, 0) = T(10);  // |cov01| > √(cov00 cov11)
  const auto indefinite0 = indefinite;
  CHECK(keel::ukf::predict(indefinite, boat.motion, boat.q, rule, boat.dt) == keel::Status::not_positive_definite);
  CHECK(same_bits(indefinite, indefinite0));
  CHECK(same_bits(g, g0));
  CHECK(same_bits(s, s0));
}
