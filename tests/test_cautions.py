"""One wording of the cautions, everywhere (project rule)."""

from pathlib import Path

from shoreline.cautions import CAUTION, caution_lines


def test_readme_quotes_the_caution_verbatim():
    readme = (Path(__file__).parents[1] / "README.md").read_text(encoding="utf-8")
    quoted = " ".join(line[2:] for line in readme.splitlines() if line.startswith("> "))
    assert quoted == CAUTION


def test_caution_says_what_the_trade_expects():
    # the usual wording of the trade (issue 5): screening, factor of two, cross-shore storm
    # erosion and structures, local measurements, the local authority and licensed practice
    for words in (
        "SCREENING ESTIMATE",
        "factor of two",
        "Cross-shore storm erosion",
        "structures",
        "local measurements",
        "local coastal authority",
        "licensed coastal engineering practice",
        "diffraction",
    ):
        assert words in CAUTION
    assert " ".join(caution_lines(60)) == CAUTION
