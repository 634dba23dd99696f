// Fuzz target: the square-root (Cholesky factor) filter kernels and conversions (sqrt.hpp), 3 states, 2
// measurements. The factor is read from the input as it stands: lower-triangular or not, any diagonal signs.
#include <keel/sqrt.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 3;
constexpr int M = 2;

template <typename T>
void run(keel_fuzz::Bytes& in) {
  using keel_fuzz::check_outcome;
  keel::SqrtGaussian<T, N> est;
  est.mean = in.matrix<T, N, 1>();
  est.sqrt_cov = in.matrix<T, N, N>();
  if (in.choice(4) != 0) est.sqrt_cov = est.sqrt_cov.template triangularView<Eigen::Lower>().toDenseMatrix();
  const auto before = est;
  const keel::Gate<T> gate = keel_fuzz::gate_from<T>(in);
  const int which = in.choice(5);
  if (which < 3) {
    keel_fuzz::common_update<N, M>(in, est, gate, static_cast<keel_fuzz::Update>(which), "sqrt");
    return;
  }
  switch (which) {
    case 3: {
      keel::Gaussian<T, N> out = in.gaussian<T, N>();
      const auto old = out;
      check_outcome(keel::to_gaussian(est, out), old, out, "to_gaussian(SqrtGaussian)");
      keel_fuzz::expect(keel_fuzz::same_bits(est, before), "to_gaussian changed its input", "sqrt");
      break;
    }
    default: {
      const auto g = in.gaussian<T, N>();
      const auto g_before = g;
      check_outcome(keel::to_sqrt(g, est), before, est, "to_sqrt(Gaussian)");
      keel_fuzz::expect(keel_fuzz::same_bits(g, g_before), "to_sqrt changed its input", "sqrt");
      const T v = keel::nees(est, in.matrix<T, N, 1>());
      keel_fuzz::expect(!(v < T(0)), "negative NEES", "sqrt nees");
      break;
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
