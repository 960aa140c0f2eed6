# Bad input: one line "tannery: error: ..." naming the file and line, exit code 2.
. "$(dirname "$0")/lib.sh"

printf 'tannery-h 1 n=4 m=1\n0 9\n' > "$WORK/bad.tanner"
expect_exit 2 "$T" inspect "$WORK/bad.tanner"
expect_in "tannery: error: $WORK/bad.tanner:2: variable index 9 is out of range" "$WORK/err"
[ "$(wc -l < "$WORK/err")" = 1 ] || fail "error is not one line"

head -c 4096 /dev/urandom > "$WORK/garbage.bin"
printf '\0' >> "$WORK/garbage.bin"
expect_exit 2 "$T" inspect "$WORK/garbage.bin"
expect_in "tannery: error:" "$WORK/err"

: > "$WORK/empty"
expect_exit 2 "$T" inspect "$WORK/empty"
expect_in "empty file" "$WORK/err"

expect_exit 2 "$T" inspect no-such-code
expect_in "no such file, and no shipped code of that name (shipped: " "$WORK/err"

expect_exit 2 "$T" inspect --bogus-option
expect_in "tannery: error:" "$WORK/err"

expect_exit 2 "$T" convert hamming-7-4 "$WORK/out.qc"
expect_in "no quasi-cyclic structure" "$WORK/err"
[ ! -e "$WORK/out.qc" ] || fail "a failed write left a file behind"

expect_exit 0 "$T" inspect --help
expect_in "Example" "$WORK/out"

# Values that crashed, hung or were accepted as nonsense: each a clear error, exit 2, at once.
# (bad-value | expected words in the one-line message)
while IFS='|' read -r args words; do
  # shellcheck disable=SC2086
  expect_exit 2 timeout 20 "$T" $args
  expect_in "$words" "$WORK/err"
done <<'CASES'
simulate --code hamming-7-4 --sweep -1e6 --kernel reference --plot ''|gives a noise standard deviation of inf
simulate --code hamming-7-4 --snr-offset 1e6 --plot ''|gives a noise standard deviation of 0
simulate --code hamming-7-4 --channel bsc --sweep 0.1 --assumed-p nan --plot ''|assumed bsc crossover probability must be in [0, 0.5], got nan
simulate --code hamming-7-4 --channel bsc --sweep 0.1 --assumed-p 0.9 --plot ''|got 0.9
simulate --code hamming-7-4 --channel bsc --sweep 0.6 --plot ''|bsc crossover probability must be in [0, 0.5], got 0.6
simulate --code hamming-7-4 --max-seconds -1 --plot ''|max_seconds must be >= 0
simulate --code hamming-7-4 --stop-below -1 --plot ''|stop_below_fer must be in [0, 1]
simulate --code hamming-7-4 --stop-below nan --plot ''|stop_below_fer must be in [0, 1]
simulate --code hamming-7-4 --frame-errors 0 --plot ''|frame_errors must be at least 1
simulate --code hamming-7-4 --max-frames -1 --plot ''|--max-frames: must be 0 or more, got -1
simulate --code hamming-7-4 --threads 100000 --plot ''|--threads: Value 100000 not in range
construct repetition --length -3 -o rep.tanner|--length: Value -3 not in range
construct regular --length 1e9 -o reg.tanner|--length: Value 1e9 not in range
encode --code hamming-7-4 --demo -5|--demo: must be 0 or more, got -5
decode --code hamming-7-4 x.f32 --threads 100000|--threads: Value 100000 not in range
CASES

# File names are never interpreted by a shell when a plot or a graph is rendered.
cd "$WORK"
"$T" simulate --code hamming-7-4 --sweep 2,3 --max-frames 300 --quiet -o r.json --plot '' || fail "run"
expect_exit 0 "$T" plot r.json -o "a';touch INJECTED;'.png"
[ -e INJECTED ] && fail "the plot name ran a shell command"
head -c 8 "a';touch INJECTED;'.png" | grep -q PNG || fail "the PNG with a quote in its name"
if command -v dot > /dev/null; then
  expect_exit 0 "$T" inspect hamming-7-4 --dot "b';touch INJECTED;'.svg"
  [ -e INJECTED ] && fail "the dot name ran a shell command"
fi
# A tiny file declaring a huge, nearly empty matrix: analysed in time and memory that follow the
# entries, not n x m (it took 25 s and 317 MB; the timeout only guards against a hang).
printf '%%%%MatrixMarket matrix coordinate pattern general\n50000 50000 2\n1 1\n2 2\n' > huge.mtx
expect_exit 0 timeout 60 "$T" inspect huge.mtx
expect_in "dimension k    49998" "$WORK/out"
expect_in "... (49998 in all)" "$WORK/out"
# A pipe (like a device) is written in place, never replaced by a regular file.
mkfifo pipe
cat pipe > from-pipe.json &
reader=$!
expect_exit 0 "$T" simulate --code hamming-7-4 --sweep 3 --max-frames 100 --quiet -o pipe --plot ''
wait $reader
[ -p pipe ] || fail "the pipe was replaced by a regular file"
grep -q '"tannery-results"' from-pipe.json || fail "the results did not go through the pipe"
finish
