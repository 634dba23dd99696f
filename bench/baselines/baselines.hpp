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

}  // namespace keel_bench
