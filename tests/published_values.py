"""Published values of the shipped limit tables, each with the document it comes from.

This is the outside reference that ``tests/test_published_limits.py`` checks the files in ``limits/``
against. Each record names the primary document (table, section or annex) and where the value was
confirmed:

- ``checked (law: ...)``: seen in a stored copy of the legal text (CFR, Federal Register, Directive);
- ``checked (secondary: ...)``: seen in a stored copy of an agency or state page reproducing it;
- ``memory``: not confirmed against any stored copy; re-check against the primary document.

Values are in the unit the document prints them in.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Published:
    analyte: str
    fraction: str
    value: float | None  # fixed value in `unit`; None for a hardness-formula criterion
    unit: str
    document: str
    status: str
    duration: str = ""
    basis: str = "single_sample"
    effective_from: str | None = None  # ISO date, inclusive
    effective_to: str | None = None  # ISO date, inclusive
    # hardness formula: exp(m ln H + b) * CF; CF = cf, or cf_intercept + cf_ln_slope * ln H (capped at 1)
    m: float | None = None
    b: float | None = None
    cf: float | None = None
    cf_intercept: float | None = None
    cf_ln_slope: float | None = None
    at_100: float | None = None  # published criterion at hardness 100 mg/L as CaCO3 (2 significant figures)
    at_100_source: str = ""


WHO = "WHO (2022) Guidelines for drinking-water quality, 4th ed. incl. 1st+2nd addenda, Annex 3 Table A3.3"
_WHO_SEC = "checked (secondary: heavymetalindex.com summary of the WHO 2022 table)"

WHO_GDWQ_2022 = [
    Published("antimony", "total", 0.02, "mg/L", WHO, _WHO_SEC),
    Published("arsenic", "total", 0.01, "mg/L", WHO, _WHO_SEC + "; provisional A,T"),
    Published("barium", "total", 1.3, "mg/L", WHO, _WHO_SEC),
    Published("boron", "total", 2.4, "mg/L", WHO,
              "checked (secondary: Health Canada boron technical document, Table 6: WHO 2.4 mg/L)"),
    Published("cadmium", "total", 0.003, "mg/L", WHO, _WHO_SEC),
    Published("chromium", "total", 0.05, "mg/L", WHO, _WHO_SEC + "; total chromium"),
    Published("copper", "total", 2.0, "mg/L", WHO, _WHO_SEC),
    Published("lead", "total", 0.01, "mg/L", WHO, _WHO_SEC + "; provisional A,T"),
    Published("manganese", "total", 0.08, "mg/L", WHO, _WHO_SEC + "; provisional, new in 2022"),
    Published("mercury", "total", 0.006, "mg/L", WHO, _WHO_SEC + "; inorganic mercury"),
    Published("nickel", "total", 0.07, "mg/L", WHO, "memory"),
    Published("selenium", "total", 0.04, "mg/L", WHO, "memory; provisional"),
    Published("uranium", "total", 0.03, "mg/L", WHO, "memory; provisional"),
]

CFR141 = "40 CFR 141.62(b) maximum contaminant levels for inorganic contaminants"
_NPDWR_SEC = "checked (secondary: EPA NPDWR summary table as reproduced; Indiana IDEM MCL table)"
_LCR = "40 CFR 141.80(c) and 141.2 (action level, 90th percentile per monitoring period)"
_RAA = "running_annual_mean"  # 40 CFR 141.23(i): compliance on a running annual average

US_EPA_NPDWR = [
    Published("antimony", "total", 0.006, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA),
    Published("arsenic", "total", 0.05, "mg/L", "40 CFR 141.11(b)",
              "checked (law: 141.11(b) '0.05 milligrams per liter ... until January 23, 2006', FindLaw copy)",
              effective_to="2006-01-22", basis=_RAA),
    Published("arsenic", "total", 0.010, "mg/L", CFR141, _NPDWR_SEC + " ('0.010 as of 01/23/06')",
              effective_from="2006-01-23", basis=_RAA),
    Published("barium", "total", 2.0, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA),
    Published("beryllium", "total", 0.004, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA),
    Published("cadmium", "total", 0.005, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA),
    Published("chromium", "total", 0.1, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA),
    Published("mercury", "total", 0.002, "mg/L", CFR141, "checked (secondary: Indiana IDEM and fval.com MCL tables)", basis=_RAA),
    Published("selenium", "total", 0.05, "mg/L", CFR141, "checked (secondary: Indiana IDEM MCL table)", basis=_RAA),
    Published("thallium", "total", 0.002, "mg/L", CFR141, "checked (secondary: Indiana IDEM MCL table)", basis=_RAA),
    Published("uranium", "total", 0.030, "mg/L", "40 CFR 141.66(e)", "memory", basis=_RAA),
    Published("lead", "total", 0.015, "mg/L", _LCR,
              "checked (law: 40 CFR 141.2 before the LCRI, 'action level for lead is 0.015 mg/L', Cornell LII copy)",
              duration="action level", basis="percentile", effective_to="2027-10-31"),
    Published("lead", "total", 0.010, "mg/L", _LCR + "; 89 FR 86418 (LCRI), compliance date 2027-11-01",
              "checked (law: 40 CFR 141.2 'The lead action level is 0.010 mg/L', Cornell LII copy; "
              "89 FR 86418 DATES: compliance date for 141.2 is November 1, 2027)",
              duration="action level", basis="percentile", effective_from="2027-11-01"),
    Published("copper", "total", 1.3, "mg/L", _LCR,
              "checked (law: 40 CFR 141.2 'the copper action level is 1.3 mg/L', Cornell LII copy)",
              duration="action level", basis="percentile"),
]

EU = "Directive (EU) 2020/2184, Annex I Part B"
_EU_DE = "checked (law: consolidated German text of Annex I Part B, gesetze.legal copy)"
_EU_9883 = "memory for 2020/2184; the same value is checked in 98/83/EC Annex I Part B (legislation.gov.uk copy)"

EU_DWD_2020_2184 = [
    Published("antimony", "total", 10, "µg/L", EU, _EU_DE),
    Published("arsenic", "total", 10, "µg/L", EU, _EU_DE),
    Published("boron", "total", 1.5, "mg/L", EU, _EU_DE),
    Published("cadmium", "total", 5.0, "µg/L", EU, _EU_DE),
    Published("chromium", "total", 50, "µg/L", EU + " (transitional value)",
              "checked (secondary: siparsrl.com summary quoting 2020/2184: 50 µg/l until 12 January 2036)",
              effective_to="2036-01-11"),
    Published("chromium", "total", 25, "µg/L", EU,
              "checked (secondary: siparsrl.com summary quoting 2020/2184: 25 µg/l by 12 January 2036)",
              effective_from="2036-01-12"),
    Published("copper", "total", 2.0, "mg/L", EU, _EU_9883),
    Published("lead", "total", 10, "µg/L", EU + " (transitional value)",
              "checked (law: ECHA legislation record of 2020/2184 Annex I, 'until that date shall be 10 μg/l')",
              effective_to="2036-01-11"),
    Published("lead", "total", 5, "µg/L", EU,
              "checked (law: ECHA legislation record of 2020/2184 Annex I, '5 μg/l ... by 12 January 2036')",
              effective_from="2036-01-12"),
    Published("mercury", "total", 1.0, "µg/L", EU, _EU_9883),
    Published("nickel", "total", 20, "µg/L", EU, _EU_9883),
    Published("selenium", "total", 20, "µg/L", EU, "memory"),
    Published("uranium", "total", 30, "µg/L", EU, "memory"),
]

NRWQC = "US EPA National Recommended Water Quality Criteria, aquatic life table, freshwater"
_P132 = "checked (law: 40 CFR part 132 Tables 1(b) and 2(b), Cornell LII copy)"
_CTR = "40 CFR 131.38(b)(1) table, Cornell LII copy (hardness 100 mg/L)"

US_EPA_NRWQC_FRESHWATER = [
    Published("arsenic", "dissolved", 340, "µg/L", NRWQC,
              "checked (law: " + _CTR + "; EPA criteria table page copy)", duration="acute"),
    Published("arsenic", "dissolved", 150, "µg/L", NRWQC,
              "checked (law: " + _CTR + "; EPA criteria table page copy)", duration="chronic"),
    Published("cadmium", "dissolved", None, "µg/L", NRWQC + "; cadmium 2016 update (EPA-820-R-16-002)",
              "checked (law: 40 CFR 131.46, 2016 coefficients; Colorado Reg. 31 calculator copy)",
              duration="acute", m=0.9789, b=-3.866, cf_intercept=1.136672, cf_ln_slope=-0.041838,
              at_100=1.8, at_100_source="checked (secondary: public code citing the EPA criteria table, CMC 1.8)"),
    Published("cadmium", "dissolved", None, "µg/L", NRWQC + "; cadmium 2016 update (EPA-820-R-16-002)",
              "memory", duration="chronic", m=0.7977, b=-3.909, cf_intercept=1.101672, cf_ln_slope=-0.041838,
              at_100=0.72, at_100_source="memory (EPA criteria table, cadmium 2016 CCC)"),
    Published("chromium(iii)", "dissolved", None, "µg/L", NRWQC, _P132, duration="acute",
              m=0.8190, b=3.7256, cf=0.316,
              at_100=570, at_100_source="checked (secondary: EPA criteria table page copy; 25 Pa. Code ch. 93 Table 6)"),
    Published("chromium(iii)", "dissolved", None, "µg/L", NRWQC, _P132, duration="chronic",
              m=0.8190, b=0.6848, cf=0.860,
              at_100=74, at_100_source="checked (secondary: EPA criteria table page copy; 25 Pa. Code ch. 93 Table 6)"),
    Published("chromium(vi)", "dissolved", 16, "µg/L", NRWQC,
              "checked (law: " + _CTR + "; 40 CFR 132 Table 1(a) 16.02 x CF 0.982)", duration="acute"),
    Published("chromium(vi)", "dissolved", 11, "µg/L", NRWQC,
              "checked (law: " + _CTR + "; 40 CFR 132 Table 2(a) 10.98 x CF 0.962)", duration="chronic"),
    Published("copper", "dissolved", None, "µg/L", NRWQC + " (1995 hardness form)", _P132, duration="acute",
              m=0.9422, b=-1.700, cf=0.960, at_100=13, at_100_source="checked (law: " + _CTR + ")"),
    Published("copper", "dissolved", None, "µg/L", NRWQC + " (1995 hardness form)", _P132, duration="chronic",
              m=0.8545, b=-1.702, cf=0.960, at_100=9.0, at_100_source="checked (law: " + _CTR + ")"),
    Published("lead", "dissolved", None, "µg/L", NRWQC,
              "checked (secondary: North Carolina dissolved-metals standards page)", duration="acute",
              m=1.273, b=-1.460, cf_intercept=1.46203, cf_ln_slope=-0.145712,
              at_100=65, at_100_source="checked (law: " + _CTR + ")"),
    Published("lead", "dissolved", None, "µg/L", NRWQC,
              "checked (secondary: North Carolina dissolved-metals standards page)", duration="chronic",
              m=1.273, b=-4.705, cf_intercept=1.46203, cf_ln_slope=-0.145712,
              at_100=2.5, at_100_source="checked (law: " + _CTR + ")"),
    Published("mercury", "dissolved", 1.4, "µg/L", NRWQC,
              "checked (law: 40 CFR 132 Table 1(a) 1.694 x CF 0.85 -> 1.4); national table value memory",
              duration="acute"),
    Published("mercury", "dissolved", 0.77, "µg/L", NRWQC,
              "checked (law: 40 CFR 132 Table 2(a) 0.9081 x CF 0.85 -> 0.77); national table value memory",
              duration="chronic"),
    Published("nickel", "dissolved", None, "µg/L", NRWQC, _P132, duration="acute",
              m=0.8460, b=2.255, cf=0.998, at_100=470, at_100_source="checked (law: " + _CTR + ")"),
    Published("nickel", "dissolved", None, "µg/L", NRWQC, _P132, duration="chronic",
              m=0.8460, b=0.0584, cf=0.997, at_100=52, at_100_source="checked (law: " + _CTR + ")"),
    Published("selenium", "dissolved", 3.1, "µg/L", NRWQC + "; selenium 2016 (EPA 822-R-16-006), water column",
              "memory", duration="chronic (lotic, 30-day)"),
    Published("selenium", "dissolved", 1.5, "µg/L", NRWQC + "; selenium 2016 (EPA 822-R-16-006), water column",
              "memory", duration="chronic (lentic, 30-day)"),
    Published("silver", "dissolved", None, "µg/L", NRWQC,
              "checked (secondary: North Carolina dissolved-metals standards page)", duration="acute",
              m=1.72, b=-6.59, cf=0.85, at_100=3.2, at_100_source="memory (EPA criteria table; 131.38 prints 3.4)"),
    Published("zinc", "dissolved", None, "µg/L", NRWQC, _P132, duration="acute",
              m=0.8473, b=0.884, cf=0.978, at_100=120, at_100_source="checked (law: " + _CTR + ")"),
    Published("zinc", "dissolved", None, "µg/L", NRWQC, _P132, duration="chronic",
              m=0.8473, b=0.884, cf=0.986, at_100=120, at_100_source="checked (law: " + _CTR + ")"),
]

#: table id -> (file name in limits/, published records)
PUBLISHED_TABLES = {
    "who_gdwq_2022": ("who_gdwq_2022.yaml", WHO_GDWQ_2022),
    "us_epa_npdwr_inorganics": ("us_epa_npdwr_inorganics.yaml", US_EPA_NPDWR),
    "eu_dwd_2020_2184": ("eu_dwd_2020_2184.yaml", EU_DWD_2020_2184),
    "us_epa_nrwqc_freshwater_aquatic_life": ("us_epa_nrwqc_freshwater_aquatic_life.yaml", US_EPA_NRWQC_FRESHWATER),
}

#: µg/L per unit, by definition of the SI prefixes (1 mg = 1000 µg).
UG_L_PER_UNIT = {"µg/L": 1.0, "mg/L": 1000.0}

#: Hardness range the federal hardness formulas are applied over, mg/L as CaCO3:
#: minimum 25 (40 CFR 131.36(c)(4), checked per the shared fact sheet); cap 400 (common practice in state
#: rules, e.g. the Colorado Regulation 31 calculator "shall be no greater than 400 mg/L", checked secondary).
HARDNESS_RANGE = (25.0, 400.0)
