// Monte Carlo consistency (Bar-Shalom, Li & Kirubarajan, "Estimation with Applications to Tracking and
// Navigation", 2001, sec. 5.4; from memory): for a filter whose model matches the simulated system, the NEES of
// each run at a given step is χ²(n) and the NIS χ²(m); their average over R independent runs is χ²(R·n)/R and
// χ²(R·m)/R, which must fall inside the 95% two-sided interval. A filter with Q ten times too small must be
// flagged overconfident by keel::NisMonitor.
#include <vector>

#include <doctest/doctest.h>

#include <keel/gate.hpp>
#include <keel/linear.hpp>
#include <keel/models/kinematic.hpp>

#include "../support.hpp"

using namespace keel_test;

namespace {

constexpr int kRuns = 100;
constexpr int kSteps = 150;
using Model = keel::models::ConstantVelocity<double, 2>;  // the simulated truth (double)

struct Sums {
  std::vector<double> nees = std::vector<double>(kSteps, 0.0);
  std::vector<double> nis = std::vector<double>(kSteps, 0.0);
};

// One run of a 2-axis constant-velocity target (a lawn robot, demo numbers: dt = 0.5 s, σ_a = 0.5 m/s²,
// position fixes σ = 0.3 m), filtered in T with the process noise scaled by q_scale (1 = matched model).
template <typename T>
void run_once(unsigned seed, double q_scale, Sums& sums, keel::NisMonitor<T, 2, 100>* monitor) {
  const double dt = 0.5;
  const auto f = Model::transition(dt);
  const auto q = Model::noise_piecewise_constant(dt, 0.5);
  const auto h = Model::position_matrix();
  const Eigen::Matrix2d r = Eigen::Matrix2d::Identity() * 0.09;
  std::mt19937 rng(seed);
  // The truth's initial state is drawn from the filter's prior, as the consistency test requires.
  Eigen::Vector4d sd(2.0, 0.5, 2.0, 0.5);
  Eigen::Vector4d truth = sd.cwiseProduct(random_matrix<double, 4, 1>(rng));
  keel::Gaussian<T, 4> est;
  est.mean.setZero();
  est.cov = sd.cwiseAbs2().cast<T>().asDiagonal();
  // Process noise enters through G (piecewise-constant acceleration per axis): w = G a, a ~ N(0, σ²).
  Eigen::Matrix<double, 4, 2> g = Eigen::Matrix<double, 4, 2>::Zero();
  g(0, 0) = g(2, 1) = dt * dt / 2;
  g(1, 0) = g(3, 1) = dt;
  const Eigen::Matrix<T, 4, 4> ft = f.cast<T>();
  const Eigen::Matrix<T, 4, 4> qt = (q_scale * q).cast<T>();
  const Eigen::Matrix<T, 2, 4> ht = h.cast<T>();
  const Eigen::Matrix<T, 2, 2> rt = r.cast<T>();
  for (int k = 0; k < kSteps; ++k) {
    if (k > 0) {
      truth = f * truth + g * random_matrix<double, 2, 1>(rng, 0.5);
      REQUIRE(keel::predict(est, ft, qt) == keel::Status::ok);
    }
    const Eigen::Vector2d z = h * truth + random_matrix<double, 2, 1>(rng, 0.3);
    const auto inn = keel::correct(est, ht, rt, z.cast<T>().eval());
    REQUIRE(inn.ok());
    sums.nis[static_cast<size_t>(k)] += double(inn.nis);
    sums.nees[static_cast<size_t>(k)] += double(keel::nees(est, truth.cast<T>().eval()));
    if (monitor) monitor->add(inn);
  }
}

}  // namespace

TEST_CASE_TEMPLATE("100-run Monte Carlo: average NEES and NIS inside their 95% chi-square intervals", T, float,
                   double) {
  Sums sums;
  for (int run = 0; run < kRuns; ++run) run_once<T>(1000u + unsigned(run), 1.0, sums, nullptr);
  // Two-sided 95% interval of the run average: χ²(R·dof) quantiles / R (keel::chi2_quantile, checked against
  // SciPy in chi2_test.cpp).
  const double nees_lo = keel::chi2_quantile(kRuns * 4, 0.025) / kRuns;
  const double nees_hi = keel::chi2_quantile(kRuns * 4, 0.975) / kRuns;
  const double nis_lo = keel::chi2_quantile(kRuns * 2, 0.025) / kRuns;
  const double nis_hi = keel::chi2_quantile(kRuns * 2, 0.975) / kRuns;
  int nees_inside = 0;
  int nis_inside = 0;
  for (int k = 0; k < kSteps; ++k) {
    const double nees = sums.nees[size_t(k)] / kRuns;
    const double nis = sums.nis[size_t(k)] / kRuns;
    nees_inside += nees >= nees_lo && nees <= nees_hi;
    nis_inside += nis >= nis_lo && nis <= nis_hi;
  }
  const double last_nees = sums.nees.back() / kRuns;
  const double last_nis = sums.nis.back() / kRuns;
  MESSAGE("final step: average NEES " << last_nees << " in [" << nees_lo << ", " << nees_hi << "], average NIS "
                                      << last_nis << " in [" << nis_lo << ", " << nis_hi << "]; steps inside: NEES "
                                      << nees_inside << "/" << kSteps << ", NIS " << nis_inside << "/" << kSteps);
  CHECK(last_nees >= nees_lo);
  CHECK(last_nees <= nees_hi);
  CHECK(last_nis >= nis_lo);
  CHECK(last_nis <= nis_hi);
  // Over all steps about 95% should be inside; the steps are correlated (same runs), so the count is not
  // binomial: at least 85% (common practice for reading these plots) is required.
  CHECK(nees_inside >= int(0.85 * kSteps));
  CHECK(nis_inside >= int(0.85 * kSteps));
}

TEST_CASE_TEMPLATE("NisMonitor flags a filter whose Q is ten times too small as overconfident", T, float, double) {
  Sums ignored;
  keel::NisMonitor<T, 2, 100> matched(0.95);
  keel::NisMonitor<T, 2, 100> mistuned(0.95);
  run_once<T>(7, 1.0, ignored, &matched);
  run_once<T>(7, 0.1, ignored, &mistuned);
  MESSAGE("mean NIS over the last 100 steps: matched " << matched.mean() << ", Q/10 " << mistuned.mean()
                                                       << " (interval [" << matched.lower() << ", "
                                                       << matched.upper() << "])");
  CHECK(matched.verdict() == keel::Consistency::consistent);
  CHECK(mistuned.verdict() == keel::Consistency::overconfident);
}
