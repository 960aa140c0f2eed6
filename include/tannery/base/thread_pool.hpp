// The library's one thread pool: a fixed set of threads that runs batches of tasks. The
// simulator runs its workers on one, the parallel decoder its slices of a batch; both wait in
// the calling thread, which can do its own work (progress, interrupts) at a fixed period.
#pragma once

#include <chrono>
#include <condition_variable>
#include <cstddef>
#include <exception>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

namespace tannery {

class ThreadPool {
 public:
  // task(index, worker): index in [0, count), worker in [0, size()) — the thread running it, so
  // tasks can use per-thread state (a decoder each).
  using Task = std::function<void(std::size_t index, unsigned worker)>;

  // threads = 0: one per core (std::thread::hardware_concurrency(), at least 1).
  explicit ThreadPool(unsigned threads = 0);
  ~ThreadPool();
  ThreadPool(const ThreadPool&) = delete;
  ThreadPool& operator=(const ThreadPool&) = delete;

  unsigned size() const noexcept { return static_cast<unsigned>(threads_.size()); }

  // Runs task for every index in [0, count) and returns when all are done. While waiting, tick
  // (when set) runs in the calling thread every `period`. An exception is rethrown here once
  // every task has returned, that of the lowest index when several threw (so the error does
  // not depend on timing); tasks are not cancelled: they must notice on their own, e.g.
  // through a flag, that they should stop early.
  void run(std::size_t count, const Task& task, std::chrono::milliseconds period = {},
           const std::function<void()>& tick = {});

 private:
  void work(unsigned worker);

  std::vector<std::thread> threads_;
  std::mutex mutex_;
  std::condition_variable start_, finished_;
  const Task* task_ = nullptr;
  std::size_t count_ = 0, next_ = 0, done_ = 0, error_index_ = 0;
  std::uint64_t generation_ = 0;
  bool quit_ = false;
  std::exception_ptr error_;
};

}  // namespace tannery
