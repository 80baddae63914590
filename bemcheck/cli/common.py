"""What every subcommand shares: exit codes and the default run folder."""

from pathlib import Path

EXIT_OK, EXIT_FAILURE, EXIT_BAD_INPUT = 0, 1, 2
# 128 + SIGINT, as shells report a command stopped by Ctrl-C
EXIT_INTERRUPTED = 130
CASE_HELP = "case file (TOML)"
MESH_CACHE_HELP = "folder of cached meshes (default ~/.cache/bemcheck/meshes)"


def default_out(case_path, *under):
    """``out/<case file name without .toml>`` in the current folder, for --out left out.

    Examples
    --------
    >>> str(default_out("cases/demo.toml", "meshes"))
    'out/demo/meshes'
    """
    return Path("out", Path(case_path).stem, *under)
