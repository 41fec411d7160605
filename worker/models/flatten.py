"""Flattening: rewrite clauses so every literal is shallow.

After flattening a literal has one of these shapes (all arguments variables):

* ``("pred", sign, p, (x1..xk))``  for ``p(x1..xk)`` or ``~p(x1..xk)``;
* ``("fun", sign, f, (x1..xk), y)`` for ``f(x1..xk) = y`` or ``!=``;
  constants are functions of arity 0;
* ``("eq", x, y)`` for a positive ``x = y`` between variables (a negative one
  is removed by identifying ``x`` and ``y``).

A nested term ``t`` that is an argument is named by a fresh variable ``v``
and the literal ``t != v`` is added: ``C[t]`` is equivalent to
``forall v. C[v] or t != v``.  An equation between two non-variable terms
``s = t`` becomes ``s = v or t != v`` and ``s != t`` becomes ``s != v or
t != v``.  Equal subterms of one clause share one variable.

A flat clause is a :class:`FlatClause`: literals plus the number of
variables ``0..nvars-1``.  A clause that is a tautology after flattening is
dropped.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(slots=True)
class FlatClause:
    lits: tuple          # shallow literals, see the module docstring
    nvars: int
    source: str = ""     # statement name (for messages)


def _max_var(t, m):
    tt = type(t)
    if tt is int:
        return t if t > m else m
    if tt is tuple:
        for a in t[1:]:
            m = _max_var(a, m)
    return m


def flatten_clause(lits, source: str = "") -> FlatClause | None:
    """Flatten one clause (a tuple of ``(sign, atom)``); None for a tautology."""
    top = -1
    for _s, atom in lits:
        top = _max_var(atom, top)
    counter = [top + 1]
    names: dict = {}          # flat term -> variable
    defs: list = []           # ("fun", False, f, args, v) literals
    out: list = []
    same: list = []           # pairs of variables to identify (x != y literals)

    def fresh():
        v = counter[0]
        counter[0] += 1
        return v

    def shallow(t):
        """(symbol, argument variables) for a non-variable term."""
        if type(t) is str:
            return t, ()
        return t[0], tuple(name(a) for a in t[1:])

    def name(t):
        if type(t) is int:
            return t
        key = shallow(t)
        v = names.get(key)
        if v is None:
            v = names[key] = fresh()
            defs.append(("fun", False, key[0], key[1], v))
        return v

    for sign, atom in lits:
        if type(atom) is str:                       # propositional atom
            out.append(("pred", sign, atom, ()))
            continue
        if atom[0] == "=":
            l, r = atom[1], atom[2]
            if type(l) is int and type(r) is int:
                if sign:
                    out.append(("eq", l, r))
                else:
                    same.append((l, r))
                continue
            if type(l) is int:                      # orient: term on the left
                l, r = r, l
            f, xs = shallow(l)
            y = name(r)
            out.append(("fun", sign, f, xs, y))
            continue
        out.append(("pred", sign, atom[0], tuple(name(a) for a in atom[1:])))

    allits = out + defs
    # identify the variables of negative variable equations (union-find)
    parent = list(range(counter[0]))

    def find(x):
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x

    for a, b in same:
        ra, rb = find(a), find(b)
        if ra != rb:
            parent[max(ra, rb)] = min(ra, rb)

    renum: dict = {}

    def var(x):
        x = find(x)
        v = renum.get(x)
        if v is None:
            v = renum[x] = len(renum)
        return v

    seen = set()
    result = []
    for lit in allits:
        if lit[0] == "eq":
            a, b = var(lit[1]), var(lit[2])
            if a == b:
                return None                           # x = x: tautology
            lit = ("eq", min(a, b), max(a, b))
        elif lit[0] == "pred":
            lit = ("pred", lit[1], lit[2], tuple(var(x) for x in lit[3]))
        else:
            lit = ("fun", lit[1], lit[2], tuple(var(x) for x in lit[3]), var(lit[4]))
        if lit in seen:
            continue
        if lit[0] != "eq":
            comp = (lit[0], not lit[1]) + lit[2:]
            if comp in seen:
                return None                           # L or ~L: tautology
        seen.add(lit)
        result.append(lit)
    return FlatClause(tuple(result), len(renum), source)


def flatten_clauses(clauses) -> list:
    """Flatten a list of InputClause (or plain literal tuples)."""
    out = []
    for c in clauses:
        lits = getattr(c, "lits", c)
        fc = flatten_clause(lits, getattr(c, "source", ""))
        if fc is not None:
            out.append(fc)
    return out
