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
