"""Calibration checks, for reviewers who receive the laboratory's calibration data.

Labs that measure metals by atomic absorption or emission calibrate with standards: a response
(absorbance, counts) against known concentrations. From a calibration file (standards'
concentrations and responses per analyte and run, blank responses, MDL spiked and blank results):

``reading``  the calibration file -> one table of points (:data:`reading.POINT_COLUMNS`)
``fit``      linear and weighted least-squares fits of every curve at once (group sums), residuals,
             back-calculated concentrations, the lack-of-fit F test, concentrations from responses
``limits``   detection and quantitation limits from a curve (3.3 σ / slope, 10 σ / slope) and the
             US EPA method detection limit procedure (40 CFR 136 Appendix B, revision 2)
``checks``   results against their calibration: above the highest or below the lowest standard,
             reported detection limits the calibration does not support; retest reasons
"""
