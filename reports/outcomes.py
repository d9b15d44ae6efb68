"""A verdict's outcome in the words a certificate states it with (pure: no Django)."""

# The headline states what was found, not a bare pass or fail that could read as a safety pass.
OUTCOME_HEADLINES = {
    "pass": "In band at full source",
    "marginal": "Outside the band",
    "fail": "Far outside the band",
    "inconclusive": "Could not tell",
}
OUTCOME_WORDS = {
    "pass": "In band at full source: at every step up to full source the unit drew what a "
    "healthy unit of the declared load draws through this lamp.",
    "marginal": "Outside the band: the unit drew outside the healthy band but short of a clear "
    "fault; see the reasons.",
    "fail": "Far outside the band: the unit drew what a healthy unit does not; see the reasons.",
    "inconclusive": "Could not tell: these readings cannot tell a healthy unit from a faulty one; "
    "see the reasons.",
}
