"""Abbreviations of reports and minutes, as data the user can extend.

``NEVER_FINAL`` abbreviations do not end a sentence before a number, a lower-case word
or a name: titles ("Cllr. M. Doyle"), words before a number or a code ("approx. 9
hours", "Tel. 01632 960 412", "Ref. INS-2025-114") and Latin connectives ("e.g.",
"vs."). Only a word that opens sentences ("The", "It", ...) after them is a boundary,
and not even that after a title (``TITLES``: "Dr. A. Mensah").
``MAY_END`` abbreviations end a sentence when a capitalised word follows ("... and
Co. It closed"), but not before a lower-case word or a number. Both lists are written
lower case, without the final period. Common practice of report writing in English,
no published list.
"""

from __future__ import annotations

# Titles and ranks before a name: never the end of a sentence, even before "A." (an initial).
TITLES: tuple[str, ...] = (
    "mr", "mrs", "ms", "mx", "dr", "prof", "cllr", "insp", "supt", "sgt", "det", "cst", "const", "rev",
    "hon", "capt", "lt", "col", "gen", "maj", "cmdr", "adm", "gov", "sen", "rep", "messrs", "st", "mt",
)

NEVER_FINAL: tuple[str, ...] = TITLES + (
    # before a number, a code or a measure
    "approx", "appx", "est", "incl", "excl", "ref", "refs", "no", "nos", "n°", "tel", "fax", "mob", "ext",
    "fig", "figs", "p", "pp", "para", "paras", "sect", "sec", "ch", "vol", "art", "cl", "ca", "c", "dwg",
    "encl", "attn", "dept",
    # connectives
    "e.g", "i.e", "vs", "v", "cf", "viz", "resp",
)

MAY_END: tuple[str, ...] = (
    "etc", "co", "ltd", "inc", "plc", "corp", "bros", "jr", "sr", "esq", "al",
    "jan", "feb", "mar", "apr", "jun", "jul", "aug", "sep", "sept", "oct", "nov", "dec",
)

# Words that open a sentence, used after a multi-period abbreviation ("in the U.S.
# How ...") to tell a boundary from a name ("the U.S. Government").
SENTENCE_STARTERS: frozenset[str] = frozenset(
    "A An The This That These Those It Its He She They We I You There Here How What When Where Why Who "
    "However In On At As After Before But And If For All Our Some Each Work No Further Also".split()
)
