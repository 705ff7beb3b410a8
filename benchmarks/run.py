"""Run every benchmark and assemble benchmarks/README.md.

Usage: ``python benchmarks/run.py [name ...]`` (names are bench_<name>.py; default all).
Each ``bench_<name>.py`` is runnable alone and writes ``benchmarks/results/<name>.md``;
this script runs them in turn and concatenates the results under the header below.
"""

from __future__ import annotations

import datetime
import platform
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def main(argv: list[str]) -> int:
    names = argv or sorted(p.stem[len("bench_"):] for p in HERE.glob("bench_*.py"))
    for name in names:
        print(f"== {name}", flush=True)
        r = subprocess.run([sys.executable, str(HERE / f"bench_{name}.py")], check=False)
        if r.returncode:
            print(f"bench_{name}.py failed with exit code {r.returncode}", file=sys.stderr)
            return r.returncode
    parts = [
        "# Benchmarks\n",
        "Produced by `python benchmarks/run.py` (one benchmark: `python benchmarks/run.py NAME`).",
        "Every rate is measured in the same run as its baseline, the naive numpy expression",
        "`np.exp(1j*k*(pos @ dirs.T)) @ w`, on the machine below.\n",
        f"Assembled {datetime.date.today().isoformat()} ({'all benchmarks' if not argv else 'ran: ' + ', '.join(names)}), "  # noqa: E501
        f"{platform.processor() or 'cpu'}, Python {platform.python_version()}; each section "
        "names the run that produced it.\n",
    ]
    for p in sorted((HERE / "results").glob("*.md")):
        parts.append(p.read_text())
    out = HERE / "README.md"
    tmp = out.with_suffix(".md.tmp")
    tmp.write_text("\n".join(parts))
    tmp.replace(out)  # atomic: a failed run never leaves half a README
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
