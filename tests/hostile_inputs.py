"""Input files whose every text field that reaches a page carries a script payload (report and dashboard tests).

The payloads are the classic ways text becomes code in a web page (OWASP Cross Site Scripting Prevention
Cheat Sheet, common practice): a script element, an image whose error handler runs, an SVG onload, an
attribute break-out, and a ``javascript:`` address. Each sets ``window.__xss`` and opens a dialog, so a
browser test can tell whether any of them ran.
"""

from __future__ import annotations

from pathlib import Path

PAYLOADS = [
    "<script>window.__xss=1;alert(1)</script>",
    "<img src=x onerror=\"window.__xss=2;alert(2)\">",
    "\"><svg onload=\"window.__xss=3;alert(3)\">",
    "'><b onmouseover=alert(4)>x</b>",
]
JS_URL = "javascript:window.__xss=5;alert(5)"


def _csv(cell: str) -> str:
    return '"' + cell.replace('"', '""') + '"'


def write_hostile_inputs(folder: Path) -> dict[str, Path]:
    """A limit table, sites file and lab file (names, ids, notes, qualifiers, labs, batches, rejected and
    set-aside cells) full of payloads; returns their paths."""
    folder.mkdir(parents=True, exist_ok=True)
    p = PAYLOADS
    table = folder / "hostile_table.yaml"
    table.write_text(
        "id: hostile\n"
        f"name: {_yaml(p[0] + ' table')}\n"
        f"source: {_yaml('Invented body (2024) ' + p[1])}\n"
        "use: drinking_water\n"
        "unit: ug/L\n"
        f"url: {_yaml(JS_URL)}\n"
        f"notes: {_yaml(p[2])}\n"
        "entries:\n"
        "  - analyte: lead\n    fraction: total\n    value: 10\n"
        f"    note: {_yaml(p[3])}\n", encoding="utf-8")
    site = p[0][:30]  # a site id with a payload in it
    sites = folder / "sites.csv"
    sites.write_text("site_id,name,latitude,longitude,uses,hardness_mg_L\n"
                     f"{_csv(site)},{_csv(p[1])},52.1,-3.5,drinking_water,80\n"
                     f"S2,{_csv(p[2])},52.2,-3.4,drinking_water,90\n", encoding="utf-8")
    rows = ["site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit,qualifier,lab,batch"]
    for i in range(6):
        s = site if i % 2 == 0 else "S2"
        rows.append(",".join(map(_csv, [s, f"{p[i % 4]}-{i}", f"2023-0{i + 1}-15", "Lead", "total",
                                       str(5 + 4 * i), "ug/L", "1", p[(i + 1) % 4][:40], p[(i + 2) % 4],
                                       p[(i + 3) % 4][:50]])))
    rows.append(",".join(map(_csv, ["S2", "R1", "2023-08-01", "Lead", "total", p[1], "ug/L", "1", "", "", ""])))
    rows.append(",".join(map(_csv, ["S2", "R2", "2023-08-01", p[0], "total", "3", "ug/L", "1", "", "", ""])))
    lab = folder / "hostile_lab.csv"
    lab.write_text("\n".join(rows) + "\n", encoding="utf-8")
    return {"limits": table, "sites": sites, "lab": lab, "site": site}


def _yaml(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'


#: JavaScript that reports whether a payload ran or became a live link.
PROBE = """() => ({
    ran: window.__xss === undefined ? null : window.__xss,
    scriptLinks: Array.from(document.querySelectorAll('a[href]'))
        .filter(a => /^\\s*(javascript|data|vbscript):/i.test(a.getAttribute('href'))).length,
    handlers: Array.from(document.querySelectorAll('*')).filter(el => Array.from(el.attributes)
        .some(at => /^on/i.test(at.name) && /alert|__xss/.test(at.value))).length,
})"""
