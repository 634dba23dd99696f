// Fuzz target: the extended Kalman filter (ekf.hpp) on Gaussian and SqrtGaussian with the coordinated-turn
// motion model (analytic Jacobian) and a range/bearing sensor at an arbitrary origin.
#include <keel/ekf.hpp>
#include <keel/models/planar.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 5;

template <typename E, typename T>
void step(keel_fuzz::Bytes& in, E& est, const keel::Gate<T>& gate, const char* where) {
  using keel_fuzz::check_outcome;
  const auto before = est;
  if (in.choice(2) == 0) {
    const keel::models::CoordinatedTurn<T> f;
    const auto q = in.covariance<T, N>();
    const T dt = in.scalar<T>();
    check_outcome(keel::ekf::predict(est, f, q, dt), before, est, where);
  } else {
    keel::models::RangeBearing<T, N> h;
    h.origin = in.matrix<T, 2, 1>();
    const auto r = in.covariance<T, 2>();
    const auto z = in.matrix<T, 2, 1>();
    check_outcome(keel::ekf::correct(est, h, r, z, gate), before, est, where);
  }
}

template <typename T>
void run(keel_fuzz::Bytes& in) {
  const keel::Gate<T> gate = keel_fuzz::gate_from<T>(in);
  switch (in.choice(3)) {
    case 0: {
      auto est = in.gaussian<T, N>();
      step(in, est, gate, "ekf on Gaussian");
      break;
    }
    case 1: {
      keel::SqrtGaussian<T, N> est;
      est.mean = in.matrix<T, N, 1>();
      est.sqrt_cov = in.matrix<T, N, N>().template triangularView<Eigen::Lower>().toDenseMatrix();
      step(in, est, gate, "ekf on SqrtGaussian");
      break;
    }
    default: {
      auto est = in.gaussian<T, N>();
      const auto before = est;
      keel::models::RangeBearing<T, N> h;
      h.origin = in.matrix<T, 2, 1>();
      const auto r = in.covariance<T, 2>();
      const auto z = in.matrix<T, 2, 1>();
      const keel::ekf::Iterations control{in.choice(8) - 1, in.scalar<double>()};
      keel_fuzz::check_outcome(keel::ekf::correct_iterated(est, h, r, z, control, gate), before, est,
                               "ekf correct_iterated");
      break;
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
