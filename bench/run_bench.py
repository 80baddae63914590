"""Measure bemcheck's speed against the plain bempp-cl script; write bench/RESULTS.md.

    .venv/bin/python bench/run_bench.py           # the full run (32 min on 2 shared cores)
    .venv/bin/python bench/run_bench.py --quick   # small sizes, a smoke run of every step (about 10 min)
    .venv/bin/python bench/run_bench.py --render bench/results.json   # RESULTS.md again, nothing measured

Every measurement runs in a child process of its own (``bench/measure.py``,
or ``bemcheck run`` itself for the cold start), so peak memory and compile
time are those of a fresh worker.  The figures and which targets were met
go to RESULTS.md, the raw numbers to results.json beside it.
"""

import argparse
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from datetime import UTC, datetime
from importlib.metadata import version
from pathlib import Path

import coldstart
import report

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
# Icosphere subdivisions for the scaling: N = 10 n^2 + 2 = 492, 1,002, 1,442, 1,962, 2,892, 4,002.
FULL_SIZES = (7, 10, 12, 14, 17, 20, 24)
QUICK_SIZES = (3, 5)
FULL_SCALING_BUDGET_S = 20 * 60.0


def _child(what, **options):
    """Run one measurement of measure.py in a fresh process; its JSON answer."""
    args = [sys.executable, str(HERE / "measure.py"), what, json.dumps(options)]
    done = subprocess.run(args, cwd=ROOT, stdout=subprocess.PIPE, text=True, check=False)
    if done.returncode != 0:
        raise RuntimeError(f"bench/measure.py {what} failed with exit code {done.returncode} (its stderr is above)")
    return json.loads(done.stdout.strip().splitlines()[-1])


def _git(*args):
    done = subprocess.run(["git", *args], cwd=ROOT, capture_output=True, text=True, check=False)
    return done.stdout.strip()


def _cpu_model():
    for line in Path("/proc/cpuinfo").read_text().splitlines():
        if line.startswith("model name"):
            return line.split(":", 1)[1].strip()
    return platform.processor() or "unknown"


def _memory_gib():
    for line in Path("/proc/meminfo").read_text().splitlines():
        if line.startswith("MemTotal:"):
            return int(line.split()[1]) / 1024.0**2
    return float("nan")


def _opencl_found():
    probe = "import contextlib, io\nwith contextlib.redirect_stdout(io.StringIO()):\n import bempp_cl.api as a\nprint(a.CPU_OPENCL_DRIVER_FOUND)"
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=False)
    return done.stdout.strip().splitlines()[-1] if done.stdout.strip() else "unknown"


def _machine(raw_name, sweep, loads):
    solver_paths = ["bemcheck/solvers", "bemcheck/run", "bemcheck/mesh", "cases/demo.toml"]
    status = subprocess.run(
        ["git", "status", "--porcelain", "--", *solver_paths], cwd=ROOT, capture_output=True, text=True, check=False
    )
    dirty = sorted(line[3:] for line in status.stdout.splitlines() if line.strip())
    return {
        "date": datetime.now(UTC).strftime("%Y-%m-%d %H:%M UTC"),
        "cpu": _cpu_model(),
        "cores": os.cpu_count(),
        "memory_gib": _memory_gib(),
        "python": platform.python_version(),
        **{name: version(name) for name in ("bempp-cl", "numba", "numpy", "scipy")},
        "device": sweep["rows"][0]["device"],
        "opencl": _opencl_found(),
        "commit": _git("rev-parse", "--short", "HEAD"),
        "dirty": dirty,
        "load": {"start": loads[0], "end": loads[-1], "min": min(loads), "max": max(loads)},
        "raw": raw_name,
    }


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="small sizes and one frequency: a smoke run of every step")
    parser.add_argument(
        "--out", type=Path, help="RESULTS.md to write (default bench/RESULTS.md; a temporary folder with --quick)"
    )
    parser.add_argument(
        "--case", type=Path, default=ROOT / "cases" / "demo.toml", help="case for the sweep and the cold start"
    )
    parser.add_argument(
        "--render",
        type=Path,
        metavar="RESULTS_JSON",
        help="measure nothing: rewrite RESULTS.md from the raw figures of an earlier run",
    )
    args = parser.parse_args(argv)
    if args.render:
        raw = json.loads(args.render.read_text())
        out = args.out or args.render.with_name("RESULTS.md")
        raw["derived"] = report.write(
            out, raw["machine"], raw["sweep"], raw["scaling"], raw["cold_start"], raw["seconds"], raw["quick"]
        )
        args.render.write_text(json.dumps(raw, indent=1) + "\n")
        print(f"wrote {out} from {args.render}", file=sys.stderr)
        return 0
    out = args.out or (
        Path(tempfile.mkdtemp(prefix="bemcheck-bench-quick-")) / "RESULTS.md" if args.quick else HERE / "RESULTS.md"
    )
    start = time.perf_counter()
    loads = [os.getloadavg()[0]]
    with tempfile.TemporaryDirectory(prefix="bemcheck-bench-") as work:
        print("cold start: `bemcheck run` twice (cold, then warm caches) ...", file=sys.stderr, flush=True)
        cold = coldstart.cold_and_warm(Path(sys.executable).parent / "bemcheck", args.case, work)
        print(
            f"cold start: {cold['cold']['seconds']:.1f} s cold, {cold['warm']['seconds']:.1f} s warm",
            file=sys.stderr,
            flush=True,
        )

        case_frequencies = None if not args.quick else [_first_frequency(args.case)]
        sweep = _child(
            "sweep",
            case_path=str(args.case),
            reference_frequencies=case_frequencies or _all_frequencies(args.case),
            frequencies=case_frequencies,
            self_check=not args.quick,
            cache_dir=str(Path(work) / "mesh-cache"),
        )
        scaling = _child(
            "scaling",
            sizes=list(QUICK_SIZES if args.quick else FULL_SIZES),
            budget_s=float("inf") if args.quick else FULL_SCALING_BUDGET_S,
        )
    loads += [r["load"][0] for r in sweep["rows"] + scaling["rows"]] + [os.getloadavg()[0]]
    seconds = time.perf_counter() - start

    raw_path = out.with_name("results.json")
    machine = _machine(raw_path.name, sweep, loads)
    out.parent.mkdir(parents=True, exist_ok=True)
    derived = report.write(out, machine, sweep, scaling, cold, seconds, args.quick)
    raw = {
        "machine": machine,
        "seconds": seconds,
        "quick": args.quick,
        "cold_start": cold,
        "sweep": sweep,
        "scaling": scaling,
        "derived": derived,
    }
    raw_path.write_text(json.dumps(raw, indent=1) + "\n")
    print(f"wrote {out} and {raw_path} after {seconds / 60:.1f} min", file=sys.stderr)
    return 0


def _all_frequencies(case_path):
    from bemcheck.case import load_case

    return list(load_case(case_path).frequencies)


def _first_frequency(case_path):
    return _all_frequencies(case_path)[0]


if __name__ == "__main__":
    sys.exit(main())
