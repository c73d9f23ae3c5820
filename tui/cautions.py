"""The cautions bendwise shows wherever results are read (screens, reports, CLI)."""

MISSING_CAUTION = (
    "Filling a missing value with one number, or adding a missing indicator, can bias "
    "estimates when values are not missing completely at random (Donders et al. 2006); "
    "for inference use multiple imputation (Sterne et al. 2009). In scoring systems it is "
    "common practice; follow local modelling standards."
)

CAUTIONS: tuple[str, ...] = (
    "Cut points, powers and forms chosen from the data make p-values and confidence "
    "intervals optimistic; the chosen form has not been tested on fresh data.",
    "Turning a continuous predictor into an indicator or bands throws information away "
    "and assumes a jump at the cut point that is rarely real.",
    "Screening many columns finds some apparent bends by chance; read q-values, not raw "
    "p-values, and expect a few false leads.",
    "A form chosen on one sample must be checked on another (validation cohort, later "
    "extract) before it is relied on.",
    MISSING_CAUTION,
    "Models used for patient care, lending or safety decisions fall under local "
    "regulation and governance. bendwise supports a qualified analyst; it does not "
    "replace their judgement, independent review, or local rules.",
)

SHORT_CAUTION = (
    "Screening many columns finds some bends by chance and data-driven forms make "
    "p-values optimistic; confirm on other data and follow local rules."
)
