#pragma once
// Counts every global allocation so a test can assert that a hot path allocates nothing.
// It replaces the global operator new and delete, so include it in exactly one source file
// of a test executable. GCC flags free() on memory from a replaced operator new once both
// are inlined; the pair is consistent (malloc/free), so that warning is silenced here.

#include <atomic>
#include <cstdlib>
#include <new>

#pragma GCC diagnostic ignored "-Wmismatched-new-delete"

namespace foothold {
namespace testing {

inline std::atomic<long> g_num_allocations{0};

// Global allocations so far in this process.
inline long NumAllocations() { return g_num_allocations.load(); }

}  // namespace testing
}  // namespace foothold

void* operator new(std::size_t size) {
  ++foothold::testing::g_num_allocations;
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }
