#include "kf_step.hpp"

void keel_bench::register_double() {
  register_kf_step<double, 4, 2>();
  register_kf_step<double, 6, 3>();
  register_kf_step<double, 12, 6>();
}
