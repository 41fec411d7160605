"""Tokenizers for the native language and TPTP, and source positions.

Both tokenizers are one compiled regular expression each, run with
``finditer``; a token is three parallel list entries (kind, text, offset) so a
5 MB file becomes a few flat lists instead of millions of objects.  Lines and
columns are computed only when needed (errors, statement spans) from the list
of line-start offsets.
"""

from __future__ import annotations

import bisect
import re

from .errors import InputError, LimitError, Span

# Documented limits (DEVELOPERS.md "Reading problems").
MAX_FILE_CHARS = 20_000_000        # per file (20 MB)
MAX_BUNDLE_CHARS = 50_000_000      # main file and all its includes (50 MB)
MAX_DEPTH = 1000                   # nesting of formulas and of terms
MAX_INCLUDE_DEPTH = 64             # include chains


class Source:
    """One file's text, with offset -> line/column conversion."""

    __slots__ = ("name", "text", "_starts")

    def __init__(self, name: str, text: str):
        self.name = name
        self.text = text
        self._starts = None

    def starts(self) -> list:
        if self._starts is None:
            st = [0]
            find = self.text.find
            i = find("\n")
            while i >= 0:
                st.append(i + 1)
                i = find("\n", i + 1)
            self._starts = st
        return self._starts

    def linecol(self, offset: int) -> tuple[int, int]:
        st = self.starts()
        ln = bisect.bisect_right(st, offset) - 1
        return ln + 1, offset - st[ln] + 1

    def span(self, offset: int) -> Span:
        ln, col = self.linecol(offset)
        return Span(self.name, ln, col)

    def line_text(self, offset: int) -> str:
        st = self.starts()
        ln = bisect.bisect_right(st, offset) - 1
        end = self.text.find("\n", st[ln])
        return self.text[st[ln]:] if end < 0 else self.text[st[ln]:end]

    def line(self, n: int) -> str | None:
        """The text of line ``n`` (from 1), or None."""
        st = self.starts()
        if not 1 <= n <= len(st):
            return None
        return self.line_text(st[n - 1])

    def error(self, message: str, offset: int, hint: str | None = None,
              cls=InputError) -> InputError:
        offset = max(0, min(offset, len(self.text)))
        return cls(message, self.span(offset), self.line_text(offset), hint)


def check_size(src: Source) -> None:
    n = len(src.text)
    if n > MAX_FILE_CHARS:
        raise LimitError(
            f"the file is {n:,} characters long; the limit is "
            f"{MAX_FILE_CHARS:,} characters (20 MB) per file",
            Span(src.name, 1, 1), None,
            "split the problem into several files joined by includes "
            "(at most 50 MB in all)")


def describe(kind: str, text: str) -> str:
    """How a token is named in error messages."""
    if kind == "eof":
        return "the end of the file"
    if kind == "name":
        return f"the name '{text}'"
    if kind == "var":
        return f"the variable '{text}'"
    if kind == "string":
        return f"the string {text}"
    if kind == "quoted":
        return f"the quoted name {text}"
    if kind == "num":
        return f"the number {text}"
    return f"'{text}'"


def unknown_char(src: Source, offset: int) -> InputError:
    ch = src.text[offset]
    if ch in "\"'":
        return src.error(f"unterminated quote {ch}: the closing {ch} is "
                         "missing on this line", offset)
    return src.error(f"unknown character '{ch}' (U+{ord(ch):04X})", offset,
                     "see DEVELOPERS.md, 'The native problem language', for "
                     "the symbols the language uses")


# ------------------------------------------------------------ native tokens

NATIVE_KEYWORDS = {
    "axiom", "hypothesis", "conjecture", "negated_conjecture", "include",
    "forall", "exists", "not", "and", "or", "implies", "iff", "true", "false",
}
STATEMENT_KEYWORDS = ("axiom", "hypothesis", "conjecture", "negated_conjecture")

_NATIVE_OPS = {
    "<->": "iff", "↔": "iff", "->": "implies", "→": "implies",
    "|": "or", "∨": "or", "&": "and", "∧": "and", "~": "not", "¬": "not",
    "∀": "forall", "∃": "exists", "!=": "!=", "≠": "!=", "=": "=",
    "*": "*", "+": "+", "(": "(", ")": ")", ",": ",", ".": ".", ":": ":",
}

_NATIVE_RE = re.compile(r"""
   (?P<ws>[ \t\r\n\f\v]+)
 | (?P<comment>\#[^\n]*)
 | (?P<name>[^\W\d]\w*)
 | (?P<num>[0-9]+)
 | (?P<quoted>'(?:[^'\\\n]|\\.)*')
 | (?P<string>"(?:[^"\\\n]|\\.)*")
 | (?P<foreign><=>|<~>|=>|<=|==)
 | (?P<op><->|->|!=|[↔→∨∧¬∀∃≠~&|=*+(),.:])
 | (?P<bad>.)
""", re.VERBOSE | re.DOTALL)

# Operators of other notations (TPTP, programming languages) that people type
# out of habit: the error says what the native language writes instead.
_FOREIGN = {
    "=>": "write 'implies' (or '->', '→')",
    "<=>": "write 'iff' (or '<->', '↔')",
    "<=": "for 'p <= q' write 'q implies p' (or 'q -> p')",
    "<~>": "for 'p <~> q' write 'not (p iff q)'",
    "==": "an equation is written with one '=': s = t",
}


def foreign_operator(src: Source, offset: int, op: str) -> InputError:
    return src.error(f"'{op}' is not an operator here; {_FOREIGN[op]}", offset,
                     "the connectives are not, and, or, implies, iff (also written "
                     "~ & | -> <-> and ¬ ∧ ∨ → ↔); see DEVELOPERS.md, 'The native "
                     "problem language'")


def tokenize_native(src: Source):
    """Return (kinds, texts, offsets); the last token is ``eof``."""
    kinds, texts, offs = [], [], []
    ka, ta, oa = kinds.append, texts.append, offs.append
    kw = NATIVE_KEYWORDS
    ops = _NATIVE_OPS
    for m in _NATIVE_RE.finditer(src.text):
        g = m.lastgroup
        if g == "ws" or g == "comment":
            continue
        s = m.group()
        if g == "name":
            ka(s if s in kw else "name")
        elif g == "op":
            ka(ops[s])
        elif g == "bad":
            raise unknown_char(src, m.start())
        elif g == "foreign":
            raise foreign_operator(src, m.start(), s)
        else:
            ka(g)
        ta(s)
        oa(m.start())
    end = offs[-1] + len(texts[-1]) if offs else 0   # just after the last token
    ka("eof")
    ta("")
    oa(end)
    return kinds, texts, offs


def unquote(s: str) -> str:
    """The content of a quoted name or string: ``\\\\`` and ``\\'`` escapes."""
    body = s[1:-1]
    if "\\" not in body:
        return body
    out = []
    i = 0
    while i < len(body):
        c = body[i]
        if c == "\\" and i + 1 < len(body):
            out.append(body[i + 1])
            i += 2
        else:
            out.append(c)
            i += 1
    return "".join(out)


_CODE_POINT = re.compile(r"\{([0-9A-Fa-f]{1,6})\}")


def unquote_native(s: str) -> str:
    """The content of a native quoted name or string: ``\\\\``, ``\\'``,
    ``\\"`` and ``\\u{HEX}`` (the character with that code point, how the
    printer writes characters that do not print).  A malformed ``\\u{`` is a
    ``ValueError(offset in s, message)``."""
    body = s[1:-1]
    if "\\" not in body:
        return body
    out = []
    i = 0
    n = len(body)
    while i < n:
        c = body[i]
        if c == "\\" and i + 1 < n:
            d = body[i + 1]
            if d == "u" and body.startswith("{", i + 2):
                m = _CODE_POINT.match(body, i + 2)
                if m is None or int(m.group(1), 16) > 0x10FFFF:
                    raise ValueError(i + 1, "a character escape is written \\u{HEX}, "
                                     "1 to 6 hexadecimal digits up to 10FFFF")
                out.append(chr(int(m.group(1), 16)))
                i = m.end()
                continue
            out.append(d)
            i += 2
        else:
            out.append(c)
            i += 1
    return "".join(out)


# -------------------------------------------------------------- TPTP tokens

_TPTP_RE = re.compile(r"""
   (?P<ws>\s+)
 | (?P<comment>%[^\n]*|/\*.*?\*/)
 | (?P<badcomment>/\*)
 | (?P<lower>[a-z][A-Za-z0-9_]*)
 | (?P<var>[A-Z][A-Za-z0-9_]*)
 | (?P<dollar>\$\$?[A-Za-z_][A-Za-z0-9_]*)
 | (?P<quoted>'(?:[^'\\\n]|\\.)*')
 | (?P<distinct>"(?:[^"\\\n]|\\.)*")
 | (?P<num>[+-]?[0-9]+(?:/[0-9]+|(?:\.[0-9]+)?(?:[eE][+-]?[0-9]+)?))
 | (?P<op><~>|<=>|=>|<=|~\||~&|!=|-->|:=|[~&|=!?()\[\],.:])
 | (?P<other>[-+*@^<>#;{}]+)
 | (?P<bad>.)
""", re.VERBOSE | re.DOTALL)


def tokenize_tptp(src: Source):
    """Return (kinds, texts, offsets); kinds are ``lower``, ``var``,
    ``dollar``, ``quoted``, ``distinct``, ``num``, the operator text itself,
    ``other`` or ``eof``."""
    kinds, texts, offs = [], [], []
    ka, ta, oa = kinds.append, texts.append, offs.append
    for m in _TPTP_RE.finditer(src.text):
        g = m.lastgroup
        if g == "ws" or g == "comment":
            continue
        s = m.group()
        if g == "op":
            ka(s)
        elif g == "bad":
            raise unknown_char(src, m.start())
        elif g == "badcomment":
            raise src.error("unterminated comment: '/*' without a closing '*/'",
                            m.start())
        else:
            ka(g)
        ta(s)
        oa(m.start())
    end = offs[-1] + len(texts[-1]) if offs else 0   # just after the last token
    ka("eof")
    ta("")
    oa(end)
    return kinds, texts, offs
