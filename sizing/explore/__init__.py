"""Explore: a live what-if page for a requirement file (``sizing explore FILE``).

Lives here: ``controls`` (the movable values of a file, in the user's units,
with the ranges the file format accepts), ``engine`` (re-solves the built
problem warm-started: design numbers first, then curves, costs and margins;
the changed file written back as YAML), ``plot`` (the constraint diagram
drawn in the browser), ``page`` (the Bokeh document: controls, diagram,
design panel) and ``server`` (the local Bokeh server).
May import: ``sizing.studies``, ``sizing.reports``, ``sizing.charts``,
``sizing.problem``, ``sizing.inputs`` and the layers below; Bokeh is imported
here and nowhere else.
"""
