// The README's bad-input table, generated and checked here. For each kernel and each class of bad input it
// records the Status returned (float and double must agree), and checks that every non-ok call left the
// estimate (or the output) bit-for-bit unchanged and every ok call produced a finite result. The test fails
// when README.md's table differs from the generated one; KEEL_UPDATE_README=1 rewrites it in place.
#include <cstdlib>
#include <fstream>
#include <functional>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include <doctest/doctest.h>

#include <keel/keel.hpp>

#include "support.hpp"

using keel::Status;
using keel_test::same_bits;

namespace {

enum Bad : int {
  mean_bad, cov_bad, cov_negative, cov_indefinite, model_bad, noise_bad, noise_negative, noise_indefinite,
  z_bad, singular, outlier, overflow, bad_count
};

// Column headers and what each class does to the inputs (the legend printed under the table).
const char* const header[bad_count] = {"x̂ NaN", "P Inf", "P₁₁ < 0", "P indefinite", "model NaN", "noise NaN",
                                        "noise < 0", "noise indefinite", "z NaN", "S singular", "outlier",
                                        "overflow"};
const char* const legend[bad_count] = {
    "a NaN in the mean",
    "an Inf in the covariance (or in its factor: U for UD, L for square root)",
    "a negative variance on the covariance's diagonal (d < 0 for UD; a Cholesky factor has no sign to get wrong)",
    "a symmetric covariance with a non-negative diagonal but a negative eigenvalue (P₁₀ = 2, P₀₀ = P₁₁ = 1; a "
    "factored estimate cannot hold one); for the smoother, a predicted covariance",
    "a NaN in F, H (or the nonlinear model's matrix), the smoother's F or discretize's A",
    "a NaN in Q or R (Q_c for discretize)",
    "a negative variance on the diagonal of Q or R (Q_c for discretize)",
    "Q and R symmetric with a non-negative diagonal but indefinite",
    "a NaN in the measurement",
    "H = 0 and R = 0: the innovation covariance S is zero",
    "a measurement 100 σ away, with the gate at the 99.9 % chi-square point (13.8 for 2 dof)",
    "finite inputs whose result overflows (x̂₀ = −max and z₀ = max; F₀₀ = √max; a smoother gain of 250·max; "
    "A = 10⁴/dt·I)"};

template <typename T>
struct Inputs {
  keel::Gaussian<T, 2> est;
  Eigen::Matrix<T, 2, 2> f;
  Eigen::Matrix<T, 2, 1> b = Eigen::Matrix<T, 2, 1>(T(0), T(1));
  Eigen::Matrix<T, 1, 1> u = Eigen::Matrix<T, 1, 1>::Constant(T(0.5));
  Eigen::Matrix<T, 2, 2> q = T(0.01) * Eigen::Matrix<T, 2, 2>::Identity();
  Eigen::Matrix<T, 2, 2> h = Eigen::Matrix<T, 2, 2>::Identity();
  Eigen::Matrix<T, 2, 2> r = T(0.1) * Eigen::Matrix<T, 2, 2>::Identity();
  Eigen::Matrix<T, 2, 1> z = Eigen::Matrix<T, 2, 1>(T(1.1), T(-0.9));
  // χ²(2) 99.9 % point (chi2_quantile is checked against SciPy in chi2_test.cpp).
  keel::Gate<T> gate{static_cast<T>(keel::chi2_quantile(2, 0.999))};
};

template <typename T>
Inputs<T> inputs(int c) {
  const T nan = std::numeric_limits<T>::quiet_NaN();
  const T inf = std::numeric_limits<T>::infinity();
  const T mx = std::numeric_limits<T>::max();
  Inputs<T> in;
  in.est.mean << T(1), T(-1);
  in.est.cov << T(2), T(0.5), T(0.5), T(1);
  in.f << T(1), T(0.1), T(0), T(1);
  switch (c) {
    case mean_bad: in.est.mean(0) = nan; break;
    case cov_bad: in.est.cov(0, 1) = in.est.cov(1, 0) = inf; break;
    case cov_negative: in.est.cov(1, 1) = T(-1); break;
    case cov_indefinite: in.est.cov << T(1), T(2), T(2), T(1); break;
    case model_bad: in.f(0, 1) = nan; in.h(1, 0) = nan; break;
    case noise_bad: in.q(0, 0) = nan; in.r(0, 0) = nan; break;
    case noise_negative: in.q(1, 1) = T(-0.01); in.r(1, 1) = T(-0.1); break;
    case noise_indefinite:
      in.q << T(0.01), T(0.02), T(0.02), T(0.01);
      in.r << T(0.1), T(0.2), T(0.2), T(0.1);
      break;
    case z_bad: in.z(1) = nan; break;
    case singular: in.h.setZero(); in.r.setZero(); break;
    case outlier: in.z << T(100), T(-100); break;  // ≈ 100 σ: y ≈ (99, −99), S ≈ diag(2.1, 1.1)
    case overflow:
      in.est.mean(0) = -mx;
      in.z(0) = mx;
      in.f(0, 0) = std::sqrt(mx);
      break;
    default: break;
  }
  return in;
}

// What a row checks about the object it changed: unchanged bits on non-ok, a finite result on ok.
template <typename T, int N>
bool finite_estimate(const keel::Gaussian<T, N>& e) {
  return e.mean.allFinite() && e.cov.allFinite();
}
template <typename T, int N>
bool finite_estimate(const keel::SqrtGaussian<T, N>& e) {
  return e.mean.allFinite() && e.sqrt_cov.allFinite();
}
template <typename T, int N>
bool finite_estimate(const keel::UdGaussian<T, N>& e) {
  return e.mean.allFinite() && e.u.allFinite() && e.d.allFinite();
}

struct Verdict {
  std::optional<Status> status;  // nullopt: the class does not apply to this kernel
  bool contract_kept = true;
};

template <typename E>
Verdict judge(Status s, const E& before, const E& after) {
  return {s, s == Status::ok ? finite_estimate(after) : same_bits(before, after)};
}

// Factored versions of the (edited) conventional estimate: built from the clean one, then the class's edit is
// made on the factor itself.
template <typename T>
keel::SqrtGaussian<T, 2> sqrt_of(const Inputs<T>& in, int c) {
  keel::SqrtGaussian<T, 2> s;
  s.mean = in.est.mean;
  s.sqrt_cov << T(1.4142135), T(0), T(0.35355339), T(0.93541435);  // ≈ chol([[2, .5], [.5, 1]])
  if (c == cov_bad) s.sqrt_cov(1, 0) = std::numeric_limits<T>::infinity();
  if (c == overflow) s.mean(0) = -std::numeric_limits<T>::max();
  return s;
}
template <typename T>
keel::UdGaussian<T, 2> ud_of(const Inputs<T>& in, int c) {
  keel::UdGaussian<T, 2> s;
  s.mean = in.est.mean;
  s.u << T(1), T(0.5), T(0), T(1);  // U D Uᵀ = [[2, .5], [.5, 1]] with d = (1.75, 1)
  s.d << T(1.75), T(1);
  if (c == cov_bad) s.u(0, 1) = std::numeric_limits<T>::infinity();
  if (c == cov_negative) s.d(1) = T(-1);
  if (c == overflow) s.mean(0) = -std::numeric_limits<T>::max();
  return s;
}

template <typename T>
struct LinearModel {  // x ↦ A x: the nonlinear kernels' view of a matrix, with its Jacobian
  Eigen::Matrix<T, 2, 2> a;
  template <typename S>
  Eigen::Matrix<S, 2, 1> operator()(const Eigen::Matrix<S, 2, 1>& x) const noexcept {
    return a.template cast<S>() * x;
  }
  Eigen::Matrix<T, 2, 2> jacobian(const Eigen::Matrix<T, 2, 1>&) const noexcept { return a; }
};

// The manifold kernels' view of the same inputs: heading θ on So2 and one plain coordinate, (θ, v) = x̂, with P
// as the tangent covariance; the matrix models act on (θ, v) and their tangent Jacobian is the matrix itself.
template <typename T>
using Planar = keel::Compound<keel::So2<T>, keel::Euclidean<T, 1>>;
template <typename T>
keel::ManifoldGaussian<Planar<T>> manifold_of(const Inputs<T>& in) {
  keel::ManifoldGaussian<Planar<T>> m;
  m.mean = typename Planar<T>::Mean(in.est.mean(0), Eigen::Matrix<T, 1, 1>(in.est.mean(1)));
  m.cov = in.est.cov;
  return m;
}
template <typename T>
Eigen::Matrix<T, 2, 1> as_vector(const typename Planar<T>::Mean& x) {
  return Eigen::Matrix<T, 2, 1>(std::get<0>(x), std::get<1>(x)(0));
}
template <typename T>
struct PlanarMotion {  // (θ, v) ↦ A (θ, v), θ wrapped by the space
  Eigen::Matrix<T, 2, 2> a;
  typename Planar<T>::Mean operator()(const typename Planar<T>::Mean& x) const noexcept {
    const Eigen::Matrix<T, 2, 1> y = a * as_vector<T>(x);
    return typename Planar<T>::Mean(keel::So2<T>::wrap(y(0)), Eigen::Matrix<T, 1, 1>(y(1)));
  }
  Eigen::Matrix<T, 2, 2> jacobian(const typename Planar<T>::Mean&) const noexcept { return a; }
};
template <typename T>
struct PlanarSensor {  // (θ, v) ↦ H (θ, v)
  Eigen::Matrix<T, 2, 2> h;
  Eigen::Matrix<T, 2, 1> operator()(const typename Planar<T>::Mean& x) const noexcept { return h * as_vector<T>(x); }
  Eigen::Matrix<T, 2, 2> jacobian(const typename Planar<T>::Mean&) const noexcept { return h; }
};
template <typename T>
Verdict judge_manifold(Status s, const keel::ManifoldGaussian<Planar<T>>& before,
                       const keel::ManifoldGaussian<Planar<T>>& after) {
  const Eigen::Matrix<T, 2, 1> b = as_vector<T>(before.mean), a = as_vector<T>(after.mean);
  return {s, s == Status::ok ? a.allFinite() && after.cov.allFinite()
                             : same_bits(b, a) && same_bits(before.cov, after.cov)};
}

constexpr bool is_predict_class(int c) {
  return c != z_bad && c != singular && c != outlier;
}
constexpr bool factored_na(int c, bool ud) {  // a factor cannot be indefinite; only UD has a variance sign
  return c == cov_indefinite || (c == cov_negative && !ud);
}

template <typename T>
Status convert(const keel::Gaussian<T, 2>& g, keel::SqrtGaussian<T, 2>& out) {
  return keel::to_sqrt(g, out);
}
template <typename T>
Status convert(const keel::Gaussian<T, 2>& g, keel::UdGaussian<T, 2>& out) {
  return keel::to_ud(g, out);
}

template <typename T>
using Row = std::function<Verdict(int)>;

template <typename T>
std::vector<std::pair<std::string, Row<T>>> rows() {
  using G = keel::Gaussian<T, 2>;
  using V = Eigen::Matrix<T, 2, 1>;
  std::vector<std::pair<std::string, Row<T>>> v;
  auto predict_row = [&](const char* name, auto call) {
    v.emplace_back(name, [call](int c) -> Verdict {
      if (!is_predict_class(c)) return {};
      auto in = inputs<T>(c);
      return call(in, c);
    });
  };
  auto correct_row = [&](const char* name, auto call) {
    v.emplace_back(name, [call](int c) -> Verdict {
      auto in = inputs<T>(c);
      if (c == overflow) in.f(0, 0) = T(1);
      return call(in, c);
    });
  };
  predict_row("`predict`", [](Inputs<T>& in, int) {
    const G before = in.est;
    return judge(keel::predict(in.est, in.f, in.q), before, in.est);
  });
  predict_row("`predict` with control", [](Inputs<T>& in, int) {
    const G before = in.est;
    return judge(keel::predict(in.est, in.f, in.b, in.u, in.q), before, in.est);
  });
  correct_row("`correct` (Joseph)", [](Inputs<T>& in, int) {
    const G before = in.est;
    return judge(keel::correct(in.est, in.h, in.r, in.z, in.gate).status, before, in.est);
  });
  correct_row("`correct` (standard form)", [](Inputs<T>& in, int) {
    const G before = in.est;
    return judge(keel::correct(in.est, in.h, in.r, in.z, keel::standard_form, in.gate).status, before, in.est);
  });
  correct_row("`correct_with_gain`", [](Inputs<T>& in, int) {
    const G before = in.est;
    const Eigen::Matrix<T, 2, 2> k = T(0.5) * Eigen::Matrix<T, 2, 2>::Identity();
    return judge(keel::correct_with_gain(in.est, in.h, in.r, in.z, k, in.gate).status, before, in.est);
  });
  correct_row("`correct_sequential`", [](Inputs<T>& in, int c) {
    if (c == noise_indefinite) return Verdict{};  // takes the diagonal of R only
    const G before = in.est;
    const V r_diag = in.r.diagonal();
    return judge(keel::correct_sequential(in.est, in.h, r_diag, in.z, in.gate).status, before, in.est);
  });
  predict_row("`predict` (SqrtGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, false)) return Verdict{};
    auto s = sqrt_of(in, c);
    const auto before = s;
    return judge(keel::predict(s, in.f, in.q), before, s);
  });
  correct_row("`correct` (SqrtGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, false)) return Verdict{};
    auto s = sqrt_of(in, c);
    const auto before = s;
    return judge(keel::correct(s, in.h, in.r, in.z, in.gate).status, before, s);
  });
  correct_row("`correct_sequential` (SqrtGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, false) || c == noise_indefinite) return Verdict{};
    auto s = sqrt_of(in, c);
    const auto before = s;
    const V r_diag = in.r.diagonal();
    return judge(keel::correct_sequential(s, in.h, r_diag, in.z, in.gate).status, before, s);
  });
  predict_row("`predict` (UdGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, true)) return Verdict{};
    auto s = ud_of(in, c);
    const auto before = s;
    return judge(keel::predict(s, in.f, in.q), before, s);
  });
  correct_row("`correct` (UdGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, true)) return Verdict{};
    auto s = ud_of(in, c);
    const auto before = s;
    return judge(keel::correct(s, in.h, in.r, in.z, in.gate).status, before, s);
  });
  correct_row("`correct_sequential` (UdGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, true) || c == noise_indefinite) return Verdict{};
    auto s = ud_of(in, c);
    const auto before = s;
    const V r_diag = in.r.diagonal();
    return judge(keel::correct_sequential(s, in.h, r_diag, in.z, in.gate).status, before, s);
  });
  predict_row("`ekf::predict`", [](Inputs<T>& in, int) {
    const G before = in.est;
    return judge(keel::ekf::predict(in.est, LinearModel<T>{in.f}, in.q), before, in.est);
  });
  correct_row("`ekf::correct`", [](Inputs<T>& in, int) {
    const G before = in.est;
    return judge(keel::ekf::correct(in.est, LinearModel<T>{in.h}, in.r, in.z, in.gate).status, before, in.est);
  });
  correct_row("`ekf::correct_iterated`", [](Inputs<T>& in, int) {
    const G before = in.est;
    const auto inn = keel::ekf::correct_iterated(in.est, LinearModel<T>{in.h}, in.r, in.z, {}, in.gate);
    return judge(inn.status, before, in.est);
  });
  predict_row("`ukf::predict`", [](Inputs<T>& in, int) {
    const G before = in.est;
    return judge(keel::ukf::predict(in.est, LinearModel<T>{in.f}, in.q, keel::SigmaRule::cubature()), before,
                 in.est);
  });
  correct_row("`ukf::correct`", [](Inputs<T>& in, int) {
    const G before = in.est;
    const auto inn =
        keel::ukf::correct(in.est, LinearModel<T>{in.h}, in.r, in.z, keel::SigmaRule::cubature(), in.gate);
    return judge(inn.status, before, in.est);
  });
  predict_row("`ukf::predict` (SqrtGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, false)) return Verdict{};
    auto s = sqrt_of(in, c);
    const auto before = s;
    return judge(keel::ukf::predict(s, LinearModel<T>{in.f}, in.q, keel::SigmaRule::cubature()), before, s);
  });
  correct_row("`ukf::correct` (SqrtGaussian)", [](Inputs<T>& in, int c) {
    if (factored_na(c, false)) return Verdict{};
    auto s = sqrt_of(in, c);
    const auto before = s;
    const auto inn = keel::ukf::correct(s, LinearModel<T>{in.h}, in.r, in.z, keel::SigmaRule::cubature(), in.gate);
    return judge(inn.status, before, s);
  });
  predict_row("`ekf::predict` (ManifoldGaussian)", [](Inputs<T>& in, int) {
    auto m = manifold_of(in);
    const auto before = m;
    return judge_manifold<T>(keel::ekf::predict(m, PlanarMotion<T>{in.f}, in.q), before, m);
  });
  correct_row("`ekf::correct` (ManifoldGaussian)", [](Inputs<T>& in, int) {
    auto m = manifold_of(in);
    const auto before = m;
    return judge_manifold<T>(keel::ekf::correct(m, PlanarSensor<T>{in.h}, in.r, in.z, in.gate).status, before, m);
  });
  predict_row("`ukf::predict` (ManifoldGaussian)", [](Inputs<T>& in, int) {
    auto m = manifold_of(in);
    const auto before = m;
    return judge_manifold<T>(keel::ukf::predict(m, PlanarMotion<T>{in.f}, in.q, keel::SigmaRule::cubature()), before,
                             m);
  });
  correct_row("`ukf::correct` (ManifoldGaussian)", [](Inputs<T>& in, int) {
    auto m = manifold_of(in);
    const auto before = m;
    const auto inn = keel::ukf::correct(m, PlanarSensor<T>{in.h}, in.r, in.z, keel::SigmaRule::cubature(), in.gate);
    return judge_manifold<T>(inn.status, before, m);
  });
  v.emplace_back("`unscented_transform`", [](int c) -> Verdict {
    if (c != mean_bad && c != cov_bad && c != cov_negative && c != cov_indefinite && c != model_bad &&
        c != overflow)
      return {};
    const auto in = inputs<T>(c);
    const G before = in.est;
    const auto t = keel::unscented_transform(LinearModel<T>{in.f}, in.est, keel::SigmaRule::cubature());
    const bool finite = t.gaussian.mean.allFinite() && t.gaussian.cov.allFinite() && t.cross_cov.allFinite();
    return {t.status, same_bits(before, in.est) && (t.status != Status::ok || finite)};
  });
  v.emplace_back("`rts_smooth`", [](int c) -> Verdict {
    if (c != mean_bad && c != cov_bad && c != cov_negative && c != cov_indefinite && c != model_bad &&
        c != overflow)
      return {};
    const auto clean = inputs<T>(-1);
    const auto in = inputs<T>(c);
    G filtered[2] = {in.est, clean.est};
    G predicted[1] = {clean.est};
    predicted[0].cov = T(3) * clean.est.cov;
    Eigen::Matrix<T, 2, 2> f[1] = {in.f};
    if (c == cov_indefinite) {
      predicted[0].cov = in.est.cov;
      filtered[0] = clean.est;
    }
    if (c == overflow) {  // gain C = P₀|₀ Fᵀ P₁|₀⁻¹ of 250·max
      filtered[0] = clean.est;
      filtered[0].cov = Eigen::Matrix<T, 2, 2>::Identity() * (std::numeric_limits<T>::max() / T(4));
      predicted[0].cov = T(1e-3) * Eigen::Matrix<T, 2, 2>::Identity();
      f[0] = clean.f;
    }
    G out[2];
    const G before[2] = {out[0], out[1]};
    const Status s = keel::rts_smooth(filtered, predicted, f, 2, out);
    const bool kept = s == Status::ok ? finite_estimate(out[0]) && finite_estimate(out[1])
                                      : same_bits(out[0], before[0]) && same_bits(out[1], before[1]);
    return {s, kept};
  });
  v.emplace_back("`discretize`", [](int c) -> Verdict {
    if (c != model_bad && c != noise_bad && c != noise_negative && c != overflow) return {};
    const auto in = inputs<T>(c);
    Eigen::Matrix<T, 2, 2> a;
    a << T(0), T(1), T(0), T(0);
    Eigen::Matrix<T, 2, 2> qc = in.q;
    if (c == model_bad) a(0, 1) = std::numeric_limits<T>::quiet_NaN();
    if (c == overflow) a = T(1e5) * Eigen::Matrix<T, 2, 2>::Identity();  // e^(A dt) = e^(10⁴)·I
    const auto d = keel::discretize(a, qc, T(0.1));
    return {d.status, d.status != Status::ok || (d.F.allFinite() && d.Q.allFinite())};
  });
  v.emplace_back("`expm`", [](int c) -> Verdict {
    if (c != model_bad && c != overflow) return {};
    Eigen::Matrix<T, 2, 2> a = inputs<T>(c).f;
    if (c == overflow) a = T(1e4) * Eigen::Matrix<T, 2, 2>::Identity();
    Eigen::Matrix<T, 2, 2> out = Eigen::Matrix<T, 2, 2>::Constant(T(7));
    const Eigen::Matrix<T, 2, 2> old = out;
    const Status s = keel::expm(a, out);
    return {s, s == Status::ok ? out.allFinite() : same_bits(out, old)};
  });
  auto conversion_row = [&](const char* name, auto make_out) {
    v.emplace_back(name, [make_out](int c) -> Verdict {
      if (c != mean_bad && c != cov_bad && c != cov_negative && c != cov_indefinite) return {};
      const auto in = inputs<T>(c);
      auto out = make_out();
      const auto before = out;
      return judge(convert(in.est, out), before, out);
    });
  };
  conversion_row("`to_sqrt`", [] { return keel::SqrtGaussian<T, 2>{}; });
  conversion_row("`to_ud`", [] { return keel::UdGaussian<T, 2>{}; });
  return v;
}

std::string generate_table() {
  const auto rf = rows<float>();
  const auto rd = rows<double>();
  std::ostringstream t;
  t << "| kernel |";
  for (const char* h : header) t << ' ' << h << " |";
  t << "\n|---|";
  for (int c = 0; c < bad_count; ++c) t << "---|";
  t << '\n';
  for (std::size_t i = 0; i < rf.size(); ++i) {
    t << "| " << rf[i].first << " |";
    for (int c = 0; c < bad_count; ++c) {
      const Verdict vf = rf[i].second(c);
      const Verdict vd = rd[i].second(c);
      CAPTURE(rf[i].first);
      CAPTURE(header[c]);
      CHECK(vf.contract_kept);
      CHECK(vd.contract_kept);
      CHECK(vf.status.has_value() == vd.status.has_value());
      if (vf.status && vd.status) CHECK(*vf.status == *vd.status);
      t << ' ' << (vd.status ? keel::to_string(*vd.status) : "—") << " |";
    }
    t << '\n';
  }
  t << "\nColumns: ";
  for (int c = 0; c < bad_count; ++c) t << (c ? "; " : "") << "**" << header[c] << "** " << legend[c];
  t << ". A dash: the class does not apply to the kernel.\n";
  return t.str();
}

}  // namespace

TEST_CASE("the README's bad-input table is the one the kernels produce") {
  const std::string table = generate_table();
  const std::string path = std::string(KEEL_TEST_DIR) + "/../README.md";
  std::ifstream in(path);
  REQUIRE(in.good());
  std::stringstream ss;
  ss << in.rdbuf();
  std::string readme = ss.str();
  const std::string begin = "<!-- bad-input-table:begin (generated by tests/bad_input_table_test.cpp) -->\n";
  const std::string end = "<!-- bad-input-table:end -->";
  const auto b = readme.find(begin);
  const auto e = readme.find(end);
  REQUIRE_MESSAGE(b != std::string::npos, "README.md lacks the line: " << begin);
  REQUIRE(e != std::string::npos);
  REQUIRE(e > b);
  const std::string current = readme.substr(b + begin.size(), e - b - begin.size());
  if (current != table && std::getenv("KEEL_UPDATE_README") != nullptr) {
    readme.replace(b + begin.size(), e - b - begin.size(), table);
    std::ofstream(path) << readme;
    MESSAGE("README.md's bad-input table rewritten");
    return;
  }
  CHECK_MESSAGE(current == table, "README.md's bad-input table is stale; the generated one:\n"
                                      << table << "\nRerun with KEEL_UPDATE_README=1 to write it.");
}
