"""Every code list kept as data names, for each code, its meaning, its source and whether the meaning
was checked in that source (seen) or is from memory; the source keys resolve to full citations.

Checked files (src/tracescreen/data/): limit_types.yaml, result_status.yaml, media.yaml,
sample_types.yaml, fractions.yaml, nwis_parameters.yaml (qualifiers.yaml is checked in
tests/test_io_qualifiers.py). The rule itself is this project's (README, "Vocabularies"); spot checks
name the source of the meaning they check.
"""

from __future__ import annotations

from importlib import resources

import pytest
import yaml

from tracescreen.io import codelists


def _data(name: str) -> dict:
    return yaml.safe_load(resources.files("tracescreen").joinpath(f"data/{name}.yaml").read_text("utf-8"))


@pytest.mark.parametrize("name", sorted(codelists.CLASSES))
def test_code_lists_are_complete_and_sourced(name):
    data = _data(name)
    sources = set(data["sources"])
    for ns, entries in data["namespaces"].items():
        seen = set()
        for e in entries:
            assert e["class"] in codelists.CLASSES[name], (ns, e)
            assert e["source"] in sources and e["checked"] in ("seen", "memory"), (ns, e)
            key = codelists.key(e["code"])
            assert key not in seen, f"{name}: {ns}: {e['code']} twice"
            seen.add(key)
    assert len(codelists.code_table(name)) == sum(len(v) for v in data["namespaces"].values())


@pytest.mark.parametrize("name,sections", [
    ("sample_types", ("wqx_activity_type", "nwis_sample_type", "lab_codes")),
    ("fractions", ("wqx_fraction", "nwis_name_words", "lab_codes")),
    ("nwis_parameters", ("parameters",)),
])
def test_other_vocabularies_are_sourced(name, sections):
    data = _data(name)
    sources = set(data["sources"])
    for section in sections:
        for e in data[section]:
            assert e["source"] in sources and e["checked"] in ("seen", "memory"), (section, e)


@pytest.mark.parametrize("name,namespaces,code,cls", [
    ("limit_types", ("wqx", "nwis", "lab"), "Method Detection Level", "detection"),       # WQX domain id 2
    ("limit_types", ("wqx", "nwis", "lab"), "Laboratory Reporting Level", "quantitation"),  # WQX domain id 14
    ("limit_types", ("wqx", "nwis", "lab"), "Upper Quantitation Limit", "upper"),           # WQX domain id 4
    ("limit_types", ("wqx", "nwis", "lab"), "Drinking Water Maximum", "other"),             # WQX domain id 7
    ("limit_types", ("wqx", "nwis", "lab"), "LRL", "quantitation"),                         # inldata rpt_lev_cd
    ("limit_types", ("wqx", "nwis", "lab"), "DLDQC", "detection"),                          # inldata rpt_lev_cd
    ("result_status", ("nwis",), "R", "usable"),       # inldata dqi_cd: reviewed and accepted
    ("result_status", ("wqx",), "Rejected", "rejected"),
    ("media", ("wqx", "nwis"), "WSQ", "water_qc"),    # inldata medium_cd: surface-water QC sample
    ("media", ("wqx", "nwis"), "Water", "water"),
])
def test_code_meanings(name, namespaces, code, cls):
    assert codelists.classify([code, code.lower(), "  " + code + " "], name, namespaces).tolist() == [cls] * 3


def test_unknown_codes_are_not_guessed():
    assert codelists.classify(["Lowest Limit", ""], "limit_types", ("wqx", "nwis", "lab")).tolist() == ["", ""]
