"""Trade studies: sweeps and Monte Carlo sampling of a requirement file.

Lives here: ``definition`` (study files: paths, values, distributions, all
checked before any solve), ``runner`` (one built problem per worker,
warm-started re-solves, local processes or Dask, the result table),
``statistics`` (percentiles over all samples, rank influence), ``figures``
(carpet, driver map, distributions, costs) and ``plots`` (summary and output files).
May import: ``sizing.reports``, ``sizing.charts``, ``sizing.problem`` and
everything below them.
"""
from .definition import Study, load_study
from .runner import StudyResult, run_study

__all__ = ["Study", "StudyResult", "load_study", "run_study"]
