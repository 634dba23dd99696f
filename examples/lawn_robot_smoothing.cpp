// Scenario 4 (keel's own): the overnight log of a lawn robot, smoothed offline. During the night the robot
// wanders its lawn (constant velocity with white acceleration) and logs a satellite position fix every second;
// in the morning the log is filtered forward and smoothed backward with keel::rts_smooth, in place over the
// caller's vector, and the consistency of both is checked against the simulated truth (NEES) and the data
// (NIS). The numbers are invented for the demo. Usage: lawn_robot_smoothing [out.csv]
#include <chrono>
#include <cmath>
#include <cstdio>
#include <random>
#include <vector>

#include <keel/keel.hpp>

int main(int argc, char** argv) {
  using T = double;
  using Model = keel::models::ConstantVelocity<T, 2>;  // state (x, vx, y, vy)
  const char* csv_path = argc > 1 ? argv[1] : "lawn_robot_smoothing.csv";
  constexpr std::size_t steps = 8 * 3600;  // eight hours at 1 Hz
  constexpr T dt = 1.0;
  constexpr T sigma_a = 0.02;    // m/s², the robot's wandering
  constexpr T sigma_fix = 0.9;   // m, position fix noise
  std::mt19937 rng(4042026);
  std::normal_distribution<T> n01(0, 1);

  const auto f = Model::transition(dt);
  const auto q = Model::noise_piecewise_constant(dt, sigma_a);
  const auto h = Model::position_matrix();
  const Eigen::Matrix<T, 2, 2> r = Eigen::Matrix<T, 2, 2>::Identity() * (sigma_fix * sigma_fix);
  Eigen::Matrix<T, 4, 2> g = Eigen::Matrix<T, 4, 2>::Zero();  // acceleration → state over one step
  g(0, 0) = g(2, 1) = dt * dt / 2;
  g(1, 0) = g(3, 1) = dt;

  // Truth and the log, drawn from the model (so that NEES and NIS have their nominal distributions).
  std::vector<Eigen::Matrix<T, 4, 1>> truth(steps);
  std::vector<Eigen::Matrix<T, 2, 1>> fixes(steps);
  Eigen::Matrix<T, 4, 1> x(10.0, 0.1, 5.0, -0.05);
  for (std::size_t k = 0; k < steps; ++k) {
    if (k > 0) x = f * x + g * Eigen::Matrix<T, 2, 1>(sigma_a * n01(rng), sigma_a * n01(rng));
    truth[k] = x;
    fixes[k] = h * x + Eigen::Matrix<T, 2, 1>(sigma_fix * n01(rng), sigma_fix * n01(rng));
  }

  // Forward pass: keep x(k|k), x(k+1|k) and F_k, as rts_smooth needs (caller-owned vectors, no heap inside).
  std::vector<keel::Gaussian<T, 4>> run(steps);
  std::vector<keel::Gaussian<T, 4>> predicted(steps - 1);
  std::vector<Eigen::Matrix<T, 4, 4>> transitions(steps - 1, f);
  keel::Gaussian<T, 4> est;
  est.mean << fixes[0](0), 0, fixes[0](1), 0;
  est.cov = Eigen::Matrix<T, 4, 1>(4, 0.25, 4, 0.25).asDiagonal();
  double nis_sum = 0;
  int failures = 0;
  const auto start = std::chrono::steady_clock::now();
  for (std::size_t k = 0; k < steps; ++k) {
    if (k > 0) {
      if (keel::predict(est, f, q) != keel::Status::ok) ++failures;
      predicted[k - 1] = est;
    }
    const auto inn = keel::correct(est, h, r, fixes[k]);
    if (!inn.ok()) ++failures;
    nis_sum += inn.nis;
    run[k] = est;
  }
  const auto mid = std::chrono::steady_clock::now();
  const std::vector<keel::Gaussian<T, 4>> filtered = run;  // kept only to compare; smoothing runs in place
  if (keel::rts_smooth(run.data(), predicted.data(), transitions.data(), steps, run.data()) != keel::Status::ok)
    ++failures;
  const auto end = std::chrono::steady_clock::now();

  std::FILE* csv = std::fopen(csv_path, "w");
  if (!csv) {
    std::fprintf(stderr, "cannot write %s\n", csv_path);
    return 1;
  }
  std::fprintf(csv, "t,true_x,true_y,fix_x,fix_y,filt_x,filt_y,filt_sd_x,smooth_x,smooth_y,smooth_sd_x\n");
  double sq_z = 0, sq_f = 0, sq_s = 0, nees_f = 0, nees_s = 0;
  for (std::size_t k = 0; k < steps; ++k) {
    const auto& tr = truth[k];
    const auto& fe = filtered[k];
    const auto& se = run[k];
    sq_z += std::pow(fixes[k](0) - tr(0), 2) + std::pow(fixes[k](1) - tr(2), 2);
    sq_f += std::pow(fe.mean(0) - tr(0), 2) + std::pow(fe.mean(2) - tr(2), 2);
    sq_s += std::pow(se.mean(0) - tr(0), 2) + std::pow(se.mean(2) - tr(2), 2);
    nees_f += keel::nees(fe, tr);
    nees_s += keel::nees(se, tr);
    std::fprintf(csv, "%zu,%.4f,%.4f,%.4f,%.4f,%.4f,%.4f,%.4f,%.4f,%.4f,%.4f\n", k, tr(0), tr(2), fixes[k](0),
                 fixes[k](1), fe.mean(0), fe.mean(2), std::sqrt(fe.cov(0, 0)), se.mean(0), se.mean(2),
                 std::sqrt(se.cov(0, 0)));
  }
  std::fclose(csv);
  const double n = static_cast<double>(steps);
  // Innovations of the optimal filter are white, so the time-averaged NIS is χ²(2K)/K; the estimation errors
  // are correlated in time, so the NEES averages are compared with their nominal value 4 only.
  const double nis_lo = keel::chi2_quantile(2 * int(steps), 0.025) / n;
  const double nis_hi = keel::chi2_quantile(2 * int(steps), 0.975) / n;
  std::printf("lawn robot: %zu position fixes at 1 Hz (eight hours), filtered forward, RTS-smoothed in place\n", steps);
  std::printf("  position RMSE, fixes          %7.3f m\n", std::sqrt(sq_z / n));
  std::printf("  position RMSE, filtered       %7.3f m\n", std::sqrt(sq_f / n));
  std::printf("  position RMSE, smoothed       %7.3f m\n", std::sqrt(sq_s / n));
  std::printf("  mean NEES filtered / smoothed %7.3f / %.3f   (nominal 4)\n", nees_f / n, nees_s / n);
  std::printf("  mean NIS                      %7.3f   95%% interval [%.3f, %.3f]\n", nis_sum / n, nis_lo, nis_hi);
  std::printf("  forward pass                  %7.0f ns per step; smoother %.0f ns per step (this host)\n",
              1e9 * std::chrono::duration<double>(mid - start).count() / n,
              1e9 * std::chrono::duration<double>(end - mid).count() / n);
  std::printf("  kernel failures               %7d\n", failures);
  return failures == 0 ? 0 : 1;
}
