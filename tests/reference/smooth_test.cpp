// keel::rts_smooth (smooth.hpp) against the batch solution of the same problem, computed independently: the
// smoothed means are the MAP estimate of the stacked least-squares problem and the smoothed covariances are the
// diagonal blocks of the inverse of its information matrix (Rauch, Tung & Striebel, 1965; the equivalence is
// the point of their paper). The batch problem is solved with Eigen's dense LDLT in double.
#include <vector>

#include <doctest/doctest.h>

#include <keel/linear.hpp>
#include <keel/smooth.hpp>

#include "../support.hpp"

using namespace keel_test;

namespace {

constexpr int kN = 4;
constexpr int kM = 2;
constexpr int kSteps = 30;

struct Batch {
  Eigen::VectorXd mean;  // stacked x_0..x_{K−1}
  Eigen::MatrixXd cov;   // inverse information matrix
};

// Information form of p(x_0..x_{K−1} | z_0..z_{K−1}): prior x_0 ~ N(m0, P0), x_{k+1} = F x_k + w (Q),
// z_k = H x_k + v (R). Negative log-posterior ½ Σ ‖·‖² of the stacked residuals gives J = Σ Aᵢᵀ Wᵢ Aᵢ and
// b = Σ Aᵢᵀ Wᵢ rᵢ; MAP = J⁻¹ b, posterior covariance J⁻¹ (linear-Gaussian: exact).
Batch batch_solution(const Eigen::Matrix<double, kN, 1>& m0, const Eigen::Matrix<double, kN, kN>& p0,
                     const Eigen::Matrix<double, kN, kN>& f, const Eigen::Matrix<double, kN, kN>& q,
                     const Eigen::Matrix<double, kM, kN>& h, const Eigen::Matrix<double, kM, kM>& r,
                     const std::vector<Eigen::Matrix<double, kM, 1>>& z) {
  const int dim = kN * kSteps;
  Eigen::MatrixXd j = Eigen::MatrixXd::Zero(dim, dim);
  Eigen::VectorXd b = Eigen::VectorXd::Zero(dim);
  const Eigen::Matrix<double, kN, kN> p0i = p0.inverse();
  const Eigen::Matrix<double, kN, kN> qi = q.inverse();
  const Eigen::Matrix<double, kM, kM> ri = r.inverse();
  j.block<kN, kN>(0, 0) += p0i;
  b.segment<kN>(0) += p0i * m0;
  for (int k = 0; k < kSteps; ++k) {
    j.block<kN, kN>(kN * k, kN * k) += h.transpose() * ri * h;
    b.segment<kN>(kN * k) += h.transpose() * ri * z[static_cast<size_t>(k)];
    if (k + 1 < kSteps) {
      // residual x_{k+1} − F x_k: A = [−F, I] on (x_k, x_{k+1})
      j.block<kN, kN>(kN * k, kN * k) += f.transpose() * qi * f;
      j.block<kN, kN>(kN * k, kN * (k + 1)) -= f.transpose() * qi;
      j.block<kN, kN>(kN * (k + 1), kN * k) -= qi * f;
      j.block<kN, kN>(kN * (k + 1), kN * (k + 1)) += qi;
    }
  }
  const Eigen::LDLT<Eigen::MatrixXd> ldlt(j);
  return {ldlt.solve(b), ldlt.solve(Eigen::MatrixXd::Identity(dim, dim))};
}

}  // namespace

TEST_CASE_TEMPLATE("RTS smoother equals the batch MAP solution and its covariance blocks", T, float, double) {
  std::mt19937 rng(30);
  // A 2-axis constant-velocity lawn robot (scenario 4, demo numbers): dt = 0.5 s, position measured.
  Eigen::Matrix<double, kN, kN> f = Eigen::Matrix<double, kN, kN>::Identity();
  f(0, 2) = f(1, 3) = 0.5;
  const Eigen::Matrix<double, kN, kN> q = random_spd<double, kN>(rng, 0.01, 0.05);
  Eigen::Matrix<double, kM, kN> h = Eigen::Matrix<double, kM, kN>::Zero();
  h(0, 0) = h(1, 1) = 1;
  const Eigen::Matrix<double, kM, kM> r = random_spd<double, kM>(rng, 0.2, 0.5);
  const Eigen::Matrix<double, kN, 1> m0 = random_matrix<double, kN, 1>(rng);
  const Eigen::Matrix<double, kN, kN> p0 = random_spd<double, kN>(rng, 0.5, 2.0);
  std::vector<Eigen::Matrix<double, kM, 1>> z;
  Eigen::Matrix<double, kN, 1> truth = m0;
  for (int k = 0; k < kSteps; ++k) {
    z.push_back(h * truth + random_matrix<double, kM, 1>(rng, 0.5));
    truth = f * truth + random_matrix<double, kN, 1>(rng, 0.1);
  }
  const Batch batch = batch_solution(m0, p0, f, q, h, r, z);

  // Filter in T, storing x(k|k), x(k+1|k) and F_k; then smooth in place over the filtered array.
  const Eigen::Matrix<T, kN, kN> ft = f.cast<T>();
  std::vector<keel::Gaussian<T, kN>> filtered(kSteps);
  std::vector<keel::Gaussian<T, kN>> predicted(kSteps - 1);
  std::vector<Eigen::Matrix<T, kN, kN>> fs(kSteps - 1, ft);
  keel::Gaussian<T, kN> est;
  est.mean = m0.cast<T>();
  est.cov = p0.cast<T>();
  for (int k = 0; k < kSteps; ++k) {
    if (k > 0) {
      REQUIRE(keel::predict(est, ft, q.cast<T>().eval()) == keel::Status::ok);
      predicted[static_cast<size_t>(k - 1)] = est;
    }
    REQUIRE(keel::correct(est, h.cast<T>().eval(), r.cast<T>().eval(), z[static_cast<size_t>(k)].cast<T>().eval()).ok());
    filtered[static_cast<size_t>(k)] = est;
  }
  std::vector<keel::Gaussian<T, kN>> smoothed(kSteps);
  REQUIRE(keel::rts_smooth(filtered.data(), predicted.data(), fs.data(), kSteps, smoothed.data()) ==
          keel::Status::ok);
  // Tolerance: the filter and smoother are O(kSteps) steps of well-conditioned updates (κ of every covariance
  // ≤ ~50 here) and both recursions are stable, so the error stays at the per-step level: 1e4·ε.
  const double tol = static_cast<double>(eps_times<T>(1e4));
  double worst_mean = 0;
  double worst_cov = 0;
  for (int k = 0; k < kSteps; ++k) {
    const auto& s = smoothed[static_cast<size_t>(k)];
    worst_mean = std::max(worst_mean, rel_error(s.mean, batch.mean.segment<kN>(kN * k)));
    worst_cov = std::max(worst_cov, rel_error(s.cov, batch.cov.block<kN, kN>(kN * k, kN * k)));
  }
  MESSAGE("worst relative error over " << kSteps << " steps: mean " << worst_mean << ", covariance " << worst_cov);
  CHECK(worst_mean < tol);
  CHECK(worst_cov < tol);
  // The last smoothed estimate is the last filtered one, bit for bit.
  CHECK(same_bits(smoothed.back(), filtered.back()));

  // In place over the filtered array gives the same bits.
  auto in_place = filtered;
  REQUIRE(keel::rts_smooth(in_place.data(), predicted.data(), fs.data(), kSteps, in_place.data()) ==
          keel::Status::ok);
  for (int k = 0; k < kSteps; ++k) CHECK(same_bits(in_place[static_cast<size_t>(k)], smoothed[static_cast<size_t>(k)]));

  // Bad input is found before anything is written.
  auto bad_pred = predicted;
  bad_pred[5].cov(1, 1) = T(-1);
  bad_pred[5].cov(0, 0) = T(0);
  auto out = filtered;
  const auto before = out;
  CHECK(keel::rts_smooth(filtered.data(), bad_pred.data(), fs.data(), kSteps, out.data()) ==
        keel::Status::not_positive_definite);
  bad_pred = predicted;
  bad_pred[20].mean(2) = std::numeric_limits<T>::quiet_NaN();
  CHECK(keel::rts_smooth(filtered.data(), bad_pred.data(), fs.data(), kSteps, out.data()) == keel::Status::non_finite);
  for (int k = 0; k < kSteps; ++k) CHECK(same_bits(out[static_cast<size_t>(k)], before[static_cast<size_t>(k)]));
  CHECK(keel::rts_smooth<T, kN>(nullptr, nullptr, nullptr, 0, nullptr) == keel::Status::ok);
}

TEST_CASE_TEMPLATE("RTS smoother over a 10^5-step log in the caller's vector, in place", T, float, double) {
  // Smoothing never increases uncertainty: P(k|n) = P(k|k) − C (P(k+1|k) − P(k+1|n)) Cᵀ and, by induction from
  // the end, P(k+1|n) ≤ P(k+1|k), so P(k|n) ≤ P(k|k) (RTS 1965); checked on the trace, with ε-level slack.
  constexpr std::size_t steps = 100000;
  Eigen::Matrix<T, 2, 2> f;
  f << T(1), T(0.1), T(0), T(1);
  const Eigen::Matrix<T, 2, 2> q = Eigen::Matrix<T, 2, 1>(T(1e-4), T(1e-3)).asDiagonal();
  const Eigen::Matrix<T, 1, 2> h(T(1), T(0));
  const Eigen::Matrix<T, 1, 1> r = Eigen::Matrix<T, 1, 1>::Constant(T(0.04));
  std::mt19937 rng(4);
  std::normal_distribution<double> normal;
  std::vector<keel::Gaussian<T, 2>> run_log(steps);
  std::vector<keel::Gaussian<T, 2>> predicted(steps - 1);
  std::vector<Eigen::Matrix<T, 2, 2>> fs(steps - 1, f);
  keel::Gaussian<T, 2> est;
  for (std::size_t k = 0; k < steps; ++k) {
    if (k > 0) {
      REQUIRE(keel::predict(est, f, q) == keel::Status::ok);
      predicted[k - 1] = est;
    }
    const Eigen::Matrix<T, 1, 1> z = Eigen::Matrix<T, 1, 1>::Constant(static_cast<T>(0.2 * normal(rng)));
    REQUIRE(keel::correct(est, h, r, z).ok());
    run_log[k] = est;
  }
  const auto filtered = run_log;
  REQUIRE(keel::rts_smooth(run_log.data(), predicted.data(), fs.data(), steps, run_log.data()) == keel::Status::ok);
  std::size_t larger = 0;
  for (std::size_t k = 0; k < steps; ++k)
    if (run_log[k].cov.trace() > filtered[k].cov.trace() * (T(1) + eps_times<T>(100))) ++larger;
  CHECK(larger == 0);
}
