// expect-message: keel::correct: H, R and z must be fixed-size Eigen matrices
#include <keel/linear.hpp>
int main() {
  keel::Gaussian<double, 2> est;
  const Eigen::MatrixXd h = Eigen::MatrixXd::Zero(1, 2);
  const Eigen::MatrixXd r = Eigen::MatrixXd::Identity(1, 1);
  const Eigen::VectorXd z = Eigen::VectorXd::Zero(1);
  return keel::correct(est, h, r, z).ok() ? 0 : 1;
}
