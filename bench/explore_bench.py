"""Cost of `bemcheck explore` against one `bemcheck run` of the same case and frequencies.

    .venv/bin/python bench/explore_bench.py                 # the demo's bodies, 400 candidates, its 20 frequencies
    .venv/bin/python bench/explore_bench.py --frequencies 6 # the first 6 of them (quicker)

Both commands run as child processes (each compiles bemcheck's kernels once)
on a mesh cache warmed first by `bemcheck mesh`, one after the other; the
machine's load (`uptime`) is recorded before and after each.  Writes
bench/EXPLORE.md and bench/explore.json.  Target: the explore at most 3x
the run.
"""

import argparse
import json
import re
import subprocess
import sys
import tempfile
import time
import tomllib
from datetime import UTC, datetime
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
CASE = ROOT / "cases" / "demo-explore.toml"
BIN = Path(sys.executable).parent / "bemcheck"
TARGET = 3.0


def _load():
    return subprocess.run(["uptime"], capture_output=True, text=True).stdout.strip().split("load average:")[-1].strip()


def _timed(args):
    before = _load()
    t0 = time.perf_counter()
    done = subprocess.run([str(BIN), *args], capture_output=True, text=True)
    seconds = time.perf_counter() - t0
    if done.returncode != 0:
        raise SystemExit(f"bemcheck {' '.join(args)} failed:\n{done.stderr}")
    return {"seconds": seconds, "load_before": before, "load_after": _load(), "stdout": done.stdout}


def _case_text(n_frequencies):
    text = CASE.read_text()
    doc = tomllib.loads(text)
    f = doc["frequencies"]
    every = [f["start"] * 2 ** (i / f["per_octave"]) for i in range(200)]
    every = [v for v in every if v <= f["stop"] * (1 + 1e-9)][:n_frequencies]
    listed = "list = [" + ", ".join(f"{v!r}" for v in every) + "]"
    return re.sub(r"\[frequencies\]\n(?:[a-z_]+ = .*\n)+", f"[frequencies]\n{listed}\n", text), len(every)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--frequencies", type=int, default=20)
    args = ap.parse_args()
    text, n_f = _case_text(args.frequencies)
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        case = tmp / "case.toml"
        case.write_text(text)
        cache = str(tmp / "cache")
        _timed(["mesh", str(case), "--out", str(tmp / "meshes"), "--mesh-cache", cache])
        run = _timed(["run", str(case), "--out", str(tmp / "run"), "--no-report", "--quiet", "--mesh-cache", cache])
        explore = _timed(["explore", str(case), "--out", str(tmp / "explore"), "--quiet", "--mesh-cache", cache])
    kept = re.search(r"(\d+) of (\d+) candidates kept", explore["stdout"])
    n_max = re.search(r"N up to (\d+)", explore["stdout"])
    parts = re.search(r"solves ([\d.]+) s, error-check solves ([\d.]+) s, choice ([\d.]+) s", explore["stdout"])
    ratio = explore["seconds"] / run["seconds"]
    out = {
        "when": datetime.now(UTC).isoformat(timespec="seconds"),
        "frequencies": n_f,
        "candidates": int(kept.group(2)),
        "candidates_kept": int(kept.group(1)),
        "unknowns": int(n_max.group(1)),
        "run_seconds": run["seconds"],
        "explore_seconds": explore["seconds"],
        "ratio": ratio,
        "explore_solves_seconds": float(parts.group(1)),
        "explore_check_seconds": float(parts.group(2)),
        "explore_choice_seconds": float(parts.group(3)),
        "load": {
            "run": [run["load_before"], run["load_after"]],
            "explore": [explore["load_before"], explore["load_after"]],
        },
        "target_met": ratio <= TARGET,
    }
    (HERE / "explore.json").write_text(json.dumps(out, indent=2) + "\n")
    lines = [
        "# Cost of `bemcheck explore`",
        "",
        f"Measured {out['when']} by `bench/explore_bench.py` on 2 shared cores: the demo's bodies "
        f"(`cases/demo-explore.toml`), F = {n_f} frequencies, N up to {out['unknowns']:,} unknowns, "
        f"M = {out['candidates']} candidates ({out['candidates_kept']} kept).",
        "",
        "| command | wall time | load average before / after (1, 5, 15 min) |",
        "|---|---|---|",
        f"| `bemcheck run` (band and check meshes, single-body solves) | {run['seconds']:.1f} s | {run['load_before']} / {run['load_after']} |",
        f"| `bemcheck explore` | {explore['seconds']:.1f} s | {explore['load_before']} / {explore['load_after']} |",
        "",
        f"Ratio explore / run: **{ratio:.2f}** (target at most {TARGET:g}: {'met' if out['target_met'] else 'not met'}). "
        f"Inside the explore: band-mesh solves {out['explore_solves_seconds']:.1f} s, check-mesh solves "
        f"{out['explore_check_seconds']:.1f} s, maps and choice {out['explore_choice_seconds']:.1f} s; "
        "the rest is start-up (kernel compilation, meshes from the cache, candidate screening) and the page.",
        "",
    ]
    (HERE / "EXPLORE.md").write_text("\n".join(lines))
    print("\n".join(lines))


if __name__ == "__main__":
    main()
