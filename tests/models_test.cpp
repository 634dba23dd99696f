// Ready-made models (models/kinematic.hpp, models/planar.hpp), float and double: the kinematic noise models against
// keel::discretize and against the input-effect matrix computed from the continuous dynamics; the coordinated
// turn against its closed-form circle; every analytic Jacobian against central differences.
#include <doctest/doctest.h>

#include <keel/discretize.hpp>
#include <keel/models/kinematic.hpp>
#include <keel/models/planar.hpp>

#include "support.hpp"

using namespace keel_test;

namespace {

// Central difference of f at x with step h per coordinate (f maps an N-vector to an M-vector).
template <int M, int N, typename F>
Eigen::Matrix<double, M, N> central_difference(F&& f, const Eigen::Matrix<double, N, 1>& x, double h) {
  Eigen::Matrix<double, M, N> j;
  for (int k = 0; k < N; ++k) {
    Eigen::Matrix<double, N, 1> xp = x;
    Eigen::Matrix<double, N, 1> xm = x;
    xp(k) += h;
    xm(k) -= h;
    j.col(k) = (f(xp) - f(xm)) / (2 * h);
  }
  return j;
}

// The continuous model of a chain of Order integrators per axis, A with ones on the superdiagonal of each block.
template <typename T, int Axes, int Order>
Eigen::Matrix<T, Axes * Order, Axes * Order> chain_generator() {
  Eigen::Matrix<T, Axes * Order, Axes * Order> a = Eigen::Matrix<T, Axes * Order, Axes * Order>::Zero();
  for (int ax = 0; ax < Axes; ++ax)
    for (int i = 0; i + 1 < Order; ++i) a(ax * Order + i, ax * Order + i + 1) = T(1);
  return a;
}

template <typename T, int Axes, int Order>
void check_kinematic(double dt) {
  using K = keel::models::Kinematic<T, Axes, Order>;
  constexpr int n = K::dim;
  const auto a = chain_generator<T, Axes, Order>();
  Eigen::Matrix<T, n, n> qc = Eigen::Matrix<T, n, n>::Zero();
  for (int ax = 0; ax < Axes; ++ax) qc(ax * Order + Order - 1, ax * Order + Order - 1) = T(0.7);
  // Van Loan (discretize.hpp, itself checked against SciPy) is the independent computation of both matrices.
  const auto model = keel::discretize(a, qc, T(dt));
  REQUIRE(model.ok());
  const double tol = static_cast<double>(eps_times<T>(1e4));  // as in discretize_test.cpp (entries span dt⁵..1)
  CHECK(rel_error(K::transition(T(dt)), model.F) < tol);
  CHECK(rel_error(K::noise_continuous(T(dt), T(0.7)), model.Q) < tol);
  // Piecewise-constant model: Q = σ² G Gᵀ with G the effect on the state of a unit input over one step.
  // Constant velocity: a constant acceleration over [0, dt] moves the state by ∫₀^dt e^(As) e_v ds = top-right
  // block of e^([[A, e_v], [0, 0]] dt) (Van Loan, 1978); constant acceleration: an increment of the
  // acceleration at the start of the step moves it by F e_a.
  Eigen::Matrix<T, n, 1> g;
  if constexpr (Order == 2) {
    Eigen::Matrix<T, n + 1, n + 1> aug = Eigen::Matrix<T, n + 1, n + 1>::Zero();
    aug.template topLeftCorner<n, n>() = a * T(dt);
    aug(Order - 1, n) = T(dt);  // input into the first axis's velocity
    Eigen::Matrix<T, n + 1, n + 1> e;
    REQUIRE(keel::expm(aug, e) == keel::Status::ok);
    g = e.template topRightCorner<n, 1>();
  } else {
    g = model.F.col(Order - 1);
  }
  const Eigen::Matrix<T, n, n> q_pc = K::noise_piecewise_constant(T(dt), T(0.3));
  const Eigen::Matrix<T, Order, 1> g1 = g.template head<Order>();
  CHECK(rel_error(q_pc.template topLeftCorner<Order, Order>().eval(), (T(0.09) * g1 * g1.transpose()).eval()) < tol);
  // Axes independent: block diagonal, identical blocks.
  for (int ax = 1; ax < Axes; ++ax)
    CHECK(q_pc.template block<Order, Order>(ax * Order, ax * Order) == q_pc.template topLeftCorner<Order, Order>());
  const auto h = K::position_matrix();
  for (int ax = 0; ax < Axes; ++ax) CHECK(h(ax, ax * Order) == T(1));
  CHECK(h.sum() == T(Axes));
}

}  // namespace

TEST_CASE_TEMPLATE("kinematic models: transition and both noise models", T, float, double) {
  // One, two and three axes (the axes are independent blocks, checked equal below), both orders.
  for (double dt : {0.01, 0.5}) {
    check_kinematic<T, 1, 2>(dt);
    check_kinematic<T, 3, 2>(dt);
    check_kinematic<T, 2, 3>(dt);
  }
}

TEST_CASE_TEMPLATE("coordinated turn: closed-form circle, straight line, Jacobian", T, float, double) {
  const keel::models::CoordinatedTurn<T> ct;
  // A full turn: speed v, rate ω for 2π/ω in n steps returns to the start with heading advanced by 2π;
  // after half of it the position is the circle's far point, 2v/ω across (geometry of the circle of radius v/ω).
  const double v = 3.0;
  const double w = 0.4;
  const int steps = 100;
  const double dt = 2 * 3.141592653589793 / w / steps;
  Eigen::Matrix<T, 5, 1> x;
  x << T(1), T(2), T(v), T(0.3), T(w);
  const Eigen::Matrix<T, 5, 1> x0 = x;
  Eigen::Matrix<T, 5, 1> half;
  for (int k = 0; k < steps; ++k) {
    x = ct(x, T(dt));
    if (k + 1 == steps / 2) half = x;
  }
  // 100 steps of O(1) roundings on positions of size ~10: 1e3·ε absolute at that scale.
  const double tol = static_cast<double>(eps_times<T>(1e3)) * 10;
  CHECK(std::abs(double(x(0) - x0(0))) < tol);
  CHECK(std::abs(double(x(1) - x0(1))) < tol);
  const double across = std::hypot(double(half(0) - x0(0)), double(half(1) - x0(1)));
  CHECK(std::abs(across - 2 * v / w) < tol);
  // ω = 0 is a straight line: x + v dt (cos ψ, sin ψ) (the sinc form has no division by ω).
  Eigen::Matrix<T, 5, 1> s;
  s << T(0), T(0), T(2), T(0.5), T(0);
  const auto s1 = ct(s, T(0.1));
  CHECK(std::abs(double(s1(0)) - 0.2 * std::cos(0.5)) < static_cast<double>(eps_times<T>(10)));
  CHECK(std::abs(double(s1(1)) - 0.2 * std::sin(0.5)) < static_cast<double>(eps_times<T>(10)));

  // Jacobian against central differences in double (step 1e-5: truncation O(h²) ≈ 1e-10, rounding
  // ε/h ≈ 2e-11), at a turn, near ω = 0 (series branch) and at ω = 0.
  const keel::models::CoordinatedTurn<double> ctd;
  for (double rate : {0.7, 1e-4, 0.0}) {
    Eigen::Matrix<double, 5, 1> p;
    p << 1.0, -2.0, 4.0, 2.5, rate;
    const auto numeric =
        central_difference<5, 5>([&](const Eigen::Matrix<double, 5, 1>& q) { return ctd(q, 0.2); }, p, 1e-5);
    CHECK(rel_error(ctd.jacobian(p, 0.2), numeric) < 1e-8);
    // And the float Jacobian equals the double one to float rounding.
    const auto jf = ct.jacobian(p.cast<T>(), T(0.2));
    CHECK(rel_error(jf, ctd.jacobian(p, 0.2)) < static_cast<double>(eps_times<T>(100)));
  }
  // Noise model: g_a along the heading and g_α on (ψ, ω), as documented.
  const auto q = ct.noise(x0, T(0.1), T(1), T(0));
  CHECK(std::abs(double(q(2, 2)) - 0.01) < static_cast<double>(eps_times<T>(10)));
  CHECK(q(3, 3) == T(0));
}

TEST_CASE_TEMPLATE("range/bearing and heading: Jacobians and angle-wrapping residuals", T, float, double) {
  keel::models::RangeBearing<double, 4, 0, 2> rb;  // position in states 0 and 2 of a 4-state vector
  rb.origin << 0.5, -1.0;
  Eigen::Matrix<double, 4, 1> x;
  x << 3.0, 0.2, 1.5, -0.1;
  const auto numeric =
      central_difference<2, 4>([&](const Eigen::Matrix<double, 4, 1>& q) { return rb(q); }, x, 1e-5);
  CHECK(rel_error(rb.jacobian(x), numeric) < 1e-8);  // step 1e-5: see the coordinated-turn case
  // Range and bearing closed form: Δ = (2.5, 2.5) → r = 2.5√2, bearing π/4.
  const auto z = rb(x);
  CHECK(std::abs(z(0) - 2.5 * std::sqrt(2.0)) < 1e-15 * 4);
  CHECK(std::abs(z(1) - 3.141592653589793 / 4) < 1e-15 * 4);

  keel::models::RangeBearing<T, 4, 0, 2> rbt;
  const T pi = T(3.14159265358979323846);
  const Eigen::Matrix<T, 2, 1> a(T(10), pi - T(0.01));
  const Eigen::Matrix<T, 2, 1> b(T(9), -pi + T(0.01));
  const auto res = rbt.residual(a, b);
  // 179.4° against −179.4°: the difference is −0.02 rad across the ±π cut, not 2π − 0.02.
  CHECK(std::abs(double(res(1)) + 0.02) < static_cast<double>(eps_times<T>(20)));
  CHECK(res(0) == T(1));
  const keel::models::Heading<T, 5, 3> heading;
  const auto hres = heading.residual(Eigen::Matrix<T, 1, 1>(T(0.05)), Eigen::Matrix<T, 1, 1>(T(2) * pi - T(0.05)));
  CHECK(std::abs(double(hres(0)) - 0.1) < static_cast<double>(eps_times<T>(20)));
  CHECK(heading.jacobian(Eigen::Matrix<T, 5, 1>::Zero())(0, 3) == T(1));
  // wrap_angle maps onto (−π, π]: π stays π, −π becomes π, 3π becomes π (to rounding), 0.5 stays.
  CHECK(keel::models::wrap_angle(pi) == pi);
  CHECK(keel::models::wrap_angle(-pi) == pi);
  CHECK(keel::models::wrap_angle(T(0.5)) == T(0.5));
  CHECK(std::abs(double(keel::models::wrap_angle(T(3) * pi)) - 3.141592653589793) < static_cast<double>(eps_times<T>(20)));
}
