#pragma once
// A fixed-size pool of std::thread workers running queued batches of indexed items.
//
// Several batches may be queued at once; items are taken in queue order (every item of a
// batch before any item of a later one), so a worker that runs out of one batch goes on
// with the next instead of idling at a barrier. The calling thread takes part while it
// waits for a batch.

#include <condition_variable>
#include <functional>
#include <map>
#include <mutex>
#include <thread>
#include <vector>

namespace foothold {
namespace internal {

class ThreadPool {
 public:
  using Task = std::function<void(int item, int worker)>;

  // `num_workers` >= 1 counts the calling thread: num_workers - 1 threads are started.
  explicit ThreadPool(int num_workers);
  // Drops the items not yet started and joins the threads (running items finish first).
  ~ThreadPool();
  ThreadPool(const ThreadPool&) = delete;
  ThreadPool& operator=(const ThreadPool&) = delete;

  int NumWorkers() const { return num_workers_; }

  // Queues a batch: task(item, worker) for every item in [0, count), worker in
  // [0, NumWorkers()). Returns the batch's id. Which worker runs which item is unspecified;
  // the task must stay valid until Wait(id) returned.
  int Submit(int count, Task task);
  // Runs queued items (of any batch, in queue order) on the calling thread as worker 0
  // until every item of batch `id` has returned or was dropped, then forgets the batch.
  // Must be called exactly once per submitted batch, from the thread that submitted it.
  void Wait(int id);
  // Drops the items of batch `id` that have not started; the running ones still finish.
  void Drop(int id);

  // Submit then Wait.
  void ParallelFor(int count, const Task& task) { Wait(Submit(count, task)); }

 private:
  struct Batch {
    Task task;
    int count = 0;
    int next = 0;        // first item not yet started
    int unfinished = 0;  // items not yet returned nor dropped
  };
  struct Item {
    const Task* task = nullptr;
    Batch* batch = nullptr;
    int index = 0;
  };

  void WorkerLoop(int worker);
  // The next unstarted item in queue order, or no task when none is queued. Needs mutex_.
  Item TakeItem();
  // Runs `item` with mutex_ released, then counts it done (lock held on entry and exit).
  void RunItem(const Item& item, int worker, std::unique_lock<std::mutex>* lock);

  int num_workers_;
  std::vector<std::thread> threads_;
  std::mutex mutex_;
  std::condition_variable work_ready_;
  std::condition_variable item_done_;
  std::map<int, Batch> batches_;  // by id, which is the queue order
  int next_id_ = 0;
  bool stopping_ = false;
};

}  // namespace internal
}  // namespace foothold
