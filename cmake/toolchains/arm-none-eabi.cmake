# Shared part of the Cortex-M toolchain files: bare metal, Debian's arm-none-eabi GCC with newlib. The including
# file sets KEEL_TARGET_CPU_FLAGS first.
set(CMAKE_SYSTEM_NAME Generic)
set(CMAKE_SYSTEM_PROCESSOR arm)
set(CMAKE_C_COMPILER arm-none-eabi-gcc)
set(CMAKE_CXX_COMPILER arm-none-eabi-g++)
set(CMAKE_TRY_COMPILE_TARGET_TYPE STATIC_LIBRARY)
set(CMAKE_C_FLAGS_INIT "${KEEL_TARGET_CPU_FLAGS}")
set(CMAKE_CXX_FLAGS_INIT "${KEEL_TARGET_CPU_FLAGS}")
set(CMAKE_EXE_LINKER_FLAGS_INIT "${KEEL_TARGET_CPU_FLAGS}")
set(CMAKE_FIND_ROOT_PATH_MODE_PROGRAM NEVER)
