#pragma once
// Square-root (sqrt.hpp) and UD (ud.hpp) filters against the Joseph-form filter (linear.hpp) over 100-step
// seeded runs of well-conditioned random problems; each size is run from its own translation unit
// (factored_equivalence_*_test.cpp) so that the two cores compile them in parallel.
#include <doctest/doctest.h>

#include "factored_problem.hpp"

namespace keel_test {

// Tolerance of the equivalence runs. Each step is O(10) dependent rounding operations on quantities whose
// condition numbers are bounded by construction (κ(P0), κ(Q), κ(R) ≤ 41, see random_spd), and the filter of a
// stable, observable system is exponentially stable, so an error made at one step decays in the following
// ones instead of accumulating (Anderson & Moore, "Optimal Filtering", 1979, sec. 4.4; from memory): the error
// over 100 steps stays at the one-step level, which 1e4·ε bounds with margin (as in linear_test.cpp).
template <typename T>
double tol_run() {
  return static_cast<double>(eps_times<T>(1e4));
}

struct Worst {
  double mean = 0;
  double cov = 0;
  double nis = 0;
  void add(double m, double c, double n) {
    mean = std::max(mean, m);
    cov = std::max(cov, c);
    nis = std::max(nis, n);
  }
};

// One seeded run: truth simulated in double; every form filters the same measurements. Vector updates
// (sqrt QR array, UD whitened) are compared with the Joseph correct; scalar updates (Potter, Bierman) with the
// conventional correct_sequential, both with R = diag(r_diag) for the scalar ones.
template <typename T, int N, int M>
void equivalence_run(unsigned seed, Worst& vec, Worst& seq) {
  const auto run = make_run<T, N, M>(seed);
  std::mt19937 rng(seed + 1000);
  keel::Gaussian<T, N> joseph;
  joseph.mean = run.x0;
  joseph.cov = run.p0;
  keel::SqrtGaussian<T, N> sq;
  keel::UdGaussian<T, N> ud;
  REQUIRE(keel::to_sqrt(joseph, sq) == keel::Status::ok);
  REQUIRE(keel::to_ud(joseph, ud) == keel::Status::ok);
  auto joseph_seq = joseph;
  auto potter = sq;
  auto bierman = ud;
  Eigen::Matrix<double, N, 1> truth = run.x0.template cast<double>();
  const Eigen::Matrix<double, N, N> lq = run.q.template cast<double>().llt().matrixL();
  const Eigen::Matrix<double, M, M> lr = run.r.template cast<double>().llt().matrixL();
  for (int step = 0; step < 100; ++step) {
    truth = run.f.template cast<double>() * truth + lq * random_matrix<double, N, 1>(rng);
    const Eigen::Matrix<T, M, 1> z =
        (run.h.template cast<double>() * truth + lr * random_matrix<double, M, 1>(rng)).template cast<T>();
    REQUIRE(keel::predict(joseph, run.f, run.q) == keel::Status::ok);
    REQUIRE(keel::predict(sq, run.f, run.q) == keel::Status::ok);
    REQUIRE(keel::predict(ud, run.f, run.q) == keel::Status::ok);
    REQUIRE(keel::predict(joseph_seq, run.f, run.q) == keel::Status::ok);
    REQUIRE(keel::predict(potter, run.f, run.q) == keel::Status::ok);
    REQUIRE(keel::predict(bierman, run.f, run.q) == keel::Status::ok);
    const auto ij = keel::correct(joseph, run.h, run.r, z);
    const auto is = keel::correct(sq, run.h, run.r, z);
    const auto iu = keel::correct(ud, run.h, run.r, z);
    const auto ijs = keel::correct_sequential(joseph_seq, run.h, run.r_diag, z);
    const auto ip = keel::correct_sequential(potter, run.h, run.r_diag, z);
    const auto ib = keel::correct_sequential(bierman, run.h, run.r_diag, z);
    REQUIRE(ij.ok());
    REQUIRE(is.ok());
    REQUIRE(iu.ok());
    REQUIRE(ijs.ok());
    REQUIRE(ip.ok());
    REQUIRE(ib.ok());
    const auto pj = cov_in_double(joseph);
    const auto pjs = cov_in_double(joseph_seq);
    const double nis_scale = 1.0 + static_cast<double>(ij.nis);
    vec.add(std::max(rel_error(sq.mean, joseph.mean), rel_error(ud.mean, joseph.mean)),
            std::max(rel_error(cov_in_double(sq), pj), rel_error(cov_in_double(ud), pj)),
            std::max(std::abs(double(is.nis) - double(ij.nis)), std::abs(double(iu.nis) - double(ij.nis))) / nis_scale);
    seq.add(std::max(rel_error(potter.mean, joseph_seq.mean), rel_error(bierman.mean, joseph_seq.mean)),
            std::max(rel_error(cov_in_double(potter), pjs), rel_error(cov_in_double(bierman), pjs)),
            std::max(std::abs(double(ip.nis) - double(ijs.nis)), std::abs(double(ib.nis) - double(ijs.nis))) /
                (1.0 + static_cast<double>(ijs.nis)));
    // The innovation reports mean the same in every form.
    CHECK(rel_error(is.residual, ij.residual) < tol_run<T>());
    CHECK(rel_error(iu.cov, ij.cov) < tol_run<T>());
    CHECK(rel_error(ip.cov, (ijs.cov)) < tol_run<T>());
  }
  check_structure(sq);
  check_structure(ud);
  check_structure(potter);
  check_structure(bierman);
}

template <typename T, int N, int M>
void equivalence(unsigned seeds) {
  Worst vec;
  Worst seq;
  for (unsigned seed = 0; seed < seeds; ++seed) equivalence_run<T, N, M>(seed, vec, seq);
  MESSAGE(N << "x" << M << std::string(std::is_same_v<T, float> ? " float" : " double") << ": worst over " << seeds
            << " runs of 100 steps; vector updates mean " << vec.mean << " cov " << vec.cov << " nis " << vec.nis
            << "; scalar updates mean " << seq.mean << " cov " << seq.cov << " nis " << seq.nis);
  CHECK(vec.mean < tol_run<T>());
  CHECK(vec.cov < tol_run<T>());
  CHECK(vec.nis < tol_run<T>());
  CHECK(seq.mean < tol_run<T>());
  CHECK(seq.cov < tol_run<T>());
  CHECK(seq.nis < tol_run<T>());
}

}  // namespace keel_test

