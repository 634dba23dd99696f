// Bad input for the square-root (sqrt.hpp) and UD (ud.hpp) kernels and the conversions, float and double:
// each class of bad input returns its documented Status and leaves the estimate bit-for-bit unchanged.
#include <doctest/doctest.h>

#include "factored_problem.hpp"

using namespace keel_test;

namespace {

template <typename T>
struct Inputs {
  keel::SqrtGaussian<T, 3> sq;
  keel::UdGaussian<T, 3> ud;
  Eigen::Matrix<T, 3, 3> f;
  Eigen::Matrix<T, 3, 3> q;
  Eigen::Matrix<T, 2, 3> h;
  Eigen::Matrix<T, 2, 2> r;
  Eigen::Matrix<T, 2, 1> r_diag;
  Eigen::Matrix<T, 2, 1> z;
};

template <typename T>
Inputs<T> good_inputs() {
  const auto run = make_run<T, 3, 2>(17);
  Inputs<T> in;
  keel::Gaussian<T, 3> g;
  g.mean = run.x0;
  g.cov = run.p0;
  REQUIRE(keel::to_sqrt(g, in.sq) == keel::Status::ok);
  REQUIRE(keel::to_ud(g, in.ud) == keel::Status::ok);
  in.f = run.f;
  in.q = run.q;
  in.h = run.h;
  in.r_diag = run.r_diag;
  in.r = run.r_diag.asDiagonal();
  in.z = run.h * run.x0;
  return in;
}

enum Kernel : unsigned { predicts = 1, corrects = 2 };

// Runs every factored kernel the case concerns and checks status and bit-for-bit unchanged estimates.
template <typename T>
void expect(const char* what, keel::Status expected, unsigned kernels, const Inputs<T>& in) {
  CAPTURE(std::string(what));
  auto sq = in.sq;
  auto ud = in.ud;
  const auto sq0 = sq;
  const auto ud0 = ud;
  if (kernels & predicts) {
    CHECK(keel::predict(sq, in.f, in.q) == expected);
    CHECK(keel::predict(ud, in.f, in.q) == expected);
    const Eigen::Matrix<T, 3, 1> b = Eigen::Matrix<T, 3, 1>::Ones();
    const Eigen::Matrix<T, 1, 1> u = Eigen::Matrix<T, 1, 1>::Ones();
    CHECK(keel::predict(sq, in.f, b, u, in.q) == expected);
    CHECK(keel::predict(ud, in.f, b, u, in.q) == expected);
  }
  if (kernels & corrects) {
    CHECK(keel::correct(sq, in.h, in.r, in.z).status == expected);
    CHECK(keel::correct(ud, in.h, in.r, in.z).status == expected);
    CHECK(keel::correct_sequential(sq, in.h, in.r_diag, in.z).status == expected);
    CHECK(keel::correct_sequential(ud, in.h, in.r_diag, in.z).status == expected);
  }
  CHECK(same_bits(sq, sq0));
  CHECK(same_bits(ud, ud0));
}

}  // namespace

TEST_CASE_TEMPLATE("factored kernels: bad input returns its Status and leaves the estimate unchanged", T, float,
                   double) {
  using S = keel::Status;
  const T nan = std::numeric_limits<T>::quiet_NaN();
  const T inf = std::numeric_limits<T>::infinity();
  const Inputs<T> good = good_inputs<T>();
  auto with = [&](auto&& edit) {
    Inputs<T> in = good;
    edit(in);
    return in;
  };
  expect("NaN in z", S::non_finite, corrects, with([&](auto& in) { in.z(1) = nan; }));
  expect("Inf in z", S::non_finite, corrects, with([&](auto& in) { in.z(0) = -inf; }));
  expect("NaN in R", S::non_finite, corrects, with([&](auto& in) { in.r(1, 1) = nan; in.r_diag(1) = nan; }));
  expect("Inf in H", S::non_finite, corrects, with([&](auto& in) { in.h(1, 2) = inf; }));
  expect("NaN in F", S::non_finite, predicts, with([&](auto& in) { in.f(0, 1) = nan; }));
  expect("Inf in Q", S::non_finite, predicts, with([&](auto& in) { in.q(2, 2) = inf; }));
  expect("NaN in mean", S::non_finite, predicts | corrects, with([&](auto& in) {
           in.sq.mean(2) = nan;
           in.ud.mean(2) = nan;
         }));
  expect("Inf in the factors", S::non_finite, predicts | corrects, with([&](auto& in) {
           in.sq.sqrt_cov(2, 0) = inf;
           in.ud.u(0, 2) = inf;
         }));
  expect("NaN in d", S::non_finite, predicts | corrects, with([&](auto& in) {
           in.sq.sqrt_cov(1, 1) = nan;
           in.ud.d(1) = nan;
         }));
  expect("negative variance in R", S::negative_variance, corrects, with([&](auto& in) {
           in.r(0, 0) = T(-1);
           in.r_diag(0) = T(-1);
         }));
  expect("negative variance in Q", S::negative_variance, predicts, with([&](auto& in) { in.q(1, 1) = T(-1e-3); }));
  expect("indefinite Q", S::not_positive_definite, predicts, with([&](auto& in) {
           in.q << T(1), T(2), T(0), T(2), T(1), T(0), T(0), T(0), T(1);
         }));
  {
    // A negative d is a negative variance (the square-root factor has no such state: any real S is valid).
    Inputs<T> in = good;
    in.ud.d(0) = T(-0.5);
    auto ud = in.ud;
    CHECK(keel::predict(ud, in.f, in.q) == S::negative_variance);
    CHECK(keel::correct(ud, in.h, in.r, in.z).status == S::negative_variance);
    CHECK(keel::correct_sequential(ud, in.h, in.r_diag, in.z).status == S::negative_variance);
    CHECK(same_bits(ud, in.ud));
  }
  {
    // Indefinite full R: the QR array and the whitening both need its factor.
    Inputs<T> in = good;
    in.r << T(1), T(3), T(3), T(1);
    auto sq = in.sq;
    auto ud = in.ud;
    CHECK(keel::correct(sq, in.h, in.r, in.z).status == S::not_positive_definite);
    CHECK(keel::correct(ud, in.h, in.r, in.z).status == S::not_positive_definite);
    CHECK(same_bits(sq, in.sq));
    CHECK(same_bits(ud, in.ud));
  }
}

TEST_CASE_TEMPLATE("factored kernels: a singular innovation covariance returns not_positive_definite", T, float,
                   double) {
  // States 1 and 2 known exactly (zero factor columns), measured directly with R = 0: HPHᵀ + R = 0.
  keel::SqrtGaussian<T, 3> sq;
  sq.sqrt_cov = Eigen::Matrix<T, 3, 1>(T(1), T(0), T(0)).asDiagonal();
  keel::UdGaussian<T, 3> ud;
  ud.d = Eigen::Matrix<T, 3, 1>(T(1), T(0), T(0));
  Eigen::Matrix<T, 2, 3> h = Eigen::Matrix<T, 2, 3>::Zero();
  h(0, 1) = T(1);
  h(1, 2) = T(1);
  const Eigen::Matrix<T, 2, 2> r = Eigen::Matrix<T, 2, 2>::Zero();
  const Eigen::Matrix<T, 2, 1> r_diag = Eigen::Matrix<T, 2, 1>::Zero();
  const Eigen::Matrix<T, 2, 1> z(T(1), T(2));
  const auto sq0 = sq;
  const auto ud0 = ud;
  const auto inn = keel::correct(sq, h, r, z);
  CHECK(inn.status == keel::Status::not_positive_definite);
  CHECK(inn.nis == std::numeric_limits<T>::infinity());
  CHECK(keel::correct_sequential(sq, h, r_diag, z).status == keel::Status::not_positive_definite);
  CHECK(keel::correct_sequential(ud, h, r_diag, z).status == keel::Status::not_positive_definite);
  CHECK(keel::correct(ud, h, r, z).status == keel::Status::not_positive_definite);  // R = 0 cannot be whitened
  CHECK(same_bits(sq, sq0));
  CHECK(same_bits(ud, ud0));
  // A perfect (R = 0) measurement of a state with variance is fine: its variance becomes exactly zero.
  Eigen::Matrix<T, 1, 3> h1 = Eigen::Matrix<T, 1, 3>::Zero();
  h1(0, 0) = T(1);
  const Eigen::Matrix<T, 1, 1> z1 = Eigen::Matrix<T, 1, 1>::Constant(T(0.5));
  const Eigen::Matrix<T, 1, 1> r0 = Eigen::Matrix<T, 1, 1>::Zero();
  REQUIRE(keel::correct_sequential(sq, h1, r0, z1).ok());
  REQUIRE(keel::correct_sequential(ud, h1, r0, z1).ok());
  CHECK(sq.mean(0) == T(0.5));
  CHECK(ud.mean(0) == T(0.5));
  CHECK(sq.sqrt_cov(0, 0) == T(0));
  CHECK(ud.d(0) == T(0));
}

TEST_CASE_TEMPLATE("factored kernels: overflow returns non_finite; the unread triangle is ignored", T, float, double) {
  const Inputs<T> in = good_inputs<T>();
  auto sq = in.sq;
  auto ud = in.ud;
  const Eigen::Matrix<T, 3, 3> huge = Eigen::Matrix<T, 3, 3>::Identity() * (std::numeric_limits<T>::max() / T(4));
  CHECK(keel::predict(sq, huge, in.q) == keel::Status::non_finite);
  CHECK(keel::predict(ud, huge, in.q) == keel::Status::non_finite);
  CHECK(same_bits(sq, in.sq));
  CHECK(same_bits(ud, in.ud));
  // Kernels read only the lower triangle of sqrt_cov and the strict upper triangle of u (documented):
  // garbage elsewhere does not matter and is not propagated.
  sq.sqrt_cov(0, 2) = std::numeric_limits<T>::quiet_NaN();
  ud.u(2, 0) = std::numeric_limits<T>::quiet_NaN();
  ud.u(1, 1) = T(7);
  REQUIRE(keel::predict(sq, in.f, in.q) == keel::Status::ok);
  REQUIRE(keel::predict(ud, in.f, in.q) == keel::Status::ok);
  auto sq_ref = in.sq;
  auto ud_ref = in.ud;
  REQUIRE(keel::predict(sq_ref, in.f, in.q) == keel::Status::ok);
  REQUIRE(keel::predict(ud_ref, in.f, in.q) == keel::Status::ok);
  CHECK(same_bits(sq, sq_ref));
  CHECK(same_bits(ud, ud_ref));
}

TEST_CASE_TEMPLATE("conversions: bad input returns its Status and leaves the output unchanged", T, float, double) {
  keel::Gaussian<T, 2> g;
  keel::SqrtGaussian<T, 2> s;
  keel::UdGaussian<T, 2> u;
  keel::Gaussian<T, 2> g_out;
  const auto s0 = s;
  const auto u0 = u;
  const auto g0 = g_out;
  g.cov(1, 0) = std::numeric_limits<T>::quiet_NaN();
  CHECK(keel::to_sqrt(g, s) == keel::Status::non_finite);
  CHECK(keel::to_ud(g, u) == keel::Status::non_finite);
  g.cov.setIdentity();
  g.cov(1, 1) = T(-1);
  CHECK(keel::to_sqrt(g, s) == keel::Status::negative_variance);
  CHECK(keel::to_ud(g, u) == keel::Status::negative_variance);
  keel::SqrtGaussian<T, 2> bad_s;
  bad_s.sqrt_cov(1, 0) = std::numeric_limits<T>::infinity();
  CHECK(keel::to_gaussian(bad_s, g_out) == keel::Status::non_finite);
  CHECK(keel::to_ud(bad_s, u) == keel::Status::non_finite);
  keel::UdGaussian<T, 2> bad_u;
  bad_u.d(0) = T(-2);
  CHECK(keel::to_gaussian(bad_u, g_out) == keel::Status::negative_variance);
  CHECK(keel::to_sqrt(bad_u, s) == keel::Status::negative_variance);
  // Singular factors convert exactly: S = [[1, 0], [0, 0]] (S Sᵀ = diag(1, 0)) makes the orthogonal route
  // leave a zero pivot above a nonzero entry, so to_ud falls back to factoring S Sᵀ; S = [[0, 0], [1, 0]]
  // (S Sᵀ = diag(0, 1)) takes the orthogonal route. Both products are small integers: exact in any scalar.
  for (int which = 0; which < 2; ++which) {
    keel::SqrtGaussian<T, 2> singular;
    if (which == 0) singular.sqrt_cov << T(1), T(0), T(0), T(0);
    else singular.sqrt_cov << T(0), T(0), T(1), T(0);
    keel::UdGaussian<T, 2> u_sing;
    REQUIRE(keel::to_ud(singular, u_sing) == keel::Status::ok);
    CHECK(cov_in_double(u_sing) == cov_in_double(singular));
    check_structure(u_sing);
  }
  CHECK(same_bits(s, s0));
  CHECK(same_bits(u, u0));
  CHECK(same_bits(g_out.mean, g0.mean));
  CHECK(same_bits(g_out.cov, g0.cov));
}
