// Fuzz target: the linear Kalman filter kernels (linear.hpp) on a 3-state, 2-measurement problem.
#include <keel/linear.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 3;
constexpr int M = 2;

template <typename T>
void run(keel_fuzz::Bytes& in) {
  using keel_fuzz::check_outcome;
  using keel_fuzz::Update;
  auto est = in.gaussian<T, N>();
  const auto before = est;
  const keel::Gate<T> gate = keel_fuzz::gate_from<T>(in);
  const char* const where = "linear";
  const int which = in.choice(6);
  switch (which) {
    case 0: keel_fuzz::common_update<N, M>(in, est, gate, Update::predict, where); break;
    case 1: {
      const auto f = in.matrix<T, N, N>();
      const auto b = in.matrix<T, N, 1>();
      const auto u = in.matrix<T, 1, 1>();
      const auto q = in.covariance<T, N>();
      check_outcome(keel::predict(est, f, b, u, q), before, est, "predict with control");
      break;
    }
    case 2: keel_fuzz::common_update<N, M>(in, est, gate, Update::correct, where); break;
    case 5: keel_fuzz::common_update<N, M>(in, est, gate, Update::sequential, where); break;
    default: {  // 3: standard form, 4: a given gain
      const bool with_gain = which == 4;
      const auto h = in.matrix<T, M, N>();
      const auto r = in.covariance<T, M>();
      const auto z = in.matrix<T, M, 1>();
      if (with_gain) {
        const auto k = in.matrix<T, N, M>();
        check_outcome(keel::correct_with_gain(est, h, r, z, k, gate), before, est, "correct_with_gain");
      } else {
        check_outcome(keel::correct(est, h, r, z, keel::standard_form, gate), before, est, "correct (standard)");
      }
      break;
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
