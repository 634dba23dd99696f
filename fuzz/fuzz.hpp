#pragma once
// Shared pieces of keel's fuzz targets: a reader that turns the fuzzer's bytes into choices, scalars and
// matrices (biased towards the values that break numerical code), and the invariants every kernel keeps:
//   - non-ok Status: the estimate is bit-for-bit unchanged;
//   - ok: the result is finite, the covariance symmetric with a non-negative diagonal.
// A violated invariant prints what broke and aborts, which libFuzzer reports as a crash (and writes the input).
// To see the values an input stands for: KEEL_FUZZ_TRACE=1 build/asan-clang/fuzz/keel_fuzz_<family> <file>

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <limits>

#include <keel/core/gaussian.hpp>
#include <keel/core/innovation.hpp>
#include <keel/gate.hpp>

namespace keel_fuzz {

class Bytes {
 public:
  Bytes(const std::uint8_t* data, std::size_t size) noexcept : data_(data), size_(size) {}

  /// The next byte, 0 once the input is exhausted (so every input is a valid one).
  std::uint8_t byte() noexcept { return pos_ < size_ ? data_[pos_++] : std::uint8_t{0}; }
  int choice(int n) noexcept {
    const int c = byte() % n;
    if (trace()) std::fprintf(stderr, "choice %d of %d\n", c, n);
    return c;
  }
  static bool trace() noexcept {
    static const bool on = std::getenv("KEEL_FUZZ_TRACE") != nullptr;
    return on;
  }

  /// One scalar: about one in five is a special value (NaN, ±Inf, denormal, ±max, tiny, huge, ±0), the rest
  /// numbers in ±128 at one of three scales, so that most inputs reach past the input checks.
  template <typename T>
  T scalar() noexcept {
    using L = std::numeric_limits<T>;
    const std::uint8_t b = byte();
    if (b < 52) {
      switch (b % 13) {
        case 0: return L::quiet_NaN();
        case 1: return L::infinity();
        case 2: return -L::infinity();
        case 3: return L::denorm_min();
        case 4: return -L::denorm_min() * T(3);
        case 5: return L::max();
        case 6: return -L::max();
        case 7: return L::min();
        case 8: return T(1e-30);
        case 9: return T(1e30);
        case 10: return T(0);
        case 11: return -T(0);
        default: return L::epsilon();
      }
    }
    const auto raw = static_cast<std::int16_t>(static_cast<std::uint16_t>(byte()) << 8 | byte());
    const T unit = static_cast<T>(raw) / T(256);
    switch (b % 3) {
      case 0: return unit;
      case 1: return unit * T(1e-3);
      default: return unit * T(1e3);
    }
  }

  template <typename T, int R, int C>
  Eigen::Matrix<T, R, C> matrix() noexcept {
    Eigen::Matrix<T, R, C> m;
    for (int j = 0; j < C; ++j)
      for (int i = 0; i < R; ++i) m(i, j) = scalar<T>();
    if (trace()) {
      std::fprintf(stderr, "matrix %dx%d (column-major):", R, C);
      for (int k = 0; k < R * C; ++k) std::fprintf(stderr, " %.17g", static_cast<double>(m.data()[k]));
      std::fprintf(stderr, "\n");
    }
    return m;
  }

  /// A covariance-like matrix: most often A·Aᵀ + c·I (positive-definite unless A or c is extreme), sometimes
  /// A·Aᵀ (semi-definite), a diagonal, or arbitrary entries (non-symmetric, indefinite).
  template <typename T, int N>
  Eigen::Matrix<T, N, N> covariance() noexcept {
    using Mat = Eigen::Matrix<T, N, N>;
    switch (choice(5)) {
      case 0: return matrix<T, N, N>();
      case 1: {
        const Mat a = matrix<T, N, N>();
        return a * a.transpose();
      }
      case 2: return matrix<T, N, 1>().asDiagonal();
      default: {
        const Mat a = matrix<T, N, N>();
        return a * a.transpose() + scalar<T>() * Mat::Identity();
      }
    }
  }

  template <typename T, int N>
  keel::Gaussian<T, N> gaussian() noexcept {
    keel::Gaussian<T, N> g;
    g.mean = matrix<T, N, 1>();
    g.cov = covariance<T, N>();
    return g;
  }

 private:
  const std::uint8_t* data_;
  std::size_t size_;
  std::size_t pos_ = 0;
};

[[noreturn]] inline void fail(const char* what, const char* where) noexcept {
  std::fprintf(stderr, "keel fuzz invariant violated: %s (%s)\n", what, where);
  std::abort();
}

inline void expect(bool condition, const char* what, const char* where) noexcept {
  if (!condition) fail(what, where);
}

template <typename D>
bool same_bits(const Eigen::MatrixBase<D>& a, const Eigen::MatrixBase<D>& b) noexcept {
  return std::memcmp(a.derived().data(), b.derived().data(),
                     static_cast<std::size_t>(a.size()) * sizeof(typename D::Scalar)) == 0;
}
template <typename T, int N>
bool same_bits(const keel::Gaussian<T, N>& a, const keel::Gaussian<T, N>& b) noexcept {
  return same_bits(a.mean, b.mean) && same_bits(a.cov, b.cov);
}
template <typename T, int N>
bool same_bits(const keel::SqrtGaussian<T, N>& a, const keel::SqrtGaussian<T, N>& b) noexcept {
  return same_bits(a.mean, b.mean) && same_bits(a.sqrt_cov, b.sqrt_cov);
}
template <typename T, int N>
bool same_bits(const keel::UdGaussian<T, N>& a, const keel::UdGaussian<T, N>& b) noexcept {
  return same_bits(a.mean, b.mean) && same_bits(a.u, b.u) && same_bits(a.d, b.d);
}

/// Finite, symmetric (exactly: every kernel writes both triangles from one) with a non-negative diagonal.
template <typename T, int N>
bool valid(const keel::Gaussian<T, N>& g) noexcept {
  return g.mean.allFinite() && g.cov.allFinite() && g.cov == g.cov.transpose() &&
         (g.cov.diagonal().array() >= T(0)).all();
}
/// Finite; the covariance L·Lᵀ is symmetric with a non-negative diagonal by construction.
template <typename T, int N>
bool valid(const keel::SqrtGaussian<T, N>& g) noexcept {
  return g.mean.allFinite() && g.sqrt_cov.allFinite();
}
/// Finite with d ≥ 0; U·D·Uᵀ is symmetric by construction.
template <typename T, int N>
bool valid(const keel::UdGaussian<T, N>& g) noexcept {
  return g.mean.allFinite() && g.u.allFinite() && g.d.allFinite() && (g.d.array() >= T(0)).all();
}

/// The invariant of every kernel call on an estimate: unchanged unless ok, valid when ok.
template <typename E>
void check_outcome(keel::Status s, const E& before, const E& after, const char* where) noexcept {
  if (s == keel::Status::ok) {
    expect(valid(after), "ok but the result is not finite, symmetric, with a non-negative diagonal", where);
  } else {
    expect(same_bits(before, after), "non-ok Status but the estimate changed", where);
  }
}

/// As check_outcome, plus the innovation: on ok its residual, covariance and NIS are finite and NIS ≥ 0.
template <typename E, typename T, int M>
void check_outcome(const keel::Innovation<T, M>& inn, const E& before, const E& after, const char* where) noexcept {
  check_outcome(inn.status, before, after, where);
  if (inn.status == keel::Status::ok) {
    expect(inn.residual.allFinite() && inn.cov.allFinite() && std::isfinite(inn.nis) && inn.nis >= T(0),
           "ok but the innovation is not finite", where);
  }
}

/// A gate from the input: none (accept everything) or an arbitrary threshold.
template <typename T>
keel::Gate<T> gate_from(Bytes& in) noexcept {
  return in.choice(2) != 0 ? keel::Gate<T>{in.scalar<T>()} : keel::Gate<T>{};
}

enum class Update { predict = 0, correct = 1, sequential = 2 };

/// The three updates every representation has — predict(F, Q), correct(H, R, z, gate) and
/// correct_sequential(H, r, z, gate) — on an N-state estimate with M measurements. The kernels are found at
/// instantiation (argument-dependent lookup), so the including target decides which representation it covers.
template <int N, int M, typename E, typename T>
void common_update(Bytes& in, E& est, const keel::Gate<T>& gate, Update which, const char* where) noexcept {
  const E before = est;
  if (which == Update::predict) {
    const auto f = in.matrix<T, N, N>();
    const auto q = in.covariance<T, N>();
    check_outcome(predict(est, f, q), before, est, where);
    return;
  }
  const auto h = in.matrix<T, M, N>();
  if (which == Update::correct) {
    const auto r = in.covariance<T, M>();
    const auto z = in.matrix<T, M, 1>();
    check_outcome(correct(est, h, r, z, gate), before, est, where);
  } else {
    const auto r_diag = in.matrix<T, M, 1>();
    const auto z = in.matrix<T, M, 1>();
    check_outcome(correct_sequential(est, h, r_diag, z, gate), before, est, where);
  }
}

/// The body of LLVMFuzzerTestOneInput: the first byte chooses float or double, then `run(T{}, in)`.
template <typename Run>
int entry(const std::uint8_t* data, std::size_t size, Run run) noexcept {
  Bytes in(data, size);
  if (in.choice(2) == 0) {
    run(float{}, in);
  } else {
    run(double{}, in);
  }
  return 0;
}

}  // namespace keel_fuzz
