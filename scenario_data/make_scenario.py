"""Make the invented demo scenario: the Kestrel catchment (fictional), 2017-2025.

Everything here is INVENTED for demonstrating tracescreen: places, sites, laboratories, results.
The story: the Greywacke Hill adit (a fictional disused mine) drains into the upper Kestrel river;
its zinc and cadmium load has been rising since 2017. Downstream, Ashby Weir feeds a drinking-water
treatment works; bores near Ashby carry natural arsenic and uranium. Two (fictional) laboratories
report quarterly campaigns in their own layouts: Fernleigh Laboratories (CSV, recognised without
configuration) and Eastbank Analytical (a workbook whose headers need ``columns_eastbank.yaml``).

Run ``python scenario_data/make_scenario.py`` to regenerate the files beside this script (seeded:
the same files every time).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
SEED = 20170214

# site_id, name, lat, lon, uses, default hardness, lab, profile, scale
SITES = [
    ("KR01", "Kestrel Springs (reference)", 52.2861, -3.5712, "freshwater_aquatic", 48, "FL", "river", 0.15),
    ("KR02", "Greywacke adit outfall", 52.2790, -3.5480, "discharge_permit;freshwater_aquatic", 95, "FL", "adit", 1.0),
    ("KR03", "Below Greywacke confluence", 52.2731, -3.5305, "discharge_permit;freshwater_aquatic", 80, "FL", "river", 0.45),
    ("KR04", "Tanners Bridge", 52.2655, -3.5102, "freshwater_aquatic", 76, "FL", "river", 0.25),
    ("KR05", "Ashby Weir intake", 52.2580, -3.4877, "drinking_water;freshwater_aquatic", 72, "FL", "river", 0.2),
    ("KR06", "Holm Ford (lower Kestrel)", 52.2490, -3.4601, "freshwater_aquatic", 70, "FL", "river", 0.16),
    ("KR07", "Sedge Brook (soft-water tributary)", 52.2702, -3.4950, "freshwater_aquatic", 18, "FL", "soft", 0.1),
    ("BH01", "Ashby bore 1", 52.2551, -3.4790, "drinking_water", 210, "EB", "bore_as", 1.0),
    ("BH02", "Ashby bore 2", 52.2533, -3.4745, "drinking_water", 230, "EB", "bore_u", 1.0),
    ("BH03", "Coldharbour farm bore", 52.2620, -3.4500, "drinking_water;irrigation", 160, "EB", "bore", 1.0),
    ("TP01", "Ashby treatment works (treated water)", 52.2566, -3.4820, "drinking_water", 120, "EB", "treated", 1.0),
    ("RS01", "Fenwick reservoir", 52.2400, -3.5000, "drinking_water;freshwater_aquatic", 60, "EB", "river", 0.08),
]

# typical total concentration at scale 1 [µg/L] (lognormal median), per profile
RIVER = {"zinc": 160, "cadmium": 1.1, "copper": 14, "lead": 6, "nickel": 18, "arsenic": 5, "chromium": 2,
         "mercury": 0.03, "manganese": 500}
BORE = {"arsenic": 3, "cadmium": 0.08, "chromium": 1.5, "copper": 20, "lead": 0.6, "manganese": 40,
        "nickel": 2, "mercury": 0.01, "uranium": 4, "selenium": 1.2, "antimony": 0.3, "barium": 90}
DISSOLVED_SHARE = {"zinc": 0.8, "cadmium": 0.85, "copper": 0.6, "lead": 0.35, "nickel": 0.8}

# detection limits [µg/L] per lab and period (the labs improved in 2021)
DL = {
    ("FL", 0): {"zinc": 5, "cadmium": 0.1, "copper": 1, "lead": 0.5, "nickel": 1, "arsenic": 1, "chromium": 1,
                "mercury": 0.05, "manganese": 1, "calcium": 100, "magnesium": 100},
    ("FL", 1): {"zinc": 2, "cadmium": 0.05, "copper": 0.5, "lead": 0.2, "nickel": 0.5, "arsenic": 0.5, "chromium": 0.5,
                "mercury": 0.02, "manganese": 0.5, "calcium": 50, "magnesium": 50},
    ("EB", 0): {"arsenic": 1, "cadmium": 0.1, "chromium": 1, "copper": 1, "lead": 0.5, "manganese": 1, "nickel": 1,
                "mercury": 0.05, "uranium": 0.5, "selenium": 1, "antimony": 0.5, "barium": 1},
    ("EB", 1): {"arsenic": 0.5, "cadmium": 0.05, "chromium": 0.5, "copper": 0.5, "lead": 0.2, "manganese": 0.5,
                "nickel": 0.5, "mercury": 0.02, "uranium": 0.2, "selenium": 0.5, "antimony": 0.2, "barium": 0.5},
}
EB_NAMES = {"arsenic": "As", "cadmium": "Cd", "chromium": "Cr", "copper": "Cu", "lead": "Pb", "manganese": "Mn",
            "nickel": "Ni", "mercury": "Hg", "uranium": "U", "selenium": "Se", "antimony": "Sb", "barium": "Ba"}
FL_NAMES = {"zinc": "Zinc", "cadmium": "Cadmium", "copper": "Copper", "lead": "Lead", "nickel": "Nickel",
            "arsenic": "Arsenic", "chromium": "Chromium", "mercury": "Mercury", "manganese": "Manganese",
            "calcium": "Calcium", "magnesium": "Magnesium"}
EB_MG_L = {"manganese", "barium"}      # Eastbank reports these in mg/L


def campaigns():
    """Quarterly sampling dates, Feb/May/Aug/Nov 2017-2025."""
    out = []
    for year in range(2017, 2026):
        for month in (2, 5, 8, 11):
            out.append(np.datetime64(f"{year}-{month:02d}-01") + np.timedelta64(int((year * 7 + month * 3) % 20), "D"))
    return out


def fmt(x: float) -> str:
    return f"{float(f'{x:.3g}'):g}"


def level(rng, site, analyte, t_years):
    sid, _, _, _, _, _, lab, profile, scale = site
    base = (BORE if lab == "EB" else RIVER).get(analyte)
    if base is None:
        return None
    v = base * scale
    if profile == "adit" and analyte in ("zinc", "cadmium"):
        v *= np.exp(0.13 * t_years)                     # rising adit load
    if profile == "river" and analyte in ("zinc", "cadmium") and sid in ("KR03", "KR04"):
        v *= np.exp(0.07 * t_years)
    if profile == "bore_as" and analyte == "arsenic":
        v = 8.6                                         # natural arsenic near the 10 µg/L guideline
    if profile == "bore_u" and analyte == "uranium":
        v = 14 * np.exp(0.06 * t_years)                 # slowly rising uranium
    if profile == "treated":
        v *= 0.3
    sd = 0.12 if profile == "bore_as" else 0.3
    return float(v * rng.lognormal(0, sd))


def main() -> None:
    rng = np.random.default_rng(SEED)
    dates = campaigns()
    fl_rows = {0: [], 1: []}
    eb_rows = []
    counter = {"FL": 1000, "EB": 300000}

    def sample_id(lab):
        counter[lab] += 1
        return f"FL-{counter[lab]}" if lab == "FL" else f"EB{counter[lab]}"

    for ci, day in enumerate(dates):
        year = int(str(day)[:4])
        period = 0 if year <= 2020 else 1
        t = ci / 4.0
        batch = {"FL": f"FLB-{str(day)[:7]}", "EB": f"R{year % 100:02d}{ci % 4 + 1}"}
        dup_site = SITES[int(rng.integers(0, len(SITES)))][0]
        for site in SITES:
            sid, _, _, _, uses, hard_default, lab, profile, _ = site
            analytes = list(RIVER) if lab == "FL" else list(BORE)
            if lab == "FL" and profile != "soft":
                analytes += ["calcium", "magnesium"]
            sid_main = sample_id(lab)
            sample_hard = float(hard_default * rng.lognormal(0, 0.08))
            values = {}
            for a in analytes:
                if a == "calcium":
                    values[a] = sample_hard * 0.7 / 2.497 * 1000
                elif a == "magnesium":
                    values[a] = sample_hard * 0.3 / 4.118 * 1000
                else:
                    values[a] = level(rng, site, a, t)
            # scripted events (each gives the retest checks something to find)
            if sid == "KR04" and str(day)[:7] == "2023-08":
                values["copper"] *= 7                          # one-off copper spike
            if sid == "BH01" and str(day)[:7] == "2024-05":
                values["arsenic"] = 10.4                       # just over, within its uncertainty
            variants = [(sid_main, "sample", "", 1.0)]
            if sid == dup_site:
                factor = 1.9 if ci in (9, 27) else float(rng.lognormal(0, 0.06))
                variants.append((sample_id(lab), "field_duplicate", sid_main, factor))
            for smp, stype, parent, factor in variants:
                for a, v in values.items():
                    fractions = ["total"] + (["dissolved"] if lab == "FL" and a in DISSOLVED_SHARE else [])
                    for fr in fractions:
                        x = v * factor
                        if fr == "dissolved":
                            x = x * DISSOLVED_SHARE[a] * float(rng.lognormal(0, 0.1))
                            if sid == "KR06" and a == "copper" and str(day)[:7] == "2022-05":
                                x = v * 1.6                    # dissolved above total: a lab mix-up
                        dl = DL[(lab, period)][a]
                        if sid == "KR07" and a == "cadmium" and str(day)[:7] == "2019-11":
                            dl = 0.5                           # matrix interference raised the DL
                        if sid == "BH01" and a == "arsenic" and str(day)[:7] == "2020-08":
                            dl = 20                            # diluted run: DL above the guideline
                        analysed = day + np.timedelta64(int(rng.integers(3, 20)), "D")
                        if a == "mercury" and str(day)[:7] == "2021-05":
                            analysed = day + np.timedelta64(41, "D")     # past the 28-day holding time
                        if sid == "BH02" and str(day)[:7] == "2018-02":
                            analysed = day + np.timedelta64(200, "D")    # past the 6-month holding time
                        row = dict(site=sid, sample=smp, date=str(day), analyte=a, fraction=fr, value=x, dl=dl,
                                   stype=stype, parent=parent, batch=batch[lab], analysed=str(analysed),
                                   hardness=sample_hard if (lab == "FL" and period == 1 and profile != "soft") else None)
                        (fl_rows[period] if lab == "FL" else eb_rows).append(row)
        # one field blank per laboratory and campaign
        for lab, site_for_blank, analytes in (("FL", "KR03", ["zinc", "copper", "cadmium", "lead"]),
                                              ("EB", "BH01", ["arsenic", "copper", "lead"])):
            smp = sample_id(lab)
            period_rows = fl_rows[period] if lab == "FL" else eb_rows
            for a in analytes:
                contaminated = lab == "FL" and a == "zinc" and str(day)[:7] == "2020-11"
                period_rows.append(dict(site=site_for_blank, sample=smp, date=str(day), analyte=a, fraction="total",
                                        value=12.0 if contaminated else 0.0, dl=DL[(lab, period)][a], stype="field_blank",
                                        parent="", batch=batch[lab], analysed=str(day + np.timedelta64(5, "D")),
                                        hardness=None))
    write_fernleigh(fl_rows[0], HERE / "lab_results_fernleigh_2017-2020.csv", with_uncertainty=False, bad=True)
    write_fernleigh(fl_rows[1], HERE / "lab_results_fernleigh_2021-2025.csv", with_uncertainty=True, bad=False)
    write_eastbank(eb_rows, HERE / "lab_results_eastbank.xlsx")
    write_sites(HERE / "sites.csv")
    write_lab_qc(fl_rows[1], HERE / "lab_qc_fernleigh_2021-2025.csv")


#: scripted QC events of the demo's QC summary (each gives the Lab QC review something to find):
#: batch, analyte, element -> recovery % (or, for a blank, its result in ug/L)
QC_EVENTS = {
    ("FLB-2021-11", "cadmium", "lcs"): 45.0,       # control sample failed: the batch's cadmium rejected (R)
    ("FLB-2022-08", "zinc", "ms"): 62.0,           # matrix interference: zinc biased low (J- / UJ)
    ("FLB-2022-08", "zinc", "msd"): 64.0,
    ("FLB-2023-05", "lead", "ccv"): 113.0,         # calibration drifted high: lead detects J+
    ("FLB-2024-02", "copper", "method_blank"): 1.5,  # contaminated blank: low copper results U
}
QC_METALS = ("zinc", "cadmium", "copper", "lead", "nickel", "arsenic", "chromium", "mercury")
QC_CODES = {"method_blank": "MB", "lcs": "LCS", "ms": "MS", "msd": "MSD", "ccv": "CCV"}


def write_lab_qc(rows, path: Path) -> None:
    """The QC summary Fernleigh sends with its 2021-2025 certificates (invented): per batch and metal
    (total fraction) a method blank, an LCS, an MS/MSD pair on the batch's Ashby Weir sample and a CCV,
    with the laboratory's own limits. Its own seed: the other demo files do not change with it."""
    rng = np.random.default_rng(SEED + 15)
    header = ["Batch", "Laboratory", "QC Type", "QC Sample", "Parent Sample", "Analyte", "Fraction", "Units",
              "Result", "True Value", "Spike Added", "Original Result", "Lower Limit", "Upper Limit", "RPD Limit",
              "Detection Limit", "Quantitation Limit"]
    lab = "Fernleigh Laboratories (invented)"
    parents = {}
    for r in rows:
        if r["site"] == "KR05" and r["stype"] == "sample" and r["fraction"] == "total":
            parents.setdefault((r["batch"], r["analyte"]), r)
    with path.open("w", newline="", encoding="utf-8") as fh:
        fh.write("Fernleigh Laboratories (invented) - QC summary, Kestrel catchment programme 2021-2025\n")
        w = csv.writer(fh)
        w.writerow(header)
        for batch in sorted({r["batch"] for r in rows}):
            for a in QC_METALS:
                parent = parents.get((batch, a))
                dl = parent["dl"] if parent else 0.1
                ql = round(dl * 4, 6)
                spike = 100.0 if a == "zinc" else 2.0 if a == "mercury" else 20.0
                blank = QC_EVENTS.get((batch, a, "method_blank"))
                w.writerow([batch, lab, "MB", f"{batch}-MB", "", FL_NAMES[a], "Total", "ug/L",
                            fmt(blank) if blank else f"<{fmt(dl)}", "", "", "", "", "", "", fmt(dl), fmt(ql)])
                rec = QC_EVENTS.get((batch, a, "lcs"), float(rng.normal(100, 4)))
                w.writerow([batch, lab, "LCS", f"{batch}-LCS", "", FL_NAMES[a], "Total", "ug/L",
                            fmt(spike * rec / 100), fmt(spike), "", "", 85, 115, "", fmt(dl), fmt(ql)])
                if parent:
                    orig = parent["value"] if parent["value"] >= dl else 0.0
                    for el in ("ms", "msd"):
                        rec = QC_EVENTS.get((batch, a, el), float(rng.normal(100, 6)))
                        w.writerow([batch, lab, QC_CODES[el], f"{parent['sample']}{QC_CODES[el]}", parent["sample"],
                                    FL_NAMES[a], "Total", "ug/L", fmt(orig + spike * rec / 100), "", fmt(spike),
                                    fmt(orig) if orig else f"<{fmt(dl)}", 75, 125, 20, fmt(dl), fmt(ql)])
                rec = QC_EVENTS.get((batch, a, "ccv"), float(rng.normal(100, 3)))
                w.writerow([batch, lab, "CCV", f"{batch}-CCV", "", FL_NAMES[a], "Total", "ug/L",
                            fmt(50 * rec / 100), "50", "", "", "", "", "", fmt(dl), fmt(ql)])


#: site attributes that scope limit entries (README "Input: sites"): the invented catchment's streams
#: are lotic, its reservoir lentic; the bores are wells, the treatment works an entry point, the
#: intakes sources (so the tap-sample lead and copper action levels do not apply to them); the
#: treatment works' sampling point is not stated, so every entry applies there.
SITE_ATTRIBUTES = {
    "KR01": ("lotic", ""), "KR02": ("lotic", ""), "KR03": ("lotic", ""), "KR04": ("lotic", ""),
    "KR05": ("lotic", "source"), "KR06": ("lotic", ""), "KR07": ("lotic", ""), "BH01": ("", "well"),
    "BH02": ("", "well"), "BH03": ("", "well"), "TP01": ("", ""), "RS01": ("lentic", "source"),
}


def write_sites(path: Path) -> None:
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(["site_id", "name", "latitude", "longitude", "uses", "hardness_mg_L", "water_body_type",
                    "sampling_point_type"])
        for sid, name, lat, lon, uses, hard, *_ in SITES:
            w.writerow([sid, name, lat, lon, uses, hard, *SITE_ATTRIBUTES[sid]])


def write_fernleigh(rows, path: Path, with_uncertainty: bool, bad: bool) -> None:
    header = ["Site", "Sample ID", "Sample Date", "Parameter", "Fraction", "Result", "Units", "LOR", "Qualifier",
              "Sample Type", "Parent Sample", "Laboratory", "Batch", "Date Analysed", "Hardness (mg/L CaCO3)"]
    if with_uncertainty:
        header.append("Uncertainty")
    type_words = {"sample": "Normal", "field_duplicate": "Field Duplicate", "field_blank": "Field Blank"}
    with path.open("w", newline="", encoding="utf-8") as fh:
        fh.write("Fernleigh Laboratories (invented) - certificate of analysis, Kestrel catchment programme\n")
        w = csv.writer(fh)
        w.writerow(header)
        for r in rows:
            a = r["analyte"]
            unit = "mg/L" if a in ("calcium", "magnesium") else "ug/L"
            k = 0.001 if unit == "mg/L" else 1.0
            detected = r["value"] >= r["dl"]
            result = fmt(r["value"] * k) if detected else f"<{fmt(r['dl'] * k)}"
            out = [r["site"], r["sample"], r["date"], FL_NAMES[a], r["fraction"].title(), result, unit, fmt(r["dl"] * k),
                   "", type_words[r["stype"]], r["parent"], "Fernleigh Laboratories (invented)", r["batch"], r["analysed"],
                   fmt(r["hardness"]) if r["hardness"] else ""]
            if with_uncertainty:
                out.append("12%" if detected and r["stype"] != "field_blank" else "")
            w.writerow(out)
        if bad:  # rows a reviewer must see rejected, each for its own reason
            w.writerow(["KR04", "FL-9001", "2019-02-30", "Zinc", "Total", "40", "ug/L", "5", "", "Normal", "", "Fernleigh Laboratories (invented)", "FLB-2019-02", "", ""])
            w.writerow(["KR04", "FL-9002", "2019-05-14", "Zinc & Cadmium", "Total", "40", "ug/L", "5", "", "Normal", "", "Fernleigh Laboratories (invented)", "FLB-2019-05", "", ""])
            w.writerow(["KR05", "FL-9003", "2019-08-10", "Lead", "Total", "4", "mg/kg", "0.5", "", "Normal", "", "Fernleigh Laboratories (invented)", "FLB-2019-08", "", ""])
            w.writerow(["KR06", "FL-9004", "2019-11-05", "Copper", "Total", "", "ug/L", "1", "", "Normal", "", "Fernleigh Laboratories (invented)", "FLB-2019-11", "", ""])
            w.writerow(["KR99", "FL-9005", "2020-02-11", "Nickel", "Total", "3", "ug/L", "1", "", "Normal", "", "Fernleigh Laboratories (invented)", "FLB-2020-02", "", ""])
            w.writerow(["KR02", "FL-9006", "2020-05-19", "Zinc", "Total", ">500", "ug/L", "5", "", "Normal", "", "Fernleigh Laboratories (invented)", "FLB-2020-05", "", ""])


def write_eastbank(rows, path: Path) -> None:
    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    ws.title = "Results"
    ws.append(["Eastbank Analytical (invented) - Ashby supply zone monitoring"])
    ws.append([])
    ws.append(["Point Ref", "Lab No", "Collected On", "Det.", "Filt", "Reading", "UoM", "Rep. Limit", "Flag",
               "QC Role", "QC Parent", "Run", "Tested On", "U (k=2)"])
    roles = {"sample": "", "field_duplicate": "DUP", "field_blank": "FB"}
    for r in rows:
        a = r["analyte"]
        mg = a in EB_MG_L
        k = 0.001 if mg else 1.0
        detected = r["value"] >= r["dl"]
        reading = float(fmt(r["value"] * k)) if detected else None
        unc = float(fmt(r["value"] * k * 0.15)) if detected and r["stype"] != "field_blank" else None
        ws.append([r["site"], r["sample"], np.datetime64(r["date"]).astype(object), EB_NAMES[a], "T", reading,
                   "mg/L" if mg else "µg/L", float(fmt(r["dl"] * k)), None if detected else "U", roles[r["stype"]],
                   r["parent"] or None, r["batch"], np.datetime64(r["analysed"]).astype(object), unc])
    ws.append(["BH03", "EB399999", np.datetime64("2023-05-20").astype(object), "As", "T", "approx 3", "µg/L", 0.5,
               None, "", None, "R232", np.datetime64("2023-05-30").astype(object), None])
    wb.save(path)


if __name__ == "__main__":
    main()
