// Reference checks of keel::chi2_quantile and keel::nees (gate.hpp).
#include <doctest/doctest.h>

#include <keel/gate.hpp>

#include "../support.hpp"

using namespace keel_test;

TEST_CASE("chi2_quantile matches SciPy's chi2.ppf to 1e-9 relative for dof 1..30 and p in [0.5, 0.9999]") {
  const double ps[] = {0.5, 0.75, 0.9, 0.95, 0.975, 0.99, 0.995, 0.999, 0.9999, 0.025, 0.001};
  std::string input;
  for (int dof = 1; dof <= 30; ++dof)
    for (double p : ps) input += std::to_string(dof) + " " + std::to_string(p) + "\n";
  // Also large degrees of freedom, as used for the interval of a mean NIS over a long run.
  for (int dof : {100, 1000, 20000})
    for (double p : {0.025, 0.975}) input += std::to_string(dof) + " " + std::to_string(p) + "\n";
  const std::string out = run_python("reference/chi2.py", input);
  REQUIRE_MESSAGE(!out.empty(), "SciPy reference unavailable: install python3-scipy");
  const char* in = input.c_str();
  const char* o = out.c_str();
  char* end = nullptr;
  int checked = 0;
  while (*in) {
    const long dof = std::strtol(in, &end, 10);
    in = end;
    const double p = std::strtod(in, &end);
    in = end;
    while (*in == '\n') ++in;
    const double ref = std::strtod(o, &end);
    o = end;
    CAPTURE(dof);
    CAPTURE(p);
    // Source: SciPy scipy.stats.chi2.ppf at test time (tests/reference/chi2.py).
    CHECK(std::abs(keel::chi2_quantile(static_cast<int>(dof), p) - ref) <= 1e-9 * ref);
    ++checked;
  }
  CHECK(checked == 30 * 11 + 6);
}

TEST_CASE("chi2_quantile agrees with handbook table values") {
  // Abramowitz & Stegun, Handbook of Mathematical Functions, 1964, table 26.8 (from memory), 3-4 decimals.
  CHECK(keel::chi2_quantile(1, 0.95) == doctest::Approx(3.8415).epsilon(2e-5));
  CHECK(keel::chi2_quantile(2, 0.95) == doctest::Approx(5.9915).epsilon(2e-5));
  CHECK(keel::chi2_quantile(3, 0.95) == doctest::Approx(7.8147).epsilon(2e-5));
  CHECK(keel::chi2_quantile(1, 0.99) == doctest::Approx(6.6349).epsilon(2e-5));
  CHECK(keel::chi2_quantile(10, 0.5) == doctest::Approx(9.3418).epsilon(2e-5));
  // Closed form for 2 degrees of freedom: F(x) = 1 − e^(−x/2) ⇒ x = −2 ln(1 − p).
  for (double p : {0.5, 0.9, 0.999})
    CHECK(keel::chi2_quantile(2, p) == doctest::Approx(-2 * std::log(1 - p)).epsilon(1e-12));
}

TEST_CASE("chi2_quantile rejects invalid arguments with NaN") {
  CHECK(std::isnan(keel::chi2_quantile(0, 0.5)));
  CHECK(std::isnan(keel::chi2_quantile(3, 0.0)));
  CHECK(std::isnan(keel::chi2_quantile(3, 1.0)));
  CHECK(std::isnan(keel::chi2_quantile(3, std::nan(""))));
}

TEST_CASE_TEMPLATE("nees equals the closed form for a diagonal covariance", T, float, double) {
  // P = diag(4, 1/4), error e = (2, 1): NEES = 2²/4 + 1²/(1/4) = 1 + 4 = 5.
  keel::Gaussian<T, 2> est;
  est.cov = Eigen::Matrix<T, 2, 1>(T(4), T(0.25)).asDiagonal();
  const Eigen::Matrix<T, 2, 1> truth(T(2), T(1));
  CHECK(static_cast<double>(keel::nees(est, truth)) == doctest::Approx(5.0).epsilon(static_cast<double>(eps_times<T>(8))));
  est.cov(1, 1) = T(0);
  CHECK(keel::nees(est, truth) == std::numeric_limits<T>::infinity());
}

TEST_CASE_TEMPLATE("NisMonitor verdicts for constant inputs follow from the chi-square interval", T, float, double) {
  // The interval for the mean of 50 NIS values of a 2-dimensional measurement is
  // [χ²⁻¹(0.025; 100), χ²⁻¹(0.975; 100)] / 50 (chi2_quantile is checked against SciPy above).
  keel::NisMonitor<T, 2, 50> mon(0.95);
  CHECK(static_cast<double>(mon.lower()) == doctest::Approx(keel::chi2_quantile(100, 0.025) / 50).epsilon(1e-6));
  CHECK(static_cast<double>(mon.upper()) == doctest::Approx(keel::chi2_quantile(100, 0.975) / 50).epsilon(1e-6));
  for (int i = 0; i < 49; ++i) CHECK(mon.add(T(2)));
  CHECK(mon.verdict() == keel::Consistency::insufficient_data);
  CHECK(mon.add(T(2)));
  // E[NIS] = M = 2 for a consistent filter: the mean sits at the centre of the interval.
  CHECK(mon.verdict() == keel::Consistency::consistent);
  for (int i = 0; i < 50; ++i) CHECK(mon.add(T(6)));
  CHECK(mon.verdict() == keel::Consistency::overconfident);
  CHECK(static_cast<double>(mon.mean()) == doctest::Approx(6.0).epsilon(1e-6));
  for (int i = 0; i < 50; ++i) CHECK(mon.add(T(0.5)));
  CHECK(mon.verdict() == keel::Consistency::underconfident);
  CHECK_FALSE(mon.add(std::numeric_limits<T>::quiet_NaN()));
  CHECK_FALSE(mon.add(T(-1)));
  CHECK(mon.count() == 50);
  keel::Innovation<T, 2> gated;
  gated.status = keel::Status::gated;
  gated.nis = T(1000);
  CHECK_FALSE(mon.add(gated));
  CHECK(static_cast<double>(mon.mean()) == doctest::Approx(0.5).epsilon(1e-6));
}

TEST_CASE_TEMPLATE("NisMonitor flags about 5% of windows of true chi-square samples", T, float, double) {
  // For NIS drawn exactly from χ²(1) (a squared standard normal), a 95% interval holds the window mean in 95% of
  // disjoint windows. Over 2000 windows the binomial std of the hit rate is √(0.95·0.05/2000) ≈ 0.0049, so the
  // rate must lie in [0.93, 0.97] (4 std); the seed is fixed, so the test is deterministic.
  std::mt19937 rng(2026);
  std::normal_distribution<double> n01(0, 1);
  keel::NisMonitor<T, 1, 40> mon(0.95);
  int inside = 0;
  for (int w = 0; w < 2000; ++w) {
    for (int i = 0; i < 40; ++i) {
      const double e = n01(rng);
      REQUIRE(mon.add(static_cast<T>(e * e)));
    }
    inside += mon.verdict() == keel::Consistency::consistent;
  }
  const double rate = inside / 2000.0;
  MESSAGE("share of windows judged consistent: ", rate);
  CHECK(rate >= 0.93);
  CHECK(rate <= 0.97);
}
