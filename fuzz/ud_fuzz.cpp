// Fuzz target: the UD-factorized filter kernels and conversions (ud.hpp), 3 states, 2 measurements. U and d
// are read from the input as they stand: any strictly lower part, any diagonal of U, any signs of d.
#include <keel/ud.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 3;
constexpr int M = 2;

template <typename T>
void run(keel_fuzz::Bytes& in) {
  using keel_fuzz::check_outcome;
  keel::UdGaussian<T, N> est;
  est.mean = in.matrix<T, N, 1>();
  est.u = in.matrix<T, N, N>();
  if (in.choice(4) != 0) {
    est.u = est.u.template triangularView<Eigen::StrictlyUpper>().toDenseMatrix();
    est.u.diagonal().setOnes();
  }
  est.d = in.matrix<T, N, 1>();
  if (in.choice(2) != 0) est.d = est.d.cwiseAbs();
  const auto before = est;
  const keel::Gate<T> gate = keel_fuzz::gate_from<T>(in);
  const int which = in.choice(5);
  if (which < 3) {
    keel_fuzz::common_update<N, M>(in, est, gate, static_cast<keel_fuzz::Update>(which), "ud");
    return;
  }
  switch (which) {
    case 3: {
      keel::Gaussian<T, N> g = in.gaussian<T, N>();
      const auto g_old = g;
      check_outcome(keel::to_gaussian(est, g), g_old, g, "to_gaussian(UdGaussian)");
      keel::SqrtGaussian<T, N> s;
      s.sqrt_cov = in.matrix<T, N, N>();
      const auto s_old = s;
      check_outcome(keel::to_sqrt(est, s), s_old, s, "to_sqrt(UdGaussian)");
      keel_fuzz::expect(keel_fuzz::same_bits(est, before), "a conversion changed its input", "ud");
      break;
    }
    default: {
      if (in.choice(2) == 0) {
        const auto g = in.gaussian<T, N>();
        check_outcome(keel::to_ud(g, est), before, est, "to_ud(Gaussian)");
      } else {
        keel::SqrtGaussian<T, N> s;
        s.mean = in.matrix<T, N, 1>();
        s.sqrt_cov = in.matrix<T, N, N>();
        check_outcome(keel::to_ud(s, est), before, est, "to_ud(SqrtGaussian)");
      }
      const T v = keel::nees(est, in.matrix<T, N, 1>());
      keel_fuzz::expect(!(v < T(0)), "negative NEES", "ud nees");
      break;
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
