// Unit tests of the linear kernels (linear.hpp) in float and double: each result is compared with the
// textbook equation evaluated independently in double with Eigen's dense inverse (Kalman, "A New Approach to
// Linear Filtering and Prediction Problems", 1960), and every bad input with its documented Status.
#include <doctest/doctest.h>

#include <keel/linear.hpp>

#include "linear_problem.hpp"

using namespace keel_test;

namespace {

// Reference correction in double straight from the equations with an explicit inverse:
// K = P Hᵀ (H P Hᵀ + R)⁻¹, x⁺ = x + K(z − Hx), P⁺ = (I − KH) P (I − KH)ᵀ + K R Kᵀ.
template <typename T, int N, int M>
void reference_correct(const Problem<T, N, M>& p, Eigen::Matrix<double, N, 1>& x, Eigen::Matrix<double, N, N>& cov,
                       double& nis) {
  const Eigen::Matrix<double, N, N> P = p.est.cov.template cast<double>();
  const Eigen::Matrix<double, M, N> H = p.h.template cast<double>();
  const Eigen::Matrix<double, M, M> R = p.r.template cast<double>();
  const Eigen::Matrix<double, M, 1> y = p.z.template cast<double>() - H * p.est.mean.template cast<double>();
  const Eigen::Matrix<double, M, M> S = H * P * H.transpose() + R;
  const Eigen::Matrix<double, M, M> Si = S.inverse();
  const Eigen::Matrix<double, N, M> K = P * H.transpose() * Si;
  const Eigen::Matrix<double, N, N> A = Eigen::Matrix<double, N, N>::Identity() - K * H;
  x = p.est.mean.template cast<double>() + K * y;
  cov = A * P * A.transpose() + K * R * K.transpose();
  nis = y.dot(Si * y);
}

// Condition-scaled tolerance: these problems have κ(P), κ(Q), κ(R) ≤ 40 (see random_spd) and κ(S) alike,
// and a correction is O(10) dependent rounding steps, so 1e4·ε bounds the forward error with margin.
template <typename T>
double tol_well_conditioned() {
  return static_cast<double>(eps_times<T>(1e4));
}

}  // namespace

TEST_CASE_TEMPLATE("predict equals F P Fᵀ + Q and F x (+ B u)", T, float, double) {
  auto p = make_problem<T, 4, 2>(1);
  auto est = p.est;
  REQUIRE(keel::predict(est, p.f, p.q) == keel::Status::ok);
  const Eigen::Matrix<double, 4, 4> F = p.f.template cast<double>();
  CHECK(rel_error(est.mean, (F * p.est.mean.template cast<double>()).eval()) < tol_well_conditioned<T>());
  CHECK(rel_error(est.cov, (F * p.est.cov.template cast<double>() * F.transpose() + p.q.template cast<double>()).eval()) <
        tol_well_conditioned<T>());
  CHECK(est.cov == est.cov.transpose());  // symmetrized exactly

  std::mt19937 rng(7);
  const Eigen::Matrix<T, 4, 2> b = random_matrix<T, 4, 2>(rng);
  const Eigen::Matrix<T, 2, 1> u = random_matrix<T, 2, 1>(rng);
  auto est2 = p.est;
  REQUIRE(keel::predict(est2, p.f, b, u, p.q) == keel::Status::ok);
  CHECK(rel_error(est2.mean, (F * p.est.mean.template cast<double>() + (b * u).template cast<double>()).eval()) <
        tol_well_conditioned<T>());
  CHECK(same_bits(est2.cov, est.cov));
}

TEST_CASE_TEMPLATE("correct (Joseph and standard) equals the Kalman equations with an explicit inverse", T, float,
                   double) {
  for (unsigned seed = 0; seed < 20; ++seed) {
    const auto p = make_problem<T, 6, 3>(seed);
    Eigen::Matrix<double, 6, 1> x_ref;
    Eigen::Matrix<double, 6, 6> p_ref;
    double nis_ref = 0;
    reference_correct(p, x_ref, p_ref, nis_ref);

    auto joseph = p.est;
    const auto inn = keel::correct(joseph, p.h, p.r, p.z);
    REQUIRE(inn.status == keel::Status::ok);
    CHECK(inn.ok());
    CHECK(rel_error(joseph.mean, x_ref) < tol_well_conditioned<T>());
    CHECK(rel_error(joseph.cov, p_ref) < tol_well_conditioned<T>());
    CHECK(std::abs(static_cast<double>(inn.nis) - nis_ref) < tol_well_conditioned<T>() * (1 + nis_ref));
    CHECK(rel_error(inn.residual, (p.z - p.h * p.est.mean).eval()) < tol_well_conditioned<T>());

    auto standard = p.est;
    const auto inn2 = keel::correct(standard, p.h, p.r, p.z, keel::standard_form);
    REQUIRE(inn2.status == keel::Status::ok);
    CHECK(rel_error(standard.mean, x_ref) < tol_well_conditioned<T>());
    CHECK(rel_error(standard.cov, p_ref) < tol_well_conditioned<T>());

    auto explicit_joseph = p.est;
    REQUIRE(keel::correct(explicit_joseph, p.h, p.r, p.z, keel::joseph_form).status == keel::Status::ok);
    CHECK(same_bits(explicit_joseph, joseph));
  }
}

TEST_CASE_TEMPLATE("posterior information equals prior information plus Hᵀ R⁻¹ H", T, float, double) {
  // Closed form: for the optimal gain, (P⁺)⁻¹ = P⁻¹ + Hᵀ R⁻¹ H (matrix inversion lemma).
  const auto p = make_problem<T, 4, 2>(42);
  auto est = p.est;
  REQUIRE(keel::correct(est, p.h, p.r, p.z).status == keel::Status::ok);
  const Eigen::Matrix<double, 4, 4> info =
      p.est.cov.template cast<double>().inverse() +
      p.h.template cast<double>().transpose() * p.r.template cast<double>().inverse() * p.h.template cast<double>();
  CHECK(rel_error(est.cov.template cast<double>().inverse().eval(), info) < tol_well_conditioned<T>());
}

TEST_CASE_TEMPLATE("correct_sequential equals the joint update for diagonal R", T, float, double) {
  for (unsigned seed = 0; seed < 20; ++seed) {
    auto p = make_problem<T, 6, 3>(100 + seed);
    std::mt19937 rng(seed);
    std::uniform_real_distribution<double> var(0.1, 1.0);
    Eigen::Matrix<T, 3, 1> r_diag;
    for (int i = 0; i < 3; ++i) r_diag(i) = static_cast<T>(var(rng));
    p.r = r_diag.asDiagonal();
    Eigen::Matrix<double, 6, 1> x_ref;
    Eigen::Matrix<double, 6, 6> p_ref;
    double nis_ref = 0;
    reference_correct(p, x_ref, p_ref, nis_ref);

    auto est = p.est;
    const auto inn = keel::correct_sequential(est, p.h, r_diag, p.z);
    REQUIRE(inn.status == keel::Status::ok);
    CHECK(rel_error(est.mean, x_ref) < tol_well_conditioned<T>());
    CHECK(rel_error(est.cov, p_ref) < tol_well_conditioned<T>());
    // The sum of the scalar NIS is the joint NIS (sequential innovations whiten the joint one).
    CHECK(std::abs(static_cast<double>(inn.nis) - nis_ref) < tol_well_conditioned<T>() * (1 + nis_ref));
    CHECK(rel_error(inn.cov, (p.h * p.est.cov * p.h.transpose() + p.r).eval()) < tol_well_conditioned<T>());
  }
}

TEST_CASE_TEMPLATE("correct_with_gain at the optimal gain equals correct", T, float, double) {
  const auto p = make_problem<T, 4, 2>(9);
  const Eigen::Matrix<T, 4, 2> k =
      (p.est.cov * p.h.transpose() * (p.h * p.est.cov * p.h.transpose() + p.r).inverse()).eval();
  auto a = p.est;
  auto b = p.est;
  REQUIRE(keel::correct(a, p.h, p.r, p.z).status == keel::Status::ok);
  REQUIRE(keel::correct_with_gain(b, p.h, p.r, p.z, k).status == keel::Status::ok);
  CHECK(rel_error(b.mean, a.mean) < tol_well_conditioned<T>());
  CHECK(rel_error(b.cov, a.cov) < tol_well_conditioned<T>());
}

TEST_CASE_TEMPLATE("Joseph form stays PSD with a suboptimal gain; the standard form does not", T, float, double) {
  // Scalar closed form: P = 1, H = 1, R = 1 has optimal gain 1/2. With k = 5/2 the standard form gives
  // (1 − k)P = −3/2 (a negative variance) while the Joseph form gives (1 − k)²P + k²R = 9/4 + 25/4 = 17/2.
  keel::Gaussian<T, 1> est;
  est.mean << T(0);
  est.cov << T(1);
  const Eigen::Matrix<T, 1, 1> h = Eigen::Matrix<T, 1, 1>::Ones();
  const Eigen::Matrix<T, 1, 1> r = Eigen::Matrix<T, 1, 1>::Ones();
  const Eigen::Matrix<T, 1, 1> z = Eigen::Matrix<T, 1, 1>::Constant(T(2));
  const Eigen::Matrix<T, 1, 1> k = Eigen::Matrix<T, 1, 1>::Constant(T(2.5));
  const T standard = (T(1) - k(0) * h(0)) * est.cov(0, 0);
  CHECK(standard == T(-1.5));
  const auto inn = keel::correct_with_gain(est, h, r, z, k);
  REQUIRE(inn.status == keel::Status::ok);
  CHECK(est.cov(0, 0) == T(8.5));
  CHECK(est.mean(0) == T(5));  // x + k (z − Hx) = 0 + 2.5·2

  // 4-state: add a N(0, 2²) matrix to the optimal gain and compare (I − KH)P against the Joseph result.
  auto p = make_problem<T, 4, 2>(3);
  const Eigen::Matrix<T, 4, 2> k_opt =
      (p.est.cov * p.h.transpose() * (p.h * p.est.cov * p.h.transpose() + p.r).inverse()).eval();
  std::mt19937 rng(5);
  const Eigen::Matrix<T, 4, 2> k_bad = (k_opt + 2 * random_matrix<T, 4, 2>(rng)).eval();
  const Eigen::Matrix<T, 4, 4> p_std = ((Eigen::Matrix<T, 4, 4>::Identity() - k_bad * p.h) * p.est.cov).eval();
  auto est4 = p.est;
  REQUIRE(keel::correct_with_gain(est4, p.h, p.r, p.z, k_bad).status == keel::Status::ok);
  CHECK(est4.cov == est4.cov.transpose());
  CHECK(Eigen::LLT<Eigen::Matrix<double, 4, 4>>(est4.cov.template cast<double>()).info() == Eigen::Success);
  // (I − KH)P is not symmetric for a gain off the optimum: its asymmetry is O(1), not rounding.
  CHECK(rel_error(p_std, p_std.transpose().eval()) > 1e-2);
}

TEST_CASE_TEMPLATE("the gate rejects a measurement whose NIS exceeds the threshold, leaving the estimate", T, float,
                   double) {
  // Closed form: P = I₂, H = [1 0], R = 1, z = 3 → S = 2, y = 3, NIS = 9/2.
  keel::Gaussian<T, 2> est;
  const Eigen::Matrix<T, 1, 2> h(T(1), T(0));
  const Eigen::Matrix<T, 1, 1> r = Eigen::Matrix<T, 1, 1>::Ones();
  const Eigen::Matrix<T, 1, 1> z = Eigen::Matrix<T, 1, 1>::Constant(T(3));
  const auto before = est;
  const auto gated = keel::correct(est, h, r, z, keel::Gate<T>{T(4)});
  CHECK(gated.status == keel::Status::gated);
  CHECK(gated.nis == doctest::Approx(4.5).epsilon(static_cast<double>(eps_times<T>(4))));
  CHECK(gated.residual(0) == T(3));
  CHECK(same_bits(est, before));
  const auto seq = keel::correct_sequential(est, h, r, z, keel::Gate<T>{T(4)});
  CHECK(seq.status == keel::Status::gated);
  CHECK(same_bits(est, before));
  const auto passed = keel::correct(est, h, r, z, keel::Gate<T>{T(5)});
  CHECK(passed.status == keel::Status::ok);
  CHECK(est.mean(0) == doctest::Approx(1.5).epsilon(static_cast<double>(eps_times<T>(4))));  // x + P Hᵀ S⁻¹ y = 3/2
}

