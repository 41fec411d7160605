"""Symbol checking across a whole problem (main file and includes).

Every use of a name as a function/constant or as a predicate goes through
:meth:`SymbolTable.use`; the first use fixes the kind and the arity, and a
later use that disagrees is an :class:`InputError` at that use, naming where
the first one was.
"""

from __future__ import annotations

from .errors import InputError
from .formulas import Symbol


def describe_use(kind: str, arity: int) -> str:
    if kind == "function":
        if arity == 0:
            return "a constant"
        return f"a function of {arity} argument{'s' if arity != 1 else ''}"
    if arity == 0:
        return "a propositional atom (a predicate without arguments)"
    return f"a predicate of {arity} argument{'s' if arity != 1 else ''}"


class SymbolTable:
    """name -> (kind, arity, source, offset) of its first use."""

    __slots__ = ("first",)

    def __init__(self):
        self.first: dict = {}

    def use(self, name: str, kind: str, arity: int, src, offset: int) -> None:
        e = self.first.get(name)
        if e is None:
            self.first[name] = (kind, arity, src, offset)
            return
        if e[0] == kind and e[1] == arity:
            return
        raise self.clash(name, kind, arity, src, offset, e)

    @staticmethod
    def clash(name, kind, arity, src, offset, e) -> InputError:
        k0, a0, src0, off0 = e
        where = src0.span(off0)
        if k0 != kind:
            what = "as both a function and a predicate"
        else:
            what = "with two arities"
        return src.error(
            f"'{name}' is used here as {describe_use(kind, arity)}, but at "
            f"{where} as {describe_use(k0, a0)}; a name cannot be used {what}",
            offset,
            "rename one of the two symbols")

    def signature(self) -> dict:
        return {n: Symbol(n, e[0], e[1]) for n, e in self.first.items()}
