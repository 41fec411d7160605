"""Inference and simplification rules, one function per rule.

The search for partners lives in :mod:`loop`; each function here takes the
premises, the literal indexes and a unifier (or matcher) already found and
returns the conclusion's literals (before variable renormalization) together
with the proof fields of the step (DEVELOPERS.md, "Proofs").  Ordering side
conditions are checked by the loop before a rule is applied; the docstrings
state them.

Conventions: a premise ``a`` renamed apart by ``oa`` has its variable ``v``
written ``v + oa``; ``sigma`` binds renamed variables (a triangular unifier,
dereferenced by :func:`inst`).
"""

from __future__ import annotations

from worker.syntax.terms import EQ, apply, replace_at

from .unify import instantiate, match


def inst(t, off: int, s: dict):
    """``sigma(rename(t, off))`` for a triangular ``sigma``."""
    tt = type(t)
    if tt is int:
        v = t + off
        b = s.get(v)
        if b is None:
            return v
        return apply(b, s) if type(b) is not str else b
    if tt is str:
        return t
    return (t[0], *[inst(a, off, s) for a in t[1:]])


def _rest(lits, skip, off, s):
    return [(sg, inst(at, off, s)) for k, (sg, at) in enumerate(lits) if k != skip]


def subst_fields(s: dict, parents_vars) -> dict:
    """The ``subst`` field: every renamed parent variable that ``s`` binds,
    mapped to its fully applied value.  ``parents_vars`` lists
    ``(offset, nvars)`` per parent."""
    out = {}
    for off, n in parents_vars:
        for v in range(off, off + n):
            if v in s:
                t = apply(v, s)
                if t != v:
                    out[v] = t
    return out


# ------------------------------------------------------------------ inferences

def resolution(a, i, oa, b, j, ob, s):
    """Ordered resolution.

        a: C or A      b: D or not B      sigma = mgu(A, B)
        -------------------------------------------------
                      sigma(C or D)

    Conditions (checked by the loop): the negative literal is selected, or
    nothing is selected in its clause and it is maximal; the positive literal
    is maximal and its clause has no selected literal.  With built-in
    equality, ``A`` is not an equation."""
    lits = _rest(a.lits, i, oa, s) + _rest(b.lits, j, ob, s)
    info = {"lits": [i, j], "offsets": [oa, ob],
            "sigma": subst_fields(s, ((oa, a.nvars), (ob, b.nvars)))}
    return lits, info


def factoring(a, i, j, s):
    """Ordered factoring.

        a: C or A or B      sigma = mgu(A, B)
        -------------------------------------
                 sigma(C or A)

    Conditions: both literals positive, nothing selected in ``a``, ``A``
    maximal.  The conclusion drops literal ``j``."""
    lits = _rest(a.lits, j, 0, s)
    return lits, {"lits": [i, j], "sigma": subst_fields(s, ((0, a.nvars),))}


def equality_resolution(a, i, s):
    """Equality resolution.

        a: C or s != t      sigma = mgu(s, t)
        -------------------------------------
                    sigma(C)

    Conditions: the literal is selected, or nothing is selected and it is
    maximal.  (With the empty unifier this also deletes a literal ``t != t``
    as a simplification.)"""
    lits = _rest(a.lits, i, 0, s)
    return lits, {"lits": [i], "sigma": subst_fields(s, ((0, a.nvars),))}


def equality_factoring(a, i, si, j, sj, s):
    """Equality factoring.

        a: C or s' = t' or s = t      sigma = mgu(s, s')
        ------------------------------------------------
              sigma(C or t != t' or s' = t')

    ``s = t`` is literal ``i`` (``s`` its side ``si``), ``s' = t'`` literal
    ``j`` (side ``sj``).  Conditions: nothing selected, ``s = t`` maximal,
    ``sigma(s)`` not smaller than ``sigma(t)``."""
    atom_i = a.lits[i][1]
    atom_j = a.lits[j][1]
    t = inst(atom_i[2 - si], 0, s)
    t2 = inst(atom_j[2 - sj], 0, s)
    lits = _rest(a.lits, i, 0, s) + [(False, (EQ, t, t2))]
    return lits, {"lits": [i, j], "sides": [si, sj],
                  "sigma": subst_fields(s, ((0, a.nvars),))}


def superposition(a, i, side, oa, b, j, pos, ob, s):
    """Superposition (left when literal ``j`` of ``b`` is negative, right when
    positive).

        a: C or l = r      b: D or L[u]      sigma = mgu(l, u), u not a variable
        ------------------------------------------------------------------------
                           sigma(C or D or L[r])

    ``l`` is side ``side`` of literal ``i``; ``u`` stands at ``pos`` in the
    atom of literal ``j``.  Conditions: nothing selected in ``a``, ``l = r``
    maximal there, ``sigma(l)`` not smaller than ``sigma(r)``; literal ``j``
    selected or (nothing selected and maximal; strictly eligible when
    positive); when ``L`` is an equation ``s[u] = t`` (or ``!=``), ``sigma(s)``
    not smaller than ``sigma(t)``."""
    r = a.lits[i][1][2 - side]
    sign_b, atom_b = b.lits[j]
    new_atom = replace_at(atom_b, pos, _shift(r, oa - ob))
    lits = _rest(b.lits, j, ob, s)
    lits.insert(j, (sign_b, inst(new_atom, ob, s)))
    lits += _rest(a.lits, i, oa, s)
    info = {"lits": [i, j], "side": side, "position": list(pos),
            "offsets": [oa, ob],
            "sigma": subst_fields(s, ((oa, a.nvars), (ob, b.nvars)))}
    return lits, info


def _shift(t, d: int):
    if d == 0:
        return t
    tt = type(t)
    if tt is int:
        return t + d
    if tt is str:
        return t
    return (t[0], *[_shift(x, d) for x in t[1:]])


# ------------------------------------------------------------------ simplifications

def demodulation(a, side, b, j, pos, m):
    """Demodulation (rewriting one position).

        a: l = r      b: C[u]      u = m(l), m(l) > m(r)
        --------------------------------------------------
                         C[m(r)]      (b is deleted)

    ``m`` matches ``a``'s variables only.  Conditions: ``m(l) > m(r)``; when
    ``u`` is a whole side of a positive equation ``u = t`` of ``b``, also
    ``t > m(r)`` or ``u`` a proper instance of ``l`` (so that ``a``'s
    instance is smaller than ``b``).  Recorded with ``a`` renamed by
    ``b.nvars`` (offsets ``[b.nvars, 0]``)."""
    r = a.lits[0][1][2 - side]
    sign_b, atom_b = b.lits[j]
    rr = instantiate(r, m)
    lits = list(b.lits)
    lits[j] = (sign_b, replace_at(atom_b, pos, rr))
    off = b.nvars
    info = {"lits": [0, j], "side": side, "position": list(pos),
            "offsets": [off, 0], "sigma": {v + off: t for v, t in m.items()}}
    return lits, info


def subsumption_resolution(a, i, b, j, m):
    """Subsumption resolution (contextual literal cutting).

        a: C or L      b: D or M      m(L) complementary to M, m(C) a subset of D
        ---------------------------------------------------------------------------
                              D      (b is deleted)

    Recorded with ``a`` renamed by ``b.nvars``."""
    lits = [l for k, l in enumerate(b.lits) if k != j]
    off = b.nvars
    return lits, {"lits": [i, j], "offsets": [off, 0],
                  "sigma": {v + off: t for v, t in m.items()}}


def is_tautology(lits, eq_builtin: bool = True) -> bool:
    """Tautology deletion: a clause with complementary literals, or (built-in
    equality) a literal ``t = t``."""
    pos = set()
    neg = set()
    for sign, atom in lits:
        if eq_builtin and type(atom) is tuple and atom[0] == EQ:
            if sign and atom[1] == atom[2]:
                return True
            mirror = (EQ, atom[2], atom[1])
            if mirror in (neg if sign else pos):
                return True
        (pos if sign else neg).add(atom)
    return not pos.isdisjoint(neg)


def _lit_matchers(pl, tl, eq_builtin):
    """The matchers taking literal ``pl`` onto ``tl`` (both orientations of
    an equation), as a list."""
    if pl[0] != tl[0]:
        return []
    pa, ta = pl[1], tl[1]
    if type(pa) is not type(ta):
        if type(pa) is not int:
            return []
    if type(pa) is tuple and type(ta) is tuple and (pa[0] != ta[0] or len(pa) != len(ta)):
        return []
    out = []
    s1: dict = {}
    if match(pa, ta, s1):
        out.append(s1)
    if eq_builtin and type(pa) is tuple and pa[0] == EQ:
        s2: dict = {}
        if match(pa[1], ta[2], s2) and match(pa[2], ta[1], s2) and s2 != s1:
            out.append(s2)
    return out


def _merge(s: dict, m: dict):
    s2 = dict(s)
    for v, t in m.items():
        x = s2.get(v)
        if x is None:
            s2[v] = t
        elif x != t:
            return None
    return s2


def _search(table, s: dict, used: list):
    """Backtracking over the per-literal candidate lists ``table`` (each a
    list of ``(d_index, matcher)``): one matcher per row, pairwise
    compatible, each on a different unused ``d_index``."""
    order = sorted(range(len(table)), key=lambda k: len(table[k]))
    return _go(table, order, used, 0, s)


def _go(table, order, used, k, s):
    # module level, not a closure calling itself (a reference cycle that only
    # the cyclic garbage collector frees; subsumption runs for every new clause)
    if k == len(order):
        return s
    for j, m in table[order[k]]:
        if used[j]:
            continue
        s2 = _merge(s, m)
        if s2 is None:
            continue
        used[j] = True
        r = _go(table, order, used, k + 1, s2)
        used[j] = False
        if r is not None:
            return r
    return None


def subsumes(c_lits, d_lits, eq_builtin: bool = True, first: int = 0):
    """Subsumption: a matcher ``m`` with ``m(C)`` a sub-multiset of ``D``
    (each literal of ``C`` onto a different literal of ``D``), or None.
    Variables of ``D`` count as constants.  ``first``: the literal of ``C``
    to try first (the most specific one fails fastest)."""
    if len(c_lits) > len(d_lits):
        return None
    table = []
    if first:
        c_lits = (c_lits[first],) + c_lits[:first] + c_lits[first + 1:]
    for pl in c_lits:
        row = [(j, m) for j, tl in enumerate(d_lits)
               for m in _lit_matchers(pl, tl, eq_builtin)]
        if not row:
            return None
        table.append(row)
    return _search(table, {}, [False] * len(d_lits))


def find_subsumption_resolution(c_lits, d_lits, eq_builtin: bool = True):
    """``(i, j, m)`` such that ``m(c_i)`` is the complement of ``d_j`` and
    ``m(C - c_i)`` is a sub-multiset of ``D - d_j``, or None."""
    if len(c_lits) > len(d_lits):
        return None
    straight = []
    flipped = []
    for pl in c_lits:
        straight.append([(j, m) for j, tl in enumerate(d_lits)
                         for m in _lit_matchers(pl, tl, eq_builtin)])
        fl = (not pl[0], pl[1])
        flipped.append([(j, m) for j, tl in enumerate(d_lits)
                        for m in _lit_matchers(fl, tl, eq_builtin)])
    empty = [k for k, row in enumerate(straight) if not row]
    if len(empty) > 1:
        return None
    cands = empty if empty else range(len(c_lits))
    for i in cands:
        for j, m in flipped[i]:
            rest = [[(jj, mm) for jj, mm in straight[k] if jj != j]
                    for k in range(len(c_lits)) if k != i]
            if any(not row for row in rest):
                continue
            used = [False] * len(d_lits)
            used[j] = True
            r = _search(rest, dict(m), used)
            if r is not None:
                return i, j, r
    return None


def _size(t) -> int:
    if type(t) is tuple:
        n = 1
        for x in t[1:]:
            n += _size(x)
        return n
    return 1
