#pragma once
/// \file
/// \brief keel::Innovation — what one correction saw.

#include <limits>

#include <Eigen/Core>

#include "status.hpp"

namespace keel {

/// \brief The innovation of one correction: residual \f$ y = z - h(x) \f$, its covariance
/// \f$ S = H P H^T + R \f$, the normalized innovation squared \f$ \mathrm{NIS} = y^T S^{-1} y \f$, and the status.
///
/// When `status` is `gated` the residual, covariance and NIS are valid (log the rejected measurement).
/// When the innovation covariance could not be factored, `nis` is +infinity. When an input was not finite,
/// the other fields are unspecified.
template <typename T, int M>
struct [[nodiscard]] Innovation {
  using Vector = Eigen::Matrix<T, M, 1>;
  using Matrix = Eigen::Matrix<T, M, M>;

  Vector residual = Vector::Zero();
  Matrix cov = Matrix::Zero();
  T nis = std::numeric_limits<T>::infinity();
  Status status = Status::non_finite;

  /// \brief True when the estimate was updated.
  constexpr bool ok() const noexcept { return status == Status::ok; }
};

}  // namespace keel
