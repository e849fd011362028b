#include "src/commands/process_tuning.hpp"

#include <malloc.h>
#include <sys/mman.h>
#include <unistd.h>

#include <cstdint>
#include <cstdlib>

namespace cavitas::app {
namespace {

void heap_in_huge_pages() {
    constexpr std::uintptr_t kPad = std::uintptr_t{64} << 20, kHuge = std::uintptr_t{2} << 20;
    const auto before = reinterpret_cast<std::uintptr_t>(sbrk(0));
    mallopt(M_TOP_PAD, static_cast<int>(kPad));
    // More than the heap has spare, so it grows by this and the pad (volatile:
    // a malloc whose result is never used may be elided by the compiler).
    void* volatile first = std::malloc(kHuge);
    const auto after = reinterpret_cast<std::uintptr_t>(sbrk(0));
    mallopt(M_TOP_PAD, 128 << 10);  // glibc's default for any later growth
    const std::uintptr_t lo = (before + kHuge - 1) & ~(kHuge - 1), hi = after & ~(kHuge - 1);
    if (before != std::uintptr_t(-1) && hi > lo) madvise(reinterpret_cast<void*>(lo), hi - lo, MADV_HUGEPAGE);
    std::free(first);
}

}  // namespace

void tune_process_memory() {
    mallopt(M_MMAP_THRESHOLD, 32 << 20);
    mallopt(M_TRIM_THRESHOLD, 512 << 20);
    mallopt(M_ARENA_MAX, 1);
    heap_in_huge_pages();
}

}  // namespace cavitas::app
