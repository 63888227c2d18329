"""The standards and textbooks the findings cite, found in their text, for the report's references.

A finding names its source in words (``ICAO Annex 10 Vol I 3.1.5.4 (from memory; confirm against the
edition in force)``). :func:`cited_sources` lists each document once, with its edition, the
paragraphs cited and which of them the findings give from memory; :func:`marked_segments` cuts a
finding's text so that the report shows a reference mark in place of the repeated "from memory:
confirm the edition in force". ``summary.json`` keeps the messages as they are.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = ["Source", "SOURCES", "CitedSource", "cited_sources", "marked_segments"]


@dataclass(frozen=True)
class Source:
    """A document the findings may cite.

    Attributes
    ----------
    key : str
        Short name, stable (the anchor of its entry in the report).
    pattern : str
        Regular expression of how a finding names it, paragraph excluded.
    title : str
        The document as a reference list gives it.
    edition : str
        The edition mastplan's values come from, or that none is recorded.
    memory : str
        What mastplan's own sources say of the document's values ("" when they say nothing).
    """

    key: str
    pattern: str
    title: str
    edition: str
    memory: str = ""


_NO_EDITION = "edition not recorded by mastplan: the edition in force applies"

#: Every document a finding cites, in the order the references list them when cited.
SOURCES = (
    Source(
        "annex10",
        r"(?:ICAO )?Annex 10(?: Vol(?:ume)? I\b)?|the Annex\b",
        "ICAO Annex 10, Aeronautical Telecommunications, Volume I (Radio Navigation Aids)",
        _NO_EDITION,
    ),
    Source(
        "annex14",
        r"(?:ICAO )?Annex 14(?: Vol(?:ume)? I\b)?(?: 8th ed\. \(2018\))?",
        "ICAO Annex 14, Aerodromes, Volume I (Aerodrome Design and Operations)",
        "8th edition (2018)",
    ),
    Source(
        "pans-ops",
        r"PANS-OPS|ICAO Doc 8168",
        "ICAO Doc 8168, Procedures for Air Navigation Services: Aircraft Operations (PANS-OPS), Volume II",
        _NO_EDITION,
    ),
    Source(
        "faa-aim", r"FAA AIM|FAA Aeronautical Information Manual", "FAA Aeronautical Information Manual", _NO_EDITION
    ),
    Source(
        "ulaby",
        r"Ulaby, Moore (?:&|and) Fung(?: \(1982\))?(?: Vol\. II)?",
        "Ulaby, F. T., Moore, R. K. and Fung, A. K., Microwave Remote Sensing, Vol. II, Addison-Wesley",
        "1982",
        "criteria from memory (mastplan's sources say so)",
    ),
    Source(
        "iec-60050-705",
        r"IEC 60050-705",
        "IEC 60050-705, International Electrotechnical Vocabulary: Radio wave propagation",
        _NO_EDITION,
    ),
    Source(
        "beckmann",
        r"Beckmann and Spizzichino(?: \(?1963\)?)?",
        "Beckmann, P. and Spizzichino, A., The Scattering of Electromagnetic Waves from Rough Surfaces, Pergamon",
        "1963",
    ),
    Source("itu-r-p526", r"ITU-R P\.526", "ITU-R Recommendation P.526, Propagation by diffraction", _NO_EDITION),
)

#: A paragraph, table or section number right after a document's name.
_PARAGRAPH = (
    r"(?:\s+(?P<para>(?:sec\. |IEV )?\d+(?:[.-]\d+)+(?: [a-z]\))?(?:/\d+(?:\.\d+)+)*(?: and Table \d+-\d+)?"
    r"|Att(?:achment|\.) C))?"
)
_CITATION = re.compile("|".join(f"(?P<{s.key.replace('-', '_')}>{s.pattern}){_PARAGRAPH.replace('para', 'p' + str(i))}"
                                 for i, s in enumerate(SOURCES)))  # fmt: skip
#: The repeated caveat the report shortens to a mark: in its own brackets, or after a comma.
_CAVEAT = r"from memory[;:] confirm (?:against )?the edition in force"
_MEMORY = re.compile(rf"\s*\({_CAVEAT}\)|[,;]\s*{_CAVEAT}")


@dataclass(frozen=True)
class CitedSource:
    """A document as the findings of one study cite it.

    Attributes
    ----------
    number : int
        Its number in the report's references (from 1, in the order of first citation).
    source : Source
    paragraphs : tuple of str
        The paragraphs cited, in the order of first citation.
    from_memory : tuple of str
        The paragraphs the findings give from memory ("" for a citation without a paragraph).
    """

    number: int
    source: Source
    paragraphs: tuple[str, ...]
    from_memory: tuple[str, ...]


def _citations(message: str) -> list[tuple[int, str, int]]:
    """``(source index, paragraph, end)`` of every citation in ``message``, in order."""
    found = []
    for match in _CITATION.finditer(message):
        index = next(i for i, s in enumerate(SOURCES) if match.group(s.key.replace("-", "_")) is not None)
        found.append((index, match.group(f"p{index}") or "", match.end()))
    return found


def _memory_owner(citations, start: int) -> tuple[int, str] | None:
    """The citation a caveat at ``start`` belongs to: the last one before it."""
    before = [(i, p) for i, p, end in citations if end <= start]
    return before[-1] if before else None


def cited_sources(messages) -> list[CitedSource]:
    """Each document the messages cite, once, numbered in the order of first citation.

    Parameters
    ----------
    messages : iterable of str
        The findings' texts.

    Returns
    -------
    list of CitedSource
    """
    order: list[int] = []
    paragraphs: dict[int, dict[str, None]] = {}
    memory: dict[int, dict[str, None]] = {}
    for message in messages:
        citations = _citations(message)
        for index, para, _ in citations:
            if index not in paragraphs:
                order.append(index)
                paragraphs[index], memory[index] = {}, {}
            if para:
                paragraphs[index][para] = None
        for caveat in _MEMORY.finditer(message):
            owner = _memory_owner(citations, caveat.start())
            if owner is not None:
                memory[owner[0]][owner[1]] = None
    return [CitedSource(n, SOURCES[i], tuple(paragraphs[i]), tuple(memory[i])) for n, i in enumerate(order, start=1)]


def marked_segments(message: str, cited: list[CitedSource]) -> list[tuple[str, CitedSource | None]]:
    """``message`` cut at each "from memory" caveat: ``(text, None)`` and ``("", source)`` marks.

    A caveat that follows no citation stays as it is.
    """
    numbers = {c.source.key: c for c in cited}
    citations = _citations(message)
    segments: list[tuple[str, CitedSource | None]] = []
    at = 0
    for caveat in _MEMORY.finditer(message):
        owner = _memory_owner(citations, caveat.start())
        if owner is None or SOURCES[owner[0]].key not in numbers:
            continue
        segments += [(message[at : caveat.start()], None), ("", numbers[SOURCES[owner[0]].key])]
        at = caveat.end()
    segments.append((message[at:], None))
    return segments
