"""The caution every report, page, figure and CLI summary carries."""

CAUTION = ("CAUTION: conceptual-design estimate only. Not for certification, airworthiness or "
           "operational decisions; detailed analysis, test, the applicable regulations and "
           "authorities govern. Have results reviewed by qualified engineers.")
