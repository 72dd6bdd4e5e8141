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

# Under every engine-out answer (the oei command, the engine-out view), beside the caution above.
ENGINE_OUT_CAUTION = (
    "Engine-out figures are screening figures: the approved flight manual's engine-out data and "
    "the operator's en-route procedures govern."
)
