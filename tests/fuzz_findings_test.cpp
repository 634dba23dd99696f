// Regression tests for what the fuzz targets (fuzz/) found. Each case is the finding reduced to its cause,
// with the fuzzer's own values where the cause needs them; the expected Status follows from the kernel's
// contract (a non-ok Status leaves the estimate bit-for-bit unchanged; ok means finite, symmetric, with a
// non-negative diagonal). The inputs themselves are replayed by the fuzz tests from fuzz/corpus/.
#include <cmath>
#include <limits>

#include <doctest/doctest.h>

#include <keel/discretize.hpp>
#include <keel/gate.hpp>
#include <keel/linear.hpp>
#include <keel/sigma.hpp>
#include <keel/smooth.hpp>
#include <keel/ud.hpp>

#include "support.hpp"

using keel::Status;
using keel_test::same_bits;

TEST_CASE_TEMPLATE("predict: an indefinite covariance that the transition turns negative is refused", T, float,
                   double) {
  // P = [[0, 1], [1, 0]] has a non-negative diagonal but eigenvalues ±1. With F = [[1, −1], [0, 1]],
  // (F P Fᵀ)₀₀ = P₀₀ − 2 P₀₁ + P₁₁ = −2: the predicted covariance would have a negative variance.
  keel::Gaussian<T, 2> est;
  est.cov << T(0), T(1), T(1), T(0);
  const auto before = est;
  const Eigen::Matrix<T, 2, 2> f = (Eigen::Matrix<T, 2, 2>() << T(1), T(-1), T(0), T(1)).finished();
  CHECK(keel::predict(est, f, Eigen::Matrix<T, 2, 2>::Zero().eval()) == Status::not_positive_definite);
  CHECK(same_bits(est, before));
}

TEST_CASE("correct_sequential: a joint innovation covariance that overflows is non_finite") {
  // The linear fuzz target's input (double): P holds ±DBL_MAX off the diagonal, so H P Hᵀ overflows while
  // each scalar step stays finite; the sweep used to report ok with an infinite innovation covariance.
  const double mx = std::numeric_limits<double>::max();
  const double tiny = std::numeric_limits<double>::denorm_min();
  keel::Gaussian<double, 3> est;
  est.mean << -0.0, tiny, -0.0;
  est.cov << 1e-30, -0.0, 0, -0.0, -0.0, mx, 0, -mx, 2.2204460492503131e-16;
  est.cov.transposeInPlace();  // the values above are column-major, as the fuzzer printed them
  Eigen::Matrix<double, 2, 3> h;
  h << 0.050238281250000003, 0, -0.0, 1e-30, 56.87890625, tiny;
  const auto before = est;
  const auto inn = keel::correct_sequential(est, h, Eigen::Vector2d(-0.0, -0.0), Eigen::Vector2d(-0.0, -0.0));
  CHECK(inn.status == Status::non_finite);
  CHECK(same_bits(est, before));

  // Control with the same call and a moderate covariance: accepted, and equal to the joint update with
  // R = diag(r) (for uncorrelated measurement noise the scalar updates in sequence are the joint update:
  // Bierman, "Factorization Methods for Discrete Sequential Estimation", 1977, ch. II; from memory).
  keel::Gaussian<double, 3> good;
  good.mean << 1.0, -2.0, 0.5;
  good.cov << 2.0, 0.3, 0.1, 0.3, 1.0, -0.2, 0.1, -0.2, 0.5;
  keel::Gaussian<double, 3> joint = good;
  const Eigen::Vector2d r(0.5, 0.25);
  const Eigen::Vector2d z(0.7, 0.1);
  h << 1.0, 0.5, 0.0, 0.0, -1.0, 2.0;
  REQUIRE(keel::correct_sequential(good, h, r, z).status == Status::ok);
  REQUIRE(keel::correct(joint, h, Eigen::Matrix2d(r.asDiagonal()), z).status == Status::ok);
  // Both are O(1)-conditioned 3-state updates: agreement to a few hundred ε.
  CHECK((good.mean - joint.mean).cwiseAbs().maxCoeff() <= 1e-13);
  CHECK((good.cov - joint.cov).cwiseAbs().maxCoeff() <= 1e-13);
}

TEST_CASE("UD correct: an innovation covariance that overflows float is non_finite") {
  // The UD fuzz target's input (float): d₀ = FLT_MAX and |H| ≈ 69, so the reported H U D Uᵀ Hᵀ + R overflows,
  // while the whitened Bierman sweep stayed finite and used to report ok.
  keel::UdGaussian<float, 3> est;
  est.mean.setConstant(-69.2734375f);
  est.u.setIdentity();
  est.u(0, 1) = -69.2734375f;
  est.u(0, 2) = 1e-30f;
  est.u(1, 2) = 1.1920928955078125e-07f;
  est.d << std::numeric_limits<float>::max(), 1e-30f, 1.1920928955078125e-07f;
  const Eigen::Matrix<float, 2, 3> h = Eigen::Matrix<float, 2, 3>::Constant(-69.2734375f);
  Eigen::Matrix2f a;
  a << -69.2734375f, 1e-30f, 1.1920928955078125e-07f, -0.056816410273313522f;
  const Eigen::Matrix2f r = a * a.transpose();
  const Eigen::Vector2f z(1e-30f, 1.1920928955078125e-07f);
  const auto before = est;
  const auto inn = keel::correct(est, h, r, z);
  CHECK(inn.status == Status::non_finite);
  CHECK(same_bits(est, before));
}

TEST_CASE_TEMPLATE("rts_smooth: a filtered covariance with a negative variance is refused, nothing written", T,
                   float, double) {
  // The smoother fuzz target's input: a one-step run whose filtered covariance has a negative diagonal was
  // copied to the output with status ok.
  keel::Gaussian<T, 2> filtered[2];
  keel::Gaussian<T, 2> predicted[1];
  const Eigen::Matrix<T, 2, 2> f[1] = {Eigen::Matrix<T, 2, 2>::Identity()};
  keel::Gaussian<T, 2> out[2];
  out[0].mean.setConstant(T(7));
  out[1].mean.setConstant(T(8));
  filtered[0].cov(1, 1) = T(-0.5);
  const keel::Gaussian<T, 2> before[2] = {out[0], out[1]};
  CHECK(keel::rts_smooth(filtered, predicted, f, 1, out) == Status::negative_variance);
  CHECK(keel::rts_smooth(filtered, predicted, f, 2, out) == Status::negative_variance);
  CHECK(same_bits(out[0], before[0]));
  CHECK(same_bits(out[1], before[1]));
}

TEST_CASE_TEMPLATE("rts_smooth: a failure in the backward pass leaves every output untouched", T, float, double) {
  // One state, three steps, F = 1. Step k = 1 is ordinary (P₁|₁ = 1, P₂|₁ = 2). At k = 0 the gain
  // C₀ = P₀|₀ F / P₁|₀ overflows: P₀|₀ = max/4 and P₁|₀ = 10⁻³ give C₀ = 250·max. The inputs pass every
  // up-front check (finite, P₁|₀ > 0); the old smoother had written smoothed[2] and smoothed[1] when it
  // returned non_finite at k = 0.
  keel::Gaussian<T, 1> filtered[3];
  keel::Gaussian<T, 1> predicted[2];
  const Eigen::Matrix<T, 1, 1> f[2] = {Eigen::Matrix<T, 1, 1>::Ones(), Eigen::Matrix<T, 1, 1>::Ones()};
  filtered[0].cov(0, 0) = std::numeric_limits<T>::max() / T(4);
  predicted[0].cov(0, 0) = T(1e-3);
  predicted[1].cov(0, 0) = T(2);
  keel::Gaussian<T, 1> out[3];
  for (int k = 0; k < 3; ++k) out[k].mean(0) = T(10 + k);
  const keel::Gaussian<T, 1> before[3] = {out[0], out[1], out[2]};
  CHECK(keel::rts_smooth(filtered, predicted, f, 3, out) == Status::non_finite);
  for (int k = 0; k < 3; ++k) CHECK(same_bits(out[k], before[k]));
}

TEST_CASE_TEMPLATE("rts_smooth: a smoothed variance that would be negative is refused", T, float, double) {
  // One state, two steps, F = 1, P₀|₀ = 1, P₁|₀ = 0.5 (smaller than P₀|₀: no Q ≥ 0 gives that, but the input
  // is finite and positive), P₁|₁ = 0: C₀ = 2 and P₀|₁ = 1 + 2²·(0 − 0.5) = −1. Used to be returned as ok.
  keel::Gaussian<T, 1> filtered[2];
  keel::Gaussian<T, 1> predicted[1];
  const Eigen::Matrix<T, 1, 1> f[1] = {Eigen::Matrix<T, 1, 1>::Ones()};
  predicted[0].cov(0, 0) = T(0.5);
  filtered[1].cov(0, 0) = T(0);
  keel::Gaussian<T, 1> out[2];
  const keel::Gaussian<T, 1> before[2] = {out[0], out[1]};
  CHECK(keel::rts_smooth(filtered, predicted, f, 2, out) == Status::not_positive_definite);
  for (int k = 0; k < 2; ++k) CHECK(same_bits(out[k], before[k]));
}

TEST_CASE("expm: a matrix whose 1-norm overflows is non_finite, not undefined behaviour") {
  // The discretize fuzz target's input (float): a column holding FLT_MAX twice has an infinite 1-norm; the
  // number of squarings was computed as int(ceil(log2(inf))), which UBSan reported as undefined behaviour
  // (this case fails only under the sanitizer: without it the conversion happened to give a huge count).
  const float mx = std::numeric_limits<float>::max();
  Eigen::Matrix3f a = Eigen::Matrix3f::Constant(1.17549435e-38f);
  a(0, 0) = mx;
  a(1, 0) = mx;
  Eigen::Matrix3f out = Eigen::Matrix3f::Constant(5.0f);
  const Eigen::Matrix3f before = out;
  CHECK(keel::expm(a, out) == Status::non_finite);
  CHECK(same_bits(out, before));
}

TEST_CASE("NisMonitor: the mean is the mean of the window's values after a huge one leaves") {
  // Values 1e30, 1, 1, 1, 1 into a window of 4: the window then holds four ones, mean exactly 1. The old
  // running sum lost the ones against 1e30 and reported 0 (and, for other values, a negative mean).
  keel::NisMonitor<float, 2, 4> monitor;
  CHECK(monitor.add(1e30f));
  for (int i = 0; i < 4; ++i) CHECK(monitor.add(1.0f));
  CHECK(monitor.mean() == 1.0f);
}

namespace {
struct Square {
  template <typename S>
  Eigen::Matrix<S, 1, 1> operator()(const Eigen::Matrix<S, 1, 1>& x) const noexcept {
    return Eigen::Matrix<S, 1, 1>(x(0) * x(0));
  }
};
}  // namespace

TEST_CASE_TEMPLATE("unscented_transform: a rule that makes the variance negative is refused", T, float, double) {
  // x ~ N(0, 1), y = x², scaled rule with κ = 0 in one dimension: points 0, ±α; W₀ᵐ = 1 − 1/α², Wᵢ = 1/(2α²),
  // so ȳ = 1, and P_y = W₀ᶜ·1 + 2·Wᵢ·(α² − 1)² with W₀ᶜ = W₀ᵐ + 1 − α² + β, which is exactly β (expand the
  // squares). β = 2 recovers Var(x²) = 2 for a Gaussian x (Julier 2002, from memory); β = −1 gives P_y = −1,
  // which the fuzzer found the transform returning with status ok.
  keel::Gaussian<T, 1> est;
  const auto good = keel::unscented_transform(Square{}, est, keel::SigmaRule::scaled(0.5, 2.0, 0.0));
  REQUIRE(good.status == Status::ok);
  CHECK(good.gaussian.mean(0) == doctest::Approx(1.0).epsilon(keel_test::eps_times<T>(16)));  // E[x²] = 1
  CHECK(good.gaussian.cov(0, 0) == doctest::Approx(2.0).epsilon(keel_test::eps_times<T>(64)));
  const auto bad = keel::unscented_transform(Square{}, est, keel::SigmaRule::scaled(0.5, -1.0, 0.0));
  CHECK(bad.status == Status::not_positive_definite);
}

TEST_CASE_TEMPLATE("nees: finite inputs whose error overflows give +inf, not NaN", T, float, double) {
  // The gate fuzz target: x − x̂ = max − (−max) overflows to +inf, and the triangular solve then forms
  // 0·inf = NaN in the next row. An infinitely wrong estimate has NEES +inf (all three forms); an input that
  // holds NaN gives NaN.
  const T mx = std::numeric_limits<T>::max();
  keel::Gaussian<T, 2> est;
  est.mean << -mx, T(0);
  const Eigen::Matrix<T, 2, 1> truth(mx, T(0));
  CHECK(keel::nees(est, truth) == std::numeric_limits<T>::infinity());
  keel::SqrtGaussian<T, 2> s;
  s.mean = est.mean;
  CHECK(keel::nees(s, truth) == std::numeric_limits<T>::infinity());
  keel::UdGaussian<T, 2> ud;
  ud.mean = est.mean;
  CHECK(keel::nees(ud, truth) == std::numeric_limits<T>::infinity());
  const Eigen::Matrix<T, 2, 1> nan_truth(std::numeric_limits<T>::quiet_NaN(), T(0));
  CHECK(std::isnan(keel::nees(est, nan_truth)));
}

TEST_CASE_TEMPLATE("rts_smooth: the last estimate comes out symmetric like every other", T, float, double) {
  // The smoother fuzz target: a one-step run copied a non-symmetric filtered covariance to the output with
  // status ok. The last smoothed estimate is the filtered one, symmetrized as every smoothed covariance is:
  // (P + Pᵀ)/2 of [[1, 0.25], [0.75, 2]] is [[1, 0.5], [0.5, 2]].
  keel::Gaussian<T, 2> filtered[1];
  filtered[0].cov << T(1), T(0.25), T(0.75), T(2);
  const keel::Gaussian<T, 2> predicted[1];
  const Eigen::Matrix<T, 2, 2> f[1] = {Eigen::Matrix<T, 2, 2>::Identity()};
  keel::Gaussian<T, 2> out[1];
  REQUIRE(keel::rts_smooth(filtered, predicted, f, 1, out) == Status::ok);
  CHECK(out[0].cov(0, 1) == T(0.5));
  CHECK(out[0].cov(1, 0) == T(0.5));
}

TEST_CASE_TEMPLATE("rts_smooth: symmetrizing a covariance of the largest finite values does not overflow", T, float,
                   double) {
  // The smoother fuzz target: a one-step run whose filtered covariance held max everywhere; (P + Pᵀ)/2 formed
  // max + max = inf and the smoother returned ok with an infinite covariance. P/2 + Pᵀ/2 = max exactly.
  const T mx = std::numeric_limits<T>::max();
  keel::Gaussian<T, 2> filtered[1];
  filtered[0].cov.setConstant(mx);
  const keel::Gaussian<T, 2> predicted[1];
  const Eigen::Matrix<T, 2, 2> f[1] = {Eigen::Matrix<T, 2, 2>::Identity()};
  keel::Gaussian<T, 2> out[1];
  REQUIRE(keel::rts_smooth(filtered, predicted, f, 1, out) == Status::ok);
  CHECK(out[0].cov(0, 1) == mx);
}
