# A corpus of bad inputs across every subcommand: each must end with exit 2 and one line that
# names the file (with its line, byte or frame) or the option, within a time bound, and must
# leave an existing output file untouched.
. "$(dirname "$0")/lib.sh"
cd "$WORK"

# Fixtures: good files to break, and broken files of every kind the tool reads.
"$T" encode --code hamming-7-4 --demo 4 --at 3 -o good.f32 2>/dev/null || fail "fixture capture"
"$T" simulate --code hamming-7-4 --sweep 3 --max-frames 200 --quiet -o good.json --plot "" || fail "fixture results"
printf 'tannery-h 1 n=4 m=2\n0 1\n2 3 9\n' > index.tanner
printf 'tannery-h 1 n=4 m=2\n0 1\n' > short.tanner
printf 'tannery-h 1 n=-4 m=2\n0 1\n2 3\n' > negative.tanner
printf '4 2\n1 2\n1 1 1 1\n2 2\n1\n1\n2\n2\n1 2\n3 4 9\n' > bad.alist
printf '%%%%MatrixMarket matrix coordinate pattern general\n2 2 1\n1 1 1\n' > fields.mtx
printf '%%%%MatrixMarket matrix coordinate real general\n2 2 1\n1 1 nan\n' > nan.mtx
printf '%%%%MatrixMarket matrix coordinate pattern general\n20000000 2 1\n1 1\n' > huge.mtx
printf 'Z = 4\n0 1\n2 x\n' > word.qc
printf 'Z = 0\n0 1\n' > zero.qc
printf '1 0 2\n0 1 1\n' > two.dense
printf '\xff\xfe\x00\x01binary' > binary.tanner
printf 'tannery-h 1 n=0 m=2\n-\n-\n' > no-columns.tanner
head -c 30 good.f32 > partial.f32
/usr/bin/python3 -c "
import struct
open('nan.f32', 'wb').write(struct.pack('<7f', 1, 2, float('nan'), 4, 5, 6, 7))
open('latin1.txt', 'wb').write(b'1.0 2.0 \xe9 4 5 6 7\n')"
printf '1 2 3 4 5 6 7\n1 2 3\n' > ragged.txt
printf 'punctured 0-3\nshortened 2\n' > twice.map
printf 'punctured 0-6\n' > all.map
printf 'erased 1\n' > word.map
printf 'punctured 3x\n' > tail.map
printf '1 2 1\n1 1\n' > ragged.base
printf '1 256\n' > big.base
printf '1 1 1\npunctured 4\n' > beyond.proto
printf '3 3\npunctured 1\npunctured 2\n' > twice.proto
printf '1 1 0 0\n1 1 1 1\n0 0 1 1\npunctured 1 2\n' > stuck.proto
printf '10x1\n' > bits.txt
printf 'code = "hamming-7-4"\n[channel]\nsweep = "1:0:2"\n' > zero-step.toml
printf 'code = "hamming-7-4"\n[channel]\nsweep = "2"\n[decoder]\niterations = -1\n' > iterations.toml
printf 'code = "hamming-7-4"\n[channel]\nsweep = "2"\n[decoder]\nalgorithm = "guess"\n' > algorithm.toml
printf 'code = "hamming-7-4"\n[channel]\nsweep = "2"\nextra = 1\n' > key.toml
printf 'code = "hamming-7-4"\n[channel\nsweep = "2"\n' > syntax.toml
printf 'code = "hamming-7-4"\n[channel]\nkind = "bsc"\nsweep = "0.7"\n' > bsc.toml
# Found by fuzz_scenario: integers a double cannot hold exactly aborted the reader.
printf 'code = "hamming-7-4"\n[channel]\nsweep = [222222222222222221]\n' > wide.toml
printf 'code = "hamming-7-4"\n[channel]\nsweep = "2"\n[decoder]\nalgorithm = "normalized-min-sum"\nalpha = 222222222222222221\n' > wide-alpha.toml
printf 'code = "hamming-7-4"\n[channel]\nsweep = [nan]\n' > nan-sweep.toml
/usr/bin/python3 - <<'PY'
import json
good = json.load(open("good.json"))
def variant(name, change):
    j = json.loads(json.dumps(good))
    change(j)
    json.dump(j, open(name, "w"))
variant("errors.json", lambda j: j["points"][0].update(frame_errors=10**6))
variant("order.json", lambda j: j["points"][0].update(failed_frames=[5, 2]))
variant("seconds.json", lambda j: j["points"][0].update(seconds=-3))
variant("version.json", lambda j: j.update(version=99))
variant("kind.json", lambda j: j["channel"].update(kind="wifi"))
variant("chunk.json", lambda j: j["run"].update(chunk_frames=0))
variant("missing.json", lambda j: j.pop("points"))
open("truncated.json", "w").write(json.dumps(good)[:200])
PY
"$T" floor search hamming-7-4 --json > good-structures.json || fail "fixture structures"
/usr/bin/python3 - <<'PY'
import json
good = json.load(open("good-structures.json"))
open("truncated-structures.json", "w").write(json.dumps(good)[:150])
j = json.loads(json.dumps(good)); j["structures"][0]["variables"] = [1, 1, 2]; json.dump(j, open("repeated.json", "w"))
j = json.loads(json.dumps(good)); j["structures"][0]["variables"] = [1, 7]; json.dump(j, open("beyond.json", "w"))
j = json.loads(json.dumps(good)); j["version"] = 99; json.dump(j, open("version-structures.json", "w"))
j = json.loads(json.dumps(good)); j["format"] = 3; json.dump(j, open("format-structures.json", "w"))
# Found by fuzz_structures: a number no JSON number type holds ended the reader past its errors.
open("overflow-structures.json", "w").write('{"a": 6e2611}')
PY
mkdir adir
echo "keep me" > sentinel.out
cp sentinel.out sentinel.orig

# command | words the one-line error must hold (file and place, or option)
while IFS='|' read -r args words; do
  [ -z "$args" ] && continue
  cp sentinel.orig sentinel.out
  # shellcheck disable=SC2086
  expect_exit 2 timeout 30 "$T" $args
  expect_in "$words" "$WORK/err"
  [ "$(wc -l < "$WORK/err")" -le 2 ] || fail "more than a line or two of error for: $args"
  cmp -s sentinel.out sentinel.orig || fail "an existing output was changed by: $args"
done <<'CASES'
inspect index.tanner|index.tanner:3
inspect short.tanner|short.tanner
inspect negative.tanner|negative.tanner:1
inspect bad.alist|bad.alist
inspect fields.mtx|fields.mtx:3
inspect nan.mtx|nan.mtx:3
inspect huge.mtx|huge.mtx:2
inspect word.qc|word.qc:3
inspect zero.qc|zero.qc
inspect two.dense|two.dense:1
inspect binary.tanner|binary.tanner
inspect adir|adir: is a directory
inspect missing-file.alist|missing-file.alist
convert hamming-7-4 sentinel.out --to nonsense|--to
convert index.tanner sentinel.out|index.tanner:3
convert no-columns.tanner sentinel.out --to dense|the dense format cannot hold 2 rows without columns
decode --code hamming-7-4 partial.f32 -o sentinel.out --strict|partial.f32
decode --code hamming-7-4 nan.f32 -o sentinel.out --strict|nan.f32: byte 8 (frame 0, value 2)
decode --code hamming-7-4 latin1.txt --input-format text -o sentinel.out --strict|latin1.txt
decode --code hamming-7-4 ragged.txt --input-format text -o sentinel.out --strict|ragged.txt:2
decode --code hamming-7-4 good.f32 --puncture twice.map -o sentinel.out|twice.map:2: position 2 is listed twice
decode --code hamming-7-4 good.f32 --puncture all.map -o sentinel.out|all.map: every position
decode --code hamming-7-4 good.f32 --puncture word.map -o sentinel.out|word.map:1
decode --code hamming-7-4 good.f32 --puncture adir -o sentinel.out|adir: is a directory
decode --code hamming-7-4 good.f32 --input-format f16 -o sentinel.out|--input-format
decode --code hamming-7-4 good.f32 --meaning samples -o sentinel.out|needs noise_variance
decode --code hamming-7-4 good.f32 --meaning samples --noise-variance -1 -o sentinel.out|noise_variance must be positive
decode --code hamming-7-4 good.f32 --scale nan -o sentinel.out|scale must be a finite number
decode --code hamming-7-4 good.f32 --iterations 0 -o sentinel.out|iterations must be between 1 and 1000000, got 0
decode --code hamming-7-4 good.f32 --algorithm normalized-min-sum --alpha 1.5 -o sentinel.out|alpha must be in (0, 1]
decode --code hamming-7-4 good.f32 --beta 0.3 -o sentinel.out|--beta applies to --algorithm offset-min-sum only
decode --code hamming-7-4 good.f32 --quantize 6.2: -o sentinel.out|--quantize: '6.2:': expected B.F or B.F:M:P
decode --code hamming-7-4 good.f32 --algorithm min-sum --quantize 20.2 --schedule layered -o sentinel.out|impossible quantization
decode --code hamming-7-4 good.f32 --algorithm ml --schedule layered -o sentinel.out|ml has no layered schedule
decode --code hamming-7-4 good.f32 --truth adir -o sentinel.out|adir: is a directory
encode --code hamming-7-4 bits.txt -o sentinel.out|bits.txt: byte 2
encode --code hamming-7-4 adir -o sentinel.out|adir: is a directory
encode --code hamming-7-4 --demo 3 --channel bec --at 1.5 -o sentinel.out|erasure probability must be in [0, 1], got 1.5
encode --code hamming-7-4 --demo 3 --at nan -o sentinel.out|not finite
encode --code hamming-7-4 --demo 3 --modulation 16qam --channel bsc --at 0.1 -o sentinel.out|--modulation needs --channel awgn or rayleigh
encode --code hamming-7-4 --demo 3 --modulation 16qam --interleaver block:3x3 -o sentinel.out|interleaver block:3x3 holds 9 bits, but a frame sends 7
decode --code hamming-7-4 good.f32 --modulation qam -o sentinel.out|qam: cannot open the constellation file
decode --code hamming-7-4 good.f32 --modulation 16qam --fading adir -o sentinel.out|adir: is a directory
decode --code hamming-7-4 good.f32 --fading good.f32 -o sentinel.out|--fading needs --modulation
decode --code hamming-7-4 good.f32 --modulation bpsk --meaning samples -o sentinel.out|--meaning applies to soft-bit captures
simulate --code hamming-7-4 --channel rayleigh:block:0 -o sentinel.out --plot ''|--channel: 'rayleigh:block:0'
simulate --code hamming-7-4 --modulation 16qam --all-zero -o sentinel.out --plot ''|all_zero needs a symmetric channel
simulate --code hamming-7-4 --modulation 16qam --channel bec -o sentinel.out --plot ''|needs the awgn or rayleigh channel
simulate --code hamming-7-4 --interleaver block:2 -o sentinel.out --plot ''|--interleaver: 'block:2': expected none, random:SEED or block:ROWSxCOLS
simulate --scenario zero-step.toml -o sentinel.out --plot ''|never reaches its end
simulate --scenario iterations.toml -o sentinel.out --plot ''|iterations.toml
simulate --scenario algorithm.toml -o sentinel.out --plot ''|algorithm.toml:5
simulate --scenario key.toml -o sentinel.out --plot ''|key.toml:4
simulate --scenario syntax.toml -o sentinel.out --plot ''|syntax.toml:2
simulate --scenario bsc.toml -o sentinel.out --plot ''|got 0.7
simulate --scenario missing.toml -o sentinel.out --plot ''|missing.toml
simulate --scenario wide.toml -o sentinel.out --plot ''|sweep point 2.222222222222222e+17 dB
simulate --scenario wide-alpha.toml -o sentinel.out --plot ''|alpha
simulate --scenario nan-sweep.toml -o sentinel.out --plot ''|nan-sweep.toml:3:10: sweep values must be a finite number
simulate --code hamming-7-4 --sweep 1,x -o sentinel.out --plot ''|sweep: 'x' is not a number
simulate --code hamming-7-4 --sweep 0:1e-9:100 -o sentinel.out --plot ''|more than 10000 points
simulate --code hamming-7-4 --confidence 1.5 -o sentinel.out --plot ''|confidence must be in (0, 1)
simulate --code hamming-7-4 --channel bec --snr-offset 1 -o sentinel.out --plot ''|apply to the awgn and rayleigh channels only
simulate --code hamming-7-4 --replay 9:0 -o sentinel.out --plot ''|replay: point 9 does not exist
simulate --resume errors.json -o sentinel.out --plot ''|errors.json: point 0: more errors than trials
simulate --resume order.json -o sentinel.out --plot ''|order.json: point 0: failed frames
simulate --resume seconds.json -o sentinel.out --plot ''|seconds.json: point 0: seconds must be >= 0
simulate --resume chunk.json -o sentinel.out --plot ''|chunk.json: run: chunk_frames 0
compare version.json good.json|version.json: results version 99
compare kind.json good.json|kind.json: channel: 'kind': channel 'wifi' is not one of: awgn, rayleigh, bsc, bec
compare missing.json good.json|missing.json: missing section 'points'
compare truncated.json good.json|truncated.json: not valid JSON
compare good.json good.json --confidence 2|--confidence
plot truncated.json -o plot.svg|truncated.json: not valid JSON
threshold --regular 3,2|design rate
threshold --lambda 2:x --rho 6:1|--lambda: '2:x' is not DEGREE:VALUE
threshold --regular 3,6 --channel bsc --algorithm bit-flip|density evolution covers sum-product and the min-sum family
construct regular --length 100 --variable-degree 3 --check-degree 7 -o sentinel.out|n * dv = 300 is not divisible by dc = 7
construct lift --base adir --lifting 4 -o sentinel.out|adir: is a directory
construct peg --length 0 -o sentinel.out|--length
threshold --regular 3,6x|--regular: expected DV,DC
threshold --regular 3|--regular: expected DV,DC
threshold --lambda 2:inf --rho 6:1|--lambda: '2:inf' is not DEGREE:VALUE
construct peg --length 100 --rate 0.5 --variable-degrees 2:-5,3:6 -o sentinel.out|--variable-degrees: '2:-5'
construct lift --base ragged.base --lifting 4 -o sentinel.out|ragged.base:2: row has 2 entries, the first has 3
construct lift --base big.base --lifting 4 -o sentinel.out|big.base:1: base multiplicity 256 is out of range
construct lift --base ragged.base --lifting 4,x -o sentinel.out|--lifting: 'x' is not a lifting size
construct lift --base beyond.proto --lifting 4 -o sentinel.out|beyond.proto:2: punctured column 4 is beyond the 3 columns
construct lift --base twice.proto --lifting 4 --encodable -o sentinel.out|twice.proto:3: second punctured line
threshold --base beyond.proto|beyond.proto:2: punctured column 4
threshold --base stuck.proto|does not converge
threshold --base big.base|big.base:1: base multiplicity 256 is out of range
construct protograph --rate 0.6 --rows 3 -o sentinel.out|not a whole number
construct protograph --start twice.proto -o sentinel.out|twice.proto:3: second punctured line
construct protograph --rate 0.5 --rows 3 --encodable -o sentinel.out|at least 4 rows
plot good.json|plot needs -o FILE
simulate --code hamming-7-4 --sweep 1 --replay 0:1x -o sentinel.out --plot ''|--replay expects POINT:FRAME
decode --code hamming-7-4 --puncture tail.map good.f32 -o sentinel.out|tail.map:1: '3x' is not an index
floor estimate hamming-7-4 --structures truncated-structures.json --sweep 5 -o sentinel.out|truncated-structures.json: not valid JSON (byte 151)
floor estimate hamming-7-4 --structures repeated.json --sweep 5 -o sentinel.out|repeated.json: structure 1: a position is repeated
floor estimate hamming-7-4 --structures beyond.json --sweep 5 -o sentinel.out|beyond.json: structure 1: 'variables' must be a list of positions below n = 7
floor estimate hamming-15-11 --structures good-structures.json --sweep 5 -o sentinel.out|good-structures.json: its structures belong to another code
floor estimate hamming-7-4 --structures version-structures.json --sweep 5 -o sentinel.out|version-structures.json: structures version 99
floor estimate hamming-7-4 --structures format-structures.json --sweep 5 -o sentinel.out|format-structures.json
floor estimate hamming-7-4 --structures overflow-structures.json --sweep 5 -o sentinel.out|overflow-structures.json: not valid JSON
floor estimate hamming-7-4 --structures adir --sweep 5 -o sentinel.out|adir
floor estimate hamming-7-4 --sweep nan -o sentinel.out|sweep: 'nan' is not a number
floor estimate hamming-7-4 --sweep 5 --frames 1 -o sentinel.out|--frames
floor estimate hamming-7-4 --sweep 5 --shift -1 -o sentinel.out|--shift
floor search hamming-7-4 --amplitudes 0,2 -o sentinel.out|impulse amplitudes must be increasing
floor search hamming-7-4 --failures good-structures.json -o sentinel.out|good-structures.json: not a tannery results file
floor search hamming-7-4 --failures truncated.json -o sentinel.out|truncated.json
CASES
finish
