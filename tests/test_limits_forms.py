"""Limit forms (limits/forms.py) read from tables, checked with file/entry/key messages, evaluated by
screening with the sample's own water chemistry, the site's defaults, or a note naming what is missing.

Check values: the Canadian zinc guideline exp(0.947 ln H - 0.815 pH + 0.398 ln DOC + 4.625) gives
23 µg/L at H 100, pH 7.5, DOC 2 (CCME 2018 zinc fact sheet example; from memory, see
published_values.py); the EU cadmium EQS classes are from the law copy of 2008/105/EC Annex I Part A
(checked); other numbers are computed by hand in each test from the stated equation.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from flag_frames import results as make_results
from lab_files import write_csv

from tracescreen.io.loading import load_results
from tracescreen.io.sites import load_sites
from tracescreen.limits import forms, words
from tracescreen.limits.load import LimitTableError, load_limits
from tracescreen.screening.screen import screen

LIMITS = Path(__file__).resolve().parents[1] / "limits"
ZINC = ("  - analyte: zinc\n    fraction: dissolved\n    formula:\n      intercept: 4.625\n      terms:\n"
        "        - {input: hardness, coefficient: 0.947, log: true}\n        - {input: ph, coefficient: -0.815}\n"
        "        - {input: doc, coefficient: 0.398, log: true}\n"
        "    valid_range: {hardness: [23.4, 399], ph: [6.5, 8.13], doc: [0.3, 22.9]}\n    outside_range: no_limit\n")


def table(tmp_path, entries: str, extra: str = "", name: str = "t.yaml", use: str = "freshwater_aquatic"):
    p = tmp_path / name
    p.write_text(f"id: {p.stem}\nname: test\nsource: constructed for a test\nuse: {use}\nunit: µg/L\n{extra}"
                 f"entries:\n{entries}", encoding="utf-8")
    return load_limits(p)


def zinc_ccme(h, ph, doc):
    """CCME 2018 long-term zinc, by hand."""
    return math.exp(0.947 * math.log(h) - 0.815 * ph + 0.398 * math.log(doc) + 4.625)


# --- the table format: checked at load, messages name file, entry and key ------------------------

@pytest.mark.parametrize("entry, message", [
    ("  - {analyte: zinc, fraction: total, formula: {intercept: 1, terms: [{input: chloride, coefficient: 1}]}}\n",
     "t.yaml: entry 1 (zinc): key 'formula'.terms[1].input: input 'chloride' is not one of hardness, ph, doc, temperature"),
    ("  - {analyte: zinc, fraction: total, value: 5, formula: {intercept: 1, terms: [{input: ph, coefficient: 1}]}}\n",
     "t.yaml: entry 1 (zinc): give exactly one of"),
    ("  - {analyte: zinc, fraction: total, formula: {intercept: 1, terms: [{input: ph, coefficient: 1}]}, "
     "valid_range: {ph: [6, 8]}}\n",
     "t.yaml: entry 1 (zinc): key 'valid_range' needs 'outside_range'"),
    ("  - {analyte: zinc, fraction: total, formula: {intercept: 1, terms: [{input: ph, coefficient: 1}]}, "
     "valid_range: {doc: [1, 8]}, outside_range: clamp}\n",
     "t.yaml: entry 1 (zinc): key 'valid_range.doc': the form does not use doc"),
    ("  - {analyte: zinc, fraction: total, steps: {input: hardness, pieces: [{below: 50, value: 1}, "
     "{over: 50, value: 2}]}}\n",
     "the lower bound must continue the previous piece (after 'below: 50' comes 'from: 50'"),
    ("  - {analyte: zinc, fraction: total, lookup: {rows: {input: hardness, bounds: [40, 50]}, values: [1, 2]}}\n",
     "t.yaml: entry 1 (zinc): key 'lookup'.values: needs 3 values (2 bounds make 3 classes)"),
    ("  - {analyte: zinc, fraction: total, lookup: {rows: {input: hardness, bounds: [50, 40]}, values: [1, 2, 3]}}\n",
     "key 'lookup'.rows.bounds: [50.0, 40.0] must increase"),
    ("  - {analyte: zinc, fraction: total, power_law: {input: hardness, reference: 0, exponent: 1, value: 2}}\n",
     "t.yaml: entry 1 (zinc): key 'power_law'.reference: 0 must be > 0"),
    ("  - {analyte: zinc, fraction: total, value: 5, scope: {water_body: lotic}}\n",
     "t.yaml: entry 1 (zinc): key 'scope': unknown site attribute 'water_body'"),
    ("  - {analyte: zinc, fraction: total, value: 5, scope: {water_body_type: creek}}\n",
     "key 'scope'.water_body_type: 'creek' is not one of lotic, lentic"),
    ("  - {analyte: zinc, fraction: total, value: 5, unknown_input: {value: 2}}\n",
     "key 'unknown_input' only applies to a computed form"),
    ("  - {analyte: zinc, fraction: total, value: 5, infrequent_basis: single_sample}\n",
     "key 'infrequent_basis' only applies with basis 'running_annual_mean'"),
])
def test_form_mistakes_name_file_entry_and_key(tmp_path, entry, message):
    """A mistake in a form is a load error naming the file, the entry and the key (never a traceback)."""
    with pytest.raises(LimitTableError) as err:
        table(tmp_path, entry)
    assert message in str(err.value)


def test_period_mean_needs_a_period(tmp_path):
    with pytest.raises(LimitTableError, match="entry 1 \\(zinc\\): key 'period': 'None' is not one of calendar_year"):
        table(tmp_path, "  - {analyte: zinc, fraction: total, value: 5, basis: period_mean}\n",
              "settings: {nondetect_rule: half_dl}\n")


def test_table_settings_and_dates_are_checked(tmp_path):
    with pytest.raises(LimitTableError, match="criteria_significant_figures': '0' must be a whole number"):
        table(tmp_path, "  - {analyte: zinc, fraction: total, value: 5}\n", "settings: {criteria_significant_figures: 0}\n")
    with pytest.raises(LimitTableError, match="entry 1 \\(zinc\\): key 'effective_from' is after the table's effective_to"):
        table(tmp_path, "  - {analyte: zinc, fraction: total, value: 5, effective_from: 2030-01-01}\n",
              "effective_to: 2020-12-31\n")


# --- evaluation ------------------------------------------------------------------------------------

def test_formula_in_three_inputs_with_valid_ranges(tmp_path):
    """CCME zinc: 23 µg/L at H 100, pH 7.5, DOC 2 (fact sheet example, memory); outside a range: no limit,
    remark naming the input; a missing input: no limit, remark naming it."""
    spec = table(tmp_path, ZINC).entries["form"].iloc[0]
    h, ph, doc = (np.array(v, dtype=float) for v in ([100, 100, 100, 500, 100], [7.5, 8.5, np.nan, 7.5, 7.0],
                                                     [2, 2, 2, 2, np.nan]))
    limit, remark = forms.evaluate(spec, {"hardness": h, "ph": ph, "doc": doc})
    assert round(limit[0]) == 23 and limit[0] == pytest.approx(zinc_ccme(100, 7.5, 2), rel=1e-12)
    assert np.isnan(limit[1:]).all()
    assert [forms.REMARKS[r] for r in remark[1:]] == [
        "pH outside the valid range: limit not computed", "pH unknown: limit not computed",
        "hardness outside the valid range: limit not computed", "dissolved organic carbon unknown: limit not computed"]


def test_outside_range_clamp_and_value(tmp_path):
    """outside_range clamp takes the input at the bound; {value: v} states the document's value."""
    base = "  - {analyte: zinc, fraction: total, power_law: {input: hardness, reference: 30, exponent: 0.85, value: 8.0}, "
    lim = table(tmp_path, base + "valid_range: {hardness: [null, 400]}, outside_range: clamp}\n"
                + base.replace("zinc", "copper") + "valid_range: {hardness: [10, 400]}, outside_range: {value: 1.5}}\n")
    a, ra = forms.evaluate(lim.entries["form"].iloc[0], {"hardness": np.array([1000.0, 60.0])})
    b, rb = forms.evaluate(lim.entries["form"].iloc[1], {"hardness": np.array([5.0])})
    assert a[0] == pytest.approx(8.0 * (400 / 30) ** 0.85) and a[1] == pytest.approx(8.0 * 2 ** 0.85)
    assert forms.REMARKS[ra[0]] == "hardness outside the valid range: hardness taken at the range's bound"
    assert b[0] == 1.5 and "the value the document states outside the range used" in forms.REMARKS[rb[0]]


def test_steps_bounds_fall_on_the_stated_side(tmp_path):
    """CCME copper: 2 µg/L below 82, 0.2 e^(0.8545 ln H - 1.465) from 82 to 180, 4 above 180, 2 when unknown;
    CCME lead: 1 µg/L up to 60 (60 itself), formula over 60 (by hand)."""
    lim = load_limits(LIMITS / "canada" / "ccme_freshwater_aquatic_life.yaml")
    cu = lim.entries[lim.entries["analyte"] == "copper"]["form"].iloc[0]
    pb = lim.entries[lim.entries["analyte"] == "lead"]["form"].iloc[0]
    h = np.array([81.99, 82.0, 180.0, 180.01, np.nan])
    v, r = forms.evaluate(cu, {"hardness": h})
    cu_formula = lambda x: 0.2 * math.exp(0.8545 * math.log(x) - 1.465)  # noqa: E731
    assert v.tolist() == [2.0, pytest.approx(cu_formula(82.0)), pytest.approx(cu_formula(180.0)), 4.0, 2.0]
    assert forms.REMARKS[r[-1]] == "hardness unknown: the value the document states for unknown hardness used"
    v, _ = forms.evaluate(pb, {"hardness": np.array([60.0, 60.5])})
    assert v[0] == 1.0 and v[1] == pytest.approx(math.exp(1.273 * math.log(60.5) - 4.705))


def test_lookup_two_inputs_and_bound_side(tmp_path):
    """A table by hardness class x pH band; bound_belongs_to lower_class puts a value equal to a bound below."""
    lim = table(tmp_path, "  - analyte: manganese\n    fraction: dissolved\n    lookup:\n"
                "      rows: {input: hardness, bounds: [50, 100]}\n      columns: {input: ph, bounds: [7]}\n"
                "      values: [[1, 2], [3, 4], [5, 6]]\n      bound_belongs_to: lower_class\n")
    v, _ = forms.evaluate(lim.entries["form"].iloc[0], {"hardness": np.array([50.0, 50.1, 200.0, 10.0]),
                                                        "ph": np.array([7.0, 7.1, 6.0, 9.0])})
    assert v.tolist() == [1.0, 4.0, 5.0, 2.0]


# --- screening with inputs from the sample, the site, or missing ----------------------------------

def test_zinc_limit_from_the_samples_ph_and_doc_rows(tmp_path):
    """pH and DOC reported as rows of the same sample become the inputs of its zinc limit; the input rows
    are set aside with their reason, counted (rows read = accepted + set aside + rejected)."""
    f = write_csv(tmp_path, "site_id,sample_id,sampled_at,analyte,fraction,result,unit\n"
                  "R1,A,2024-05-02,Zinc,Dissolved,30,ug/L\n"
                  "R1,A,2024-05-02,Hardness,Total,100,mg/L\n"
                  "R1,A,2024-05-02,pH,Total,7.5,std units\n"
                  "R1,A,2024-05-02,Organic carbon,Dissolved,2.0,mg/L\n"
                  "R1,B,2024-06-02,Zinc,Dissolved,30,ug/L\n"
                  "R1,B,2024-06-02,Hardness,Total,100,mg/L\n")
    loaded = load_results([f])
    assert len(loaded.accepted) + len(loaded.set_aside) + len(loaded.rejected) == 6
    reasons = loaded.set_aside["reason"].tolist()
    assert "pH result: used as an input of the sample's computed limits" in reasons
    assert "dissolved organic carbon result: used as an input of the sample's computed limits" in reasons
    out = screen(loaded.accepted, table(tmp_path, ZINC))
    a = out[out["sample_id"] == "A"].iloc[0]
    b = out[out["sample_id"] == "B"].iloc[0]
    assert a["ph_used"] == 7.5 and a["doc_used_mg_L"] == 2.0
    assert a["limit_ug_L"] == pytest.approx(zinc_ccme(100, 7.5, 2.0)) and a["status"] == "exceeds"
    assert "limit computed from hardness, pH, dissolved organic carbon" in a["note"]
    assert b["status"] == "no_limit" and "pH unknown: limit not computed" in b["note"]


def test_inputs_from_the_sites_file_when_the_sample_has_none(tmp_path):
    """A site's default pH and DOC (sites file columns ph, doc_mg_L) stand in for a sample without its own."""
    sites = write_csv(tmp_path, "site_id,name,uses,hardness_mg_L,ph,doc_mg_L\nR1,River,freshwater_aquatic,100,7.5,2\n"
                      "R2,Other,freshwater_aquatic,100,,\n", "sites.csv")
    res = make_results([{"site_id": "R1", "analyte": "zinc", "fraction": "dissolved", "sampled_at": "2024-01-01", "value": 20},
                        {"site_id": "R2", "analyte": "zinc", "fraction": "dissolved", "sampled_at": "2024-01-01", "value": 20}])
    out = screen(res, table(tmp_path, ZINC), load_sites(sites)).set_index("site_id")
    assert out.loc["R1", "limit_ug_L"] == pytest.approx(zinc_ccme(100, 7.5, 2.0)) and out.loc["R1", "status"] == "meets"
    assert out.loc["R2", "status"] == "no_limit" and "pH unknown" in out.loc["R2", "note"]


def test_sites_file_checks_the_new_columns(tmp_path):
    from tracescreen.io.sites import SitesError

    bad = write_csv(tmp_path, "site_id,uses,ph,water_body_type\nR1,x,15,lotic\n", "s.csv")
    with pytest.raises(SitesError, match="row 2: ph '15' is not a number in \\[0, 14\\]"):
        load_sites(bad)
    bad = write_csv(tmp_path, "site_id,uses,water_body_type\nR1,x,creek\n", "s2.csv")
    with pytest.raises(SitesError, match="row 2: water_body_type 'creek' is not one of lotic, lentic"):
        load_sites(bad)


def test_eu_cadmium_eqs_by_hardness_class_end_to_end(tmp_path):
    """EU EQS cadmium, inland AA-EQS by class (law copy): 0.10 µg/L at hardness 75 (class 3, 0.09) exceeds,
    at hardness 150 (class 4, 0.15) meets; MAC-EQS class 3 0.6 and class 4 0.9 are met."""
    sites = write_csv(tmp_path, "site_id,uses,hardness_mg_L,water_category\nS75,surface_water,75,inland\n"
                      "S150,surface_water,150,inland\n", "sites.csv")
    res = make_results([{"site_id": s, "analyte": "cadmium", "fraction": "dissolved", "sampled_at": "2024-01-01",
                         "value": 0.10} for s in ("S75", "S150")])
    out = screen(res, load_limits(LIMITS / "eu" / "eu_eqs_2008_105.yaml"), load_sites(sites))
    aa = out[out["duration"] == "annual average (AA-EQS)"].set_index("site_id")
    mac = out[out["duration"] == "maximum allowable (MAC-EQS)"].set_index("site_id")
    assert aa.loc["S75", "limit_ug_L"] == 0.09 and aa.loc["S75", "status"] == "exceeds"
    assert aa.loc["S150", "limit_ug_L"] == 0.15 and aa.loc["S150", "status"] == "meets"
    assert mac["limit_ug_L"].to_dict() == {"S75": 0.6, "S150": 0.9}
    assert len(aa) == 2  # the 'other surface waters' entry does not apply to inland sites


def test_words_of_each_form():
    """Each form in words, as the limits command, the dashboard and the report show it."""
    lim = load_limits([LIMITS / "canada", LIMITS / "eu", LIMITS / "australia_new_zealand"])
    e = lim.entries.set_index(["table_id", "analyte", "duration", "scope"], drop=False)
    zn = e.loc[("ccme_freshwater_aquatic_life", "zinc", "long-term", "")]
    assert words.entry_words(zn) == ("exp(0.947·ln H − 0.815·pH + 0.398·ln DOC + 4.625) µg/L; valid for H 23.4–399, "
                                     "pH 6.5–8.13, DOC 0.3–22.9; outside: no limit computed")
    cu = e.loc[("ccme_freshwater_aquatic_life", "copper", "long-term", "")]
    assert words.entry_words(cu) == ("2 µg/L for H < 82; 0.2 × exp(0.8545·ln H − 1.465) µg/L for 82 ≤ H ≤ 180; "
                                     "4 µg/L for H > 180; 2 µg/L when H is unknown")
    cd = e.loc[("eu_eqs_2008_105", "cadmium", "maximum allowable (MAC-EQS)", "")]
    assert words.limit_in_words(cd) == ("by class: H < 40: 0.45; 40 ≤ H < 50: 0.45; 50 ≤ H < 100: 0.6; "
                                        "100 ≤ H < 200: 0.9; H ≥ 200: 1.5 µg/L")
    ni = e.loc[("anzg_2018_freshwater_toxicants", "nickel", "chronic", "protection_level: 95")]
    assert words.entry_words(ni) == "11 × (H/30)^0.85 µg/L; applies where protection_level: 95"


def test_ccme_copper_steps_end_to_end(tmp_path):
    """CCME copper (1987, memory for the thresholds): a site at hardness 100 gets 0.2 e^(0.8545 ln 100 - 1.465)
    = 2.36 µg/L, one at 50 the soft-water 2 µg/L, one with hardness unknown 2 µg/L with a note saying so."""
    sites = write_csv(tmp_path, "site_id,uses,hardness_mg_L\nH100,freshwater_aquatic,100\nH50,freshwater_aquatic,50\n"
                      "HNA,freshwater_aquatic,\n", "sites.csv")
    res = make_results([{"site_id": s, "analyte": "copper", "fraction": "total", "sampled_at": "2022-05-01",
                         "value": 2.2, "sample_id": s} for s in ("H100", "H50", "HNA")])
    lim = load_limits(LIMITS / "canada" / "ccme_freshwater_aquatic_life.yaml")
    out = screen(res, lim, load_sites(sites)).set_index("site_id")
    assert out.loc["H100", "limit_ug_L"] == pytest.approx(0.2 * math.exp(0.8545 * math.log(100) - 1.465))
    assert out.loc["H100", "status"] == "meets"
    assert out.loc["H50", "limit_ug_L"] == 2.0 and out.loc["H50", "status"] == "exceeds"
    assert out.loc["HNA", "limit_ug_L"] == 2.0 and out.loc["HNA", "status"] == "exceeds"
    assert "hardness unknown: the value the document states for unknown hardness used" in out.loc["HNA", "note"]


def test_temperature_rows_in_fahrenheit_are_converted(tmp_path):
    """A temperature row in deg F becomes °C: (59 - 32) x 5/9 = 15 (definition of the scales); pH is kept as
    reported; DOC in µg/L becomes mg/L."""
    from tracescreen.io import chemistry_rows

    kind = np.array(["temperature", "temperature", "ph", "doc"], dtype=object)
    got = chemistry_rows.input_values(kind, np.array([59.0, 12.0, 7.2, 2500.0]),
                                      np.array(["deg F", "deg C", "std units", "ug/L"], dtype=object),
                                      np.array([np.nan, np.nan, np.nan, 1.0]))
    assert got.tolist() == [pytest.approx(15.0), 12.0, 7.2, 2.5]
