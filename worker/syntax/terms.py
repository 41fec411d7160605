"""Terms: the hot data of the whole engine.

Representation (chosen by measurement, see DEVELOPERS.md "Terms"):

* a variable is a small non-negative ``int``;
* a constant is a ``str`` (interned symbol name);
* an application ``f(t1, ..., tn)`` is a ``tuple`` ``(f, t1, ..., tn)`` whose
  first element is the interned symbol name.

Atoms use the same shape: ``p(t1, ..., tn)`` is ``('p', t1, ..., tn)``, a
propositional atom is a plain ``str`` and an equation ``l = r`` is
``('=', l, r)``.  A literal is ``(sign, atom)`` with ``sign`` a ``bool``.

Tuples and ints are built, hashed and compared in C, so the common operations
(substitution, equality, hashing for indexes) stay cheap in CPython.  The type
tests below are the idiom used everywhere: ``type(t) is int`` for a variable,
``type(t) is str`` for a constant.
"""

from __future__ import annotations

import sys
from typing import Iterator, Union

Term = Union[int, str, tuple]

EQ = "="

_intern = sys.intern


def intern(name: str) -> str:
    """Intern a symbol name so equal symbols are identical objects."""
    return _intern(name)


def is_var(t: Term) -> bool:
    return type(t) is int


def is_const(t: Term) -> bool:
    return type(t) is str


def head(t: Term) -> str | None:
    """The symbol at the root of ``t`` (None for a variable)."""
    tt = type(t)
    if tt is tuple:
        return t[0]
    if tt is str:
        return t
    return None


def args(t: Term) -> tuple:
    return t[1:] if type(t) is tuple else ()


def app(f: str, *a: Term) -> Term:
    """Build ``f(a...)``; a constant when there are no arguments."""
    return (f, *a) if a else f


def apply(t: Term, s: dict) -> Term:
    """Apply substitution ``s`` (variable -> term), fully dereferencing
    bindings (``s`` may be triangular, as produced by unification)."""
    tt = type(t)
    if tt is int:
        b = s.get(t)
        if b is None:
            return t
        return apply(b, s) if type(b) is not str else b
    if tt is str:
        return t
    return (t[0], *[apply(a, s) for a in t[1:]])


def rename(t: Term, offset: int) -> Term:
    """Shift every variable of ``t`` by ``offset``."""
    tt = type(t)
    if tt is int:
        return t + offset
    if tt is str:
        return t
    return (t[0], *[rename(a, offset) for a in t[1:]])


def variables(t: Term, acc: set | None = None) -> set:
    """The set of variables occurring in ``t``."""
    if acc is None:
        acc = set()
    stack = [t]
    while stack:
        x = stack.pop()
        tx = type(x)
        if tx is int:
            acc.add(x)
        elif tx is tuple:
            stack.extend(x[1:])
    return acc


def is_ground(t: Term) -> bool:
    tt = type(t)
    if tt is int:
        return False
    if tt is str:
        return True
    return all(is_ground(a) for a in t[1:])


def occurs(v: int, t: Term) -> bool:
    tt = type(t)
    if tt is int:
        return t == v
    if tt is str:
        return False
    return any(occurs(v, a) for a in t[1:])


def size(t: Term) -> int:
    """Number of symbol and variable occurrences."""
    tt = type(t)
    if tt is tuple:
        n = 1
        for a in t[1:]:
            n += size(a)
        return n
    return 1


def depth(t: Term) -> int:
    if type(t) is tuple:
        return 1 + max(depth(a) for a in t[1:])
    return 0


def subterms(t: Term) -> Iterator[tuple[tuple, Term]]:
    """Yield ``(position, subterm)`` pairs, root first.  A position is a tuple
    of argument indexes counted from 1 (as in ``t[i]``)."""
    stack = [((), t)]
    while stack:
        pos, x = stack.pop()
        yield pos, x
        if type(x) is tuple:
            for i in range(len(x) - 1, 0, -1):
                stack.append((pos + (i,), x[i]))


def at(t: Term, pos: tuple | list) -> Term:
    """The subterm of ``t`` at position ``pos``."""
    for i in pos:
        t = t[i]
    return t


def replace_at(t: Term, pos: tuple | list, new: Term) -> Term:
    """``t`` with the subterm at ``pos`` replaced by ``new``."""
    if not pos:
        return new
    i = pos[0]
    return t[:i] + (replace_at(t[i], pos[1:], new),) + t[i + 1:]


def symbols(t: Term, acc: dict | None = None) -> dict:
    """Map every function symbol in ``t`` to its arity."""
    if acc is None:
        acc = {}
    stack = [t]
    while stack:
        x = stack.pop()
        tx = type(x)
        if tx is str:
            acc[x] = 0
        elif tx is tuple:
            acc[x[0]] = len(x) - 1
            stack.extend(x[1:])
    return acc


def normalize_vars(terms: list | tuple, start: int = 0) -> tuple[list, dict]:
    """Rename the variables of ``terms`` to ``start, start+1, ...`` in order of
    first occurrence (left to right).  Returns the renamed terms and the map."""
    mapping: dict[int, int] = {}
    return [_renumber(t, mapping, start) for t in terms], mapping


def _renumber(t, mapping: dict, start: int):
    # a module-level function, not a closure calling itself: such a closure
    # is a reference cycle (function <-> cell) that only the cyclic garbage
    # collector frees, and the engine renumbers every clause it makes
    tt = type(t)
    if tt is int:
        v = mapping.get(t)
        if v is None:
            v = mapping[t] = start + len(mapping)
        return v
    if tt is str:
        return t
    return (t[0], *[_renumber(a, mapping, start) for a in t[1:]])


# ---------------------------------------------------------------- JSON form

def to_json(t: Term):
    """JSON form: variable -> int, constant -> str, application -> list."""
    if type(t) is tuple:
        return [t[0], *[to_json(a) for a in t[1:]]]
    return t


def from_json(j) -> Term:
    if type(j) is list:
        if not j or type(j[0]) is not str:
            raise ValueError(f"bad term in JSON: {j!r}")
        return (_intern(j[0]), *[from_json(a) for a in j[1:]])
    if type(j) is str:
        return _intern(j)
    if type(j) is int and j >= 0:
        return j
    raise ValueError(f"bad term in JSON: {j!r}")


def literal_to_json(lit):
    sign, atom = lit
    return [bool(sign), to_json(atom)]


def literal_from_json(j):
    if type(j) is not list or len(j) != 2 or type(j[0]) is not bool:
        raise ValueError(f"bad literal in JSON: {j!r}")
    return (j[0], from_json(j[1]))


def clause_to_json(lits) -> list:
    return [literal_to_json(l) for l in lits]


def clause_from_json(j) -> tuple:
    if type(j) is not list:
        raise ValueError(f"bad clause in JSON: {j!r}")
    return tuple(literal_from_json(x) for x in j)
