# tannery simulate end to end: thread-count independence, interrupt + resume, files, errors.
. "$(dirname "$0")/lib.sh"
cd "$WORK"
COMMON=(--code qc-rate-half-z54 --algorithm min-sum --sweep 1.5,2 --frame-errors 30 --max-frames 4000)

# Counts must not depend on the thread count: compare every point field except timings.
counts() {
  /usr/bin/python3 - "$1" <<'PY'
import json, sys
j = json.load(open(sys.argv[1]))
for p in j["points"]:
    print(p["parameter"], p["frames"], p["frame_errors"], p["bit_errors"], p["bits"], p["coded_bit_errors"],
          p["undetected_errors"], p["iteration_histogram"], p["failed_frames"])
PY
}
"$T" simulate "${COMMON[@]}" --plot "" --threads 1 --output one.json --csv one.csv --quiet || fail "1 thread run"
"$T" simulate "${COMMON[@]}" --plot "" --threads 2 --output two.json --quiet || fail "2 thread run"
[ "$(counts one.json)" = "$(counts two.json)" ] || fail "1 and 2 threads differ"
head -1 one.csv | grep -q "^parameter,frames,frame_errors,bit_errors,bits,fer,ber,fer_low,fer_high" || fail "csv header"
[ "$(wc -l < one.csv)" = 3 ] || fail "csv rows"
/usr/bin/python3 - one.json <<'PY' || fail "results keys"
import json, sys
j = json.load(open(sys.argv[1]))
assert j["format"] == "tannery-results" and j["version"] == 1
# min-sum runs on the SIMD kernel by default, in chunks of 1024 frames for this short code
assert len(j["code"]["sha256"]) == 64 and j["run"]["seed"] == 1 and j["run"]["chunk_frames"] == 1024
assert j["decoder"]["kernel"] == "simd", j["decoder"]
for p in j["points"]:
    for k in ["parameter", "frames", "frame_errors", "bit_errors", "bits", "fer", "ber", "fer_low", "fer_high",
              "mean_iterations"]:
        assert k in p, k
    assert p["fer_low"] <= p["fer"] <= p["fer_high"]
PY

# Fixed-point SIMD decoding: identical counts for any thread count and any forced SIMD target.
FX=(--code qc-rate-half-z54 --algorithm offset-min-sum --schedule layered --kernel simd --quantize 6.2
    --sweep 2,2.5 --frame-errors 40 --max-frames 3000 --plot "" --quiet)
"$T" simulate "${FX[@]}" --threads 1 --output fx1.json || fail "fixed-point 1 thread"
"$T" simulate "${FX[@]}" --threads 2 --output fx2.json || fail "fixed-point 2 threads"
[ "$(counts fx1.json)" = "$(counts fx2.json)" ] || fail "fixed-point counts differ between 1 and 2 threads"
TARGETS=$("$T" simulate --simd-target list 2>&1 | sed -n 's/.*(available: \(.*\))/\1/p' | tr -d ',')
[ -n "$TARGETS" ] || fail "no SIMD target listed"
for target in $TARGETS; do
  "$T" simulate "${FX[@]}" --threads 2 --simd-target "$target" --output "fx-$target.json" || fail "target $target"
  [ "$(counts fx1.json)" = "$(counts "fx-$target.json")" ] || fail "fixed-point counts differ on target $target"
done

# Interrupt with SIGINT part-way, then resume: the same counts as an uninterrupted run.
# The reference kernel: slow enough that the run is still going when the signal arrives.
RESUME=(--code qc-rate-half-z54 --algorithm sum-product --kernel reference --sweep 1.25,1.75 --frame-errors 400 --max-frames 20000 --plot "")
"$T" simulate "${RESUME[@]}" --output full.json --quiet || fail "full run"
# interrupted NAME DELAY SIGNAL COUNT: run, send COUNT signals after DELAY seconds; the run must
# end with 130 and its results so far saved, and a resume must end with the uninterrupted counts.
# (A background job of a non-interactive shell starts with SIGINT ignored; tannery installs its
# own handler, so the signal still reaches it.)
interrupted() {
  rm -f "$1"
  "$T" simulate "${RESUME[@]}" --output "$1" --quiet &
  local pid=$! code
  wait_for_handlers $pid  # the delay counts from there
  sleep "$2"
  for _ in $(seq "$4"); do kill "-$3" $pid; done
  wait $pid
  code=$?
  [ "$code" = 130 ] || fail "$1: exit $code after $4 SIG$3 (wanted 130)"
  grep -q '"interrupted": true' "$1" || fail "$1: interrupted flag not recorded"
  "$T" simulate --resume "$1" --quiet || fail "$1: resume"
  [ "$(counts "$1")" = "$(counts full.json)" ] || fail "$1: resumed counts differ from an uninterrupted run"
}
interrupted cut.json 1.5 INT 1
# In the first milliseconds, and twice in a row (a second signal used to kill the process and
# lose the results; a first one before the handler was installed, too).
interrupted early.json 0.05 TERM 1
interrupted twice.json 0.05 TERM 2
# Killed outright (SIGKILL, nothing saved at the end): the last checkpoint resumes to the same
# counts.
"$T" simulate "${RESUME[@]}" --output killed.json --checkpoint-seconds 0.2 --quiet &
pid=$!
sleep 1.5
kill -KILL $pid
wait $pid
grep -q '"stop_reason": "checkpoint"' killed.json || fail "no checkpoint before SIGKILL"
"$T" simulate --resume killed.json --quiet || fail "resume from a checkpoint"
[ "$(counts killed.json)" = "$(counts full.json)" ] || fail "resumed from a checkpoint: counts differ"
expect_exit 2 "$T" simulate --checkpoint-seconds 5 --output ""
expect_in "--checkpoint-seconds needs a results file" "$WORK/err"

# Failure anatomy against the decode command: with the all-zero codeword a failed frame's wrong
# bits are its decoded ones; decoded again with 49 iterations instead of 50, a different set means
# the failure oscillated. The sizes and oscillation counts must be those the run recorded.
AZ=(--code qc-rate-half-z54 --sweep 3.5 --max-frames 300000 --frame-errors 8 --all-zero)
"$T" simulate "${AZ[@]}" -o anatomy.json --plot "" --quiet || fail "anatomy run"
/usr/bin/python3 - "$T" anatomy.json "${AZ[@]}" <<'PY' || fail "failure anatomy differs from the decode command"
import json, subprocess, sys
tool, results, run = sys.argv[1], sys.argv[2], sys.argv[3:]
point = json.load(open(results))["points"][0]
sizes, oscillating = {}, 0
for frame in point["failed_frames"]:
    subprocess.run([tool, "simulate", *run, "--replay", f"0:{frame}", "--replay-llr", "f.f32"],
                   capture_output=True, check=True)
    sets = []
    for iterations in (50, 49):
        subprocess.run([tool, "decode", "--code", "qc-rate-half-z54", "f.f32", "--input-format", "f32",
                        "--codeword", "--iterations", str(iterations), "--output", "f.txt"],
                       capture_output=True, check=True)
        bits = "".join(open("f.txt").read().split())
        sets.append([i for i, c in enumerate(bits) if c != "0"])
    if len(sets[0]) <= 40:
        sizes[len(sets[0])] = sizes.get(len(sets[0]), 0) + 1
        oscillating += sets[0] != sets[1]
recorded = {}
for c in point["failure_classes"]:
    recorded[c["a"]] = recorded.get(c["a"], 0) + c["frames"]
assert recorded == sizes, (recorded, sizes)
assert sum(c["oscillating"] for c in point["failure_classes"]) == oscillating
assert sum(sizes.values()) >= 8
PY

# Beyond a file-size limit: a clear error, exit 2, no temporary file left (was SIGXFSZ, exit 153).
mkdir limited
(ulimit -f 8; "$T" construct regular --length 20000 --variable-degree 3 --check-degree 6 -o limited/big.tanner) 2> limited.err
code=$?
[ "$code" = 2 ] || fail "file-size limit: exit $code (wanted 2)"
grep -q "write failed: File too large" limited.err || fail "file-size limit message: $(cat limited.err)"
[ -z "$(ls limited)" ] || fail "file-size limit left files behind: $(ls limited)"

# Plot from results files: well-formed XML with the curves.
expect_exit 0 "$T" plot one.json two.json -o both.svg --label one --label two
/usr/bin/python3 - both.svg <<'PY' || fail "plot is not well-formed SVG"
import sys, xml.etree.ElementTree as ET
root = ET.parse(sys.argv[1]).getroot()
assert root.tag == "{http://www.w3.org/2000/svg}svg"
lines = root.findall(".//{http://www.w3.org/2000/svg}polyline")
assert len(lines) >= 5, len(lines)  # 2 runs x (FER, BER) + uncoded BPSK
PY

if command -v rsvg-convert > /dev/null; then
  expect_exit 0 "$T" plot one.json -o one.png
  head -c 8 one.png | od -An -c | grep -q "P   N   G" || fail "PNG output"
fi

# Replay a failing frame and write its LLRs.
FAILED=$(/usr/bin/python3 -c "import json; print(json.load(open('one.json'))['points'][0]['failed_frames'][0])")
expect_exit 0 "$T" simulate "${COMMON[@]}" --threads 1 --replay "0:$FAILED" --replay-llr f.f32
expect_in "without converging" "$WORK/out"
[ "$(stat -c %s f.f32)" = $((648 * 4)) ] || fail "replay LLR file size"

# Bad options: one-line errors, exit 2.
expect_exit 2 "$T" simulate --sweep 1:0:2
expect_in "never reaches its end" "$WORK/err"
expect_exit 2 "$T" simulate --channel bsc --sweep 1.5
expect_in "crossover probability must be in [0, 0.5], got 1.5" "$WORK/err"
expect_exit 2 "$T" simulate --alpha 0.5
expect_in "--alpha applies to --algorithm normalized-min-sum only" "$WORK/err"
expect_exit 2 "$T" simulate --algorithm ml
expect_in "limited to k <= 24" "$WORK/err"
printf 'code = "hamming-7-4"\n[channel]\nsweep = "1"\nswep = 2\n' > typo.toml
expect_exit 2 "$T" simulate --scenario typo.toml
expect_in "typo.toml:4:8: unknown key 'swep' in [channel]" "$WORK/err"
printf 'code = "hamming-7-4"\n[channel]\nsweep = "1"\n[run]\nchunk_frames = 99999999999\n' > big.toml
expect_exit 2 "$T" simulate --scenario big.toml
expect_in "big.toml:5:16: 'chunk_frames' must be an integer from 0 to 4294967295" "$WORK/err"
expect_exit 2 "$T" simulate --resume one.csv
expect_in "one.csv: not valid JSON" "$WORK/err"
# Links: 16-QAM on fast Rayleigh fading (the issue's example, fewer frames), the plot drawing the
# BICM limit of that link; a scenario's puncture map beside it; the results state the rates.
expect_exit 0 "$T" simulate --code qc-rate-half-z54 --modulation 16qam --channel rayleigh:fast \
  --sweep 6:1:12 --kernel simd --max-frames 3000 -o link.json --plot link.svg
expect_in "channel rayleigh:fast, 16qam (exact demapper)" "$WORK/out"
expect_in "16qam BICM limit (Rayleigh, ergodic), 2.000 bit/symbol (4.11)" link.svg
expect_in '"bits_per_symbol": 4' link.json
mkdir -p scen && printf 'punctured 600-647\n' > scen/tail.punct
printf 'code = "qc-rate-half-z54"\n[channel]\nmodulation = "qpsk"\npuncture = "tail.punct"\nsweep = "3"\n[stop]\nmax_frames = 200\n' > scen/p.toml
expect_exit 0 "$T" simulate --scenario scen/p.toml -o p.json --plot ''
expect_in "effective rate 0.5400 after" "$WORK/out"
expect_in '"effective_rate": 0.54' p.json
expect_exit 0 "$T" inspect --points 4pam
expect_in "10  -1.3416407864998738  0" "$WORK/out"
expect_exit 0 "$T" inspect qc-rate-half-z54 --modulation 16qam
expect_in "Eb/N0 limits   awgn: BICM 2.270 dB" "$WORK/out"
finish
