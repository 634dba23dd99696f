#pragma once
/// \file
/// \brief Ready-made attitude models on the state (attitude q, gyro bias b) — keel::models::AttitudeBias:
/// strapdown gyro integration (motion) and the direction of a known reference vector seen in the body frame
/// (accelerometer: gravity; magnetometer: the local magnetic field). Call operators are templates over the scalar
/// (automatic differentiation runs through them); analytic tangent Jacobians are supplied. Frames: q rotates
/// body-frame vectors into the reference frame (keel::So3, Hamilton convention).

#include <tuple>

#include <Eigen/Core>
#include <Eigen/Geometry>

#include "../manifold.hpp"

namespace keel::models {

/// \brief Attitude and gyro bias: So3 × R³, tangent (δθ body-frame rotation vector, δb), 6 degrees of freedom.
template <typename T>
using AttitudeBias = Compound<So3<T>, Euclidean<T, 3>>;

/// \brief Strapdown attitude with a slowly varying gyro bias: \f$ q^+ = q \otimes \mathrm{Exp}((\omega - b)\,dt),
/// b^+ = b \f$ for a gyro reading ω held over dt (zeroth-order hold). Tangent Jacobian, with
/// \f$ \Delta = (\omega - b)\,dt \f$: \f$ \delta\theta^+ = \mathrm{Exp}(\Delta)^T \delta\theta - J_r(\Delta)\,dt\,
/// \delta b,\ \delta b^+ = \delta b \f$ (from \f$ q\,\mathrm{Exp}(\delta\theta)\,\mathrm{Exp}(\Delta - \delta b\,dt)
/// \approx q\,\mathrm{Exp}(\Delta)\,\mathrm{Exp}(\mathrm{Exp}(\Delta)^T\delta\theta)\,\mathrm{Exp}(-J_r(\Delta)
/// \delta b\,dt) \f$; Solà, "Quaternion kinematics for the error-state Kalman filter", 2017, sec. 5.3.3 and
/// eq. 183).
struct GyroStrapdown {
  template <typename S>
  using Vector3 = Eigen::Matrix<S, 3, 1>;
  template <typename S>
  using Mean = std::tuple<Eigen::Quaternion<S>, Vector3<S>>;  // AttitudeBias<S>::Mean, spelled out for deduction

  template <typename S>
  Mean<S> operator()(const Mean<S>& x, const Vector3<S>& omega, const S& dt) const noexcept {
    const Vector3<S>& b = std::get<1>(x);
    return Mean<S>(So3<S>::boxplus(std::get<0>(x), Vector3<S>((omega - b) * dt)), b);
  }
  template <typename S>
  Eigen::Matrix<S, 6, 6> jacobian(const Mean<S>& x, const Vector3<S>& omega, const S& dt) const noexcept {
    const Vector3<S> delta = (omega - std::get<1>(x)) * dt;
    const Eigen::Quaternion<S> step = So3<S>::exp(delta);
    Eigen::Matrix<S, 6, 6> f = Eigen::Matrix<S, 6, 6>::Identity();
    for (int j = 0; j < 3; ++j)  // Exp(Δ)ᵀ column by column: R(step)ᵀ e_j
      f.template block<3, 1>(0, j) = So3<S>::unrotate(step, Vector3<S>::Unit(j));
    f.template block<3, 3>(0, 3) = -So3<S>::right_jacobian(delta) * dt;
    return f;
  }
};

/// \brief A known reference-frame vector v seen in the body frame: \f$ h(q, b) = R(q)^T v \f$ — an accelerometer
/// at rest (v = the specific force of gravity, pointing up) or a magnetometer (v = the local field). Tangent
/// Jacobian \f$ H = [\,[R(q)^T v]_\times,\ 0\,] \f$, from \f$ (q\,\mathrm{Exp}(\delta\theta))^{-1} v \approx
/// (I - [\delta\theta]_\times) R^T v \f$ (Solà 2017, sec. 4.3; derivation here).
template <typename T>
struct ReferenceDirection {
  Eigen::Matrix<T, 3, 1> reference;

  template <typename S>
  Eigen::Matrix<S, 3, 1> operator()(const std::tuple<Eigen::Quaternion<S>, Eigen::Matrix<S, 3, 1>>& x) const noexcept {
    return So3<S>::unrotate(std::get<0>(x), reference.template cast<S>());
  }
  Eigen::Matrix<T, 3, 6> jacobian(const typename AttitudeBias<T>::Mean& x) const noexcept {
    Eigen::Matrix<T, 3, 6> h = Eigen::Matrix<T, 3, 6>::Zero();
    h.template leftCols<3>() = detail::skew(So3<T>::unrotate(std::get<0>(x), reference));
    return h;
  }
};

}  // namespace keel::models
