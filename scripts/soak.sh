#!/bin/bash
# Soak test (documented in the README, not part of CI): a long simulation on 2 threads is stopped
# by SIGTERM every INTERVAL seconds and resumed until it completes; the same simulation runs
# uninterrupted beside it; the two must end with exactly the same counts.
# Usage: scripts/soak.sh TANNERY FRAMES_PER_POINT INTERVAL_SECONDS WORKDIR
set -u
T=$1 FRAMES=$2 INTERVAL=$3 DIR=$4
mkdir -p "$DIR"
RUN=(--code regular-3-6-n2016 --algorithm sum-product --kernel simd --sweep 1.75,2,2.25
     --frame-errors 1000000000 --max-frames "$FRAMES" --threads 2 --plot "" --quiet)
start=$(date +%s)
"$T" simulate "${RUN[@]}" -o "$DIR/whole.json" &
whole=$!
args=("${RUN[@]}" -o "$DIR/soak.json")
stops=0
while :; do
  "$T" simulate "${args[@]}" &
  pid=$!
  for _ in $(seq "$INTERVAL"); do sleep 1; kill -0 $pid 2>/dev/null || break; done
  kill -TERM $pid 2>/dev/null
  wait $pid
  code=$?
  [ "$code" = 0 ] && break
  [ "$code" = 130 ] || { echo "soak: exit $code after SIGTERM" >&2; exit 1; }
  stops=$((stops + 1))
  echo "$(date +%T) stop $stops: $(/usr/bin/python3 -c 'import json,sys; print(sum(p["frames"] for p in json.load(open(sys.argv[1]))["points"]))' "$DIR/soak.json") frames so far"
  args=(--resume "$DIR/soak.json" --quiet)
done
wait $whole || { echo "soak: the uninterrupted run failed" >&2; exit 1; }
counts() {
  /usr/bin/python3 -c 'import json,sys
for p in json.load(open(sys.argv[1]))["points"]:
    print(p["parameter"], p["frames"], p["frame_errors"], p["bit_errors"], p["undetected_errors"],
          p["iteration_histogram"], p["failed_frames"])' "$1"
}
if [ "$(counts "$DIR/soak.json")" = "$(counts "$DIR/whole.json")" ]; then
  echo "soak: $stops SIGTERM stops and resumes over $(( $(date +%s) - start )) s: counts identical to the uninterrupted run"
  counts "$DIR/soak.json" | cut -d' ' -f1-5
else
  echo "soak: counts differ from the uninterrupted run" >&2
  exit 1
fi
