#!/usr/bin/env bash
# Runs `hazebook run` (default template) and the pandas + python-calamine + numpy + xlsxwriter
# pipeline of benches/python_pipeline.py one after the other on the same invented network
# workbook, and prints wall time, peak resident memory and output size of each and the ratio.
#
# Usage: bash benches/compare.sh            (200,000 rows)
#        ROWS=20000 bash benches/compare.sh
# Work files go to ${TMPDIR:-/tmp}/hazebook-compare; the Python venv to
# ${TMPDIR:-/tmp}/hazebook-bench-venv (created and filled from benches/requirements.txt if
# missing). Needs network access to PyPI the first time.
set -euo pipefail

ROWS="${ROWS:-200000}"
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
TMP="${TMPDIR:-/tmp}"
WORK="$TMP/hazebook-compare"
VENV="$TMP/hazebook-bench-venv"
INPUT="$WORK/net$ROWS.xlsx"

mkdir -p "$WORK"
cd "$ROOT"

echo "== building hazebook (release)"
cargo build --release --quiet --bin hazebook --example network_workbook

if [[ ! -s "$INPUT" ]]; then
    echo "== writing $INPUT ($ROWS rows)"
    target/release/examples/network_workbook "$INPUT" "$ROWS"
fi

if [[ ! -x "$VENV/bin/python" ]]; then
    echo "== creating $VENV"
    python3 -m venv "$VENV"
fi
if ! "$VENV/bin/python" -c "import pandas, numpy, python_calamine, xlsxwriter" 2>/dev/null; then
    "$VENV/bin/pip" install --quiet -r benches/requirements.txt
fi

# run NAME COMMAND...: runs COMMAND, its output to $WORK/NAME.log, and its wall time [s] and
# peak RSS [kB] to $WORK/NAME.time as "wall rss".
run() {
    local name="$1"
    shift
    echo "== $name: $*"
    if [[ -x /usr/bin/time ]]; then
        /usr/bin/time -v -o "$WORK/$name.timev" "$@" >"$WORK/$name.log" 2>&1
        awk -F': ' '
            /Elapsed \(wall clock\)/ {
                n = split($2, p, ":"); s = 0
                for (i = 1; i <= n; i++) s = s * 60 + p[i]
                wall = s
            }
            /Maximum resident set size/ { rss = $2 }
            END { print wall, rss }
        ' "$WORK/$name.timev" >"$WORK/$name.time"
    else
        "$VENV/bin/python" - "$WORK/$name" "$@" <<'EOF'
import resource, subprocess, sys, time
out, cmd = sys.argv[1], sys.argv[2:]
t = time.perf_counter()
with open(out + ".log", "w") as log:
    subprocess.run(cmd, stdout=log, stderr=subprocess.STDOUT, check=True)
wall = time.perf_counter() - t
rss = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
open(out + ".time", "w").write(f"{wall:.2f} {rss}\n")
EOF
    fi
    grep -E '^timing:|^ *(read|solar position|physics|write|total):' "$WORK/$name.log" || true
}

rm -rf "$WORK/hazebook-out" "$WORK/python-out.xlsx"
run hazebook target/release/hazebook run "$INPUT" --out "$WORK/hazebook-out" --timings
run python "$VENV/bin/python" benches/python_pipeline.py "$INPUT" "$WORK/python-out.xlsx"

read -r hz_wall hz_rss <"$WORK/hazebook.time"
read -r py_wall py_rss <"$WORK/python.time"
hz_size=$(find "$WORK/hazebook-out" -name '*.xlsx' -printf '%s\n' | awk '{s += $1} END {print s}')
py_size=$(stat -c %s "$WORK/python-out.xlsx")

echo
echo "== $ROWS rows ($INPUT); $(nproc) cores, load average now: $(cut -d' ' -f1-3 /proc/loadavg)"
awk -v hw="$hz_wall" -v hr="$hz_rss" -v hs="$hz_size" \
    -v pw="$py_wall" -v pr="$py_rss" -v ps="$py_size" 'BEGIN {
    printf "%-18s %10s %14s %14s\n", "", "wall [s]", "peak RSS [MB]", "output [MB]"
    printf "%-18s %10.2f %14.0f %14.1f\n", "hazebook run", hw, hr / 1024, hs / 1e6
    printf "%-18s %10.2f %14.0f %14.1f\n", "python pipeline", pw, pr / 1024, ps / 1e6
    printf "speed ratio (python / hazebook): %.2f x\n", pw / hw
}'
