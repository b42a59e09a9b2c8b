"""Wells against background and fixed standards, after the US EPA Unified Guidance (2009).

:func:`run.well_statistics` gives every table of ``tracescreen wells``. Where each rule lives:

* :mod:`.data` -- which results are background, a well's baseline, or compliance data;
* :mod:`.design` -- the design (SWFPR, evaluations, plan, windows, settings);
* :mod:`.plans` -- retest plans and how a sequence of results is decided;
* :mod:`.kappa` -- kappa of parametric limits (Davis-McNichols integral), power, per-test confidence;
* :mod:`.nonparametric` -- order-statistic limits and their achieved false positive rate;
* :mod:`.checks`, :mod:`.outliers` -- background checks, spatial variability, pooled SD, Dixon/Rosner;
* :mod:`.prediction` -- prediction limits per compliance well and constituent;
* :mod:`.sequence` -- status over the retest sequence;
* :mod:`.control_charts` -- combined Shewhart-CUSUM charts;
* :mod:`.tolerance` -- upper tolerance limits;
* :mod:`.confidence`, :mod:`.land`, :mod:`.standards` -- confidence limits and the decisions
  against standards;
* :mod:`.statement` -- the statistical design in words.
"""
