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
finish
