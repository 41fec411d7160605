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


# ------------------------------------------------------------------ splitting

def _lit_vars(lit):
    if lit[0] == "eq":
        return {lit[1], lit[2]}
    if lit[0] == "pred":
        return set(lit[3])
    return set(lit[3]) | {lit[4]}


def _renumber(lits, source):
    mapping: dict = {}

    def v(x):
        r = mapping.get(x)
        if r is None:
            r = mapping[x] = len(mapping)
        return r

    out = []
    for lit in lits:
        if lit[0] == "eq":
            a, b = v(lit[1]), v(lit[2])
            out.append(("eq", min(a, b), max(a, b)))
        elif lit[0] == "pred":
            out.append(("pred", lit[1], lit[2], tuple(v(x) for x in lit[3])))
        else:
            out.append(("fun", lit[1], lit[2], tuple(v(x) for x in lit[3]), v(lit[4])))
    return FlatClause(tuple(out), len(mapping), source)


def split_clause(fc: FlatClause, n: int, new_name, keep_vars: int = 4) -> list:
    """Split a flat clause with many variables into clauses with fewer, joined
    by fresh predicates: ``A or B`` becomes ``A or s(v)`` and ``~s(v) or B``
    where ``v`` are the variables ``A`` and ``B`` share (satisfiability is
    kept: read ``s(v)`` as "B holds for every value of B's other
    variables").  The bipartition with the fewest ground instances at size
    ``n`` is taken when it at least halves them; the parts are split again.
    ``new_name(arity)`` gives the fresh predicate's name."""
    k = fc.nvars
    m = len(fc.lits)
    if k <= keep_vars or m < 2 or m > 12:
        return [fc]
    vs = [_lit_vars(l) for l in fc.lits]
    best = None
    for mask in range(1, 1 << (m - 1)):      # literal m-1 always in B
        va, vb = set(), set()
        for i in range(m):
            (va if mask >> i & 1 else vb).update(vs[i])
        cost = n ** len(va) + n ** len(vb)
        if best is None or cost < best[0]:
            best = (cost, mask, va & vb)
    cost, mask, shared = best
    if cost * 2 > n ** k:
        return [fc]
    shared = tuple(sorted(shared))
    s = new_name(len(shared))
    a = [l for i, l in enumerate(fc.lits) if mask >> i & 1] + [("pred", True, s, shared)]
    b = [("pred", False, s, shared)] + [l for i, l in enumerate(fc.lits) if not mask >> i & 1]
    out = []
    for part in (a, b):
        out += split_clause(_renumber(part, fc.source), n, new_name, keep_vars)
    return out
