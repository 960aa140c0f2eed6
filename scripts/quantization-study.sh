#!/bin/bash
# Quantization study: Eb/N0 needed for FER 1e-2 on the shipped quasi-cyclic rate-1/2 code with
# float and fixed-point decoders (layered, 50 iterations, SIMD kernels), and the loss of each
# against float sum-product. Usage: scripts/quantization-study.sh [build/tannery] [output dir]
set -euo pipefail
T=${1:-build/tannery}
OUT=${2:-quantization-study}
mkdir -p "$OUT"
COMMON=(--code qc-rate-half-z54 --schedule layered --kernel simd --sweep 1.5:0.25:7 --frame-errors 200
        --max-frames 200000 --stop-below 3e-3 --seed 1 --plot "" --quiet)
run() {  # name, decoder options...
  local name=$1; shift
  "$T" simulate "${COMMON[@]}" "$@" --output "$OUT/$name.json"
}
run float-sum-product --algorithm sum-product
run float-nms-0.75 --algorithm normalized-min-sum --alpha 0.75
run float-oms-0.5 --algorithm offset-min-sum --beta 0.5
run fixed-8bit-oms --algorithm offset-min-sum --beta 0.5 --quantize 8.4
run fixed-6bit-oms --algorithm offset-min-sum --beta 0.5 --quantize 6.2
run fixed-5bit-oms --algorithm offset-min-sum --beta 0.5 --quantize 5.1
run fixed-4bit-oms --algorithm offset-min-sum --beta 0.5 --quantize 4.1
printf '%-20s %18s %12s\n' decoder "Eb/N0 at FER 1e-2" "loss (dB)"
for f in float-sum-product float-nms-0.75 float-oms-0.5 fixed-8bit-oms fixed-6bit-oms fixed-5bit-oms fixed-4bit-oms; do
  if "$T" compare "$OUT/$f.json" "$OUT/float-sum-product.json" --tolerance-db 100 --at-fer 1e-2 --json \
       > "$OUT/$f.cmp.json" 2> /dev/null; then
    /usr/bin/python3 - "$OUT/$f.cmp.json" "$f" <<'PY'
import json, sys
t = json.load(open(sys.argv[1]))["tolerance"]
print(f"{sys.argv[2]:<20} {t['current_crossing']:>15.3f} dB {t['shift']:>12.3f}")
PY
  else
    printf '%-20s %18s\n' "$f" "not reached by 7 dB"
  fi
done
