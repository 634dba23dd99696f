// Fuzz target: the matrix exponential and Van Loan discretization (discretize.hpp), 3 states.
#include <keel/discretize.hpp>

#include "fuzz.hpp"

namespace {
constexpr int N = 3;

template <typename T>
void run(keel_fuzz::Bytes& in) {
  using keel_fuzz::expect;
  if (in.choice(2) == 0) {
    const auto a = in.matrix<T, N, N>();
    Eigen::Matrix<T, N, N> out = in.matrix<T, N, N>();
    const auto old = out;
    if (keel::expm(a, out) == keel::Status::ok) {
      expect(out.allFinite(), "expm: ok but not finite", "expm");
    } else {
      expect(keel_fuzz::same_bits(out, old), "expm: failed but wrote its output", "expm");
    }
  } else {
    const auto a = in.matrix<T, N, N>();
    const auto qc = in.covariance<T, N>();
    const T dt = in.scalar<T>();
    const auto d = keel::discretize(a, qc, dt);
    if (d.ok()) {
      expect(d.F.allFinite() && d.Q.allFinite() && d.Q == d.Q.transpose(),
             "discretize: ok but F or Q not finite, or Q not symmetric", "discretize");
    }
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return keel_fuzz::entry(data, size, [](auto zero, keel_fuzz::Bytes& in) { run<decltype(zero)>(in); });
}
