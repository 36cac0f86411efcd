"""Whether a guide-phrase match sits inside a negated statement.

"No water quality failures resulted from the incident" contains the cause phrase
"resulted from" but states that nothing happened; it answers no aspect.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

# Words that negate what follows them in the same clause.
NEGATION_TRIGGERS = ("no", "not", "never", "none", "nothing", "neither", "nor", "without", "nobody", "cannot")
# Words and marks that end a negation's scope: a new clause starts.
SCOPE_ENDS = ("but", "however", "although", "though", "whereas", "while", "except", "yet", "instead")

_WORD = re.compile(r"[A-Za-z]+(?:'[A-Za-z]+)?|[,;:()]|[.!?](?=\s|$)|\s[-–—]\s")


@dataclass
class NegationScope:
    """A match is negated when a negation trigger stands before it in the same clause
    with at most ``window`` words between the trigger and the match.

    This is the pre-negation rule of NegEx (Chapman et al. 2001, "A simple algorithm
    for identifying negated findings and diseases in discharge summaries", recalled
    from memory): a trigger ("no", "not",
    "never", "without", any "…n't") negates the terms that follow it, up to a
    termination term ("but", "however", …) or a clause mark (``, ; : . ( )`` or a
    dash). NegEx's window was five words; report prose puts longer phrases between
    ("No customers lost supply for more than 12 hours as a result of …"), so ours is
    eight. Triggers and terminations are our own short lists for report prose. A
    trigger inside the match itself ("not yet") does not negate it.
    """

    window: int = 8

    def negated(self, text: str, start: int) -> bool:
        """Whether the phrase matched at character ``start`` of ``text`` is negated."""
        tokens = [(m.group().strip().lower(), m.end()) for m in _WORD.finditer(text, 0, start)]
        tokens = [(token, end) for token, end in tokens if end <= start]
        between = 0
        for token, _end in reversed(tokens):
            if not token[0].isalpha() or token in SCOPE_ENDS:
                return False
            if token in NEGATION_TRIGGERS or token.endswith("n't"):
                return True
            between += 1
            if between > self.window:
                return False
        return False
