// expect-message: nodiscard
// Built with -Werror=unused-result: ignoring a kernel's Status is an error.
#include <keel/linear.hpp>
int main() {
  keel::Gaussian<double, 2> est;
  const Eigen::Matrix2d f = Eigen::Matrix2d::Identity();
  keel::predict(est, f, f);
  return 0;
}
