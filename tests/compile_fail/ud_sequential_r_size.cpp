// expect-message: keel::correct_sequential: r_diag must have as many entries as z (one variance per row)
#include <keel/ud.hpp>
int main() {
  keel::UdGaussian<double, 2> est;
  const Eigen::Matrix2d h = Eigen::Matrix2d::Identity();
  const Eigen::Vector3d r = Eigen::Vector3d::Ones();
  const Eigen::Vector2d z = Eigen::Vector2d::Zero();
  return keel::correct_sequential(est, h, r, z).ok() ? 0 : 1;
}
