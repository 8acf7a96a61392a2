"""Charts of a sized design: the constraint diagram and the flight envelope.

Lives here: ``style`` (palette, display units, figure files), ``labels``
(label placement), ``diagram_data`` and ``diagram`` (the constraint diagram:
data, then drawing), ``performance`` (the design flown on paper: Ps, speed
ranges, ceilings), ``envelope`` and ``envelope_plot`` (the altitude-Mach
envelope check), ``coffin`` (coffin corner, energy height, zoom), ``loads`` and
``loads_plot`` (the V-n chart), ``turn`` and ``turn_plot``, ``hot_high`` and
``hot_high_plot`` (WAT), ``payload_range`` and ``payload_range_plot``, ``files``
(figure, CSV and JSON output of every chart). Compute, then data, then plot: plotting functions take
``ax=None``, reject unknown keywords and return handles; matplotlib is
imported only when drawing.
May import: ``sizing.problem``, ``sizing.inputs``, ``sizing.constraints``,
``sizing.weights``, ``sizing.physics``, ``sizing.common``.
"""
