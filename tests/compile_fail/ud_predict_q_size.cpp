// expect-message: keel::predict: Q must be N×N, N the state dimension
#include <keel/ud.hpp>
int main() {
  keel::UdGaussian<double, 3> est;
  const Eigen::Matrix3d f = Eigen::Matrix3d::Identity();
  const Eigen::Matrix2d q = Eigen::Matrix2d::Identity();
  return keel::predict(est, f, q) == keel::Status::ok ? 0 : 1;
}
