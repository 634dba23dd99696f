// One kernel of kernels.hpp behind the C interface of harness.h, compiled alone so that its object shows exactly
// what the kernel references (no malloc, free, operator new or __cxa_*), and the image's size minus the empty
// image's is the kernel's flash. KEEL_TARGET_FORM names the form (joseph, sqrt, ud, ekf, ukf, mekf, ukf_manifold); without it this is
// the empty kernel of the reference image.
#include "harness.h"

#ifndef KEEL_TARGET_FORM
extern "C" int keel_target_init(void) { return 0; }
extern "C" int keel_target_step(const keel_target_scalar*, const keel_target_scalar*, const keel_target_scalar*,
                                const keel_target_scalar*) {
  return 0;
}
extern "C" int keel_target_results(keel_target_scalar* out) {
  for (int i = 0; i < KEEL_TARGET_RESULTS; ++i) out[i] = 0;
  return 0;
}
#else
#include "kernels.hpp"

namespace {
using Scalar = keel_target_scalar;
keel_target::Kernel<Scalar, keel_target::Form::KEEL_TARGET_FORM> kernel;
using Meas = keel_target::Meas<Scalar>;
}  // namespace

extern "C" int keel_target_init(void) { return kernel.init(); }
extern "C" int keel_target_step(const keel_target_scalar* fix, const keel_target_scalar* ranges,
                                const keel_target_scalar* gyro, const keel_target_scalar* accel) {
  return kernel.step(Eigen::Map<const Meas>(fix), Eigen::Map<const Meas>(ranges), Eigen::Map<const Meas>(gyro),
                     Eigen::Map<const Meas>(accel));
}
extern "C" int keel_target_results(keel_target_scalar* out) { return kernel.results(out); }
#endif
