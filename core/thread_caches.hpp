// FLINT and MPFR keep caches per thread (FLINT: pooled GMP integers behind
// fmpz, MPFR: constants such as pi and pooled integers) that nobody frees
// when a thread ends; LeakSanitizer reports them for every worker thread of
// a survey or a walk. Both libraries document a call that frees the calling
// thread's caches: FLINT 2.9 flint_cleanup() (which also calls MPFR's
// mpfr_free_cache()), MPFR mpfr_free_cache2(MPFR_FREE_LOCAL_CACHE).
#pragma once

namespace pleat {

// Arranges, on its first call in a thread, that the thread's FLINT and MPFR
// caches are freed when the thread ends (through a thread_local object, so
// after the thread's later thread_local objects are gone). Call it before
// using FLINT or MPFR; after the first call it costs one thread-local check.
void free_number_caches_at_thread_exit();

}  // namespace pleat
