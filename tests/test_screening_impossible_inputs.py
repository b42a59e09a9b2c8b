"""Inputs that would make limits zero or infinite, and sites no limit can reach: errors or warnings, never
all-"meets" or all-"exceeds" in silence.

Check values: the US EPA lead formula and its hardness-dependent conversion factor (40 CFR 131.38(b)(2)
Table 1 footnotes; US EPA National Recommended Water Quality Criteria, Appendix B: mA 1.273, bA -1.460,
CF 1.46203 - 0.145712 ln H), as shipped in limits/us_epa_nrwqc_freshwater_aquatic_life.yaml. At a
hardness of 50,000 mg/L the factor is 1.46203 - 0.145712 x 10.82 = -0.115 (below 0), so the formula gives a
negative criterion: outside what the formula can be used for.
"""

from __future__ import annotations

import textwrap
from pathlib import Path

import numpy as np
import pytest

from tracescreen.io.loading import load_results
from tracescreen.io.sites import SitesError, load_sites
from tracescreen.limits.load import LimitTableError, load_limits
from tracescreen.pipeline import Inputs, load
from tracescreen.screening.screen import UNUSABLE_REMARK, screen

ROOT = Path(__file__).resolve().parents[1]
EPA = ROOT / "limits" / "us_epa_nrwqc_freshwater_aquatic_life.yaml"
TABLE = """\
id: t1
name: Test table
source: "Test body (2020). A test document, table 1."
use: freshwater_aquatic
unit: ug/L
entries:
  - analyte: lead
    fraction: dissolved
    hardness_formula: {m: M, b: -1.460, cf: 0.5}
"""


def test_lead_criterion_at_an_extreme_hardness_is_not_applied(tmp_path):
    """CF(50,000 mg/L) = 1.46203 - 0.145712 ln(50000) = -0.115: a negative limit made every result 'exceeds'."""
    lab = tmp_path / "lab.csv"
    lab.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit,hardness_mg_L\n"
                   "S1,A1,2021-03-04,Lead,dissolved,5,ug/L,50000\nS1,A2,2021-03-04,Lead,dissolved,5,ug/L,100\n")
    loaded = load_results([lab])
    out = screen(loaded.accepted, load_limits(EPA))
    extreme = out[out["sample_id"] == "A1"]
    assert (extreme["status"] == "no_limit").all() and extreme["limit_ug_L"].isna().all()
    assert extreme["note"].astype(str).str.contains(UNUSABLE_REMARK, regex=False).all()
    normal = out[out["sample_id"] == "A2"]
    # at 100 mg/L: exp(1.273 ln 100 - 1.460) x 0.791 = 64.6 -> 65 µg/L acute (NRWQC table prints 65)
    assert np.isclose(normal["limit_ug_L"].max(), 65, rtol=0.01)


@pytest.mark.parametrize("m, message", [("1000", "is inf at hardness"), ("-1000", "is 0 at hardness")])
def test_hardness_formula_that_overflows_or_vanishes_is_a_load_error(tmp_path, m, message):
    p = tmp_path / "t.yaml"
    p.write_text(TABLE.replace("M", m))
    with pytest.raises(LimitTableError, match=f"t.yaml: entry 1 \\(lead\\): key 'hardness_formula': the limit {message}"):
        load_limits(p)


@pytest.mark.parametrize("hardness", ["0", "1e309", "-5"])
def test_site_default_hardness_must_be_above_zero_and_finite(tmp_path, hardness):
    p = tmp_path / "sites.csv"
    p.write_text(f"site_id,uses,hardness_mg_L\nS1,freshwater_aquatic,{hardness}\n")
    with pytest.raises(SitesError, match="row 2: hardness_mg_L"):
        load_sites(p)


def test_sites_with_no_use_or_an_unknown_use_are_named_in_warnings(tmp_path):
    """A site whose uses are empty or name no loaded table gets no_limit for every result; that used to pass
    without a word."""
    sites = tmp_path / "sites.csv"
    sites.write_text(textwrap.dedent("""\
        site_id,uses
        S1,freshwater_aquatic
        S2,
        S3,freshwater aquatic;drinking_water
        """))
    lab = tmp_path / "lab.csv"
    lab.write_text("site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
                   "S2,A1,2021-03-04,Lead,total,5,ug/L\nS3,A2,2021-03-04,Lead,total,5,ug/L\n")
    data = load(Inputs(results=(str(lab),), limits=(str(EPA),), sites=str(sites)))
    warnings = "\n".join(data.loaded.warnings)
    assert "site S2 gives no water use" in warnings
    assert "site S3: use 'freshwater aquatic' is the use of no loaded limit table" in warnings
    assert "site S3: use 'drinking_water'" in warnings
    assert "S1" not in warnings
