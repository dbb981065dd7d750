// Function multiversioning for the hot lane loops: on x86-64 with GCC a function marked
// MOONWRIGHT_CLONES is compiled for AVX2 and for the baseline, and the loader picks one. No
// clone uses FMA and every lane does the same operations in the same order, so both give the
// same bits. Define MOONWRIGHT_NO_MULTIVERSIONING to compile the baseline only.
#pragma once

#if defined(__GNUC__) && !defined(__clang__) && defined(__x86_64__) &&                             \
    !defined(MOONWRIGHT_NO_MULTIVERSIONING)
#define MOONWRIGHT_CLONES __attribute__((target_clones("avx2", "default")))
/// Lane code called from a cloned function: inlined, so it is compiled for the clone's target.
#define MOONWRIGHT_LANES_INLINE [[gnu::always_inline]] inline
#else
#define MOONWRIGHT_CLONES
#define MOONWRIGHT_LANES_INLINE inline
#endif
