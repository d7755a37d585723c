"""The safety wording every report and terminal summary carries (SPEC §8), in one place."""

STATUS_LINE = (
    "Screening estimate from models, not a measurement: review by a licensed professional "
    "is required before anyone relies on it."
)

CAUTIONS = (
    "These results are a screening estimate computed from models and the inputs given; they are not a measurement.",
    "Local regulations, codes and the authority having jurisdiction govern; the limit tables used are copies of the publications named.",
    "A licensed professional must review these results before anyone relies on them for access, signage or design decisions.",
    "Where the margin to a limit is small, or where the inputs are uncertain, field measurement is recommended.",
    "Workers follow their employer's RF safety programme; a computed zone does not replace lock-out, training or personal monitors.",
)

ONE_LINE = "Screening estimate, not a measurement; local regulations govern; licensed review required before reliance."
