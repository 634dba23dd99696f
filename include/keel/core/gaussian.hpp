#pragma once
/// \file
/// \brief The estimate types: keel::Gaussian (mean and covariance), keel::SqrtGaussian (mean and a lower
/// Cholesky-type factor), keel::UdGaussian (mean and U-D factors); and the covariance-form tags.

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

/// \brief A Gaussian estimate held by a square root of its covariance: `mean` and the lower-triangular
/// `sqrt_cov` S with cov = S Sᵀ (Kaminski, Bryson & Schmidt, "Discrete square root filtering: a survey of
/// current techniques", 1971). Kernels read only the lower triangle of S and write S with a non-negative
/// diagonal and a zero upper triangle.
template <typename T, int N>
struct SqrtGaussian {
  static_assert(N > 0, "keel::SqrtGaussian: the state dimension N must be a positive compile-time constant");
  static constexpr int dim = N;
  using Scalar = T;
  using Vector = Eigen::Matrix<T, N, 1>;
  using Matrix = Eigen::Matrix<T, N, N>;

  Vector mean = Vector::Zero();
  Matrix sqrt_cov = Matrix::Identity();
};

/// \brief A Gaussian estimate held in UD form: `mean`, unit upper-triangular `u` and the diagonal `d` (an
/// N-vector) with cov = U diag(d) Uᵀ (Bierman, "Factorization Methods for Discrete Sequential Estimation", 1977).
/// Kernels read only the strictly upper triangle of `u` (its diagonal is taken as 1) and write it exactly so.
template <typename T, int N>
struct UdGaussian {
  static_assert(N > 0, "keel::UdGaussian: the state dimension N must be a positive compile-time constant");
  static constexpr int dim = N;
  using Scalar = T;
  using Vector = Eigen::Matrix<T, N, 1>;
  using Matrix = Eigen::Matrix<T, N, N>;

  Vector mean = Vector::Zero();
  Matrix u = Matrix::Identity();
  Vector d = Vector::Ones();
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
