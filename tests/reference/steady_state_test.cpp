// Reference checks of the linear kernels' steady state (label `reference`): the Riccati recursion run with
// keel's predict/correct converges to the covariance and gain of SciPy's DARE solver, of a closed form, and
// of the alpha-beta tracking-index relations.
#include <doctest/doctest.h>

#include <keel/linear.hpp>

#include "../support.hpp"

using namespace keel_test;

namespace {

// Runs the filter Riccati recursion (predict, then correct) from P = I for `steps` steps and returns the
// steady predicted covariance X (before the correction) and the gain K = X Hᵀ (H X Hᵀ + R)⁻¹.
template <typename T, int N, int M>
void riccati(const Eigen::Matrix<T, N, N>& f, const Eigen::Matrix<T, N, N>& q, const Eigen::Matrix<T, M, N>& h,
             const Eigen::Matrix<T, M, M>& r, int steps, Eigen::Matrix<T, N, N>& x_pred, Eigen::Matrix<T, N, M>& k) {
  keel::Gaussian<T, N> est;
  const Eigen::Matrix<T, M, 1> z = Eigen::Matrix<T, M, 1>::Zero();
  for (int i = 0; i < steps; ++i) {
    REQUIRE(keel::predict(est, f, q) == keel::Status::ok);
    if (i + 1 == steps) break;
    REQUIRE(keel::correct(est, h, r, z).status == keel::Status::ok);
  }
  x_pred = est.cov;
  const auto before = est;
  // The gain is recovered from the mean's response to a unit residual in each row: K e_j = Δx.
  for (int j = 0; j < M; ++j) {
    auto probe = before;
    probe.mean.setZero();
    Eigen::Matrix<T, M, 1> unit = Eigen::Matrix<T, M, 1>::Zero();
    unit(j) = T(1);
    REQUIRE(keel::correct(probe, h, r, unit).status == keel::Status::ok);
    k.col(j) = probe.mean;
  }
}

// Tolerance for a converged Riccati fixed point: each step commits O(10) roundings relative to ‖X‖, and the
// recursion contracts errors by ρ² per step where ρ is the spectral radius of the closed loop F(I − KH), so the
// fixed point in floating point sits within about 10·ε·κ/(1 − ρ²) of the exact one (κ = condition of X).
template <typename T, int N, int M>
double riccati_tolerance(const Eigen::Matrix<double, N, N>& f, const Eigen::Matrix<double, M, N>& h,
                         const Eigen::Matrix<double, N, N>& x, const Eigen::Matrix<double, N, M>& k) {
  const Eigen::Matrix<double, N, N> closed = f * (Eigen::Matrix<double, N, N>::Identity() - k * h);
  const double rho = Eigen::EigenSolver<Eigen::Matrix<double, N, N>>(closed).eigenvalues().cwiseAbs().maxCoeff();
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix<double, N, N>> es(x);
  const double kappa = es.eigenvalues().maxCoeff() / es.eigenvalues().minCoeff();
  return 10.0 * static_cast<double>(std::numeric_limits<T>::epsilon()) * kappa / (1.0 - rho * rho);
}

template <typename T, int N, int M>
void check_against_scipy(const Eigen::Matrix<double, N, N>& F, const Eigen::Matrix<double, N, N>& Q,
                         const Eigen::Matrix<double, M, N>& H, const Eigen::Matrix<double, M, M>& R) {
  const std::string out = run_python("reference/dare.py", to_text(F) + to_text(Q) + to_text(H) + to_text(R));
  REQUIRE_MESSAGE(!out.empty(), "SciPy reference unavailable: install python3-scipy");
  size_t pos = 0;
  const auto x_ref = from_text<N, N>(out, pos);
  const auto k_ref = from_text<N, M>(out, pos);
  REQUIRE(x_ref.allFinite());
  Eigen::Matrix<T, N, N> x;
  Eigen::Matrix<T, N, M> k;
  riccati<T, N, M>(F.template cast<T>(), Q.template cast<T>(), H.template cast<T>(), R.template cast<T>(), 3000, x, k);
  const double tol = riccati_tolerance<T, N, M>(F, H, x_ref, k_ref);
  MESSAGE("tolerance ", tol, "; error X ", rel_error(x, x_ref), ", K ", rel_error(k, k_ref));
  // Source: SciPy scipy.linalg.solve_discrete_are, run at test time (tests/reference/dare.py).
  CHECK(rel_error(x, x_ref) < tol);
  // Source: as above, K = X Hᵀ (H X Hᵀ + R)⁻¹ from SciPy's X.
  CHECK(rel_error(k, k_ref) < tol);
}

// Constant-velocity model with piecewise-constant white acceleration of variance q over a step dt
// ("discrete white noise acceleration"): F = [[1, dt], [0, 1]], Q = q·Γ Γᵀ with Γ = [dt²/2, dt]ᵀ.
Eigen::Matrix2d cv_f(double dt) { return (Eigen::Matrix2d() << 1, dt, 0, 1).finished(); }
Eigen::Matrix2d cv_q(double dt, double q) {
  const Eigen::Vector2d g(dt * dt / 2, dt);
  return q * g * g.transpose();
}

}  // namespace

TEST_CASE_TEMPLATE("constant-velocity Riccati recursion converges to SciPy's DARE solution", T, float, double) {
  const double dt = 0.1;
  const Eigen::RowVector2d h(1, 0);
  check_against_scipy<T, 2, 1>(cv_f(dt), cv_q(dt, 4.0), h, Eigen::Matrix<double, 1, 1>::Constant(0.25));
}

TEST_CASE_TEMPLATE("4-state planar model Riccati recursion converges to SciPy's DARE solution", T, float, double) {
  // Planar constant velocity, state (x, y, vx, vy), position measured in both axes with correlated noise.
  const double dt = 0.2;
  Eigen::Matrix4d F = Eigen::Matrix4d::Identity();
  F(0, 2) = dt;
  F(1, 3) = dt;
  Eigen::Matrix<double, 4, 2> G;
  G << dt * dt / 2, 0, 0, dt * dt / 2, dt, 0, 0, dt;
  const Eigen::Matrix2d qa = (Eigen::Matrix2d() << 1.0, 0.3, 0.3, 0.5).finished();
  const Eigen::Matrix4d Q = G * qa * G.transpose();
  Eigen::Matrix<double, 2, 4> H = Eigen::Matrix<double, 2, 4>::Zero();
  H(0, 0) = 1;
  H(1, 1) = 1;
  const Eigen::Matrix2d R = (Eigen::Matrix2d() << 0.5, 0.1, 0.1, 0.8).finished();
  check_against_scipy<T, 4, 2>(F, Q, H, R);
}

TEST_CASE_TEMPLATE("scalar random walk reaches its closed-form steady state", T, float, double) {
  // x(k+1) = x(k) + w, Var w = q; z = x + v, Var v = r. At steady state the predicted variance X satisfies
  // X = X r / (X + r) + q  ⇔  X² − qX − qr = 0  ⇒  X = (q + √(q² + 4qr)) / 2, and the gain is K = X / (X + r).
  const double q = 0.3, r = 2.0;
  const double x_exact = (q + std::sqrt(q * q + 4 * q * r)) / 2;
  const double k_exact = x_exact / (x_exact + r);
  Eigen::Matrix<T, 1, 1> x;
  Eigen::Matrix<T, 1, 1> k;
  riccati<T, 1, 1>(Eigen::Matrix<T, 1, 1>::Ones(), Eigen::Matrix<T, 1, 1>::Constant(T(q)),
                   Eigen::Matrix<T, 1, 1>::Ones(), Eigen::Matrix<T, 1, 1>::Constant(T(r)), 500, x, k);
  // Scalar case: κ = 1 and ρ = 1 − K ≈ 0.68, so 10ε/(1 − ρ²) ≈ 19ε (see riccati_tolerance).
  const double tol = 10.0 * static_cast<double>(std::numeric_limits<T>::epsilon()) / (1 - (1 - k_exact) * (1 - k_exact));
  // Source: closed form derived above.
  CHECK(std::abs(static_cast<double>(x(0)) - x_exact) / x_exact < tol);
  CHECK(std::abs(static_cast<double>(k(0)) - k_exact) / k_exact < tol);
}

TEST_CASE_TEMPLATE("constant-velocity steady-state gain equals the alpha-beta gains of the tracking index", T, float,
                   double) {
  // Kalata, "The tracking index: a generalized parameter for α-β and α-β-γ target trackers", IEEE TAES, 1984
  // (from memory): for the discrete white-noise-acceleration model with acceleration std σ_w, step T and
  // position-noise std σ_v, the tracking index λ = σ_w T² / σ_v gives the steady gain K = [α, β/T] with
  //   α = −(λ² + 8λ − (λ + 4)√(λ² + 8λ)) / 8,   β = (λ² + 4λ − λ√(λ² + 8λ)) / 4,
  // which satisfy λ² = β² / (1 − α).
  for (const double lambda_target : {0.05, 0.5, 2.0}) {
    const double dt = 0.5, sigma_v = 0.3;
    const double sigma_w = lambda_target * sigma_v / (dt * dt);
    const double l = sigma_w * dt * dt / sigma_v;
    const double root = std::sqrt(l * l + 8 * l);
    const double alpha = -(l * l + 8 * l - (l + 4) * root) / 8;
    const double beta = (l * l + 4 * l - l * root) / 4;
    REQUIRE(std::abs(beta * beta / (1 - alpha) - l * l) < 1e-12 * (1 + l * l));
    Eigen::Matrix<T, 2, 2> x;
    Eigen::Matrix<T, 2, 1> k;
    riccati<T, 2, 1>(cv_f(dt).cast<T>(), cv_q(dt, sigma_w * sigma_w).cast<T>(), Eigen::RowVector2d(1, 0).cast<T>(),
                     Eigen::Matrix<double, 1, 1>::Constant(sigma_v * sigma_v).cast<T>(), 5000, x, k);
    const Eigen::Vector2d k_ab(alpha, beta / dt);
    const double tol = riccati_tolerance<T, 2, 1>(cv_f(dt), Eigen::RowVector2d(1, 0), x.template cast<double>(),
                                                  k.template cast<double>());
    CAPTURE(lambda_target);
    MESSAGE("lambda ", l, " tolerance ", tol, " error ", rel_error(k, k_ab));
    // Source: Kalata 1984 (from memory), relations above.
    CHECK(rel_error(k, k_ab) < tol);
  }
}
