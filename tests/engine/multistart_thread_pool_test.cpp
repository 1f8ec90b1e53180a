// The multistart thread pool: queued batches in order, no barrier between batches, Drop.
#include <atomic>
#include <catch2/catch.hpp>
#include <chrono>
#include <condition_variable>
#include <mutex>
#include <thread>
#include <vector>

#include "engine/multistart/internal/thread_pool.h"

namespace foothold {
namespace {

using internal::ThreadPool;

// Long enough never to fire when the pool works, short enough not to hang the suite.
constexpr auto kReleaseTimeout = std::chrono::seconds(20);

TEST_CASE("ThreadPool: one worker runs queued batches in queue order on the caller", "[engine]") {
  ThreadPool pool(1);
  std::vector<int> order;
  const std::thread::id caller = std::this_thread::get_id();
  bool on_caller = true;
  auto record = [&](int base) {
    return [&, base](int item, int worker) {
      order.push_back(base + item);
      on_caller = on_caller && worker == 0 && std::this_thread::get_id() == caller;
    };
  };
  const int first = pool.Submit(3, record(0));
  const int second = pool.Submit(2, record(10));
  // Waiting for the second batch runs the first one's items before its own.
  pool.Wait(second);
  CHECK(order == std::vector<int>{0, 1, 2, 10, 11});
  pool.Wait(first);
  CHECK(order.size() == 5);
  CHECK(on_caller);
}

TEST_CASE("ThreadPool: a later batch runs while an earlier one's item is still running",
          "[engine]") {
  // Item A0 finishes only once B0 has run. A pool with a barrier between batches would
  // start B only after A finished, and A0 would wait for the timeout.
  ThreadPool pool(2);
  std::mutex mutex;
  std::condition_variable released;
  bool b_ran = false, a_released_by_b = false;
  const int a = pool.Submit(1, [&](int, int) {
    std::unique_lock<std::mutex> lock(mutex);
    a_released_by_b = released.wait_for(lock, kReleaseTimeout, [&] { return b_ran; });
  });
  const int b = pool.Submit(1, [&](int, int) {
    std::lock_guard<std::mutex> lock(mutex);
    b_ran = true;
    released.notify_all();
  });
  pool.Wait(a);
  pool.Wait(b);
  CHECK(a_released_by_b);
}

TEST_CASE("ThreadPool: Drop skips the items not yet started", "[engine]") {
  ThreadPool pool(1);
  int a_runs = 0, b_runs = 0, c_runs = 0;
  const int a = pool.Submit(2, [&](int, int) { ++a_runs; });
  const int b = pool.Submit(4, [&](int, int) { ++b_runs; });
  pool.Drop(b);
  int c = -1;
  // Dropped from inside its own first item: the other items never start.
  c = pool.Submit(5, [&](int, int) {
    ++c_runs;
    pool.Drop(c);
  });
  pool.Wait(a);
  pool.Wait(b);
  pool.Wait(c);
  CHECK(a_runs == 2);
  CHECK(b_runs == 0);
  CHECK(c_runs == 1);
}

TEST_CASE("ThreadPool: every item of many batches runs exactly once on 8 workers", "[engine]") {
  ThreadPool pool(8);
  REQUIRE(pool.NumWorkers() == 8);
  constexpr int kBatches = 50, kItems = 37;
  std::vector<std::atomic<int>> runs(kBatches * kItems);
  std::atomic<bool> worker_in_range{true};
  std::vector<int> ids;
  // Two batches queued at a time, as the multistart driver keeps them.
  for (int batch = 0; batch < kBatches; ++batch) {
    ids.push_back(pool.Submit(kItems, [&, batch](int item, int worker) {
      if (worker < 0 || worker >= 8) worker_in_range = false;
      ++runs[batch * kItems + item];
    }));
    if (batch >= 1) pool.Wait(ids[batch - 1]);
  }
  pool.Wait(ids.back());
  int wrong = 0;
  for (const std::atomic<int>& count : runs) wrong += count.load() != 1;
  CHECK(wrong == 0);
  CHECK(worker_in_range);
}

}  // namespace
}  // namespace foothold
