#pragma once
/// \file
/// \brief Rauch–Tung–Striebel fixed-interval smoother over caller-owned arrays (no heap): keel::rts_smooth.

#include <cstddef>

#include <Eigen/Core>

#include "core/gaussian.hpp"
#include "core/linalg.hpp"
#include "core/status.hpp"

namespace keel {

/// \brief Fixed-interval smoothing of a filtered run (Rauch, Tung & Striebel, "Maximum likelihood estimates of
/// linear dynamic systems", AIAA Journal, 1965). With \f$ x_{k|k}, P_{k|k} \f$ = `filtered[k]`,
/// \f$ x_{k+1|k}, P_{k+1|k} \f$ = `predicted[k]` and \f$ F_k \f$ = `f[k]` (the transition, or the EKF's Jacobian,
/// used to form `predicted[k]` from `filtered[k]`), backwards from \f$ x_{n-1|n-1} \f$:
/// \f$ C_k = P_{k|k} F_k^T P_{k+1|k}^{-1} \f$ (by a Cholesky factor of \f$ P_{k+1|k} \f$, never an inverse),
/// \f$ x_{k|n} = x_{k|k} + C_k (x_{k+1|n} - x_{k+1|k}) \f$,
/// \f$ P_{k|n} = P_{k|k} + C_k (P_{k+1|n} - P_{k+1|k}) C_k^T \f$ (symmetrized).
/// `filtered` and `smoothed` hold `count` estimates, `predicted` and `f` hold count − 1; `smoothed` may be the
/// same array as `filtered` (smoothing in place over a long log).
/// All inputs are validated (finite, every \f$ P_{k+1|k} \f$ positive-definite) before anything is written, so
/// on non_finite or not_positive_definite from that check `smoothed` is untouched; only an overflow during
/// the backward pass itself (non_finite) can leave `smoothed[k+1..]` written and `smoothed[..k]` untouched.
/// \returns ok, non_finite, or not_positive_definite (some predicted covariance is not positive-definite).
template <typename T, int N>
[[nodiscard]] Status rts_smooth(const Gaussian<T, N>* filtered, const Gaussian<T, N>* predicted,
                                const Eigen::Matrix<T, N, N>* f, std::size_t count,
                                Gaussian<T, N>* smoothed) noexcept {
  if (count == 0) return Status::ok;
  for (std::size_t k = 0; k < count; ++k) {
    if (!detail::all_finite(filtered[k].mean) || !detail::all_finite(filtered[k].cov)) return Status::non_finite;
    if (k + 1 == count) break;
    if (!detail::all_finite(predicted[k].mean) || !detail::all_finite(predicted[k].cov) || !detail::all_finite(f[k]))
      return Status::non_finite;
    Eigen::Matrix<T, N, N> l = predicted[k].cov;
    if (!detail::cholesky_in_place(l)) return Status::not_positive_definite;
  }
  smoothed[count - 1] = filtered[count - 1];
  for (std::size_t k = count - 1; k-- > 0;) {
    const Gaussian<T, N>& filt = filtered[k];
    const Gaussian<T, N>& pred = predicted[k];
    Eigen::Matrix<T, N, N> l = pred.cov;
    if (!detail::cholesky_in_place(l)) return Status::not_positive_definite;
    Eigen::Matrix<T, N, N> pft;
    pft.noalias() = filt.cov.lazyProduct(f[k].transpose());
    Eigen::Matrix<T, N, N> c;
    detail::right_solve_spd(l, pft, c);
    Eigen::Matrix<T, N, 1> x = filt.mean;
    x.noalias() += c * (smoothed[k + 1].mean - pred.mean);
    const Eigen::Matrix<T, N, N> dp = smoothed[k + 1].cov - pred.cov;
    Eigen::Matrix<T, N, N> cdp;
    cdp.noalias() = c.lazyProduct(dp);
    Eigen::Matrix<T, N, N> p = filt.cov;
    p.noalias() += cdp.lazyProduct(c.transpose());
    detail::symmetrize(p);
    if (!detail::all_finite(x) || !detail::all_finite(p)) return Status::non_finite;
    smoothed[k].mean = x;
    smoothed[k].cov = p;
  }
  return Status::ok;
}

}  // namespace keel
