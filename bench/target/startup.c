/* Start-up for the Cortex-M4F/M7 images: vector table, .data copy, .bss zeroing, FPU enable, C++ constructors,
 * then main(); the exit code reaches the emulator through semihosting (SYS_EXIT). Also the default counter hook. */
#include <stdint.h>
#include <stdlib.h>

#include "harness.h"

extern uint32_t _sidata, _sdata, _edata, _sbss, _ebss, _estack;
extern void __libc_init_array(void);
extern void initialise_monitor_handles(void);
int main(void);

void _init(void) {}
void _fini(void) {}
void* __dso_handle = 0;

void Reset_Handler(void) {
  for (uint32_t *src = &_sidata, *dst = &_sdata; dst < &_edata;) *dst++ = *src++;
  for (uint32_t* dst = &_sbss; dst < &_ebss;) *dst++ = 0;
  /* CPACR: full access to coprocessors 10 and 11 (the FPU) before any floating-point instruction. */
  *(volatile uint32_t*)0xE000ED88 |= 0xFu << 20;
  __asm volatile("dsb\n isb" ::: "memory");
  __libc_init_array();
  initialise_monitor_handles();
  exit(main());
}

static void Fault_Handler(void) {
  exit(99);
}

__attribute__((section(".vectors"), used)) void (*const keel_target_vectors[16])(void) = {
    (void (*)(void))(&_estack), Reset_Handler, Fault_Handler, Fault_Handler, Fault_Handler, Fault_Handler,
    Fault_Handler, 0, 0, 0, 0, Fault_Handler, Fault_Handler, 0, Fault_Handler, Fault_Handler};

/* SysTick as a 24-bit down-counter from its maximum, read as a 32-bit up-counter (the wraps are counted, so
 * successive reads must be less than 2^24 ticks apart). */
#define SYST_CSR (*(volatile uint32_t*)0xE000E010)
#define SYST_RVR (*(volatile uint32_t*)0xE000E014)
#define SYST_CVR (*(volatile uint32_t*)0xE000E018)

__attribute__((weak)) uint32_t keel_target_counter(void) {
  static uint32_t last, wraps;
  if ((SYST_CSR & 1u) == 0) {
    SYST_RVR = 0x00FFFFFFu;
    SYST_CVR = 0;
    SYST_CSR = 5u; /* enable, processor clock, no interrupt */
    last = 0;
  }
  const uint32_t now = (0x00FFFFFFu - SYST_CVR) & 0x00FFFFFFu;
  if (now < last) wraps += 1u << 24;
  last = now;
  return wraps + now;
}
__attribute__((weak)) uint32_t keel_target_counter_scale(void) { return 40u; }

/* For a real chip: the DWT cycle counter (ARMv7-M Architecture Reference Manual, C1.8). Point the hooks at it by
 * defining keel_target_counter() { return keel_target_counter_dwt(); } and keel_target_counter_scale() { return 1; }. */
uint32_t keel_target_counter_dwt(void) {
  volatile uint32_t* const demcr = (volatile uint32_t*)0xE000EDFC;
  volatile uint32_t* const dwt_ctrl = (volatile uint32_t*)0xE0001000;
  volatile uint32_t* const dwt_cyccnt = (volatile uint32_t*)0xE0001004;
  if ((*dwt_ctrl & 1u) == 0) {
    *demcr |= 1u << 24;
    *dwt_cyccnt = 0;
    *dwt_ctrl |= 1u;
  }
  return *dwt_cyccnt;
}
