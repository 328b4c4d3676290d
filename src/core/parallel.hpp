// The one thread pool: a parallel for over [0, n) that both the wells of a run
// (analyse_run) and the files of a batch (analyse_files) use.
//
// Determinism: each index writes only its own slot, so results do not depend on the thread
// count; the error rethrown is the one of the lowest failing index, as a serial loop would
// throw it (indices above a failed one are not started, those below it all run).
#pragma once

#include <functional>

namespace vzero::detail {

// Threads to use for `threads` (0 = all cores, at least 1).
int thread_count(int threads);

// Runs fn(i) for i in [0, n) on up to thread_count(threads) threads (the caller's thread is
// one of them), handing out indices `chunk` at a time; with one thread it is a plain loop.
void parallel_for(int n, int threads, int chunk, const std::function<void(int)>& fn);

}  // namespace vzero::detail
