// One simulation over many processes with MPI (library tannery::mpi, built when CMake finds
// MPI): rank 0 runs the sweep (Simulator::run) with a Coordinator as its RemoteChunks, keeps the
// in-order totals and writes every output; every other rank serves it, computing the chunks it
// is dealt on its own threads. Counts are those of a single-process run (chunks are pure
// functions of (seed, point, chunk) and rank 0 adds them strictly in chunk order).
//
// Dealing: a rank asks for a batch of chunks while its queue still holds half a batch, so its
// threads never wait for rank 0; a batch is sized from the rank's own measured speed to last
// max(20 ms, 0.5 ms per rank in the job), which keeps messaging far below 2% of the time and
// rank 0's message rate bounded as the job grows. Rank 0 deals guided: no process gets more
// than a share of a point's chunks left, so a point's last chunks spread over every rank.
// Results travel in bundles at most every quarter batch. A stopped point is cancelled on every
// rank at once: its queued chunks are dropped and results still in flight are discarded.
//
//   tannery::mpi::Session mpi;                       // MPI_Init_thread (funneled)
//   if (mpi.rank() == 0) {
//     tannery::mpi::Coordinator remote(mpi, &interrupt);
//     points = sim.run(previous, progress, &interrupt, &remote);
//     remote.finish();                               // releases the other ranks
//   } else {
//     tannery::mpi::serve(mpi, sim, threads, &interrupt);
//   }
#pragma once

#include <atomic>
#include <cstdint>
#include <string>
#include <vector>

#include "tannery/sim/simulator.hpp"

namespace tannery::mpi {

// MPI for this process: initialised on construction (MPI_THREAD_FUNNELED: only the thread that
// made the Session calls MPI), finalised on destruction.
class Session {
 public:
  Session();
  ~Session();
  Session(const Session&) = delete;
  Session& operator=(const Session&) = delete;

  int rank() const noexcept { return rank_; }
  int size() const noexcept { return size_; }
  // Ranks sharing this machine (for the default of threads per rank: its cores shared out).
  int ranks_on_this_machine() const noexcept { return local_size_; }
  std::string host() const;

  // Every rank's status after setup, so that one rank's error ends every rank cleanly: each
  // gives whether its setup succeeded and a fingerprint of its run (settings, code, version).
  // Returns per rank {ok, fingerprint} (collective).
  struct Status {
    bool ok = false;
    std::string fingerprint;
  };
  std::vector<Status> agree(bool ok, const std::string& fingerprint) const;
  // Waits until every rank is here (collective).
  void barrier() const;
  // Sum of a count over the ranks (collective).
  std::uint64_t sum(std::uint64_t value) const;
  // Ends every rank of the job at once (after an error on one rank past setup).
  [[noreturn]] void abort(int code) const;

 private:
  int rank_ = 0, size_ = 1, local_size_ = 1;
};

// What the coordinator measured: the chunks the other ranks computed, and the time rank 0's
// coordinating thread spent on them (receiving, decoding, dealing; the in-order accumulation
// of their results included), but for the first two exchanges with each rank (connection set-up).
struct CoordinatorFigures {
  std::uint64_t remote_chunks = 0, messages = 0;
  double busy_seconds = 0;
  double microseconds_per_chunk() const {
    return remote_chunks ? busy_seconds * 1e6 / static_cast<double>(remote_chunks) : 0;
  }
};

// Rank 0's side: deals chunks to the other ranks and takes their results.
class Coordinator final : public RemoteChunks {
 public:
  // interrupt is set when another rank reports a signal (so every rank stops).
  Coordinator(const Session& session, std::atomic<bool>* interrupt);
  ~Coordinator() override;
  void exchange(std::size_t point, const Deal& deal, const Deliver& deliver) override;
  void cancel(std::size_t point) override;
  unsigned processes() const override { return static_cast<unsigned>(session_.size() - 1); }
  // Tells every rank that the run is over and waits until each has said its last word.
  void finish();
  const CoordinatorFigures& figures() const noexcept { return figures_; }

 private:
  struct Request {
    int rank;
    std::uint64_t count;
  };
  const Session& session_;
  std::atomic<bool>* interrupt_;
  std::vector<Request> pending_;
  std::vector<char> buffer_;
  std::vector<std::uint8_t> greeted_;  // per rank: messages exchanged (up to 2)
  CoordinatorFigures figures_;
  bool finished_ = false;
};

// Every other rank's side: computes the chunks rank 0 deals with `threads` threads until rank 0
// finishes the run. A signal (interrupt set) is reported to rank 0, which stops the run.
void serve(const Session& session, const Simulator& sim, unsigned threads,
           const std::atomic<bool>* interrupt);

// A chunk's result as bytes and back (the message format between ranks; same binary and byte
// order on every rank).
void append_chunk(std::vector<char>& out, std::size_t point, std::uint64_t chunk,
                  const ChunkResult& r);
struct ChunkMessage {
  std::size_t point = 0;
  std::uint64_t chunk = 0;
  ChunkResult result;
};
std::vector<ChunkMessage> parse_chunks(const char* data, std::size_t size);

}  // namespace tannery::mpi
