# A run split into independent shards (job arrays without MPI) and merged: the same counts as a
# single run, a shard that must run further named and resumed, mismatched shards refused.
. "$(dirname "$0")/lib.sh"
cd "$WORK"

# Points stop by frame errors and by max frames; chunks of 64 frames.
RUN=(--code qc-rate-half-z54 --algorithm offset-min-sum --kernel simd --sweep 1.5:0.5:3.5
     --frame-errors 40 --max-frames 5000 --chunk 64 --plot "" --quiet)
"$T" simulate "${RUN[@]}" -o single.json || fail "single run"
for i in 0 1 2 3; do
  "$T" simulate "${RUN[@]}" --shard $i/4 || fail "shard $i/4"
done
[ -f tannery-shard-2-of-4.json ] || fail "default shard file name"
"$T" merge tannery-shard-{0,1,2,3}-of-4.json -o merged.json --csv merged.csv --quiet || fail "merge"
[ "$(all_counts merged.json)" = "$(all_counts single.json)" ] || fail "merged shards differ from a single run"
[ "$(wc -l <merged.csv)" -gt 1 ] || fail "merge wrote no CSV"

# Shards with a small frame budget: the merge says which shard must continue and how; resuming
# it as told completes the run.
for i in 0 1 2; do
  "$T" simulate "${RUN[@]}" --shard $i/3 --shard-frames 640 -o small-$i.json || fail "small shard $i"
done
expect_exit 1 "$T" merge small-0.json small-1.json small-2.json -o partial.json --quiet
expect_in "needs chunk" "$WORK/err"
expect_in "--shard-frames 1280" "$WORK/err"
grep -q '"interrupted": true' partial.json || fail "a partial merge is not marked interrupted"
for round in $(seq 12); do
  "$T" merge small-0.json small-1.json small-2.json -o partial.json --quiet 2>merge.err && break
  # "... from shard I/3 ...; continue it with tannery simulate --resume FILE --shard-frames F"
  command=$(grep -o 'tannery simulate --resume .*' merge.err | head -1)
  [ -n "$command" ] || { fail "no way forward named: $(cat merge.err)"; break; }
  # shellcheck disable=SC2086
  "$T" ${command#tannery } --quiet || fail "resuming a shard as told: $command"
done
[ "$(all_counts partial.json)" = "$(all_counts single.json)" ] || fail "resumed shards merged differ from a single run"

# An interrupted shard resumes to the same shard file as an uninterrupted one.
LONG=(--code regular-3-6-n2016 --algorithm offset-min-sum --kernel simd --sweep 2 --frame-errors 3000
      --max-frames 100000 --shard 1/2 --quiet)
"$T" simulate "${LONG[@]}" -o whole-shard.json || fail "uninterrupted shard"
"$T" simulate "${LONG[@]}" -o cut.json &
pid=$!
sleep 0.5  # (a signal before the exec would reach the forked shell instead)
kill -INT $pid
wait $pid
[ $? = 130 ] || fail "an interrupted shard does not exit with 130"
grep -q '"interrupted":true' cut.json || fail "an interrupted shard is not marked interrupted"
"$T" simulate --resume cut.json --quiet || fail "resume an interrupted shard"
chunks() {
  /usr/bin/python3 -c 'import json,sys
print([(p["frames"], p["frame_errors"], p["chunk_counts"]) for p in json.load(open(sys.argv[1]))["points"]])' "$1"
}
[ "$(chunks cut.json)" = "$(chunks whole-shard.json)" ] || fail "a resumed shard differs from an uninterrupted one"

# Shards of other runs, the same shard twice, another N: refused with exit 2.
"$T" simulate "${RUN[@]}" --seed 7 --shard 3/4 -o seed7.json || fail "shard of another seed"
expect_exit 2 "$T" merge tannery-shard-{0,1,2}-of-4.json seed7.json -o x.json
expect_in "belongs to another run" "$WORK/err"
expect_in "seed 7" "$WORK/err"
expect_exit 2 "$T" merge tannery-shard-0-of-4.json tannery-shard-0-of-4.json -o x.json
expect_in "given twice" "$WORK/err"
expect_exit 2 "$T" merge tannery-shard-0-of-4.json small-1.json -o x.json
expect_in "shards of one run share N" "$WORK/err"
expect_exit 2 "$T" merge single.json -o x.json
expect_in "not a tannery-shard file" "$WORK/err"
expect_exit 2 "$T" simulate "${RUN[@]}" --shard 4/4
expect_in "--shard expects I/N" "$WORK/err"
expect_exit 2 "$T" simulate "${RUN[@]}" --shard 0/4 --save-failures 2
expect_in "--save-failures does not work with shards" "$WORK/err"
expect_exit 2 "$T" simulate "${RUN[@]}" --shard-frames 100
expect_in "need --shard" "$WORK/err"
finish
