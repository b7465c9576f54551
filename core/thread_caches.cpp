#include "core/thread_caches.hpp"

#include <flint/flint.h>
#include <mpfr.h>

namespace pleat {
namespace {

struct NumberCacheRelease {
  ~NumberCacheRelease() {
    flint_cleanup();
    // Debian's MPFR keeps no cache shared between threads (built without
    // MPFR_WANT_SHARED_CACHE), so this thread's caches are all there is.
    mpfr_free_cache2(MPFR_FREE_LOCAL_CACHE);
  }
};

}  // namespace

void free_number_caches_at_thread_exit() {
  static thread_local NumberCacheRelease release;
  (void)release;
}

}  // namespace pleat
