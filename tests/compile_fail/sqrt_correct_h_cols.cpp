// expect-message: keel::correct: H must have N columns, N the state dimension
#include <keel/sqrt.hpp>
int main() {
  keel::SqrtGaussian<float, 4> est;
  const Eigen::Matrix<float, 2, 3> h = Eigen::Matrix<float, 2, 3>::Zero();
  const Eigen::Matrix2f r = Eigen::Matrix2f::Identity();
  const Eigen::Vector2f z = Eigen::Vector2f::Zero();
  return keel::correct(est, h, r, z).ok() ? 0 : 1;
}
