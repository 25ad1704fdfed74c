"""Review round 41: interactions of this session's later merges.

Outside facts, each named beside its check: flux processing programs commonly write the
worst quality flag (or none) for a record without a flux value (common practice);
towers keep about 65 % of their measured records (Falge et al. 2001, Agric. For.
Meteorol. 107, 43-69 (m)). Everything else is known-truth recovery on invented data:
the records as written.
"""

import numpy as np
import pytest
from test_robustness_layouts18 import _tower

from fluxpart.errors import ImplausibleValueError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
COLUMNS = {"nee": "fc", "ustar": "us", "rg": "sw", "tair": "ta", "vpd": "vpd",
           "nee_flag": "qc"}


def _read(path, **kwargs):
    return read_table(path, columns=COLUMNS, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end", site=SITE, **kwargs)


def test_a_flag_bad_where_nee_is_missing_is_judged_over_the_records_with_nee(tmp_path):
    """A tower whose flux system started late (NEE in the last 8 % of the records) and
    whose flag is 2 wherever NEE is missing (common practice) and 0 or 1 where measured
    (a 65 %-like keep, Falge et al. 2001 (m)): 96.5 % of all flags reject, 30 % of the
    records with NEE. layouts33's > 95 % refusal counted every record and refused it as
    a flag of the other scale; judged over the records with NEE the file reads, keeping
    each measured record whose flag is 0 (known truth)."""
    starts, records = _tower(periods=48 * 40)
    late = np.arange(len(records)) < int(0.95 * len(records))
    records.loc[late, "fc"] = np.nan
    qc = np.where(np.arange(len(records)) % 10 < 3, 1, 0)
    records["qc"] = np.where(late, 2, qc)
    records.to_csv(tmp_path / "a.csv", index=False)
    frame, _ = _read(tmp_path / "a.csv")
    measured = np.isfinite(frame["nee"].to_numpy())
    assert measured.sum() == (~late).sum()
    kept = measured & (frame["nee_flag"].to_numpy() == 0)
    assert kept.sum() == int(((qc == 0) & ~late).sum())
    # the same flag of the other scale among the measured records is still refused
    records["qc"] = np.where(late, 0, np.where(np.arange(len(records)) % 60 == 7, 0, 2))
    records.to_csv(tmp_path / "b.csv", index=False)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "b.csv")
    assert "records with an NEE value" in str(caught.value)
    assert "a flag of the other scale" in str(caught.value)
