"""The one wording of the cautions, used by the command line, every output file and the report.

Keep it in one place: every writer imports :data:`CAUTION` (or :func:`caution_lines`) from here,
so the wording is the same everywhere.
"""

CAUTION = (
    "SCREENING ESTIMATE ONLY. These results come from simplified published formulas (linear "
    "wave theory, CERC and Kamphuis longshore transport, a one-line sediment balance) and are "
    "typically uncertain by a factor of two or more. They are not a design. Cross-shore storm "
    "erosion and sediment supply (rivers, cliffs) are not included, nor nourishment unless a "
    "projection of the study places it; sheltering by land is a geometric shadow without "
    "diffraction, and structures are included only as simple barriers where the study gives "
    "them. Projections forward in time repeat or resample the past wave record, keep the shape "
    "of the beach profile (sea-level rise by the Bruun rule) and grow less certain with every "
    "year ahead: they are scenarios, not forecasts. Confirm with local measurements and defer "
    "to the local coastal authority and licensed coastal engineering practice before any "
    "decision on surveys, nourishment or structures."
)


def caution_lines(width: int = 96) -> list[str]:
    """Return :data:`CAUTION` wrapped to lines of at most ``width`` characters.

    Examples
    --------
    >>> caution_lines()[0].startswith("SCREENING ESTIMATE ONLY.")
    True
    """
    import textwrap

    return textwrap.wrap(CAUTION, width=width)
