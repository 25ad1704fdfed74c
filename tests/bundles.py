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
