"""The safety caution, in one place: the CLI prints it, the terminal app shows it, the README quotes it."""

CAUTION = (
    "Caution: variantcmp is a screening and comparison tool, not approved flight-planning "
    "or dispatch data. The approved flight manual and the operator's procedures govern; "
    "defer to local regulations and licensed practice."
)

# A shorter form for narrow places (status bars); it must keep the same meaning.
CAUTION_SHORT = (
    "Screening tool only, not approved flight-planning or dispatch data: "
    "the approved flight manual and operator's procedures govern."
)
