"""The standing caution shown with every result, on every screen and every printed sheet."""

CAUTION = (
    "Planning estimate only. Predictions from procplan must be validated by temperature measurement "
    "on the real product and equipment before use. Local food-safety law, pharmacopoeia requirements, "
    "the site's HACCP or validation plan and a qualified process authority take precedence over any result shown here."
)

CAUTION_SHORT = "Planning estimate: validate by measurement; food-safety law, pharmacopoeia, HACCP/validation plan and the process authority prevail."

#: Marks a rule or lethality preset whose values were not all confirmed in a source that was read.
INDICATIVE = "indicative – confirm with your process authority"
