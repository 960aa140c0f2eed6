// Monte Carlo error-rate simulation over a sweep of channel parameters.
//
// Frame pipeline: random information bits (0 at shortened positions) -> systematic encoder ->
// link (puncturing, interleaving, modulation, channel, demapping: tannery/channel/link.hpp) ->
// LLRs -> decoder -> counts. With a batched (SIMD) decoder the pipeline runs in the decoder's
// lane layout: Philox, Box-Muller or uniforms, channel LLRs, encoding (bit-sliced) and error
// counting for a whole batch of frames at once, giving the same numbers as frame by frame. Frames
// run in fixed-size chunks on worker threads; completed chunks are added to the point's totals
// strictly in chunk order and the stop rules are evaluated after each one, so work past the
// stopping chunk is discarded and the counts are identical for any number of threads. A run
// interrupted at a chunk boundary resumes to exactly the counts of an uninterrupted run. Only the
// wall-clock limit breaks this (it depends on the machine).
//
//   SimulationConfig config;            // decoder, channel, stop rules: the library's defaults
//   config.sweep = {1.5, 2.0, 2.5};     // Eb/N0 in dB
//   Simulator sim(load_code("qc-rate-half-z54"), config);
//   std::vector<PointResult> points = sim.run({}, on_progress, &interrupt_flag);
//   // points[i].fer(), .ber(); results_json(new_run_record(...)) writes a results file
#pragma once

#include <atomic>
#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "tannery/channel/channel.hpp"
#include "tannery/channel/link.hpp"
#include "tannery/code/analysis.hpp"
#include "tannery/code/code.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/decode/decoder.hpp"
#include "tannery/sim/random.hpp"

namespace tannery {

struct StopRules {
  std::uint64_t frame_errors = 100;    // a point stops once it has at least this many frame errors
  std::uint64_t max_frames = 100'000;  // ... or this many frames
  double max_seconds = 0;              // ... or this much wall-clock time (0 = no limit)
  double stop_below_fer = 0;           // the sweep stops after a point whose FER is below this
  bool operator==(const StopRules&) const = default;
};

// The sweep simulated when none is given: the waterfall of the shipped rate-1/2 codes (AWGN
// Eb/N0 1 to 1.75 dB), and ranges around the capacity limits of rate 1/2 for the BSC (p 0.08
// down to 0.04) and the BEC (epsilon 0.46 down to 0.36).
std::vector<double> default_sweep(ChannelKind kind);

struct SimulationConfig {
  DecoderSettings decoder;
  ChannelSpec channel;
  std::vector<double> sweep;  // Eb/N0 or Es/N0 (dB), p or epsilon
  StopRules stop;
  std::uint64_t seed = 1;
  // Frames per chunk; 0: automatic (default_chunk_frames).
  std::uint32_t chunk_frames = 0;
  unsigned threads = 0;           // 0 = all cores (config() then says how many)
  bool all_zero = false;          // send the all-zero codeword (symmetric channel and decoder only)
  double confidence = 0.95;       // level of the reported intervals
  std::size_t keep_failures = 0;  // keep the channel LLRs of the first N failing frames per point
  std::size_t failed_index_limit = 100'000;  // failed frame indices recorded per point
};

// Failure anatomy: the failed frames of one (a, b) class of their wrong bits at decoder exit
// (code/analysis.hpp, StructureClass; undecided bits count as wrong), with the wrong-bit sets of
// the first kAnatomyExamples of them in frame order.
struct FailureClassCount {
  std::uint64_t frames = 0;
  std::vector<std::vector<std::uint32_t>> examples;
  // Of those frames, the ones that oscillated: the decoder ran all its iterations without
  // converging and its wrong bits one iteration earlier were another set.
  std::uint64_t oscillating = 0;
  bool operator==(const FailureClassCount&) const = default;
};
// Failures with more wrong bits than this are counted apart (larger_failures), unclassified.
inline constexpr std::uint32_t kAnatomyMaxBits = 40;
inline constexpr std::size_t kAnatomyExamples = 3;

// One structure's share of an importance-sampled point (floor/estimate.hpp).
struct StructureEstimate {
  std::vector<std::uint32_t> variables;  // the structure (its orbit's representative)
  StructureClass cls;
  std::uint64_t multiplicity = 1;  // sets in its orbit, all counted in fer
  std::vector<double> shifts;      // noise mean shift on each of its bits, in signal amplitudes
  std::uint64_t frames = 0;        // biased frames decoded
  std::uint64_t hits = 0;          // of them, failures attributed to the structure
  double fer = 0, fer_sd = 0;      // its contribution (whole orbit) and standard error
  double ber = 0, ber_sd = 0;
  double ess = 0;  // effective sample size of the weighted hits, (sum w)^2 / sum w^2
  bool operator==(const StructureEstimate&) const = default;
};

// A point estimated by importance sampling: the sum over structures of each one's estimate;
// a lower estimate of the true FER (structures not listed are not counted).
struct ImportanceEstimate {
  double fer = 0, fer_sd = 0, ber = 0, ber_sd = 0;
  // Smallest effective sample size among the structures carrying >= 5% of fer (0: no hit).
  double ess = 0;
  bool reliable = false;  // fer > 0 and that ess reaches the run's minimum
  std::vector<StructureEstimate> structures;
  bool operator==(const ImportanceEstimate&) const = default;
};

// Counts of one sweep point (only whole chunks, in order), or an importance-sampled estimate:
// then frames and frame_errors count the biased frames and their failures, and fer() and ber()
// are the estimate's.
struct PointResult {
  double parameter = 0;
  std::uint64_t frames = 0, frame_errors = 0, bit_errors = 0, bits = 0;
  std::uint64_t coded_bit_errors = 0, coded_bits = 0, undetected_errors = 0, iterations = 0;
  double bit_error_squares = 0;                    // sum over frames of (information bit errors)^2
  std::vector<std::uint64_t> iteration_histogram;  // frames by iterations used
  std::vector<std::uint64_t> failed_frames;        // indices of failed frames, increasing (capped)
  std::map<StructureClass, FailureClassCount> failure_classes;  // failures of <= 40 wrong bits
  std::uint64_t larger_failures = 0;                            // failures of more
  std::uint64_t chunks = 0;
  bool complete = false;
  std::string stop_reason;  // why the point stopped (or "interrupted")
  double seconds = 0;       // wall-clock time spent on the point
  std::optional<ImportanceEstimate> importance;

  double fer() const {
    if (importance) return importance->fer;
    return frames ? static_cast<double>(frame_errors) / static_cast<double>(frames) : 0;
  }
  double ber() const {
    if (importance) return importance->ber;
    return bits ? static_cast<double>(bit_errors) / static_cast<double>(bits) : 0;
  }
  double mean_iterations() const {
    return frames ? static_cast<double>(iterations) / static_cast<double>(frames) : 0;
  }
};

// Adds a chunk's counts to a point's in-order totals (failed frame indices up to a limit).
void add_chunk(PointResult& total, const PointResult& chunk, std::size_t failed_index_limit);

// The counts of chunk `chunk` of a point, as a shard keeps them for merging.
struct ChunkCounts {
  std::uint64_t chunk = 0;
  PointResult counts;
};

// One of `count` independent jobs a run is split into (job arrays, no MPI): it computes the
// chunks c = index (mod count) of every point in order, each point until its own totals reach
// `frame_errors` or `frames` (or the point has no such chunk left). merge_shards
// (tannery/report/shards.hpp) then applies the run's stop rules in chunk order.
struct ShardPlan {
  std::uint32_t index = 0, count = 1;
  std::uint64_t frames = 0, frame_errors = 0;  // per point, over this shard's chunks
};
// A shard's work on one point: its totals (chunks = the shard's chunks done; complete when
// its plan is met) and every chunk's counts in order.
struct ShardPoint {
  PointResult totals;
  std::vector<ChunkCounts> chunks;
};

// A failing frame kept for offline study.
struct KeptFrame {
  std::size_t point = 0;
  std::uint64_t frame = 0;
  std::vector<float> llr;
};

// Everything about one frame, regenerated from (seed, point, frame).
struct FrameData {
  std::vector<std::uint8_t> info, codeword, hard;
  std::vector<double> llr, posterior;
  FrameOutcome outcome;
  std::size_t coded_errors = 0, info_errors = 0;  // decisions against the codeword sent
};

// Frames a point still needs by the stop rules, estimated at its frame-error rate so far: to
// reach the frame-error target, capped by max_frames (the time limit is not counted).
double frames_to_go(const PointResult& totals, const StopRules& stop);

struct Progress {
  std::size_t point = 0;
  PointResult totals;  // in-order totals so far
  double seconds = 0;
  std::span<const PointResult> earlier;  // the sweep's points before this one, final
};

// The counts of one chunk (chunks = 1) and the failing frames it kept: what a process computing
// chunks for another hands back in a distributed run.
struct ChunkResult {
  PointResult counts;
  std::vector<KeptFrame> kept;
};

// Chunks computed by other processes, seen from the process that runs the sweep: it alone keeps
// the in-order totals, evaluates the stop rules and writes results (tannery/sim/mpi_run.hpp
// implements this over MPI). The others compute with Simulator::ChunkComputer what they are
// dealt; results are identical to a single-process run since chunks are pure functions of
// (seed, point, chunk).
class RemoteChunks {
 public:
  virtual ~RemoteChunks() = default;
  // Chunks [first, last) of the running point for a process that asked for up to `count`
  // (first == last: none left to deal).
  using Deal = std::function<std::pair<std::uint64_t, std::uint64_t>(std::uint64_t count)>;
  // A result that arrived: chunk `chunk` of sweep point `point`.
  using Deliver = std::function<void(std::size_t point, std::uint64_t chunk, ChunkResult&&)>;
  // Called every 5 ms from the thread that runs point `point` (a run calls it from
  // one thread only): answers requests for work with deal and hands every arrived result to
  // deliver.
  virtual void exchange(std::size_t point, const Deal& deal, const Deliver& deliver) = 0;
  // Point `point` stopped: the work dealt for it, queued or in flight, is dropped.
  virtual void cancel(std::size_t point) = 0;
  // The other processes (a deal never gives one of them more than a share of what is left).
  virtual unsigned processes() const = 0;
};

class Simulator {
 public:
  // Validates the config (decoder settings, channel values) and prepares the encoder. The
  // simulator shares the code with its decoders (one per thread), or keeps its own copy.
  Simulator(std::shared_ptr<const Code> code, SimulationConfig config);
  Simulator(Code code, SimulationConfig config);

  const Code& code() const noexcept { return code_; }
  const SimulationConfig& config() const noexcept { return config_; }
  const Encoder& encoder() const noexcept { return encoder_; }
  const Link& link() const noexcept { return link_; }
  // Information bits per transmitted symbol, the rate used for Eb/N0 (Link::snr_rate of k, or
  // of n - m with design_rate): k/n for BPSK with every code bit sent.
  double rate() const noexcept;
  // Information bits per sent code bit: (k - shortened) / sent, k/n with every bit sent.
  double effective_rate() const noexcept;
  ChannelPoint channel_point(double parameter) const;

  // Runs the sweep. previous (from a results file) holds points already simulated: complete ones
  // are kept, a partial one continues from its next chunk. progress is called from the calling
  // thread about five times a second; interrupt, when set, stops at the next chunk boundary.
  // With remote, other processes compute part of the chunks (a distributed run; the counts do
  // not change).
  std::vector<PointResult> run(std::vector<PointResult> previous,
                               const std::function<void(const Progress&)>& progress,
                               const std::atomic<bool>* interrupt, RemoteChunks* remote = nullptr);
  // Runs one shard of the sweep (every point; previous from its shard file continues it).
  std::vector<ShardPoint> run_shard(const ShardPlan& plan, std::vector<ShardPoint> previous,
                                    const std::function<void(const Progress&)>& progress,
                                    const std::atomic<bool>* interrupt);
  // Frames kept by keep_failures during the last run, by point then frame index.
  const std::vector<KeptFrame>& kept_frames() const noexcept { return kept_; }
  // Lane-iterations of this process's batched decoders during the last run (zero without them).
  LaneUse lane_use() const noexcept { return lane_use_; }

  FrameData replay(std::size_t point, std::uint64_t frame) const;

  // Chunks of a point: max_frames in chunks of chunk_frames (the last one may be shorter).
  std::uint64_t chunks_per_point() const noexcept;

 private:
  struct Worker;

 public:
  // Computes single chunks with a decoder and buffers of its own (one per thread; the simulator
  // must outlive it): what a process computing chunks dealt by another runs.
  class ChunkComputer {
   public:
    explicit ChunkComputer(const Simulator& sim);
    ChunkComputer(ChunkComputer&&) noexcept;
    ~ChunkComputer();
    // Chunk `chunk` of sweep point `point` (Error when the run has no such chunk).
    ChunkResult compute(std::size_t point, std::uint64_t chunk);

   private:
    const Simulator* sim_;
    std::unique_ptr<Worker> worker_;
  };

 private:
  std::unique_ptr<Worker> make_worker() const;
  // Whether failures at the iteration limit are checked for oscillation (iterative decoders with
  // 2 iterations or more).
  bool checks_oscillation() const noexcept;
  // Whether a failed frame's wrong bits one iteration before the last differ from `wrong` (the
  // frame decoded again, alone, with one iteration less; batched decoders record those decisions
  // instead).
  bool oscillates(Worker& w, std::uint64_t frame, std::span<const double> llr,
                  std::span<const std::uint8_t> codeword,
                  std::span<const std::uint32_t> wrong) const;
  ChunkResult compute_chunk(Worker& w, std::size_t index, const ChannelPoint& channel,
                            std::uint64_t chunk) const;
  PointResult run_point(std::size_t index, PointResult start, std::span<const PointResult> earlier,
                        const std::function<void(const Progress&)>& progress,
                        const std::atomic<bool>* interrupt, RemoteChunks* remote,
                        const ShardPlan* shard, std::vector<ChunkCounts>* log);
  // One chunk in frame layout or, with a batched decoder, in lane layout (same
  // numbers); record(frame, coded errors, information errors, outcome, llr getter, wrong
  // positions) per frame, the wrong positions given for failures of at most kAnatomyMaxBits.
  template <class Record>
  void run_frames(Worker& w, std::size_t index, const ChannelPoint& channel, std::uint64_t first,
                  std::size_t count, const Record& record) const;
  template <class Record>
  void run_lanes(Worker& w, LaneDecoder& decoder, std::size_t index, const ChannelPoint& channel,
                 std::uint64_t first, std::size_t count, const Record& record) const;

  std::shared_ptr<const Code> shared_;
  const Code& code_;  // *shared_
  SimulationConfig config_;
  Encoder encoder_;
  std::vector<std::uint8_t> is_info_;  // 1 at the information positions (not shortened)
  Link link_;
  std::vector<KeptFrame> kept_;
  LaneUse lane_use_;
};

// Generates frame id: information bits (stream 0; zeros when all_zero, and at the link's
// shortened positions) and its codeword.
void frame_codeword(const FrameId& id, const Encoder& encoder, const Link& link, bool all_zero,
                    std::span<std::uint8_t> info, std::span<std::uint8_t> codeword);
// The channel LLRs of a frame through the link from its stream-1 noise (buffers.noise).
void frame_llrs(const FrameId& id, const ChannelPoint& channel, const Link& link,
                std::span<const std::uint8_t> codeword, std::span<double> llr,
                LinkBuffers& buffers);
// Error unless the shortened positions of the link are information positions of the encoder
// (only those can be known zeros).
void check_shortening(const Link& link, const Encoder& encoder);

// The largest chunk a simulation takes (each thread holds a chunk's frames in memory).
inline constexpr std::uint32_t kMaxChunkFrames = 1u << 20;

// The automatic chunk size: 64 frames (a multiple of every SIMD batch width: 64 int8 lanes of
// AVX-512), and for the SIMD kernels a power of two up to 1024 so the lanes of a batch can be
// refilled many times in a chunk, as long as its float32 channel values stay within 16 MB (the
// kernels keep a chunk's channel values to refill lanes from). It depends on
// the code and the settings only, never on the machine.
std::uint32_t default_chunk_frames(const Code& code, const DecoderSettings& decoder);

// Parses a sweep: a comma-separated list "1,1.5,2" and/or ranges "START:STEP:STOP" (inclusive,
// tolerant to rounding). Throws Error on bad syntax, a zero or wrong-signed step, or > 10000
// values.
std::vector<double> parse_sweep(const std::string& text);

}  // namespace tannery
