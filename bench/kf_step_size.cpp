// One size of the kf_step, predict and correct benchmarks, compiled once per scalar and size (bench/CMakeLists.txt
// sets KEEL_BENCH_SCALAR, KEEL_BENCH_N and KEEL_BENCH_M) so that the instantiations spread over translation units
// and build in parallel. Adds its registration to the list main runs.
#include "kf_step.hpp"

namespace {
const bool registered =
    (keel_bench::size_registrars().push_back(keel_bench::register_kf_step<KEEL_BENCH_SCALAR, KEEL_BENCH_N, KEEL_BENCH_M>),
     true);
}  // namespace
