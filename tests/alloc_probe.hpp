#pragma once
// The probe of the heap-free proofs: the allocation counter is incremented by the hooks that alloc_test.cpp
// installs (malloc, calloc, realloc, operator new) for the whole keel_test_alloc executable.
#ifndef EIGEN_RUNTIME_NO_MALLOC
#define EIGEN_RUNTIME_NO_MALLOC
#endif
#include <atomic>

#include <Eigen/Core>

extern std::atomic<long> g_allocations;

/// Runs f with Eigen's guard armed and returns how many allocations happened inside.
template <typename F>
long allocations_in(F&& f) {
  const long before = g_allocations.load();
  Eigen::internal::set_is_malloc_allowed(false);
  f();
  Eigen::internal::set_is_malloc_allowed(true);
  return g_allocations.load() - before;
}
