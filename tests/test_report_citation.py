"""Short citations for the practitioner summary: titles left out, nothing else lost.

The references are the project's own (the methods table), in the Vancouver style; the
expected short forms are what that style gives with the title removed and more than two
authors shortened to the first plus "et al" (hand-written from the references)."""

from __future__ import annotations

import re

from hypothesis import given
from hypothesis import strategies as st

from reportgen.report.citation import short_citation

MIFFLIN = (
    "Mifflin MD, St Jeor ST, Hill LA, Scott BJ, Daugherty SA, Koh YO. A new predictive "
    "equation for resting energy expenditure in healthy individuals. Am J Clin Nutr "
    "1990;51:241-247. doi:10.1093/ajcn/51.2.241"
)
HALL_FORBES = (
    "Hall KD. What is the required energy deficit per unit weight loss? Int J Obes "
    "2008;32:573-576. doi:10.1038/sj.ijo.0803720. Forbes GB. Lean body mass-body fat "
    "interrelationships in humans. Nutr Rev 1987;45:225-231."
)
BOOK = (
    "Durbin J, Koopman SJ. Time Series Analysis by State Space Methods, 2nd ed. Oxford "
    "University Press; 2012."
)
ALREADY_SHORT = (
    "Hall KD, et al. Lancet 2011;378:826-837 (adaptive thermogenesis). Leibel RL, Rosenbaum "
    "M, Hirsch J. N Engl J Med 1995;332:621-628 (between-person spread). Hall KD, Chow CC. "
    "Am J Clin Nutr 2011;94:66-74 and Sanghvi A, et al. Am J Clin Nutr 2015;102:353-358."
)


def test_journal_reference_loses_its_title_and_keeps_authors_source_and_doi() -> None:
    assert short_citation(MIFFLIN) == (
        "Mifflin MD, et al. Am J Clin Nutr 1990;51:241-247. doi:10.1093/ajcn/51.2.241"
    )


def test_two_references_in_one_and_a_title_ending_in_a_question_mark() -> None:
    assert short_citation(HALL_FORBES) == (
        "Hall KD. Int J Obes 2008;32:573-576. doi:10.1038/sj.ijo.0803720. "
        "Forbes GB. Nutr Rev 1987;45:225-231."
    )


def test_two_authors_and_et_al_are_kept_as_written() -> None:
    ref = "Roza AM, Shizgal HM. The Harris Benedict equation. Am J Clin Nutr 1984;40:168-182."
    assert short_citation(ref) == "Roza AM, Shizgal HM. Am J Clin Nutr 1984;40:168-182."
    ref = "Hall KD, Sacks G, et al. Quantification of the effect. Lancet 2011;378:826-837."
    assert short_citation(ref) == "Hall KD, et al. Lancet 2011;378:826-837."


def test_books_free_text_and_short_forms_are_left_alone() -> None:
    """No title to find: a book, a formula, a list already without titles (where a greedy
    match would swallow the first source as a "title")."""
    assert short_citation(BOOK) == BOOK
    assert short_citation(ALREADY_SHORT) == ALREADY_SHORT
    formula = "Energy balance W' = W + (intake - expenditure)/rho (Durbin & Koopman 2012)."
    assert short_citation(formula) == formula


PIECES = st.sampled_from(
    ["Hall KD", ", ", ". ", "? ", "et al", "Am J Clin Nutr ", "1990;", "51:241-247", "doi:10.1/x"]
)


@given(st.lists(st.one_of(PIECES, st.text(max_size=12)), max_size=30).map("".join))
def test_never_longer_and_every_source_and_doi_kept(text: str) -> None:
    """Reference-like pieces in any order: the result is never longer, and every
    "Year;" (a journal source) and every DOI of the input is still there."""
    short = short_citation(text)
    assert len(short) <= len(text)
    assert re.findall(r"(?:1[89]|20)\d\d;", short) == re.findall(r"(?:1[89]|20)\d\d;", text)
    assert short.count("doi:") == text.count("doi:")
