# Re-run a shipped scenario and compare with its stored reference curve: same seed and settings,
# so the counts must match exactly (a bit-exactness check of the decoders and the simulator).
. "$(dirname "$0")/lib.sh"
SCENARIO="$2"
name=$(basename "$SCENARIO" .toml)
expect_exit 0 "$T" simulate --scenario "$SCENARIO" --output "$WORK/$name.json" --plot "" --quiet
expect_exit 0 "$T" compare "$WORK/$name.json" "${SCENARIO%.toml}.json" --mode exact
expect_in "test: exact" "$WORK/out"
grep -q "counts differ" "$WORK/out" && fail "counts differ from the stored curve: $(cat "$WORK/out")"
expect_in "result: no regression" "$WORK/out"
finish
