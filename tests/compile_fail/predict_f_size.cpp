// expect-message: keel::predict: F must be N×N, N the state dimension
#include <keel/linear.hpp>
int main() {
  keel::Gaussian<float, 3> est;
  const Eigen::Matrix2f f = Eigen::Matrix2f::Identity();
  const Eigen::Matrix3f q = Eigen::Matrix3f::Identity();
  return keel::predict(est, f, q) == keel::Status::ok ? 0 : 1;
}
