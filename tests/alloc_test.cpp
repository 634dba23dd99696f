// Heap-free proof (label `alloc`): every kernel runs with Eigen's run-time allocation guard armed and with a
// counting global allocator (operator new and the C allocator), in float and double. Built with assertions on
// (the guard is compiled out under NDEBUG); the counting hooks work in any build.
#ifndef EIGEN_RUNTIME_NO_MALLOC
#define EIGEN_RUNTIME_NO_MALLOC
#endif
#include <atomic>
#include <cstdlib>
#include <new>

#include <doctest/doctest.h>

#include <keel/keel.hpp>

#include "alloc_probe.hpp"
#include "support.hpp"

std::atomic<long> g_allocations{0};

extern "C" {
void* __libc_malloc(size_t);
void* __libc_calloc(size_t, size_t);
void* __libc_realloc(void*, size_t);
void* malloc(size_t n) {
  g_allocations.fetch_add(1, std::memory_order_relaxed);
  return __libc_malloc(n);
}
void* calloc(size_t n, size_t m) {
  g_allocations.fetch_add(1, std::memory_order_relaxed);
  return __libc_calloc(n, m);
}
void* realloc(void* p, size_t n) {
  g_allocations.fetch_add(1, std::memory_order_relaxed);
  return __libc_realloc(p, n);
}
}
void* operator new(size_t n) {
  g_allocations.fetch_add(1, std::memory_order_relaxed);
  if (void* p = __libc_malloc(n ? n : 1)) return p;
  std::abort();
}
void* operator new[](size_t n) { return operator new(n); }
void operator delete(void* p) noexcept { std::free(p); }
void operator delete[](void* p) noexcept { std::free(p); }
void operator delete(void* p, size_t) noexcept { std::free(p); }
void operator delete[](void* p, size_t) noexcept { std::free(p); }


TEST_CASE("the counting allocator sees allocations (the proof below can fail)") {
  CHECK(allocations_in([] {
          void* volatile p = std::malloc(16);
          std::free(p);
        }) == 1);
  CHECK(allocations_in([] {
          int* volatile p = new int(3);
          delete p;
        }) >= 1);
}

TEST_CASE_TEMPLATE("linear kernels, gating, the NIS monitor and Cholesky up/downdates allocate nothing", T, float, double) {
  std::mt19937 rng(1);
  keel::Gaussian<T, 6> est;
  est.cov = keel_test::random_spd<T, 6>(rng);
  const Eigen::Matrix<T, 6, 6> f = Eigen::Matrix<T, 6, 6>::Identity() + keel_test::random_matrix<T, 6, 6>(rng, 0.1);
  const Eigen::Matrix<T, 6, 6> q = keel_test::random_spd<T, 6>(rng, 0.01, 0.1);
  const Eigen::Matrix<T, 6, 2> b = keel_test::random_matrix<T, 6, 2>(rng);
  const Eigen::Matrix<T, 2, 1> u = keel_test::random_matrix<T, 2, 1>(rng);
  const Eigen::Matrix<T, 3, 6> h = keel_test::random_matrix<T, 3, 6>(rng);
  const Eigen::Matrix<T, 3, 3> r = keel_test::random_spd<T, 3>(rng);
  const Eigen::Matrix<T, 3, 1> rd(T(0.5), T(1), T(2));
  const Eigen::Matrix<T, 3, 1> z = keel_test::random_matrix<T, 3, 1>(rng);
  const Eigen::Matrix<T, 6, 3> k = keel_test::random_matrix<T, 6, 3>(rng, 0.1);
  keel::Status s[9] = {};
  T nees = 0;
  keel::NisMonitor<T, 3, 16> monitor;  // bounds computed here, at init time
  bool recorded = false;
  bool cholesky_ok = false;
  const long n = allocations_in([&] {
    s[0] = keel::predict(est, f, q);
    s[1] = keel::predict(est, f, b, u, q);
    const auto inn = keel::correct(est, h, r, z);
    s[2] = inn.status;
    recorded = monitor.add(inn);
    s[3] = keel::correct(est, h, r, z, keel::standard_form).status;
    s[4] = keel::correct(est, h, r, z, keel::Gate<T>{T(1e6)}).status;
    s[5] = keel::correct_with_gain(est, h, r, z, k).status;
    s[6] = keel::correct_sequential(est, h, rd, z).status;
    s[7] = keel::correct(est, h, r, z, keel::Gate<T>{T(0)}).status;  // gated path
    s[8] = keel::correct(est, h, (-r).eval(), z).status;             // failure path
    nees = keel::nees(est, k.col(0));
    Eigen::Matrix<T, 6, 6> factor = Eigen::Matrix<T, 6, 6>::Identity();
    const Eigen::Matrix<T, 6, 1> v = k.col(1);
    cholesky_ok = keel::cholesky_update(factor, v) == keel::Status::ok &&
                  keel::cholesky_downdate(factor, v) == keel::Status::ok;
  });
  CHECK(n == 0);
  for (int i = 0; i < 7; ++i) CHECK(s[i] == keel::Status::ok);
  CHECK(s[7] == keel::Status::gated);
  CHECK(s[8] == keel::Status::negative_variance);
  CHECK(nees >= T(0));
  CHECK(recorded);
  CHECK(cholesky_ok);
}

TEST_CASE_TEMPLATE("square-root and UD kernels and the conversions allocate nothing", T, float, double) {
  std::mt19937 rng(2);
  keel::Gaussian<T, 6> g;
  g.cov = keel_test::random_spd<T, 6>(rng);
  const Eigen::Matrix<T, 6, 6> f = Eigen::Matrix<T, 6, 6>::Identity() + keel_test::random_matrix<T, 6, 6>(rng, 0.1);
  const Eigen::Matrix<T, 6, 6> q = keel_test::random_spd<T, 6>(rng, 0.01, 0.1);
  const Eigen::Matrix<T, 6, 2> b = keel_test::random_matrix<T, 6, 2>(rng);
  const Eigen::Matrix<T, 2, 1> u = keel_test::random_matrix<T, 2, 1>(rng);
  const Eigen::Matrix<T, 3, 6> h = keel_test::random_matrix<T, 3, 6>(rng);
  const Eigen::Matrix<T, 3, 3> r = keel_test::random_spd<T, 3>(rng);
  const Eigen::Matrix<T, 3, 1> rd(T(0.5), T(1), T(2));
  const Eigen::Matrix<T, 3, 1> z = keel_test::random_matrix<T, 3, 1>(rng);
  keel::SqrtGaussian<T, 6> sq;
  keel::UdGaussian<T, 6> ud;
  keel::Status s[22] = {};
  T nees_sum = 0;
  const long n = allocations_in([&] {
    s[0] = keel::to_sqrt(g, sq);
    s[1] = keel::to_ud(g, ud);
    s[2] = keel::predict(sq, f, q);
    s[3] = keel::predict(ud, f, q);
    s[4] = keel::predict(sq, f, b, u, q);
    s[5] = keel::predict(ud, f, b, u, q);
    s[6] = keel::correct(sq, h, r, z).status;
    s[7] = keel::correct(ud, h, r, z).status;
    s[8] = keel::correct_sequential(sq, h, rd, z).status;
    s[9] = keel::correct_sequential(ud, h, rd, z).status;
    s[10] = keel::to_gaussian(sq, g);
    s[11] = keel::to_gaussian(ud, g);
    s[12] = keel::to_sqrt(ud, sq);
    s[13] = keel::to_ud(sq, ud);
    nees_sum = keel::nees(sq, Eigen::Matrix<T, 6, 1>::Constant(z(0))) + keel::nees(ud, Eigen::Matrix<T, 6, 1>::Zero());
    // gated and failure paths
    s[14] = keel::correct(sq, h, r, z, keel::Gate<T>{T(0)}).status;
    s[15] = keel::correct(ud, h, r, z, keel::Gate<T>{T(0)}).status;
    s[16] = keel::correct_sequential(sq, h, rd, z, keel::Gate<T>{T(0)}).status;
    s[17] = keel::correct_sequential(ud, h, rd, z, keel::Gate<T>{T(0)}).status;
    s[18] = keel::correct(sq, h, (-r).eval(), z).status;
    s[19] = keel::correct(ud, h, (-r).eval(), z).status;
    s[20] = keel::predict(sq, f, (-q).eval());
    s[21] = keel::predict(ud, f, (-q).eval());
  });
  CHECK(n == 0);
  for (int i = 0; i < 14; ++i) CHECK(s[i] == keel::Status::ok);
  for (int i = 14; i < 18; ++i) CHECK(s[i] == keel::Status::gated);
  for (int i = 18; i < 22; ++i) CHECK(s[i] == keel::Status::negative_variance);
  CHECK(nees_sum >= T(0));
}

TEST_CASE_TEMPLATE("expm and discretize allocate nothing", T, float, double) {
  std::mt19937 rng(3);
  const Eigen::Matrix<T, 4, 4> a = keel_test::random_matrix<T, 4, 4>(rng, 2.0);  // degree-13 branch with scaling
  const Eigen::Matrix<T, 4, 4> qc = keel_test::random_spd<T, 4>(rng);
  Eigen::Matrix<T, 4, 4> e;
  keel::Status s = keel::Status::non_finite;
  keel::DiscreteModel<T, 4> model;
  const long n = allocations_in([&] {
    s = keel::expm(a, e);
    model = keel::discretize(a, qc, T(0.1));
  });
  CHECK(n == 0);
  CHECK(s == keel::Status::ok);
  CHECK(model.ok());
}

TEST_CASE_TEMPLATE("the RTS smoother allocates nothing", T, float, double) {
  keel::Gaussian<T, 3> filtered[4];
  keel::Gaussian<T, 3> predicted[3];
  Eigen::Matrix<T, 3, 3> f[3];
  for (int k = 0; k < 3; ++k) {
    f[k] = Eigen::Matrix<T, 3, 3>::Identity();
    predicted[k].cov *= T(2);
  }
  keel::Status s = keel::Status::non_finite;
  const long n = allocations_in([&] { s = keel::rts_smooth(filtered, predicted, f, 4, filtered); });
  CHECK(n == 0);
  CHECK(s == keel::Status::ok);
}
