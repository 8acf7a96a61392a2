"""Physics: pure SI functions of floats, numpy arrays and CasADi symbols.

Lives here: ``atmosphere`` (U.S. Standard Atmosphere 1976), ``aero`` (drag
polar, Mach tables, lift limits), ``propulsion`` (thrust and power lapse per
engine family), ``loads`` (published limit load factors, design-speed minima,
derived gusts, the gust load factor and the lift-curve slope) and ``shim`` (the one-expression math shim that dispatches to
numpy or CasADi). No units, no I/O, no printing.
May import: numpy, and CasADi through ``shim`` only; nothing else of ``sizing``
but ``sizing.common``.
"""
