"""Unification and matching on the term representation of
:mod:`worker.syntax.terms`.

Substitutions are plain dicts from variable (int) to term.  A unifier is
*triangular*: a binding may mention variables that are themselves bound;
:func:`worker.syntax.terms.apply` dereferences fully.  A matcher (one-way)
maps pattern variables to subterms of the target and is applied with
:func:`instantiate`, which does not dereference, so pattern and target may
share variable numbers.
"""

from __future__ import annotations

from worker.syntax.terms import apply  # noqa: F401  (re-exported for callers)


def deref(t, s: dict):
    """Follow variable bindings of ``t`` in ``s`` until an unbound variable or a
    non-variable term."""
    while type(t) is int:
        b = s.get(t)
        if b is None:
            return t
        t = b
    return t


def occurs(v: int, t, s: dict) -> bool:
    """Does variable ``v`` occur in ``t`` under the triangular substitution ``s``?"""
    stack = [t]
    while stack:
        x = stack.pop()
        tx = type(x)
        if tx is int:
            if x == v:
                return True
            b = s.get(x)
            if b is not None:
                stack.append(b)
        elif tx is tuple:
            stack.extend(x[1:])
    return False


def unify(a, b, s: dict) -> bool:
    """Extend ``s`` to a most general unifier of ``a`` and ``b``.  Returns
    False when none exists (``s`` is then left partly extended: callers pass a
    fresh or copied dict)."""
    stack = [(a, b)]
    pop = stack.pop
    while stack:
        x, y = pop()
        while type(x) is int:
            bx = s.get(x)
            if bx is None:
                break
            x = bx
        while type(y) is int:
            by = s.get(y)
            if by is None:
                break
            y = by
        if x is y:
            continue
        tx = type(x)
        ty = type(y)
        if tx is int:
            if ty is int:
                if x != y:
                    s[x] = y
                continue
            if occurs(x, y, s):
                return False
            s[x] = y
            continue
        if ty is int:
            if occurs(y, x, s):
                return False
            s[y] = x
            continue
        if tx is str or ty is str:
            if x != y:
                return False
            continue
        if x[0] != y[0] or len(x) != len(y):
            return False
        stack.extend(zip(x[1:], y[1:]))
    return True


def unifier(a, b) -> dict | None:
    """A most general unifier of ``a`` and ``b`` or None."""
    s: dict = {}
    return s if unify(a, b, s) else None


def match(p, t, s: dict) -> bool:
    """Extend ``s`` so that ``instantiate(p, s) == t`` (one-way matching:
    variables of ``t`` are treated as constants)."""
    stack = [(p, t)]
    pop = stack.pop
    while stack:
        x, y = pop()
        tx = type(x)
        if tx is int:
            b = s.get(x)
            if b is None:
                s[x] = y
            elif b != y:
                return False
            continue
        if tx is str:
            if x != y:
                return False
            continue
        if type(y) is not tuple or x[0] != y[0] or len(x) != len(y):
            return False
        stack.extend(zip(x[1:], y[1:]))
    return True


def matcher(p, t) -> dict | None:
    s: dict = {}
    return s if match(p, t, s) else None


def instantiate(t, s: dict):
    """Apply a matcher (no dereferencing of the bound values)."""
    tt = type(t)
    if tt is int:
        b = s.get(t)
        return t if b is None else b
    if tt is str:
        return t
    return (t[0], *[instantiate(a, s) for a in t[1:]])
