#pragma once
// A fixed-size pool of std::thread workers that runs one indexed batch at a time.

#include <condition_variable>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

namespace foothold {
namespace internal {

class ThreadPool {
 public:
  // `num_workers` >= 1 counts the calling thread: num_workers - 1 threads are started.
  explicit ThreadPool(int num_workers);
  ~ThreadPool();
  ThreadPool(const ThreadPool&) = delete;
  ThreadPool& operator=(const ThreadPool&) = delete;

  int NumWorkers() const { return num_workers_; }
  // Calls task(item, worker) once for every item in [0, count), worker in [0, NumWorkers()),
  // and returns when all calls returned. The calling thread is worker 0. Items are taken in
  // increasing order; which worker runs which item is unspecified.
  void ParallelFor(int count, const std::function<void(int item, int worker)>& task);

 private:
  void WorkerLoop(int worker);
  // Takes items of the current batch until none is left.
  void RunItems(int worker);

  int num_workers_;
  std::vector<std::thread> threads_;
  std::mutex mutex_;
  std::condition_variable batch_ready_;
  std::condition_variable batch_done_;
  const std::function<void(int, int)>* task_ = nullptr;
  int count_ = 0;
  int next_item_ = 0;
  int unfinished_ = 0;
  long generation_ = 0;
  bool stopping_ = false;
};

}  // namespace internal
}  // namespace foothold
