"""Water Quality Exchange (WQX) layouts: Water Quality Portal downloads and USGS Samples files.

Read without a column mapping (README, "Layouts read without a mapping"):

* WQX 2 column names as the Water Quality Portal writes them, in the *narrowResult* and the fuller
  *result* profile: ``MonitoringLocationIdentifier``, ``ActivityIdentifier``, ``ActivityStartDate``,
  ``ActivityStartTime/Time``, ``CharacteristicName``, ``ResultMeasure/MeasureUnitCode``,
  ``DetectionQuantitationLimitTypeName`` ... Headers are compared without case or punctuation
  (:func:`tracescreen.io.columns.header_key`), so the ``/`` spelling and the ``.`` spelling that
  some readers write (``ResultMeasure.MeasureUnitCode``) are the same header.
* WQX 3 column names of USGS Samples data (``Location_Identifier``, ``Activity_StartDate``,
  ``Result_Measure``, ``DetectionLimit_TypeA`` / ``_MeasureA`` / ``_MeasureUnitA`` and B ...).

The values in these columns are read with the WQX vocabularies kept as data: fractions
(``data/fractions.yaml``), activity types (``data/sample_types.yaml``), measure qualifiers and
detection conditions (``data/qualifiers.yaml``), result statuses (``data/result_status.yaml``),
reported-limit types (``data/limit_types.yaml``) and media (``data/media.yaml``).

Column names checked in: tests/data/wqp_narrowresult_orsanco_nps_2024_metals.csv (narrowResult),
tests/data/wqp_result_profile_widnr_2011_extract.csv (result profile) and
tests/data/usgs_samples_results_black_earth_creek_2023.csv (USGS Samples, WQX 3); origins in
tests/data/README.md.
"""

from __future__ import annotations

#: Header spellings (after :func:`~tracescreen.io.columns.header_key`) -> tracescreen column.
#: Within a column the first spelling listed is preferred when a file has several.
HEADERS: dict[str, tuple[str, ...]] = {
    "site_id": ("monitoringlocationidentifier", "locationidentifier"),
    "sample_id": ("activityidentifier", "activityactivityidentifier"),
    "sampled_at": ("activitystartdate",),
    "sampled_time": ("activitystarttimetime", "activitystarttime"),
    "sampled_time_zone": ("activitystarttimetimezonecode", "activitystarttimezone"),
    "analyte": ("characteristicname", "resultcharacteristic"),
    "fraction": ("resultsamplefractiontext", "resultsamplefraction"),
    "result": ("resultmeasurevalue", "resultmeasure"),
    "unit": ("resultmeasuremeasureunitcode", "resultmeasureunit"),
    "detection_condition": ("resultdetectionconditiontext", "resultresultdetectioncondition"),
    "qualifier": ("measurequalifiercode", "resultmeasurequalifiercode"),
    "result_status": ("resultstatusidentifier", "resultmeasurestatusidentifier"),
    "sample_type": ("activitytypecode",),
    "medium": ("activitymedianame", "activitymedia"),
    "limit_type": ("detectionquantitationlimittypename", "detectionlimittypea"),
    "limit_value": ("detectionquantitationlimitmeasuremeasurevalue", "detectionlimitmeasurea"),
    "limit_unit": ("detectionquantitationlimitmeasuremeasureunitcode", "detectionlimitmeasureunita"),
    "limit_type_2": ("detectionlimittypeb",),
    "limit_value_2": ("detectionlimitmeasureb",),
    "limit_unit_2": ("detectionlimitmeasureunitb",),
    "lab": ("laboratoryname", "labinfoname"),
    "analysed_at": ("analysisstartdate", "labinfoanalysisstartdate"),
    "parameter_code": ("usgspcode",),
}

#: Namespaces of the code lists (``data/*.yaml``) a WQX column is read with.
LIMIT_TYPE_NAMESPACES = ("wqx", "nwis", "lab")
STATUS_NAMESPACES = ("wqx",)
MEDIA_NAMESPACES = ("wqx", "nwis")
