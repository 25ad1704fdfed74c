"""Write the fictional Quillmoor maize field as a messy logger export, with its site config.

Run from the repository root:  python examples/make_logger_example.py
Quillmoor is invented; its data are simulated by fluxpart.demo (variant "c4", seed 3).

The files imitate what a tower's logger and a spreadsheet make of a year, so that the
site config shows every reader setting for such layouts (docs/logger-files.md):

- two files, one per half-year, overlapping by one day of identical rows
  (``path = "quillmoor_maize_logger/maize_*.dat"``);
- a title line before the header and a units line under it (``rows_before_header``,
  ``rows_after_header``), Latin-1 text (the units line has "°C"; ``encoding``);
- ``;`` between fields and a decimal comma (``delimiter``, ``decimal``);
- separate date and time columns, stamps at the interval end in civil time with
  daylight saving (CET/CEST, ``time_zone = "Europe/Berlin"``) and midnight written
  as ``24:00`` of the ending day (``time_column`` as a list);
- three rows written twice by the logger (dropped as exact duplicates);
- a 0/1/2 quality flag whose 1 means "good, lower class" (``flag_accept = [0, 1]``)
  and a separate analyser flag, non-zero = fault (``nee_flag`` as a list);
- the turbulent CO2 flux and the storage flux in separate columns (``storage``),
  and PPFD instead of global radiation (``ppfd``).
"""

from pathlib import Path

import numpy as np
import pandas as pd

from fluxpart.demo import site, site_year
from fluxpart.variables import PPFD_PER_RG

SUBFOLDER = "quillmoor_maize_logger"
ZONE = "Europe/Berlin"


def _text(values, decimals):
    """Numbers with a decimal comma, -9999 for missing."""
    text = np.char.replace(np.char.mod(f"%.{decimals}f", np.nan_to_num(values)), ".", ",")
    return np.where(np.isfinite(values), text, "-9999")


def write_logger_example(directory, seed=3, frame=None) -> Path:
    """Write the two logger files and the site config; return the config's path.

    `frame` may pass ``fluxpart.demo.site_year(seed, variant="c4")[0]`` when the caller
    already has it.
    """
    if frame is None:
        frame, _ = site_year(seed, variant="c4")
    the_site = site("c4")
    directory = Path(directory)
    folder = directory / SUBFOLDER
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    n = len(frame)

    ends = frame.index + pd.Timedelta(minutes=30)
    civil = (ends - pd.Timedelta(hours=the_site.utc_offset)).tz_localize("UTC").tz_convert(
        ZONE).tz_localize(None)
    midnight = (civil.hour == 0) & (civil.minute == 0)
    dates = np.where(midnight, (civil - pd.Timedelta(days=1)).strftime("%d.%m.%Y"),
                     civil.strftime("%d.%m.%Y"))
    times = np.where(midnight, "24:00", civil.strftime("%H:%M"))

    hour = frame.index.hour + frame.index.minute / 60
    # CO2 builds up below the sensor through the night (storage > 0, largest at 21 h) and
    # is flushed in the morning (< 0, largest at 9 h); sums to 0 per day
    storage = np.round(1.5 * np.sin((hour - 15) / 24 * 2 * np.pi), 3)
    turbulent = frame["nee"].to_numpy() - storage
    good = frame["nee_flag"].to_numpy() == 0
    quality = np.where(good, np.where(rng.random(n) < 0.1, 1, 0), 2)
    analyser = np.where(rng.random(n) < 0.002, 8, 0)
    # the analyser fault invalidates the flux: the twin of these records is rejected
    columns = {
        "Date": dates, "Time": times,
        "co2_turb": _text(turbulent, 3), "co2_store": _text(storage, 3),
        "PAR_in": _text(frame["rg"].to_numpy() * PPFD_PER_RG, 2),
        "T_air": _text(frame["tair"].to_numpy(), 2), "RH": _text(frame["rh"].to_numpy(), 1),
        "u_star": _text(frame["ustar"].to_numpy(), 3), "T_soil": _text(frame["tsoil"].to_numpy(), 2),
        "QC_flux": quality.astype(str), "QC_irga": analyser.astype(str),
    }
    table = pd.DataFrame(columns)
    units = ["dd.mm.yyyy", "hh:mm", "umol m-2 s-1", "umol m-2 s-1", "umol m-2 s-1", "°C", "%",
             "m s-1", "°C", "0/1/2", "0=ok"]
    half = n // 2
    parts = {"maize_2021_1.dat": table.iloc[:half + 48],
             "maize_2021_2.dat": table.iloc[half:]}
    for name, part in parts.items():
        if name.endswith("_1.dat"):  # the logger wrote three rows twice
            part = pd.concat([part.iloc[:1000], part.iloc[997:1000], part.iloc[1000:]])
        lines = ["Quillmoor maize (fictional) flux logger export; program fx2; station 4",
                 ";".join(part.columns), ";".join(units)]
        lines += [";".join(row) for row in part.to_numpy().tolist()]
        (folder / name).write_bytes(("\r\n".join(lines) + "\r\n").encode("latin-1"))

    toml = f"""# Quillmoor is a FICTIONAL site: simulated data from fluxpart.demo (variant c4, seed {seed}),
# written as a messy logger export by examples/make_logger_example.py.
# No number from it describes a real ecosystem or supports any carbon claim.

[site]
name = "Quillmoor maize field, logger export (fictional)"
latitude = {the_site.latitude}
longitude = {the_site.longitude}
utc_offset = {the_site.utc_offset}          # standard time (CET); the logger keeps civil time
canopy = "{the_site.canopy}"          # maize: the short-canopy u* floor

[input]
path = "{SUBFOLDER}/maize_*.dat"   # one file per half-year, read as one record
encoding = "latin-1"
rows_before_header = 1               # the title line
rows_after_header = 1                # the units line
delimiter = ";"
decimal = ","
time_column = ["Date", "Time"]       # joined with one space
time_format = "%d.%m.%Y %H:%M"       # 24:00 is read as midnight ending the day
time_marks = "end"
time_zone = "{ZONE}"              # civil time with daylight saving -> standard time
missing = [-9999]
flag_accept = [0, 1]                 # QC_flux 1 = good, lower class; QC_irga must be 0

[input.columns]
nee = "co2_turb"
storage = "co2_store"                # added to nee
ppfd = "PAR_in"                     # converted to rg
tair = "T_air"
rh = "RH"                            # vpd derived from rh and tair
ustar = "u_star"
tsoil = "T_soil"
nee_flag = ["QC_flux", "QC_irga"]

[processing]
seed = 0
"""
    path = directory / "quillmoor_maize_logger.toml"
    path.write_text(toml, encoding="utf-8")
    return path


if __name__ == "__main__":
    written = write_logger_example(Path(__file__).resolve().parent)
    print(f"wrote {written} and {SUBFOLDER}/maize_2021_*.dat")
