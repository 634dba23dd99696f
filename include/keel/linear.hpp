#pragma once
/// \file
/// \brief Linear Kalman filter kernels on keel::Gaussian: predict, correct (Joseph or standard form),
/// correct with a caller-supplied gain, and sequential scalar correction.
///
/// Every kernel is noexcept and heap-free, works on a copy and writes the estimate only when the whole
/// update succeeded: on any non-ok Status the estimate is bit-for-bit unchanged.

#include <type_traits>

#include <Eigen/Core>

#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/linalg.hpp"
#include "core/status.hpp"
#include "gate.hpp"

namespace keel {

namespace detail {

/// \brief The scalar kernel of joseph_covariance: calls emit(i, j, v) for every entry i ≥ j of the new covariance,
/// column by column from the last. Column j (rows i ≥ j) needs Uⱼ, Kⱼ and, for each i, Kᵢ and Wᵢ: rows i > j of `u`
/// already hold W, row j is overwritten with Wⱼ once column j is done. \returns whether every entry is finite.
template <bool Joseph, typename T, int N, int M, typename Emit>
[[nodiscard]] KEEL_INLINE bool joseph_lower(const Eigen::Matrix<T, N, N>& p, const Eigen::Matrix<T, M, M>& s,
                                            Eigen::Matrix<T, N, M>& u, const Eigen::Matrix<T, N, M>& k,
                                            Emit emit) noexcept {
  FiniteCheck<T> check;
  for (int j = N - 1; j >= 0; --j) {
    T uj[M], kj[M], wj[M];
    KEEL_UNROLL
    for (int c = 0; c < M; ++c) {
      uj[c] = u(j, c);
      kj[c] = k(j, c);
    }
    T v = p(j, j);
    KEEL_UNROLL
    for (int c = 0; c < M; ++c) {
      v -= kj[c] * uj[c];
      if constexpr (Joseph) {
        wj[c] = uj[c];
        KEEL_UNROLL
        for (int d = 0; d < M; ++d) wj[c] -= kj[d] * s(d, c);
      }
    }
    if constexpr (Joseph) {
      KEEL_UNROLL
      for (int c = 0; c < M; ++c) v -= wj[c] * kj[c];
    }
    emit(j, j, v);
    check.add(v);
    for (int i = j + 1; i < N; ++i) {
      T e = p(i, j);
      KEEL_UNROLL
      for (int c = 0; c < M; ++c) {
        e -= k(i, c) * uj[c];
        if constexpr (Joseph) e -= u(i, c) * kj[c];
      }
      emit(i, j, e);
      check.add(e);
    }
    if constexpr (Joseph) {
      KEEL_UNROLL
      for (int c = 0; c < M; ++c) u(j, c) = wj[c];
    }
  }
  return check.all_finite();
}

/// \brief Joseph-form covariance after a gain K, expanded into rank-M corrections instead of forming I − KH.
/// With U = P Hᵀ and S = H P Hᵀ + R,
/// \f$ (I-KH)P(I-KH)^T + KRK^T = P - KU^T - UK^T + KSK^T = P - KU^T - WK^T,\ W = U - KS \f$,
/// exactly, for any gain K: so, as in the congruence form, an error δK in the gain changes P⁺ only by
/// \f$ \delta K\, S\, \delta K^T \f$ (second order). For the optimal gain W is rounding-level and P⁺ is the standard
/// form plus that correction. The right-hand side is symmetric for any K (KUᵀ + UKᵀ − KSKᵀ), so only the lower
/// triangle is computed and mirrored: N(N+1)M + NM² multiply-adds (the congruence form costs 4N³ + O(N²M)), and
/// the result is exactly symmetric. With standard_form_t: P − KUᵀ only (symmetric for the optimal gain, U S⁻¹ Uᵀ).
/// The vectorized path forms the full products and averages the two triangles; the scalar kernels
/// (detail::scalar_kernels) read the lower triangle of P and overwrite `u` (U on entry) with W, row j once column j
/// is done (columns from the last), so that no third N×M matrix is on the stack.
/// \returns whether every entry of `out` is finite.
template <typename Form = joseph_form_t, typename T, int N, int M>
[[nodiscard]] KEEL_INLINE bool joseph_covariance(const Eigen::Matrix<T, N, N>& p, const Eigen::Matrix<T, M, M>& s,
                                                 Eigen::Matrix<T, N, M>& u, const Eigen::Matrix<T, N, M>& k,
                                                 Eigen::Matrix<T, N, N>& out) noexcept {
  constexpr bool joseph = !std::is_same_v<Form, standard_form_t>;
  if constexpr (!scalar_kernels<T, N>()) {
    // Vectorized: the full rank-M products (the lazy product is faster at every size measured), then averaged.
    out = p;
    out.noalias() -= k.lazyProduct(u.transpose());
    if constexpr (joseph) {
      Eigen::Matrix<T, N, M> w = u;
      w.noalias() -= k.lazyProduct(s);
      out.noalias() -= w.lazyProduct(k.transpose());
    }
    return symmetrize_finite(out);
  } else {
    return joseph_lower<joseph>(p, s, u, k, [&out](int i, int j, T v) {
      out(i, j) = v;
      out(j, i) = v;
    });
  }
}

/// \brief Shared tail of the vector corrections: given the gain, form the new mean and covariance,
/// validate them, and commit to `est` only on success. `pht` is consumed (joseph_covariance's workspace).
template <typename T, int N, int M, typename Form>
KEEL_INLINE Status apply_gain(Gaussian<T, N>& est, const Eigen::Matrix<T, M, M>& s, const Eigen::Matrix<T, M, 1>& y,
                              Eigen::Matrix<T, N, M>& pht, const Eigen::Matrix<T, N, M>& k, Form) noexcept {
  Eigen::Matrix<T, N, 1> x = est.mean;
  x.noalias() += k * y;
  if constexpr (scalar_kernels<T, N>()) {
    // The new covariance's lower triangle packed column by column (N(N+1)/2 values on the stack, not N²),
    // mirrored into the estimate on success.
    constexpr bool joseph = !std::is_same_v<Form, standard_form_t>;
    T tri[N * (N + 1) / 2];
    bool nonnegative = true;
    const bool finite = joseph_lower<joseph>(est.cov, s, pht, k, [&tri, &nonnegative](int i, int j, T v) {
      tri[j * N - j * (j - 1) / 2 + (i - j)] = v;
      if (i == j) nonnegative &= v >= T(0);
    });
    if (!finite || !all_finite(x)) return Status::non_finite;
    if (!nonnegative) return Status::not_positive_definite;
    est.mean = x;
    KEEL_UNROLL_SPEED
    for (int j = 0, n = 0; j < N; ++j)
      KEEL_UNROLL_SPEED
      for (int i = j; i < N; ++i, ++n) {
        est.cov(i, j) = tri[n];
        est.cov(j, i) = tri[n];
      }
    return Status::ok;
  } else {
    Eigen::Matrix<T, N, N> p;
    if (!joseph_covariance<Form>(est.cov, s, pht, k, p) || !all_finite(x)) return Status::non_finite;
    if (!diagonal_nonnegative(p)) return Status::not_positive_definite;
    est.mean = x;
    est.cov = p;
    return Status::ok;
  }
}

/// \brief Sets `inn.status` to non_finite and returns true when its residual or covariance overflowed.
template <typename T, int M>
bool innovation_overflowed(Innovation<T, M>& inn) noexcept {
  if (all_finite(inn.residual) && all_finite(inn.cov)) return false;
  inn.status = Status::non_finite;
  return true;
}

/// \brief NIS \f$ y^T S^{-1} y = \|L^{-1} y\|^2 \f$ of `inn.residual` from a lower factor L of S, then the gate:
/// sets `inn.nis` and returns ok (go on and update), non_finite or gated.
template <typename T, int M>
Status nis_and_gate(const Eigen::Matrix<T, M, M>& l, Innovation<T, M>& inn, const Gate<T>& gate) noexcept {
  Eigen::Matrix<T, M, 1> w = inn.residual;
  forward_substitute(l, w);
  inn.nis = w.squaredNorm();
  if (!is_finite(inn.nis)) return Status::non_finite;
  return gate.accepts(inn.nis) ? Status::ok : Status::gated;
}

/// \brief The innovation of a correction whose residual y is already formed (z − Hx for the linear filter,
/// the model's residual(z, h(x)) for the EKF): checks the variances, forms PHᵀ, S = HPHᵀ + R and its
/// square-root-free Cholesky factors S = LDLᵀ, the NIS \f$ y^T S^{-1} y = \|D^{-1/2} L^{-1} y\|^2 \f$, and applies
/// the gate. Status ok means "go on and apply a gain".
template <typename T, int N, int M>
KEEL_INLINE Innovation<T, M> innovate_residual(const Gaussian<T, N>& est, const Eigen::Matrix<T, M, N>& h,
                                   const Eigen::Matrix<T, M, M>& r, const Eigen::Matrix<T, M, 1>& y,
                                   const Gate<T>& gate, Eigen::Matrix<T, N, M>& pht, Ldl<T, M>& l) noexcept {
  Innovation<T, M> inn;
  inn.residual = y;
  innovation_products(est.cov, h, r, pht, inn.cov);
  // Checked after S is formed, not before: the compiler then sees the zero-initialized residual and covariance
  // overwritten and drops the zeroing, a memset call (measured on the Cortex-M4F Joseph step: 134 fewer instructions,
  // 104 fewer bytes).
  if (diagonal_has_negative(est.cov) || diagonal_has_negative(r)) {
    inn.status = Status::negative_variance;
    return inn;
  }
  // Every entry of x, P, H, R and z reaches y or S (the products sum over all their terms, and 0·NaN, 0·Inf and
  // Inf − Inf are NaN): checking these M + M² values covers all the inputs; the results are checked again.
  if (!all_finite(inn.residual) || !all_finite(inn.cov)) {
    inn.status = Status::non_finite;
    return inn;
  }
  if (!ldl_factor(inn.cov, l)) {
    inn.status = Status::not_positive_definite;
    return inn;
  }
  inn.nis = ldl_quadratic_form(l, inn.residual);
  if (!is_finite(inn.nis)) inn.status = Status::non_finite;
  else inn.status = gate.accepts(inn.nis) ? Status::ok : Status::gated;
  return inn;
}

/// \brief The innovation of a linear correction: y = z − Hx, then innovate_residual.
template <typename T, int N, int M>
KEEL_INLINE Innovation<T, M> innovate(const Gaussian<T, N>& est, const Eigen::Matrix<T, M, N>& h,
                          const Eigen::Matrix<T, M, M>& r, const Eigen::Matrix<T, M, 1>& z, const Gate<T>& gate,
                          Eigen::Matrix<T, N, M>& pht, Ldl<T, M>& l) noexcept {
  Eigen::Matrix<T, M, 1> y = z;
  y.noalias() -= h * est.mean;
  return innovate_residual(est, h, r, y, gate, pht, l);
}

/// \brief innovate_residual, then on ok the gain K = P Hᵀ S⁻¹ into `k`. The factors of S live only in here, so
/// that their stack slot is free again for the new covariance in the caller.
template <typename T, int N, int M>
KEEL_INLINE Innovation<T, M> innovate_and_gain(const Gaussian<T, N>& est, const Eigen::Matrix<T, M, N>& h,
                                               const Eigen::Matrix<T, M, M>& r, const Eigen::Matrix<T, M, 1>& y,
                                               const Gate<T>& gate, Eigen::Matrix<T, N, M>& pht,
                                               Eigen::Matrix<T, N, M>& k) noexcept {
  Ldl<T, M> l;
  Innovation<T, M> inn = innovate_residual(est, h, r, y, gate, pht, l);
  if (inn.status == Status::ok) right_solve_spd(l, pht, k);
  return inn;
}

template <typename T, int N, typename DH, typename DR, typename DZ>
constexpr void check_correct_dims() {
  static_assert(is_fixed_size<DH>() && is_fixed_size<DR>() && is_fixed_size<DZ>(),
                "keel::correct: H, R and z must be fixed-size Eigen matrices");
  static_assert(detail::cols_v<DZ> == 1, "keel::correct: z must be a column vector");
  static_assert(detail::rows_v<DH> == detail::rows_v<DZ>,
                "keel::correct: H must have as many rows as z has entries");
  static_assert(detail::cols_v<DH> == N, "keel::correct: H must have N columns, N the state dimension");
  static_assert(detail::rows_v<DR> == detail::rows_v<DZ> && detail::cols_v<DR> == detail::rows_v<DZ>,
                "keel::correct: R must be M×M, M the number of entries of z");
  static_assert(std::is_same_v<typename DH::Scalar, T> && std::is_same_v<typename DR::Scalar, T> &&
                    std::is_same_v<typename DZ::Scalar, T>,
                "keel::correct: H, R and z must have the estimate's scalar type");
}

template <typename T, int N, typename DF, typename DQ>
constexpr void check_predict_dims() {
  static_assert(detail::rows_v<DF> == N && detail::cols_v<DF> == N,
                "keel::predict: F must be N×N, N the state dimension");
  static_assert(detail::rows_v<DQ> == N && detail::cols_v<DQ> == N,
                "keel::predict: Q must be N×N, N the state dimension");
  static_assert(std::is_same_v<typename DF::Scalar, T> && std::is_same_v<typename DQ::Scalar, T>,
                "keel::predict: F and Q must have the estimate's scalar type");
}

template <typename T, int N, typename DH, typename DR, typename DZ>
constexpr void check_sequential_dims() {
  static_assert(detail::is_fixed_size<DH>() && detail::is_fixed_size<DR>() && detail::is_fixed_size<DZ>(),
                "keel::correct_sequential: H, r_diag and z must be fixed-size Eigen matrices");
  static_assert(detail::cols_v<DZ> == 1 && detail::cols_v<DR> == 1,
                "keel::correct_sequential: z and r_diag must be column vectors");
  static_assert(detail::rows_v<DH> == detail::rows_v<DZ>,
                "keel::correct_sequential: H must have as many rows as z has entries");
  static_assert(detail::rows_v<DR> == detail::rows_v<DZ>,
                "keel::correct_sequential: r_diag must have as many entries as z (one variance per row)");
  static_assert(detail::cols_v<DH> == N, "keel::correct_sequential: H must have N columns, N the state dimension");
  static_assert(std::is_same_v<typename DH::Scalar, T> && std::is_same_v<typename DR::Scalar, T> &&
                    std::is_same_v<typename DZ::Scalar, T>,
                "keel::correct_sequential: H, r_diag and z must have the estimate's scalar type");
}

}  // namespace detail

/// \brief Time update \f$ x^- = F x,\; P^- = F P F^T + Q \f$ (Kalman, "A New Approach to Linear Filtering
/// and Prediction Problems", 1960). The result is exactly symmetric; Q is taken as symmetric (the vectorized path
/// averages the two triangles of the sum, the scalar kernels of targets without SIMD read Q's lower triangle).
/// \returns ok, non_finite (an input or the result is not finite), negative_variance (Q or P has a negative
/// diagonal entry) or not_positive_definite (P or Q is indefinite and the result has a negative diagonal entry);
/// on any non-ok status `est` is unchanged.
template <typename T, int N, typename DF, typename DQ>
[[nodiscard]] Status predict(Gaussian<T, N>& est, const Eigen::MatrixBase<DF>& f,
                             const Eigen::MatrixBase<DQ>& q) noexcept {
  detail::check_predict_dims<T, N, DF, DQ>();
  const auto& fm = f.eval();
  const auto& qm = q.eval();
  if (detail::diagonal_has_negative(est.cov) || detail::diagonal_has_negative(qm)) return Status::negative_variance;
  // Every entry of x, P, F and Q reaches the results (the products sum over all their terms, and 0·NaN, 0·Inf and
  // Inf − Inf are NaN), so the finiteness check of the results below covers the inputs.
  Eigen::Matrix<T, N, 1> x;
  x.noalias() = fm * est.mean;
  Eigen::Matrix<T, N, N> p;
  if (!detail::congruence_plus(fm, est.cov, qm, p) || !detail::all_finite(x)) return Status::non_finite;
  if (!detail::diagonal_nonnegative(p)) return Status::not_positive_definite;
  est.mean = x;
  detail::copy_matrix(est.cov, p);
  return Status::ok;
}

/// \brief Time update with a control input, for every estimate type E (Gaussian, SqrtGaussian, UdGaussian):
/// \f$ x^- = F x + B u \f$ and the covariance (or its factor) propagated by `predict(est, F, Q)` of that type.
/// \returns as predict(est, F, Q); also non_finite when B or u is not finite.
template <template <typename, int> class E, typename T, int N, typename DF, typename DB, typename DU, typename DQ>
[[nodiscard]] Status predict(E<T, N>& est, const Eigen::MatrixBase<DF>& f, const Eigen::MatrixBase<DB>& b,
                             const Eigen::MatrixBase<DU>& u, const Eigen::MatrixBase<DQ>& q) noexcept {
  static_assert(detail::cols_v<DU> == 1 && detail::is_fixed_size<DU>(),
                "keel::predict: u must be a fixed-size column vector");
  static_assert(detail::rows_v<DB> == N, "keel::predict: B must have N rows, N the state dimension");
  static_assert(detail::cols_v<DB> == detail::rows_v<DU>,
                "keel::predict: B must have as many columns as u has entries");
  static_assert(std::is_same_v<typename DB::Scalar, T> && std::is_same_v<typename DU::Scalar, T>,
                "keel::predict: B and u must have the estimate's scalar type");
  const auto& bm = b.eval();
  const auto& um = u.eval();
  if (!detail::all_finite(bm) || !detail::all_finite(um)) return Status::non_finite;
  E<T, N> next = est;
  const Status s = predict(next, f, q);
  if (s != Status::ok) return s;
  next.mean.noalias() += bm * um;
  if (!detail::all_finite(next.mean)) return Status::non_finite;
  est = next;
  return Status::ok;
}

/// \brief Measurement update (Kalman, 1960) with the innovation covariance factored (square-root-free Cholesky),
/// never inverted: \f$ y = z - Hx,\; S = HPH^T + R = LDL^T,\; K = PH^T S^{-1},\; x^+ = x + Ky \f$, and by
/// default the Joseph form \f$ P^+ = (I-KH)P(I-KH)^T + KRK^T \f$ (Bucy & Joseph, "Filtering for Stochastic
/// Processes with Applications to Guidance", 1968), which stays symmetric positive semi-definite for any gain
/// (evaluated as in detail::joseph_covariance); with `standard_form`, \f$ P^+ = P - K H P \f$.
/// NIS \f$ = y^T S^{-1} y = \|D^{-1/2} L^{-1}y\|^2 \f$.
/// \param gate measurements whose NIS exceeds the gate's threshold are rejected (Status::gated).
/// \returns Innovation with status ok, non_finite, negative_variance (R or P), not_positive_definite
/// (S not factorable, or P⁺ lost its positive diagonal) or gated; on any non-ok status `est` is unchanged.
template <typename T, int N, typename DH, typename DR, typename DZ, typename Form = joseph_form_t>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct(Gaussian<T, N>& est, const Eigen::MatrixBase<DH>& h,
                                                           const Eigen::MatrixBase<DR>& r,
                                                           const Eigen::MatrixBase<DZ>& z, Form form = Form{},
                                                           const Gate<T>& gate = Gate<T>{}) noexcept {
  static_assert(std::is_same_v<Form, joseph_form_t> || std::is_same_v<Form, standard_form_t>,
                "keel::correct: the form must be keel::joseph_form or keel::standard_form");
  detail::check_correct_dims<T, N, DH, DR, DZ>();
  constexpr int M = detail::rows_v<DZ>;
  const auto& hm = h.eval();  // a reference when H is already a plain matrix: no copy on the stack
  const auto& rm = r.eval();
  Eigen::Matrix<T, M, 1> y = z;
  y.noalias() -= hm * est.mean;
  Eigen::Matrix<T, N, M> pht;
  Eigen::Matrix<T, N, M> k;
  Innovation<T, M> inn = detail::innovate_and_gain<T, N, M>(est, hm, rm, y, gate, pht, k);
  if (inn.status != Status::ok) return inn;
  inn.status = detail::apply_gain(est, inn.cov, inn.residual, pht, k, form);
  return inn;
}

/// \brief Gated measurement update in Joseph form: `correct(est, H, R, z, joseph_form, gate)`.
template <typename T, int N, typename DH, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct(Gaussian<T, N>& est, const Eigen::MatrixBase<DH>& h,
                                                           const Eigen::MatrixBase<DR>& r,
                                                           const Eigen::MatrixBase<DZ>& z,
                                                           const Gate<T>& gate) noexcept {
  return correct(est, h, r, z, joseph_form, gate);
}

/// \brief Measurement update with a caller-supplied gain K (a precomputed steady-state gain, a
/// deliberately detuned or consider gain), always in Joseph form, which is the covariance of the
/// estimator \f$ x^+ = x + K(z - Hx) \f$ for any K (Bucy & Joseph, 1968).
/// The innovation (residual, S, NIS) is reported and gated as in correct().
/// \returns as correct(); also non_finite when K is not finite.
template <typename T, int N, typename DH, typename DR, typename DZ, typename DK>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct_with_gain(
    Gaussian<T, N>& est, const Eigen::MatrixBase<DH>& h, const Eigen::MatrixBase<DR>& r,
    const Eigen::MatrixBase<DZ>& z, const Eigen::MatrixBase<DK>& gain, const Gate<T>& gate = Gate<T>{}) noexcept {
  detail::check_correct_dims<T, N, DH, DR, DZ>();
  constexpr int M = detail::rows_v<DZ>;
  static_assert(detail::rows_v<DK> == N && detail::cols_v<DK> == M,
                "keel::correct_with_gain: K must be N×M (N states, M measurement entries)");
  static_assert(std::is_same_v<typename DK::Scalar, T>, "keel::correct_with_gain: K must have the estimate's scalar type");
  const auto& hm = h.eval();
  const auto& rm = r.eval();
  const Eigen::Matrix<T, N, M> k = gain;
  if (!detail::all_finite(k)) {
    Innovation<T, M> bad;
    bad.status = Status::non_finite;
    return bad;
  }
  Eigen::Matrix<T, N, M> pht;
  detail::Ldl<T, M> l;
  Innovation<T, M> inn = detail::innovate<T, N, M>(est, hm, rm, z.eval(), gate, pht, l);
  if (inn.status != Status::ok) return inn;
  inn.status = detail::apply_gain(est, inn.cov, inn.residual, pht, k, joseph_form);
  return inn;
}

/// \brief Sequential scalar measurement update for a diagonal R = diag(r): one scalar correction per row of H,
/// no matrix factorization or inverse (the rows are processed in order; the result equals the vector update
/// because the measurement noises are uncorrelated). For row i with \f$ h = H_i,\; b = P h^T \f$:
/// \f$ s = h b + r_i,\; k = b / s,\; x \leftarrow x + k (z_i - h x) \f$ and the Joseph form in O(N²), expanded
/// as in correct(): \f$ P \leftarrow P - k b^T - w k^T,\ w = b - k s \f$.
/// The reported NIS is \f$ \sum_i y_i^2 / s_i \f$, which equals \f$ y^T S^{-1} y \f$ of the joint update
/// (the sequential innovations are the Cholesky-whitened joint innovation), so the gate means the same.
/// The reported residual and covariance are those of the joint update, z − Hx and HPHᵀ + R, at the prior.
/// \returns Innovation with status ok, non_finite, negative_variance (r or P), not_positive_definite (a scalar
/// innovation variance at or below rounding level) or gated; on any non-ok status `est` is unchanged.
template <typename T, int N, typename DH, typename DR, typename DZ>
[[nodiscard]] Innovation<T, detail::rows_v<DZ>> correct_sequential(
    Gaussian<T, N>& est, const Eigen::MatrixBase<DH>& h, const Eigen::MatrixBase<DR>& r_diag,
    const Eigen::MatrixBase<DZ>& z, const Gate<T>& gate = Gate<T>{}) noexcept {
  detail::check_sequential_dims<T, N, DH, DR, DZ>();
  constexpr int M = detail::rows_v<DZ>;
  const Eigen::Matrix<T, M, N> hm = h;
  const Eigen::Matrix<T, M, 1> r = r_diag;
  const Eigen::Matrix<T, M, 1> zm = z;
  Innovation<T, M> inn;
  if (!detail::all_finite(est.mean) || !detail::all_finite(est.cov) || !detail::all_finite(hm) ||
      !detail::all_finite(r) || !detail::all_finite(zm)) {
    inn.status = Status::non_finite;
    return inn;
  }
  if (!detail::diagonal_nonnegative(est.cov) || !(r.minCoeff() >= T(0))) {
    inn.status = Status::negative_variance;
    return inn;
  }
  inn.residual = zm;
  inn.residual.noalias() -= hm * est.mean;
  {
    Eigen::Matrix<T, N, M> pht;
    pht.noalias() = est.cov * hm.transpose();
    inn.cov.noalias() = hm * pht;
    inn.cov.diagonal() += r;
    detail::symmetrize(inn.cov);
  }
  if (detail::innovation_overflowed(inn)) return inn;
  Eigen::Matrix<T, N, 1> x = est.mean;
  Eigen::Matrix<T, N, N> p = est.cov;
  Eigen::Matrix<T, N, 1> b;
  Eigen::Matrix<T, N, 1> k;
  Eigen::Matrix<T, N, 1> c;
  T nis = T(0);
  for (int i = 0; i < M; ++i) {
    const auto hi = hm.row(i);
    b.noalias() = p * hi.transpose();
    const T s = hi.dot(b) + r(i);
    // Same relative floor as the Cholesky pivot of the joint S (the sequential s_i are its pivots).
    if (!(s > detail::pivot_floor_factor<T, M>() * inn.cov(i, i)) || !detail::is_finite(s)) {
      inn.status = detail::is_finite(s) ? Status::not_positive_definite : Status::non_finite;
      return inn;
    }
    const T yi = zm(i) - hi.dot(x);
    k = b / s;
    nis += yi * yi / s;
    x += k * yi;
    c = b - k * s;
    p.noalias() -= k * b.transpose();
    p.noalias() -= c * k.transpose();
    detail::symmetrize(p);
  }
  inn.nis = nis;
  if (!detail::is_finite(nis) || !detail::all_finite(x) || !detail::all_finite(p)) {
    inn.status = Status::non_finite;
    return inn;
  }
  if (!gate.accepts(nis)) {
    inn.status = Status::gated;
    return inn;
  }
  if (!detail::diagonal_nonnegative(p)) {
    inn.status = Status::not_positive_definite;
    return inn;
  }
  est.mean = x;
  est.cov = p;
  inn.status = Status::ok;
  return inn;
}

}  // namespace keel
