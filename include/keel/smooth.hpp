#pragma once
/// \file
/// \brief Rauch–Tung–Striebel fixed-interval smoother over caller-owned arrays (no heap): keel::rts_smooth.

#include <cstddef>

#include <Eigen/Core>

#include "core/gaussian.hpp"
#include "core/linalg.hpp"
#include "core/status.hpp"

namespace keel {

namespace detail {

/// One backward step: the smoothed estimate at k from filtered[k], predicted[k], F_k and the smoothed k+1.
/// Writes `out` only on ok (it may alias `filt`).
template <typename T, int N>
Status rts_step(const Gaussian<T, N>& filt, const Gaussian<T, N>& pred, const Eigen::Matrix<T, N, N>& f,
                const Gaussian<T, N>& next, Gaussian<T, N>& out) noexcept {
  Eigen::Matrix<T, N, N> l = pred.cov;
  if (!cholesky_in_place(l)) return Status::not_positive_definite;
  Eigen::Matrix<T, N, N> pft;
  pft.noalias() = filt.cov.lazyProduct(f.transpose());
  Eigen::Matrix<T, N, N> c;
  right_solve_spd(l, pft, c);
  Eigen::Matrix<T, N, 1> x = filt.mean;
  x.noalias() += c * (next.mean - pred.mean);
  const Eigen::Matrix<T, N, N> dp = next.cov - pred.cov;
  Eigen::Matrix<T, N, N> cdp;
  cdp.noalias() = c.lazyProduct(dp);
  Eigen::Matrix<T, N, N> p = filt.cov;
  p.noalias() += cdp.lazyProduct(c.transpose());
  symmetrize(p);
  if (!all_finite(x) || !all_finite(p)) return Status::non_finite;
  if (!diagonal_nonnegative(p)) return Status::not_positive_definite;
  out.mean = x;
  out.cov = p;
  return Status::ok;
}

}  // namespace detail

/// \brief Fixed-interval smoothing of a filtered run (Rauch, Tung & Striebel, "Maximum likelihood estimates of
/// linear dynamic systems", AIAA Journal, 1965). With \f$ x_{k|k}, P_{k|k} \f$ = `filtered[k]`,
/// \f$ x_{k+1|k}, P_{k+1|k} \f$ = `predicted[k]` and \f$ F_k \f$ = `f[k]` (the transition, or the EKF's Jacobian,
/// used to form `predicted[k]` from `filtered[k]`), backwards from \f$ x_{n-1|n-1} \f$:
/// \f$ C_k = P_{k|k} F_k^T P_{k+1|k}^{-1} \f$ (by a Cholesky factor of \f$ P_{k+1|k} \f$, never an inverse),
/// \f$ x_{k|n} = x_{k|k} + C_k (x_{k+1|n} - x_{k+1|k}) \f$,
/// \f$ P_{k|n} = P_{k|k} + C_k (P_{k+1|n} - P_{k+1|k}) C_k^T \f$ (symmetrized).
/// `filtered` and `smoothed` hold `count` estimates, `predicted` and `f` hold count − 1; `smoothed` may be the
/// same array as `filtered` (smoothing in place over a long log).
/// Nothing is written unless the whole pass succeeds: the inputs are checked, the backward pass is run once
/// into a local estimate, and only then run again writing `smoothed` (twice the arithmetic of a single pass,
/// the price of leaving a long log untouched when an overflow or an indefinite covariance shows up midway).
/// \returns ok, non_finite (an input or an intermediate result is not finite), negative_variance (a filtered
/// covariance has a negative diagonal entry) or not_positive_definite (a predicted covariance is not
/// positive-definite, or a smoothed covariance would have a negative diagonal entry); `smoothed` is
/// untouched unless ok.
template <typename T, int N>
[[nodiscard]] Status rts_smooth(const Gaussian<T, N>* filtered, const Gaussian<T, N>* predicted,
                                const Eigen::Matrix<T, N, N>* f, std::size_t count,
                                Gaussian<T, N>* smoothed) noexcept {
  if (count == 0) return Status::ok;
  for (std::size_t k = 0; k < count; ++k) {
    if (!detail::all_finite(filtered[k].mean) || !detail::all_finite(filtered[k].cov)) return Status::non_finite;
    if (!detail::diagonal_nonnegative(filtered[k].cov)) return Status::negative_variance;
    if (k + 1 == count) break;
    if (!detail::all_finite(predicted[k].mean) || !detail::all_finite(predicted[k].cov) || !detail::all_finite(f[k]))
      return Status::non_finite;
  }
  // Dry run: the whole backward pass through one local estimate, so that a failure anywhere (an indefinite
  // predicted covariance, an overflow, a lost diagonal) leaves `smoothed` untouched. Then the same pass again,
  // writing: the same arithmetic on the same values, so it does not fail; its status is still checked, in case
  // a compiler contracts the two call sites differently.
  Gaussian<T, N> next = filtered[count - 1];
  detail::symmetrize(next.cov);  // as every smoothed covariance (the input may be slightly off)
  const Gaussian<T, N> last = next;
  for (std::size_t k = count - 1; k-- > 0;) {
    const Status s = detail::rts_step(filtered[k], predicted[k], f[k], next, next);
    if (s != Status::ok) return s;
  }
  smoothed[count - 1] = last;
  for (std::size_t k = count - 1; k-- > 0;) {
    const Status s = detail::rts_step(filtered[k], predicted[k], f[k], smoothed[k + 1], smoothed[k]);
    if (s != Status::ok) return s;
  }
  return Status::ok;
}

}  // namespace keel
