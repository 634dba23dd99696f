#include "baselines.hpp"

namespace keel_bench {

template <typename T>
void dynamic_step(Eigen::Matrix<T, Eigen::Dynamic, 1>& x, Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& p,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& f,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& q,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& h,
                  const Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>& r, const Eigen::Matrix<T, Eigen::Dynamic, 1>& z) {
  using Mat = Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>;
  x = f * x;
  p = f * p * f.transpose() + q;
  const Mat s = h * p * h.transpose() + r;
  const Mat k = p * h.transpose() * s.llt().solve(Mat::Identity(s.rows(), s.cols()));
  x = x + k * (z - h * x);
  const Mat a = Mat::Identity(p.rows(), p.cols()) - k * h;
  p = a * p * a.transpose() + k * r * k.transpose();
}

template void dynamic_step<float>(Eigen::VectorXf&, Eigen::MatrixXf&, const Eigen::MatrixXf&, const Eigen::MatrixXf&,
                                  const Eigen::MatrixXf&, const Eigen::MatrixXf&, const Eigen::VectorXf&);
template void dynamic_step<double>(Eigen::VectorXd&, Eigen::MatrixXd&, const Eigen::MatrixXd&, const Eigen::MatrixXd&,
                                   const Eigen::MatrixXd&, const Eigen::MatrixXd&, const Eigen::VectorXd&);

}  // namespace keel_bench
