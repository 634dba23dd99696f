// Fuzz target: the RTS smoother (smooth.hpp) over runs of 0–4 steps, into a separate array or in place.
#include <keel/smooth.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 3;
constexpr int K = 4;

template <typename T>
void run(keel_fuzz::Bytes& in) {
  keel::Gaussian<T, N> filtered[K];
  keel::Gaussian<T, N> predicted[K];
  Eigen::Matrix<T, N, N> f[K];
  keel::Gaussian<T, N> out[K];
  const auto count = static_cast<std::size_t>(in.choice(K + 1));
  for (int k = 0; k < K; ++k) {
    filtered[k] = in.gaussian<T, N>();
    predicted[k] = in.gaussian<T, N>();
    f[k] = in.matrix<T, N, N>();
    out[k] = in.gaussian<T, N>();
  }
  const bool in_place = in.choice(2) == 0;
  keel::Gaussian<T, N>* target = in_place ? filtered : out;
  keel::Gaussian<T, N> before[K];
  for (int k = 0; k < K; ++k) before[k] = target[k];
  const keel::Status s = keel::rts_smooth(filtered, predicted, f, count, target);
  for (std::size_t k = 0; k < K; ++k) {
    if (s == keel::Status::ok && k < count) {
      keel_fuzz::expect(keel_fuzz::valid(target[k]), "ok but a smoothed estimate is not valid", "rts_smooth");
    } else {
      keel_fuzz::expect(keel_fuzz::same_bits(target[k], before[k]),
                        "an estimate changed that should not have (non-ok, or beyond count)", "rts_smooth");
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
