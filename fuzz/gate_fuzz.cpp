// Fuzz target: gating and consistency (gate.hpp): chi2_quantile over any dof and p, the NIS monitor fed any
// values, NEES of any estimate.
#include <cmath>

#include <keel/gate.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 3;

template <typename T>
void run(keel_fuzz::Bytes& in) {
  using keel_fuzz::expect;
  switch (in.choice(3)) {
    case 0: {
      const int dof = static_cast<std::int16_t>(static_cast<std::uint16_t>(in.byte()) << 8 | in.byte());
      const double p = in.scalar<double>();
      const double x = keel::chi2_quantile(dof, p);
      const bool valid_input = dof >= 1 && p > 0.0 && p < 1.0;
      expect(valid_input == !std::isnan(x), "chi2_quantile: NaN exactly when dof < 1 or p outside (0, 1)", "gate");
      if (valid_input) expect(x >= 0.0 && std::isfinite(x), "chi2_quantile: not a finite non-negative number", "gate");
      const keel::Gate<T> gate{static_cast<T>(x)};
      expect(!gate.accepts(std::numeric_limits<T>::quiet_NaN()), "a gate accepted NaN", "gate");
      break;
    }
    case 1: {
      keel::NisMonitor<T, 2, 4> monitor(in.scalar<double>());
      const int values = in.choice(16);
      for (int i = 0; i < values; ++i) {
        const T v = in.scalar<T>();
        const bool recorded = monitor.add(v);
        expect(recorded == (std::isfinite(v) && v >= T(0)), "NisMonitor::add: recorded a bad value", "gate");
      }
      expect(!std::isnan(monitor.mean()) && monitor.mean() >= T(0), "NisMonitor: mean is NaN or negative", "gate");
      expect(monitor.count() >= 0 && monitor.count() <= 4, "NisMonitor: count out of range", "gate");
      (void)monitor.verdict();
      break;
    }
    default: {
      const auto est = in.gaussian<T, N>();
      const auto truth = in.matrix<T, N, 1>();
      const T v = keel::nees(est, truth);
      expect(!(v < T(0)), "nees: negative", "gate");
      const bool finite_input = est.mean.allFinite() && est.cov.allFinite() && truth.allFinite();
      if (finite_input) expect(!std::isnan(v), "nees: NaN from finite input", "gate");
      break;
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
