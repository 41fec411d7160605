"""Reading problems: the public interface of the syntax package.

* :func:`load_problem` reads a main file and its includes through a ``read``
  function (sans-I/O), :func:`load_bundle` a stored bundle; :func:`disk_reader`
  and :func:`bundle_reader` make such functions; :func:`collect_bundle`
  gathers the files of a problem on the user's side.
* :func:`parse_text` reads one self-contained text.
* :func:`require_conjecture` refuses a problem without a conjecture.

See DEVELOPERS.md, "Reading problems".
"""

from __future__ import annotations

import gc
import os
import sys

from .errors import InputError, LimitError, Span
from .formulas import (FALSE, TRUE, And, Atom, Const, Formula, Iff, Implies, Not, Or,
                       Problem, Quant, Statement, Symbol)
from .includes import Loader, bundle_reader, collect_bundle, detect_language, disk_reader
from .lexer import MAX_BUNDLE_CHARS, MAX_DEPTH, MAX_FILE_CHARS, MAX_INCLUDE_DEPTH, Source

# The parser refuses nesting deeper than MAX_DEPTH (1,000) levels; the passes
# after it (printer, clausifier, ...) recurse over formulas, a few Python
# frames per level, so the interpreter's limit is raised once to leave room.
RECURSION_LIMIT = 20_000
if sys.getrecursionlimit() < RECURSION_LIMIT:
    sys.setrecursionlimit(RECURSION_LIMIT)

__all__ = [
    "load_problem", "load_bundle", "parse_text", "disk_reader", "bundle_reader", "collect_bundle",
    "require_conjecture", "detect_language", "InputError", "LimitError", "Span",
    "Problem", "Statement", "Symbol", "Formula", "Atom", "Const", "Not", "And", "Or",
    "Implies", "Iff", "Quant", "TRUE", "FALSE", "MAX_DEPTH", "MAX_FILE_CHARS",
    "MAX_BUNDLE_CHARS", "MAX_INCLUDE_DEPTH",
]


def _guard(fn, *a):
    # Reading builds millions of small objects and no reference cycles; the
    # cyclic garbage collector would rescan the growing heap again and again
    # (measured: a 5 MB file in 8 s with it, under 3 s without), so it is
    # paused while reading.
    was = gc.isenabled()
    gc.disable()
    try:
        return fn(*a)
    except RecursionError:
        raise LimitError("the input is nested too deeply to be read "
                         f"(the limit is {MAX_DEPTH:,} levels)") from None
    finally:
        if was:
            gc.enable()


def load_problem(main: str | None, read=None, *, language: str | None = None,
                 include_root: str | None = None, context=None) -> Problem:
    """Read ``main`` and every file it includes through ``read(path) -> str``
    (default: the local disk).  ``language`` forces ``"native"`` or ``"tptp"``
    for every file; ``None`` tells them apart from the text (then the file
    ending).  ``include_root`` (default: the environment variable
    ``NIGHTJAR_TPTP_ROOT``) is the second place an include is looked for.
    ``context``: names of files read after ``main`` as if it ended with an
    include of each (shared axioms), with no text added to ``main``, so its
    errors are at its own lines; ``main`` None reads the context alone."""
    if read is None:
        read = disk_reader()
    if include_root is None:
        include_root = os.environ.get("NIGHTJAR_TPTP_ROOT") or None
    return _guard(Loader(read, language, include_root).load, main, context or ())


def load_bundle(bundle: dict, library: str | None = None) -> Problem:
    """Read a bundle ``{"main", "files", "language"?, "context"?}`` (what
    the service stores for a job) from its own files: the one way the API's
    check, the worker and the console read a stored problem."""
    return load_problem(bundle["main"], bundle_reader(bundle["files"], library),
                        language=bundle.get("language"), context=bundle.get("context"))


def parse_text(text: str, name: str = "<input>", language: str | None = None) -> Problem:
    """Read one self-contained text (an include in it is an error)."""
    def read(path):
        raise InputError(f"'{path}' cannot be included: this text is read on its own "
                         f"(use load_problem with a reader)")
    return _guard(Loader(read, language).parse_text, name, text)


def require_conjecture(problem: Problem) -> None:
    """An InputError unless the problem has at least one conjecture."""
    if problem.conjectures():
        return
    raise InputError(f"'{problem.main}' has no conjecture, and one is required here",
                     Span(problem.main, 1, 1), None,
                     "add a statement such as: conjecture c1: FORMULA "
                     "(in TPTP: fof(c1, conjecture, FORMULA).)")
