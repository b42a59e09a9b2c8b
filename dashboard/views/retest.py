"""The session's retest list (:func:`tracescreen.pipeline.retest`) and the request built from it
(:func:`tracescreen.retest.request.request_lines`) with each line's status;
the laboratory QC review's reasons (:mod:`dashboard.views.labqc`) join the list."""

from __future__ import annotations

import pandas as pd

from dashboard.state.frames import engine_frame
from dashboard.state.session import SessionData

#: a line's status in words (a line never sent has none)
STATUS_WORDS = {"": "not requested yet", "requested": "requested, still open", "confirmed": "confirmed by the retest",
                "not_confirmed": "not confirmed by the retest"}


def retest_frame(session: SessionData) -> pd.DataFrame:
    """The retest list of a session (the engine's rows with its default thresholds; computed once per session)."""

    from dashboard.views.labqc import lab_qc

    # the laboratory QC review's reasons join the list; derived first, as a value of its own (the
    # session's derived values are computed under one lock, so one may not ask for another)
    review, _results, calibration = lab_qc(session)

    def compute():
        from tracescreen import pipeline
        from tracescreen.retest.listing import lab_qc_retest
        from tracescreen.retest.options import RetestOptions

        out = pipeline.retest(engine_frame(session.screened.drop(columns=["_rid", "campaign"], errors="ignore")),
                              RetestOptions(), lab_qc=lab_qc_retest(review, calibration))
        return calibration.annotate(out) if calibration is not None else out

    return session.derived("retest", compute)


def reason_totals(frame: pd.DataFrame) -> pd.DataFrame:
    """Flagged rows per reason code, with the reason in words."""
    from tracescreen.retest.request import REASON_WORDS

    out = frame["reason"].astype(str).value_counts().rename_axis("reason code").reset_index(name="rows")
    out.insert(1, "reason", out["reason code"].map(REASON_WORDS).fillna(""))
    return out


def request_frame(session: SessionData, as_of: str | None, book) -> pd.DataFrame:
    """The request lines of the session on the request date ``as_of`` with their stored status, and the
    lines requested earlier that are still open though the data no longer flags them."""

    day = pd.Timestamp(as_of).normalize() if as_of else pd.Timestamp.now().normalize()
    version = book.version()
    return session.cached("request_frame", (str(day.date()), version), lambda: _request_frame(session, day, book),
                          size=4)


def _request_frame(session: SessionData, day: pd.Timestamp, book) -> pd.DataFrame:
    from tracescreen.retest.request import request_lines

    lines = session.cached("request_lines", (str(day.date()),), lambda: request_lines(retest_frame(session), day), size=4)
    stored = book.lines()
    status = stored.set_index("request_id")["status"] if len(stored) else pd.Series(dtype=object)
    out = lines.assign(status=lines["request_id"].map(status).fillna(""), origin="this data")
    open_earlier = stored[(stored["status"] == "requested") & ~stored["request_id"].isin(lines["request_id"])]
    if len(open_earlier):
        earlier = open_earlier.reindex(columns=out.columns).assign(
            origin="an earlier request (this data no longer flags it)",
            sampled_at=pd.to_datetime(open_earlier["sampled_at"], errors="coerce").to_numpy(),
            action_words=open_earlier["action"].map({"resample": "Resample (field)", "reanalyse": "Reanalyse (laboratory)",
                                                     "documents": "Send documents (laboratory)"}).to_numpy())
        out = pd.concat([out, earlier.fillna("")], ignore_index=True)
    out["status_words"] = out["status"].map(STATUS_WORDS).fillna(out["status"])
    out = out.sort_values(["lab", "batch", "site_id", "sampled_at", "sample_id"], kind="stable").reset_index(drop=True)
    out.attrs["version"] = (str(day.date()), book.version())
    return out


def batch_summary(frame: pd.DataFrame) -> pd.DataFrame:
    """Request lines per laboratory and batch: how many ask to resample, to reanalyse, and are still open."""
    if not len(frame):
        return pd.DataFrame(columns=["laboratory", "batch", "lines", "resample", "reanalyse", "documents", "open"])
    g = frame.assign(**{a: frame["action"].eq(a) for a in ("resample", "reanalyse", "documents")},
                     open=frame["status"].eq("requested"))
    out = g.groupby(["lab", "batch"], sort=True).agg(lines=("request_id", "size"), resample=("resample", "sum"),
                                                     reanalyse=("reanalyse", "sum"), documents=("documents", "sum"),
                                                     open=("open", "sum")).reset_index()
    return out.rename(columns={"lab": "laboratory"}).assign(
        laboratory=lambda d: d["laboratory"].replace("", "(not given)"),
        batch=lambda d: d["batch"].replace("", "(not given)"))


#: columns of an exported request (what the laboratory or the field team receives)
EXPORT_COLUMNS = ["lab", "batch", "site_id", "sample_id", "sampled_at", "analytes", "fractions", "action_words",
                  "why_action", "reasons", "reason_codes", "holding_time_ends", "details", "status_words", "request_id"]
EXPORT_HEADINGS = {"lab": "laboratory", "action_words": "asked for", "why_action": "why", "status_words": "status"}


def export_frame(frame: pd.DataFrame, request_ids) -> pd.DataFrame:
    """The selected request lines as exported (laboratory and batch first, plain words, codes in a column)."""
    ids = [str(i) for i in request_ids or []]
    chosen = frame[frame["request_id"].isin(ids)]
    return chosen[[c for c in EXPORT_COLUMNS if c in chosen.columns]].rename(columns=EXPORT_HEADINGS).reset_index(drop=True)
