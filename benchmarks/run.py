"""Run every kernel against its reference library on the same data, in one run.

    python benchmarks/run.py            # full sizes (10^4 - 10^6 points)
    python benchmarks/run.py --quick    # a few minutes
    python benchmarks/run.py --only median,enclose

Prints a table: kernel, size, placewise time, reference time, ratio (reference / ours),
target and whether it was met. Ratios, not absolute times, are the claims.
"""

from __future__ import annotations

import argparse
import importlib
import os
import platform
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from harness import Case, best_time  # noqa: E402


def _families() -> list[str]:
    return sorted(p.stem.removeprefix("bench_") for p in HERE.glob("bench_*.py"))


def _fmt(seconds: float | None) -> str:
    if seconds is None:
        return "-"
    if seconds < 1e-3:
        return f"{seconds * 1e6:.0f} us"
    if seconds < 1:
        return f"{seconds * 1e3:.1f} ms"
    return f"{seconds:.2f} s"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--quick", action="store_true", help="smaller sizes, fewer repeats")
    parser.add_argument("--only", default="", help="comma-separated families (default: all)")
    args = parser.parse_args(argv)
    families = [f for f in args.only.split(",") if f and f != "memory"] or _families()

    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}")
    header = (f"| {'kernel':<34} | {'size':<22} | {'placewise':>10} | {'reference':>10} | {'ratio':>8} "
              f"| {'target':>7} | {'met':<3} | note")
    print(header)
    print("|" + "|".join("-" * (len(c) + 0) for c in header.split("|")[1:-1]) + "|---")
    failures = 0
    for family in families:
        module = importlib.import_module(f"bench_{family}")
        case: Case
        for case in module.cases(args.quick):
            ours_t, ours_r = best_time(case.ours, case.repeat)
            ref_t, ref_r = (None, None)
            if case.reference is not None:
                ref_t, ref_r = best_time(case.reference, case.reference_repeat)
            ratio = (ref_t / ours_t) if ref_t is not None and ours_t > 0 else None
            met = "-"
            if case.target is not None and ratio is not None:
                met = "yes" if ratio >= case.target else "NO"
                failures += met == "NO"
            note = case.compare(ours_r, ref_r) if case.compare else ""
            ref_label = f"{_fmt(ref_t)}"
            print(
                f"| {case.kernel:<34} | {case.size:<22} | {_fmt(ours_t):>10} | {ref_label:>10} | "
                f"{(f'{ratio:.1f}x' if ratio is not None else '-'):>8} | "
                f"{(f'{case.target:g}x' if case.target else '-'):>7} | {met:<3} | "
                f"{case.reference_name}{'; ' + note if note else ''}",
                flush=True,
            )
    print(f"targets missed: {failures}")
    if not args.only or "memory" in args.only.split(","):
        import memory

        memory.main(["--points", "1000000" if args.quick else "10000000"])
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
