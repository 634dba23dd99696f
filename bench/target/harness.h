/* The bare-metal harness's interface: the kernel under test (kernel.cpp) and the integrator's cycle-counter hook. */
#ifndef KEEL_TARGET_HARNESS_H
#define KEEL_TARGET_HARNESS_H

#include <stdint.h>

#ifdef KEEL_TARGET_DOUBLE
typedef double keel_target_scalar;
#else
typedef float keel_target_scalar;
#endif

/* Values keel_target_results writes: 6 mean entries (attitude kernels: the attitude's rotation vector and the gyro
 * bias) and the covariance's 21-entry upper triangle. */
#define KEEL_TARGET_RESULTS 27

#ifdef __cplusplus
extern "C" {
#endif

/* The kernel under test. Each returns 0 on success, else a keel::Status value. */
int keel_target_init(void);
/* One step's inputs, each a 3-vector: the position fix (linear kernels), the beacon ranges and altitude (EKF, UKF),
 * the gyro and accelerometer readings (attitude kernels); a kernel reads the ones it needs. */
int keel_target_step(const keel_target_scalar* fix, const keel_target_scalar* ranges, const keel_target_scalar* gyro,
                     const keel_target_scalar* accel);
int keel_target_results(keel_target_scalar* out);

/* A free-running up-counter. The harness's default (a weak symbol) reads SysTick, which under QEMU's -icount
 * shift=0 advances one tick per 40 instructions. On a real Cortex-M4/M7 define it to read DWT->CYCCNT (enable
 * DEMCR.TRCENA and DWT_CTRL.CYCCNTENA once; keel_target_counter_dwt() in startup.c does both) to get cycles. */
uint32_t keel_target_counter(void);
/* Counter ticks per instruction-count unit: 40 for the QEMU SysTick default, 1 for a cycle counter. */
uint32_t keel_target_counter_scale(void);

#ifdef __cplusplus
}
#endif

#endif
