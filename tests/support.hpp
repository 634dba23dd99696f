#pragma once
// Test helpers: tolerances from the scalar, matrix comparison, seeded random problems, SciPy at test time.

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <limits>
#include <random>
#include <string>

#include <Eigen/Dense>

namespace keel_test {

/// k units of roundoff of the scalar; every use states why k.
template <typename T>
constexpr T eps_times(double k) {
  return static_cast<T>(k * static_cast<double>(std::numeric_limits<T>::epsilon()));
}

/// Largest entrywise error of a against b, relative to max(|b|max, floor) so that entries near zero are
/// compared absolutely at the scale of the matrix and larger ones relatively.
template <typename A, typename B>
double rel_error(const Eigen::MatrixBase<A>& a, const Eigen::MatrixBase<B>& b) {
  const double scale = std::max(b.template cast<double>().cwiseAbs().maxCoeff(), std::numeric_limits<double>::min());
  return (a.template cast<double>() - b.template cast<double>()).cwiseAbs().maxCoeff() / scale;
}

/// Bitwise equality of a matrix's entries (the "estimate unchanged" rule is bit-for-bit, NaN payloads included).
template <typename D>
bool same_bits(const Eigen::MatrixBase<D>& a, const Eigen::MatrixBase<D>& b) {
  return std::memcmp(a.derived().data(), b.derived().data(),
                     static_cast<size_t>(a.size()) * sizeof(typename D::Scalar)) == 0;
}
/// Bitwise equality of an estimate's members (not of the struct: alignment padding is unspecified).
template <typename G>
auto same_bits(const G& a, const G& b) -> decltype(a.mean, a.cov, bool()) {
  return same_bits(a.mean, b.mean) && same_bits(a.cov, b.cov);
}
template <typename G>
auto same_bits(const G& a, const G& b) -> decltype(a.mean, a.sqrt_cov, bool()) {
  return same_bits(a.mean, b.mean) && same_bits(a.sqrt_cov, b.sqrt_cov);
}
template <typename G>
auto same_bits(const G& a, const G& b) -> decltype(a.mean, a.u, a.d, bool()) {
  return same_bits(a.mean, b.mean) && same_bits(a.u, b.u) && same_bits(a.d, b.d);
}

/// The covariance an estimate stands for, formed in double from its factors (exact products of the stored
/// values up to double rounding, so comparisons see the factor's own error, not a float re-rounding).
template <typename G>
auto cov_in_double(const G& e) -> decltype(e.cov, Eigen::Matrix<double, G::dim, G::dim>()) {
  return e.cov.template cast<double>();
}
template <typename G>
auto cov_in_double(const G& e) -> decltype(e.sqrt_cov, Eigen::Matrix<double, G::dim, G::dim>()) {
  const Eigen::Matrix<double, G::dim, G::dim> l = e.sqrt_cov.template cast<double>();
  return l * l.transpose();
}
template <typename G>
auto cov_in_double(const G& e) -> decltype(e.u, e.d, Eigen::Matrix<double, G::dim, G::dim>()) {
  const Eigen::Matrix<double, G::dim, G::dim> u = e.u.template cast<double>();
  return u * e.d.template cast<double>().asDiagonal() * u.transpose();
}

/// A random symmetric positive-definite matrix lo·I + (hi − lo)·A Aᵀ / N with A standard normal (seeded).
/// Its eigenvalues lie in [lo, lo + (hi − lo)·λmax(AAᵀ)/N], and λmax(AAᵀ)/N ≤ (1 + 1)² = 4 with overwhelming
/// probability (Marchenko–Pastur edge for a square Gaussian matrix), so κ ≤ 1 + 4(hi − lo)/lo for these seeds.
/// (Built without a decomposition: fixed-size QR or eigen-solvers cost seconds of compile time per size.)
template <typename T, int N>
Eigen::Matrix<T, N, N> random_spd(std::mt19937& rng, double lo = 0.5, double hi = 2.0) {
  std::normal_distribution<double> g(0.0, 1.0);
  Eigen::Matrix<double, N, N> a;
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < N; ++j) a(i, j) = g(rng);
  Eigen::Matrix<double, N, N> s = ((hi - lo) / N) * (a * a.transpose());
  s.diagonal().array() += lo;
  return (0.5 * (s + s.transpose())).template cast<T>();
}

template <typename T, int R, int C>
Eigen::Matrix<T, R, C> random_matrix(std::mt19937& rng, double sigma = 1.0) {
  std::normal_distribution<double> g(0.0, sigma);
  Eigen::Matrix<T, R, C> m;
  for (int i = 0; i < R; ++i)
    for (int j = 0; j < C; ++j) m(i, j) = static_cast<T>(g(rng));
  return m;
}

/// Runs `python3 script` (the interpreter CMake found with SciPy; KEEL_PYTHON) with `input` on its standard
/// input and returns its standard output. Returns "" and prints why when Python or SciPy is missing, so
/// that the calling check fails loudly rather than being skipped.
inline std::string run_python(const std::string& script, const std::string& input) {
#ifndef KEEL_PYTHON
#error "KEEL_PYTHON must name a Python 3 interpreter with SciPy (set by tests/CMakeLists.txt)"
#endif
  char in_path[] = "/tmp/keel_py_in_XXXXXX";
  const int fd = mkstemp(in_path);
  if (fd < 0) return {};
  FILE* f = fdopen(fd, "w");
  std::fputs(input.c_str(), f);
  std::fclose(f);
  const std::string cmd = std::string(KEEL_PYTHON) + " " + KEEL_TEST_DIR + "/" + script + " < " + in_path;
  std::string out;
  if (FILE* p = popen(cmd.c_str(), "r")) {
    char buf[4096];
    size_t n;
    while ((n = std::fread(buf, 1, sizeof buf, p)) > 0) out.append(buf, n);
    if (pclose(p) != 0) {
      std::fprintf(stderr, "reference script failed: %s (is python3-scipy installed?)\n", cmd.c_str());
      out.clear();
    }
  }
  std::remove(in_path);
  return out;
}

/// Writes a matrix as whitespace-separated rows, full precision, for the reference scripts.
template <typename D>
std::string to_text(const Eigen::MatrixBase<D>& m) {
  std::string s = std::to_string(m.rows()) + " " + std::to_string(m.cols()) + "\n";
  char buf[64];
  for (Eigen::Index i = 0; i < m.rows(); ++i) {
    for (Eigen::Index j = 0; j < m.cols(); ++j) {
      std::snprintf(buf, sizeof buf, "%.17g ", static_cast<double>(m(i, j)));
      s += buf;
    }
    s += "\n";
  }
  return s;
}

/// Reads the next R×C matrix written by the reference scripts (same format); advances `pos`.
template <int R, int C>
Eigen::Matrix<double, R, C> from_text(const std::string& text, size_t& pos) {
  Eigen::Matrix<double, R, C> m = Eigen::Matrix<double, R, C>::Constant(std::numeric_limits<double>::quiet_NaN());
  const char* p = text.c_str() + pos;
  char* end = nullptr;
  const long r = std::strtol(p, &end, 10);
  p = end;
  const long c = std::strtol(p, &end, 10);
  p = end;
  if (r != R || c != C) return m;
  for (int i = 0; i < R; ++i)
    for (int j = 0; j < C; ++j) {
      m(i, j) = std::strtod(p, &end);
      p = end;
    }
  pos = static_cast<size_t>(p - text.c_str());
  return m;
}

}  // namespace keel_test
