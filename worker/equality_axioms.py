"""Equality as axioms: the clauses that make an ordinary binary predicate
``=`` behave as equality (common practice: reflexivity, symmetry,
transitivity and congruence capture equality in first-order logic).

With ``Settings.equality == "axioms"`` the engine treats ``=`` as an
ordinary predicate and adds these clauses (proof rule ``equality_axiom``).
"""

from __future__ import annotations

from worker.syntax.terms import EQ


def _eq(sign, l, r):
    return (sign, (EQ, l, r))


def symbols_of(cp) -> tuple[dict, dict]:
    """``(functions, predicates)``: name -> arity, from the signature and the
    clauses themselves."""
    funs: dict = {}
    preds: dict = {}
    for name, sym in (getattr(cp, "signature", None) or {}).items():
        if name == EQ:
            continue
        kind = getattr(sym, "kind", "function")
        (preds if kind == "predicate" else funs)[name] = sym.arity
    for ic in cp.clauses:
        for _s, atom in ic.lits:
            if type(atom) is str:
                preds.setdefault(atom, 0)
                continue
            if atom[0] != EQ:
                preds.setdefault(atom[0], len(atom) - 1)
            stack = list(atom[1:])
            while stack:
                x = stack.pop()
                if type(x) is str:
                    funs.setdefault(x, 0)
                elif type(x) is tuple:
                    funs.setdefault(x[0], len(x) - 1)
                    stack.extend(x[1:])
    return funs, preds


def uses_equality(cp) -> bool:
    return any(type(a) is tuple and a[0] == EQ for ic in cp.clauses for _s, a in ic.lits)


def equality_axioms(cp) -> list[tuple]:
    """The axiom clauses (each a tuple of literals, variables 0..n-1):

    * reflexivity ``x = x``;
    * symmetry ``x != y or y = x``;
    * transitivity ``x != y or y != z or x = z``;
    * for each function ``f`` of arity n and each argument k:
      ``xk != y or f(x1..xk..xn) = f(x1..y..xn)``;
    * for each predicate ``p`` of arity n and each argument k:
      ``xk != y or not p(x1..xk..xn) or p(x1..y..xn)``.

    One clause per argument position (rather than one per symbol with all
    arguments at once): shorter clauses, which resolution handles better.
    """
    out = [(_eq(True, 0, 0),),
           (_eq(False, 0, 1), _eq(True, 1, 0)),
           (_eq(False, 0, 1), _eq(False, 1, 2), _eq(True, 0, 2))]
    funs, preds = symbols_of(cp)
    for f in sorted(funs):
        for k in range(funs[f]):
            out.append(_congruence(f, funs[f], k, True))
    for p in sorted(preds):
        for k in range(preds[p]):
            out.append(_congruence(p, preds[p], k, False))
    return out


def _congruence(f: str, n: int, k: int, function: bool) -> tuple:
    """The congruence axiom of ``f`` in argument ``k`` (from 0): arguments
    ``x0..x(n-1)``, the k-th replaced by ``y`` (variable ``n``)."""
    xs = tuple(range(n))
    ys = xs[:k] + (n,) + xs[k + 1:]
    if function:
        return (_eq(False, k, n), _eq(True, (f, *xs), (f, *ys)))
    return (_eq(False, k, n), (False, (f, *xs)), (True, (f, *ys)))
