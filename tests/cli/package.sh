# The installed CMake package works: install to a temporary prefix, build and run a consumer.
. "$(dirname "$0")/lib.sh"
BUILD_DIR="$2"
SOURCE="$3"
cmake --install "$BUILD_DIR" --prefix "$WORK/prefix" > "$WORK/install.log" 2>&1 || fail "install: $(tail -3 "$WORK/install.log")"
cmake -S "$SOURCE" -B "$WORK/consumer" -DCMAKE_PREFIX_PATH="$WORK/prefix" > "$WORK/configure.log" 2>&1 ||
  fail "find_package(tannery): $(tail -5 "$WORK/configure.log")"
cmake --build "$WORK/consumer" > "$WORK/build.log" 2>&1 || fail "consumer build: $(tail -5 "$WORK/build.log")"
"$WORK/consumer/consumer" > "$WORK/out" || fail "consumer run"
expect_in "k=4 converged=1" "$WORK/out"
[ -x "$WORK/prefix/bin/tannery" ] || fail "tannery binary not installed"
ls "$WORK/prefix/share/tannery/codes/hamming-7-4.tanner" > /dev/null || fail "codes not installed"
finish
