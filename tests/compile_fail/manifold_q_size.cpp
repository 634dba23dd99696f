// expect-message: keel::ekf::predict: Q must be dof×dof (the tangent dimension) with the estimate's scalar type
// A manifold state's Q lives on the tangent space: 6×6 for attitude and gyro bias, not 7×7 (the mean's 4 + 3).
#include <keel/manifold_filter.hpp>
#include <keel/models/attitude.hpp>
int main() {
  keel::ManifoldGaussian<keel::models::AttitudeBias<double>> est;
  const Eigen::Matrix<double, 7, 7> q = Eigen::Matrix<double, 7, 7>::Identity();
  return keel::ekf::predict(est, keel::models::GyroStrapdown{}, q, Eigen::Vector3d::Zero().eval(), 0.01) ==
         keel::Status::ok;
}
