#pragma once
/// \file
/// \brief Chi-square gating and consistency: keel::Gate, keel::chi2_quantile, keel::nees.

#include <cmath>
#include <limits>

#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/linalg.hpp"

namespace keel {

/// \brief A validation gate on the normalized innovation squared: a correction whose NIS exceeds
/// `threshold` returns Status::gated and leaves the estimate unchanged. The default gate accepts everything.
/// Pick the threshold as `chi2_quantile(m, p)` for an m-dimensional measurement and an acceptance probability p.
template <typename T>
struct Gate {
  T threshold = std::numeric_limits<T>::infinity();

  /// \brief True when a measurement with this NIS passes (NaN never passes).
  constexpr bool accepts(T nis) const noexcept { return nis <= threshold; }
};

namespace detail {

/// \brief Regularized lower incomplete gamma function P(a, x), a > 0, x >= 0.
/// Series for x < a + 1, Lentz continued fraction for Q = 1 − P otherwise
/// (Abramowitz & Stegun, Handbook of Mathematical Functions, 1964, eqs. 6.5.29 and 6.5.31).
inline double gamma_p(double a, double x) noexcept {
  if (!(x > 0.0)) return 0.0;
  const double log_prefix = a * std::log(x) - x - std::lgamma(a);
  const double tiny = 1e-300;
  const double eps = 1e-16;
  if (x < a + 1.0) {
    double term = 1.0 / a;
    double sum = term;
    for (int n = 1; n < 100000; ++n) {
      term *= x / (a + n);
      sum += term;
      if (std::fabs(term) < std::fabs(sum) * eps) break;
    }
    return sum * std::exp(log_prefix);
  }
  double b = x + 1.0 - a;
  double c = 1.0 / tiny;
  double d = 1.0 / b;
  double h = d;
  for (int n = 1; n < 100000; ++n) {
    const double an = -n * (n - a);
    b += 2.0;
    d = an * d + b;
    if (std::fabs(d) < tiny) d = tiny;
    c = b + an / c;
    if (std::fabs(c) < tiny) c = tiny;
    d = 1.0 / d;
    const double delta = d * c;
    h *= delta;
    if (std::fabs(delta - 1.0) < eps) break;
  }
  return 1.0 - std::exp(log_prefix) * h;
}

}  // namespace detail

/// \brief Quantile of the chi-square distribution: the x with \f$ P(\chi^2_{dof} \le x) = p \f$.
///
/// Init-time code, double only (it calls lgamma, exp, log). Solves \f$ P(dof/2, x/2) = p \f$ by Newton's method
/// from the Wilson–Hilferty starting point (Wilson & Hilferty, "The distribution of chi-square", 1931),
/// safeguarded by bisection on a bracket. Accurate to about 1e-10 relative for dof >= 1 and p in (0, 1).
/// \returns NaN when dof < 1 or p is not in (0, 1).
inline double chi2_quantile(int dof, double p) noexcept {
  if (dof < 1 || !(p > 0.0) || !(p < 1.0)) return std::numeric_limits<double>::quiet_NaN();
  const double k = dof;
  const double a = 0.5 * k;
  // Wilson–Hilferty: (X/k)^(1/3) is approximately normal with mean 1 - 2/(9k) and variance 2/(9k).
  // Normal quantile by bisection on erfc (init-time; exactness not needed for a starting point).
  double lo_z = -10.0, hi_z = 10.0;
  for (int i = 0; i < 80; ++i) {
    const double mid = 0.5 * (lo_z + hi_z);
    if (0.5 * std::erfc(-mid / std::sqrt(2.0)) < p) lo_z = mid; else hi_z = mid;
  }
  const double z = 0.5 * (lo_z + hi_z);
  const double v = 2.0 / (9.0 * k);
  double x = k * std::pow(std::fmax(1.0 - v + z * std::sqrt(v), 1e-3), 3.0);
  // Bracket [lo, hi] with F(lo) < p <= F(hi).
  double lo = 0.0, hi = std::fmax(2.0 * x, k + 10.0 * std::sqrt(2.0 * k) + 50.0);
  while (detail::gamma_p(a, 0.5 * hi) < p) hi *= 2.0;
  for (int it = 0; it < 200; ++it) {
    const double f = detail::gamma_p(a, 0.5 * x) - p;
    if (f < 0.0) lo = x; else hi = x;
    // chi-square density at x
    const double pdf = std::exp((a - 1.0) * std::log(x) - 0.5 * x - a * std::log(2.0) - std::lgamma(a));
    double next = x - f / pdf;
    if (!(next > lo && next < hi) || !std::isfinite(next)) next = 0.5 * (lo + hi);
    if (std::fabs(next - x) <= 1e-14 * x || hi - lo <= 1e-14 * hi) return next;
    x = next;
  }
  return x;
}

/// \brief Verdict of a consistency monitor.
enum class Consistency : unsigned char {
  insufficient_data,  ///< the window is not full yet
  consistent,         ///< the mean NIS lies inside its two-sided chi-square interval
  overconfident,      ///< mean NIS above the interval: the filter's covariance is too small (or a bias)
  underconfident,     ///< mean NIS below the interval: the filter's covariance is too large
};

/// \brief Windowed NIS consistency monitor for an M-dimensional measurement: keeps the last `Window` NIS values
/// in a fixed ring (no heap) and compares their mean with the two-sided interval of a consistent filter, for which
/// Window·mean ~ χ²(Window·M) (Bar-Shalom, Li & Kirubarajan, "Estimation with Applications to Tracking and
/// Navigation", 2001, sec. 5.4; from memory). The bounds are computed once, at construction (init-time code).
/// mean() sums the ring each time (O(Window)): no running sum, so nothing drifts or cancels over long runs
/// (a running sum fed 1e30 then small values went negative under the fuzzer).
template <typename T, int M, int Window>
class NisMonitor {
  static_assert(M > 0 && Window > 0, "keel::NisMonitor: M and Window must be positive");

 public:
  /// \param confidence two-sided probability of the interval, e.g. 0.95.
  explicit NisMonitor(double confidence = 0.95) noexcept
      : lower_(static_cast<T>(chi2_quantile(Window * M, 0.5 * (1.0 - confidence)) / Window)),
        upper_(static_cast<T>(chi2_quantile(Window * M, 0.5 * (1.0 + confidence)) / Window)) {}

  /// \brief Records one NIS value. \returns false (and records nothing) when it is negative or not finite.
  bool add(T nis) noexcept {
    if (!detail::is_finite(nis) || nis < T(0)) return false;
    ring_[next_] = nis;
    next_ = (next_ + 1) % Window;
    if (count_ < Window) ++count_;
    return true;
  }

  /// \brief Records the NIS of an accepted correction (status ok); gated and failed ones are not recorded,
  /// so rejected outliers do not mask an inconsistent filter. \returns whether it was recorded.
  bool add(const Innovation<T, M>& inn) noexcept { return inn.status == Status::ok && add(inn.nis); }

  int count() const noexcept { return count_; }
  /// \brief Mean NIS over the values held (0 when empty).
  T mean() const noexcept {
    if (count_ == 0) return T(0);
    T sum = T(0);
    for (int i = 0; i < count_; ++i) sum += ring_[i];
    return sum / static_cast<T>(count_);
  }
  T lower() const noexcept { return lower_; }
  T upper() const noexcept { return upper_; }

  Consistency verdict() const noexcept {
    if (count_ < Window) return Consistency::insufficient_data;
    const T m = mean();
    if (m > upper_) return Consistency::overconfident;
    if (m < lower_) return Consistency::underconfident;
    return Consistency::consistent;
  }

 private:
  T ring_[Window] = {};
  T lower_;
  T upper_;
  int next_ = 0;
  int count_ = 0;
};

namespace detail {
/// The end of every NEES: a NaN met on the way from finite inputs is an overflow (inf − inf), reported as +inf.
template <typename T>
T nees_value(T v) noexcept {
  return v == v ? v : std::numeric_limits<T>::infinity();
}
}  // namespace detail

/// \brief Normalized estimation error squared \f$ (x - \hat x)^T P^{-1} (x - \hat x) \f$ of an estimate
/// against the true state (for simulation studies). Returns NaN when an input holds NaN or Inf, +infinity when P
/// is not positive-definite or the value overflows.
template <typename T, int N, typename Derived>
T nees(const Gaussian<T, N>& est, const Eigen::MatrixBase<Derived>& truth) noexcept {
  static_assert(detail::rows_v<Derived> == N && detail::cols_v<Derived> == 1,
                "keel::nees: truth must be an N-vector, N the state dimension");
  const Eigen::Matrix<T, N, 1> t = truth;
  if (!detail::all_finite(t) || !detail::all_finite(est.mean) || !detail::all_finite(est.cov))
    return std::numeric_limits<T>::quiet_NaN();
  Eigen::Matrix<T, N, N> l = est.cov;
  if (!detail::cholesky_in_place(l)) return std::numeric_limits<T>::infinity();
  Eigen::Matrix<T, N, 1> e = t - est.mean;
  detail::forward_substitute(l, e);
  return detail::nees_value(e.squaredNorm());
}

}  // namespace keel
