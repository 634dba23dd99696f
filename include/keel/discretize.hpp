#pragma once
/// \file
/// \brief Continuous-to-discrete model conversion: keel::expm (fixed-size matrix exponential) and
/// keel::discretize (Van Loan's method). Heap-free and noexcept like every kernel; meant for initialization or
/// for steps with irregular dt (one call costs a few matrix products of size 2N).

#include <cmath>
#include <type_traits>

#include <Eigen/Core>

#include "core/gaussian.hpp"
#include "core/linalg.hpp"
#include "core/status.hpp"

namespace keel {

/// \brief A discrete linear model x⁺ = F x + w, w ~ N(0, Q), and the Status of its computation.
template <typename T, int N>
struct DiscreteModel {
  Eigen::Matrix<T, N, N> F = Eigen::Matrix<T, N, N>::Identity();
  Eigen::Matrix<T, N, N> Q = Eigen::Matrix<T, N, N>::Zero();
  Status status = Status::non_finite;
  constexpr bool ok() const noexcept { return status == Status::ok; }
};

namespace detail {

/// Numerator coefficients of the [m/m] Padé approximant of eˣ: \f$ c_j = \frac{(2m-j)!\,m!}{(2m)!\,j!\,(m-j)!} \f$,
/// by the recurrence \f$ c_0 = 1,\ c_j = c_{j-1}\,(m-j+1)/(j\,(2m-j+1)) \f$ (Golub & Van Loan, 2013, sec. 9.3.1).
constexpr double pade_coefficient(int m, int j) noexcept {
  double c = 1.0;
  for (int i = 1; i <= j; ++i) c = c * double(m - i + 1) / double(i * (2 * m - i + 1));
  return c;
}

/// Solves A X = B in place of B by Gaussian elimination with partial pivoting (the Padé denominator is
/// well-conditioned for the norms the degree selection allows: Higham 2005, sec. 2). Returns false on a zero pivot.
template <typename T, int N>
bool lu_solve_in_place(Eigen::Matrix<T, N, N> a, Eigen::Matrix<T, N, N>& b) noexcept {
  for (int k = 0; k < N; ++k) {
    int p = k;
    for (int i = k + 1; i < N; ++i)
      if (std::abs(a(i, k)) > std::abs(a(p, k))) p = i;
    if (!(a(p, k) != T(0))) return false;
    if (p != k) {
      a.row(k).swap(a.row(p));
      b.row(k).swap(b.row(p));
    }
    const T inv = T(1) / a(k, k);
    for (int i = k + 1; i < N; ++i) {
      const T f = a(i, k) * inv;
      if (f == T(0)) continue;
      a.row(i).tail(N - k - 1) -= f * a.row(k).tail(N - k - 1);
      b.row(i) -= f * b.row(k);
    }
  }
  for (int k = N - 1; k >= 0; --k) {
    for (int i = k + 1; i < N; ++i) b.row(k) -= a(k, i) * b.row(i);
    b.row(k) *= T(1) / a(k, k);
  }
  return true;
}

template <typename T, int N>
Eigen::Matrix<T, N, N> product(const Eigen::Matrix<T, N, N>& a, const Eigen::Matrix<T, N, N>& b) noexcept {
  Eigen::Matrix<T, N, N> c;
  c.noalias() = a.lazyProduct(b);
  return c;
}

}  // namespace detail

/// \brief Matrix exponential e^A of a fixed-size square matrix by scaling and squaring with a Padé approximant
/// of degree 3, 5, 7, 9 or 13 chosen from the 1-norm (Higham, "The scaling and squaring method for the matrix
/// exponential revisited", SIAM J. Matrix Anal. Appl., 2005, alg. 2.3; the thresholds θ_m are that paper's
/// double-precision values, from memory; float uses the same, which only makes it more accurate than needed).
/// \returns ok, or non_finite when A or the result is not finite (e.g. overflow of e^A); `out` is written only
/// on ok.
template <typename T, int N>
[[nodiscard]] Status expm(const Eigen::Matrix<T, N, N>& a, Eigen::Matrix<T, N, N>& out) noexcept {
  static_assert(N > 0, "keel::expm: the matrix size must be a positive compile-time constant");
  using Mat = Eigen::Matrix<T, N, N>;
  if (!detail::all_finite(a)) return Status::non_finite;
  const double norm1 = static_cast<double>(a.cwiseAbs().colwise().sum().maxCoeff());
  if (!std::isfinite(norm1)) return Status::non_finite;  // the norm itself overflowed: e^A surely does
  constexpr double theta3 = 1.495585217958292e-2;
  constexpr double theta5 = 2.539398330063230e-1;
  constexpr double theta7 = 9.504178996162932e-1;
  constexpr double theta9 = 2.097847961257068e0;
  constexpr double theta13 = 5.371920351148152e0;
  const Mat id = Mat::Identity();
  Mat u;
  Mat v;
  int squarings = 0;
  const Mat a2 = detail::product(a, a);
  // Degrees 3–9: U = A·Σ c_j A^(j−1) over odd j, V = Σ c_j A^j over even j, powers of A² built up as needed.
  // (The degree is a run-time value: one loop per scalar and size, not one per degree.)
  auto odd_even = [&](int m) {
    Mat pow = id;
    Mat su = T(detail::pade_coefficient(m, 1)) * id;
    Mat sv = T(detail::pade_coefficient(m, 0)) * id;
    for (int j = 2; j <= m; j += 2) {
      pow = detail::product(pow, a2);
      sv += T(detail::pade_coefficient(m, j)) * pow;
      if (j + 1 <= m) su += T(detail::pade_coefficient(m, j + 1)) * pow;
    }
    u = detail::product(a, su);
    v = sv;
  };
  if (norm1 <= theta3) {
    odd_even(3);
  } else if (norm1 <= theta5) {
    odd_even(5);
  } else if (norm1 <= theta7) {
    odd_even(7);
  } else if (norm1 <= theta9) {
    odd_even(9);
  } else {
    // Scale A by 2^−s so that its norm is at most θ13, then square s times (Higham 2005, alg. 2.3).
    squarings = norm1 > theta13 ? static_cast<int>(std::ceil(std::log2(norm1 / theta13))) : 0;
    if (squarings > 1000) return Status::non_finite;  // e^A overflows long before this
    const T scale = static_cast<T>(std::ldexp(1.0, -squarings));
    const Mat as = scale * a;
    const Mat as2 = (scale * scale) * a2;
    const Mat as4 = detail::product(as2, as2);
    const Mat as6 = detail::product(as4, as2);
    constexpr auto c = [](int j) { return detail::pade_coefficient(13, j); };
    Mat inner_u = T(c(13)) * as6 + T(c(11)) * as4 + T(c(9)) * as2;
    Mat tu = detail::product(as6, inner_u);
    tu += T(c(7)) * as6 + T(c(5)) * as4 + T(c(3)) * as2 + T(c(1)) * id;
    u = detail::product(as, tu);
    Mat inner_v = T(c(12)) * as6 + T(c(10)) * as4 + T(c(8)) * as2;
    v = detail::product(as6, inner_v);
    v += T(c(6)) * as6 + T(c(4)) * as4 + T(c(2)) * as2 + T(c(0)) * id;
  }
  // r = (V − U)⁻¹ (V + U), then undo the scaling by repeated squaring.
  Mat r = v + u;
  if (!detail::lu_solve_in_place<T, N>(v - u, r)) return Status::non_finite;
  for (int i = 0; i < squarings; ++i) r = detail::product(r, r);
  if (!detail::all_finite(r)) return Status::non_finite;
  out = r;
  return Status::ok;
}

/// \brief Discretizes the continuous model \f$ \dot x = A x + w,\ E[w(t)w(\tau)^T] = Q_c\,\delta(t-\tau) \f$
/// over a step dt by Van Loan's method (Van Loan, "Computing integrals involving the matrix exponential", IEEE
/// Trans. Automatic Control, 1978): with
/// \f$ e^{M\,dt} = \begin{bmatrix} E_{11} & E_{12} \\ 0 & E_{22} \end{bmatrix},
/// \ M = \begin{bmatrix} -A & Q_c \\ 0 & A^T \end{bmatrix} \f$,
/// \f$ F = E_{22}^T = e^{A\,dt} \f$ and \f$ Q = F E_{12} = \int_0^{dt} e^{As} Q_c e^{A^Ts} ds \f$ (symmetrized).
/// `qc` is the N×N intensity already mapped into the state (G Q_c Gᵀ).
/// \returns a DiscreteModel with status ok, non_finite (an input or the result is not finite), or
/// negative_variance (dt < 0, or Q_c has a negative diagonal entry).
template <typename DA, typename DQ, typename T = typename DA::Scalar, int N = detail::rows_v<DA>>
[[nodiscard]] DiscreteModel<T, N> discretize(const Eigen::MatrixBase<DA>& a, const Eigen::MatrixBase<DQ>& qc,
                                             typename DA::Scalar dt) noexcept {
  static_assert(detail::is_fixed_size<DA>() && detail::is_fixed_size<DQ>(),
                "keel::discretize: A and Qc must be fixed-size Eigen matrices");
  static_assert(N > 0 && detail::cols_v<DA> == N && detail::rows_v<DQ> == N && detail::cols_v<DQ> == N,
                "keel::discretize: A and Qc must be N×N");
  static_assert(std::is_same_v<typename DA::Scalar, T> && std::is_same_v<typename DQ::Scalar, T>,
                "keel::discretize: A, Qc and dt must have the same scalar type");
  DiscreteModel<T, N> out;
  const Eigen::Matrix<T, N, N> am = a;
  const Eigen::Matrix<T, N, N> qm = qc;
  if (!detail::all_finite(am) || !detail::all_finite(qm) || !detail::is_finite(dt)) return out;
  if (!(dt >= T(0)) || !detail::diagonal_nonnegative(qm)) {
    out.status = Status::negative_variance;
    return out;
  }
  Eigen::Matrix<T, 2 * N, 2 * N> m = Eigen::Matrix<T, 2 * N, 2 * N>::Zero();
  m.template topLeftCorner<N, N>() = -am * dt;
  m.template topRightCorner<N, N>() = qm * dt;
  m.template bottomRightCorner<N, N>() = am.transpose() * dt;
  Eigen::Matrix<T, 2 * N, 2 * N> e;
  if (expm(m, e) != Status::ok) return out;
  const Eigen::Matrix<T, N, N> f = e.template bottomRightCorner<N, N>().transpose();
  Eigen::Matrix<T, N, N> q;
  q.noalias() = f.lazyProduct(e.template topRightCorner<N, N>());
  detail::symmetrize(q);
  if (!detail::all_finite(f) || !detail::all_finite(q)) return out;
  out.F = f;
  out.Q = q;
  out.status = Status::ok;
  return out;
}

}  // namespace keel
