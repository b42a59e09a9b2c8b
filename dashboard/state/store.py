"""The per-app store: base inputs (through the engine's pipeline), uploads kept on disk, sessions by dataset key.

A *dataset key* names what a browser session is looking at: ``"base"`` (the files the dashboard was
started with) or ``"base+<token>+<token>"`` once uploads have been added. The key lives in the
browser (a ``dcc.Store``); the server rebuilds the data for a key from the base inputs and the
uploaded files kept on disk, and keeps the last few in a small cache. Nothing here is a module-level
mutable global: the :class:`DataStore` belongs to one app (``app.server.extensions``).
"""

from __future__ import annotations

import json
import logging
import re
import tempfile
import threading
from collections import OrderedDict
from pathlib import Path

import pandas as pd

from dashboard.state.frames import accepted_from_session, engine_frame
from dashboard.state.merge import merge_upload
from dashboard.state.overlays import load_overlays
from dashboard.state.requests import RequestBook
from dashboard.state.session import BASE_KEY, Inputs, SessionData, build_session
from tracescreen._internal.hashing import sha256_hex
from tracescreen._internal.memory import release_unused
from tracescreen.screening.parts import join_frames

STORE_EXTENSION = "tracescreen"
#: An upload's token: the first 16 hex digits of its content hash (:func:`content_token`).
TOKEN = re.compile(r"^[0-9a-f]{16}$")
LOG = logging.getLogger("tracescreen.dashboard")


# ---- building ---------------------------------------------------------------------------------
def load_inputs(results, limits, sites=None, columns=None, options=None, workspace=None,
                cross_fraction: bool = True, wells=None, qc_files=(), calibration_files=()) -> Inputs:
    """Load result files, limit tables and sites with the engine's pipeline (user errors raise ValueError).

    ``options`` (the engine's LoadOptions) says how to read the files; without it, defaults with
    the optional ``columns`` mapping file. With ``workspace`` (a folder), the current results of
    that workspace are used instead of ``results`` (one consistent state, even during an import).
    ``cross_fraction`` is the screening option of the same name (``--same-fraction-only`` turns it off).
    ``wells`` (:class:`tracescreen.pipeline.WellsOptions`) adds the wells-against-background page's data.
    """
    from tracescreen import pipeline

    paths = [Path(p) for p in ([results] if isinstance(results, (str, Path)) else results or [])]
    opts = options if options is not None else load_options(columns)
    limit_paths = [limits] if isinstance(limits, (str, Path)) else list(limits)
    data = pipeline.load(pipeline.Inputs(results=tuple(paths), limits=tuple(limit_paths), sites=sites,
                                         workspace=workspace, reading=opts))
    loaded = data.loaded
    return Inputs(
        accepted=loaded.accepted,
        rejected=loaded.rejected,
        limits=data.limits,
        sites=data.sites,
        files=loaded.files,
        sources=tuple(str(p) for p in ([Path(workspace)] if workspace is not None else paths)),
        options=opts,
        sites_name=Path(sites).name if sites is not None else "the sites file",
        set_aside=loaded.set_aside,
        cross_fraction=cross_fraction,
        wells=wells,
        qc_files=tuple(str(p) for p in qc_files),
        calibration_files=tuple(str(p) for p in calibration_files),
    )


def load_options(columns=None):
    """The engine's LoadOptions with an optional column-mapping YAML file."""
    from tracescreen.io.columns import load_column_map
    from tracescreen.io.loading import LoadOptions

    return LoadOptions(column_map=load_column_map(columns) if columns else None)


def session_nbytes(session: SessionData) -> int:
    """Estimated bytes a session holds: its screened rows and index arrays."""
    from dashboard.state.memo import approx_nbytes

    arrays = (session.rank, session.site_code, session.analyte_code, session.fraction_code, session.table_code,
              session.use_code, session.campaign_code, session.day, session.series_key)
    return approx_nbytes(session.screened) + sum(a.nbytes for a in arrays) + session.memo.nbytes


def upload_caps(caps):
    """The caps of an upload: the stricter of the reading caps and the Upload page's (io/caps.py)."""
    from tracescreen.io.caps import ReadCaps

    strict = ReadCaps.upload()
    return ReadCaps(**{f: min(getattr(caps, f), getattr(strict, f)) for f in ReadCaps.__dataclass_fields__})


def safe_upload_name(filename: str) -> str:
    """The name an upload is kept under: its last path part, control and path characters replaced,
    at most 120 characters with its suffix kept (a browser may send any text as a file name).

    >>> safe_upload_name("../../x\x00y" + "z" * 300 + ".CSV")[-10:], safe_upload_name("..")
    ('zzzzzz.CSV', 'upload')
    """
    name = re.split(r"[/\\]", str(filename))[-1]
    name = re.sub(r"[\x00-\x1f\x7f-\x9f:*?\"<>|]", "_", name).strip(" .")
    stem, dot, suffix = name.rpartition(".")
    if not dot or len(suffix) > 10:
        stem, suffix = name, ""
    stem = stem[: 120 - len(suffix) - 1]
    return (f"{stem}.{suffix}" if suffix else stem) or "upload"


# ---- the per-app store ------------------------------------------------------------------------
def content_token(*parts: bytes) -> str:
    """Short content hash naming an upload (same bytes, same token)."""
    return sha256_hex(b"".join(bytes.fromhex(sha256_hex(p)) for p in parts))[:16]


class DataStore:
    """Base inputs, uploaded files on disk and a small cache of :class:`SessionData` by key.

    Parameters
    ----------
    base : callable or Inputs
        The base inputs, or a function returning them (called once, lazily).
    upload_dir : path, optional
        Where accepted uploads are kept (a temporary directory by default).
    max_upload_bytes : int
        Size cap of one uploaded file [bytes].
    cache_size : int
        How many dataset keys with uploads are kept screened in memory (besides the base data).
    cache_bytes : int
        Bytes those sessions may hold together [bytes]; the least recently used go first, but the
        most recent one is always kept (a million-result base makes each upload session as large).
    workspace : path, optional
        The workspace the base results come from (retest request statuses are kept there).
    overlays : sequence of paths
        GeoJSON files drawn on the map (:func:`dashboard.state.overlays.load_overlays`).
    """

    def __init__(self, base, upload_dir=None, max_upload_bytes: int = 20 * 2**20, cache_size: int = 3,
                 cache_bytes: int = 400 * 2**20, workspace=None, overlays=()):
        self._base = base
        self.workspace = Path(workspace) if workspace is not None else None
        self.overlays = load_overlays(overlays)
        self.requests = RequestBook(self.workspace)
        self._background: threading.Thread | None = None
        self._base_inputs: Inputs | None = None
        self._tmp = None
        if upload_dir is None:
            self._tmp = tempfile.TemporaryDirectory(prefix="tracescreen-uploads-")
            upload_dir = self._tmp.name
        self.upload_dir = Path(upload_dir)
        self.upload_dir.mkdir(parents=True, exist_ok=True)
        self.max_upload_bytes = int(max_upload_bytes)
        self._base_session: SessionData | None = None
        self._cache: OrderedDict[str, SessionData] = OrderedDict()
        self._cache_size = cache_size
        self._cache_bytes = int(cache_bytes)
        self._lock = threading.RLock()

    # base
    def base_inputs(self) -> Inputs:
        """The base inputs, loaded on first use."""
        with self._lock:
            if self._base_inputs is None:
                self._base_inputs = self._base() if callable(self._base) else self._base
            return self._base_inputs

    @property
    def sites(self) -> pd.DataFrame | None:
        """The sites table of the base inputs (None without a sites file)."""
        return self.base_inputs().sites

    def close(self) -> None:
        """Remove the uploaded files kept in the store's own temporary folder (when the server stops)."""
        with self._lock:
            self._cache.clear()
            if self._tmp is not None:
                self._tmp.cleanup()

    # uploads
    def upload_path(self, token: str) -> Path:
        """The folder that keeps the upload named ``token``."""
        return self.upload_dir / token

    def save_upload(self, filename: str, content: bytes, mapping: bytes | None, reading: dict | None = None) -> str:
        """Keep an uploaded file (its column mapping and how to read it) on disk; return its token."""
        reading = dict(reading or {})
        name = safe_upload_name(filename)
        token = content_token(name.encode(), content, mapping or b"", json.dumps(reading, sort_keys=True).encode())
        folder = self.upload_path(token)
        folder.mkdir(parents=True, exist_ok=True)
        (folder / name).write_bytes(content)
        if mapping:
            (folder / "_columns.yaml").write_bytes(mapping)
        (folder / "_upload.json").write_text(json.dumps({"filename": name, "sha256": sha256_hex(content),
                                                         "reading": reading}))
        return token

    def upload_info(self, token: str) -> dict:
        """The kept upload's file name, SHA-256 and reading options."""
        path = self.upload_path(token) / "_upload.json"
        if not token.isalnum() or not path.is_file():
            raise KeyError(token)
        return json.loads(path.read_text())

    def duplicate_of(self, sha256: str, dataset_key: str | None) -> str | None:
        """The file already in the data of ``dataset_key`` with these exact bytes (its name), else None:
        the base files by their SHA-256, then the uploads of the key."""
        files = self.base_session().files
        if "sha256" in files.columns:
            hit = files.loc[files["sha256"].astype(str) == sha256, "file"]
            if len(hit):
                return str(hit.iloc[0])
        for token in upload_tokens(dataset_key):
            try:
                info = self.upload_info(token)
            except (KeyError, ValueError, OSError):
                continue
            if info.get("sha256") == sha256:
                return f"{info.get('filename')} (uploaded earlier in this browser session)"
        return None

    def load_upload(self, token: str):
        """Load one kept upload with the engine; returns the engine's LoadResult."""
        from tracescreen.io.loading import load_results

        folder = self.upload_path(token)
        if not token.isalnum() or not folder.is_dir():
            raise KeyError(token)
        import dataclasses

        mapping = folder / "_columns.yaml"
        base = self.base_inputs()
        opts = base.options if base.options is not None else load_options(None)
        # an upload is read like the base files unless the page says otherwise, with its own mapping
        try:
            info = self.upload_info(token)
        except KeyError:
            info = {}
        reading = info.get("reading", {})
        # the kept file by its recorded name (a safe name may itself start with "_", as the helper files do)
        files = [folder / info["filename"]] if info.get("filename") else \
            [p for p in sorted(folder.iterdir()) if not p.name.startswith("_")]
        opts = dataclasses.replace(opts, column_map=load_options(mapping).column_map if mapping.exists() else None,
                                   caps=upload_caps(opts.caps),
                                   **{k: v for k, v in reading.items() if k in READING_OPTIONS})
        return load_results(files, opts, sites=self.sites, sites_name=base.sites_name)

    # sessions
    def base_session(self) -> SessionData:
        """The screened base data (built once and kept; the loaded rows are then released)."""
        with self._lock:
            if self._base_session is None:
                self._base_session = build_session(self.base_inputs(), BASE_KEY, release_input=True)
                release_unused()
            return self._base_session

    def resolve(self, key) -> tuple[str, list[str]]:
        """The server's own dataset key for a key sent by a browser, and what it had to drop.

        The key comes from the browser and is never trusted: only tokens of uploads this server
        keeps count, each once, in the order added (a repeated token counts once); anything else (a
        token unknown after a restart, not a token at all) is dropped and listed.
        """
        if key in (None, "", BASE_KEY):
            return BASE_KEY, []
        if not isinstance(key, str) or len(key) > 10_000:
            return BASE_KEY, [str(key)[:40]]
        parts = key.split("+")
        kept, dropped = [], [] if parts[0] == BASE_KEY else [parts[0][:40]]
        for t in parts[1:]:
            if t in kept:
                continue
            if TOKEN.match(t) and self.upload_path(t).is_dir():
                kept.append(t)
            else:
                dropped.append(t[:40])
        return "+".join([BASE_KEY, *kept]), dropped

    def get(self, key: str | None) -> SessionData:
        """The session data for a dataset key (resolved by :meth:`resolve`: only known uploads, once each)."""
        key, _ = self.resolve(key)
        tokens = key.split("+")[1:]
        if not tokens:
            return self.base_session()
        with self._lock:
            if key in self._cache:
                self._cache.move_to_end(key)
                return self._cache[key]
        session = self._build(tokens)
        with self._lock:
            self._cache[key] = session
            while len(self._cache) > 1 and (len(self._cache) > self._cache_size
                                            or sum(map(session_nbytes, self._cache.values())) > self._cache_bytes):
                self._cache.popitem(last=False)
        release_unused()
        return session

    def _build(self, tokens: list[str]) -> SessionData:
        base = self.base_session()
        current = accepted_from_session(base)
        rejected, files, kept, aside = [base.rejected], [base.files], [], [base.set_aside]
        for token in tokens:
            try:
                loaded = self.load_upload(token)
            except (KeyError, ValueError, OSError):
                continue
            # as a workspace import: unchanged results are not added twice, revised ones replace the earlier
            parts, _ = merge_upload(current, engine_frame(loaded.accepted))
            current = engine_frame(join_frames(parts))
            rejected.append(loaded.rejected)
            aside.append(loaded.set_aside)
            files.append(loaded.files)
            kept.append(token)
        inputs = Inputs(
            accepted=current,
            rejected=pd.concat([r for r in rejected if len(r)] or [base.rejected], ignore_index=True),
            set_aside=pd.concat([r for r in aside if len(r)] or [base.set_aside], ignore_index=True),
            limits=base.limits,
            sites=base.sites,
            files=pd.concat(files, ignore_index=True),
            sources=base.sources + tuple(f"upload {t}" for t in kept),
            cross_fraction=self.base_inputs().cross_fraction,
            options=base.reading, qc_files=base.qc_files, calibration_files=base.calibration_files,
        )
        del current
        return build_session(inputs, "+".join([BASE_KEY, *kept]), release_input=True)

    # work done off the requests
    def start_background(self) -> None:
        """Compute the base session's trend table and retest list on a worker thread, so that the
        pages that need them do not wait on the first request (a million results take a minute)."""
        from dashboard.views.retest import retest_frame
        from dashboard.views.trends import trend_table

        if self._background is not None:
            return

        def work():
            session = self.base_session()
            for compute in (retest_frame, trend_table):
                try:
                    compute(session)
                except Exception:  # noqa: BLE001 - shown again, with its message, when a page asks
                    LOG.exception("background computation failed")

        self._background = threading.Thread(target=work, name="tracescreen-background", daemon=True)
        self._background.start()


#: upload options of the page that override how the base files were read
READING_OPTIONS = ("decimal_comma", "date_order", "default_fraction", "sheet", "encoding")


def upload_tokens(dataset_key: str | None) -> list[str]:
    """The upload tokens of a dataset key (``base+<token>+<token>``)."""
    return [t for t in (dataset_key or "").split("+")[1:] if t]


def current_store() -> DataStore:
    """The DataStore of the app serving the current request."""
    import flask

    return flask.current_app.extensions[STORE_EXTENSION]


def current_session(key: str | None) -> SessionData:
    """Session data for a dataset key, from the app serving the current request."""
    return current_store().get(key)
