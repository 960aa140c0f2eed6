#!/bin/bash
# Share of simulation time spent in the decoder, by `perf record` on one thread, for three SIMD
# decoders at points along the waterfall of the shipped (3,6)-regular code (early stop, 50
# iterations), 1-3 s each so that start-up costs do not count. "decoder" includes the lane
# refills, the syndromes (in `stream`) and the conversion of LLRs to channel values; "noise" is
# Philox, Box-Muller, the channel LLRs and the information bits.
# Usage: scripts/decoder-share.sh [build/tannery]   (needs perf: Debian package linux-perf)
set -euo pipefail
T=${1:-build/tannery}
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
share() {  # label, simulate options...
  local label=$1; shift
  perf record -q -o "$WORK/perf.data" "$T" simulate --code regular-3-6-n2016 --schedule layered \
    --kernel simd --threads 1 --frame-errors 100000000 --output "$WORK/run.json" --plot "" \
    --quiet "$@" > /dev/null 2>&1
  perf report -i "$WORK/perf.data" --no-children --sort symbol 2> /dev/null | grep '%' |
    grep -v '^#' | awk -v label="$label" '
      { p = $1; sub("%", "", p)
        if ($0 ~ /OfGroup|OfFrame/) g += p  # noise kernels (ChannelOfGroup before Channel)
        else if ($0 ~ /Iterate|Sweep|Refill|SignMasks|Channel|Start|stream/) d += p
        else o += p }
      END { printf "%-33s decoder %5.1f%%  noise %5.1f%%  other %5.1f%%", label, d, g, o }'
  /usr/bin/python3 -c 'import json, sys
p = json.load(open(sys.argv[1]))["points"][0]
print("  FER %7.2g  %4.1f iterations  %7.0f frames/s" % (p["fer"], p["mean_iterations"],
      p["frames_per_second"]))' "$WORK/run.json"
}
for db in 1.5 1.75 2.0 2.25; do
  share "int8 offset min-sum 6.2, $db dB" --algorithm offset-min-sum --quantize 6.2 --sweep $db \
    --max-frames 102400
done
for db in 1.5 1.75 2.0 2.25; do
  share "float32 NMS, $db dB" --algorithm normalized-min-sum --sweep $db --max-frames 51200
done
for db in 1.5 1.75 2.0; do
  share "float32 sum-product, $db dB" --algorithm sum-product --sweep $db --max-frames 20480
done
