# The README's example outputs are the tool's: every fenced block that starts with
# "$ build/tannery ..." is run from the source tree and its output must match the block exactly.
. "$(dirname "$0")/lib.sh"
ROOT="$2"
cd "$ROOT"
/usr/bin/python3 - "$T" README.md <<'PY' || fail "README examples drifted"
import re, subprocess, sys
tool, readme = sys.argv[1], open(sys.argv[2]).read()
blocks = re.findall(r"```\n\$ (build/tannery [^\n]*)\n(.*?)```", readme, re.S)
assert blocks, "no example block found"
for command, expected in blocks:
    args = command.split()[1:]
    got = subprocess.run([tool] + args, capture_output=True, text=True).stdout
    if got != expected:
        print(f"README example '{command}' differs from the tool's output:\n{got}")
        sys.exit(1)
print(f"{len(blocks)} README example(s) match")
PY
finish
