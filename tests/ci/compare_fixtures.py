"""Compare regenerated reference fixtures with the committed ones, number by number.

Usage: compare_fixtures.py FILE...   (files under tests/fixtures or src/physics/data that
`git diff` reports as changed after regeneration)

The reference scripts write numbers at 10 significant digits. The same pinned packages can
round the last digit differently on another CPU (numpy picks its SIMD kernels at run time),
so a changed file passes when every cell that is not a number is equal and every number
agrees with the committed value to 1e-8 relative (or 1e-12 absolute near zero); it then
gets its committed bytes back. Anything else is a real difference and fails. Common practice
for floating-point fixtures.
"""

import csv
import io
import math
import subprocess
import sys

REL = 1e-8
ABS = 1e-12


def as_number(text):
    try:
        x = float(text)
    except ValueError:
        return None
    return x


def committed(path):
    return subprocess.run(
        ["git", "show", f"HEAD:{path}"], check=True, capture_output=True, text=True
    ).stdout


def compare(path):
    old = list(csv.reader(io.StringIO(committed(path))))
    with open(path, newline="") as f:
        new = list(csv.reader(f))
    if len(old) != len(new):
        return f"{path}: {len(new)} rows regenerated, {len(old)} committed"
    worst = 0.0
    for r, (a, b) in enumerate(zip(old, new), start=1):
        if len(a) != len(b):
            return f"{path}, row {r}: {len(b)} fields regenerated, {len(a)} committed"
        for c, (x, y) in enumerate(zip(a, b), start=1):
            if x == y:
                continue
            xa, ya = as_number(x), as_number(y)
            if xa is None or ya is None:
                return f"{path}, row {r}, field {c}: {y!r} regenerated, {x!r} committed"
            if math.isnan(xa) and math.isnan(ya):
                continue
            diff = abs(xa - ya)
            if diff > max(ABS, REL * max(abs(xa), abs(ya))):
                return (
                    f"{path}, row {r}, field {c}: {y} regenerated, {x} committed "
                    f"(beyond {REL:g} relative)"
                )
            worst = max(worst, diff / max(abs(xa), abs(ya)))
    print(f"{path}: last-digit differences only (largest {worst:.1e} relative); committed bytes kept")
    return None


def main():
    failures = [m for m in (compare(p) for p in sys.argv[1:]) if m]
    for m in failures:
        print(f"error: {m}", file=sys.stderr)
    if failures:
        sys.exit(1)
    subprocess.run(["git", "checkout", "--", *sys.argv[1:]], check=True)


if __name__ == "__main__":
    main()
