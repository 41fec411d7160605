"""Input errors with source locations.

Every problem the readers find is an :class:`InputError` carrying a
:class:`Span` (file, line, column; lines and columns count from 1).  The
message is plain words; :func:`InputError.render` adds the ``file:line:col``
prefix, the offending line and a caret under the column.

Everything rendered passes through :func:`visible`: control characters and
other non-printing characters from the input (an escape sequence, a bidi
override) are shown as a visible single-column stand-in, so reading someone
else's file cannot rewrite the terminal and the caret keeps its column.
"""

from __future__ import annotations

from dataclasses import dataclass


def _stand_in(ch: str) -> str:
    c = ord(ch)
    if c < 0x20:
        return chr(0x2400 + c)          # the control pictures: U+241B for ESC
    if c == 0x7F:
        return "\u2421"                 # DEL
    return "?"                          # C1, bidi controls, other non-printing


def visible(text: str) -> str:
    """``text`` with every character that does not print (C0 controls except
    tab, DEL, C1, format characters such as the bidi overrides U+202A-U+202E
    and U+2066-U+2069, separators other than the space, unassigned code
    points, lone surrogates) replaced by one visible character each."""
    if text.isprintable():
        return text
    return "".join(ch if ch.isprintable() or ch == "\t" else _stand_in(ch)
                   for ch in text)


@dataclass(frozen=True, slots=True)
class Span:
    file: str
    line: int
    col: int

    def __str__(self) -> str:
        return f"{self.file}:{self.line}:{self.col}"


class InputError(Exception):
    """A problem with what the user wrote.  Never a bug in Nightjar."""

    def __init__(self, message: str, span: Span | None = None,
                 line_text: str | None = None, hint: str | None = None):
        super().__init__(message)
        self.message = message
        self.span = span
        self.line_text = line_text
        self.hint = hint

    def render(self) -> str:
        """``file:line:col: error: message`` + source line + caret (+ hint)."""
        where = f"{visible(str(self.span))}: " if self.span else ""
        out = [f"{where}error: {visible(self.message)}"]
        if self.line_text is not None and self.span is not None:
            # one character per column: tabs become one space, what does not
            # print becomes one visible stand-in
            text = visible(self.line_text.rstrip("\n").rstrip("\r").expandtabs(1))
            if len(text) > 200:   # keep very long lines readable
                lo = max(0, self.span.col - 100)
                text = text[lo:lo + 200]
                col = self.span.col - lo
            else:
                col = self.span.col
            out.append(f"    {text}")
            out.append("    " + " " * max(0, col - 1) + "^")
        if self.hint:
            out.append(f"    hint: {visible(self.hint)}")
        return "\n".join(out)

    def to_json(self) -> dict:
        return {
            "message": visible(self.message),
            "file": visible(self.span.file) if self.span else None,
            "line": self.span.line if self.span else None,
            "col": self.span.col if self.span else None,
            "text": self.render(),
        }

    def __str__(self) -> str:
        return self.render()


class LimitError(InputError):
    """The input crosses a documented limit (size, nesting depth, ...)."""
