// Edge cases of the diagnostics and conversions that the other tests and the fuzz corpus do not reach: NEES of
// estimates holding NaN or an unusable covariance (all three forms), NisMonitor fed failed corrections, Status
// names, and the UD factors of a rank-one square-root factor.
#include <cmath>
#include <cstring>
#include <limits>

#include <doctest/doctest.h>

#include <keel/keel.hpp>

TEST_CASE_TEMPLATE("nees: NaN for non-finite input, +inf for a covariance that cannot be inverted", T, float,
                   double) {
  // The documented contract of nees (gate.hpp, sqrt.hpp, ud.hpp): NaN when an input holds NaN or Inf (there is
  // no error to normalize), +inf when the covariance is singular or indefinite (the error is unbounded).
  const T nan = std::numeric_limits<T>::quiet_NaN();
  const T inf = std::numeric_limits<T>::infinity();
  const Eigen::Matrix<T, 2, 1> truth(T(1), T(2));
  keel::Gaussian<T, 2> g;
  CHECK(keel::nees(g, truth) == doctest::Approx(5.0));  // P = I: 1² + 2²
  g.mean(1) = nan;
  CHECK(std::isnan(keel::nees(g, truth)));
  g = keel::Gaussian<T, 2>{};
  g.cov(0, 1) = g.cov(1, 0) = inf;
  CHECK(std::isnan(keel::nees(g, truth)));
  g.cov << T(1), T(2), T(2), T(1);  // eigenvalues 3 and −1
  CHECK(keel::nees(g, truth) == inf);

  keel::SqrtGaussian<T, 2> s;
  CHECK(keel::nees(s, truth) == doctest::Approx(5.0));  // S = I
  s.mean(0) = nan;
  CHECK(std::isnan(keel::nees(s, truth)));
  s = keel::SqrtGaussian<T, 2>{};
  s.sqrt_cov(1, 0) = inf;
  CHECK(std::isnan(keel::nees(s, truth)));
  s = keel::SqrtGaussian<T, 2>{};
  s.sqrt_cov(1, 1) = T(0);  // singular factor
  CHECK(keel::nees(s, truth) == inf);

  keel::UdGaussian<T, 2> ud;
  CHECK(keel::nees(ud, truth) == doctest::Approx(5.0));  // U = I, d = 1
  ud.mean(0) = nan;
  CHECK(std::isnan(keel::nees(ud, truth)));
  ud = keel::UdGaussian<T, 2>{};
  ud.u(0, 1) = inf;
  CHECK(std::isnan(keel::nees(ud, truth)));
  ud = keel::UdGaussian<T, 2>{};
  ud.d(1) = nan;
  CHECK(std::isnan(keel::nees(ud, truth)));
  ud = keel::UdGaussian<T, 2>{};
  ud.d(0) = T(0);
  CHECK(keel::nees(ud, truth) == inf);
  const Eigen::Matrix<T, 2, 1> bad_truth(inf, T(0));
  CHECK(std::isnan(keel::nees(keel::UdGaussian<T, 2>{}, bad_truth)));
}

TEST_CASE("NisMonitor records only accepted corrections") {
  // gate.hpp: add(Innovation) records the NIS of status ok only, so gated outliers cannot mask an inconsistent
  // filter; add(T) refuses negative and non-finite values.
  keel::NisMonitor<double, 1, 2> monitor;
  keel::Innovation<double, 1> inn;
  inn.nis = 3.0;
  inn.status = keel::Status::gated;
  CHECK_FALSE(monitor.add(inn));
  inn.status = keel::Status::ok;
  CHECK(monitor.add(inn));
  CHECK_FALSE(monitor.add(-1.0));
  CHECK_FALSE(monitor.add(std::numeric_limits<double>::infinity()));
  CHECK(monitor.count() == 1);
  CHECK(monitor.mean() == 3.0);
  CHECK(monitor.verdict() == keel::Consistency::insufficient_data);
}

TEST_CASE("every Status has its own name") {
  // status.hpp: the names are the enumerators' spellings (stable, for logs).
  CHECK(std::strcmp(keel::to_string(keel::Status::ok), "ok") == 0);
  CHECK(std::strcmp(keel::to_string(keel::Status::non_finite), "non_finite") == 0);
  CHECK(std::strcmp(keel::to_string(keel::Status::not_positive_definite), "not_positive_definite") == 0);
  CHECK(std::strcmp(keel::to_string(keel::Status::negative_variance), "negative_variance") == 0);
  CHECK(std::strcmp(keel::to_string(keel::Status::not_on_manifold), "not_on_manifold") == 0);
  CHECK(std::strcmp(keel::to_string(keel::Status::not_converged), "not_converged") == 0);
  CHECK(std::strcmp(keel::to_string(keel::Status::gated), "gated") == 0);
  CHECK(std::strcmp(keel::to_string(static_cast<keel::Status>(200)), "unknown") == 0);
}

TEST_CASE_TEMPLATE("to_ud of a rank-one square-root factor", T, float, double) {
  // S = [[1, 0], [1, 0]]: P = S Sᵀ = [[1, 1], [1, 1]] (rank one). Its UD factors (P = U diag(d) Uᵀ, U unit upper,
  // from the last column: d₁ = p₁₁ = 1, u₀₁ = p₀₁/d₁ = 1, d₀ = p₀₀ − d₁u₀₁² = 0) are exact in floating point.
  keel::SqrtGaussian<T, 2> s;
  s.sqrt_cov << T(1), T(0), T(1), T(0);
  keel::UdGaussian<T, 2> ud;
  REQUIRE(keel::to_ud(s, ud) == keel::Status::ok);
  CHECK(ud.d(0) == T(0));
  CHECK(ud.d(1) == T(1));
  CHECK(ud.u(0, 1) == T(1));
  // A non-finite factor is refused and the output left as it was.
  s.sqrt_cov(1, 0) = std::numeric_limits<T>::quiet_NaN();
  const auto before = ud;
  CHECK(keel::to_ud(s, ud) == keel::Status::non_finite);
  CHECK(std::memcmp(ud.d.data(), before.d.data(), sizeof(T) * 2) == 0);
}
