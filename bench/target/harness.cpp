// The bare-metal harness (Cortex-M4F / M7 under QEMU's MPS2 boards, or a real chip): generates the test vectors,
// runs the kernel of kernel.cpp over them, and prints through semihosting what tests/target/check.py reads:
//   keel-target status <0 or a Status value>
//   keel-target calibration <counter ticks for 20 000 instructions>
//   keel-target per_step <instructions per step: (kernel loop − empty loop) × scale / steps>
//   keel-target stack <bytes of stack the kernel's calls used, measured by painting>
//   keel-target result <i> <value>
#include <cstdio>

#include "harness.h"
#include "kernels.hpp"

namespace {

using Scalar = keel_target_scalar;
keel_target::TestVectors<Scalar> vectors;

constexpr std::uint32_t kPaint = 0xC5C5C5C5u;
constexpr int kPaintWords = 4096;  // 16 KiB below main's frame

/// The empty loop's callee: the same call, nothing inside (the compiler may not drop the call).
__attribute__((noinline)) int empty_step(const Scalar* fix, const Scalar* ranges, const Scalar* gyro,
                                         const Scalar* accel) {
  __asm volatile("" : : "r"(fix), "r"(ranges), "r"(gyro), "r"(accel) : "memory");
  return 0;
}

std::uint32_t stack_pointer() {
  std::uint32_t sp;
  __asm volatile("mov %0, sp" : "=r"(sp));
  return sp;
}

/// Exactly 2 instructions per iteration (subs, bne), so 10 000 iterations are 20 000 instructions.
__attribute__((noinline)) void known_loop() {
  std::uint32_t n = 10000;
  __asm volatile("1: subs %0, %0, #1\n bne 1b" : "+r"(n) : : "cc");
}

}  // namespace

int main() {
  vectors.generate();
  int status = keel_target_init();

  (void)keel_target_counter();  // starts the default counter
  const std::uint32_t c0 = keel_target_counter();
  known_loop();
  const std::uint32_t calibration = keel_target_counter() - c0;

  // Paint the stack below this frame, run the kernel, then find the deepest word it overwrote.
  volatile std::uint32_t* const top = reinterpret_cast<volatile std::uint32_t*>(stack_pointer());
  for (int i = 1; i <= kPaintWords; ++i) top[-i] = kPaint;
  const std::uint32_t t0 = keel_target_counter();
  for (int k = 0; k < keel_target::kSteps && status == 0; ++k)
    status = keel_target_step(vectors.fix[k].data(), vectors.ranges[k].data(), vectors.gyro[k].data(),
                              vectors.accel[k].data());
  const std::uint32_t t1 = keel_target_counter();
  int used = 0;
  for (int i = kPaintWords; i >= 1; --i)
    if (top[-i] != kPaint) {
      used = i;
      break;
    }
  const std::uint32_t t2 = keel_target_counter();
  for (int k = 0; k < keel_target::kSteps && status == 0; ++k)
    status = empty_step(vectors.fix[k].data(), vectors.ranges[k].data(), vectors.gyro[k].data(),
                        vectors.accel[k].data());
  const std::uint32_t t3 = keel_target_counter();

  Scalar out[KEEL_TARGET_RESULTS];
  if (status == 0) status = keel_target_results(out);
  std::printf("keel-target status %d\n", status);
  std::printf("keel-target calibration %lu\n", static_cast<unsigned long>(calibration));
  const double per_step = (static_cast<double>(t1 - t0) - static_cast<double>(t3 - t2)) *
                          static_cast<double>(keel_target_counter_scale()) / keel_target::kSteps;
  std::printf("keel-target per_step %.0f\n", per_step);
  std::printf("keel-target stack %d\n", used * 4);
  for (int i = 0; i < KEEL_TARGET_RESULTS; ++i)
    std::printf("keel-target result %d %.*g\n", i, sizeof(Scalar) == 4 ? 9 : 17, static_cast<double>(out[i]));
  return status;
}
