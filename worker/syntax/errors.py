"""Input errors with source locations.

Every problem the readers find is an :class:`InputError` carrying a
:class:`Span` (file, line, column; lines and columns count from 1).  The
message is plain words; :func:`InputError.render` adds the ``file:line:col``
prefix, the offending line and a caret under the column.
"""

from __future__ import annotations

from dataclasses import dataclass


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
        where = f"{self.span}: " if self.span else ""
        out = [f"{where}error: {self.message}"]
        if self.line_text is not None and self.span is not None:
            text = self.line_text.rstrip("\n").expandtabs(1)
            if len(text) > 200:   # keep very long lines readable
                lo = max(0, self.span.col - 100)
                text = text[lo:lo + 200]
                col = self.span.col - lo
            else:
                col = self.span.col
            out.append(f"    {text}")
            out.append("    " + " " * max(0, col - 1) + "^")
        if self.hint:
            out.append(f"    hint: {self.hint}")
        return "\n".join(out)

    def to_json(self) -> dict:
        return {
            "message": self.message,
            "file": self.span.file if self.span else None,
            "line": self.span.line if self.span else None,
            "col": self.span.col if self.span else None,
            "text": self.render(),
        }

    def __str__(self) -> str:
        return self.render()


class LimitError(InputError):
    """The input crosses a documented limit (size, nesting depth, ...)."""
