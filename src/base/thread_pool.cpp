#include "tannery/base/thread_pool.hpp"

#include <algorithm>
#include <utility>

namespace tannery {

ThreadPool::ThreadPool(unsigned threads) {
  if (threads == 0) threads = std::max(1u, std::thread::hardware_concurrency());
  threads_.reserve(threads);
  for (unsigned t = 0; t < threads; ++t) threads_.emplace_back(&ThreadPool::work, this, t);
}

ThreadPool::~ThreadPool() {
  {
    std::lock_guard lock(mutex_);
    quit_ = true;
  }
  start_.notify_all();
  for (auto& t : threads_) t.join();
}

void ThreadPool::run(std::size_t count, const Task& task, std::chrono::milliseconds period,
                     const std::function<void()>& tick) {
  if (count == 0) return;
  std::unique_lock lock(mutex_);
  task_ = &task;
  count_ = count;
  next_ = done_ = 0;
  error_ = nullptr;
  error_index_ = 0;
  ++generation_;
  start_.notify_all();
  const auto all_done = [&] { return done_ == count_; };
  while (!all_done()) {
    if (!tick) {
      finished_.wait(lock, all_done);
    } else if (!finished_.wait_for(lock, period, all_done)) {
      lock.unlock();
      tick();
      lock.lock();
    }
  }
  task_ = nullptr;
  if (error_) std::rethrow_exception(std::exchange(error_, nullptr));
}

void ThreadPool::work(unsigned worker) {
  std::uint64_t seen = 0;
  std::unique_lock lock(mutex_);
  for (;;) {
    start_.wait(lock, [&] { return quit_ || (generation_ != seen && next_ < count_); });
    if (quit_) return;
    seen = generation_;
    while (next_ < count_) {
      const std::size_t index = next_++;
      const Task& task = *task_;
      lock.unlock();
      std::exception_ptr error;
      try {
        task(index, worker);
      } catch (...) {
        error = std::current_exception();
      }
      lock.lock();
      if (error && (!error_ || index < error_index_)) error_ = error, error_index_ = index;
      if (++done_ == count_) finished_.notify_all();
    }
  }
}

}  // namespace tannery
