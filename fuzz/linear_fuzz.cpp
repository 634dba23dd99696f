// Fuzz target: the linear Kalman filter kernels (linear.hpp) on a 3-state, 2-measurement problem.
#include <keel/linear.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 3;
constexpr int M = 2;

template <typename T>
void run(keel_fuzz::Bytes& in) {
  using keel_fuzz::check_outcome;
  auto est = in.gaussian<T, N>();
  const auto before = est;
  const keel::Gate<T> gate = in.choice(2) != 0 ? keel::Gate<T>{in.scalar<T>()} : keel::Gate<T>{};
  switch (in.choice(6)) {
    case 0: {
      const auto f = in.matrix<T, N, N>();
      const auto q = in.covariance<T, N>();
      check_outcome(keel::predict(est, f, q), before, est, "predict");
      break;
    }
    case 1: {
      const auto f = in.matrix<T, N, N>();
      const auto b = in.matrix<T, N, 1>();
      const auto u = in.matrix<T, 1, 1>();
      const auto q = in.covariance<T, N>();
      check_outcome(keel::predict(est, f, b, u, q), before, est, "predict with control");
      break;
    }
    case 2: {
      const auto h = in.matrix<T, M, N>();
      const auto r = in.covariance<T, M>();
      const auto z = in.matrix<T, M, 1>();
      check_outcome(keel::correct(est, h, r, z, gate), before, est, "correct (Joseph)");
      break;
    }
    case 3: {
      const auto h = in.matrix<T, M, N>();
      const auto r = in.covariance<T, M>();
      const auto z = in.matrix<T, M, 1>();
      check_outcome(keel::correct(est, h, r, z, keel::standard_form, gate), before, est, "correct (standard)");
      break;
    }
    case 4: {
      const auto h = in.matrix<T, M, N>();
      const auto r = in.covariance<T, M>();
      const auto z = in.matrix<T, M, 1>();
      const auto k = in.matrix<T, N, M>();
      check_outcome(keel::correct_with_gain(est, h, r, z, k, gate), before, est, "correct_with_gain");
      break;
    }
    default: {
      const auto h = in.matrix<T, M, N>();
      const auto r_diag = in.matrix<T, M, 1>();
      const auto z = in.matrix<T, M, 1>();
      check_outcome(keel::correct_sequential(est, h, r_diag, z, gate), before, est, "correct_sequential");
      break;
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  keel_fuzz::Bytes in(data, size);
  if (in.choice(2) == 0) run<float>(in); else run<double>(in);
  return 0;
}
