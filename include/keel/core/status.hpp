#pragma once
/// \file
/// \brief keel::Status — the outcome of every kernel.

namespace keel {

/// \brief Outcome of a kernel call. On any value other than `ok` the estimate is left bit-for-bit unchanged.
enum class [[nodiscard]] Status : unsigned char {
  ok = 0,                 ///< the estimate was updated
  non_finite,             ///< an input held NaN or Inf, or the result would have (overflow)
  not_positive_definite,  ///< an innovation covariance could not be factored, or the updated covariance lost its positive diagonal
  negative_variance,      ///< a noise covariance (Q, R) or the estimate's covariance has a negative diagonal entry
  gated,                  ///< the measurement's NIS exceeded the gate; the innovation is still reported
  not_on_manifold,        ///< a manifold state's mean is not on its manifold (e.g. a quaternion far from unit norm)
  not_converged,          ///< an iteration (the sigma points' mean on a manifold) reached its cap without converging
};

/// \brief A short, stable, human-readable name for a status (for logs; no allocation).
constexpr const char* to_string(Status s) noexcept {
  switch (s) {
    case Status::ok: return "ok";
    case Status::non_finite: return "non_finite";
    case Status::not_positive_definite: return "not_positive_definite";
    case Status::negative_variance: return "negative_variance";
    case Status::gated: return "gated";
    case Status::not_on_manifold: return "not_on_manifold";
    case Status::not_converged: return "not_converged";
  }
  return "unknown";
}

}  // namespace keel
