#pragma once
/// \file
/// \brief Small fixed-size linear-algebra helpers used by the kernels (namespace keel::detail; not for direct use).
///
/// Written here rather than taken from Eigen's decompositions where Eigen would allocate or pull in
/// function-local statics on bare-metal targets (matrix right-hand sides of LLT::solve), and so that every
/// failure is a returned value with a threshold stated in one place.

#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <type_traits>

#include <Eigen/Core>

#include "status.hpp"

/// Forces inlining of the small helpers the kernels are built from (measured: g++ 12 at -O3 kept
/// innovate_residual, joseph_covariance, ldl_factor and right_solve_spd out of line, and the step then passed every
/// intermediate matrix through memory).
#if defined(__GNUC__) || defined(__clang__)
#define KEEL_INLINE inline __attribute__((always_inline))
#else
#define KEEL_INLINE inline
#endif

/// Unrolls the next loop (up to 16 iterations) in the scalar kernels: with the loop unrolled, its accumulators and
/// loop-invariant operands live in registers on a scalar FPU. KEEL_UNROLL_SPEED marks unrolling that only trades
/// bytes for instructions: dropped when optimizing for size (-Os; measured on the Cortex-M4F Joseph step in the
/// README).
#if defined(__GNUC__) || defined(__clang__)
#define KEEL_UNROLL _Pragma("GCC unroll 16")
#else
#define KEEL_UNROLL
#endif
#if (defined(__GNUC__) || defined(__clang__)) && !defined(__OPTIMIZE_SIZE__)
#define KEEL_UNROLL_SPEED _Pragma("GCC unroll 16")
#else
#define KEEL_UNROLL_SPEED
#endif

namespace keel::detail {

/// Compile-time rows and columns as int (Eigen's are distinct enum types; comparing them directly warns).
template <typename Derived>
inline constexpr int rows_v = static_cast<int>(Derived::RowsAtCompileTime);
template <typename Derived>
inline constexpr int cols_v = static_cast<int>(Derived::ColsAtCompileTime);

template <typename Derived>
constexpr bool is_fixed_size() {
  return rows_v<Derived> >= 0 && cols_v<Derived> >= 0;  // Eigen marks run-time sizes with a negative value
}


/// \brief The IEEE-754 layout of float and double: the bits as an unsigned integer, the sign bit, the exponent
/// bits (= +Inf), and the value's bits.
template <typename T>
struct FloatBits {
  static_assert(std::is_same_v<T, float> || std::is_same_v<T, double>, "keel: scalar must be float or double");
  using Bits = std::conditional_t<std::is_same_v<T, float>, std::uint32_t, std::uint64_t>;
  static constexpr Bits sign = Bits(1) << (8 * sizeof(Bits) - 1);
  static constexpr Bits exponent = std::is_same_v<T, float> ? Bits(0x7f800000u) : Bits(0x7ff0000000000000ull);
  static constexpr Bits exponent_ulp = std::is_same_v<T, float> ? Bits(0x00800000u) : Bits(0x0010000000000000ull);
  static Bits of(T x) noexcept {
    Bits bits = 0;
    std::memcpy(&bits, &x, sizeof bits);
    return bits;
  }
};

/// \brief True when x is neither NaN nor ±Inf. Tests the exponent bits, so it stays correct under
/// -ffast-math / -ffinite-math-only, where std::isfinite may be folded to `true`.
template <typename T>
bool is_finite(T x) noexcept {
  using F = FloatBits<T>;
  return (F::of(x) & F::exponent) != F::exponent;
}

/// \brief True when the checks take their scalar-FPU forms: Eigen has no SIMD for T (Cortex-M), or
/// KEEL_SCALAR_KERNELS is set (the host test of the scalar kernels).
template <typename T>
constexpr bool scalar_fpu() {
#ifdef KEEL_SCALAR_KERNELS
  return KEEL_SCALAR_KERNELS != 0;
#else
  return !Eigen::internal::packet_traits<T>::Vectorizable;
#endif
}

/// \brief Accumulates whether every value added is finite, without a branch per value, in one of two ways.
/// The exponent-bit test of is_finite: a value is non-finite exactly when its exponent bits are all ones, i.e. when
/// its magnitude bits plus one unit of the exponent's last place carry into the sign bit; the sums are OR-ed and the
/// sign bit read once (vectorizes: an integer OR reduction). On a scalar FPU (Eigen has no SIMD for T: Cortex-M)
/// with IEEE semantics: acc += v·0, which is ±0 for a finite v and NaN for ±Inf or NaN, and NaN stays NaN — one
/// multiply-add per value instead of four integer instructions (measured on the Cortex-M4F Joseph step: 3 273 →
/// 3 026 instructions). Not under -ffinite-math-only / -ffast-math (__FINITE_MATH_ONLY__), where v·0 may be folded
/// to 0, and not on SIMD hosts, where the floating-point sum is a serial chain the compiler may not reorder.
template <typename T>
class FiniteCheck {
#if defined(__FINITE_MATH_ONLY__) && __FINITE_MATH_ONLY__
  static constexpr bool multiply_add = false;
#else
  static constexpr bool multiply_add = scalar_fpu<T>();
#endif
  using F = FloatBits<T>;
  std::conditional_t<multiply_add, T, typename F::Bits> acc_ = 0;

 public:
  void add(const T& v) noexcept {
    if constexpr (multiply_add) {
      acc_ += v * T(0);
    } else {
      acc_ |= (F::of(v) & ~F::sign) + F::exponent_ulp;
    }
  }
  [[nodiscard]] bool all_finite() const noexcept {
    if constexpr (multiply_add) return is_finite(acc_);
    else return (acc_ & F::sign) == 0;
  }
};

/// \brief True when every entry of a is finite (FiniteCheck over every entry; this runs on the inputs and results
/// of every kernel).
template <typename Derived>
KEEL_INLINE bool all_finite(const Eigen::MatrixBase<Derived>& a) noexcept {
  using T = typename Derived::Scalar;
  FiniteCheck<T> check;
  const auto& m = a.derived();
  if constexpr (std::is_base_of_v<Eigen::PlainObjectBase<Derived>, Derived>) {
    const T* data = m.data();  // plain matrices and vectors: contiguous
    for (Eigen::Index i = 0; i < m.size(); ++i) check.add(data[i]);
  } else {
    for (Eigen::Index j = 0; j < m.cols(); ++j)
      for (Eigen::Index i = 0; i < m.rows(); ++i) check.add(m.coeff(i, j));
  }
  return check.all_finite();
}

/// \brief True when some diagonal entry is a finite negative number (a negative variance). NaN and ±Inf are not
/// reported here: they are left to the finiteness check of the results they poison, which says non_finite.
template <typename Derived>
KEEL_INLINE bool diagonal_has_negative(const Eigen::MatrixBase<Derived>& a) noexcept {
  using T = typename Derived::Scalar;
  bool negative = false;
  if constexpr (is_fixed_size<Derived>() && scalar_fpu<T>()) {
    // Scalar FPU (measured on the Cortex-M4F: fewer instructions and bytes than the compares; on an AVX-512 host
    // the bit test was slower): the finite negative non-zero values are the bit patterns from sign + 1 to
    // sign + Inf − 1.
    using F = FloatBits<T>;
    using Bits = typename F::Bits;
    KEEL_UNROLL_SPEED
    for (int i = 0; i < rows_v<Derived>; ++i)
      negative |= Bits(F::of(a.coeff(i, i)) - (F::sign + 1)) < Bits(F::exponent - 1);
  } else {
    for (Eigen::Index i = 0; i < a.rows(); ++i) {
      const T d = a.coeff(i, i);
      negative |= d < T(0) && d >= std::numeric_limits<T>::lowest();
    }
  }
  return negative;
}

/// \brief True when every diagonal entry is >= 0 (a variance). NaN fails.
template <typename Derived>
KEEL_INLINE bool diagonal_nonnegative(const Eigen::MatrixBase<Derived>& a) noexcept {
  using T = typename Derived::Scalar;
  for (Eigen::Index i = 0; i < a.rows(); ++i)
    if (!(a.coeff(i, i) >= T(0))) return false;
  return true;
}

/// \brief True when dst = A·B with an N-row fixed-size destination is fastest through Eigen's coefficient-based lazy
/// product, false when through its blocked product (heap-free for fixed sizes too). Measured with bench/ on an
/// AVX-512 host (predict/joseph): the lazy product wins up to 12 rows when the rows fill whole half-packets or less
/// than one packet, and loses 2–3× at 9 (double) and 18 rows, 1.6× at 24.
template <typename T, int N>
constexpr bool lazy_product_faster() {
  constexpr int packet = Eigen::internal::packet_traits<T>::size;
  return N <= 12 && (packet <= 2 || N < packet || N % (packet / 2) == 0);
}

/// \brief dst = a·b (Op 0) or dst += a·b (Op 1) for an N-row destination, with the product kernel
/// lazy_product_faster<T, N> picks.
template <int Op, typename T, int N, int C, typename A, typename B>
KEEL_INLINE void product(Eigen::Matrix<T, N, C>& dst, const A& a, const B& b) noexcept {
  if constexpr (lazy_product_faster<T, N>()) {
    if constexpr (Op == 0) dst.noalias() = a.lazyProduct(b);
    else dst.noalias() += a.lazyProduct(b);
  } else {
    if constexpr (Op == 0) dst.noalias() = a * b;
    else dst.noalias() += a * b;
  }
}

/// \brief A := (A + Aᵀ)/2 in place, as A/2 + Aᵀ/2: the same bits as halving the sum (halving is exact), but
/// finite for entries near the largest float (the sum overflowed: a fuzz finding).
template <typename T, int N>
KEEL_INLINE void symmetrize(Eigen::Matrix<T, N, N>& a) noexcept {
  for (int j = 0; j < N; ++j)
    for (int i = j + 1; i < N; ++i) {
      const T m = T(0.5) * a(i, j) + T(0.5) * a(j, i);
      a(i, j) = m;
      a(j, i) = m;
    }
}

/// \brief symmetrize(a), returning whether every entry of the result is finite: one pass instead of two over a
/// covariance that every kernel symmetrizes and then checks.
template <typename T, int N>
[[nodiscard]] KEEL_INLINE bool symmetrize_finite(Eigen::Matrix<T, N, N>& a) noexcept {
  FiniteCheck<T> check;
  for (int j = 0; j < N; ++j) {
    check.add(a(j, j));
    for (int i = j + 1; i < N; ++i) {
      const T m = T(0.5) * a(i, j) + T(0.5) * a(j, i);
      a(i, j) = m;
      a(j, i) = m;
      check.add(m);
    }
  }
  return check.all_finite();
}

/// \brief dst = src for two plain matrices of one fixed-size type. On a scalar FPU (Cortex-M) column by column: Eigen's
/// completely unrolled copy of a 6×6 float matrix took 300 B of flash in the M4F Joseph image, the column loop about
/// 50 B (memcpy instead measured 5 fewer instructions per step on the M4F, 71 more on the M7); elsewhere Eigen's
/// vectorized assignment.
template <typename T, int R, int C>
KEEL_INLINE void copy_matrix(Eigen::Matrix<T, R, C>& dst, const Eigen::Matrix<T, R, C>& src) noexcept {
  if constexpr (scalar_fpu<T>()) {
    for (int j = 0; j < C; ++j) dst.col(j) = src.col(j);
  } else {
    dst = src;
  }
}

/// \brief True when keel's kernels use their triangle-only scalar loops for N-row products in T, false when Eigen's
/// vectorized full products: Eigen has no SIMD for T (Cortex-M: the loops keep operands in registers; measured
/// on the M4F build, fewer instructions and less flash), or the rows fill no packet evenly. Measured with bench/
/// on an AVX-512 host: the loops win at 9 states in double, lose at 6 and 12.
template <typename T, int N>
constexpr bool scalar_kernels() {
#ifdef KEEL_SCALAR_KERNELS
  return KEEL_SCALAR_KERNELS != 0;
#else
  return scalar_fpu<T>() || (N <= 12 && !lazy_product_faster<T, N>());
#endif
}

/// \brief Columns j … j+B−1 of congruence_plus's scalar kernel (B = 2: each column of P and each row of F loaded
/// once for two columns of the result).
template <int B, typename T, int N>
KEEL_INLINE void congruence_columns(const Eigen::Matrix<T, N, N>& f, const Eigen::Matrix<T, N, N>& p,
                                    const Eigen::Matrix<T, N, N>& q, Eigen::Matrix<T, N, N>& out, int j,
                                    FiniteCheck<T>& check) noexcept {
  T t[B][N];  // t[b] = P fⱼ₊ᵦ
  KEEL_UNROLL
  for (int b = 0; b < B; ++b) {
    KEEL_UNROLL
    for (int i = 0; i < N; ++i) t[b][i] = p(i, 0) * f(j + b, 0);
  }
  for (int k = 1; k < N; ++k) {
    T fk[B];
    KEEL_UNROLL
    for (int b = 0; b < B; ++b) fk[b] = f(j + b, k);
    KEEL_UNROLL
    for (int i = 0; i < N; ++i) {
      const T pik = p(i, k);
      KEEL_UNROLL
      for (int b = 0; b < B; ++b) t[b][i] += pik * fk[b];
    }
  }
  for (int i = j; i < N; ++i) {
    T v[B];
    KEEL_UNROLL
    for (int b = 0; b < B; ++b) v[b] = q(i, j + b);
    KEEL_UNROLL
    for (int k = 0; k < N; ++k) {
      const T fik = f(i, k);
      KEEL_UNROLL
      for (int b = 0; b < B; ++b) v[b] += fik * t[b][k];
    }
    KEEL_UNROLL
    for (int b = 0; b < B; ++b)
      if (i >= j + b) {
        out(i, j + b) = v[b];
        out(j + b, i) = v[b];
        check.add(v[b]);
      }
  }
}

/// \brief out = F P Fᵀ + Q for a symmetric P, returning whether every entry is finite. Vectorized: F P (full),
/// then (F P) Fᵀ + Q and the symmetrizing pass. Scalar: one column at a time, t = P fⱼ (fⱼ the j-th row of F as a
/// column, t = Σₖ Pₖ Fⱼₖ over the columns Pₖ of P), then out(i, j) = Qᵢⱼ + Fᵢ·t for i ≥ j only (Q's lower triangle),
/// mirrored: N³ + N²(N+1)/2 multiply-adds instead of 2N³ and one N-vector of workspace instead of an N×N product.
template <typename T, int N>
[[nodiscard]] KEEL_INLINE bool congruence_plus(const Eigen::Matrix<T, N, N>& f, const Eigen::Matrix<T, N, N>& p,
                                               const Eigen::Matrix<T, N, N>& q, Eigen::Matrix<T, N, N>& out) noexcept {
  if constexpr (!scalar_kernels<T, N>()) {
    Eigen::Matrix<T, N, N> fp;
    product<0>(fp, f, p);
    out = q;
    product<1>(out, fp, f.transpose());
    return symmetrize_finite(out);
  } else {
    FiniteCheck<T> check;
    int j = 0;
#ifndef __OPTIMIZE_SIZE__
    for (; j + 1 < N; j += 2) congruence_columns<2>(f, p, q, out, j, check);
#endif
    for (; j < N; ++j) congruence_columns<1>(f, p, q, out, j, check);
    return check.all_finite();
  }
}

/// \brief U = P Hᵀ for a symmetric P (N×N) and H (M×N), and the innovation covariance S = H U + R, exactly symmetric
/// (R taken as symmetric: (Rᵢⱼ + Rⱼᵢ)/2). Vectorized: the two products, then the symmetrizing pass. Scalar kernels:
/// row i of U is H Pᵢ (Pᵢ the i-th column of P), H held in registers across the rows, and S's lower triangle is
/// R + H U entry by entry. On a scalar FPU (Cortex-M) each row's contribution Hᵢ Uᵢᵀ (Hᵢ the i-th column of H) is
/// added to the triangle as the row is formed — the same sums in the same order, in one loop instead of a second
/// unrolled pass (measured on the Cortex-M4F Joseph step: 200 fewer bytes of code, the same instruction count); on
/// an x86 host the separate pass measured faster (9x3 double).
template <typename T, int N, int M>
KEEL_INLINE void innovation_products(const Eigen::Matrix<T, N, N>& p, const Eigen::Matrix<T, M, N>& h,
                                     const Eigen::Matrix<T, M, M>& r, Eigen::Matrix<T, N, M>& u,
                                     Eigen::Matrix<T, M, M>& s) noexcept {
  if constexpr (!scalar_kernels<T, N>()) {
    product<0>(u, p, h.transpose());
    s = r;
    s.noalias() += h.lazyProduct(u);
    symmetrize(s);
  } else {
    constexpr bool fused = scalar_fpu<T>();
    T tri[M * (M + 1) / 2];  // S's lower triangle, column by column
    KEEL_UNROLL
    for (int b = 0, n = 0; b < M; ++b)
      KEEL_UNROLL
      for (int a = b; a < M; ++a, ++n) tri[n] = T(0.5) * r(a, b) + T(0.5) * r(b, a);
    for (int i = 0; i < N; ++i) {
      T acc[M];
      KEEL_UNROLL
      for (int c = 0; c < M; ++c) acc[c] = h(c, 0) * p(0, i);
      KEEL_UNROLL
      for (int k = 1; k < N; ++k) {
        const T pki = p(k, i);
        KEEL_UNROLL
        for (int c = 0; c < M; ++c) acc[c] += h(c, k) * pki;
      }
      KEEL_UNROLL
      for (int c = 0; c < M; ++c) u(i, c) = acc[c];
      if constexpr (fused) {
        KEEL_UNROLL
        for (int b = 0, n = 0; b < M; ++b)
          KEEL_UNROLL
          for (int a = b; a < M; ++a, ++n) tri[n] += h(a, i) * acc[b];
      }
    }
    KEEL_UNROLL
    for (int b = 0, n = 0; b < M; ++b)
      KEEL_UNROLL
      for (int a = b; a < M; ++a, ++n) {
        if constexpr (!fused) {
          KEEL_UNROLL
          for (int c = 0; c < N; ++c) tri[n] += h(a, c) * u(c, b);
        }
        s(a, b) = tri[n];
        s(b, a) = tri[n];
      }
  }
}

/// \brief Relative pivot floor of the Cholesky factorization: a pivot \f$ d_j \le n\,\varepsilon\,a_{jj} \f$
/// is numerically zero (the Schur complement has cancelled to rounding level of the original diagonal).
template <typename T, int N>
constexpr T pivot_floor_factor() noexcept {
  return T(N) * std::numeric_limits<T>::epsilon();
}

/// \brief In-place lower Cholesky factorization A = L Lᵀ (reads the lower triangle, zeroes the upper).
/// \returns false when A is not numerically positive-definite (pivot at or below the floor above, or non-finite).
template <typename T, int N>
bool cholesky_in_place(Eigen::Matrix<T, N, N>& a) noexcept {
  for (int j = 0; j < N; ++j) {
    const T ajj = a(j, j);
    T d = ajj;
    for (int k = 0; k < j; ++k) d -= a(j, k) * a(j, k);
    if (!(d > pivot_floor_factor<T, N>() * ajj) || !is_finite(d)) return false;
    const T ljj = std::sqrt(d);
    a(j, j) = ljj;
    const T inv = T(1) / ljj;
    for (int i = j + 1; i < N; ++i) {
      T s = a(i, j);
      for (int k = 0; k < j; ++k) s -= a(i, k) * a(j, k);
      a(i, j) = s * inv;
    }
    for (int i = 0; i < j; ++i) a(i, j) = T(0);
  }
  return true;
}

/// \brief A symmetric positive-definite matrix factored as \f$ A = L D L^T \f$ (L unit lower-triangular, D diagonal),
/// with the inverse pivots kept so that solves multiply instead of divide.
template <typename T, int N>
struct Ldl {
  Eigen::Matrix<T, N, N> l;  ///< strictly lower part: L below its unit diagonal (the rest is not read)
  Eigen::Matrix<T, N, 1> d;
  Eigen::Matrix<T, N, 1> d_inv;
};

/// \brief Square-root-free Cholesky factorization \f$ A = L D L^T \f$ of the lower triangle of a (Golub & Van Loan,
/// "Matrix Computations", 4th ed., 2013, sec. 4.1.2): \f$ d_j = a_{jj} - \sum_{k<j} l_{jk}^2 d_k,\;
/// l_{ij} = (a_{ij} - \sum_{k<j} l_{ik} l_{jk} d_k) / d_j \f$. The pivots d_j are those of the Cholesky factorization
/// squared, so the same relative floor applies (cholesky_in_place). N divisions and no square root: on the
/// critical path of a small update this halves the latency of the factorization.
/// \returns false when A is not numerically positive-definite; f is then partly written.
template <typename T, int N>
KEEL_INLINE bool ldl_factor(const Eigen::Matrix<T, N, N>& a, Ldl<T, N>& f) noexcept {
  for (int j = 0; j < N; ++j) {
    T dj = a(j, j);
    for (int k = 0; k < j; ++k) dj -= f.l(j, k) * f.l(j, k) * f.d(k);
    if (!(dj > pivot_floor_factor<T, N>() * a(j, j)) || !is_finite(dj)) return false;
    f.d(j) = dj;
    f.d_inv(j) = T(1) / dj;
    for (int i = j + 1; i < N; ++i) {
      T s = a(i, j);
      for (int k = 0; k < j; ++k) s -= f.l(i, k) * f.l(j, k) * f.d(k);
      f.l(i, j) = s * f.d_inv(j);
    }
  }
  return true;
}

/// \brief \f$ v^T A^{-1} v = \|D^{-1/2} L^{-1} v\|^2 \f$ from the factors (one unit forward substitution).
template <typename T, int N>
KEEL_INLINE T ldl_quadratic_form(const Ldl<T, N>& f, Eigen::Matrix<T, N, 1> v) noexcept {
  T q = T(0);
  for (int i = 0; i < N; ++i) {
    T s = v(i);
    for (int k = 0; k < i; ++k) s -= f.l(i, k) * v(k);
    v(i) = s;
    q += s * s * f.d_inv(i);
  }
  return q;
}

/// \brief X = B A⁻¹ from \f$ A = L D L^T \f$: Z Lᵀ = B (forward over columns), Y = Z D⁻¹, X L = Y (backward), each
/// step a whole R-vector column (vectorizes; no matrix right-hand side reaches Eigen's blocked solver).
template <typename T, int R, int M>
KEEL_INLINE void right_solve_spd(const Ldl<T, M>& f, const Eigen::Matrix<T, R, M>& b, Eigen::Matrix<T, R, M>& x) noexcept {
  if constexpr (scalar_kernels<T, R>()) {
    // Row by row, the same operations in the same order: the factors stay in registers on a scalar FPU.
    for (int i = 0; i < R; ++i) {
      T v[M];
      KEEL_UNROLL
      for (int j = 0; j < M; ++j) {
        T s = b(i, j);
        KEEL_UNROLL
        for (int k = 0; k < j; ++k) s -= f.l(j, k) * v[k];
        v[j] = s;
      }
      KEEL_UNROLL
      for (int j = 0; j < M; ++j) v[j] *= f.d_inv(j);
      KEEL_UNROLL
      for (int j = M - 1; j >= 0; --j) {
        KEEL_UNROLL
        for (int k = j + 1; k < M; ++k) v[j] -= f.l(k, j) * v[k];
        x(i, j) = v[j];
      }
    }
    return;
  }
  for (int j = 0; j < M; ++j) {
    Eigen::Matrix<T, R, 1> v = b.col(j);
    for (int k = 0; k < j; ++k) v -= f.l(j, k) * x.col(k);
    x.col(j) = v;
  }
  for (int j = 0; j < M; ++j) x.col(j) *= f.d_inv(j);
  for (int j = M - 1; j >= 0; --j)
    for (int k = j + 1; k < M; ++k) x.col(j) -= f.l(k, j) * x.col(k);
}

/// \brief Solves L v = b in place (L lower-triangular with nonzero diagonal).
template <typename T, int N>
void forward_substitute(const Eigen::Matrix<T, N, N>& l, Eigen::Matrix<T, N, 1>& v) noexcept {
  for (int i = 0; i < N; ++i) {
    T s = v(i);
    for (int k = 0; k < i; ++k) s -= l(i, k) * v(k);
    v(i) = s / l(i, i);
  }
}

/// \brief Solves Lᵀ v = b in place.
template <typename T, int N>
void backward_substitute_transposed(const Eigen::Matrix<T, N, N>& l, Eigen::Matrix<T, N, 1>& v) noexcept {
  for (int i = N - 1; i >= 0; --i) {
    T s = v(i);
    for (int k = i + 1; k < N; ++k) s -= l(k, i) * v(k);
    v(i) = s / l(i, i);
  }
}

/// \brief X = B S⁻¹ given the Cholesky factor L of S (S = L Lᵀ): first Y Lᵀ = B column by column (forward),
/// then X L = Y column by column (backward). Each step is an operation on a whole R-vector column, so it
/// vectorizes, and no matrix right-hand side reaches Eigen's blocked solver (which allocates on some targets).
template <typename T, int R, int M>
void right_solve_spd(const Eigen::Matrix<T, M, M>& l, const Eigen::Matrix<T, R, M>& b,
                     Eigen::Matrix<T, R, M>& x) noexcept {
  for (int j = 0; j < M; ++j) {
    Eigen::Matrix<T, R, 1> v = b.col(j);
    for (int k = 0; k < j; ++k) v -= l(j, k) * x.col(k);
    x.col(j) = v * (T(1) / l(j, j));
  }
  for (int j = M - 1; j >= 0; --j) {
    Eigen::Matrix<T, R, 1> v = x.col(j);
    for (int k = j + 1; k < M; ++k) v -= l(k, j) * x.col(k);
    x.col(j) = v * (T(1) / l(j, j));
  }
}

}  // namespace keel::detail

namespace keel {

namespace detail {
/// Shared body of the rank-1 update (sign +1) and downdate (sign −1) of a lower Cholesky factor.
template <typename T, int N>
Status cholesky_rank1(Eigen::Matrix<T, N, N>& l, const Eigen::Matrix<T, N, 1>& v, T sign) noexcept {
  if (!all_finite(l) || !all_finite(v)) return Status::non_finite;
  Eigen::Matrix<T, N, N> out = l;
  Eigen::Matrix<T, N, 1> x = v;
  for (int k = 0; k < N; ++k) {
    const T lkk = out(k, k);
    if (!(lkk > T(0))) return Status::not_positive_definite;
    const T r2 = lkk * lkk + sign * x(k) * x(k);
    if (!(r2 > pivot_floor_factor<T, N>() * lkk * lkk) || !is_finite(r2)) return Status::not_positive_definite;
    const T r = std::sqrt(r2);
    const T c = r / lkk;
    const T s = x(k) / lkk;
    out(k, k) = r;
    for (int i = k + 1; i < N; ++i) {
      out(i, k) = (out(i, k) + sign * s * x(i)) / c;
      x(i) = c * x(i) - s * out(i, k);
    }
  }
  if (!all_finite(out)) return Status::non_finite;
  l = out;
  return Status::ok;
}
}  // namespace detail

/// \brief Rank-1 update of a lower Cholesky factor in place: on return \f$ L L^T = L_0 L_0^T + v v^T \f$.
/// O(N²), heap-free (Eigen's LLT::rankUpdate allocates a temporary even for fixed sizes). Column k uses
/// \f$ r = \sqrt{l_{kk}^2 + x_k^2},\ c = r/l_{kk},\ s = x_k/l_{kk},\ l_{ik} \leftarrow (l_{ik} + s x_i)/c,
/// \ x_i \leftarrow c x_i - s l_{ik} \f$ (Golub & Van Loan, "Matrix Computations", 4th ed., 2013, sec. 6.5.4).
/// \returns ok, non_finite, or not_positive_definite when L has a non-positive diagonal; L unchanged on failure.
template <typename T, int N>
[[nodiscard]] Status cholesky_update(Eigen::Matrix<T, N, N>& l, const Eigen::Matrix<T, N, 1>& v) noexcept {
  return detail::cholesky_rank1(l, v, T(1));
}

/// \brief Rank-1 downdate of a lower Cholesky factor in place: on return \f$ L L^T = L_0 L_0^T - v v^T \f$
/// (same recurrence with the signs of the hyperbolic rotation). \returns not_positive_definite, leaving L
/// unchanged, when the result would not be positive-definite (a pivot at or below n·ε of its old value).
template <typename T, int N>
[[nodiscard]] Status cholesky_downdate(Eigen::Matrix<T, N, N>& l, const Eigen::Matrix<T, N, 1>& v) noexcept {
  return detail::cholesky_rank1(l, v, T(-1));
}

}  // namespace keel
