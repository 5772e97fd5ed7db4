"""Catalogues: many independent solves and their reports, stored in SQLite as they finish.

A stage after the analyses: a catalogue solves each task with
:func:`symcluster.pipeline.solve`, writes it with :mod:`symcluster.export.jsonio` and
computes reports with :mod:`symcluster.analysis`.  docs/catalogues.md describes the
spec, the database and how runs resume.
"""

from symcluster.catalogue.reports import REPORTS, Report
from symcluster.catalogue.runner import CatalogueRun, Stopped, run_catalogue, run_task
from symcluster.catalogue.spec import catalogue_tasks, load_spec, task_key
from symcluster.catalogue.store import CONTENT_COLUMNS, rows

__all__ = ["run_catalogue", "run_task", "CatalogueRun", "Stopped", "catalogue_tasks",
           "load_spec", "task_key", "rows", "CONTENT_COLUMNS", "REPORTS", "Report"]
