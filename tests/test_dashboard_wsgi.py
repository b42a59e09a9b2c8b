"""The dashboard as a WSGI application for a production server (README "Serving the dashboard"),
built from a configuration file and served to a request without a server process."""

from __future__ import annotations

import pytest
from conftest import SCENARIO

from dashboard.wsgi import create_server
from tracescreen.caution import CAUTION
from tracescreen.cli import UserError


def test_create_server_from_a_config_file_answers_with_the_caution(tmp_path, monkeypatch):
    config = tmp_path / "team.yaml"
    config.write_text(f"limits: [{SCENARIO / 'limits'}]\nsites: {SCENARIO / 'sites.csv'}\n"
                      f"dashboard:\n  results: [{SCENARIO / 'lab_results_fernleigh_2021-2025.csv'}]\n")
    monkeypatch.setenv("TRACESCREEN_CONFIG", str(config))
    client = create_server().test_client()
    assert client.get("/").status_code == 200
    layout = client.get("/_dash-layout")
    assert layout.status_code == 200 and CAUTION[:60] in layout.get_data(as_text=True)


def test_create_server_without_a_config_is_a_user_error(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("TRACESCREEN_CONFIG", raising=False)
    with pytest.raises(UserError, match="no configuration file"):
        create_server()
