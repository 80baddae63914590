"""``bemcheck mesh CASE``: mesh the bodies for each frequency band and print the statistics."""

from pathlib import Path

from bemcheck.case import load_case
from bemcheck.cli.common import CASE_HELP, EXIT_OK, MESH_CACHE_HELP, default_out
from bemcheck.mesh import format_band_table, write_band_meshes
from bemcheck.mesh.estimate import check_shapes
from bemcheck.run.runner import prepare_folder
from bemcheck.run.store import RunLock

HELP = "mesh a case's bodies for each frequency band and print the mesh statistics"


def add_arguments(m):
    """The command's arguments on its own sub-parser."""
    m.add_argument("case", type=Path, help=CASE_HELP)
    m.add_argument(
        "--out",
        type=Path,
        help="folder for the band meshes (.msh and .vtu; default out/<case file name without .toml>/meshes)",
    )
    m.add_argument("--mesh-cache", type=Path, metavar="DIR", help=MESH_CACHE_HELP)


def execute(args, out):
    """Write the band meshes of ``args.case`` and print their table; the exit code."""
    case = load_case(args.case)
    check_shapes(case)
    folder = prepare_folder(args.out or default_out(args.case, "meshes"))
    # the same lock as a run: two commands writing one folder would interleave files
    with RunLock(folder, command="mesh"):
        stats = write_band_meshes(case, folder, cache_dir=args.mesh_cache)
    print(format_band_table(stats), file=out)
    print(f"meshes: {folder}", file=out)
    return EXIT_OK
