"""Exclude patterns: parts of an archive the walk leaves alone.

Patterns come from ``--exclude`` (repeatable), the job file's ``exclude`` list and an
optional file named ``.summarize-exclude`` at the top of each archive folder given to a
run. That file holds one pattern per line; blank lines and lines starting with ``#``
are ignored; surrounding white space is dropped. Nothing in it can re-include a path.

A pattern is matched against the path below the archive folder, with ``/`` between
its parts, case-sensitively:

* ``*`` matches any run of characters within one part, ``?`` one character,
  ``[abc]`` / ``[!abc]`` one character of (not of) a set (Python's ``fnmatch``);
* a pattern without ``/`` is matched against every part of the path, so ``drafts``
  leaves out a folder of that name anywhere (and all below it) and ``*.tmp`` any
  file so named;
* a pattern with ``/`` is matched from the archive folder down: ``scans/2019`` leaves
  out that one folder, ``scans/*/raw`` every ``raw`` folder one level below
  ``scans``; a part ``**`` stands for any number of folders (none included), so
  ``**/raw`` is any ``raw`` folder anywhere;
* an absolute pattern (``/srv/archive/drafts``) is matched against the absolute path;
* a trailing ``/`` limits a pattern to folders (``tmp/`` leaves a file named ``tmp``).

A file given to the run by its own name is always read: patterns apply to what the
walk finds inside folders. (Common practice for include/exclude globs; the grammar
and the file name are this project's own.)
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from dataclasses import dataclass
from fnmatch import fnmatchcase
from pathlib import Path

EXCLUDE_FILE_NAME = ".summarize-exclude"


class BadExcludePattern(ValueError):
    """A pattern that cannot mean anything; ``str()`` says which and why."""


@dataclass(frozen=True)
class ExcludePattern:
    """One parsed pattern: its parts, whether it is anchored (has a ``/``) or
    absolute, and whether it matches folders only."""

    text: str
    parts: tuple[str, ...]
    anchored: bool
    absolute: bool
    folders_only: bool

    @classmethod
    def parse(cls, text: str) -> ExcludePattern:
        pattern = text.strip()
        folders_only = pattern.endswith("/")
        body = pattern.rstrip("/")
        if not body:
            raise BadExcludePattern(f"exclude pattern {text!r} is empty")
        absolute = body.startswith("/")
        parts = tuple(part for part in body.split("/") if part not in ("", "."))
        if not parts:
            raise BadExcludePattern(f"exclude pattern {text!r} names no file or folder")
        for part in parts:
            if "**" in part and part != "**":
                raise BadExcludePattern(f"exclude pattern {text!r}: '**' must be a whole part between slashes")
            if part == "..":
                raise BadExcludePattern(f"exclude pattern {text!r}: '..' cannot match anything inside the archive")
        return cls(pattern, parts, anchored="/" in body, absolute=absolute, folders_only=folders_only)

    def matches(self, relative: tuple[str, ...], absolute: tuple[str, ...], is_folder: bool = False) -> bool:
        """Whether the path (its parts below the archive folder, and all its parts)
        or one of the folders above it is matched."""
        parts = absolute if self.absolute else relative
        # A file's path of n parts: its first n - 1 prefixes are folders, the whole is the file.
        last = len(parts) - 1 if self.folders_only and not is_folder else len(parts)
        if not self.anchored:
            return any(fnmatchcase(part, self.parts[0]) for part in parts[:last])
        return any(_match_parts(self.parts, parts[:end]) for end in range(1, last + 1))


def _match_parts(pattern: tuple[str, ...], parts: tuple[str, ...]) -> bool:
    """The whole of ``parts`` matches ``pattern`` part for part, ``**`` taking any
    number of parts."""
    if not pattern:
        return not parts
    head, rest = pattern[0], pattern[1:]
    if head == "**":
        return any(_match_parts(rest, parts[skip:]) for skip in range(len(parts) + 1))
    return bool(parts) and fnmatchcase(parts[0], head) and _match_parts(rest, parts[1:])


class ExclusionRules:
    """The patterns in force below one archive folder: ``excludes(path)`` is True when
    the path, or a folder above it within the archive folder, matches one of them."""

    def __init__(self, root: str | Path, patterns: Iterable[ExcludePattern] = ()):
        self.root = Path(root)
        self.patterns = tuple(patterns)

    @classmethod
    def for_root(cls, root: str | Path, given: Iterable[str] = ()) -> tuple[ExclusionRules, list[tuple[str, str]]]:
        """The given patterns plus those of the folder's ``.summarize-exclude``; also
        the file's problems as (path, one-line reason): an unreadable file, or a line
        that is not a pattern (that line alone is ignored). ``given`` patterns are
        expected to be checked already (:func:`check_patterns`)."""
        patterns = [ExcludePattern.parse(text) for text in given]
        problems: list[tuple[str, str]] = []
        exclude_file = Path(root) / EXCLUDE_FILE_NAME
        if exclude_file.is_file():
            try:
                lines = exclude_file.read_text(encoding="utf-8").splitlines()
            except (OSError, UnicodeDecodeError) as error:
                problems.append((str(exclude_file), f"cannot read exclude patterns ({error})"))
                lines = []
            for number, line in enumerate(lines, start=1):
                text = line.strip()
                if not text or text.startswith("#"):
                    continue
                try:
                    patterns.append(ExcludePattern.parse(text))
                except BadExcludePattern as error:
                    problems.append((str(exclude_file), f"line {number}: {error}"))
        return cls(root, patterns), problems

    def excludes(self, path: str | Path, is_folder: bool = False) -> bool:
        if not self.patterns:
            return False
        path = Path(os.path.abspath(path))
        try:
            relative = path.relative_to(self.root).parts
        except ValueError:
            return False
        return any(pattern.matches(relative, path.parts[1:], is_folder) for pattern in self.patterns)


@dataclass(frozen=True)
class ArchiveExclusions:
    """The exclusions in force over all of a run's archive folders, each folder with
    its own rules, and the problems met reading their exclude files."""

    rules: tuple[ExclusionRules, ...] = ()
    problems: tuple[tuple[str, str], ...] = ()

    @classmethod
    def load(cls, roots: Iterable[str | Path], given: Iterable[str] = ()) -> ArchiveExclusions:
        given = list(given)
        rules, problems = [], []
        for root in roots:
            if Path(root).is_dir():
                folder_rules, folder_problems = ExclusionRules.for_root(root, given)
                rules.append(folder_rules)
                problems.extend(folder_problems)
        return cls(tuple(rules), tuple(problems))

    def excludes(self, path: str | Path, is_folder: bool = False) -> bool:
        return any(rule.excludes(path, is_folder) for rule in self.rules)


def check_patterns(patterns: Iterable[str]) -> list[str]:
    """The patterns as given, once each is known to parse; raises
    :class:`BadExcludePattern` for the first that does not."""
    patterns = list(patterns)
    for text in patterns:
        ExcludePattern.parse(text)
    return patterns
