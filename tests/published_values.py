"""Published values of the shipped limit tables, each with the document it comes from.

This is the outside reference that ``tests/test_limits_published.py`` checks the files in ``limits/``
against. Each record names the primary document (table, section or annex) and where the value was
confirmed:

- ``checked (law: ...)``: seen in a stored copy of the legal text (CFR, Federal Register, Directive);
- ``checked (secondary: ...)``: seen in a stored copy of an agency or state page reproducing it;
- ``memory``: not confirmed against any stored copy; re-check against the primary document.

Each value has exactly one status, the same as the YAML comment above its entry in ``limits/``
(``tests/test_limits_published.py`` checks that they agree and prints every value still from memory).
Values are in the unit the document prints them in. A computed limit carries its form's parameters
(``form``, as the YAML states them) and ``worked``: values the document (or, where marked, memory)
gives for stated inputs, each ``(inputs, value, where)``.

The record is :class:`published_record.Published`; the Canadian and Australian / New Zealand tables'
values are in ``published_values_canada_anz.py``.
"""

from __future__ import annotations

from published_record import Published, status_kind  # noqa: F401 (re-exported for the tests)
from published_values_canada_anz import ADWG_2011, ANZG_FRESHWATER, CCME_FRESHWATER, HEALTH_CANADA

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
    Published("uranium", "total", 0.03, "mg/L", WHO,
              "checked (secondary: Ansoborlo et al. 2015, Environ Int 77:1-4, '30 μg/L in 2011 ... still designated as "
              "provisional'); provisional, 4th-edition value"),
]

CFR141 = "40 CFR 141.62(b) maximum contaminant levels for inorganic contaminants"
_NPDWR_SEC = "checked (secondary: EPA NPDWR summary table as reproduced; Indiana IDEM MCL table)"
_LCR = "40 CFR 141.80(c) and 141.2 (action level, 90th percentile per monitoring period)"
_RAA = "running_annual_mean"  # 40 CFR 141.23(i): compliance on a running annual average
_TAP = "sampling_point_type: tap"  # 40 CFR 141.86: lead and copper samples are tap samples
#: effective dates of the Phase II (56 FR 3526) and Phase V (57 FR 31776) MCLs: from memory, re-check
_PHASE2, _PHASE5 = "1992-07-30", "1994-01-17"

US_EPA_NPDWR = [
    Published("antimony", "total", 0.006, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA, effective_from=_PHASE5),
    Published("arsenic", "total", 0.05, "mg/L", "40 CFR 141.11(b)",
              "checked (law: 141.11(b) '0.05 milligrams per liter ... until January 23, 2006', FindLaw copy)",
              effective_to="2006-01-22", basis=_RAA),
    Published("arsenic", "total", 0.010, "mg/L", CFR141, _NPDWR_SEC + " ('0.010 as of 01/23/06')",
              effective_from="2006-01-23", basis=_RAA),
    Published("barium", "total", 2.0, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA, effective_from=_PHASE2),
    Published("beryllium", "total", 0.004, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA, effective_from=_PHASE5),
    Published("cadmium", "total", 0.005, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA, effective_from=_PHASE2),
    Published("chromium", "total", 0.1, "mg/L", CFR141, _NPDWR_SEC, basis=_RAA, effective_from=_PHASE2),
    Published("mercury", "total", 0.002, "mg/L", CFR141, "checked (secondary: Indiana IDEM and fval.com MCL tables)",
              basis=_RAA, effective_from=_PHASE2),
    Published("selenium", "total", 0.05, "mg/L", CFR141, "checked (secondary: Indiana IDEM MCL table)",
              basis=_RAA, effective_from=_PHASE2),
    Published("thallium", "total", 0.002, "mg/L", CFR141, "checked (secondary: Indiana IDEM MCL table)",
              basis=_RAA, effective_from=_PHASE5),
    Published("uranium", "total", 0.030, "mg/L", "40 CFR 141.66(e), effective 2003-12-08",
              "checked (secondary: Maryland COMAR 26.04.01.09 reproducing the MCL, effective December 2003)",
              basis=_RAA, effective_from="2003-12-08"),
    Published("lead", "total", 0.015, "mg/L", _LCR,
              "checked (law: 40 CFR 141.2 before the LCRI, 'action level for lead is 0.015 mg/L', Cornell LII copy)",
              duration="action level", basis="percentile", effective_to="2027-10-31", scope=_TAP),
    Published("lead", "total", 0.010, "mg/L", _LCR + "; 89 FR 86418 (LCRI), compliance date 2027-11-01",
              "checked (law: 40 CFR 141.2 'The lead action level is 0.010 mg/L', Cornell LII copy; "
              "89 FR 86418 DATES: compliance date for 141.2 is November 1, 2027)",
              duration="action level", basis="percentile", effective_from="2027-11-01", scope=_TAP),
    Published("copper", "total", 1.3, "mg/L", _LCR,
              "checked (law: 40 CFR 141.2 'the copper action level is 1.3 mg/L', Cornell LII copy)",
              duration="action level", basis="percentile", scope=_TAP),
]

EU = "Directive (EU) 2020/2184, Annex I Part B"
_EU_DE = "checked (law: consolidated German text of Annex I Part B, gesetze.legal copy)"
_EU_9883 = "memory for 2020/2184; the same value is checked in 98/83/EC Annex I Part B (legislation.gov.uk copy)"
EU_C = "Directive (EU) 2020/2184, Annex I Part C (indicator parameters)"
_EU_C_9883 = "memory for 2020/2184; the same value is checked (secondary) for 98/83/EC Annex I Part C"
_IND = "indicator parameter"

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
    Published("aluminium", "total", 200, "µg/L", EU_C, _EU_C_9883, duration=_IND),
    Published("iron", "total", 200, "µg/L", EU_C, _EU_C_9883, duration=_IND),
    Published("manganese", "total", 50, "µg/L", EU_C, _EU_C_9883, duration=_IND),
]

EU98 = "Council Directive 98/83/EC, Annex I Part B"
_EU98_LAW = "checked (law: legislation.gov.uk copy of 98/83/EC Annex I Part B)"
_EU98_C = "checked (secondary: stored summary of 98/83/EC indicator parameters)"

EU_DWD_98_83 = [
    Published("antimony", "total", 5.0, "µg/L", EU98, _EU98_LAW),
    Published("arsenic", "total", 10, "µg/L", EU98, _EU98_LAW),
    Published("boron", "total", 1.0, "mg/L", EU98, _EU98_LAW),
    Published("cadmium", "total", 5.0, "µg/L", EU98, _EU98_LAW),
    Published("chromium", "total", 50, "µg/L", EU98, _EU98_LAW),
    Published("copper", "total", 2.0, "mg/L", EU98, _EU98_LAW),
    Published("lead", "total", 25, "µg/L", EU98 + ", Note 4 (transitional value)",
              "checked (secondary: S2 Partnership news 2014-01-10, UK tap standard 'changed from 25µg/l to 10µg/l on the "
              "25th December, 2013'; Galway summary of S.I. 439/2000 'Lead 25'); Note 4 cut off in the stored Directive copy",
              effective_to="2013-12-24"),
    Published("lead", "total", 10, "µg/L", EU98, _EU98_LAW + "; in force from 25 December 2013 (15 years after entry into "
              "force; UK change date, secondary)", effective_from="2013-12-25"),
    Published("mercury", "total", 1.0, "µg/L", EU98, _EU98_LAW),
    Published("nickel", "total", 20, "µg/L", EU98, _EU98_LAW),
    Published("selenium", "total", 10, "µg/L", EU98, _EU98_LAW),
    Published("aluminium", "total", 0.2, "mg/L", EU98.replace("Part B", "Part C"), _EU98_C, duration="indicator parameter"),
    Published("iron", "total", 0.2, "mg/L", EU98.replace("Part B", "Part C"), _EU98_C, duration="indicator parameter"),
    Published("manganese", "total", 0.05, "mg/L", EU98.replace("Part B", "Part C"), _EU98_C, duration="indicator parameter"),
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
              "memory", duration="chronic (lotic, 30-day)", scope="water_body_type: lotic"),
    Published("selenium", "dissolved", 1.5, "µg/L", NRWQC + "; selenium 2016 (EPA 822-R-16-006), water column",
              "memory", duration="chronic (lentic, 30-day)", scope="water_body_type: lentic"),
    Published("silver", "dissolved", None, "µg/L", NRWQC,
              "checked (secondary: North Carolina dissolved-metals standards page)",
              duration="acute (instantaneous maximum)", m=1.72, b=-6.59, cf=0.85, at_100=3.2, at_100_source="memory (EPA criteria table; 131.38 prints 3.4)"),
    Published("zinc", "dissolved", None, "µg/L", NRWQC, _P132, duration="acute",
              m=0.8473, b=0.884, cf=0.978, at_100=120, at_100_source="checked (law: " + _CTR + ")"),
    Published("zinc", "dissolved", None, "µg/L", NRWQC, _P132, duration="chronic",
              m=0.8473, b=0.884, cf=0.986, at_100=120, at_100_source="checked (law: " + _CTR + ")"),
]

NSDWR = "40 CFR 143.3 secondary maximum contaminant levels"
_NSDWR = "checked (law: 40 CFR 143.3, Cornell LII copy)"
_SEC = "secondary (aesthetic)"

US_EPA_NSDWR = [
    Published("aluminium", "total", 0.2, "mg/L", NSDWR + " (range 0.05 to 0.2 mg/l, upper end)", _NSDWR, duration=_SEC),
    Published("copper", "total", 1.0, "mg/L", NSDWR, _NSDWR, duration=_SEC),
    Published("iron", "total", 0.3, "mg/L", NSDWR, _NSDWR, duration=_SEC),
    Published("manganese", "total", 0.05, "mg/L", NSDWR, _NSDWR, duration=_SEC),
    Published("silver", "total", 0.1, "mg/L", NSDWR, _NSDWR, duration=_SEC),
    Published("zinc", "total", 5, "mg/L", NSDWR, _NSDWR, duration=_SEC),
]

EQS = "Directive 2008/105/EC as amended by 2013/39/EU, Annex I Part A"
_EQS_LAW = "checked (law: legislation.gov.uk copy of 2008/105/EC Annex I Part A, row (6) cadmium)"
_AA, _MAC = "annual average (AA-EQS)", "maximum allowable (MAC-EQS)"
_AM = "period_mean"  # AA-EQS: the mean of a calendar year's results (Annex I Part B, memory); results below the
#                      quantification limit at half of it (2009/90/EC Art. 5(1), checked: gesetze.legal German text)
_INLAND, _OTHER = "water_category: inland", "water_category: other"
_CD_CLASSES = {"rows": {"input": "hardness", "bounds": [40, 50, 100, 200]}}
_EQS_DATE = "2015-12-22"  # revised EQS for existing priority substances apply from this date (memory)

EU_EQS = [
    Published("cadmium", "dissolved", None, "µg/L", EQS + ", cadmium by hardness class", _EQS_LAW,
              duration=_AA, basis=_AM, scope=_INLAND, form={"lookup": {**_CD_CLASSES, "values": [0.08, 0.08, 0.09, 0.15, 0.25]}},
              worked=(({"hardness": 30}, 0.08, "class 1 (< 40 mg/L), law copy"), ({"hardness": 40}, 0.08, "class 2 starts at 40"),
                      ({"hardness": 75}, 0.09, "class 3 (50 to < 100)"), ({"hardness": 100}, 0.15, "class 4 starts at 100"),
                      ({"hardness": 250}, 0.25, "class 5 (>= 200)"))),
    Published("cadmium", "dissolved", 0.2, "µg/L", EQS, _EQS_LAW, duration=_AA, basis=_AM, scope=_OTHER),
    Published("cadmium", "dissolved", None, "µg/L", EQS + ", cadmium by hardness class", _EQS_LAW, duration=_MAC,
              form={"lookup": {**_CD_CLASSES, "values": [0.45, 0.45, 0.6, 0.9, 1.5]}},
              worked=(({"hardness": 49.9}, 0.45, "class 2, law copy"), ({"hardness": 199}, 0.9, "class 4"),
                      ({"hardness": 200}, 1.5, "class 5"))),
    Published("lead", "dissolved", 1.2, "µg/L", EQS + " (bioavailable)", "memory", duration=_AA, basis=_AM, scope=_INLAND,
              effective_from=_EQS_DATE),
    Published("lead", "dissolved", 1.3, "µg/L", EQS, "memory", duration=_AA, basis=_AM, scope=_OTHER, effective_from=_EQS_DATE),
    Published("lead", "dissolved", 14, "µg/L", EQS, "memory", duration=_MAC, effective_from=_EQS_DATE),
    Published("nickel", "dissolved", 4, "µg/L", EQS + " (bioavailable)",
              "checked (secondary: Peters et al. 2024, Environ Sci Adv, 'the existing EQS of 4 μg L−1 bioavailable nickel')",
              duration=_AA, basis=_AM, scope=_INLAND, effective_from=_EQS_DATE),
    Published("nickel", "dissolved", 8.6, "µg/L", EQS, "memory", duration=_AA, basis=_AM, scope=_OTHER, effective_from=_EQS_DATE),
    Published("nickel", "dissolved", 34, "µg/L", EQS, "memory", duration=_MAC, effective_from=_EQS_DATE),
    Published("mercury", "dissolved", 0.07, "µg/L", EQS, "memory", duration=_MAC),
]

#: table id -> (file in limits/: the default set at the top, further tables in a folder per region; records)
PUBLISHED_TABLES = {
    "who_gdwq_2022": ("who_gdwq_2022.yaml", WHO_GDWQ_2022),
    "us_epa_npdwr_inorganics": ("us_epa_npdwr_inorganics.yaml", US_EPA_NPDWR),
    "eu_dwd_2020_2184": ("eu_dwd_2020_2184.yaml", EU_DWD_2020_2184),
    "us_epa_nrwqc_freshwater_aquatic_life": ("us_epa_nrwqc_freshwater_aquatic_life.yaml", US_EPA_NRWQC_FRESHWATER),
    "eu_dwd_98_83": ("eu_dwd_98_83.yaml", EU_DWD_98_83),
    "us_epa_nsdwr_secondary": ("us/us_epa_nsdwr_secondary.yaml", US_EPA_NSDWR),
    "eu_eqs_2008_105": ("eu/eu_eqs_2008_105.yaml", EU_EQS),
    "ccme_freshwater_aquatic_life": ("canada/ccme_freshwater_aquatic_life.yaml", CCME_FRESHWATER),
    "health_canada_gcdwq": ("canada/health_canada_gcdwq.yaml", HEALTH_CANADA),
    "anzg_2018_freshwater_toxicants": ("australia_new_zealand/anzg_2018_freshwater_toxicants.yaml", ANZG_FRESHWATER),
    "adwg_2011": ("australia_new_zealand/adwg_2011.yaml", ADWG_2011),
}

#: µg/L per unit, by definition of the SI prefixes (1 mg = 1000 µg).
UG_L_PER_UNIT = {"µg/L": 1.0, "mg/L": 1000.0}

#: Hardness bounds of the national recommendations: none (the ambient hardness is used as measured; from
#: memory, re-check). The 25 mg/L floor is the 1992 National Toxics Rule's (40 CFR 131.36(c)(4)) and the
#: 400 mg/L cap that of 40 CFR 131.38(c)(4)(i) ("for waters with a hardness of 400 mg/l or less ... the
#: actual ambient hardness ... shall be used", quotation seen, fact sheet [S13]); neither applies here.
HARDNESS_RANGE = (None, None)
