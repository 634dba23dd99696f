#pragma once
/// \file
/// \brief What the nonlinear kernels ask of a model (namespace keel::detail): its value type, its residual
/// (z ⊟ ẑ, e.g. wrapped angles) when it has one, and the conversion of extra arguments (dt, u) to the scalar
/// the model is evaluated in.

#include <type_traits>
#include <utility>

#include <Eigen/Core>

namespace keel::detail {

template <typename, typename = void>
struct is_eigen : std::false_type {};
template <typename A>
struct is_eigen<A, std::void_t<typename A::Scalar, decltype(A::RowsAtCompileTime)>> : std::true_type {};

/// An extra model argument (dt, a control vector) converted to the scalar S the model is evaluated in.
template <typename S, typename A>
auto lift(const A& a) {
  if constexpr (std::is_arithmetic_v<A>) {
    return S(a);
  } else if constexpr (is_eigen<A>::value) {
    return a.template cast<S>().eval();
  } else {
    return a;
  }
}

template <typename F, typename Z, typename = void>
struct has_residual : std::false_type {};
template <typename F, typename Z>
struct has_residual<F, Z, std::void_t<decltype(std::declval<const F&>().residual(std::declval<const Z&>(),
                                                                                std::declval<const Z&>()))>>
    : std::true_type {};

/// The model's value type at x (an Eigen column vector), as a plain matrix.
template <typename F, typename T, int N, typename... A>
using model_value_t =
    typename std::decay_t<decltype(std::declval<const F&>()(std::declval<const Eigen::Matrix<T, N, 1>&>(),
                                                            std::declval<const A&>()...))>::PlainObject;

/// z ⊟ ẑ: the model's residual when it has one, else the difference.
template <typename F, typename Z>
Z model_residual(const F& f, const Z& z, const Z& zhat) noexcept {
  if constexpr (has_residual<F, Z>::value) {
    return f.residual(z, zhat);
  } else {
    return z - zhat;
  }
}

}  // namespace keel::detail
