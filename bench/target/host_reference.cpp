// The host's run of the Cortex-M kernels on the same test vectors: prints `<form> <scalar> <i> <value>` for every
// form of kernels.hpp in float and double; check.py compares each target image's results against these.
#include <cstdio>

#include "kernels.hpp"

namespace {

template <typename T, keel_target::Form F>
int run(const char* form) {
  keel_target::TestVectors<T> tv;
  tv.generate();
  keel_target::Kernel<T, F> kernel;
  int status = kernel.init();
  for (int k = 0; k < keel_target::kSteps && status == 0; ++k) status = kernel.step(tv.fix[k], tv.ranges[k], tv.gyro[k], tv.accel[k]);
  T out[keel_target::kResults];
  if (status == 0) status = kernel.results(out);
  if (status != 0) {
    std::fprintf(stderr, "%s %s failed with status %d\n", form, sizeof(T) == 4 ? "float" : "double", status);
    return 1;
  }
  for (int i = 0; i < keel_target::kResults; ++i)
    std::printf("%s %s %d %.17g\n", form, sizeof(T) == 4 ? "float" : "double", i, static_cast<double>(out[i]));
  return 0;
}

template <typename T>
int run_all() {
  using keel_target::Form;
  return run<T, Form::joseph>("joseph") + run<T, Form::sqrt>("sqrt") + run<T, Form::ud>("ud") +
         run<T, Form::ekf>("ekf") + run<T, Form::ukf>("ukf") + run<T, Form::mekf>("mekf") +
         run<T, Form::ukf_manifold>("ukf_manifold");
}

}  // namespace

int main() { return run_all<float>() + run_all<double>() == 0 ? 0 : 1; }
