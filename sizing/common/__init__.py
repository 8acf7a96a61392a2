"""Common ground of every layer: the exception tree, atomic output files, the
caution text and exact unit conversions.

Lives here: ``errors`` (SizingError, InputError, ...), ``fileio`` (atomic
writes), ``caution`` (CAUTION), ``conversions`` (ft, kn, lb, hp, ...).
May import: the standard library only.
"""
