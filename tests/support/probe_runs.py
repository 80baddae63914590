"""One small invented case run once per test session in every way that writes a results file.

The case has no bodies (so the BEM path runs without a mesh, in seconds) but
everything else that adds a variable: a primary and a control with a
driver fed by an amplifier, a catalogue driver no control names, a played note, an observer point, placement and channel tolerances,
two sectors (one wrapping through 0°) and explore candidates. Runs: the
free-field model alone, both models, and ``bemcheck explore``; and the
shipped example ``free-pair`` with both models.
"""

import atexit
import functools
import shutil
import tempfile
from dataclasses import dataclass
from pathlib import Path

import bemcheck
from bemcheck.case import parse_case
from bemcheck.cli import main

PROBE = """
[case]
title = "Schema probe (invented test layout)"
[frequencies]
list = [100.0, 200.0]
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.1, 0.0, 0.0]
driver = "big"
position_tolerance = 0.002
[[driver]]
name = "big"
re = 6.0
bl = 7.0
mms = 0.020
cms = 0.001
rms = 1.5
sd = 0.0133
xmax = 0.005
vb = 0.020
rated_power = 50.0
[[driver]]
name = "spare"
re = 6.0
bl = 3.0
mms = 0.003
cms = 0.0005
rms = 0.5
sd = 0.0015
xmax = 0.0005
vb = 0.0005
rated_power = 2.0
[[amplifier]]
name = "amp"
rated_voltage_rms = 20.0
rated_current_rms = 5.0
controls = ["c"]
[[note]]
name = "low"
fundamental = 100.0
spl_at_1m = [80.0, 70.0]
[build]
trials = 50
max_loss_db = 1.0
channel_gain_db = 1.0
channel_phase_deg = 10.0
[observers]
far_field = { plane = "xy", step_deg = 10.0 }
points = [ { name = "ear", at = [-0.3, 0.1, 0.0] } ]
[tolerance]
sectors = [ { name = "front", from_deg = 300.0, to_deg = 420.0 }, { name = "all", from_deg = 0.0, to_deg = 360.0 } ]
[explore]
points = [[0.0, 0.3, 0.0], [0.0, -0.3, 0.0], [0.2, 0.2, 0.0]]
fixed = ["c"]
"""


@dataclass(frozen=True)
class ProbeRuns:
    """The run folders: ``free`` (free-field model only), ``both`` (both models), ``explore``, ``example``.

    ``summaries`` maps "free", "both" and "example" to the run's summary.json content.
    """

    free: Path
    both: Path
    explore: Path
    example: Path
    summaries: dict


@functools.cache
def probe_runs():
    """Run the probe case (once per session) and return its folders."""
    root = Path(tempfile.mkdtemp(prefix="bemcheck-probe-"))
    atexit.register(shutil.rmtree, root, ignore_errors=True)
    case_file = root / "probe.toml"
    case_file.write_text(PROBE)
    case = parse_case(PROBE, case_file)
    summaries = {}
    for model in ("free", "both"):
        summaries[model] = bemcheck.run_case(case, root / model, model=model, quiet=True).summary
    example = bemcheck.load_case(bemcheck.example_path("free-pair"))
    summaries["example"] = bemcheck.run_case(example, root / "example", model="both", quiet=True).summary
    if (
        main(
            ["explore", str(case_file), "--out", str(root / "explore"), "--mesh-cache", str(root / "cache"), "--quiet"]
        )
        != 0
    ):
        raise RuntimeError("bemcheck explore failed on the probe case")
    return ProbeRuns(root / "free", root / "both", root / "explore", root / "example", summaries)
