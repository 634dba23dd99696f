// keel::So3 (manifold.hpp) against SciPy at test time (scipy.spatial.transform.Rotation): the quaternion
// exponential, the composition of rotations (Hamilton product), its logarithm, and rotating a vector.
#include <doctest/doctest.h>

#include <random>
#include <string>
#include <vector>

#include <keel/manifold.hpp>

#include "../support.hpp"

using namespace keel_test;

TEST_CASE_TEMPLATE("So3 exp, composition, log and rotation match scipy.spatial.transform.Rotation", T, float,
                   double) {
  using S = keel::So3<T>;
  using V = Eigen::Matrix<T, 3, 1>;
  std::mt19937 rng(17);
  std::vector<V> a, b, v;
  // Angles from the series region to just below π, random axes.
  for (double angle : {0.0, 1e-9, 1e-5, 3e-3, 0.2, 1.0, 2.0, 3.0, 3.14}) {
    for (int k = 0; k < 3; ++k) {
      Eigen::Vector3d u = random_matrix<double, 3, 1>(rng).normalized();
      a.push_back((angle * u).cast<T>());
      b.push_back(random_matrix<T, 3, 1>(rng, 0.8));
      v.push_back(random_matrix<T, 3, 1>(rng, 2.0));
    }
  }
  std::string input;
  for (size_t i = 0; i < a.size(); ++i) input += "exp\n" + to_text(a[i]);
  for (size_t i = 0; i < a.size(); ++i) input += "compose\n" + to_text(a[i]) + to_text(b[i]) + to_text(v[i]);
  const std::string out = run_python("reference/rotation.py", input);
  REQUIRE(!out.empty());
  size_t pos = 0;
  // Tolerances: both sides round a handful of trigonometric and product operations of size one; 16ε of T
  // absolute covers keel's side (SciPy works in double). The log of a composed rotation near angle π is
  // ill-conditioned in its axis only when the angle is within ~ε of π, which these inputs avoid.
  const double tol = 16 * static_cast<double>(std::numeric_limits<T>::epsilon());
  const auto same_rotation = [](const Eigen::Quaternion<T>& q, const Eigen::Vector4d& ref) {
    const Eigen::Vector4d mine(static_cast<double>(q.w()), static_cast<double>(q.x()), static_cast<double>(q.y()),
                               static_cast<double>(q.z()));
    return std::min((mine - ref).cwiseAbs().maxCoeff(), (mine + ref).cwiseAbs().maxCoeff());
  };
  for (size_t i = 0; i < a.size(); ++i) {
    CAPTURE(i);
    // SciPy: Rotation.from_rotvec(a).as_quat(), reordered to (w, x, y, z).
    CHECK(same_rotation(S::exp(a[i]), from_text<4, 1>(out, pos)) <= tol);
  }
  for (size_t i = 0; i < a.size(); ++i) {
    CAPTURE(i);
    const Eigen::Quaternion<T> c = S::multiply(S::exp(a[i]), S::exp(b[i]));
    // SciPy: (Rotation.from_rotvec(a) * Rotation.from_rotvec(b)).as_quat(), .as_rotvec(), .apply(v).
    CHECK(same_rotation(c, from_text<4, 1>(out, pos)) <= tol);
    CHECK((S::log(c).template cast<double>() - from_text<3, 1>(out, pos)).cwiseAbs().maxCoeff() <= 4 * tol);
    CHECK((S::rotate(c, v[i]).template cast<double>() - from_text<3, 1>(out, pos)).cwiseAbs().maxCoeff() <=
          4 * tol * 2.0 * 3.0);  // |v| ≤ ~6 here: the same relative error on a vector of that length
  }
}
