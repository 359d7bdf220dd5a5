"""E½ tables: a half-wave potential given in the manifest (``[[point]]``) instead of a file.

A point is a file-less entry of the series whose measurement is a
:class:`~cvfit.techniques.table.measurement.TableMeasurement`: it offers the given E½ to the
one E½ decision like any technique's measurement, so the titration models, the error budget
and the reports take it unchanged.
"""

from cvfit.techniques.table.measurement import TableMeasurement

__all__ = ["TableMeasurement"]
