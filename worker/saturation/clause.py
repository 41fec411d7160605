"""Clauses of the saturation engine and their derivations.

A :class:`Clause` holds its literals (variables renamed ``0..n-1`` in order
of first occurrence, duplicate literals merged), the rule that derived it,
its parent clauses and the rule's fields in the proof step format of
DEVELOPERS.md ("Proofs").  Every clause the engine builds, including the
intermediate clauses of a chain of rewrites, is a :class:`Clause` with its
own id, so any clause can be traced back to the input.
"""

from __future__ import annotations

from worker.syntax.terms import EQ, normalize_vars


class Clause:
    __slots__ = ("id", "lits", "nvars", "weight", "conj", "rule", "parents",
                 "info", "alive", "active", "sel", "elig", "maxl", "key",
                 "source", "role", "feat", "sfeat", "raw")

    def __init__(self, cid: int, lits: tuple, nvars: int, rule: str,
                 parents: tuple = (), info: dict | None = None,
                 conj: bool = False):
        self.id = cid
        self.lits = lits
        self.nvars = nvars
        self.rule = rule
        self.parents = parents
        self.info = info
        self.conj = conj
        self.alive = True
        self.active = False
        self.weight = sum(_size(a) for _s, a in lits) + len(lits) - 1
        feat: dict = {}
        for sg, a in lits:
            k = (sg, a if type(a) is str else a[0])
            feat[k] = feat.get(k, 0) + 1
        self.feat = feat       # feature vector: literal count per (sign, predicate)
        self.sfeat = None      # symbol occurrences per (sign, symbol), computed on demand
        self.raw = False

    @classmethod
    def intermediate(cls, cid: int, lits: tuple, nvars: int, rule: str,
                     parents: tuple, info: dict, conj: bool) -> "Clause":
        """A clause in the middle of a chain of rewrites: its literals are not
        renormalized (no duplicates, variables a subset of ``0..nvars-1``);
        proof extraction renormalizes it and the step that uses it.  Only
        ``id, lits, nvars, rule, parents, info, conj, raw`` are set."""
        c = cls.__new__(cls)
        c.id = cid
        c.lits = lits
        c.nvars = nvars
        c.rule = rule
        c.parents = parents
        c.info = info
        c.conj = conj
        c.alive = False
        c.raw = True
        return c
        self.sel = ()          # selected literal indexes (set at activation)
        self.elig = ()         # literal indexes eligible for inferences
        self.maxl = ()         # maximal literal indexes
        self.key = None
        self.source = None
        self.role = None

    def __repr__(self) -> str:
        return f"Clause({self.id}, {self.lits!r}, {self.rule})"


def _size(t) -> int:
    if type(t) is tuple:
        n = 1
        for a in t[1:]:
            n += _size(a)
        return n
    return 1


def normalize(lits, eq_builtin: bool = True) -> tuple[tuple, int]:
    """Merge duplicate literals (an equation and its mirror count as the same
    when equality is built in) and rename variables ``0..n-1`` in order of
    first occurrence.  Returns ``(lits, number_of_variables)``."""
    seen = set()
    out = []
    for lit in lits:
        if lit in seen:
            continue
        sign, atom = lit
        if eq_builtin and type(atom) is tuple and atom[0] == EQ:
            if (sign, (EQ, atom[2], atom[1])) in seen:
                continue
        seen.add(lit)
        out.append(lit)
    atoms, mapping = normalize_vars([a for _, a in out])
    return tuple((s, a) for (s, _), a in zip(out, atoms)), len(mapping)


def has_duplicates(lits, eq_builtin: bool = True) -> bool:
    """Does the literal tuple repeat a literal (an equation's mirror counting
    as the same when equality is built in)?"""
    seen = set(lits)
    if len(seen) != len(lits):
        return True
    if eq_builtin:
        for sign, atom in lits:
            if type(atom) is tuple and atom[0] == EQ and atom[1] != atom[2]:
                if (sign, (EQ, atom[2], atom[1])) in seen:
                    return True
    return False


def renaming(lits) -> dict:
    """Variable map ``old -> 0..n-1`` in order of first occurrence."""
    mapping: dict = {}
    stack = []
    for _s, a in lits:
        stack.append(a)
        while stack:
            x = stack.pop()
            tx = type(x)
            if tx is int:
                if x not in mapping:
                    mapping[x] = len(mapping)
            elif tx is tuple:
                stack.extend(reversed(x[1:]))
    return mapping


def is_equation(atom) -> bool:
    return type(atom) is tuple and atom[0] == EQ


def symbol_features(c: "Clause") -> dict:
    f = c.sfeat
    if f is None:
        f = {}
        for sg, a in c.lits:
            stack = [a]
            while stack:
                x = stack.pop()
                tx = type(x)
                if tx is str:
                    k = (sg, x)
                    f[k] = f.get(k, 0) + 1
                elif tx is tuple:
                    k = (sg, x[0])
                    f[k] = f.get(k, 0) + 1
                    stack.extend(x[1:])
        c.sfeat = f
    return f


def may_subsume(c: "Clause", d: "Clause") -> bool:
    """Feature-vector filter: ``c`` can subsume ``d`` only if ``d`` has at
    least as many literals of each sign and predicate, and at least as many
    occurrences of each symbol in literals of each sign (an instance only
    adds symbols)."""
    fd = d.feat
    for k, n in c.feat.items():
        if fd.get(k, 0) < n:
            return False
    fd = symbol_features(d)
    for k, n in symbol_features(c).items():
        if fd.get(k, 0) < n:
            return False
    return True


def may_cut(c: "Clause", d: "Clause") -> bool:
    """Feature-vector filter for subsumption resolution of ``d`` by ``c``:
    all of ``c`` but one literal fits, and that literal's complement is in ``d``."""
    fd = d.feat
    excess = None
    for k, n in c.feat.items():
        m = fd.get(k, 0)
        if m < n:
            if excess is not None or n - m > 1:
                return False
            excess = k
    if excess is None:
        return any(fd.get((not sg, h), 0) for sg, h in c.feat)
    return fd.get((not excess[0], excess[1]), 0) > 0
