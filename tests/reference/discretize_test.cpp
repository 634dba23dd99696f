// keel::expm and keel::discretize (discretize.hpp) against SciPy at test time (scipy.linalg.expm, and the
// defining integral of the discrete noise by adaptive quadrature), and against closed forms derived below.
#include <doctest/doctest.h>

#include <keel/discretize.hpp>

#include "../support.hpp"

using namespace keel_test;

namespace {

// Forward-error tolerance of expm: scaling and squaring with the Padé degree chosen from the norm has backward
// error at unit roundoff (Higham 2005, sec. 3), and the forward error of e^A is bounded by the exponential's
// condition number times that; for the test matrices (‖A‖₁ ≤ 10, well-separated spectrum) the condition number
// stays below ~1e2 (Higham 2005's experiments, from memory), so 1e3·ε with margin, relative to max|e^A|.
template <typename T>
double tol_expm() {
  return static_cast<double>(eps_times<T>(1e3));
}

template <typename T, int N>
void check_expm_against_scipy(unsigned seed) {
  std::mt19937 rng(seed);
  // Norms across every degree branch: ‖A‖ from 1e-3 (degree 3) to ~10 (degree 13 with scaling).
  const double scales[] = {1e-3, 0.05, 0.3, 0.8, 1.5, 3.0};
  std::string input;
  Eigen::Matrix<T, N, N> mats[6];
  for (int k = 0; k < 6; ++k) {
    mats[k] = random_matrix<T, N, N>(rng, scales[k]);
    input += "expm\n" + to_text(mats[k]);
  }
  const std::string out = run_python("reference/expm.py", input);
  size_t pos = 0;
  for (int k = 0; k < 6; ++k) {
    CAPTURE(k);
    const Eigen::Matrix<double, N, N> ref = from_text<N, N>(out, pos);
    Eigen::Matrix<T, N, N> e;
    REQUIRE(keel::expm(mats[k], e) == keel::Status::ok);
    CHECK(rel_error(e, ref) < tol_expm<T>());
  }
}

}  // namespace

TEST_CASE_TEMPLATE("expm matches scipy.linalg.expm", T, float, double) {
  check_expm_against_scipy<T, 3>(1);
  check_expm_against_scipy<T, 6>(2);
}

TEST_CASE_TEMPLATE("expm closed forms: diagonal, nilpotent, rotation generator", T, float, double) {
  // e^diag(d) = diag(e^d); e^N = I + N + N²/2 for N strictly upper triangular 3×3 (N³ = 0);
  // e^(θJ) = [[cos θ, −sin θ], [sin θ, cos θ]] for J = [[0, −1], [1, 0]] (J² = −I, series split into cos and sin).
  const double tol = tol_expm<T>();
  Eigen::Matrix<T, 3, 3> d = Eigen::Matrix<T, 3, 3>::Zero();
  d.diagonal() << T(-2), T(0.5), T(3);
  Eigen::Matrix<T, 3, 3> e;
  REQUIRE(keel::expm(d, e) == keel::Status::ok);
  Eigen::Matrix<double, 3, 3> expected = Eigen::Matrix<double, 3, 3>::Zero();
  expected.diagonal() << std::exp(-2.0), std::exp(0.5), std::exp(3.0);
  CHECK(rel_error(e, expected) < tol);
  Eigen::Matrix<T, 3, 3> nil = Eigen::Matrix<T, 3, 3>::Zero();
  nil(0, 1) = T(2);
  nil(0, 2) = T(-1);
  nil(1, 2) = T(4);
  REQUIRE(keel::expm(nil, e) == keel::Status::ok);
  const Eigen::Matrix<double, 3, 3> nd = nil.template cast<double>();
  CHECK(rel_error(e, (Eigen::Matrix<double, 3, 3>::Identity() + nd + nd * nd / 2).eval()) < tol);
  for (double theta : {0.01, 1.0, 10.0}) {
    Eigen::Matrix<T, 2, 2> j;
    j << T(0), T(-theta), T(theta), T(0);
    Eigen::Matrix<T, 2, 2> r;
    REQUIRE(keel::expm(j, r) == keel::Status::ok);
    Eigen::Matrix<double, 2, 2> rot;
    rot << std::cos(theta), -std::sin(theta), std::sin(theta), std::cos(theta);
    // θ = 10 needs 2 squarings; each squaring doubles the relative error at most (orthogonal matrices): ×4.
    CHECK(rel_error(r, rot) < 4 * tol);
  }
}

TEST_CASE_TEMPLATE("discretize: continuous white-noise acceleration closed form", T, float, double) {
  // ẋ = A x + w with A = [[0, 1], [0, 0]] (position, velocity), w = (0, a), E[a a] = q δ:
  // e^(As) = [[1, s], [0, 1]] (A² = 0), so F = [[1, dt], [0, 1]] and
  // Q = ∫₀^dt e^(As) diag(0, q) e^(Aᵀs) ds = q ∫₀^dt (s, 1)(s, 1)ᵀ ds = q [[dt³/3, dt²/2], [dt²/2, dt]].
  Eigen::Matrix<T, 2, 2> a;
  a << T(0), T(1), T(0), T(0);
  for (double dt : {0.001, 0.02, 1.0, 5.0}) {
    CAPTURE(dt);
    const double q = 0.3;
    Eigen::Matrix<T, 2, 2> qc = Eigen::Matrix<T, 2, 2>::Zero();
    qc(1, 1) = T(q);
    const auto model = keel::discretize(a, qc, T(dt));
    REQUIRE(model.ok());
    Eigen::Matrix<double, 2, 2> f;
    f << 1, dt, 0, 1;
    Eigen::Matrix<double, 2, 2> qd;
    qd << dt * dt * dt / 3, dt * dt / 2, dt * dt / 2, dt;
    qd *= q;
    // Entries of e^(M dt) span dt³ to 1 here; Van Loan's Q comes out of a product of two blocks of e^(M dt):
    // relative to max|Q|, 1e4·ε for dt down to 1e-3 (the smallest entry, dt³/3, is 1e-9 of the largest).
    CHECK(rel_error(model.F, f) < tol_expm<T>());
    CHECK(rel_error(model.Q, qd) < static_cast<double>(eps_times<T>(1e4)));
  }
}

TEST_CASE_TEMPLATE("discretize matches the defining integral computed by SciPy", T, float, double) {
  // A damped 4-state oscillator pair with a coupling, Qc a full SPD intensity (demo numbers).
  std::mt19937 rng(8);
  Eigen::Matrix<T, 4, 4> a = random_matrix<T, 4, 4>(rng, 0.7);
  a.diagonal().array() -= T(0.5);
  const Eigen::Matrix<T, 4, 4> qc = random_spd<T, 4>(rng, 0.1, 1.0);
  const T dt = T(0.4);
  const std::string out =
      run_python("reference/expm.py", "vanloan\n" + to_text(a) + to_text(qc) + to_text(Eigen::Matrix<T, 1, 1>(dt)));
  size_t pos = 0;
  const Eigen::Matrix<double, 4, 4> f_ref = from_text<4, 4>(out, pos);
  const Eigen::Matrix<double, 4, 4> q_ref = from_text<4, 4>(out, pos);
  const auto model = keel::discretize(a, qc, dt);
  REQUIRE(model.ok());
  CHECK(rel_error(model.F, f_ref) < tol_expm<T>());
  // The quadrature is asked for 1e-13 relative; keel's error is the expm tolerance: whichever is larger.
  CHECK(rel_error(model.Q, q_ref) < std::max(tol_expm<T>(), 1e-12));
  CHECK(model.Q == model.Q.transpose());
}

TEST_CASE_TEMPLATE("discretize and expm: bad input returns its Status", T, float, double) {
  Eigen::Matrix<T, 2, 2> a = Eigen::Matrix<T, 2, 2>::Identity();
  Eigen::Matrix<T, 2, 2> qc = Eigen::Matrix<T, 2, 2>::Identity();
  CHECK(keel::discretize(a, qc, T(-0.1)).status == keel::Status::negative_variance);
  CHECK(keel::discretize(a, qc, std::numeric_limits<T>::quiet_NaN()).status == keel::Status::non_finite);
  qc(1, 1) = T(-1);
  CHECK(keel::discretize(a, qc, T(0.1)).status == keel::Status::negative_variance);
  qc(1, 1) = T(1);
  a(0, 1) = std::numeric_limits<T>::infinity();
  CHECK(keel::discretize(a, qc, T(0.1)).status == keel::Status::non_finite);
  // e^(1000 I) overflows float and double: reported, output untouched.
  const Eigen::Matrix<T, 2, 2> big = Eigen::Matrix<T, 2, 2>::Identity() * T(1000);
  Eigen::Matrix<T, 2, 2> e = Eigen::Matrix<T, 2, 2>::Constant(T(7));
  CHECK(keel::expm(big, e) == keel::Status::non_finite);
  CHECK(e == Eigen::Matrix<T, 2, 2>::Constant(T(7)));
  // dt = 0: F = I, Q = 0 exactly (e^0 = I: the degree-3 branch evaluates (I)⁻¹ I).
  const auto zero = keel::discretize(Eigen::Matrix<T, 2, 2>::Identity().eval(), qc, T(0));
  REQUIRE(zero.ok());
  CHECK(zero.F == Eigen::Matrix<T, 2, 2>::Identity());
  CHECK(zero.Q == Eigen::Matrix<T, 2, 2>::Zero());
}
