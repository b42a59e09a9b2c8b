"""The caution shown on every output of tracescreen."""

CAUTION = (
    "Screening aid only: tracescreen compares reported results with the limit tables you give it. "
    "It does not decide compliance. The responsible authority, under the local regulations that "
    "apply, and on results from accredited laboratories, decides compliance."
)
