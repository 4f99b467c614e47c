#pragma once
// One OpenMP loop whose body may throw: iterations run with schedule(dynamic, 1); exceptions may
// not leave an OpenMP region, so the first one thrown is kept and rethrown after the loop (the
// other iterations still run; their results are discarded by the caller's unwinding).
#include <exception>
#include <mutex>

namespace roundtrip {

template <class Body>
void parallel_for(long begin, long end, const Body& body) {
  std::exception_ptr failure;
  std::mutex failure_mutex;
#pragma omp parallel for schedule(dynamic, 1)
  for (long i = begin; i < end; ++i) {
    try {
      body(i);
    } catch (...) {
      std::lock_guard<std::mutex> lock(failure_mutex);
      if (!failure) failure = std::current_exception();
    }
  }
  if (failure) std::rethrow_exception(failure);
}

}  // namespace roundtrip
