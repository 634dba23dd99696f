// The ill-conditioned measurement example attributed to Dyer & McReynolds ("Extension of square-root
// filtering to include process noise", 1969), as reproduced in Grewal & Andrews, "Kalman Filtering: Theory
// and Practice" (from memory): P0 = I (3×3), H = [[1, 1, 1], [1, 1, 1 + δ]], R = δ² I, with δ² below the
// scalar's epsilon and δ above it. In floating point, HP0Hᵀ + R rounds to the singular [[3, 3+δ], [3+δ, 3+2δ]]
// (δ² is lost beside 3), so every conventional form must fail; the factored forms never form HPHᵀ + R and keep
// the information that (z2 − z1)/δ carries about x3.
//
// Exact answer: the posterior of a linear-Gaussian measurement is, in information form,
//   P⁺ = (P0⁻¹ + Hᵀ R⁻¹ H)⁻¹,   x⁺ = x0 + P⁺ Hᵀ R⁻¹ (z − H x0),
// computed at test time in exact rational arithmetic (Python's fractions) from the binary values of the
// test's own (rounded) inputs: dyer_mcreynolds.py. As δ → 0 it tends to x1 + x2 + x3 known exactly and x3 seen
// through (z2 − z1)/δ with variance 2: P⁺ → [[5/8, −3/8, −1/4], [−3/8, 5/8, −1/4], [−1/4, −1/4, 1/2]].
#include <doctest/doctest.h>

#include <keel/sqrt.hpp>
#include <keel/ud.hpp>

#include "../support.hpp"

using namespace keel_test;

namespace {

template <typename T>
struct Case {
  T delta;
  Eigen::Matrix<T, 2, 3> h;
  Eigen::Matrix<T, 2, 2> r;
  Eigen::Matrix<T, 2, 1> z;
  keel::Gaussian<T, 3> prior;
  Eigen::Matrix<double, 3, 3> exact_cov;
  Eigen::Matrix<double, 3, 1> exact_mean;
};

// δ² < ε < δ: float ε = 1.19e-7, δ = 2e-4 (δ² = 4e-8); double ε = 2.2e-16, δ = 1e-9 (δ² = 1e-18).
template <typename T>
Case<T> make_case() {
  Case<T> c;
  c.delta = std::is_same_v<T, float> ? T(2e-4) : T(1e-9);
  c.h << T(1), T(1), T(1), T(1), T(1), T(1) + c.delta;
  c.r = Eigen::Matrix<T, 2, 2>::Identity() * (c.delta * c.delta);
  // Demo measurement of a state near (0.3, −0.1, 0.4): z1 = 0.6, z2 = z1 + 0.4 δ (invented numbers).
  c.z << T(0.6), T(0.6) + T(0.4) * c.delta;
  c.prior.mean.setZero();
  c.prior.cov.setIdentity();
  const std::string out = run_python("reference/dyer_mcreynolds.py", to_text(c.h) + to_text(c.r) + to_text(c.z) +
                                                                       to_text(c.prior.mean) + to_text(c.prior.cov));
  size_t pos = 0;
  c.exact_cov = from_text<3, 3>(out, pos);
  c.exact_mean = from_text<3, 1>(out, pos);
  return c;
}

// Forward-error tolerance of the factored forms: they are backward stable (orthogonal transformations, or
// Bierman's update with no subtraction of variances), so they return the exact posterior of inputs perturbed
// by O(ε) relatively. The only ill-determined quantity is x3, seen through h₂ − h₁ = δe₃, which such a
// perturbation changes by O(ε/δ) relatively; 10·ε/δ allows for the handful of operations on each entry.
template <typename T>
double factored_tol(T delta) {
  return 10.0 * static_cast<double>(std::numeric_limits<T>::epsilon()) / static_cast<double>(delta);
}

template <typename E, typename T>
void check_factored(const char* name, const E& est, keel::Status status, const Case<T>& c) {
  INFO(std::string(name));
  REQUIRE(status == keel::Status::ok);
  const double cov_err = rel_error(cov_in_double(est), c.exact_cov);
  const double mean_err = rel_error(est.mean, c.exact_mean);
  MESSAGE(std::string(name) << ": relative error of P+ " << cov_err << ", of x+ " << mean_err << " (tolerance "
               << factored_tol(c.delta) << ")");
  CHECK(cov_err < factored_tol(c.delta));
  CHECK(mean_err < factored_tol(c.delta));
}

}  // namespace

TEST_CASE_TEMPLATE("Dyer–McReynolds: conventional forms fail, square-root and UD forms hold", T, float, double) {
  const Case<T> c = make_case<T>();
  REQUIRE(c.exact_cov.allFinite());
  // The limit δ → 0 derived above; the exact answer differs from it by O(δ) ≤ 2e-4 here: checks the script.
  Eigen::Matrix<double, 3, 3> limit;
  limit << 5.0 / 8, -3.0 / 8, -1.0 / 4, -3.0 / 8, 5.0 / 8, -1.0 / 4, -1.0 / 4, -1.0 / 4, 1.0 / 2;
  CHECK(rel_error(c.exact_cov, limit) < 1e-3);

  // Conventional forms: S = HPHᵀ + R is singular to working precision, so its Cholesky factorization fails
  // (or, for the scalar form, the second innovation variance is at rounding level). keel reports it and leaves
  // the estimate unchanged; a plain implementation with an explicit inverse returns a badly wrong "covariance".
  for (int form = 0; form < 3; ++form) {
    auto g = c.prior;
    const auto inn = form == 0   ? keel::correct(g, c.h, c.r, c.z, keel::standard_form)
                     : form == 1 ? keel::correct(g, c.h, c.r, c.z, keel::joseph_form)
                                 : keel::correct_sequential(g, c.h, Eigen::Matrix<T, 2, 1>(c.r.diagonal()), c.z);
    INFO("conventional form " << form << " (0 standard, 1 Joseph, 2 sequential): " << keel::to_string(inn.status));
    CHECK(inn.status == keel::Status::not_positive_definite);
    CHECK(same_bits(g, c.prior));
  }
  {
    // The same standard form written plainly with an explicit inverse, as a user might: no status, and a
    // covariance that is wrong at the scale of P itself (measured: relative error 0.93 in float, non-finite in double).
    const Eigen::Matrix<T, 2, 2> s = c.h * c.h.transpose() + c.r;
    const Eigen::Matrix<T, 3, 2> k = c.h.transpose() * s.inverse();
    const Eigen::Matrix<T, 3, 3> p = Eigen::Matrix<T, 3, 3>::Identity() - k * c.h;
    const double err = p.allFinite() ? rel_error(p, c.exact_cov) : std::numeric_limits<double>::infinity();
    MESSAGE("plain standard form with an explicit inverse: relative error of P+ " << err);
    CHECK(err > 0.1);
  }

  {
    auto s = keel::SqrtGaussian<T, 3>{};
    const auto inn = keel::correct(s, c.h, c.r, c.z);
    check_factored("square root, QR array", s, inn.status, c);
  }
  {
    auto s = keel::SqrtGaussian<T, 3>{};
    const auto inn = keel::correct_sequential(s, c.h, Eigen::Matrix<T, 2, 1>(c.r.diagonal()), c.z);
    check_factored("square root, Potter", s, inn.status, c);
  }
  {
    auto u = keel::UdGaussian<T, 3>{};
    const auto inn = keel::correct_sequential(u, c.h, Eigen::Matrix<T, 2, 1>(c.r.diagonal()), c.z);
    check_factored("UD, Bierman", u, inn.status, c);
  }
  {
    auto u = keel::UdGaussian<T, 3>{};
    const auto inn = keel::correct(u, c.h, c.r, c.z);
    check_factored("UD, whitened full R", u, inn.status, c);
  }
}
