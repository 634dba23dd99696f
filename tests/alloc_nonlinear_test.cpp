// Heap-free proof (label `alloc`) for the nonlinear kernels: EKF with each Jacobian source (analytic,
// automatic differentiation, central differences), iterated EKF, unscented transform, UKF and square-root UKF,
// float and double. Linked into keel_test_alloc, whose alloc_test.cpp installs the counting hooks.
#include "alloc_probe.hpp"

#include <doctest/doctest.h>

#include <keel/ekf.hpp>
#include <keel/ukf.hpp>

#include "boat_problem.hpp"

TEST_CASE_TEMPLATE("EKF, iterated EKF, unscented transform, UKF and square-root UKF allocate nothing", T, float,
                   double) {
  const keel_test::Boat<T> boat;
  auto g = boat.prior;
  keel::SqrtGaussian<T, 5> s;
  REQUIRE(keel::to_sqrt(g, s) == keel::Status::ok);
  const Eigen::Matrix<T, 3, 1> z(T(1), T(-0.5), T(0.31));
  const keel::SigmaRule rule = keel::SigmaRule::scaled(0.5, 2.0, 0.0);
  keel::Status st[14] = {};
  const long n = allocations_in([&] {
    st[0] = keel::ekf::predict(g, boat.motion, boat.q, boat.dt);                            // analytic
    st[1] = keel::ekf::predict(g, keel::autodiff_model(boat.motion), boat.q, boat.dt);      // autodiff
    st[2] = keel::ekf::predict(g, keel::numeric_model(boat.motion), boat.q, boat.dt);       // numeric
    st[3] = keel::ekf::correct(g, boat.sensor, boat.r, z).status;                           // autodiff (no jacobian)
    st[4] = keel::ekf::correct_iterated(g, boat.sensor, boat.r, z).status;
    st[5] = keel::ekf::predict(s, boat.motion, boat.q, boat.dt);
    st[6] = keel::ekf::correct(s, boat.sensor, boat.r, z).status;
    st[7] = keel::unscented_transform(boat.sensor, g, rule).status;
    st[8] = keel::ukf::predict(g, boat.motion, boat.q, rule, boat.dt);
    st[9] = keel::ukf::correct(g, boat.sensor, boat.r, z, rule).status;
    st[10] = keel::ukf::predict(s, boat.motion, boat.q, rule, boat.dt);
    st[11] = keel::ukf::correct(s, boat.sensor, boat.r, z, rule).status;
    st[12] = keel::ukf::correct(s, boat.sensor, boat.r, z, rule, keel::Gate<T>{T(0)}).status;  // gated path
    st[13] = keel::ekf::correct(g, keel::numeric_model(boat.sensor), boat.r, z).status;       // numeric + residual
  });
  CHECK(n == 0);
  for (int i = 0; i < 14; ++i) CHECK(st[i] == (i == 12 ? keel::Status::gated : keel::Status::ok));
}
