// Heap-free proof (label `alloc`) for the manifold kernels: error-state EKF with each Jacobian source and the
// manifold UKF on the attitude-and-bias state, float and double. Linked into keel_test_alloc_lean, whose
// alloc_test.cpp installs the counting hooks.
#include "alloc_probe.hpp"

#include <doctest/doctest.h>

#include <keel/manifold_filter.hpp>
#include <keel/models/attitude.hpp>

TEST_CASE_TEMPLATE("manifold EKF and UKF allocate nothing", T, float, double) {
  using Space = keel::models::AttitudeBias<T>;
  using V = Eigen::Matrix<T, 3, 1>;
  const keel::models::GyroStrapdown f;
  const keel::models::ReferenceDirection<T> accel{V(T(0), T(0), T(9.81))};
  keel::ManifoldGaussian<Space> est;
  est.mean = typename Space::Mean(keel::So3<T>::exp(V(T(0.2), T(-0.1), T(1.0))), V::Zero());
  est.cov = Eigen::Matrix<T, 6, 6>::Identity() * T(0.01);
  const Eigen::Matrix<T, 6, 6> q = Eigen::Matrix<T, 6, 6>::Identity() * T(1e-6);
  const Eigen::Matrix<T, 3, 3> r = Eigen::Matrix<T, 3, 3>::Identity() * T(0.05);
  const V omega(T(0.1), T(0.3), T(-0.2));
  const V z(T(0.3), T(-0.2), T(9.7));
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0);
  keel::Status st[7] = {};
  const long n = allocations_in([&] {
    st[0] = keel::ekf::predict(est, f, q, omega, T(0.005));                                // analytic
    st[1] = keel::ekf::predict(est, keel::autodiff_model(f), q, omega, T(0.005));          // autodiff
    st[2] = keel::ekf::predict(est, keel::numeric_model(f), q, omega, T(0.005));           // numeric
    st[3] = keel::ekf::correct(est, accel, r, z).status;                                    // analytic
    st[4] = keel::ekf::correct(est, keel::autodiff_model(accel), r, z).status;              // autodiff
    st[5] = keel::ukf::predict(est, f, q, rule, omega, T(0.005));
    st[6] = keel::ukf::correct(est, accel, r, z, rule).status;
  });
  CHECK(n == 0);
  for (int i = 0; i < 7; ++i) CHECK(st[i] == keel::Status::ok);
}
