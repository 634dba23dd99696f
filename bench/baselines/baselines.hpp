#pragma once
// Baselines written plainly, as users would without keel: the same predict + Joseph correct step.
#include <Eigen/Dense>

namespace keel_bench {

/// Dynamic-size Eigen matrices allocated on every call; inverse of S via LLT solve against the identity.
template <typename T>
void dynamic_step(Eigen::Matrix<T, Eigen::Dynamic, 1>& x, Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& p,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& f,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& q,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& h,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& r, const Eigen::Matrix<T, Eigen::Dynamic, 1>& z);

/// Fixed-size C arrays and nested loops; Cholesky of S, gain by substitution, Joseph form written out.
template <typename T, int N, int M>
void loops_step(T (&x)[N], T (&p)[N][N], const T (&f)[N][N], const T (&q)[N][N], const T (&h)[M][N],
                const T (&r)[M][M], const T (&z)[M]);

}  // namespace keel_bench
