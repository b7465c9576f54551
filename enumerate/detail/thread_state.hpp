// One thread's scratch state for a hot function, reached through one call.
// Internal to enumerate/ (not installed).
#pragma once

namespace pleat::detail {

// This thread's State, default-constructed at its first use, by reference.
// In a shared library each use of a thread_local by name may cost a call
// to __tls_get_addr: GCC recomputes the address at every use rather than
// keep it (51 such calls in IntegerCheck::annihilates, most in its loops,
// about 0.1 ms of 2,15,15,15,15,1 seed 1's check). The reference this
// returns is kept like any other pointer. State should be a type of its
// own (a struct local to the function that uses it): each State is one
// object per thread, shared by every caller naming that type.
template <class State>
[[gnu::noinline]] State& thread_state() {
  thread_local State state;
  return state;
}

}  // namespace pleat::detail
