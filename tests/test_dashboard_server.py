"""The dashboard server under hostile requests: 4xx for malformed callback requests, dataset keys checked on
the server, safe upload names, uploads removed on SIGTERM, slow clients timed out.

Sources: RFC 9110 section 15.5.1 (400 Bad Request: a request the server will not process because of a
client error) and 15.6.1 (500: an unexpected condition on the server); POSIX signal(7) (SIGTERM asks a
process to terminate); the rest is this project's rule (issue 20).
"""

from __future__ import annotations

import base64
import json
import os
import signal
import socket
import subprocess
import sys
import time

import pytest
from dashboard_support import scenario_inputs, scenario_paths
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from dashboard.app import create_app
from dashboard.server import REQUEST_TIMEOUT_S
from dashboard.state.store import STORE_EXTENSION, safe_upload_name

ROUTE = "/_dash-update-component"
CSV = "site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit\nKR01,UP1,2024-03-04,Lead,total,5,ug/L,1\n"


@pytest.fixture(scope="module")
def app(tmp_path_factory):
    return create_app(inputs=scenario_inputs(), upload_dir=tmp_path_factory.mktemp("uploads"))


@pytest.fixture(scope="module")
def client(app):
    c = app.server.test_client()
    assert c.get("/").status_code == 200  # Dash adds its pages' own callbacks on the first request
    return c


def _request(output: str, cb: dict, values: list) -> dict:
    """A callback request as the page sends it, with the given input values."""
    inputs = [{"id": d["id"], "property": d["property"], "value": v} for d, v in zip(cb["inputs"], values)]
    state = [{"id": d["id"], "property": d["property"]} for d in cb.get("state", [])]
    outs = [{"id": o.split(".")[0], "property": o.split(".")[-1]} for o in output.strip(".").split("...")]
    return {"output": output, "outputs": outs if len(outs) > 1 else outs[0], "inputs": inputs, "state": state,
            "changedPropIds": [f"{d['id']}.{d['property']}" for d in cb["inputs"]][:1]}


def _dataset_info(client, key) -> str:
    body = {"output": "dataset-info.children", "outputs": {"id": "dataset-info", "property": "children"},
            "inputs": [{"id": "dataset-key", "property": "data", "value": key}], "changedPropIds": []}
    r = client.post(ROUTE, json=body)
    assert r.status_code == 200
    return r.get_json()["response"]["dataset-info"]["children"]


@pytest.mark.parametrize("body", [b"{", b"[]", b"null", b'"x"', b'{"output": 5}', b'{"output": "nope.children"}',
                                  b'{"output": "dataset-info.children", "inputs": "x"}',
                                  b'{"output": "dataset-info.children", "inputs": [1]}',
                                  b'{"output": "dataset-info.children", "inputs": [], "outputs": 3}',
                                  b'{"output": "dataset-info.children", "inputs": [[null]]}',
                                  b'{"output": "dataset-info.children", "inputs": [[{"id": 1}]]}'])
def test_malformed_callback_requests_answer_400(client, body):
    """These used to answer 500 with a traceback in the log."""
    r = client.post(ROUTE, data=body, content_type="application/json")
    assert r.status_code == 400


_json = st.recursive(st.none() | st.booleans() | st.integers() | st.floats(allow_nan=False) | st.text(max_size=20),
                     lambda c: st.lists(c, max_size=4) | st.dictionaries(st.text(max_size=8), c, max_size=4),
                     max_leaves=8)


@settings(max_examples=500, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_fuzzed_callback_requests_never_answer_500(app, client, data):
    """Requests built from this app's own callbacks with mutated parts and random values: 200, 204 or 4xx."""
    outputs = sorted(app.callback_map)
    output = data.draw(st.sampled_from(outputs))
    cb = app.callback_map[output]
    values = data.draw(st.lists(_json, min_size=len(cb["inputs"]), max_size=len(cb["inputs"])))
    body = _request(output, cb, values)
    mutation = data.draw(st.sampled_from(["none", "drop", "retype", "extra_input"]))
    if mutation == "drop":
        body.pop(data.draw(st.sampled_from(sorted(body))))
    elif mutation == "retype":
        body[data.draw(st.sampled_from(sorted(body)))] = data.draw(_json)
    elif mutation == "extra_input":
        body["inputs"].append({"id": "x", "property": "value", "value": 1})
    r = client.post(ROUTE, data=json.dumps(body), content_type="application/json")
    assert r.status_code in (200, 204, 400), (output, body, r.data[:300])


def test_repeated_and_unknown_upload_tokens_are_not_trusted(app, client):
    """A key repeating one upload used to count it N times; a key from before a restart gave blank pages."""
    store = app.server.extensions[STORE_EXTENSION]
    token = store.save_upload("up.csv", CSV.encode(), None)
    base = store.get("base")
    once = store.get(f"base+{token}")
    assert int(once.rid.max()) == int(base.rid.max()) + 1
    thrice = store.get(f"base+{token}+{token}+{token}")
    assert int(thrice.rid.max()) == int(once.rid.max())
    assert store.resolve(f"base+{token}+{token}") == (f"base+{token}", [])
    assert "no longer on the server" in _dataset_info(client, "base+0123456789abcdef")
    assert "no longer on the server" in _dataset_info(client, "../../etc/passwd")
    assert "no longer on the server" not in _dataset_info(client, f"base+{token}+{token}")


def test_base_file_uploaded_again_is_not_counted_twice(app):
    store = app.server.extensions[STORE_EXTENSION]
    path = scenario_paths()["results"][0]
    token = store.save_upload(path.name, path.read_bytes(), None)
    assert int(store.get(f"base+{token}").rid.max()) == int(store.get("base").rid.max())


def test_adding_an_upload_never_changes_how_base_results_are_screened(app):
    """Base results used to lose their own hardness (and pH, DOC, temperature, quantitation limit) when any
    upload was added: 1,170 demo limit values changed and 2 statuses flipped."""
    store = app.server.extensions[STORE_EXTENSION]
    token = store.save_upload("up2.csv", CSV.replace("UP1", "UP2").encode(), None)
    base = store.get("base").screened
    both = store.get(f"base+{token}").screened
    key = ["file", "row", "limit_table", "duration", "basis", "entry_id"]
    merged = base.merge(both, on=key, suffixes=("", "_up"), validate="one_to_one")
    assert len(merged) == len(base)
    for c in ("limit_ug_L", "hardness_used_mg_L", "ratio", "ph_used", "doc_used_mg_L"):
        a, b = merged[c].astype(float), merged[f"{c}_up"].astype(float)
        assert ((a == b) | (a.isna() & b.isna())).all(), c
    for c in ("status", "hardness_origin", "note"):
        a, b = (merged[x].astype(object).fillna("").astype(str) for x in (c, f"{c}_up"))
        assert (a == b).all(), c


@pytest.mark.parametrize("name", ["a\x00b.csv", "x" * 300 + ".csv", "../../../etc/passwd.csv", "..\\..\\win.csv",
                                  "\x1b[31m.csv"])
def test_hostile_upload_names(app, name):
    """NUL or over 255 characters used to give HTTP 500 (ValueError: embedded null byte; ENAMETOOLONG)."""
    from dashboard.views.uploads import preview_upload

    store = app.server.extensions[STORE_EXTENSION]
    contents = "data:text/csv;base64," + base64.b64encode(CSV.encode()).decode()
    prev = preview_upload(store, contents, name)
    assert prev.accepted == 1
    kept = safe_upload_name(name)
    assert len(kept) <= 120 and "/" not in kept and "\x00" not in kept and "\x1b" not in kept
    assert (store.upload_path(prev.token) / kept).is_file()


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _wait_for(port: int, proc, seconds: float = 120) -> None:
    t0 = time.time()
    while time.time() - t0 < seconds:
        if proc.poll() is not None:
            raise AssertionError(proc.stderr.read().decode()[-2000:])
        try:
            with socket.create_connection(("127.0.0.1", port), timeout=1):
                return
        except OSError:
            time.sleep(0.3)
    raise AssertionError("dashboard did not start")


@pytest.mark.slow
def test_server_times_out_silent_clients_and_removes_uploads_on_sigterm(tmp_path):
    """Uploaded files used to stay in the temporary folder after SIGTERM; a silent client held its
    connection for the full 60 s of the attack."""
    p = scenario_paths()
    port = _free_port()
    lab = tmp_path / "lab.csv"
    lab.write_text(CSV)
    args = [sys.executable, "-m", "dashboard", "--results", str(lab), "--limits", str(p["limits"][0]),
            "--port", str(port)]
    env = {**os.environ, "TMPDIR": str(tmp_path)}
    proc = subprocess.Popen(args, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        _wait_for(port, proc)
        uploads = list(tmp_path.glob("tracescreen-uploads-*"))
        assert len(uploads) == 1
        with socket.create_connection(("127.0.0.1", port)) as silent:
            silent.sendall(b"POST /_dash-update-component HTTP/1.1\r\nHost: x\r\n")  # and then nothing
            silent.settimeout(REQUEST_TIMEOUT_S + 20)
            t0 = time.time()
            assert silent.recv(1024) == b""  # the server closed the connection
            assert time.time() - t0 < REQUEST_TIMEOUT_S + 10
        proc.send_signal(signal.SIGTERM)
        proc.wait(timeout=30)
        assert not uploads[0].exists()
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()


def test_upload_preview_counts_every_row(app):
    """The preview used to give rows read = accepted + rejected, losing rows set aside (another analyte)."""
    from dashboard.views.uploads import preview_upload

    store = app.server.extensions[STORE_EXTENSION]
    text = CSV + "KR01,UP9,2024-03-04,Unobtainium,total,5,ug/L,1\nKR01,UP8,2024-03-04,Lead,total,x,ug/L,1\n"
    prev = preview_upload(store, "data:text/csv;base64," + base64.b64encode(text.encode()).decode(), "three.csv")
    assert (prev.rows_read, prev.accepted, prev.set_aside, len(prev.rejected)) == (3, 1, 1, 1)


def test_upload_workbook_past_the_upload_caps_is_refused(app):
    """A workbook upload is read with the Upload page's stricter caps (200,000 rows): refused with a message."""
    import io

    from openpyxl import Workbook

    from dashboard.views.uploads import UploadError, preview_upload

    wb = Workbook(write_only=True)
    ws = wb.create_sheet()
    ws.append(["site_id", "sample_id", "sampled_at", "analyte", "fraction", "result", "unit"])
    for _ in range(200_001):
        ws.append([None])
    buf = io.BytesIO()
    wb.save(buf)
    store = app.server.extensions[STORE_EXTENSION]
    with pytest.raises(UploadError, match="more than 200,000 rows"):
        preview_upload(store, "data:application/octet-stream;base64," + base64.b64encode(buf.getvalue()).decode(),
                       "many.xlsx")
