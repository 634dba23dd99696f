// expect-message: keel::correct: H, R and z must have the estimate's scalar type
#include <keel/linear.hpp>
int main() {
  keel::Gaussian<float, 2> est;
  const Eigen::Matrix<double, 1, 2> h = Eigen::Matrix<double, 1, 2>::Zero();
  const Eigen::Matrix<double, 1, 1> r = Eigen::Matrix<double, 1, 1>::Identity();
  const Eigen::Matrix<double, 1, 1> z = Eigen::Matrix<double, 1, 1>::Zero();
  return keel::correct(est, h, r, z).ok() ? 0 : 1;
}
