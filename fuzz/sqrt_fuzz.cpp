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
  const keel::Gate<T> gate = in.choice(2) != 0 ? keel::Gate<T>{in.scalar<T>()} : keel::Gate<T>{};
  switch (in.choice(5)) {
    case 0: {
      const auto f = in.matrix<T, N, N>();
      const auto q = in.covariance<T, N>();
      check_outcome(keel::predict(est, f, q), before, est, "sqrt predict");
      break;
    }
    case 1: {
      const auto h = in.matrix<T, M, N>();
      const auto r = in.covariance<T, M>();
      const auto z = in.matrix<T, M, 1>();
      check_outcome(keel::correct(est, h, r, z, gate), before, est, "sqrt correct");
      break;
    }
    case 2: {
      const auto h = in.matrix<T, M, N>();
      const auto r_diag = in.matrix<T, M, 1>();
      const auto z = in.matrix<T, M, 1>();
      check_outcome(keel::correct_sequential(est, h, r_diag, z, gate), before, est, "sqrt correct_sequential");
      break;
    }
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
  keel_fuzz::Bytes in(data, size);
  if (in.choice(2) == 0) run<float>(in); else run<double>(in);
  return 0;
}
