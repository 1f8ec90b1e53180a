#include "engine/multistart/internal/thread_pool.h"

#include <cassert>
#include <utility>

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
    for (auto& entry : batches_) entry.second.next = entry.second.count;
  }
  work_ready_.notify_all();
  for (std::thread& thread : threads_) thread.join();
}

int ThreadPool::Submit(int count, Task task) {
  int id;
  {
    std::lock_guard<std::mutex> lock(mutex_);
    id = next_id_++;
    Batch& batch = batches_[id];
    batch.task = std::move(task);
    batch.count = count < 0 ? 0 : count;
    batch.unfinished = batch.count;
  }
  work_ready_.notify_all();
  return id;
}

void ThreadPool::Drop(int id) {
  std::lock_guard<std::mutex> lock(mutex_);
  auto found = batches_.find(id);
  assert(found != batches_.end());
  Batch& batch = found->second;
  batch.unfinished -= batch.count - batch.next;
  batch.next = batch.count;
  if (batch.unfinished == 0) item_done_.notify_all();
}

void ThreadPool::Wait(int id) {
  std::unique_lock<std::mutex> lock(mutex_);
  auto found = batches_.find(id);
  assert(found != batches_.end());
  const Batch& batch = found->second;
  while (batch.unfinished > 0) {
    const Item item = TakeItem();
    if (item.task != nullptr) {
      RunItem(item, 0, &lock);
    } else {
      item_done_.wait(lock);
    }
  }
  batches_.erase(found);
}

ThreadPool::Item ThreadPool::TakeItem() {
  for (auto& entry : batches_) {
    Batch& batch = entry.second;
    if (batch.next < batch.count) return {&batch.task, &batch, batch.next++};
  }
  return {};
}

void ThreadPool::RunItem(const Item& item, int worker, std::unique_lock<std::mutex>* lock) {
  // std::map nodes do not move, and a batch is erased only by its Wait, which cannot
  // return while this item is unfinished: the pointers stay valid without the lock.
  lock->unlock();
  (*item.task)(item.index, worker);
  lock->lock();
  if (--item.batch->unfinished == 0) item_done_.notify_all();
}

void ThreadPool::WorkerLoop(int worker) {
  std::unique_lock<std::mutex> lock(mutex_);
  while (true) {
    const Item item = TakeItem();
    if (item.task != nullptr) {
      RunItem(item, worker, &lock);
      continue;
    }
    if (stopping_) return;
    work_ready_.wait(lock);
  }
}

}  // namespace internal
}  // namespace foothold
