// expect-message: keel::ekf::correct: the measurement model must return a vector with as many entries as z
// The accelerometer model returns 3 entries; a 2-entry z is a compile error, not a run-time status.
#include <keel/manifold_filter.hpp>
#include <keel/models/attitude.hpp>
int main() {
  keel::ManifoldGaussian<keel::models::AttitudeBias<double>> est;
  const keel::models::ReferenceDirection<double> gravity{Eigen::Vector3d(0, 0, 9.81)};
  return keel::ekf::correct(est, gravity, Eigen::Matrix2d::Identity(), Eigen::Vector2d::Zero()).ok();
}
