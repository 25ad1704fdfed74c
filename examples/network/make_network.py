"""Regenerate the invented towers of the example network (examples/network.toml).

Run from the repository root:  python examples/network/make_network.py

Every tower here is FICTIONAL: its record is simulated by fluxpart.demo (the
invented Quillmoor landscape, hourly records of 2021), each with its own seed,
and only the site name differs from the demo's. No number computed from them
describes a real ecosystem or supports any carbon claim.
"""

from pathlib import Path

from fluxpart.demo import write_example

#: folder and config name -> (seed, variant, site name)
TOWERS = {
    "north_meadow": (11, "c3", "Quillmoor north meadow (fictional)"),
    "south_maize": (12, "c4", "Quillmoor south maize field (fictional)"),
    "east_meadow": (13, "c3", "Quillmoor east meadow (fictional)"),
}


def write_towers(root: Path) -> list[Path]:
    """Write each tower's CSV and site config under `root`; return the configs."""
    configs = []
    for name, (seed, variant, site_name) in TOWERS.items():
        written = write_example(root / name, seed=seed, variant=variant, interval_minutes=60)
        text = written.read_text(encoding="utf-8")
        first, rest = text.split('name = "', 1)
        rest = rest.split('"', 1)[1]
        config = written.with_name(f"{name}.toml")
        config.write_text(f'{first}name = "{site_name}"{rest}', encoding="utf-8")
        written.unlink()
        configs.append(config)
    return configs


if __name__ == "__main__":
    for path in write_towers(Path(__file__).resolve().parent):
        print(f"wrote {path} and its CSV")
