#include "tannery/sim/mpi_run.hpp"

#include <fmt/format.h>
#include <mpi.h>
#include <unistd.h>
#include <algorithm>
#include <chrono>
#include <condition_variable>
#include <cstdlib>
#include <cstring>
#include <deque>
#include <exception>
#include <mutex>
#include <thread>

#include "tannery/base/thread_pool.hpp"
#include "tannery/error.hpp"

namespace tannery::mpi {

namespace {

using Clock = std::chrono::steady_clock;

// Message tags. Rank r > 0 to rank 0: a request for up to N chunks, a bundle of results, a
// signal seen, the last message. Rank 0 to rank r: chunks [first, last) of a point, a cancelled
// point, the end of the run.
enum Tag : int { kRequest = 1, kResults, kInterrupt, kFinal, kWork, kCancel, kDone };

void check(int code, const char* what) {
  if (code != MPI_SUCCESS) throw Error(fmt::format("MPI: {} failed (error {})", what, code));
}

void send(const void* data, int bytes, int to, Tag tag) {
  check(MPI_Send(data, bytes, MPI_BYTE, to, tag, MPI_COMM_WORLD), "send");
}

template <class T>
void put(std::vector<char>& out, const T& v) {
  const auto* p = reinterpret_cast<const char*>(&v);
  out.insert(out.end(), p, p + sizeof v);
}
template <class T>
void put_vector(std::vector<char>& out, const std::vector<T>& v) {
  put(out, static_cast<std::uint64_t>(v.size()));
  if (v.empty()) return;
  const auto* p = reinterpret_cast<const char*>(v.data());
  out.insert(out.end(), p, p + v.size() * sizeof(T));
}

class Reader {
 public:
  Reader(const char* data, std::size_t size) : data_(data), size_(size) {}
  bool done() const { return at_ == size_; }
  template <class T>
  T get() {
    T v;
    std::memcpy(&v, take(sizeof v), sizeof v);
    return v;
  }
  template <class T>
  std::vector<T> get_vector() {
    const auto count = get<std::uint64_t>();
    if (count > (size_ - at_) / sizeof(T)) bad();
    std::vector<T> v(count);
    const char* bytes = take(count * sizeof(T));
    if (count > 0) std::memcpy(v.data(), bytes, count * sizeof(T));
    return v;
  }

 private:
  [[noreturn]] static void bad() { throw Error("MPI: a malformed chunk message"); }
  const char* take(std::size_t bytes) {
    if (bytes > size_ - at_) bad();
    const char* p = data_ + at_;
    at_ += bytes;
    return p;
  }
  const char* data_;
  std::size_t size_, at_ = 0;
};

// Receives the message that MPI_Iprobe found into buffer; returns its size.
std::size_t receive(const MPI_Status& status, std::vector<char>& buffer) {
  int bytes = 0;
  MPI_Get_count(&status, MPI_BYTE, &bytes);
  buffer.resize(static_cast<std::size_t>(std::max(bytes, 1)));
  check(MPI_Recv(buffer.data(), bytes, MPI_BYTE, status.MPI_SOURCE, status.MPI_TAG, MPI_COMM_WORLD,
                 MPI_STATUS_IGNORE),
        "receive");
  return static_cast<std::size_t>(bytes);
}

bool probe(MPI_Status& status) {
  int flag = 0;
  check(MPI_Iprobe(MPI_ANY_SOURCE, MPI_ANY_TAG, MPI_COMM_WORLD, &flag, &status), "probe");
  return flag != 0;
}

double seconds(Clock::duration d) {
  return std::chrono::duration<double>(d).count();
}

}  // namespace

Session::Session() {
  int provided = 0;
  check(MPI_Init_thread(nullptr, nullptr, MPI_THREAD_FUNNELED, &provided), "init");
  if (provided < MPI_THREAD_FUNNELED) {
    MPI_Finalize();
    throw Error("MPI: this MPI library cannot be used from a multithreaded program");
  }
  MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
  MPI_Comm_size(MPI_COMM_WORLD, &size_);
  MPI_Comm local;
  MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, rank_, MPI_INFO_NULL, &local);
  MPI_Comm_size(local, &local_size_);
  MPI_Comm_free(&local);
}

Session::~Session() {
  MPI_Finalize();
}

std::string Session::host() const {
  char name[MPI_MAX_PROCESSOR_NAME] = {};
  int length = 0;
  MPI_Get_processor_name(name, &length);
  return std::string(name, static_cast<std::size_t>(std::max(length, 0)));
}

std::vector<Session::Status> Session::agree(bool ok, const std::string& fingerprint) const {
  constexpr std::size_t kWidth = 65;  // status byte and a 64-character fingerprint
  std::vector<char> mine(kWidth, 0), all(kWidth * static_cast<std::size_t>(size_));
  mine[0] = ok ? 1 : 0;
  std::memcpy(mine.data() + 1, fingerprint.data(), std::min(fingerprint.size(), kWidth - 1));
  check(MPI_Allgather(mine.data(), static_cast<int>(kWidth), MPI_BYTE, all.data(),
                      static_cast<int>(kWidth), MPI_BYTE, MPI_COMM_WORLD),
        "allgather");
  std::vector<Status> out(static_cast<std::size_t>(size_));
  for (std::size_t r = 0; r < out.size(); ++r) {
    const char* p = all.data() + r * kWidth;
    out[r].ok = p[0] != 0;
    out[r].fingerprint.assign(p + 1, strnlen(p + 1, kWidth - 1));
  }
  return out;
}

void Session::barrier() const {
  check(MPI_Barrier(MPI_COMM_WORLD), "barrier");
}

std::uint64_t Session::sum(std::uint64_t value) const {
  std::uint64_t total = 0;
  check(MPI_Allreduce(&value, &total, 1, MPI_UINT64_T, MPI_SUM, MPI_COMM_WORLD), "allreduce");
  return total;
}

void Session::abort(int code) const {
  MPI_Abort(MPI_COMM_WORLD, code);
  std::_Exit(code);
}

void append_chunk(std::vector<char>& out, std::size_t point, std::uint64_t chunk,
                  const ChunkResult& r) {
  const PointResult& c = r.counts;
  put(out, static_cast<std::uint64_t>(point));
  put(out, chunk);
  for (std::uint64_t v : {c.frames, c.frame_errors, c.bit_errors, c.bits, c.coded_bit_errors,
                          c.coded_bits, c.undetected_errors, c.iterations})
    put(out, v);
  put(out, c.bit_error_squares);
  put_vector(out, c.iteration_histogram);
  put_vector(out, c.failed_frames);
  put(out, static_cast<std::uint64_t>(c.failure_classes.size()));
  for (const auto& [cls, count] : c.failure_classes) {
    put(out, cls.a);
    put(out, cls.b);
    put(out, count.frames);
    put(out, count.oscillating);
    put(out, static_cast<std::uint64_t>(count.examples.size()));
    for (const auto& example : count.examples) put_vector(out, example);
  }
  put(out, c.larger_failures);
  put(out, static_cast<std::uint64_t>(r.kept.size()));
  for (const KeptFrame& k : r.kept) {
    put(out, k.frame);
    put_vector(out, k.llr);
  }
}

std::vector<ChunkMessage> parse_chunks(const char* data, std::size_t size) {
  std::vector<ChunkMessage> out;
  Reader in(data, size);
  while (!in.done()) {
    ChunkMessage m;
    m.point = static_cast<std::size_t>(in.get<std::uint64_t>());
    m.chunk = in.get<std::uint64_t>();
    PointResult& c = m.result.counts;
    for (std::uint64_t* v :
         {&c.frames, &c.frame_errors, &c.bit_errors, &c.bits, &c.coded_bit_errors, &c.coded_bits,
          &c.undetected_errors, &c.iterations})
      *v = in.get<std::uint64_t>();
    c.bit_error_squares = in.get<double>();
    c.iteration_histogram = in.get_vector<std::uint64_t>();
    c.failed_frames = in.get_vector<std::uint64_t>();
    const auto classes = in.get<std::uint64_t>();
    for (std::uint64_t i = 0; i < classes; ++i) {
      StructureClass cls;
      cls.a = in.get<std::uint32_t>();
      cls.b = in.get<std::uint32_t>();
      FailureClassCount& count = c.failure_classes[cls];
      count.frames = in.get<std::uint64_t>();
      count.oscillating = in.get<std::uint64_t>();
      const auto examples = in.get<std::uint64_t>();
      for (std::uint64_t e = 0; e < examples; ++e)
        count.examples.push_back(in.get_vector<std::uint32_t>());
    }
    c.larger_failures = in.get<std::uint64_t>();
    c.chunks = 1;
    const auto kept = in.get<std::uint64_t>();
    for (std::uint64_t i = 0; i < kept; ++i) {
      KeptFrame k;
      k.point = m.point;
      k.frame = in.get<std::uint64_t>();
      k.llr = in.get_vector<float>();
      m.result.kept.push_back(std::move(k));
    }
    out.push_back(std::move(m));
  }
  return out;
}

// ---- rank 0 --------------------------------------------------------------------------------

Coordinator::Coordinator(const Session& session, std::atomic<bool>* interrupt)
    : session_(session), interrupt_(interrupt) {}

Coordinator::~Coordinator() = default;

void Coordinator::exchange(std::size_t point, const Deal& deal, const Deliver& deliver) {
  // The time of each message handled is measured, but for the first exchange with each rank
  // (it sets up the connection, a one-off cost that would swamp short runs' figures).
  if (greeted_.empty()) greeted_.assign(static_cast<std::size_t>(session_.size()), 0);
  auto timed = [&](int rank, Clock::time_point start) {
    std::uint8_t& seen = greeted_[static_cast<std::size_t>(rank)];
    if (seen >= 2) figures_.busy_seconds += seconds(Clock::now() - start);
    seen = static_cast<std::uint8_t>(std::min(seen + 1, 2));
  };
  MPI_Status status;
  while (probe(status)) {
    const auto start = Clock::now();
    const std::size_t bytes = receive(status, buffer_);
    ++figures_.messages;
    switch (status.MPI_TAG) {
      case kRequest: {
        std::uint64_t count = 0;
        std::memcpy(&count, buffer_.data(), std::min(bytes, sizeof count));
        pending_.push_back({status.MPI_SOURCE, std::max<std::uint64_t>(count, 1)});
        break;
      }
      case kResults:
        for (ChunkMessage& m : parse_chunks(buffer_.data(), bytes)) {
          ++figures_.remote_chunks;
          deliver(m.point, m.chunk, std::move(m.result));
        }
        break;
      case kInterrupt:
        if (interrupt_) *interrupt_ = true;
        break;
      default:
        throw Error(fmt::format("MPI: rank {} sent an unexpected message (tag {})",
                                status.MPI_SOURCE, status.MPI_TAG));
    }
    timed(status.MPI_SOURCE, start);
  }
  // Requests wait while the point has nothing left to deal (its last chunks are in flight);
  // the next point's chunks answer them.
  for (auto it = pending_.begin(); it != pending_.end();) {
    const auto start = Clock::now();
    const auto [first, last] = deal(it->count);
    if (first == last) break;
    const std::uint64_t work[3] = {point, first, last};
    send(work, sizeof work, it->rank, kWork);
    timed(it->rank, start);
    it = pending_.erase(it);
  }
}

void Coordinator::cancel(std::size_t point) {
  const std::uint64_t p = point;
  for (int r = 1; r < session_.size(); ++r) send(&p, sizeof p, r, kCancel);
}

void Coordinator::finish() {
  if (finished_) return;
  finished_ = true;
  for (int r = 1; r < session_.size(); ++r) send(nullptr, 0, r, kDone);
  // Everything a rank sent before its last word is received (and dropped): messages between
  // two ranks arrive in order.
  int waiting = session_.size() - 1;
  MPI_Status status;
  while (waiting > 0) {
    check(MPI_Probe(MPI_ANY_SOURCE, MPI_ANY_TAG, MPI_COMM_WORLD, &status), "probe");
    receive(status, buffer_);
    if (status.MPI_TAG == kFinal) --waiting;
  }
}

// ---- ranks > 0 -----------------------------------------------------------------------------

namespace {

struct Task {
  std::size_t point;
  std::uint64_t chunk;
};

// The state a serving rank's threads share with its MPI thread.
struct Serving {
  std::mutex mutex;
  std::condition_variable wake;
  std::deque<Task> queue;
  std::vector<char> outbox;  // results not yet sent, in the message format
  std::size_t outbox_chunks = 0;
  std::size_t running = 0;
  std::size_t first_point = 0;  // points before it are finished: their work is dropped
  bool done = false;
  double compute_seconds = 0;
  std::uint64_t computed = 0;

  void drop_before(std::size_t point) {
    first_point = std::max(first_point, point);
    std::erase_if(queue, [&](const Task& t) { return t.point < first_point; });
  }
};

}  // namespace

void serve(const Session& session, const Simulator& sim, unsigned threads,
           const std::atomic<bool>* interrupt) {
  threads = std::max(threads, 1u);
  Serving s;
  ThreadPool pool(threads);
  std::vector<char> buffer;
  std::vector<std::pair<MPI_Request, std::vector<char>>> sending;
  bool asked = false, told_interrupt = false;
  Clock::time_point asked_at{}, last_flush = Clock::now();
  double round_trip = 1e-3;  // seconds, measured from the requests

  auto compute = [&](std::size_t, unsigned) {
    Simulator::ChunkComputer computer(sim);
    std::unique_lock lock(s.mutex);
    for (;;) {
      s.wake.wait(lock, [&] { return s.done || !s.queue.empty(); });
      if (s.done) return;
      const Task t = s.queue.front();
      s.queue.pop_front();
      ++s.running;
      lock.unlock();
      const auto start = Clock::now();
      ChunkResult r;
      try {
        r = computer.compute(t.point, t.chunk);
      } catch (...) {
        lock.lock();
        s.done = true;  // every thread returns; the error is rethrown by the pool
        s.wake.notify_all();
        throw;
      }
      const double took = seconds(Clock::now() - start);
      lock.lock();
      --s.running;
      s.compute_seconds += took;
      ++s.computed;
      if (t.point >= s.first_point) {
        append_chunk(s.outbox, t.point, t.chunk, r);
        ++s.outbox_chunks;
      }
    }
  };
  // The MPI thread, every 5 ms (more often costs the compute threads measurably: 1 ms lost 3-5%
  // of the frames on 2 cores).
  auto tick = [&] {
    MPI_Status status;
    while (probe(status)) {
      const std::size_t bytes = receive(status, buffer);
      std::lock_guard lock(s.mutex);
      switch (status.MPI_TAG) {
        case kWork: {
          std::uint64_t work[3] = {};
          std::memcpy(work, buffer.data(), std::min(bytes, sizeof work));
          const auto point = static_cast<std::size_t>(work[0]);
          s.drop_before(point);  // rank 0 moved on: the points before are finished
          for (std::uint64_t c = work[1]; c < work[2]; ++c) s.queue.push_back({point, c});
          asked = false;
          // (a request rank 0 held back while it had nothing to deal counts as 20 ms)
          round_trip = 0.8 * round_trip + 0.2 * std::min(seconds(Clock::now() - asked_at), 0.02);
          s.wake.notify_all();
          break;
        }
        case kCancel: {
          std::uint64_t point = 0;
          std::memcpy(&point, buffer.data(), std::min(bytes, sizeof point));
          s.drop_before(static_cast<std::size_t>(point) + 1);
          // Results of the cancelled point not yet sent are dropped too.
          std::vector<char> keep;
          std::size_t kept = 0;
          for (ChunkMessage& m : parse_chunks(s.outbox.data(), s.outbox.size())) {
            if (m.point >= s.first_point) append_chunk(keep, m.point, m.chunk, m.result), ++kept;
          }
          s.outbox = std::move(keep), s.outbox_chunks = kept;
          break;
        }
        case kDone:
          s.done = true;
          s.queue.clear();
          s.wake.notify_all();
          break;
        default:
          throw Error(
              fmt::format("MPI: rank 0 sent an unexpected message (tag {})", status.MPI_TAG));
      }
    }
    std::unique_lock lock(s.mutex);
    if (s.done) return;
    if (interrupt && interrupt->load() && !told_interrupt) {
      told_interrupt = true;  // rank 0 stops the run; no more work is asked for
      s.queue.clear();
      lock.unlock();
      send(nullptr, 0, 0, kInterrupt);
      lock.lock();
    }
    // A batch lasts max(20 ms, 0.5 ms per rank of the job) at this rank's measured speed (one
    // chunk per thread at least): two messages per batch and a bundle of results every quarter
    // batch keep messaging far below 2% of the time, and rank 0's message rate bounded as the
    // job grows. The next batch is asked for while the queued chunks still last half a batch
    // or two round trips, so the threads never wait for it.
    const double per_chunk =
        s.computed ? s.compute_seconds / static_cast<double>(s.computed) / threads : 0;
    const double batch_seconds = std::max(0.02, 0.5e-3 * static_cast<double>(session.size()));
    const auto batch = static_cast<std::uint64_t>(
        std::clamp(per_chunk > 0 ? batch_seconds / per_chunk : 1.0 * threads, 1.0 * threads, 1e6));
    const bool low = per_chunk > 0 ? static_cast<double>(s.queue.size()) * per_chunk <=
                                         std::max(batch_seconds / 2, 2 * round_trip)
                                   : s.queue.empty() && s.running == 0;
    const bool flush =
        s.outbox_chunks > 0 && (seconds(Clock::now() - last_flush) >= batch_seconds / 4 ||
                                (s.queue.empty() && s.running == 0));
    std::vector<char> bundle;
    if (flush) bundle.swap(s.outbox), s.outbox_chunks = 0, last_flush = Clock::now();
    lock.unlock();
    if (!bundle.empty()) {
      sending.emplace_back(MPI_Request{}, std::move(bundle));
      auto& [request, bytes] = sending.back();
      check(MPI_Isend(bytes.data(), static_cast<int>(bytes.size()), MPI_BYTE, 0, kResults,
                      MPI_COMM_WORLD, &request),
            "send");
    }
    std::erase_if(sending, [](auto& item) {
      int complete = 0;
      MPI_Test(&item.first, &complete, MPI_STATUS_IGNORE);
      return complete != 0;
    });
    if (low && !asked && !told_interrupt) {
      send(&batch, sizeof batch, 0, kRequest);
      asked = true;
      asked_at = Clock::now();
    }
  };
  std::exception_ptr error;
  pool.run(threads, compute, std::chrono::milliseconds(5), [&] {
    if (error) return;
    try {
      tick();
    } catch (...) {
      error = std::current_exception();
      std::lock_guard lock(s.mutex);
      s.done = true;  // the compute threads return; the error is rethrown below
      s.wake.notify_all();
    }
  });
  if (error) std::rethrow_exception(error);
  // Rank 0 said the run is over: the results still being sent complete as it drains them.
  for (auto& [request, bytes] : sending) MPI_Wait(&request, MPI_STATUS_IGNORE);
  send(nullptr, 0, 0, kFinal);
}

}  // namespace tannery::mpi
