# One simulation over MPI ranks (label mpi): counts identical to a single-process run for any
# number of ranks and threads, interrupts and a dead rank resumed with or without MPI, errors.
# Arguments: the tannery binary and ON when it was built with MPI.
. "$(dirname "$0")/lib.sh"
[ "${2:-}" = ON ] || { echo "skipped: tannery was built without MPI (install libopenmpi-dev, openmpi-bin)"; exit 77; }
command -v mpirun >/dev/null || { echo "skipped: mpirun not found (install openmpi-bin)"; exit 77; }
# CI runs as root, which Open MPI refuses unless these documented opt-in variables are set: here
# only, never in the tool or the user's environment.
export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
# Shared-memory transfers without the single-copy mechanism (ptrace), which containers forbid.
export OMPI_MCA_btl_vader_single_copy_mechanism=none
SCENARIO="$(cd "$(dirname "$0")/../.." && pwd)/sims/qc-sum-product.toml"
cd "$WORK"

# Chunks of 64 frames, so a rank's batch holds many and the frame-error stop (37) lands inside
# one; fixed point, reference kernels, the BSC.
CASES=(
  "awgn-simd-fixed --code qc-rate-half-z54 --algorithm offset-min-sum --schedule layered --kernel simd --quantize 6.2 --sweep 2,2.5,3 --frame-errors 37 --max-frames 6000 --chunk 64 --save-failures 3"
  "awgn-reference --code qc-rate-half-z54 --algorithm sum-product --kernel reference --sweep 1.5,2 --frame-errors 37 --max-frames 2000 --chunk 64"
  "bsc-simd --code qc-rate-half-z54 --channel bsc --algorithm min-sum --kernel simd --sweep 0.06,0.05 --frame-errors 37 --max-frames 6000 --chunk 64"
  "bsc-reference --code regular-3-6-n2016 --channel bsc --algorithm bit-flip --kernel reference --sweep 0.02,0.015 --frame-errors 37 --max-frames 3000 --chunk 64"
)
for case in "${CASES[@]}"; do
  read -r name args <<<"$case"
  # shellcheck disable=SC2086
  "$T" simulate $args --threads 1 --plot "" --quiet -o "$name-single.json" --failures "$name-single.f32" ||
    fail "$name: single-process run"
  for np in 1 2 3; do
    for threads in 1 2; do
      out="$name-np$np-t$threads"
      # shellcheck disable=SC2086
      mpirun --oversubscribe -np $np "$T" simulate $args --threads $threads --plot "" --quiet \
        -o "$out.json" --failures "$out.f32" >"$out.log" 2>&1 || fail "$out: exit $? ($(head -c 300 "$out.log"))"
      [ "$(all_counts "$out.json")" = "$(all_counts "$name-single.json")" ] || fail "$out: counts differ from one process"
      grep -q "\"ranks\": $np" "$out.json" || fail "$out: ranks not recorded"
      if [ -f "$name-single.f32" ]; then
        cmp -s "$out.f32" "$name-single.f32" || fail "$out: saved failures differ from one process"
        cmp -s "$out.f32.txt" "$name-single.f32.txt" || fail "$out: failure index differs"
      fi
    done
  done
done

# The issue's example: a shipped scenario over 3 ranks equals one thread.
mpirun --oversubscribe -np 3 "$T" simulate --scenario "$SCENARIO" --plot "" -o scenario-mpi.json >scenario.log 2>&1 ||
  fail "scenario under mpirun: $(tail -c 300 scenario.log)"
"$T" simulate --scenario "$SCENARIO" --threads 1 --plot "" --quiet -o scenario-one.json || fail "scenario alone"
[ "$(all_counts scenario-mpi.json)" = "$(all_counts scenario-one.json)" ] || fail "scenario: 3 ranks differ from 1 thread"
grep -q "ranks: 3" scenario.log || fail "no coordinator figures in the summary: $(tail -c 300 scenario.log)"

# Interrupts: SIGTERM to mpirun (it forwards it to every rank) part-way, resumed without MPI; a
# run without MPI interrupted, resumed under MPI. Both end with the uninterrupted counts.
LONG=(--code regular-3-6-n2016 --algorithm offset-min-sum --kernel simd --sweep 1.75,2
      --frame-errors 5000 --max-frames 150000 --plot "" --quiet)
"$T" simulate "${LONG[@]}" -o long-whole.json || fail "uninterrupted long run"
mpirun --oversubscribe -np 2 "$T" simulate "${LONG[@]}" --threads 1 -o long-a.json >long-a.log 2>&1 &
pid=$!
sleep 2
kill -TERM $pid
wait $pid
grep -q '"interrupted": true' long-a.json || fail "MPI run: not recorded as interrupted ($(tail -c 300 long-a.log))"
"$T" simulate --resume long-a.json --quiet || fail "resume without MPI"
[ "$(all_counts long-a.json)" = "$(all_counts long-whole.json)" ] || fail "MPI run resumed without MPI: counts differ"

"$T" simulate "${LONG[@]}" --threads 2 -o long-b.json &
pid=$!
sleep 2
kill -INT $pid
wait $pid
[ $? = 130 ] || fail "single run interrupted: exit code not 130"
mpirun --oversubscribe -np 3 "$T" simulate --resume long-b.json --threads 1 --quiet >long-b.log 2>&1 ||
  fail "resume under MPI: $(tail -c 300 long-b.log)"
[ "$(all_counts long-b.json)" = "$(all_counts long-whole.json)" ] || fail "single run resumed under MPI: counts differ"

# Rank 0, the one that writes, dies (SIGKILL: no chance to save anything): the job ends, and the
# last checkpoint (every half second here) resumes to the uninterrupted counts.
mpirun --oversubscribe -np 2 "$T" simulate "${LONG[@]}" --threads 1 --checkpoint-seconds 0.5 \
  -o long-c.json >long-c.log 2>&1 &
pid=$!
for _ in $(seq 200); do  # until the first checkpoint is written (at most 20 s)
  grep -qs '"stop_reason": "checkpoint"' long-c.json && break
  sleep 0.1
done
for child in $(pgrep -P $pid -x tannery); do
  tr '\0' '\n' <"/proc/$child/environ" | grep -qx OMPI_COMM_WORLD_RANK=0 && kill -KILL "$child"
done
wait $pid && fail "the job went on after rank 0 died"
grep -q '"stop_reason": "checkpoint"' long-c.json || fail "no checkpoint written before rank 0 died"
"$T" simulate --resume long-c.json --quiet || fail "resume from the checkpoint"
[ "$(all_counts long-c.json)" = "$(all_counts long-whole.json)" ] || fail "resumed from a checkpoint: counts differ"

# Errors: every rank fails alike, rank 0 alone says why (one line), exit 2.
mpirun --oversubscribe -np 3 "$T" simulate --code no-such-code.alist >err.log 2>&1
[ $? = 2 ] || fail "a missing code under mpirun: exit code not 2"
[ "$(grep -c '^tannery: error:' err.log)" = 1 ] || fail "the error is not said once: $(cat err.log)"
expect_exit 2 mpirun --oversubscribe -np 2 "$T" simulate --shard 0/2
expect_in "--shard is for independent jobs" "$WORK/err"
finish
