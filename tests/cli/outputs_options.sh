# Outputs never collide or destroy input; options that would be ignored are refused; decode
# checks against the truth and tells scripts about failures; plots are the format they are named.
. "$(dirname "$0")/lib.sh"
cd "$WORK"
C=qc-rate-half-z54
"$T" encode --code $C --demo 300 --at 2 --seed 4 -o d.f32 --truth d.truth 2>/dev/null || fail "demo"
cp d.f32 keep.f32

# Collisions: two outputs on one file or on stdout, an output that is an input, two stdin readers.
expect_exit 2 "$T" decode --code $C d.f32 -o same.out --posterior same.out
expect_in "--output and --posterior would both write same.out" "$WORK/err"
expect_exit 2 "$T" decode --code $C d.f32 --posterior - --report -
expect_in "would both write standard output" "$WORK/err"
expect_exit 2 "$T" decode --code $C d.f32 -o d.f32
expect_in "refusing to overwrite an input" "$WORK/err"
cmp -s d.f32 keep.f32 || fail "the input was touched"
expect_exit 2 "$T" decode --code $C d.f32 --report ./d.f32
expect_in "refusing to overwrite an input" "$WORK/err"
expect_exit 2 "$T" decode --code - -
expect_in "--code and INPUT cannot both read standard input" "$WORK/err"
expect_exit 2 "$T" encode --code $C --demo 3 -o x.f32 --truth x.f32
expect_in "would both write x.f32" "$WORK/err"
expect_exit 2 "$T" simulate --code $C --sweep 3 --max-frames 64 --quiet -o r.json --csv r.json
expect_in "would both write r.json" "$WORK/err"

# A failed rename keeps the decoded bits: the destination is a directory.
mkdir busy && touch busy/x
expect_exit 2 "$T" decode --code $C d.f32 -o busy
expect_in "cannot rename into place" "$WORK/err"
kept=$(sed -n 's/.*the output is kept in \(busy\.tmp\.[0-9]*\).*/\1/p' "$WORK/err")
[ -n "$kept" ] && [ -s "$kept" ] || fail "decoded bits were lost: $(cat "$WORK/err")"
"$T" decode --code $C d.f32 -o direct.txt 2>/dev/null
cmp -s "$kept" direct.txt || fail "the kept bits differ from a normal run"

# --truth: frame and bit errors against what was sent; --max-failures: exit 1 beyond it.
expect_exit 0 "$T" decode --code $C d.f32 -o got.txt --truth d.truth --report rep.csv
expect_in "against d.truth:" "$WORK/err"
/usr/bin/python3 - <<'PY' || fail "truth counts"
import csv, re
got = [l.strip() for l in open("got.txt")]
sent = [l.strip() for l in open("d.truth")]
frames = sum(g != s for g, s in zip(got, sent))
bits = sum(a != b for g, s in zip(got, sent) for a, b in zip(g, s))
err = open("err").read() if False else None
rows = list(csv.DictReader(open("rep.csv")))
assert sum(int(r["bit_errors"]) for r in rows) == bits, bits
assert sum(int(r["bit_errors"]) > 0 for r in rows) == frames, frames
PY
grep -q "$(/usr/bin/python3 -c "
got=[l.strip() for l in open('got.txt')]; sent=[l.strip() for l in open('d.truth')]
print(f'{sum(g != s for g, s in zip(got, sent))} frame errors in 300 frames')")" "$WORK/err" || fail "summary frame errors"
expect_exit 1 "$T" decode --code $C d.f32 -o discard.txt --max-failures 0
expect_in "more than --max-failures 0" "$WORK/err"
expect_exit 0 "$T" decode --code $C d.f32 -o discard.txt --max-failures 300
# A capture read with the wrong format fails every frame: a script notices through the exit code.
expect_exit 1 "$T" decode --code $C d.f32 -o discard.txt --input-format i16 --max-failures 10
head -c 6 d.truth > short.truth
expect_exit 2 "$T" decode --code $C d.f32 -o discard.txt --truth short.truth
expect_in "short.truth" "$WORK/err"

# A text capture with one frame per line: a line of another length is named.
"$T" encode --code hamming-7-4 --demo 3 --at 3 -o t.txt --output-format text 2>/dev/null
(head -1 t.txt; sed -n 2p t.txt | cut -d' ' -f1-6; sed -n 3p t.txt) > short-line.txt
expect_exit 2 "$T" decode --code hamming-7-4 short-line.txt --input-format text
expect_in "short-line.txt:2: the line holds 6 values, frames are 7" "$WORK/err"
[ "$(wc -l < "$WORK/out")" = 1 ] || fail "the frame before the bad line was not written"
(head -1 t.txt; sed -n 2p t.txt | sed 's/$/ 1.5/'; sed -n 3p t.txt) > long-line.txt
expect_exit 2 "$T" decode --code hamming-7-4 long-line.txt --input-format text
expect_in "long-line.txt:2: the line holds more than 7 values" "$WORK/err"
[ "$(wc -l < "$WORK/out")" = 1 ] || fail "the over-long line was decoded"
tr '\n' ' ' < t.txt > one-line.txt  # no frame per line: line breaks carry no meaning
expect_exit 0 "$T" decode --code hamming-7-4 one-line.txt --input-format text

# Small items: backwards ranges, empty encode input, symmetric integer saturation, ragged dense.
printf 'punctured 10-5\n' > p.map
expect_exit 2 "$T" decode --code $C d.f32 --puncture p.map
expect_in "p.map:1: range '10-5' runs backwards" "$WORK/err"
printf '' > empty.txt
expect_exit 2 "$T" encode --code hamming-7-4 empty.txt
expect_in "empty input" "$WORK/err"
printf '1 1 0 1\n0 1 1\n1 0 0 1\n' > ragged.txt
expect_exit 2 "$T" inspect ragged.txt
expect_in "ragged.txt:2: row has 3 columns, the first row has 4" "$WORK/err"
/usr/bin/python3 -c "
import struct
open('inf.f32', 'wb').write(struct.pack('<7f', float('inf'), float('-inf'), 1, 1, 1, 1, 1))" ||
  fail "python"
# A BEC demo has +-Inf LLRs: as i8 they are +-127, never -128.
"$T" encode --code hamming-7-4 --demo 200 --channel bec --at 0.3 -o bec.i8 --output-format i8 2>/dev/null
/usr/bin/python3 -c "
data = open('bec.i8', 'rb').read()
vals = set(b - 256 if b > 127 else b for b in data)
assert vals <= {-127, 0, 127} and -127 in vals and 127 in vals, vals" || fail "i8 saturation is not symmetric"

# Plots: the named format or a refusal, never SVG text in a .png.
"$T" simulate --code hamming-7-4 --sweep 2,3 --max-frames 500 --quiet -o a.json --plot a.png || fail "png plot"
head -c 8 a.png | grep -q PNG || fail "a.png is no PNG"
expect_exit 0 "$T" plot a.json -o a.pdf
head -c 5 a.pdf | grep -q %PDF || fail "a.pdf is no PDF"
expect_exit 2 "$T" plot a.json -o a.jpg
expect_in "plots are written as .svg, .png or .pdf" "$WORK/err"
expect_exit 2 "$T" simulate --code hamming-7-4 --sweep 2 --max-frames 64 --quiet -o b.json --plot b.gif
"$T" simulate --code hamming-7-4 --channel bsc --sweep 0.05 --max-frames 500 --quiet -o bsc.json --plot "" ||
  fail "bsc run"
expect_exit 2 "$T" plot a.json bsc.json -o mixed.svg
expect_in "cannot share one axis" "$WORK/err"
expect_exit 0 "$T" plot a.json -o a.svg
grep -q "sum-product/flooding, simd kernel, awgn" a.svg || fail "legend lacks decoder, kernel and channel"

# Resume: options that would change the recorded run are refused with the list; others apply.
"$T" simulate --code hamming-7-4 --sweep 2,3 --max-frames 2000 --quiet -o res.json --plot "" || fail "run"
expect_exit 2 "$T" simulate --resume res.json --algorithm min-sum --seed 5 --quiet
expect_in "the command line changes the recorded run" "$WORK/err"
expect_in "algorithm min-sum (recorded: sum-product)" "$WORK/err"
expect_in "seed 5 (recorded: 1)" "$WORK/err"
expect_exit 0 "$T" simulate --resume res.json --threads 1 --seed 1 --algorithm sum-product --quiet --plot ""

# Information positions: inspect lists all k; --systematic-first puts them at 0..k-1 (verified
# against H with numpy) or refuses a code whose first k positions are no information set.
"$T" inspect regular-3-6-n2016 --json > reg.json || fail "inspect json"
/usr/bin/python3 -c "
import json; j = json.load(open('reg.json'))
assert len(j['info_positions']) == j['k'] == 1008 and j['systematic_first_possible'] is False, j['k']" ||
  fail "info positions in inspect --json"
printf '1011\n0110\n1111\n' > u.txt
expect_exit 0 "$T" encode --code hamming-7-4 u.txt --systematic-first -o c.txt
"$T" convert hamming-7-4 h.dense || fail "convert"
/usr/bin/python3 - <<'PY' || fail "systematic-first codewords"
import numpy as np
H = np.array([[int(x) for x in l.split()] for l in open("h.dense")])
for u, c in zip(open("u.txt"), open("c.txt")):
    c = np.array([int(x) for x in c.strip()])
    assert (H @ c % 2 == 0).all(), c            # a codeword
    assert "".join(map(str, c[:4])) == u.strip()  # carrying u in positions 0..3
PY
/usr/bin/python3 -c "
import struct
with open('c.f32', 'wb') as f:
    for l in open('c.txt'):
        f.write(struct.pack('<7f', *[(-3.0 if ch == '1' else 3.0) for ch in l.strip()]))"
expect_exit 0 "$T" decode --code hamming-7-4 c.f32 --systematic-first -o back.txt
cmp -s u.txt back.txt || fail "decode --systematic-first does not return the information bits"
expect_exit 0 "$T" decode --code hamming-7-4 c.f32 -o default.txt
cmp -s u.txt default.txt && fail "default positions should differ from 0..k-1 for hamming-7-4"
printf '1100\n0011\n' > no-first.dense
expect_exit 2 "$T" encode --code no-first.dense u.txt --systematic-first
expect_in "--systematic-first: the requested positions are no information set" "$WORK/err"

# Names: one word per meaning, -o everywhere, plural forms, suggestions for typos.
expect_exit 0 "$T" encode --code hamming-7-4 --demo 2 --at 3 -o o.f32
expect_exit 0 "$T" simulate --code hamming-7-4 --sweep 3 --max-frames 64 --threads 1 -o one.json --plot ""
expect_in "1 thread)" "$WORK/out"
expect_exit 2 "$T" simulat
expect_in "did you mean 'simulate'?" "$WORK/err"
expect_exit 2 "$T" simulate --max-frame 10
expect_in "did you mean '--max-frames'?" "$WORK/err"
expect_exit 2 "$T" decode --code hamming-7-4 x.f32 --input-fromat f32
expect_in "did you mean '--input-format'?" "$WORK/err"
finish
