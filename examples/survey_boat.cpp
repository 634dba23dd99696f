// Scenario 2 (keel's own): a survey boat on a lake runs sounding lanes joined by U-turns. Its estimator holds
// position, speed, heading and turn rate (a coordinated-turn model) and fuses a GNSS fix every second and a
// compass at 5 Hz. Near the shore the GNSS fix sometimes jumps by tens of metres (multipath); a chi-square gate
// rejects it. An EKF (analytic Jacobians) and a UKF run side by side on the same data.
// The numbers are invented for the demo. Usage: survey_boat [out.csv]
#include <chrono>
#include <cmath>
#include <cstdio>
#include <random>

#include <keel/keel.hpp>

namespace {

using T = double;
using Vec5 = Eigen::Matrix<T, 5, 1>;

/// GNSS position fix z = (x, y).
struct Fix {
  template <typename S>
  Eigen::Matrix<S, 2, 1> operator()(const Eigen::Matrix<S, 5, 1>& x) const {
    return Eigen::Matrix<S, 2, 1>(x(0), x(1));
  }
};

/// Turn-rate profile of the survey: 60 s lanes joined by 20 s U-turns (π rad at 0.157 rad/s).
T turn_rate(T t) {
  const T cycle = std::fmod(t, 80.0);
  return cycle < 60.0 ? 0.0 : ((int(t / 80.0) % 2) ? -1.0 : 1.0) * 3.14159265358979 / 20.0;
}

struct Track {
  double sq_pos = 0, sq_head = 0, nis_fix = 0;
  int n = 0, n_fix = 0, gated = 0, gated_clean = 0, failures = 0;
  double seconds = 0;
};

}  // namespace

int main(int argc, char** argv) {
  const char* csv_path = argc > 1 ? argv[1] : "survey_boat.csv";
  constexpr T dt = 0.2;            // compass rate, and the prediction step
  constexpr int steps = 3000;      // ten minutes
  constexpr T sigma_fix = 1.5;     // m
  constexpr T sigma_compass = 0.05;  // rad
  constexpr double multipath_rate = 0.05;
  std::mt19937 rng(2022026);
  std::normal_distribution<T> n01(0, 1);
  std::uniform_real_distribution<T> u01(0, 1);

  const keel::models::CoordinatedTurn<T> motion;
  const keel::models::Heading<T, 5, 3> compass;
  const Fix fix;
  const Eigen::Matrix<T, 2, 2> r_fix = Eigen::Matrix<T, 2, 2>::Identity() * (sigma_fix * sigma_fix);
  const Eigen::Matrix<T, 1, 1> r_compass = Eigen::Matrix<T, 1, 1>::Constant(sigma_compass * sigma_compass);
  const keel::Gate<T> gate{static_cast<T>(keel::chi2_quantile(2, 0.999))};
  const keel::SigmaRule rule = keel::SigmaRule::scaled(0.5, 2.0, 0.0);

  Vec5 truth;
  truth << 0, 0, 2.0, 0.0, 0.0;  // 2 m/s east
  keel::Gaussian<T, 5> ekf;
  ekf.mean << 1.0, -1.0, 1.5, 0.1, 0.0;
  ekf.cov = Eigen::Matrix<T, 5, 1>(4, 4, 1, 0.05, 0.01).asDiagonal();
  keel::Gaussian<T, 5> ukf = ekf;

  std::FILE* csv = std::fopen(csv_path, "w");
  if (!csv) {
    std::fprintf(stderr, "cannot write %s\n", csv_path);
    return 1;
  }
  std::fprintf(csv, "t,true_x,true_y,true_heading,fix_x,fix_y,ekf_x,ekf_y,ukf_x,ukf_y,ekf_sd_x,ukf_sd_x,"
                    "ekf_fix_nis,ukf_fix_nis,fix_gated,multipath\n");
  Track te, tu;
  int injected = 0;
  for (int k = 1; k <= steps; ++k) {
    const T t = k * dt;
    truth(4) = turn_rate(t);
    truth = motion(truth, dt);
    truth(2) += 0.02 * n01(rng);  // the boat's speed wanders a little
    const Eigen::Matrix<T, 5, 5> q = motion.noise(ekf.mean, dt, 0.1, 0.02) + Eigen::Matrix<T, 5, 5>::Identity() * 1e-6;
    const Eigen::Matrix<T, 1, 1> zc(keel::models::wrap_angle(truth(3) + sigma_compass * n01(rng)));
    const bool fix_now = k % 5 == 0;
    const bool multipath = fix_now && u01(rng) < multipath_rate;
    Eigen::Matrix<T, 2, 1> zf(truth(0) + sigma_fix * n01(rng), truth(1) + sigma_fix * n01(rng));
    if (multipath) {
      zf += Eigen::Matrix<T, 2, 1>(15 + 30 * u01(rng), -10 + 20 * u01(rng));
      ++injected;
    }
    T nis_e = std::numeric_limits<T>::quiet_NaN(), nis_u = nis_e;
    int gated_e = 0;
    for (int which = 0; which < 2; ++which) {
      auto& est = which == 0 ? ekf : ukf;
      Track& tr = which == 0 ? te : tu;
      const auto start = std::chrono::steady_clock::now();
      const keel::Status sp = which == 0 ? keel::ekf::predict(est, motion, q, dt)
                                         : keel::ukf::predict(est, motion, q, rule, dt);
      const auto ic = which == 0 ? keel::ekf::correct(est, compass, r_compass, zc)
                                 : keel::ukf::correct(est, compass, r_compass, zc, rule);
      if (sp != keel::Status::ok || !ic.ok()) ++tr.failures;
      if (fix_now) {
        const auto inn = which == 0 ? keel::ekf::correct(est, fix, r_fix, zf, gate)
                                    : keel::ukf::correct(est, fix, r_fix, zf, rule, gate);
        (which == 0 ? nis_e : nis_u) = inn.nis;
        if (inn.status == keel::Status::gated) {
          ++tr.gated;
          if (!multipath) ++tr.gated_clean;
          if (which == 0) gated_e = 1;
        } else if (inn.ok()) {
          tr.nis_fix += inn.nis;
          ++tr.n_fix;
        } else {
          ++tr.failures;
        }
      }
      tr.seconds += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
      tr.sq_pos += std::pow(est.mean(0) - truth(0), 2) + std::pow(est.mean(1) - truth(1), 2);
      tr.sq_head += std::pow(keel::models::wrap_angle(est.mean(3) - truth(3)), 2);
      ++tr.n;
    }
    std::fprintf(csv, "%.1f,%.3f,%.3f,%.4f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f,%.4g,%.4g,%d,%d\n", t, truth(0),
                 truth(1), truth(3), fix_now ? zf(0) : std::nan(""), fix_now ? zf(1) : std::nan(""), ekf.mean(0),
                 ekf.mean(1), ukf.mean(0), ukf.mean(1), std::sqrt(ekf.cov(0, 0)), std::sqrt(ukf.cov(0, 0)), nis_e,
                 nis_u, gated_e, multipath ? 1 : 0);
  }
  std::fclose(csv);
  const double lo = keel::chi2_quantile(2 * te.n_fix, 0.025) / te.n_fix;
  const double hi = keel::chi2_quantile(2 * te.n_fix, 0.975) / te.n_fix;
  std::printf("survey boat: %d steps of %.1f s, compass 5 Hz, GNSS fix 1 Hz with multipath outliers (seed fixed)\n",
              steps, dt);
  std::printf("                              EKF        UKF\n");
  std::printf("  position RMSE (m)       %9.3f  %9.3f\n", std::sqrt(te.sq_pos / te.n), std::sqrt(tu.sq_pos / tu.n));
  std::printf("  heading RMSE (deg)      %9.3f  %9.3f\n", std::sqrt(te.sq_head / te.n) * 57.29578,
              std::sqrt(tu.sq_head / tu.n) * 57.29578);
  std::printf("  mean NIS of fixes       %9.3f  %9.3f   95%% interval [%.3f, %.3f]\n", te.nis_fix / te.n_fix,
              tu.nis_fix / tu.n_fix, lo, hi);
  std::printf("  fixes gated             %9d  %9d   of %d multipath outliers injected (clean ones gated: %d, %d)\n",
              te.gated, tu.gated, injected, te.gated_clean, tu.gated_clean);
  std::printf("  time per step (ns)      %9.0f  %9.0f   (predict + compass + 1/5 fix, this host)\n",
              1e9 * te.seconds / te.n, 1e9 * tu.seconds / tu.n);
  std::printf("  kernel failures         %9d  %9d\n", te.failures, tu.failures);
  return te.failures + tu.failures == 0 ? 0 : 1;
}
