#pragma once
/// \file
/// \brief keel::Gaussian — an estimate held as mean and covariance.

#include <Eigen/Core>

namespace keel {

/// \brief A Gaussian estimate: `mean` (N-vector) and `cov` (N×N, symmetric positive semi-definite).
/// \tparam T scalar (`float` or `double`)
/// \tparam N state dimension, fixed at compile time
template <typename T, int N>
struct Gaussian {
  static_assert(N > 0, "keel::Gaussian: the state dimension N must be a positive compile-time constant");
  static constexpr int dim = N;
  using Scalar = T;
  using Vector = Eigen::Matrix<T, N, 1>;
  using Matrix = Eigen::Matrix<T, N, N>;

  Vector mean = Vector::Zero();
  Matrix cov = Matrix::Identity();
};

/// \brief Selects the Joseph-form covariance update (the default): valid for any gain, keeps P symmetric PSD.
struct joseph_form_t {
  explicit constexpr joseph_form_t() = default;
};
/// \brief Selects the standard (short) form \f$ P^+ = (I-KH)P \f$: cheaper, valid only at the optimal gain.
struct standard_form_t {
  explicit constexpr standard_form_t() = default;
};
inline constexpr joseph_form_t joseph_form{};
inline constexpr standard_form_t standard_form{};

}  // namespace keel
