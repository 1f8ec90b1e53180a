#include "engine/multistart/internal/thread_pool.h"

namespace foothold {
namespace internal {

ThreadPool::ThreadPool(int num_workers) : num_workers_(num_workers < 1 ? 1 : num_workers) {
  threads_.reserve(num_workers_ - 1);
  for (int worker = 1; worker < num_workers_; ++worker) {
    threads_.emplace_back([this, worker] { WorkerLoop(worker); });
  }
}

ThreadPool::~ThreadPool() {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    stopping_ = true;
  }
  batch_ready_.notify_all();
  for (std::thread& thread : threads_) thread.join();
}

void ThreadPool::ParallelFor(int count, const std::function<void(int, int)>& task) {
  if (count <= 0) return;
  {
    std::lock_guard<std::mutex> lock(mutex_);
    task_ = &task;
    count_ = count;
    next_item_ = 0;
    unfinished_ = count;
    ++generation_;
  }
  batch_ready_.notify_all();
  RunItems(0);
  std::unique_lock<std::mutex> lock(mutex_);
  batch_done_.wait(lock, [this] { return unfinished_ == 0; });
  task_ = nullptr;
}

void ThreadPool::RunItems(int worker) {
  while (true) {
    int item;
    const std::function<void(int, int)>* task;
    {
      std::lock_guard<std::mutex> lock(mutex_);
      if (task_ == nullptr || next_item_ >= count_) return;
      item = next_item_++;
      task = task_;
    }
    (*task)(item, worker);
    bool last = false;
    {
      std::lock_guard<std::mutex> lock(mutex_);
      last = (--unfinished_ == 0);
    }
    if (last) batch_done_.notify_all();
  }
}

void ThreadPool::WorkerLoop(int worker) {
  long seen_generation = 0;
  while (true) {
    {
      std::unique_lock<std::mutex> lock(mutex_);
      batch_ready_.wait(lock, [&] { return stopping_ || generation_ != seen_generation; });
      if (stopping_) return;
      seen_generation = generation_;
    }
    RunItems(worker);
  }
}

}  // namespace internal
}  // namespace foothold
