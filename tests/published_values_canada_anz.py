"""Published values of the shipped Canadian and Australian / New Zealand limit tables (CCME, Health Canada,
ANZG 2018, ADWG 2011), each with the document it comes from; the statuses as in ``published_values.py``."""

from __future__ import annotations

from published_record import Published

CCME = "CCME Canadian Water Quality Guidelines for the Protection of Aquatic Life, freshwater"
_STATCAN = "checked (secondary: Statistics Canada archived CWQG table, fact sheet [S27])"
_LT, _ST = "long-term", "short-term"
_EC_U = ("checked (secondary: Environment Canada science article 2011-05-27, 'long-term exposure (15 µg/L) and "
         "short-term exposure (33 µg/L)')")


def _log10_formula(intercept, coefficient):
    return {"base": "10", "intercept": intercept, "terms": [{"input": "hardness", "coefficient": coefficient, "log": True}]}


def _ln_formula(intercept, coefficient, factor=None):
    f = {"intercept": intercept, "terms": [{"input": "hardness", "coefficient": coefficient, "log": True}]}
    return {"factor": factor, **f} if factor is not None else f


CCME_FRESHWATER = [
    Published("cadmium", "total", None, "µg/L", CCME + ", cadmium 2014", "memory", duration=_LT,
              form={"steps": {"input": "hardness", "pieces": [
                  {"below": 17, "value": 0.04}, {"from": 17, "up_to": 280, "formula": _log10_formula(-2.46, 0.83)},
                  {"over": 280, "value": 0.37}]}},
              worked=(({"hardness": 100}, 0.16, "memory: fact sheet example, 2 significant figures"),
                      ({"hardness": 10}, 0.04, "memory: value below hardness 17"),
                      ({"hardness": 300}, 0.37, "memory: value above hardness 280"))),
    Published("cadmium", "total", None, "µg/L", CCME + ", cadmium 2014", "memory", duration=_ST,
              form={"steps": {"input": "hardness", "pieces": [
                  {"below": 5.3, "value": 0.11}, {"from": 5.3, "up_to": 360, "formula": _log10_formula(-1.71, 1.016)},
                  {"over": 360, "value": 7.7}]}},
              worked=(({"hardness": 100}, 2.1, "memory: fact sheet example, 2 significant figures"),)),
    Published("copper", "total", None, "µg/L", CCME + ", copper 1987", _STATCAN + "; thresholds 82/180 and 4 µg/L: memory",
              duration=_LT,
              form={"steps": {"input": "hardness", "pieces": [
                  {"below": 82, "value": 2}, {"from": 82, "up_to": 180, "formula": _ln_formula(-1.465, 0.8545, 0.2)},
                  {"over": 180, "value": 4}]}, "unknown_input": {"value": 2}},
              worked=(({"hardness": 100}, 2.4, "memory: 2 significant figures"), ({"hardness": 50}, 2, "memory: soft water"),
                      ({"hardness": 200}, 4, "memory: above 180"), ({"hardness": None}, 2, "memory: hardness unknown"))),
    Published("lead", "total", None, "µg/L", CCME + ", lead 1987", _STATCAN + "; thresholds 60/180, 1 and 7 µg/L: memory",
              duration=_LT,
              form={"steps": {"input": "hardness", "pieces": [
                  {"up_to": 60, "value": 1}, {"over": 60, "up_to": 180, "formula": _ln_formula(-4.705, 1.273)},
                  {"over": 180, "value": 7}]}, "unknown_input": {"value": 1}},
              worked=(({"hardness": 100}, 3.2, "memory: 2 significant figures"), ({"hardness": 60}, 1, "memory: <= 60"))),
    Published("nickel", "total", None, "µg/L", CCME + ", nickel 1987", _STATCAN + "; thresholds 60/180, 25 and 150 µg/L: memory",
              duration=_LT,
              form={"steps": {"input": "hardness", "pieces": [
                  {"up_to": 60, "value": 25}, {"over": 60, "up_to": 180, "formula": _ln_formula(1.06, 0.76)},
                  {"over": 180, "value": 150}]}, "unknown_input": {"value": 25}},
              worked=(({"hardness": 100}, 96, "memory: 2 significant figures"),)),
    Published("zinc", "dissolved", None, "µg/L", CCME + ", zinc 2018", "memory", duration=_LT,
              form={"formula": {"intercept": 4.625, "terms": [
                  {"input": "hardness", "coefficient": 0.947, "log": True}, {"input": "ph", "coefficient": -0.815},
                  {"input": "doc", "coefficient": 0.398, "log": True}]},
                  "valid_range": {"hardness": [23.4, 399], "ph": [6.5, 8.13], "doc": [0.3, 22.9]}, "outside_range": "no_limit"},
              worked=(({"hardness": 100, "ph": 7.5, "doc": 2}, 23, "memory: 2 significant figures"),
                      ({"hardness": 100, "ph": 8.5, "doc": 2}, None, "outside the pH range: not computed"))),
    Published("zinc", "dissolved", None, "µg/L", CCME + ", zinc 2018", "memory", duration=_ST,
              form={"formula": {"intercept": 0.526, "terms": [
                  {"input": "hardness", "coefficient": 0.833, "log": True}, {"input": "doc", "coefficient": 0.240, "log": True}]},
                  "valid_range": {"hardness": [13.8, 250.5], "doc": [0.3, 17.3]}, "outside_range": "no_limit"},
              worked=(({"hardness": 100, "doc": 2}, 93, "memory: 2 significant figures"),)),
    Published("manganese", "dissolved", None, "µg/L", CCME + ", manganese 2019", "memory", duration=_ST,
              form={"formula": _ln_formula(4.76, 0.878)},
              worked=(({"hardness": 100}, 6700, "computed from the remembered equation, 2 significant figures"),)),
    Published("aluminium", "total", None, "µg/L", CCME + ", aluminium 1987", _STATCAN, duration=_LT,
              form={"lookup": {"rows": {"input": "ph", "bounds": [6.5]}, "values": [5, 100]}},
              worked=(({"ph": 6.0}, 5, "pH < 6.5, Statcan table"), ({"ph": 6.5}, 100, "pH >= 6.5, Statcan table"))),
    Published("arsenic", "total", 5, "µg/L", CCME, _STATCAN + "; 'Arsenic Total 5 µg/L CCME, 2005b'", duration=_LT),
    Published("chromium(vi)", "total", 1.0, "µg/L", CCME, "memory", duration=_LT),
    Published("chromium(iii)", "total", 8.9, "µg/L", CCME, "memory", duration=_LT),
    Published("mercury", "total", 0.026, "µg/L", CCME + " (inorganic mercury)", _STATCAN, duration=_LT),
    Published("selenium", "total", 1.0, "µg/L", CCME, "memory", duration=_LT),
    Published("molybdenum", "total", 73, "µg/L", CCME, "memory", duration=_LT),
    Published("thallium", "total", 0.8, "µg/L", CCME, "memory", duration=_LT),
    Published("iron", "total", 300, "µg/L", CCME, "memory", duration=_LT),
    Published("silver", "total", 0.25, "µg/L", CCME + ", silver 2015", "memory", duration=_LT),
    Published("uranium", "total", 15, "µg/L", CCME + ", uranium 2011", _EC_U, duration=_LT),
    Published("uranium", "total", 33, "µg/L", CCME + ", uranium 2011", _EC_U, duration=_ST),
    Published("boron", "total", 1.5, "mg/L", CCME, "memory", duration=_LT),
    Published("boron", "total", 29, "mg/L", CCME, "memory", duration=_ST),
]

HC = "Health Canada, Guidelines for Canadian Drinking Water Quality, summary table"
_MACC, _AO = "maximum acceptable concentration", "aesthetic objective"
_OGP = "checked (secondary: Open Government Portal record of the guideline technical document)"
_HC_CU_2018 = "the 2018 proposal for the 2019 copper document, PMC6960211 Table 5"
_MN2019 = "checked (secondary: news pages on the 2019 manganese guideline, esemag.com and adedgetech.com)"

HEALTH_CANADA = [
    Published("arsenic", "total", 0.010, "mg/L", HC, "checked (secondary: canada.ca arsenic document page, fact sheet [S26])", duration=_MACC),
    Published("boron", "total", 5, "mg/L", HC, _OGP, duration=_MACC),
    Published("chromium", "total", 0.05, "mg/L", HC, "checked (secondary: fact sheet [S26])", duration=_MACC),
    Published("mercury", "total", 0.001, "mg/L", HC, _OGP, duration=_MACC),
    Published("lead", "total", 0.005, "mg/L", HC + " (lead, 2019)", "checked (secondary: summary of the 2019 lead document, fact sheet [S26])",
              duration=_MACC),
    Published("cadmium", "total", 0.007, "mg/L", HC + " (cadmium, 2020)",
              "checked (secondary: heavymetalindex.com summary of the 2020 cadmium document)", duration=_MACC),
    Published("antimony", "total", 0.006, "mg/L", HC, _OGP + " ('MAC for antimony ... is 0.006 mg/L (6 µg/L)')",
              duration=_MACC),
    Published("barium", "total", 2.0, "mg/L", HC + " (barium, 2020)",
              "checked (law: barium guideline technical document, hc-sc.gc.ca copy, 'MAC for total barium ... is 2.0 mg/L')",
              duration=_MACC),
    Published("selenium", "total", 0.05, "mg/L", HC,
              "checked (law: selenium guideline technical document, canada.ca copy, section 11.0 'A MAC of 0.05 mg/L')",
              duration=_MACC),
    Published("uranium", "total", 0.02, "mg/L", HC, "memory (only the 2019 proposal of 0.02 mg/L was seen)", duration=_MACC),
    Published("strontium", "total", 7.0, "mg/L", HC + " (strontium, 2019)",
              "checked (law: Canada Gazette Part I 2019-05-25, final guideline 'MAC for total strontium ... is 7.0 mg/L')",
              duration=_MACC),
    Published("copper", "total", 2.0, "mg/L", HC + " (copper, 2019)", "memory (only " + _HC_CU_2018 + " was seen)",
              duration=_MACC),
    Published("copper", "total", 1.0, "mg/L", HC + " (copper, 2019)",
              "checked (secondary: superseded 1992 copper document 'aesthetic objective ... is <=1.0 mg/L', healthycanadians.gc.ca; "
              + _HC_CU_2018 + ")", duration=_AO),
    Published("manganese", "total", 0.12, "mg/L", HC + " (manganese, 2019)", _MN2019, duration=_MACC),
    Published("manganese", "total", 0.02, "mg/L", HC + " (manganese, 2019)", _MN2019, duration=_AO),
    Published("aluminium", "total", 2.9, "mg/L", HC + " (aluminum, 2021; locational running annual average)",
              "checked (secondary: 2021 aluminum document quoted by waterstp.ca and summarised by heavymetalindex.com, MAC 2.9 mg/L)",
              duration=_MACC),
    Published("iron", "total", 0.3, "mg/L", HC, _OGP, duration=_AO),
    Published("zinc", "total", 5.0, "mg/L", HC, _OGP, duration=_AO),
]

ANZG = "ANZG (2018) toxicant DGVs, freshwater (ANZECC & ARMCANZ 2000 Table 3.4.1; hardness exponents Table 3.4.3)"
_LEVELS = ("99", "95", "90", "80")
#: analyte -> (DGVs at 99/95/90/80 % species protection [µg/L], hardness exponent or None); all from memory
_ANZG_VALUES = {
    "cadmium": ((0.06, 0.2, 0.4, 0.8), 0.89), "chromium(vi)": ((0.01, 1.0, 6, 40), None),
    "copper": ((1.0, 1.4, 1.8, 2.5), 0.85), "lead": ((1.0, 3.4, 5.6, 9.4), 1.27),
    "mercury": ((0.06, 0.6, 1.9, 5.4), None), "nickel": ((8, 11, 13, 17), 0.85), "zinc": ((2.4, 8.0, 15, 31), 0.85),
    "aluminium": ((27, 55, 80, 150), None), "manganese": ((1200, 1900, 2500, 3600), None),
    "selenium": ((5, 11, 18, 34), None), "silver": ((0.02, 0.05, 0.1, 0.2), None),
}


def _anzg(analyte, level, value, exponent):
    scope = f"protection_level: {level}"
    if exponent is None:
        return Published(analyte, "dissolved", value, "µg/L", ANZG, "memory", duration="chronic", scope=scope)
    return Published(analyte, "dissolved", None, "µg/L", ANZG, "memory", duration="chronic", scope=scope,
                     form={"power_law": {"input": "hardness", "reference": 30, "exponent": exponent, "value": value}},
                     worked=(({"hardness": 30}, value, "the DGV itself at its reference hardness"),))


ANZG_FRESHWATER = [_anzg(a, lvl, v, x) for a, (vals, x) in _ANZG_VALUES.items() for lvl, v in zip(_LEVELS, vals)]

ADWG = "NHMRC, NRMMC (2011) Australian Drinking Water Guidelines, Table 10.6"
_ADWG_LAW = "checked (law: NHMRC guidelines site copy of Table 10.6)"


def _adwg_sheet(name: str, endorsed: int) -> str:
    return f"checked (law: NHMRC guidelines site, {name} fact sheet (endorsed {endorsed}), 'should not exceed')"


_ADWG_CU = "checked (secondary: review table reproducing NHMRC 2011, PMC6960211 Table 5)"
_ADWG_MN = "checked (secondary: Albury City Council water quality page, 'health value 0.5 / aesthetic value 0.1 mg/litre')"

ADWG_2011 = [
    Published("aluminium", "total", 0.2, "mg/L", ADWG + " (acid-soluble)", _ADWG_LAW, duration="aesthetic"),
    Published("antimony", "total", 0.003, "mg/L", ADWG, _ADWG_LAW, duration="health"),
    Published("arsenic", "total", 0.01, "mg/L", ADWG, _ADWG_LAW, duration="health"),
    Published("beryllium", "total", 0.06, "mg/L", ADWG, _adwg_sheet("beryllium", 2011), duration="health"),
    Published("boron", "total", 4, "mg/L", ADWG,
              "checked (secondary: Health Canada boron technical document 2023, Table 6 'Australia 2011 4 mg/L')", duration="health"),
    Published("cadmium", "total", 0.002, "mg/L", ADWG, _adwg_sheet("cadmium", 1996), duration="health"),
    Published("copper", "total", 2, "mg/L", ADWG, _ADWG_CU, duration="health"),
    Published("copper", "total", 1, "mg/L", ADWG, _ADWG_CU, duration="aesthetic"),
    Published("manganese", "total", 0.5, "mg/L", ADWG, _ADWG_MN, duration="health"),
    Published("manganese", "total", 0.1, "mg/L", ADWG, _ADWG_MN, duration="aesthetic"),
    Published("molybdenum", "total", 0.05, "mg/L", ADWG, _adwg_sheet("molybdenum", 1996), duration="health"),
    *[Published(a, "total", v, "mg/L", ADWG, "memory", duration=d) for a, v, d in (
        ("barium", 2, "health"), ("chromium(vi)", 0.05, "health"), ("iron", 0.3, "aesthetic"), ("lead", 0.01, "health"),
        ("mercury", 0.001, "health"), ("nickel", 0.02, "health"), ("selenium", 0.01, "health"), ("silver", 0.1, "health"),
        ("uranium", 0.017, "health"), ("zinc", 3, "aesthetic"))],
]
