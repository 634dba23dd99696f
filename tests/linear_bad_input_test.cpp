// Bad input for the linear kernels (linear.hpp), float and double: each class of bad input returns its
// documented Status and leaves the estimate bit-for-bit unchanged.
#include <cstring>
#include <vector>

#include <doctest/doctest.h>

#include <keel/linear.hpp>

#include "linear_problem.hpp"

using namespace keel_test;

// ---- bad input: each class returns its Status and leaves the estimate bit-for-bit unchanged ----

namespace {
template <typename T>
struct BadInputCase {
  const char* what;
  keel::Status expected;
  Problem<T, 3, 2> p;
  Eigen::Matrix<T, 2, 1> r_diag;
};

template <typename T>
std::vector<BadInputCase<T>> bad_input_cases() {
  const T nan = std::numeric_limits<T>::quiet_NaN();
  const T inf = std::numeric_limits<T>::infinity();
  const auto base = make_problem<T, 3, 2>(11);
  Eigen::Matrix<T, 2, 1> rd(T(0.5), T(0.25));
  std::vector<BadInputCase<T>> v;
  auto add = [&](const char* what, keel::Status s, auto&& edit) {
    BadInputCase<T> c{what, s, base, rd};
    c.p.r = rd.asDiagonal();
    edit(c);
    v.push_back(c);
  };
  using S = keel::Status;
  add("NaN in z", S::non_finite, [&](auto& c) { c.p.z(1) = nan; });
  add("Inf in z", S::non_finite, [&](auto& c) { c.p.z(0) = inf; });
  add("NaN in R", S::non_finite, [&](auto& c) { c.p.r(1, 1) = nan; c.r_diag(1) = nan; });
  add("Inf in H", S::non_finite, [&](auto& c) { c.p.h(0, 2) = -inf; });
  add("NaN in F", S::non_finite, [&](auto& c) { c.p.f(2, 1) = nan; });
  add("Inf in Q", S::non_finite, [&](auto& c) { c.p.q(0, 0) = inf; });
  add("NaN in mean", S::non_finite, [&](auto& c) { c.p.est.mean(1) = nan; });
  add("Inf in cov", S::non_finite, [&](auto& c) { c.p.est.cov(2, 0) = inf; });
  add("negative variance in R", S::negative_variance, [&](auto& c) { c.p.r(0, 0) = T(-0.5); c.r_diag(0) = T(-0.5); });
  add("negative variance in Q", S::negative_variance, [&](auto& c) { c.p.q(1, 1) = T(-1e-3); });
  add("negative variance in cov", S::negative_variance, [&](auto& c) { c.p.est.cov(0, 0) = T(-1); });
  return v;
}
}  // namespace

TEST_CASE_TEMPLATE("bad input returns its Status and leaves the estimate unchanged", T, float, double) {
  for (const auto& c : bad_input_cases<T>()) {
    CAPTURE(c.what);
    const bool touches_predict = std::strstr(c.what, " F") || std::strstr(c.what, " Q") ||
                                 std::strstr(c.what, "mean") || std::strstr(c.what, "cov");
    const bool touches_correct = !std::strstr(c.what, " F") && !std::strstr(c.what, " Q");
    auto est = c.p.est;
    const auto before = est;
    if (touches_predict) {
      CHECK(keel::predict(est, c.p.f, c.p.q) == c.expected);
      CHECK(same_bits(est, before));
      const Eigen::Matrix<T, 3, 1> b = Eigen::Matrix<T, 3, 1>::Ones();
      const Eigen::Matrix<T, 1, 1> u = Eigen::Matrix<T, 1, 1>::Ones();
      CHECK(keel::predict(est, c.p.f, b, u, c.p.q) == c.expected);
      CHECK(same_bits(est, before));
    }
    if (touches_correct) {
      CHECK(keel::correct(est, c.p.h, c.p.r, c.p.z).status == c.expected);
      CHECK(same_bits(est, before));
      CHECK(keel::correct(est, c.p.h, c.p.r, c.p.z, keel::standard_form).status == c.expected);
      CHECK(same_bits(est, before));
      const Eigen::Matrix<T, 3, 2> k = Eigen::Matrix<T, 3, 2>::Constant(T(0.1));
      CHECK(keel::correct_with_gain(est, c.p.h, c.p.r, c.p.z, k).status == c.expected);
      CHECK(same_bits(est, before));
      CHECK(keel::correct_sequential(est, c.p.h, c.r_diag, c.p.z).status == c.expected);
      CHECK(same_bits(est, before));
    }
  }
}

TEST_CASE_TEMPLATE("non-finite B, u or gain, and overflow of the result, return non_finite", T, float, double) {
  auto p = make_problem<T, 3, 2>(12);
  const auto before = p.est;
  Eigen::Matrix<T, 3, 1> b = Eigen::Matrix<T, 3, 1>::Ones();
  Eigen::Matrix<T, 1, 1> u = Eigen::Matrix<T, 1, 1>::Constant(std::numeric_limits<T>::quiet_NaN());
  CHECK(keel::predict(p.est, p.f, b, u, p.q) == keel::Status::non_finite);
  u(0) = T(1);
  b(1) = std::numeric_limits<T>::infinity();
  CHECK(keel::predict(p.est, p.f, b, u, p.q) == keel::Status::non_finite);
  Eigen::Matrix<T, 3, 2> k = Eigen::Matrix<T, 3, 2>::Zero();
  k(2, 1) = std::numeric_limits<T>::quiet_NaN();
  CHECK(keel::correct_with_gain(p.est, p.h, p.r, p.z, k).status == keel::Status::non_finite);
  // F with entries near the largest finite value: F P Fᵀ overflows to Inf.
  const Eigen::Matrix<T, 3, 3> huge = Eigen::Matrix<T, 3, 3>::Identity() * (std::numeric_limits<T>::max() / T(4));
  CHECK(keel::predict(p.est, huge, p.q) == keel::Status::non_finite);
  CHECK(same_bits(p.est, before));
}

TEST_CASE_TEMPLATE("a singular innovation covariance returns not_positive_definite", T, float, double) {
  // P = diag(1, 0, 0) with H picking the two zero-variance states and R = 0: S = 0 exactly.
  keel::Gaussian<T, 3> est;
  est.cov = Eigen::Matrix<T, 3, 1>(T(1), T(0), T(0)).asDiagonal();
  Eigen::Matrix<T, 2, 3> h = Eigen::Matrix<T, 2, 3>::Zero();
  h(0, 1) = T(1);
  h(1, 2) = T(1);
  const Eigen::Matrix<T, 2, 2> r = Eigen::Matrix<T, 2, 2>::Zero();
  const Eigen::Matrix<T, 2, 1> z(T(1), T(2));
  const auto before = est;
  const auto inn = keel::correct(est, h, r, z);
  CHECK(inn.status == keel::Status::not_positive_definite);
  CHECK(inn.nis == std::numeric_limits<T>::infinity());
  CHECK(same_bits(est, before));
  CHECK(keel::correct_sequential(est, h, Eigen::Matrix<T, 2, 1>::Zero(), z).status ==
        keel::Status::not_positive_definite);
  CHECK(same_bits(est, before));
  // Rank-deficient but nonzero: two identical rows measuring a state with variance 1, R = 0 → S = [[1,1],[1,1]].
  keel::Gaussian<T, 3> est2;
  Eigen::Matrix<T, 2, 3> h2 = Eigen::Matrix<T, 2, 3>::Zero();
  h2(0, 0) = T(1);
  h2(1, 0) = T(1);
  const auto before2 = est2;
  CHECK(keel::correct(est2, h2, r, z).status == keel::Status::not_positive_definite);
  CHECK(same_bits(est2, before2));
  // Indefinite R makes S indefinite.
  Eigen::Matrix<T, 2, 2> r_indef;
  r_indef << T(1), T(3), T(3), T(1);
  CHECK(keel::correct(est2, h, r_indef, z).status == keel::Status::not_positive_definite);
  CHECK(same_bits(est2, before2));
}

TEST_CASE("every Status has a distinct name") {
  using S = keel::Status;
  const S all[] = {S::ok, S::non_finite, S::not_positive_definite, S::negative_variance, S::gated};
  for (S a : all)
    for (S b : all)
      if (a != b) CHECK(std::strcmp(keel::to_string(a), keel::to_string(b)) != 0);
  CHECK(std::strcmp(keel::to_string(S::gated), "gated") == 0);
}
