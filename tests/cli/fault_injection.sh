# Faults while writing: a killed run leaves the previous results intact under the final name, and
# two runs writing one path never interleave (the later rename wins, whole).
. "$(dirname "$0")/lib.sh"
cd "$WORK"
valid() {
  /usr/bin/python3 -c "import json,sys; j=json.load(open(sys.argv[1])); assert j['format']=='tannery-results'" "$1"
}
RUN=(--code qc-rate-half-z54 --kernel reference --sweep 1,1.5,2 --frame-errors 100000 --max-frames 100000 --plot "")

# SIGKILL in the middle of a run, before its results are written: the file under the final name is
# still the previous, complete one.
"$T" simulate --code hamming-7-4 --sweep 3 --max-frames 100 --quiet -o keep.json --plot "" || fail "first run"
cp keep.json keep.orig
for delay in 0.05 0.3 1; do
  "$T" simulate "${RUN[@]}" -o keep.json --quiet &
  pid=$!
  sleep $delay
  kill -KILL $pid
  wait $pid 2>/dev/null
  valid keep.json || fail "after SIGKILL at $delay s keep.json is not a whole results file"
  cmp -s keep.json keep.orig || fail "after SIGKILL at $delay s keep.json changed"
done

# SIGTERM and SIGINT at 10 moments of one multi-point run (delays drawn once with Python's
# random.Random(15).uniform(0.05, 0.8), then fixed here), each followed by a resume of the same
# file: the final counts are exactly those of an uninterrupted run.
CHAIN=(--code qc-rate-half-z54 --algorithm sum-product --kernel reference --sweep 1.25,1.5,1.75
       --frame-errors 300 --max-frames 20000 --plot "" --quiet)
counts() {
  /usr/bin/python3 -c 'import json,sys
for p in json.load(open(sys.argv[1]))["points"]:
    print(p["parameter"], p["frames"], p["frame_errors"], p["bit_errors"], p["undetected_errors"],
          p["iteration_histogram"], p["failed_frames"])' "$1"
}
"$T" simulate "${CHAIN[@]}" -o whole.json || fail "uninterrupted run"
interruptions=0
args=("${CHAIN[@]}" -o chain.json)
for delay in 0.53 0.31 0.70 0.12 0.45 0.66 0.21 0.38 0.59 0.08; do
  [ $((interruptions % 2)) = 0 ] && sig=TERM || sig=INT
  "$T" simulate "${args[@]}" &
  pid=$!
  wait_for_handlers $pid  # the delay counts from there
  sleep $delay
  kill -$sig $pid 2>/dev/null
  wait $pid
  code=$?
  [ "$code" = 0 ] && break  # finished before the signal: nothing left to interrupt
  [ "$code" = 130 ] || { fail "SIG$sig after $delay s: exit $code (wanted 130)"; break; }
  interruptions=$((interruptions + 1))
  valid chain.json || fail "SIG$sig after $delay s left no whole results file"
  args=(--resume chain.json --quiet)
done
echo "$interruptions interruptions by SIGTERM/SIGINT, each resumed"
[ "$interruptions" -ge 5 ] || fail "only $interruptions of 10 signals interrupted the run"
[ "$code" = 0 ] || "$T" simulate --resume chain.json --quiet || fail "final resume"
[ "$(counts chain.json)" = "$(counts whole.json)" ] ||
  fail "after $interruptions interruptions the resumed counts differ from an uninterrupted run"

# SIGKILL while outputs are being written leaves neither a partial file under the final name nor
# a temporary file: outputs are unnamed (O_TMPFILE) until they are complete.
"$T" encode --code qc-rate-half-z54 --demo 100 -o big.f32 2>/dev/null || fail "encode demo"
cp big.f32 big.orig
# A write that ended before its signal proves nothing and is not counted (the whole 155 MB takes
# 0.44 s on the development machine); at least two of the three must be killed mid-write.
killed=0
# Only an exit by SIGKILL (status 137) counts: kill also succeeds on a write that has just
# finished and not yet been reaped, and that one rightly replaced big.f32.
for delay in 0.05 0.1 0.2; do
  cp big.orig big.f32
  "$T" encode --code qc-rate-half-z54 --demo 60000 --at 2.5 -o big.f32 2>/dev/null &
  pid=$!
  sleep $delay
  kill -KILL $pid 2>/dev/null
  wait $pid 2>/dev/null
  [ $? = 137 ] || continue
  killed=$((killed + 1))
  cmp -s big.f32 big.orig || fail "SIGKILL at $delay s changed big.f32"
  [ -z "$(ls ./*.tmp.* 2>/dev/null)" ] || fail "SIGKILL at $delay s left $(ls ./*.tmp.*)"
done
[ "$killed" -ge 2 ] || fail "only $killed of 3 writes were still running when killed"
rm -f ./*.tmp.*

# Long operations that write only at the end stop at SIGTERM with nothing under the output name
# and no temporary file (here a construction; SIGINT is ignored by background jobs of a script).
"$T" construct peg --length 400000 --rate 0.5 --variable-degree 3 -o peg.tanner > /dev/null 2>&1 &
pid=$!
sleep 0.3
kill -TERM $pid
wait $pid
[ $? != 0 ] || fail "construct finished before SIGTERM: make it longer"
[ -z "$(ls peg.tanner ./*.tmp.* 2>/dev/null)" ] || fail "SIGTERM during construct left $(ls peg.tanner ./*.tmp.*)"

# A full disk (/dev/full) and a read-only directory: exit 2 and a clear message, inputs intact.
expect_exit 2 "$T" simulate --code hamming-7-4 --sweep 3 --max-frames 100 --quiet -o /dev/full --plot ""
expect_in "/dev/full: write failed: No space left on device" "$WORK/err"
mkdir locked
chmod 555 locked
# As root the directory's mode does not apply: drop every capability for that run (setpriv).
if command -v setpriv > /dev/null && setpriv --bounding-set=-all true 2>/dev/null; then
  drop=(setpriv --bounding-set=-all --inh-caps=-all)
else
  drop=()
fi
expect_exit 2 "${drop[@]}" "$T" simulate --code hamming-7-4 --sweep 3 --max-frames 100 --quiet -o locked/r.json --plot ""
expect_in "locked/r.json: cannot create a file in locked: Permission denied" "$WORK/err"
[ -z "$(ls locked)" ] || fail "read-only directory: files appeared: $(ls locked)"

# Two runs writing the same outputs at once: each file is whole, and one run's.
"$T" simulate --code hamming-7-4 --sweep 2,3 --max-frames 3000 --seed 1 --quiet -o a.json --csv a.csv --plot "" &
"$T" simulate --code hamming-7-4 --sweep 2,3 --max-frames 3000 --seed 2 --quiet -o a.json --csv a.csv --plot "" &
wait
valid a.json || fail "two writers left a broken a.json"
[ "$(wc -l < a.csv)" = 3 ] || fail "two writers left a broken a.csv"
"$T" simulate --code hamming-7-4 --sweep 2,3 --max-frames 3000 --seed 1 --quiet -o one.json --plot "" || fail "seed 1"
"$T" simulate --code hamming-7-4 --sweep 2,3 --max-frames 3000 --seed 2 --quiet -o two.json --plot "" || fail "seed 2"
/usr/bin/python3 - <<'PY' || fail "a.json is neither run's results"
import json
pts = lambda f: [(p["frames"], p["frame_errors"], p["bit_errors"]) for p in json.load(open(f))["points"]]
assert pts("a.json") in (pts("one.json"), pts("two.json"))
PY
[ -z "$(ls ./*.tmp.* 2>/dev/null)" ] || fail "temporary files left after clean runs: $(ls ./*.tmp.*)"
finish
