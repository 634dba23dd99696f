// Fuzz target: the unscented transform and the UKF / square-root UKF (sigma.hpp, ukf.hpp) with the
// coordinated-turn model and a range/bearing sensor; the sigma-point rule's parameters are fuzzed too.
#include <keel/models/planar.hpp>
#include <keel/ukf.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 5;

keel::SigmaRule rule_from(keel_fuzz::Bytes& in) {
  switch (in.choice(3)) {
    case 0: return keel::SigmaRule::cubature();
    case 1: return keel::SigmaRule::scaled(1e-3, 2.0, 0.0);
    default: return keel::SigmaRule::scaled(in.scalar<double>(), in.scalar<double>(), in.scalar<double>());
  }
}

template <typename E, typename T>
void step(keel_fuzz::Bytes& in, E& est, const keel::Gate<T>& gate, const char* where) {
  using keel_fuzz::check_outcome;
  const auto before = est;
  const keel::SigmaRule rule = rule_from(in);
  keel::models::RangeBearing<T, N> h;
  h.origin = in.matrix<T, 2, 1>();
  switch (in.choice(3)) {
    case 0: {
      const keel::models::CoordinatedTurn<T> f;
      const auto q = in.covariance<T, N>();
      const T dt = in.scalar<T>();
      check_outcome(keel::ukf::predict(est, f, q, rule, dt), before, est, where);
      break;
    }
    case 1: {
      const auto r = in.covariance<T, 2>();
      const auto z = in.matrix<T, 2, 1>();
      check_outcome(keel::ukf::correct(est, h, r, z, rule, gate), before, est, where);
      break;
    }
    default: {
      const auto t = keel::unscented_transform(h, est, rule);
      keel_fuzz::expect(keel_fuzz::same_bits(est, before), "unscented_transform changed its input", where);
      if (t.ok()) {
        keel_fuzz::expect(keel_fuzz::valid(t.gaussian) && t.cross_cov.allFinite(),
                          "ok but the transformed Gaussian is not finite and symmetric", where);
      }
      break;
    }
  }
}

template <typename T>
void run(keel_fuzz::Bytes& in) {
  const keel::Gate<T> gate = keel_fuzz::gate_from<T>(in);
  if (in.choice(2) == 0) {
    auto est = in.gaussian<T, N>();
    step(in, est, gate, "ukf on Gaussian");
  } else {
    keel::SqrtGaussian<T, N> est;
    est.mean = in.matrix<T, N, 1>();
    est.sqrt_cov = in.matrix<T, N, N>().template triangularView<Eigen::Lower>().toDenseMatrix();
    step(in, est, gate, "square-root ukf");
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
