#!/bin/bash
# Share of simulation time spent in the decoder, by `perf record` on one thread, for three SIMD
# decoders at a waterfall point of the shipped (3,6)-regular code (early stop, 50 iterations),
# 1-3 s each so that start-up costs do not count. "stream" holds the lane refill bookkeeping and
# the syndromes (decoder).
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
      END { printf "%-34s decoder %5.1f%%   noise %5.1f%%   other %5.1f%%", label, d, g, o }'
  /usr/bin/python3 -c 'import json, sys
p = json.load(open(sys.argv[1]))["points"][0]
print("   %8.0f frames/s" % p["frames_per_second"])' "$WORK/run.json"
}
share "int8 offset min-sum 6.2, 2.0 dB" --algorithm offset-min-sum --quantize 6.2 --sweep 2.0 \
  --max-frames 204800
share "float32 normalized min-sum, 2.0 dB" --algorithm normalized-min-sum --sweep 2.0 \
  --max-frames 102400
share "float32 sum-product, 1.75 dB" --algorithm sum-product --sweep 1.75 --max-frames 40960
