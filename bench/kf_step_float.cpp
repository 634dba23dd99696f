#include "kf_step.hpp"

void keel_bench::register_float() {
  register_kf_step<float, 4, 2>();
  register_kf_step<float, 6, 3>();
  register_kf_step<float, 12, 6>();
}
