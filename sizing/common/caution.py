"""The caution every report, page, figure and CLI summary carries."""

CAUTION = ("CAUTION: conceptual-design estimate only. Not for certification, airworthiness, "
           "structural design or operational decisions; detailed analysis, test, the applicable "
           "regulations and authorities govern. Have results reviewed by qualified engineers.")

LOADS_CAUTION = ("Structural design loads are defined by the applicable regulation and the authority; "
                 "this tool applies a published, simplified form (the prescriptive load-factor, design-speed "
                 "and derived-gust rules of 14 CFR Parts 23 and 25) for conceptual estimates only.")
