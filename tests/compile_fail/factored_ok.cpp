// expect-success
// Positive control for the factored forms: the same calls with consistent sizes build.
#include <keel/ud.hpp>
int main() {
  keel::SqrtGaussian<float, 4> s;
  keel::UdGaussian<double, 3> u;
  const Eigen::Matrix4f f = Eigen::Matrix4f::Identity();
  const Eigen::Matrix<float, 2, 4> h = Eigen::Matrix<float, 2, 4>::Zero();
  const Eigen::Matrix2f r = Eigen::Matrix2f::Identity();
  const Eigen::Vector2f z = Eigen::Vector2f::Zero();
  const Eigen::Matrix3d f3 = Eigen::Matrix3d::Identity();
  const Eigen::Matrix<double, 2, 3> h3 = Eigen::Matrix<double, 2, 3>::Zero();
  const Eigen::Vector2d r3 = Eigen::Vector2d::Ones();
  const Eigen::Vector2d z3 = Eigen::Vector2d::Zero();
  if (keel::predict(s, f, f) != keel::Status::ok || keel::predict(u, f3, f3) != keel::Status::ok) return 1;
  return keel::correct(s, h, r, z).ok() && keel::correct_sequential(u, h3, r3, z3).ok() ? 0 : 1;
}
