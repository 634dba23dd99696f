// Fuzz target: the manifold kernels (manifold_filter.hpp) on the attitude-and-bias state (So3 × R³) with the
// strapdown gyro model and a reference-direction sensor: error-state EKF (analytic and central-difference
// Jacobians) and manifold UKF. The quaternion comes from the input unnormalized (so `not_on_manifold` is reached),
// as do the gyro reading, dt, the reference vector and the sigma-point rule's iteration cap.
#include <keel/manifold_filter.hpp>
#include <keel/models/attitude.hpp>

#include "fuzz.hpp"

namespace {

template <typename T>
using Space = keel::models::AttitudeBias<T>;

template <typename T>
bool same_bits(const keel::ManifoldGaussian<Space<T>>& a, const keel::ManifoldGaussian<Space<T>>& b) noexcept {
  return keel_fuzz::same_bits(std::get<0>(a.mean).coeffs(), std::get<0>(b.mean).coeffs()) &&
         keel_fuzz::same_bits(std::get<1>(a.mean), std::get<1>(b.mean)) && keel_fuzz::same_bits(a.cov, b.cov);
}

/// ok: a unit quaternion (kernels renormalize what they write: 100ε), finite bias, and a finite symmetric
/// covariance with a non-negative diagonal.
template <typename T>
bool valid(const keel::ManifoldGaussian<Space<T>>& e) noexcept {
  const auto& q = std::get<0>(e.mean);
  return q.coeffs().allFinite() && std::abs(q.squaredNorm() - T(1)) <= T(100) * std::numeric_limits<T>::epsilon() &&
         std::get<1>(e.mean).allFinite() && e.cov.allFinite() && e.cov == e.cov.transpose() &&
         (e.cov.diagonal().array() >= T(0)).all();
}

template <typename T>
void check(keel::Status s, const keel::ManifoldGaussian<Space<T>>& before,
           const keel::ManifoldGaussian<Space<T>>& after, const char* where) noexcept {
  if (s == keel::Status::ok) {
    keel_fuzz::expect(valid(after), "ok but the result is not a unit quaternion with a valid covariance", where);
  } else {
    keel_fuzz::expect(same_bits(before, after), "non-ok Status but the estimate changed", where);
  }
}

template <typename T>
void run(keel_fuzz::Bytes& in) {
  const keel::Gate<T> gate = keel_fuzz::gate_from<T>(in);
  keel::ManifoldGaussian<Space<T>> est;
  const Eigen::Matrix<T, 4, 1> q = in.matrix<T, 4, 1>();
  std::get<0>(est.mean) = in.choice(2) == 0 ? keel::So3<T>::exp(q.template head<3>())
                                            : Eigen::Quaternion<T>(q(0), q(1), q(2), q(3));
  std::get<1>(est.mean) = in.matrix<T, 3, 1>();
  est.cov = in.covariance<T, 6>();
  const auto before = est;
  const keel::models::GyroStrapdown f;
  const keel::models::ReferenceDirection<T> h{in.matrix<T, 3, 1>()};
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0).with_mean_iterations(1 + in.choice(20), 1e-9);
  switch (in.choice(5)) {
    case 0: {
      const auto qn = in.covariance<T, 6>();
      const auto omega = in.matrix<T, 3, 1>();
      const T dt = in.scalar<T>();
      check(keel::ekf::predict(est, f, qn, omega, dt), before, est, "ekf::predict on So3 x R3");
      break;
    }
    case 1: {
      const auto qn = in.covariance<T, 6>();
      const auto omega = in.matrix<T, 3, 1>();
      const T dt = in.scalar<T>();
      check(keel::ekf::predict(est, keel::numeric_model(f), qn, omega, dt), before, est, "ekf::predict numeric");
      break;
    }
    case 2: {
      const auto qn = in.covariance<T, 6>();
      const auto omega = in.matrix<T, 3, 1>();
      const T dt = in.scalar<T>();
      check(keel::ukf::predict(est, f, qn, rule, omega, dt), before, est, "ukf::predict on So3 x R3");
      break;
    }
    case 3: {
      const auto r = in.covariance<T, 3>();
      const auto z = in.matrix<T, 3, 1>();
      const auto inn = keel::ekf::correct(est, h, r, z, gate);
      check(inn.status, before, est, "ekf::correct on So3 x R3");
      break;
    }
    default: {
      const auto r = in.covariance<T, 3>();
      const auto z = in.matrix<T, 3, 1>();
      const auto inn = keel::ukf::correct(est, h, r, z, rule, gate);
      check(inn.status, before, est, "ukf::correct on So3 x R3");
      break;
    }
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
