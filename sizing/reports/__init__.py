"""Reports: what a reviewer reads. The terminal summary, the JSON object, the HTML/Markdown
review report.

Lives here: ``summary`` (terminal text and shared texts: costs, relaxations),
``serialize`` (the ``--json`` object), ``review`` (the self-contained review
report) and ``sections`` (its V-n, turn, hot-and-high and payload-range sections). Nothing here computes physics: numbers come from the result, figures
from :mod:`sizing.charts`.
May import: ``sizing.charts``, ``sizing.problem`` and everything below them.
"""
