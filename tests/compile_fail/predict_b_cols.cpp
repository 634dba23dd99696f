// expect-message: keel::predict: B must have as many columns as u has entries
#include <keel/linear.hpp>
int main() {
  keel::Gaussian<double, 2> est;
  const Eigen::Matrix2d f = Eigen::Matrix2d::Identity();
  const Eigen::Matrix<double, 2, 3> b = Eigen::Matrix<double, 2, 3>::Zero();
  const Eigen::Vector2d u = Eigen::Vector2d::Zero();
  return keel::predict(est, f, b, u, f) == keel::Status::ok ? 0 : 1;
}
