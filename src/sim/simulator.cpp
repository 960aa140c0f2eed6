#include "tannery/sim/simulator.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <array>
#include <bit>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <exception>
#include <map>
#include <mutex>
#include <sstream>
#include <thread>

#include "tannery/base/thread_pool.hpp"
#include "tannery/error.hpp"
#include "tannery/parse.hpp"
#include "tannery/sim/random.hpp"

namespace tannery {

namespace {

using Clock = std::chrono::steady_clock;

double seconds_since(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

}  // namespace

void add_chunk(PointResult& total, const PointResult& chunk, std::size_t failed_index_limit) {
  total.frames += chunk.frames;
  total.frame_errors += chunk.frame_errors;
  total.bit_errors += chunk.bit_errors;
  total.bits += chunk.bits;
  total.coded_bit_errors += chunk.coded_bit_errors;
  total.coded_bits += chunk.coded_bits;
  total.undetected_errors += chunk.undetected_errors;
  total.iterations += chunk.iterations;
  total.bit_error_squares += chunk.bit_error_squares;
  if (total.iteration_histogram.size() < chunk.iteration_histogram.size()) {
    total.iteration_histogram.resize(chunk.iteration_histogram.size(), 0);
  }
  for (std::size_t i = 0; i < chunk.iteration_histogram.size(); ++i) {
    total.iteration_histogram[i] += chunk.iteration_histogram[i];
  }
  for (std::uint64_t f : chunk.failed_frames) {
    if (total.failed_frames.size() < failed_index_limit) total.failed_frames.push_back(f);
  }
  for (const auto& [cls, count] : chunk.failure_classes) {
    FailureClassCount& into = total.failure_classes[cls];
    into.frames += count.frames;
    into.oscillating += count.oscillating;
    for (const auto& example : count.examples) {
      if (into.examples.size() < kAnatomyExamples) into.examples.push_back(example);
    }
  }
  total.larger_failures += chunk.larger_failures;
  total.chunks += 1;
}

// Per-thread state: a decoder and the buffers of one chunk, reused for every chunk.
struct Simulator::Worker {
  std::unique_ptr<Decoder> decoder;
  std::vector<std::uint8_t> info, codewords, hard;
  std::vector<std::uint64_t> info_masks, codeword_masks, errors;  // lane layout
  std::vector<std::uint64_t> wide_codewords;  // 64 frames, bit-sliced (narrow lanes)
  std::vector<double> llr, frame_llr, group_noise;
  LinkBuffers link_buffers;
  std::vector<FrameOutcome> outcomes;
  LaneResults lane_results;
  std::unique_ptr<StructureClassifier> classifier;
  std::unique_ptr<Decoder> shorter;  // one iteration less (made when first needed)
  std::vector<std::uint8_t> shorter_hard;
  std::vector<std::uint32_t> wrong, wrong_start;  // failures' wrong positions (lane layout: all)
};

Simulator::Simulator(Code code, SimulationConfig config)
    : Simulator(std::make_shared<const Code>(std::move(code)), std::move(config)) {}

Simulator::Simulator(std::shared_ptr<const Code> code, SimulationConfig config)
    : shared_(code ? std::move(code) : throw Error("Simulator: no code")),
      code_(*shared_),
      config_(std::move(config)),
      encoder_(code_),
      is_info_(code_.n(), 0),
      link_(config_.channel, config_.channel.puncture.empty()
                                 ? PunctureMap::all_sent(code_.n())
                                 : read_puncture_map(config_.channel.puncture, code_.n())) {
  check_shortening(link_, encoder_);
  for (std::uint32_t p : encoder_.info_positions())
    is_info_[p] = link_.puncture_map().state[p] != PunctureMap::shortened;
  if (config_.threads == 0) config_.threads = std::max(1u, std::thread::hardware_concurrency());
  config_.decoder = resolve_kernel(config_.decoder, code_);
  validate(config_.decoder, code_);
  if (config_.sweep.empty()) throw Error("the sweep has no points");
  for (double p : config_.sweep) check_channel_parameter(config_.channel.kind, p);
  if (config_.chunk_frames == 0)
    config_.chunk_frames = default_chunk_frames(code_, config_.decoder);
  validate(config_.channel);
  if (config_.chunk_frames > kMaxChunkFrames) {
    throw Error(
        fmt::format("a chunk of {} frames is more than the {} allowed (each thread holds "
                    "a chunk's frames in memory)",
                    config_.chunk_frames, kMaxChunkFrames));
  }
  const StopRules& stop = config_.stop;
  if (stop.max_frames == 0) throw Error("stop rule: max_frames must be at least 1");
  if (stop.frame_errors == 0) throw Error("stop rule: frame_errors must be at least 1");
  if (!(stop.max_seconds >= 0 && std::isfinite(stop.max_seconds)))
    throw Error(
        fmt::format("stop rule: max_seconds must be >= 0 (0: no limit), got {}", stop.max_seconds));
  if (!(stop.stop_below_fer >= 0 && stop.stop_below_fer <= 1))
    throw Error(fmt::format("stop rule: stop_below_fer must be in [0, 1] (0: never), got {}",
                            stop.stop_below_fer));
  if (!(config_.confidence > 0 && config_.confidence < 1))
    throw Error("confidence must be in (0, 1)");
  if (encoder_.k() == 0) throw Error("the code has dimension k = 0: nothing to simulate");
  if (snr_swept(config_.channel.kind) && rate() <= 0)
    throw Error("the rate for Eb/N0 must be positive");
  if (config_.all_zero && link_.constellation().bits() > 1) {
    throw Error(
        "all_zero needs a symmetric channel: with more than one bit per symbol the all-zero "
        "codeword uses only some points of the constellation");
  }
  for (double p : config_.sweep) channel_point(p);  // every point representable
}

double Simulator::rate() const noexcept {
  return link_.snr_rate(config_.channel.design_rate ? code_.n() - std::min(code_.m(), code_.n())
                                                    : encoder_.k());
}

double Simulator::effective_rate() const noexcept {
  return static_cast<double>(encoder_.k() - link_.shortened()) / static_cast<double>(link_.sent());
}

ChannelPoint Simulator::channel_point(double parameter) const {
  return tannery::channel_point(config_.channel, parameter, rate());
}

void check_shortening(const Link& link, const Encoder& encoder) {
  const auto& state = link.puncture_map().state;
  std::vector<std::uint8_t> info(state.size(), 0);
  for (std::uint32_t p : encoder.info_positions()) info[p] = 1;
  for (std::size_t p = 0; p < state.size(); ++p) {
    if (state[p] == PunctureMap::shortened && !info[p]) {
      throw Error(fmt::format(
          "puncture map: shortened position {} is a parity position of this code's systematic "
          "encoder; only information positions can be known zeros (the first is {})",
          p, encoder.info_positions().empty() ? 0 : encoder.info_positions().front()));
    }
  }
}

void frame_codeword(const FrameId& id, const Encoder& encoder, const Link& link, bool all_zero,
                    std::span<std::uint8_t> info, std::span<std::uint8_t> codeword) {
  if (all_zero) {
    std::fill(info.begin(), info.end(), std::uint8_t{0});
    std::fill(codeword.begin(), codeword.end(), std::uint8_t{0});
    return;
  }
  frame_bits(id, info);
  if (link.shortened() > 0) {
    const auto& positions = encoder.info_positions();
    for (std::size_t i = 0; i < info.size(); ++i)
      if (link.puncture_map().state[positions[i]] == PunctureMap::shortened) info[i] = 0;
  }
  encoder.encode(info, codeword);
}

void frame_llrs(const FrameId& id, const ChannelPoint& channel, const Link& link,
                std::span<const std::uint8_t> codeword, std::span<double> llr,
                LinkBuffers& buffers) {
  buffers.noise.resize(link.noise_values());
  if (link.binary() && channel.kind() != ChannelKind::awgn)
    frame_uniforms(id, buffers.noise);
  else
    frame_gaussians(id, buffers.noise);
  link.transmit(channel, codeword, buffers.noise, llr, buffers);
}

// Frame layout: every frame generated alone, the decoder given the whole chunk.
template <class Record>
void Simulator::run_frames(Worker& w, std::size_t index, const ChannelPoint& channel,
                           std::uint64_t first, std::size_t count, const Record& record) const {
  const std::size_t n = code_.n(), k = encoder_.k();
  w.info.resize(count * k);
  w.codewords.resize(count * n);
  w.hard.resize(count * n);
  w.llr.resize(count * n);
  w.outcomes.resize(count);
  for (std::size_t f = 0; f < count; ++f) {
    const FrameId id{config_.seed, static_cast<std::uint32_t>(index), first + f};
    const std::span<std::uint8_t> codeword = std::span(w.codewords).subspan(f * n, n);
    frame_codeword(id, encoder_, link_, config_.all_zero, std::span(w.info).subspan(f * k, k),
                   codeword);
    frame_llrs(id, channel, link_, codeword, std::span(w.llr).subspan(f * n, n), w.link_buffers);
  }
  w.decoder->decode(w.llr, w.hard, {}, w.outcomes, first);
  const auto& info_pos = encoder_.info_positions();
  for (std::size_t f = 0; f < count; ++f) {
    const std::uint8_t* sent = w.codewords.data() + f * n;
    const std::uint8_t* got = w.hard.data() + f * n;
    std::uint64_t coded = 0, info_errors = 0;
    for (std::size_t i = 0; i < n; ++i) coded += sent[i] != got[i];
    for (std::uint32_t p : info_pos) info_errors += is_info_[p] && sent[p] != got[p];
    w.wrong.clear();
    if (coded <= kAnatomyMaxBits) {
      for (std::size_t i = 0; i < n && coded > 0; ++i) {
        if (sent[i] != got[i]) w.wrong.push_back(static_cast<std::uint32_t>(i));
      }
    }
    const auto sent_frame = [&] {
      return std::pair(std::span<const double>(w.llr).subspan(f * n, n),
                       std::span<const std::uint8_t>(w.codewords).subspan(f * n, n));
    };
    record(first + f, coded, info_errors, w.outcomes[f], sent_frame,
           std::span<const std::uint32_t>(w.wrong), [&] {
             const auto sent_now = sent_frame();
             return oscillates(w, first + f, sent_now.first, sent_now.second, w.wrong);
           });
  }
}

// Lane layout (a batched decoder): the chunk's frames generated in groups of lanes()
// side by side with SIMD, bit-sliced encoding, the decoder refilling lanes as frames finish;
// errors counted from the decisions' masks. The same numbers as run_frames.
template <class Record>
void Simulator::run_lanes(Worker& w, LaneDecoder& decoder, std::size_t index,
                          const ChannelPoint& channel, std::uint64_t first, std::size_t count,
                          const Record& record) const {
  const std::size_t n = code_.n(), k = encoder_.k(), lanes = decoder.lanes();
  const std::size_t groups = (count + lanes - 1) / lanes;
  w.info_masks.resize(k);
  w.codeword_masks.resize(groups * n);
  w.wide_codewords.resize(n);
  w.llr.resize(n * lanes);
  // Information bits and codewords are bit-sliced in 64-bit masks: with fewer lanes they are
  // made for 64 frames at once, `per` groups, each group taking its slice. A short last group
  // generates frames beyond the chunk too (not decoded).
  const std::size_t per = std::max<std::size_t>(64 / lanes, 1);
  const std::uint64_t keep = lanes >= 64 ? ~std::uint64_t{0} : (std::uint64_t{1} << lanes) - 1;
  decoder.begin(count);
  for (std::size_t g = 0; g < groups; ++g) {
    const FrameGroup group{config_.seed, static_cast<std::uint32_t>(index), first + g * lanes,
                           lanes};
    const std::span<std::uint64_t> sent(w.codeword_masks.data() + g * n, n);
    if (config_.all_zero) {
      std::fill(sent.begin(), sent.end(), 0);
    } else {
      if (g % per == 0) {
        const FrameGroup wide{group.seed, group.point, group.first, per * lanes};
        group_bits(wide, w.info_masks);
        for (std::size_t i = 0; i < k; ++i) {
          if (!is_info_[encoder_.info_positions()[i]]) w.info_masks[i] = 0;  // shortened
        }
        encoder_.encode_lanes(w.info_masks, w.wide_codewords);
      }
      const auto shift = static_cast<unsigned>(g % per * lanes);
      for (std::size_t v = 0; v < n; ++v) sent[v] = (w.wide_codewords[v] >> shift) & keep;
    }
    if (link_.binary() && channel.kind() == ChannelKind::awgn) {
      // A quantized decoder's values straight from the Gaussians (the same as from the LLRs).
      if (const auto fixed = decoder.fixed_point_group(g)) {
        group_channel_values(group, channel, sent, *fixed);
        const auto saturated = static_cast<std::int16_t>(fixed->limit);
        if (!fixed->int8.empty()) {
          link_.mark_unsent(fixed->int8, lanes, static_cast<std::int8_t>(saturated));
        } else {
          link_.mark_unsent(fixed->int16, lanes, saturated);
        }
        continue;
      }
    }
    if (link_.binary()) {
      group_channel_llrs(group, channel, sent, w.llr);
      link_.mark_unsent(w.llr, lanes);
    } else {
      // The group's noise side by side (group_gaussians: frame_gaussians of each frame, bit for
      // bit), through the link in lane layout.
      w.group_noise.resize(link_.noise_values() * lanes);
      group_gaussians(group, w.group_noise);
      link_.transmit_lanes(channel, sent, lanes, w.group_noise, w.llr, w.link_buffers);
    }
    decoder.load(g, w.llr);
  }
  decoder.decode(w.lane_results, false, checks_oscillation());
  // Errors per frame: lane l of group g holds frame g * lanes + l, whose sent bits are bit l of
  // that group's masks. An undecided bit is an error whatever was sent.
  // wrong_bits(fn): fn(frame, position) for every wrong bit of every frame of the chunk, by
  // group, then position, then lane.
  auto wrong_bits = [&](const auto& fn) {
    for (std::size_t g = 0; g < groups; ++g) {
      const std::uint64_t* sent = w.codeword_masks.data() + g * n;
      const std::uint64_t* decided = w.lane_results.hard.data() + g * n;
      const std::uint64_t* zero = w.lane_results.undecided.data() + g * n;
      const std::size_t in_chunk = std::min(lanes, count - g * lanes);
      const std::uint64_t valid =
          in_chunk >= 64 ? ~std::uint64_t{0} : (std::uint64_t{1} << in_chunk) - 1;
      for (std::size_t v = 0; v < n; ++v) {
        for (std::uint64_t x = ((decided[v] ^ sent[v]) | zero[v]) & valid; x; x &= x - 1)
          fn(g * lanes + static_cast<std::size_t>(std::countr_zero(x)), v);
      }
    }
  };
  w.errors.assign(2 * count, 0);
  wrong_bits([&](std::size_t f, std::size_t v) {
    ++w.errors[2 * f];
    w.errors[2 * f + 1] += is_info_[v];
  });
  // The wrong positions of the failures small enough to classify: a second pass, only when
  // there are any.
  w.wrong_start.assign(count + 1, 0);
  for (std::size_t f = 0; f < count; ++f) {
    const std::uint64_t e = w.errors[2 * f];
    w.wrong_start[f + 1] =
        w.wrong_start[f] + (e <= kAnatomyMaxBits ? static_cast<std::uint32_t>(e) : 0);
  }
  w.wrong.resize(w.wrong_start[count]);
  if (!w.wrong.empty()) {
    std::vector<std::uint32_t>& fill = w.wrong_start;  // advanced per frame, then restored
    wrong_bits([&](std::size_t f, std::size_t v) {
      if (w.errors[2 * f] <= kAnatomyMaxBits) w.wrong[fill[f]++] = static_cast<std::uint32_t>(v);
    });
    for (std::size_t f = count; f > 0; --f) fill[f] = fill[f - 1];  // fill[f] is now start of f+1
    fill[0] = 0;
  }
  const std::vector<FrameOutcome>& outcomes = w.lane_results.outcome;
  for (std::size_t f = 0; f < count; ++f) {
    const std::span<const std::uint32_t> wrong(w.wrong.data() + w.wrong_start[f],
                                               w.wrong_start[f + 1] - w.wrong_start[f]);
    // Oscillating: a wrong set one iteration before the last that differs from the last one.
    const auto oscillated = [&] {
      const std::size_t g = f / lanes, l = f % lanes;
      const std::uint64_t* sent = w.codeword_masks.data() + g * n;
      const std::uint64_t* decided = w.lane_results.hard.data() + g * n;
      const std::uint64_t* zero = w.lane_results.undecided.data() + g * n;
      const std::uint64_t* decided_before = w.lane_results.hard_before.data() + g * n;
      const std::uint64_t* zero_before = w.lane_results.undecided_before.data() + g * n;
      for (std::size_t v = 0; v < n; ++v) {
        const std::uint64_t now = (decided[v] ^ sent[v]) | zero[v];
        const std::uint64_t before = (decided_before[v] ^ sent[v]) | zero_before[v];
        if (((now ^ before) >> l) & 1u) return true;
      }
      return false;
    };
    record(
        first + f, w.errors[2 * f], w.errors[2 * f + 1], outcomes[f],
        [&] {
          // Regenerated alone: the same values as in its group.
          w.info.resize(k);
          w.codewords.resize(n);
          w.frame_llr.resize(n);
          const FrameId id{config_.seed, static_cast<std::uint32_t>(index), first + f};
          frame_codeword(id, encoder_, link_, config_.all_zero, w.info, w.codewords);
          frame_llrs(id, channel, link_, w.codewords, w.frame_llr, w.link_buffers);
          return std::pair(std::span<const double>(w.frame_llr),
                           std::span<const std::uint8_t>(w.codewords));
        },
        wrong, oscillated);
  }
}

bool Simulator::checks_oscillation() const noexcept {
  return config_.decoder.algorithm != Algorithm::ml && config_.decoder.iterations >= 2;
}

ChunkResult Simulator::compute_chunk(Worker& w, std::size_t index, const ChannelPoint& channel,
                                     std::uint64_t j) const {
  const std::uint64_t chunk = config_.chunk_frames;
  const std::uint64_t first = j * chunk;
  const std::size_t count =
      static_cast<std::size_t>(std::min(chunk, config_.stop.max_frames - first));
  const std::size_t n = code_.n(), k = encoder_.k();
  ChunkResult r;
  PointResult& c = r.counts;
  c.parameter = config_.sweep[index];
  c.frames = count;
  c.bits = count * (k - link_.shortened());
  c.coded_bits = count * n;
  c.chunks = 1;
  // One frame's counts; sent() gives its channel LLRs and codeword, asked for only when it
  // failed and is kept; oscillated() whether it oscillates, asked for only when it failed at the
  // iteration limit with a small wrong set (checks_oscillation).
  const bool check_oscillation = checks_oscillation();
  auto record = [&](std::uint64_t frame, std::uint64_t coded, std::uint64_t info_errors,
                    const FrameOutcome& o, const auto& sent, std::span<const std::uint32_t> wrong,
                    const auto& oscillated) {
    c.iterations += static_cast<std::uint64_t>(o.iterations);
    const auto it = static_cast<std::size_t>(o.iterations);
    if (c.iteration_histogram.size() <= it) c.iteration_histogram.resize(it + 1, 0);
    ++c.iteration_histogram[it];
    if (coded == 0) return;
    ++c.frame_errors;
    c.coded_bit_errors += coded;
    c.bit_errors += info_errors;
    c.bit_error_squares += static_cast<double>(info_errors) * static_cast<double>(info_errors);
    c.undetected_errors += o.converged ? 1 : 0;
    c.failed_frames.push_back(frame);
    if (coded <= kAnatomyMaxBits) {
      FailureClassCount& cls = c.failure_classes[w.classifier->classify(wrong)];
      ++cls.frames;
      if (check_oscillation && !o.converged && o.iterations == config_.decoder.iterations)
        cls.oscillating += oscillated() ? 1 : 0;
      if (cls.examples.size() < kAnatomyExamples)
        cls.examples.emplace_back(wrong.begin(), wrong.end());
    } else {
      ++c.larger_failures;
    }
    if (r.kept.size() < config_.keep_failures) {
      const std::span<const double> llr = sent().first;
      r.kept.push_back(KeptFrame{index, frame, std::vector<float>(llr.begin(), llr.end())});
    }
  };
  if (LaneDecoder* lanes = w.decoder->lane_decoder()) {
    run_lanes(w, *lanes, index, channel, first, count, record);
  } else {
    run_frames(w, index, channel, first, count, record);
  }
  return r;
}

bool Simulator::oscillates(Worker& w, std::uint64_t frame, std::span<const double> llr,
                           std::span<const std::uint8_t> codeword,
                           std::span<const std::uint32_t> wrong) const {
  if (!w.shorter) {
    DecoderSettings d = config_.decoder;
    d.iterations -= 1;
    w.shorter = make_decoder(shared_, d);
  }
  const std::size_t n = code_.n();
  w.shorter_hard.resize(n);
  FrameOutcome o;
  w.shorter->decode(llr, w.shorter_hard, {}, std::span(&o, 1), frame);
  std::size_t at = 0;  // walks `wrong` alongside the earlier wrong bits
  for (std::size_t i = 0; i < n; ++i) {
    if (w.shorter_hard[i] == codeword[i]) continue;
    if (at == wrong.size() || wrong[at] != i) return true;
    ++at;
  }
  return at != wrong.size();
}

std::unique_ptr<Simulator::Worker> Simulator::make_worker() const {
  auto w = std::make_unique<Worker>();
  w->decoder = make_decoder(shared_, config_.decoder);
  w->classifier = std::make_unique<StructureClassifier>(code_);
  return w;
}

Simulator::ChunkComputer::ChunkComputer(const Simulator& sim)
    : sim_(&sim), worker_(sim.make_worker()) {}
Simulator::ChunkComputer::ChunkComputer(ChunkComputer&&) noexcept = default;
Simulator::ChunkComputer::~ChunkComputer() = default;

ChunkResult Simulator::ChunkComputer::compute(std::size_t point, std::uint64_t chunk) {
  if (point >= sim_->config_.sweep.size() || chunk >= sim_->chunks_per_point())
    throw Error(fmt::format("chunk {} of point {} does not exist in this run", chunk, point));
  return sim_->compute_chunk(*worker_, point, sim_->channel_point(sim_->config_.sweep[point]),
                             chunk);
}

std::uint64_t Simulator::chunks_per_point() const noexcept {
  return (config_.stop.max_frames + config_.chunk_frames - 1) / config_.chunk_frames;
}

PointResult Simulator::run_point(std::size_t index, PointResult total,
                                 std::span<const PointResult> earlier,
                                 const std::function<void(const Progress&)>& progress,
                                 const std::atomic<bool>* interrupt, RemoteChunks* remote,
                                 const ShardPlan* shard, std::vector<ChunkCounts>* log) {
  const ChannelPoint channel = channel_point(total.parameter);
  // Slot j of the point is chunk j, or in a shard chunk index + j * count.
  const std::uint64_t stride = shard ? shard->count : 1, offset = shard ? shard->index : 0;
  auto chunk_of = [&](std::uint64_t j) { return offset + j * stride; };
  const std::uint64_t all_chunks = chunks_per_point();
  const std::uint64_t max_chunks =
      all_chunks > offset ? (all_chunks - offset + stride - 1) / stride : 0;
  const unsigned threads = config_.threads;

  std::mutex mutex;
  std::map<std::uint64_t, ChunkResult> done;
  std::atomic<std::uint64_t> next{total.chunks};
  std::atomic<bool> stop{false};
  std::size_t kept_here = 0;
  std::string reason;
  const auto start = Clock::now();

  // Stop rules over the in-order totals; true when the point is finished.
  auto finished = [&] {
    if (shard) {  // the shard's own budget over its own chunks
      if (total.frame_errors >= shard->frame_errors) return reason = "shard frame errors", true;
      if (total.frames >= shard->frames) return reason = "shard frames", true;
      if (total.chunks >= max_chunks) return reason = "max frames", true;
      return false;
    }
    if (total.frame_errors >= config_.stop.frame_errors) return reason = "frame errors", true;
    if (total.frames >= config_.stop.max_frames) return reason = "max frames", true;
    return false;
  };
  if (finished()) {
    total.complete = true;
    total.stop_reason = reason;
    return total;
  }

  // A computed chunk (here or elsewhere): add every chunk that is next in order and evaluate the
  // stop rules after each one. The caller holds the mutex.
  auto deliver = [&](std::uint64_t j, ChunkResult&& r) {
    if (stop.load() || j < total.chunks) return;
    done.emplace(j, std::move(r));
    for (auto it = done.find(total.chunks); it != done.end() && !stop.load();
         it = done.find(total.chunks)) {
      const ChunkResult& ready = it->second;
      if (log) log->push_back({chunk_of(total.chunks), ready.counts});
      add_chunk(total, ready.counts, config_.failed_index_limit);
      for (const KeptFrame& kf : ready.kept) {
        if (kept_here < config_.keep_failures) kept_.push_back(kf), ++kept_here;
      }
      done.erase(it);
      if (finished()) {
        stop = true;
      } else if (interrupt && interrupt->load()) {
        stop = true, reason = "interrupted";  // at a chunk boundary, with chunk 0 in
      }
    }
  };
  auto work_chunks = [&](Worker& w) {
    for (;;) {
      if (stop.load()) break;
      const std::uint64_t j = next.fetch_add(1);
      if (j >= max_chunks) {
        // Every chunk is dealt; in a distributed run the point ends when the others' results
        // are in (or a stop rule holds), which the calling thread sees.
        while (remote && !stop.load()) std::this_thread::sleep_for(std::chrono::milliseconds(1));
        break;
      }
      ChunkResult r = compute_chunk(w, index, channel, chunk_of(j));
      std::lock_guard lock(mutex);
      deliver(j, std::move(r));
    }
  };
  std::vector<std::unique_ptr<Worker>> workers;
  for (unsigned t = 0; t < threads; ++t) workers.push_back(make_worker());
  // The calling thread watches for an interrupt and the time limit and reports progress at most
  // five times a second (chunks can finish far more often), and a last time at the end. With
  // other processes computing too, it also deals them chunks and takes their results, every
  // 5 ms.
  auto report = [&] {
    const double now = seconds_since(start);
    if (progress) progress(Progress{index, total, total.seconds + now, earlier});
  };
  auto last_report = Clock::now();
  std::exception_ptr remote_error;
  ThreadPool pool(threads);
  pool.run(
      threads,
      [&](std::size_t, unsigned worker) {
        try {
          work_chunks(*workers[worker]);
        } catch (...) {
          stop = true;  // the other workers stop at their next chunk; the error is rethrown
          throw;
        }
      },
      std::chrono::milliseconds(remote ? 5 : 200),
      [&] {
        if (remote && !remote_error) {
          try {
            remote->exchange(
                index,
                [&](std::uint64_t count) -> std::pair<std::uint64_t, std::uint64_t> {
                  if (stop.load()) return {max_chunks, max_chunks};
                  // Guided: at most a share of the chunks left (2 per process, this one
                  // included), so the last chunks of a point spread over every process.
                  const std::uint64_t left = max_chunks - std::min(next.load(), max_chunks);
                  count =
                      std::clamp<std::uint64_t>(left / (2 * (remote->processes() + 1)), 1, count);
                  const std::uint64_t a = std::min(next.fetch_add(count), max_chunks);
                  return {a, std::min(a + count, max_chunks)};
                },
                [&](std::size_t point, std::uint64_t j, ChunkResult&& r) {
                  if (point != index) return;
                  std::lock_guard lock(mutex);
                  deliver(j, std::move(r));
                });
          } catch (...) {
            remote_error = std::current_exception();  // rethrown once the threads stopped
            stop = true;
          }
          if (Clock::now() - last_report < std::chrono::milliseconds(200)) return;
          last_report = Clock::now();
        }
        std::lock_guard lock(mutex);
        if (!stop && interrupt && interrupt->load()) stop = true, reason = "interrupted";
        if (!stop && config_.stop.max_seconds > 0 &&
            total.seconds + seconds_since(start) >= config_.stop.max_seconds) {
          stop = true, reason = "time limit";
        }
        report();
      });
  if (remote_error) std::rethrow_exception(remote_error);
  for (const auto& w : workers) {
    if (const LaneDecoder* lanes = w->decoder->lane_decoder()) {
      lane_use_.busy += lanes->lane_use().busy;
      lane_use_.total += lanes->lane_use().total;
    }
  }
  if (remote) remote->cancel(index);
  report();
  total.seconds += seconds_since(start);
  if (reason.empty()) finished();  // all chunks consumed: the max-frames rule
  total.stop_reason = reason;
  total.complete = reason != "interrupted";
  return total;
}

std::vector<PointResult> Simulator::run(std::vector<PointResult> previous,
                                        const std::function<void(const Progress&)>& progress,
                                        const std::atomic<bool>* interrupt, RemoteChunks* remote) {
  kept_.clear();
  lane_use_ = {};
  std::vector<PointResult> results;
  for (std::size_t i = 0; i < config_.sweep.size(); ++i) {
    PointResult start;
    start.parameter = config_.sweep[i];
    if (i < previous.size()) {
      if (previous[i].parameter != config_.sweep[i]) {
        throw Error(fmt::format("resume: point {} of the results file is at {}, the sweep has {}",
                                i, previous[i].parameter, config_.sweep[i]));
      }
      start = previous[i];
    }
    PointResult p = start.complete ? start
                                   : run_point(i, start, results, progress, interrupt, remote,
                                               nullptr, nullptr);
    results.push_back(p);
    if (!p.complete) break;
    if (config_.stop.stop_below_fer > 0 && p.fer() < config_.stop.stop_below_fer) break;
    if (p.frame_errors == 0) break;
  }
  return results;
}

std::vector<ShardPoint> Simulator::run_shard(const ShardPlan& plan,
                                             std::vector<ShardPoint> previous,
                                             const std::function<void(const Progress&)>& progress,
                                             const std::atomic<bool>* interrupt) {
  if (plan.count == 0 || plan.index >= plan.count) {
    throw Error(fmt::format("shard {}/{}: the index must be below the number of shards", plan.index,
                            plan.count));
  }
  if (plan.frames == 0 || plan.frame_errors == 0)
    throw Error("shard: the frame budget and the frame-error target must be at least 1");
  kept_.clear();
  lane_use_ = {};
  std::vector<ShardPoint> points;
  std::vector<PointResult> earlier;
  for (std::size_t i = 0; i < config_.sweep.size(); ++i) {
    ShardPoint p;
    p.totals.parameter = config_.sweep[i];
    if (i < previous.size()) {
      if (previous[i].totals.parameter != config_.sweep[i]) {
        throw Error(fmt::format("resume: point {} of the shard file is at {}, the sweep has {}", i,
                                previous[i].totals.parameter, config_.sweep[i]));
      }
      p = std::move(previous[i]);
    }
    // Every point runs (the sweep's own end is decided when the shards are merged); a point the
    // shard finished continues when its budget was raised.
    p.totals =
        run_point(i, std::move(p.totals), earlier, progress, interrupt, nullptr, &plan, &p.chunks);
    earlier.push_back(p.totals);
    points.push_back(std::move(p));
    if (!points.back().totals.complete) break;  // interrupted
  }
  return points;
}

FrameData Simulator::replay(std::size_t point, std::uint64_t frame) const {
  if (point >= config_.sweep.size()) {
    throw Error(
        fmt::format("replay: point {} does not exist (the sweep has {} points, counted from 0)",
                    point, config_.sweep.size()));
  }
  const std::size_t n = code_.n();
  FrameData d;
  d.info.resize(encoder_.k());
  d.codeword.resize(n);
  d.hard.resize(n);
  d.llr.resize(n);
  d.posterior.resize(n);
  const FrameId id{config_.seed, static_cast<std::uint32_t>(point), frame};
  LinkBuffers buffers;
  frame_codeword(id, encoder_, link_, config_.all_zero, d.info, d.codeword);
  frame_llrs(id, channel_point(config_.sweep[point]), link_, d.codeword, d.llr, buffers);
  auto decoder = make_decoder(shared_, config_.decoder);
  decoder->decode(d.llr, d.hard, d.posterior, std::span(&d.outcome, 1), frame);
  for (std::size_t i = 0; i < n; ++i) d.coded_errors += d.hard[i] != d.codeword[i];
  d.info_errors = encoder_.info_errors(d.hard, d.info);
  return d;
}

double frames_to_go(const PointResult& t, const StopRules& stop) {
  double remaining = static_cast<double>(stop.max_frames - std::min(t.frames, stop.max_frames));
  if (t.frame_errors > 0) {
    const double need =
        static_cast<double>(stop.frame_errors - std::min(t.frame_errors, stop.frame_errors));
    remaining = std::min(remaining, need / t.fer());
  }
  return remaining;
}

std::vector<double> default_sweep(ChannelKind kind) {
  switch (kind) {
    case ChannelKind::awgn:
      return parse_sweep("1:0.25:1.75");
    case ChannelKind::rayleigh:
      return parse_sweep("3:0.5:5");
    case ChannelKind::bsc:
      return parse_sweep("0.08:-0.01:0.04");
    case ChannelKind::bec:
      return parse_sweep("0.46:-0.02:0.36");
  }
  return {};
}

std::uint32_t default_chunk_frames(const Code& code, const DecoderSettings& decoder) {
  std::uint32_t frames = 64;
  if (resolve_kernel(decoder, code).kernel == Kernel::simd) {
    const std::size_t budget = (std::size_t{16} << 20) / sizeof(float);  // channel values
    while (frames < 1024 && 2 * frames * std::max<std::size_t>(code.n(), 1) <= budget) frames *= 2;
  }
  return frames;
}

std::vector<double> parse_sweep(const std::string& text) {
  std::vector<double> values;
  auto number = [&](const std::string& token) {
    const auto v = parse_real(token);
    if (!v) {
      throw Error(fmt::format(
          "sweep: '{}' is not a number (use a list 1,1.5,2 or a range START:STEP:STOP)", token));
    }
    return *v;
  };
  std::stringstream items(text);
  std::string item;
  while (std::getline(items, item, ',')) {
    item.erase(
        std::remove_if(item.begin(), item.end(), [](unsigned char c) { return std::isspace(c); }),
        item.end());
    if (item.find(':') == std::string::npos) {
      values.push_back(number(item));
      continue;
    }
    std::vector<std::string> parts;
    std::stringstream range(item);
    for (std::string part; std::getline(range, part, ':');) parts.push_back(part);
    if (parts.size() != 3)
      throw Error(fmt::format("sweep: range '{}' must be START:STEP:STOP", item));
    const double a = number(parts[0]), step = number(parts[1]), b = number(parts[2]);
    if (step == 0 || (b - a) / step < -1e-9) {
      throw Error(fmt::format("sweep: range '{}' never reaches its end (step {})", item, step));
    }
    const double count = std::floor((b - a) / step + 1e-9);
    if (count > 10000)
      throw Error(fmt::format("sweep: range '{}' has more than 10000 points", item));
    for (double i = 0; i <= count; ++i) {
      // Round away the last-digit noise of a + i * step (at 1e-9), where that stays finite.
      const double v = a + i * step;
      values.push_back(std::abs(v) < 1e9 ? std::round(v * 1e9) / 1e9 : v);
    }
    if (!std::isfinite(values.back()))
      throw Error(fmt::format("sweep: range '{}' runs beyond the largest number", item));
  }
  if (values.empty()) throw Error("sweep: no values given");
  if (values.size() > 10000) throw Error("sweep: more than 10000 points");
  return values;
}

}  // namespace tannery
