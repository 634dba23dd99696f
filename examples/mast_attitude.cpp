// Scenario 2, continued (keel's own): the survey boat's sensor mast carries an IMU. Its attitude and heading come
// from a 200 Hz gyro (with bias), a 50 Hz accelerometer (gravity, disturbed by the waves' accelerations) and a
// 25 Hz magnetometer. Between t = 100 s and 115 s the deck winch runs next to the mast and bends the magnetic
// field; a chi-square gate on the magnetometer's NIS rejects those readings while the gyro carries the heading.
// The multiplicative (error-state) EKF and the manifold UKF run side by side in float, as on the boat's
// Cortex-M board. The numbers are invented for the demo. Usage: mast_attitude [out.csv]
#include <chrono>
#include <cmath>
#include <cstdio>
#include <random>

#include <keel/keel.hpp>

namespace {

using T = float;  // the filters; the simulated truth runs in double
using Space = keel::models::AttitudeBias<T>;
using V3 = Eigen::Matrix<T, 3, 1>;
constexpr double pi = 3.14159265358979323846;
constexpr double deg = 180.0 / pi;

/// Roll, pitch, yaw (z-y-x Euler angles, radians) of a rotation.
Eigen::Vector3d euler(const Eigen::Quaterniond& q) {
  const double w = q.w(), x = q.x(), y = q.y(), z = q.z();
  return {std::atan2(2 * (w * x + y * z), 1 - 2 * (x * x + y * y)), std::asin(std::clamp(2 * (w * y - z * x), -1.0, 1.0)),
          std::atan2(2 * (w * z + x * y), 1 - 2 * (y * y + z * z))};
}

/// The mast's true attitude: the boat's heading changes slowly along its lanes, the waves roll and pitch it.
Eigen::Quaterniond truth_attitude(double t) {
  const double yaw = 0.4 + 1.2 * std::sin(2 * pi * t / 150.0);
  const double pitch = (4.0 * std::sin(2 * pi * t / 5.1) + 1.5 * std::sin(2 * pi * t / 3.3 + 1.0)) / deg;
  const double roll = (8.0 * std::sin(2 * pi * t / 4.3) + 3.0 * std::sin(2 * pi * t / 2.7 + 0.5)) / deg;
  return Eigen::Quaterniond(Eigen::AngleAxisd(yaw, Eigen::Vector3d::UnitZ()) *
                            Eigen::AngleAxisd(pitch, Eigen::Vector3d::UnitY()) *
                            Eigen::AngleAxisd(roll, Eigen::Vector3d::UnitX()));
}

struct Track {
  double sq_att = 0, sq_head = 0, nis_accel = 0, nis_mag = 0;
  int n = 0, n_accel = 0, n_mag = 0, gated_episode = 0, gated_clean = 0, failures = 0;
  double seconds = 0;
  int updates = 0;
};

/// Heading standard deviation (rad): the vertical component of the body-frame attitude error rotated to the
/// reference frame, σ² = (R P_θ Rᵀ)_zz.
double heading_sd(const keel::ManifoldGaussian<Space>& e) {
  const Eigen::Matrix3d r = std::get<0>(e.mean).cast<double>().toRotationMatrix();
  const Eigen::Matrix3d p = e.cov.topLeftCorner<3, 3>().cast<double>();
  return std::sqrt((r * p * r.transpose())(2, 2));
}

}  // namespace

int main(int argc, char** argv) {
  const char* csv_path = argc > 1 ? argv[1] : "mast_attitude.csv";
  constexpr double dt = 0.005;  // 200 Hz gyro
  constexpr int steps = 36000;  // three minutes
  constexpr double sigma_gyro = 0.004, bias_walk = 1e-5, sigma_accel = 0.05, sigma_mag = 0.003;
  constexpr double wave_accel = 0.3;  // m/s², the waves' linear acceleration the accelerometer also feels
  const Eigen::Vector3d gravity_up(0, 0, 9.81), field(0.19, -0.02, -0.44);
  const Eigen::Vector3d winch(0.10, -0.07, 0.04);  // field added by the winch motor, body frame
  std::mt19937 rng(1207);
  std::normal_distribution<double> n01(0, 1);
  const auto noise3 = [&](double s) { return Eigen::Vector3d(s * n01(rng), s * n01(rng), s * n01(rng)); };

  const keel::models::GyroStrapdown strapdown;
  const keel::models::ReferenceDirection<T> accel{gravity_up.cast<T>()};
  const keel::models::ReferenceDirection<T> mag{field.cast<T>()};
  Eigen::Matrix<T, 6, 6> q = Eigen::Matrix<T, 6, 6>::Zero();
  q.diagonal() << V3::Constant(T(sigma_gyro * sigma_gyro * dt * dt)), V3::Constant(T(bias_walk * bias_walk));
  // The accelerometer's noise includes the unmodelled wave accelerations (common practice: inflate R to cover
  // a disturbance the model omits): σ² = 0.05² + 0.3².
  const Eigen::Matrix<T, 3, 3> r_accel =
      Eigen::Matrix<T, 3, 3>::Identity() * T(sigma_accel * sigma_accel + wave_accel * wave_accel);
  const Eigen::Matrix<T, 3, 3> r_mag = Eigen::Matrix<T, 3, 3>::Identity() * T(sigma_mag * sigma_mag);
  const keel::Gate<T> gate{static_cast<T>(keel::chi2_quantile(3, 0.999))};
  const keel::SigmaRule rule = keel::SigmaRule::scaled(1.0, 2.0, 0.0);

  // Start: attitude from a rough levelling (5° off per axis), bias unknown (0.02 rad/s).
  keel::ManifoldGaussian<Space> ekf;
  ekf.mean = Space::Mean(keel::So3<T>::boxplus(truth_attitude(0).cast<T>(), V3(T(0.06), T(-0.05), T(0.09))), V3::Zero());
  ekf.cov.setZero();
  ekf.cov.diagonal() << V3::Constant(T(0.1 * 0.1)), V3::Constant(T(0.02 * 0.02));
  keel::ManifoldGaussian<Space> ukf = ekf;
  Eigen::Vector3d bias(0.012, -0.008, 0.005);

  std::FILE* csv = std::fopen(csv_path, "w");
  if (!csv) {
    std::fprintf(stderr, "cannot write %s\n", csv_path);
    return 1;
  }
  std::fprintf(csv, "t,true_roll,true_pitch,true_yaw,ekf_roll,ekf_pitch,ekf_yaw,ukf_yaw,ekf_yaw_sd,ekf_err,ukf_err,"
                    "nis_mag,mag_gated,winch\n");
  Track te, tu;
  double last_nis_mag = 0;
  int last_gated = 0;
  for (int k = 0; k < steps; ++k) {
    const double t = k * dt;
    const Eigen::Quaterniond now = truth_attitude(t), next = truth_attitude(t + dt);
    const Eigen::Vector3d omega = keel::So3<double>::boxminus(next, now) / dt;  // body rate over the step
    const V3 gyro = (omega + bias + noise3(sigma_gyro)).cast<T>();
    bias += noise3(bias_walk);
    const bool winch_on = t + dt >= 100.0 && t + dt < 115.0;
    const bool accel_due = (k + 1) % 4 == 0, mag_due = (k + 1) % 8 == 0;
    const Eigen::Vector3d waves = wave_accel * std::sqrt(2.0) *  // surge, sway, heave: RMS wave_accel each
                                  Eigen::Vector3d(std::sin(2 * pi * t / 6.1 + 1.0), std::sin(2 * pi * t / 4.3 + 2.0),
                                                  std::sin(2 * pi * t / 4.7));
    const V3 za = (keel::So3<double>::unrotate(next, gravity_up + waves) + noise3(sigma_accel)).cast<T>();
    const V3 zm = (keel::So3<double>::unrotate(next, field) + (winch_on ? winch : Eigen::Vector3d::Zero()) +
                   noise3(sigma_mag)).cast<T>();
    for (int which = 0; which < 2; ++which) {
      Track& tr = which == 0 ? te : tu;
      keel::ManifoldGaussian<Space>& est = which == 0 ? ekf : ukf;
      const auto start = std::chrono::steady_clock::now();
      tr.failures += (which == 0 ? keel::ekf::predict(est, strapdown, q, gyro, T(dt))
                                 : keel::ukf::predict(est, strapdown, q, rule, gyro, T(dt))) != keel::Status::ok;
      ++tr.updates;
      if (accel_due) {
        const auto inn = which == 0 ? keel::ekf::correct(est, accel, r_accel, za)
                                    : keel::ukf::correct(est, accel, r_accel, za, rule);
        tr.failures += !inn.ok();
        tr.nis_accel += static_cast<double>(inn.nis);
        ++tr.n_accel;
        ++tr.updates;
      }
      if (mag_due) {
        const auto inn = which == 0 ? keel::ekf::correct(est, mag, r_mag, zm, gate)
                                    : keel::ukf::correct(est, mag, r_mag, zm, rule, gate);
        const bool gated = inn.status == keel::Status::gated;
        tr.failures += !inn.ok() && !gated;
        (winch_on ? tr.gated_episode : tr.gated_clean) += gated;
        if (!winch_on && !gated) {
          tr.nis_mag += static_cast<double>(inn.nis);
          ++tr.n_mag;
        }
        if (which == 0) {
          last_nis_mag = static_cast<double>(inn.nis);
          last_gated = gated;
        }
        ++tr.updates;
      }
      tr.seconds += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
      const Eigen::Quaterniond e = std::get<0>(est.mean).cast<double>();
      const double att_err = keel::So3<double>::boxminus(next, e).norm();
      const double head_err = keel::So2<double>::wrap(euler(e)(2) - euler(next)(2));
      if (t >= 10.0) {  // after the start-up transient
        tr.sq_att += att_err * att_err;
        tr.sq_head += head_err * head_err;
        ++tr.n;
      }
    }
    if (k % 20 == 0) {  // 10 Hz rows
      const Eigen::Vector3d tv = euler(next) * deg, ev = euler(std::get<0>(ekf.mean).cast<double>()) * deg;
      const double uy = euler(std::get<0>(ukf.mean).cast<double>())(2) * deg;
      std::fprintf(csv, "%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.4f,%.4f,%.4f,%.4g,%d,%d\n", t + dt, tv(0), tv(1),
                   tv(2), ev(0), ev(1), ev(2), uy, heading_sd(ekf) * deg,
                   keel::So3<double>::boxminus(next, std::get<0>(ekf.mean).cast<double>()).norm() * deg,
                   keel::So3<double>::boxminus(next, std::get<0>(ukf.mean).cast<double>()).norm() * deg,
                   last_nis_mag, last_gated, winch_on ? 1 : 0);
    }
  }
  std::fclose(csv);

  const int winch_readings = 15 * 25;
  std::printf("mast attitude: %d s at 200 Hz gyro, 50 Hz accelerometer, 25 Hz magnetometer; winch on 100-115 s "
              "(float filters, seed fixed)\n", steps / 200);
  std::printf("                                    EKF        UKF\n");
  std::printf("  attitude RMSE (deg)           %9.3f  %9.3f   (rotation angle of the error, t >= 10 s)\n",
              std::sqrt(te.sq_att / te.n) * deg, std::sqrt(tu.sq_att / tu.n) * deg);
  std::printf("  heading RMSE (deg)            %9.3f  %9.3f\n", std::sqrt(te.sq_head / te.n) * deg,
              std::sqrt(tu.sq_head / tu.n) * deg);
  const double lo_a = keel::chi2_quantile(3 * te.n_accel, 0.025) / te.n_accel;
  const double hi_a = keel::chi2_quantile(3 * te.n_accel, 0.975) / te.n_accel;
  std::printf("  mean NIS, accelerometer       %9.3f  %9.3f   95%% interval of the mean [%.3f, %.3f]\n",
              te.nis_accel / te.n_accel, tu.nis_accel / tu.n_accel, lo_a, hi_a);
  const double lo_m = keel::chi2_quantile(3 * te.n_mag, 0.025) / te.n_mag;
  const double hi_m = keel::chi2_quantile(3 * te.n_mag, 0.975) / te.n_mag;
  std::printf("  mean NIS, magnetometer        %9.3f  %9.3f   [%.3f, %.3f] (accepted readings, winch off)\n",
              te.nis_mag / te.n_mag, tu.nis_mag / tu.n_mag, lo_m, hi_m);
  std::printf("  winch readings gated          %9d  %9d   of %d (clean readings gated: %d, %d)\n", te.gated_episode,
              tu.gated_episode, winch_readings, te.gated_clean, tu.gated_clean);
  std::printf("  time per kernel call (ns)     %9.0f  %9.0f   (predict and corrections, this host)\n",
              te.seconds / te.updates * 1e9, tu.seconds / tu.updates * 1e9);
  std::printf("  kernel failures               %9d  %9d\n", te.failures, tu.failures);
  std::printf("CSV written to %s\n", csv_path);
  return te.failures + tu.failures == 0 ? 0 : 1;
}
