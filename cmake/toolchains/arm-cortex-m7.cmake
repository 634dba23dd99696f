# Cortex-M7 (double-precision FPU; QEMU board mps2-an500).
set(KEEL_TARGET_CPU_FLAGS "-mcpu=cortex-m7 -mthumb -mfpu=fpv5-d16 -mfloat-abi=hard")
include(${CMAKE_CURRENT_LIST_DIR}/arm-none-eabi.cmake)
