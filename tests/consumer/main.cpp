#include <cstdio>

#include <keel/keel.hpp>

int main() {
  keel::Gaussian<double, 2> est;
  const Eigen::Matrix2d f = (Eigen::Matrix2d() << 1, 0.1, 0, 1).finished();
  const Eigen::Matrix2d q = Eigen::Matrix2d::Identity() * 1e-3;
  const Eigen::Matrix<double, 1, 2> h(1, 0);
  const Eigen::Matrix<double, 1, 1> r = Eigen::Matrix<double, 1, 1>::Constant(0.1);
  const Eigen::Matrix<double, 1, 1> z = Eigen::Matrix<double, 1, 1>::Constant(1.0);
  if (keel::predict(est, f, q) != keel::Status::ok) return 1;
  const auto inn = keel::correct(est, h, r, z);
  std::printf("consumer: status %s, NIS %.4f\n", keel::to_string(inn.status), inn.nis);
  return inn.ok() ? 0 : 1;
}
