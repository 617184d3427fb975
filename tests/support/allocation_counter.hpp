#pragma once
// Counts every heap allocation of the test program that includes this header (include it in one
// file only: it replaces the global operator new and delete), to check that hot loops allocate
// nothing. Under AddressSanitizer the replacement is left out (ASan brings its own operators and
// would report the malloc/delete pairing as a mismatch), and kCountingAllocations says so: the
// Release run of the suite checks the counts.

#include <atomic>
#include <cstdlib>
#include <new>

namespace triaxcal::test {
inline std::atomic<long> g_allocations{0};
}

#if defined(__SANITIZE_ADDRESS__)
namespace triaxcal::test {
inline constexpr bool kCountingAllocations = false;
}
#else
namespace triaxcal::test {
inline constexpr bool kCountingAllocations = true;
}
// None is inlined: GCC 12 would otherwise pair an inlined malloc() or free() with the built-in new
// or delete and warn (-Wmismatched-new-delete, a false positive).
[[gnu::noinline]] void* operator new(std::size_t n) {
  ++triaxcal::test::g_allocations;
  if (void* p = std::malloc(n ? n : 1)) return p;
  throw std::bad_alloc();
}
[[gnu::noinline]] void operator delete(void* p) noexcept { std::free(p); }
[[gnu::noinline]] void operator delete(void* p, std::size_t) noexcept { std::free(p); }
#endif
