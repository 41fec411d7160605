"""What the native and the TPTP parser share: a position in a token list
(``k`` kinds, ``t`` texts, ``o`` offsets, ``i`` the current token, ``src``
the Source), the variable bookkeeping both keep, and the pieces of error
reporting and argument-list reading that read alike in both languages
(``missing_argument``, ``next_argument``).

A subclass supplies ``found(i=None)`` (how a token is named in its
language) and ``unbalanced()`` (the prefix for a missing ')' where its
statements end).
"""

from __future__ import annotations


class TokenCursor:
    def __init__(self, src, symbols, on_include, tokenize):
        self.src = src
        self.symbols = symbols
        self.on_include = on_include
        self.k, self.t, self.o = tokenize(src)
        self.i = 0
        self.depth = 0
        self.scope: dict = {}       # name -> bound variable
        self.varnames: dict = {}    # variable -> the user's name
        self.nvars = 0
        self.includes = 0

    def err(self, message, i=None, hint=None, cls=None):
        """An InputError at token ``i`` (default: the current token)."""
        off = self.o[self.i if i is None else i]
        if cls is None:
            return self.src.error(message, off, hint)
        return self.src.error(message, off, hint, cls)

    def where(self, i) -> str:
        ln, col = self.src.linecol(self.o[i])
        return f"line {ln}, column {col}"

    def missing_argument(self, name, open_i):
        """The error when no argument of ``name(...)`` (its '(' at token
        ``open_i``) starts at the current token: it names the token just
        before the gap (the '(' or a ','), not the '('."""
        before = self.i - 1
        at = "" if before == open_i else f" (at {self.where(before)})"
        return self.err(f"{self.unbalanced()}missing argument: expected an argument "
                        f"of '{name}' after the '{self.t[before]}'{at}, found "
                        f"{self.found()}")

    def next_argument(self, name, open_i) -> bool:
        """After an argument of ``name(...)`` (its '(' at token ``open_i``):
        step over ',' and answer True (another argument follows) or over ')'
        and answer False (the list is closed); anything else is the error."""
        kind = self.k[self.i]
        if kind == ",":
            self.i += 1
            return True
        if kind == ")":
            self.i += 1
            return False
        raise self.err(f"{self.unbalanced()}expected ',' or ')' in the arguments "
                       f"of '{name}' (opened at {self.where(open_i)}), found "
                       f"{self.found()}")
