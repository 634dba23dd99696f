# Cortex-M4F (single-precision FPU; QEMU board mps2-an386).
set(KEEL_TARGET_CPU_FLAGS "-mcpu=cortex-m4 -mthumb -mfpu=fpv4-sp-d16 -mfloat-abi=hard")
include(${CMAKE_CURRENT_LIST_DIR}/arm-none-eabi.cmake)
