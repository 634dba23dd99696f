// Monte Carlo NEES of the nonlinear filters on scenario 2 (a survey boat turning gently: mildly nonlinear):
// 50 seeded runs; the run-averaged NEES of a consistent filter is χ²(50·5)/50 at every step and must fall inside
// its 95% two-sided interval (Bar-Shalom, Li & Kirubarajan, 2001, sec. 5.4; from memory) for the EKF, the UKF
// and the square-root UKF.
#include <vector>

#include <doctest/doctest.h>

#include <keel/ekf.hpp>
#include <keel/ukf.hpp>

#include "../boat_problem.hpp"

using namespace keel_test;

namespace {

constexpr int kRuns = 50;
constexpr int kSteps = 100;

enum class Filter { ekf, ukf, sqrt_ukf };

template <typename T>
std::vector<double> run_nees(Filter which) {
  const Boat<T> boat;
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0);
  const keel::models::CoordinatedTurn<double> ctd;
  const Eigen::Matrix<double, 5, 5> lq = boat.q.template cast<double>().llt().matrixL();
  const Eigen::Matrix<double, 5, 5> lp = boat.prior.cov.template cast<double>().llt().matrixL();
  const Eigen::Matrix<double, 3, 1> sr = boat.r.diagonal().template cast<double>().cwiseSqrt();
  std::vector<double> nees(kSteps, 0.0);
  for (int run = 0; run < kRuns; ++run) {
    std::mt19937 rng(500u + unsigned(run));
    // The truth starts from the prior and moves by the filter's model with noise drawn from Q.
    Eigen::Matrix<double, 5, 1> truth =
        boat.prior.mean.template cast<double>() + lp * random_matrix<double, 5, 1>(rng);
    keel::Gaussian<T, 5> g = boat.prior;
    keel::SqrtGaussian<T, 5> s;
    REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
    for (int k = 0; k < kSteps; ++k) {
      truth = ctd(truth, double(boat.dt)) + lq * random_matrix<double, 5, 1>(rng);
      Eigen::Matrix<double, 3, 1> zd(truth(0), truth(1), keel::models::wrap_angle(truth(3)));
      zd += sr.cwiseProduct(random_matrix<double, 3, 1>(rng));
      const Eigen::Matrix<T, 3, 1> z = zd.template cast<T>();
      bool ok = false;
      if (which == Filter::ekf) {
        ok = keel::ekf::predict(g, boat.motion, boat.q, boat.dt) == keel::Status::ok &&
             keel::ekf::correct(g, boat.sensor, boat.r, z).ok();
      } else if (which == Filter::ukf) {
        ok = keel::ukf::predict(g, boat.motion, boat.q, rule, boat.dt) == keel::Status::ok &&
             keel::ukf::correct(g, boat.sensor, boat.r, z, rule).ok();
      } else {
        ok = keel::ukf::predict(s, boat.motion, boat.q, rule, boat.dt) == keel::Status::ok &&
             keel::ukf::correct(s, boat.sensor, boat.r, z, rule).ok();
      }
      REQUIRE(ok);
      // Neither the state's heading nor the truth's is wrapped, so their difference is the heading error.
      const Eigen::Matrix<T, 5, 1> t = truth.template cast<T>();
      const double e = which == Filter::sqrt_ukf ? double(keel::nees(s, t)) : double(keel::nees(g, t));
      nees[size_t(k)] += e / kRuns;
    }
  }
  return nees;
}

}  // namespace

TEST_CASE_TEMPLATE("EKF, UKF and square-root UKF: 50-run average NEES inside the 95% chi-square interval", T, float,
                   double) {
  // Interval of the 50-run average of χ²(5): χ²(250) quantiles / 50 (keel::chi2_quantile, checked against SciPy).
  const double lo = keel::chi2_quantile(kRuns * 5, 0.025) / kRuns;
  const double hi = keel::chi2_quantile(kRuns * 5, 0.975) / kRuns;
  const char* names[] = {"EKF", "UKF", "square-root UKF"};
  for (Filter which : {Filter::ekf, Filter::ukf, Filter::sqrt_ukf}) {
    const std::vector<double> nees = run_nees<T>(which);
    int inside = 0;
    for (double v : nees) inside += v >= lo && v <= hi;
    MESSAGE(std::string(names[int(which)]) << ": final average NEES " << nees.back() << " in [" << lo << ", " << hi << "]; "
                              << inside << "/" << kSteps << " steps inside");
    CHECK(nees.back() >= lo);
    CHECK(nees.back() <= hi);
    // About 95% of steps expected; steps share runs, so not binomial: at least 85% (as consistency_test.cpp).
    CHECK(inside >= int(0.85 * kSteps));
  }
}
