"""Peak memory of allocating 10,000,000 points to 1,000 sites.

Target (issue "beyond one machine"): no more than about 1.5x the output arrays' size beyond
the input. Measured in a fresh process from the kernel's high-water mark (VmHWM, reset just
before the call through /proc/self/clear_refs), so numpy's input arrays do not count.

    python benchmarks/memory.py [--points N] [--sites K]
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys

CHILD = r"""
import json, sys
import numpy as np
import placewise as pw

n, k = int(sys.argv[1]), int(sys.argv[2])
rng = np.random.default_rng(0)
points = rng.uniform(0, 100_000, size=(n, 2))
weights = rng.uniform(0.5, 2.0, size=n)
sites = rng.uniform(0, 100_000, size=(k, 2))
pw.nearest_site(points[:1000], sites, weights[:1000])  # warm up: load the module, start threads

def status(field):
    with open("/proc/self/status") as f:
        for line in f:
            if line.startswith(field + ":"):
                return int(line.split()[1]) * 1024
    raise RuntimeError(field)

with open("/proc/self/clear_refs", "w") as f:
    f.write("5")  # reset the high-water mark to the current resident size
before = status("VmRSS")
allocation = pw.nearest_site(points, sites, weights)
peak = status("VmHWM")
output = sum(np.asarray(getattr(allocation, f)).nbytes for f in ("assignment", "distance", "load", "count"))
print(json.dumps({"extra": peak - before, "output": output}))
"""


def measure(points: int, sites: int) -> dict[str, float]:
    out = subprocess.run([sys.executable, "-c", CHILD, str(points), str(sites)],
                         check=True, capture_output=True, text=True)
    figures = json.loads(out.stdout.strip().splitlines()[-1])
    figures["ratio"] = figures["extra"] / figures["output"]
    return figures


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--points", type=int, default=10_000_000)
    parser.add_argument("--sites", type=int, default=1_000)
    args = parser.parse_args(argv)
    f = measure(args.points, args.sites)
    print(
        f"nearest_site memory: {args.points:,} points -> {args.sites:,} sites: peak beyond input "
        f"{f['extra'] / 2**20:.0f} MiB for {f['output'] / 2**20:.0f} MiB of output arrays = {f['ratio']:.2f}x "
        f"(target <= 1.5x: {'met' if f['ratio'] <= 1.5 else 'NOT met'})"
    )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
