# The installed package works from its prefix, wherever that is: install to a temporary prefix,
# build and run the README's embedding example against the CMake package, and find the shipped
# codes by name from the installed tool and Python module (no path into the build compiled in).
. "$(dirname "$0")/lib.sh"
BUILD_DIR="$2"
SOURCE="$3"
PYTHON="${4:-}"
cmake --install "$BUILD_DIR" --prefix "$WORK/prefix" > "$WORK/install.log" 2>&1 || fail "install: $(tail -3 "$WORK/install.log")"
cmake -S "$SOURCE" -B "$WORK/consumer" -DCMAKE_PREFIX_PATH="$WORK/prefix" > "$WORK/configure.log" 2>&1 ||
  fail "find_package(tannery): $(tail -5 "$WORK/configure.log")"
cmake --build "$WORK/consumer" > "$WORK/build.log" 2>&1 || fail "consumer build: $(tail -5 "$WORK/build.log")"
# The example loads a shipped code by name: from this prefix (not the default one) via TANNERY_CODES.
TANNERY_CODES="$WORK/prefix/share/tannery/codes" "$WORK/consumer/consumer" > "$WORK/out" || fail "consumer run: $(cat "$WORK/out")"
expect_in "converged 1" "$WORK/out"
expect_in "codeword recovered" "$WORK/out"
# The README shows the example as it is.
awk '/^```cpp$/ {inside = 1; text = ""; next}
     /^```$/ {if (inside && text ~ /tannery\/code\/gf2.hpp/) printf "%s", text; inside = 0; next}
     inside {text = text $0 "\n"}' "$SOURCE/../../README.md" > "$WORK/readme.cpp"
sed -n '/^#include <tannery\/code\/gf2.hpp>/,$p' "$SOURCE/main.cpp" | cmp -s - "$WORK/readme.cpp" ||
  fail "README's embedding example differs from tests/package/main.cpp"
[ -x "$WORK/prefix/bin/tannery" ] || fail "tannery binary not installed"
ls "$WORK/prefix/share/tannery/codes/hamming-7-4.tanner" > /dev/null || fail "codes not installed"
# The installed tool finds the codes beside itself, from a directory far from the build.
(cd "$WORK" && env -u TANNERY_CODES "$WORK/prefix/bin/tannery" inspect hamming-7-4 > "$WORK/inspect") || fail "installed tool: shipped code not found"
expect_in "dimension k    4" "$WORK/inspect"
if [ -n "$PYTHON" ]; then
  module_dir=$(dirname "$(find "$WORK/prefix" -name 'tannery*.so' | head -1)")
  [ -d "$module_dir" ] || fail "Python module not installed"
  (cd "$WORK" && env -u TANNERY_CODES PYTHONPATH="$module_dir" "$PYTHON" -c \
    "import tannery; print(tannery.Code.load('hamming-7-4').k)" > "$WORK/py") || fail "installed Python module"
  expect_in "4" "$WORK/py"
fi
finish
