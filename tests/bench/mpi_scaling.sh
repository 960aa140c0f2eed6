#!/bin/bash
# MPI scaling figures for the README (not part of ctest):
#  1. the same run as 2 ranks x 1 thread and as 1 process x 2 threads, alternated ROUNDS times:
#     median frames/s of each and their ratio;
#  2. rank 0's cost per chunk and the chunks per second it sustains: 8 ranks (oversubscribed) on
#     tiny chunks (one frame of a 7-bit code), so nearly all the time is coordination.
# Usage: tests/bench/mpi_scaling.sh [build/tannery] [ROUNDS]
set -eu
T=$(realpath "${1:-build/tannery}")
ROUNDS=${2:-5}
# Running as root (CI, containers) needs Open MPI's documented opt-in; set here only.
if [ "$(id -u)" = 0 ]; then export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1; fi
export OMPI_MCA_btl_vader_single_copy_mechanism=none
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
cd "$WORK"

RUN=(--code regular-3-6-n2016 --sweep 1.5:0.25:2 --frame-errors 1000 --max-frames 200000 --plot "" -o run.json)
rate() { grep -o 'throughput: [0-9]*' | grep -o '[0-9]*$'; }
median() { sort -n | awk '{v[NR]=$1} END {print (NR % 2) ? v[(NR+1)/2] : (v[NR/2] + v[NR/2+1]) / 2}'; }
: >mpi.txt
: >threads.txt
for _ in $(seq "$ROUNDS"); do
  mpirun -np 2 "$T" simulate "${RUN[@]}" --threads 1 | rate >>mpi.txt
  "$T" simulate "${RUN[@]}" --threads 2 | rate >>threads.txt
done
m=$(median <mpi.txt)
t=$(median <threads.txt)
echo "2 ranks x 1 thread:    median $m frames/s over $ROUNDS runs ($(tr '\n' ' ' <mpi.txt))"
echo "1 process x 2 threads: median $t frames/s over $ROUNDS runs ($(tr '\n' ' ' <threads.txt))"
awk -v m="$m" -v t="$t" 'BEGIN {printf "ratio: %.3f\n", m / t}'

TINY=(--code hamming-7-4 --sweep 8 --frame-errors 1000000 --max-frames 2000000 --chunk 1 --kernel reference
      --algorithm min-sum --plot "" -o tiny.json)
mpirun -np 8 --oversubscribe "$T" simulate "${TINY[@]}" --threads 1 >tiny.txt
grep -E "throughput|ranks:" tiny.txt
/usr/bin/python3 - tiny.json <<'PY'
import json, sys
p = json.load(open(sys.argv[1]))["points"][0]
print(f"rank 0 added {p['chunks']} chunks in {p['seconds']:.2f} s: {p['chunks'] / p['seconds']:.0f} chunks/s sustained")
PY
