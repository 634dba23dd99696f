// expect-success
// Positive control: the same command line builds a correct program, so a failure above is the static_assert's.
#include <keel/linear.hpp>
int main() {
  keel::Gaussian<double, 4> est;
  const Eigen::Matrix<double, 2, 4> h = Eigen::Matrix<double, 2, 4>::Zero();
  const Eigen::Matrix2d r = Eigen::Matrix2d::Identity();
  const Eigen::Vector2d z = Eigen::Vector2d::Zero();
  const Eigen::Matrix4d f = Eigen::Matrix4d::Identity();
  if (keel::predict(est, f, f) != keel::Status::ok) return 1;
  return keel::correct(est, h, r, z).ok() ? 0 : 1;
}
