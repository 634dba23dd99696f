// expect-message: keel::correct: H must have as many rows as z has entries
#include <keel/linear.hpp>
int main() {
  keel::Gaussian<double, 4> est;
  const Eigen::Matrix<double, 3, 4> h = Eigen::Matrix<double, 3, 4>::Zero();
  const Eigen::Matrix2d r = Eigen::Matrix2d::Identity();
  const Eigen::Vector2d z = Eigen::Vector2d::Zero();
  return keel::correct(est, h, r, z).ok() ? 0 : 1;
}
