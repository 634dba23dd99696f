// The translation unit the `lint` test hands to clang-tidy: one call of every kernel family, so that the
// analysis sees each template instantiated (clang-tidy checks instantiations, not bare templates). Parsed, not run.
#include <keel/keel.hpp>
#include <keel/models/kinematic.hpp>
#include <keel/models/planar.hpp>

namespace {
using G = keel::Gaussian<double, 5>;
using V = Eigen::Matrix<double, 5, 1>;
using M = Eigen::Matrix<double, 5, 5>;

struct Fix {  // position fix: h(x) = (x₀, x₁), templated over the scalar (autodiff path)
  template <typename S>
  Eigen::Matrix<S, 2, 1> operator()(const Eigen::Matrix<S, 5, 1>& x) const noexcept {
    return x.template head<2>();
  }
};
}  // namespace

int keel_lint_instantiations() {
  G est;
  const M f = M::Identity();
  const M q = 0.01 * M::Identity();
  const Eigen::Matrix<double, 2, 5> h = Eigen::Matrix<double, 2, 5>::Identity();
  const Eigen::Matrix2d r = Eigen::Matrix2d::Identity();
  const Eigen::Vector2d z(1.0, 2.0);
  const keel::Gate<double> gate{keel::chi2_quantile(2, 0.99)};
  int failures = 0;
  auto count = [&failures](keel::Status s) { failures += s == keel::Status::ok ? 0 : 1; };
  count(keel::predict(est, f, q));
  count(keel::correct(est, h, r, z, gate).status);
  count(keel::correct(est, h, r, z, keel::standard_form).status);
  count(keel::correct_sequential(est, h, r.diagonal(), z).status);
  keel::SqrtGaussian<double, 5> s;
  count(keel::to_sqrt(est, s));
  count(keel::predict(s, f, q));
  count(keel::correct(s, h, r, z).status);
  count(keel::correct_sequential(s, h, r.diagonal(), z).status);
  keel::UdGaussian<double, 5> ud;
  count(keel::to_ud(est, ud));
  count(keel::predict(ud, f, q));
  count(keel::correct(ud, h, r, z).status);
  count(keel::correct_sequential(ud, h, r.diagonal(), z).status);
  count(keel::to_gaussian(ud, est));
  const keel::models::CoordinatedTurn<double> turn;
  const keel::models::RangeBearing<double, 5> range_bearing;
  count(keel::ekf::predict(est, turn, turn.noise(est.mean, 0.1, 0.5, 0.1), 0.1));
  count(keel::ekf::correct(est, range_bearing, r, z).status);
  count(keel::ekf::correct(est, Fix{}, r, z).status);
  count(keel::ekf::correct(est, keel::numeric_model(Fix{}), r, z).status);
  count(keel::ekf::correct_iterated(est, range_bearing, r, z).status);
  count(keel::ukf::predict(est, turn, q, keel::SigmaRule::scaled(1e-3, 2.0, 0.0), 0.1));
  count(keel::ukf::correct(s, range_bearing, r, z, keel::SigmaRule::cubature()).status);
  keel::NisMonitor<double, 2, 20> monitor;
  monitor.add(keel::nees(est, V::Zero()));
  const G filtered[2] = {est, est};
  const G predicted[1] = {est};
  const M fs[1] = {f};
  G smoothed[2];
  count(keel::rts_smooth(filtered, predicted, fs, 2, smoothed));
  using Cv = keel::models::ConstantVelocity<double, 2>;
  count(keel::discretize(Cv::transition(0.1), Cv::noise_continuous(0.1, 1.0), 0.1).status);
  using Attitude = keel::models::AttitudeBias<double>;
  keel::ManifoldGaussian<Attitude> att;
  const keel::models::GyroStrapdown strapdown;
  const keel::models::ReferenceDirection<double> gravity{Eigen::Vector3d(0, 0, 9.81)};
  const Eigen::Matrix<double, 6, 6> q6 = 1e-6 * Eigen::Matrix<double, 6, 6>::Identity();
  const Eigen::Vector3d omega(0.1, 0.0, -0.2);
  const Eigen::Vector3d accel(0.0, 0.1, 9.8);
  count(keel::ekf::predict(att, strapdown, q6, omega, 0.005));
  count(keel::ekf::correct(att, gravity, Eigen::Matrix3d::Identity(), accel).status);
  count(keel::ukf::predict(att, strapdown, q6, keel::SigmaRule::scaled(1.0, 2.0, 0.0), omega, 0.005));
  count(keel::ukf::correct(att, gravity, Eigen::Matrix3d::Identity(), accel, keel::SigmaRule::cubature()).status);
  monitor.add(keel::nees(att, att.mean));
  Eigen::Matrix4d l = Eigen::Matrix4d::Identity();
  count(keel::cholesky_update(l, Eigen::Vector4d::Ones().eval()));
  return failures + static_cast<int>(monitor.verdict());
}
