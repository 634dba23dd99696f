// Scenario 3 (keel's own): a parcel drone's altitude, in float32 as on its flight controller. The vertical
// accelerometer (100 Hz, with an unknown bias) drives the prediction; a barometer (25 Hz) and a downward lidar
// (5 Hz) correct it. Each sensor stamps its own samples with jitter, so the filter fuses them by timestamp:
// before each measurement it predicts exactly to that time (an arbitrary dt, with F and Q from keel::discretize).
// The lidar sometimes sees no return (dropout) and sometimes a rooftop or a tree below (a short range spike);
// a chi-square gate rejects the spikes. The estimate is a UdGaussian: the factored form for float firmware.
// The numbers are invented for the demo. Usage: parcel_drone_altitude [out.csv]
#include <chrono>
#include <cmath>
#include <cstdio>
#include <random>

#include <keel/keel.hpp>

namespace {

using T = float;

// Truth: vertical acceleration profile of a delivery hop (climb to ~30 m, cruise, descend), m/s².
double commanded_accel(double t) {
  if (t < 5) return 1.2 * std::sin(3.14159265 * t / 5);
  if (t > 40 && t < 48) return -0.9 * std::sin(3.14159265 * (t - 40) / 8);
  return 0.05 * std::sin(0.7 * t);
}

// State (altitude h, vertical speed v, accelerometer bias b); the measured acceleration u enters as
// ḣ = v, v̇ = u − b + w_a, ḃ = w_b: A = [[0, 1, 0], [0, 0, −1], [0, 0, 0]], input matrix (0, 1, 0).
struct Motion {
  Eigen::Matrix<T, 3, 3> a;
  Eigen::Matrix<T, 3, 3> qc;
  Motion(T accel_noise, T bias_walk) {
    a << 0, 1, 0, 0, 0, -1, 0, 0, 0;
    qc = Eigen::Matrix<T, 3, 1>(0, accel_noise * accel_noise, bias_walk * bias_walk).asDiagonal();
  }
  // Predict to an arbitrary dt: F and Q by Van Loan; B u with B = ∫₀^dt e^(As) (0, 1, 0)ᵀ ds = (dt²/2, dt, 0)
  // (A nilpotent: e^(As) (0, 1, 0)ᵀ = (s, 1, 0)ᵀ).
  keel::Status predict(keel::UdGaussian<T, 3>& est, T dt, T u) const {
    const auto m = keel::discretize(a, qc, dt);
    if (!m.ok()) return m.status;
    const Eigen::Matrix<T, 3, 1> b(dt * dt / 2, dt, 0);
    return keel::predict(est, m.F, b, Eigen::Matrix<T, 1, 1>(u), m.Q);
  }
};

}  // namespace

int main(int argc, char** argv) {
  const char* csv_path = argc > 1 ? argv[1] : "parcel_drone_altitude.csv";
  constexpr double duration = 60.0;
  constexpr double imu_period = 0.01, baro_period = 0.04, lidar_period = 0.2;
  constexpr double jitter = 0.002;                       // s, timestamp jitter of each sensor
  constexpr double sigma_acc = 0.05;                        // m/s², noise of one accelerometer sample
  constexpr T sigma_bias_walk = 2e-4f;                      // m/s²/√s
  constexpr T sigma_baro = 0.35f, sigma_lidar = 0.04f;     // m
  constexpr double true_bias = 0.12;                     // m/s²
  constexpr double dropout_rate = 0.1, spike_rate = 0.06;
  std::mt19937 rng(3032026);
  std::normal_distribution<double> n01(0, 1);
  std::uniform_real_distribution<double> u01(0, 1);

  // White acceleration noise of density σ·√(sample period) has, over one period, the sample's variance.
  const Motion motion(static_cast<T>(sigma_acc * std::sqrt(imu_period)), sigma_bias_walk);
  const Eigen::Matrix<T, 1, 3> h_alt(1, 0, 0);
  const Eigen::Matrix<T, 1, 1> r_baro = Eigen::Matrix<T, 1, 1>::Constant(sigma_baro * sigma_baro);
  const Eigen::Matrix<T, 1, 1> r_lidar = Eigen::Matrix<T, 1, 1>::Constant(sigma_lidar * sigma_lidar);
  const keel::Gate<T> gate{static_cast<T>(keel::chi2_quantile(1, 0.999))};
  keel::NisMonitor<T, 1, 100> baro_monitor(0.95);

  keel::Gaussian<T, 3> prior;
  prior.mean.setZero();
  prior.cov = Eigen::Matrix<T, 3, 1>(0.05f, 0.01f, 0.04f).asDiagonal();
  keel::UdGaussian<T, 3> est;
  if (keel::to_ud(prior, est) != keel::Status::ok) return 1;

  std::FILE* csv = std::fopen(csv_path, "w");
  if (!csv) {
    std::fprintf(stderr, "cannot write %s\n", csv_path);
    return 1;
  }
  std::fprintf(csv, "t,true_alt,est_alt,sd_alt,true_vz,est_vz,est_bias,lidar_nis,lidar_gated\n");

  // Truth integrated at 1 kHz in double; sensors sample it at their (jittered) timestamps.
  double t_true = 0, h_true = 0, v_true = 0;
  auto advance_truth = [&](double t) {
    while (t_true + 1e-3 <= t) {
      const double a = commanded_accel(t_true);
      h_true += v_true * 1e-3 + 0.5 * a * 1e-6;
      v_true += a * 1e-3;
      t_true += 1e-3;
    }
  };
  double t_est = 0, next_imu = 0, next_baro = baro_period, next_lidar = lidar_period;
  T last_accel = 0;
  double sq_h = 0, sq_v = 0, seconds = 0, nis_lidar = 0, nis_baro = 0;
  int n = 0, n_lidar = 0, n_baro = 0, spikes = 0, gated = 0, gated_clean = 0, dropouts = 0, failures = 0, updates = 0;
  while (true) {
    // The next event in time order among the three sensors (the fusion-by-timestamp pattern).
    const double t = std::min({next_imu, next_baro, next_lidar});
    if (t > duration) break;
    advance_truth(t);
    const auto start = std::chrono::steady_clock::now();
    if (motion.predict(est, static_cast<T>(t - t_est), last_accel) != keel::Status::ok) ++failures;
    t_est = t;
    T lidar_nis = std::numeric_limits<T>::quiet_NaN();
    int lidar_gated = 0;
    if (t == next_imu) {
      last_accel = static_cast<T>(commanded_accel(t) + true_bias + sigma_acc * n01(rng));
      next_imu += imu_period + jitter * (u01(rng) - 0.5);
    } else if (t == next_baro) {
      const Eigen::Matrix<T, 1, 1> z(static_cast<T>(h_true + double(sigma_baro) * n01(rng)));
      const auto inn = keel::correct(est, h_alt, r_baro, z, gate);
      if (inn.ok()) {
        nis_baro += double(inn.nis);
        ++n_baro;
        baro_monitor.add(inn);
      } else if (inn.status != keel::Status::gated) {
        ++failures;
      }
      next_baro += baro_period + jitter * (u01(rng) - 0.5);
    } else {
      next_lidar += lidar_period + jitter * (u01(rng) - 0.5);
      if (u01(rng) < dropout_rate) {
        ++dropouts;  // no return: nothing to fuse
      } else {
        const bool spike = u01(rng) < spike_rate;
        double range = h_true + double(sigma_lidar) * n01(rng);
        if (spike) {
          range -= 1.0 + 6.0 * u01(rng);  // something under the drone
          ++spikes;
        }
        const auto inn = keel::correct(est, h_alt, r_lidar, Eigen::Matrix<T, 1, 1>(static_cast<T>(range)), gate);
        lidar_nis = inn.nis;
        if (inn.status == keel::Status::gated) {
          ++gated;
          lidar_gated = 1;
          if (!spike) ++gated_clean;
        } else if (inn.ok()) {
          nis_lidar += double(inn.nis);
          ++n_lidar;
        } else {
          ++failures;
        }
      }
    }
    seconds += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    ++updates;
    keel::Gaussian<T, 3> g;
    if (keel::to_gaussian(est, g) != keel::Status::ok) ++failures;
    sq_h += (double(g.mean(0)) - h_true) * (double(g.mean(0)) - h_true);
    sq_v += (double(g.mean(1)) - v_true) * (double(g.mean(1)) - v_true);
    ++n;
    std::fprintf(csv, "%.3f,%.4f,%.4f,%.4f,%.4f,%.4f,%.4f,%.4g,%d\n", t, h_true, double(g.mean(0)),
                 std::sqrt(double(g.cov(0, 0))), v_true, double(g.mean(1)), double(g.mean(2)), double(lidar_nis),
                 lidar_gated);
  }
  std::fclose(csv);

  const double lidar_lo = keel::chi2_quantile(n_lidar, 0.025) / n_lidar;
  const double lidar_hi = keel::chi2_quantile(n_lidar, 0.975) / n_lidar;
  const double baro_lo = keel::chi2_quantile(n_baro, 0.025) / n_baro;
  const double baro_hi = keel::chi2_quantile(n_baro, 0.975) / n_baro;
  keel::Gaussian<T, 3> last;
  (void)keel::to_gaussian(est, last);
  std::printf("parcel drone altitude: %.0f s, accelerometer 100 Hz, barometer 25 Hz, lidar 5 Hz, float32 UD filter\n",
              duration);
  std::printf("  altitude RMSE              %7.3f m\n", std::sqrt(sq_h / n));
  std::printf("  vertical speed RMSE        %7.3f m/s\n", std::sqrt(sq_v / n));
  std::printf("  accelerometer bias         %7.3f m/s^2 estimated (sd %.3f), %.3f true\n", double(last.mean(2)),
              std::sqrt(double(last.cov(2, 2))), true_bias);
  std::printf("  mean NIS barometer         %7.3f   95%% interval [%.3f, %.3f]\n", nis_baro / n_baro, baro_lo, baro_hi);
  std::printf("  mean NIS lidar (accepted)  %7.3f   95%% interval [%.3f, %.3f]\n", nis_lidar / n_lidar, lidar_lo,
              lidar_hi);
  std::printf("  lidar spikes gated         %7d   of %d injected; %d clean returns gated; %d dropouts\n", gated,
              spikes, gated_clean, dropouts);
  std::printf("  time per event             %7.0f ns  (predict to the event's time + its correction, this host)\n",
              1e9 * seconds / updates);
  std::printf("  kernel failures            %7d\n", failures);
  return failures == 0 ? 0 : 1;
}
