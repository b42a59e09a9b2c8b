"""Laboratory QC review: why a result needs a retest, from the laboratory's own QC rows.

A metals batch carries its quality-control rows: calibration verifications, blanks, low-level
check standards, interference checks, control samples, matrix spikes, duplicates, serial
dilutions and internal standards. This package reads them (from the lab file's rows set aside by
the loader, or from a separate QC file), judges each against its acceptance window -- the lab's
own limits where the file gives them, else the default of the US EPA National Functional
Guidelines for inorganic data review [USEPA2020NFG]_ (``data/lab_qc_windows.yaml``) -- and
qualifies the affected results of the batch (``U``, ``J``, ``J+``, ``J-``, ``UJ``, ``R``; the most
protective qualifier wins).

Where each rule lives:

``elements``            which QC element a row is (``data/lab_qc_elements.yaml``)
``windows``             the default windows and tiers; :func:`windows.judge` (a value against its window)
``reading``             QC rows from the original cells of a lab file or a QC file -> the QC table
``calibration_checks``  ICV, CCV, low-level check standard (recovery of a standard)
``spikes``              laboratory control samples, matrix spikes, post-digestion spikes (recovery)
``precision``           laboratory duplicates, MS/MSD and LCS/LCSD pairs (RPD or difference)
``blanks``              calibration and method blanks (tiers by detection and quantitation limit)
``interference``        interference check solutions, serial dilutions, ICP-MS internal standards
``linking``             which results each QC row speaks for (batch, bracket, sample, low results)
``qualifiers``          combine the qualifiers of a result: the most protective wins
``review``              :func:`review.review_lab_qc`: the whole review; per-batch summary and narrative
``reasons``             retest reasons and suggested actions from the review

References
----------
.. [USEPA2020NFG] US EPA (2020). National Functional Guidelines for Inorganic Superfund Methods
   Data Review. EPA-542-R-20-006, November 2020 (see ``docs/references.md``).
"""
