"""Short site bundles (site config + input) cut from the example site, for fast result-folder tests."""

from pathlib import Path

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
SHORT_RECORDS = 24 * 2 * 30            # 30 days of half-hours: fast, still partitionable


def make_bundle(folder: Path, records: int = SHORT_RECORDS, extra: str = "",
                name: str = "site.toml", draws: int = 20) -> Path:
    """Write ``tower.csv`` (the first `records` rows of the example) and a site config.

    The config uses a fixed u* threshold and few (`draws`) Monte Carlo draws for speed;
    `extra` lines are appended to its ``[processing]`` table. Returns the config path.
    """
    folder.mkdir(parents=True, exist_ok=True)
    if not (folder / "tower.csv").exists():
        lines = (EXAMPLES / "quillmoor_grassland.csv").read_text().splitlines(keepends=True)
        (folder / "tower.csv").write_text("".join(lines[:records + 1]))
    text = (EXAMPLES / "quillmoor_grassland.toml").read_text()
    text = text.replace('path = "quillmoor_grassland.csv"', 'path = "tower.csv"')
    text += (f'ustar_method = "fixed"\nustar_threshold = 0.2\nrandom_error_draws = {draws}\n'
             + extra)
    (folder / name).write_text(text)
    return folder / name


#: The end of a child script (Python source) that runs ``fluxpart run --out sys.argv[1]``
#: writing one tiny table through ``resultdir.write_folder``; the script before it imports
#: ``sys``, ``pandas as pd``, ``fluxpart.cli as cli`` and ``fluxpart.resultdir as
#: resultdir`` and patches what the test needs (the signal tests of a staged write).
RUN_WRITING_ONE_TABLE = (
    "def command(args):\n"
    "    resultdir.write_folder(args.out, {'annual': pd.DataFrame({'nee': [1.0]})},\n"
    "                           site={}, config={}, seed=0, provenance={})\n"
    "    return 0\n"
    "cli._command_run = command\n"
    "sys.exit(cli.main(['run', 'site.toml', '--out', sys.argv[1]]))\n")
