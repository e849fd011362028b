// Loops compiled twice: for any x86-64 processor and for one with AVX2; the
// loader picks the version for the processor it runs on (GCC/Clang
// `target_clones`, resolved once at start-up).
//
// Results are the same bit for bit on every processor: only loops whose
// outputs are computed element by element with a fixed order of operations
// (no sums across elements, which a wider vector would regroup) are cloned,
// and the AVX2 version is built without FMA, so every product and sum is
// rounded exactly as in the baseline version. AVX2 only brings eight lanes
// where the baseline has four. Elsewhere (another architecture or compiler,
// or CAVITAS_NO_CLONES defined) the macro is empty and the loops are built
// once. tests/signal/clones_test.cpp checks both versions against each other.
#pragma once

#if defined(__x86_64__) && (defined(__GNUC__) || defined(__clang__)) && !defined(CAVITAS_NO_CLONES)
#define CAVITAS_CLONED __attribute__((target_clones("avx2", "default")))
#define CAVITAS_HAS_CLONES 1
#else
#define CAVITAS_CLONED
#define CAVITAS_HAS_CLONES 0
#endif

/// For the helpers of a cloned loop: inlined into each version, so that they
/// are compiled for its processor too.
#define CAVITAS_ALWAYS_INLINE inline __attribute__((always_inline))
