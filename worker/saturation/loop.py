"""The given-clause loop.

Variant: the passive clauses are only *stored* (simplified once when they are
generated, with the active set of that moment) and take part in no inference
and no simplification until they are picked; the picked clause (the *given*
clause) is simplified again with the current active set, then simplifies the
active set backwards, joins it and draws every inference with the active
clauses.  Only active clauses are indexed as partners and simplifiers, so the
indexes stay small while the passive set grows into the hundreds of
thousands (see DEVELOPERS.md, "The saturation engine", for why).

Limits (wall clock, CPU, kept clauses, memory) are checked every few dozen
elementary steps inside inference generation and simplification, not only
once per given clause.
"""

from __future__ import annotations

import heapq
from collections import Counter
import os
import time

from worker import reserve
from worker.syntax.terms import EQ, apply, normalize_vars, rename, subterms

from . import rules as R
from .clause import Clause, has_duplicates, may_cut, may_subsume, normalize
from .index import DEEP, SHALLOW, FingerprintIndex, LinearIndex
from .kbo import KBO
from .strategy import Strategy
from .unify import match, unify, instantiate


# Subsumption resolution uses active clauses of at most this many literals:
# longer ones rarely cut and cost most of the matching (measured on
# Pelletier 53, see DEVELOPERS.md).
CUT_MAX_LITS = 3


class LimitReached(Exception):
    def __init__(self, kind: str):
        super().__init__(kind)
        self.kind = kind


class Refuted(Exception):
    def __init__(self, clause: Clause):
        super().__init__("empty clause")
        self.clause = clause


_PAGE = os.sysconf("SC_PAGE_SIZE") if hasattr(os, "sysconf") else 4096


def rss_mb() -> float:
    try:
        with open("/proc/self/statm") as f:
            return int(f.read().split()[1]) * _PAGE / (1 << 20)
    except (OSError, ValueError, IndexError):
        return 0.0


DRAWN_MAX = 100_000             # conclusions remembered to the letter (then all forgotten)
PERMUTATIVE = "permutative"    # a demodulator entry's orientation, besides True / False


def _symbols(t, out: Counter) -> Counter:
    stack = [t]
    while stack:
        x = stack.pop()
        if type(x) is tuple:
            out[x[0]] += 1
            stack.extend(x[1:])
        else:
            out[x] += 1
    return out


def permutative(l, r) -> bool:
    """Do both sides hold the same symbols and variables, each as often?
    Then every instance of the two sides has the same weight and the same
    variables, and only the lexicographic part of the ordering decides."""
    return _symbols(l, Counter()) == _symbols(r, Counter())


def _is_renaming(m: dict) -> bool:
    vals = list(m.values())
    return all(type(v) is int for v in vals) and len(set(vals)) == len(vals)


class Saturation:
    """One run of the given-clause loop under one strategy.

    ``inputs``: list of ``(lits, rule, fields, conj)`` where ``rule`` is
    ``"input"`` or ``"equality_axiom"`` and ``fields`` the step's extra
    fields (``formula``, ``role``, ``conj`` for inputs)."""

    def __init__(self, inputs, strategy: Strategy, kbo: KBO, *,
                 eq_builtin: bool = True, deadline: float | None = None,
                 cpu_limit: float | None = None, memory_mb: float | None = None,
                 max_clauses: int | None = None):
        self.inputs = inputs
        self.st = strategy
        self.kbo = kbo
        self.eq = eq_builtin
        self.deadline = deadline if deadline is not None else float("inf")
        self.cpu_deadline = (time.process_time() + cpu_limit) if cpu_limit else None
        self.memory_mb = memory_mb
        self.max_clauses = max_clauses
        I = LinearIndex if strategy.indexing == "linear" else FingerprintIndex
        if strategy.indexing == "linear":
            # the naive mode: no feature-vector filters in front of subsumption either
            self.may_subsume = self.may_cut = lambda c, d: True
        else:
            self.may_subsume, self.may_cut = may_subsume, may_cut
        self.res = {True: I(), False: I()}
        self.sup_from = I()
        self.sup_into = I()
        self.demod = I(SHALLOW)
        self.subkey = {True: I(DEEP), False: I(DEEP)}
        self.alllits = {True: I(DEEP), False: I(DEEP)}
        self.allterms = I()
        self.units = {True: I(), False: I()}
        self._indexes = [self.res[True], self.res[False], self.sup_from,
                         self.sup_into, self.demod, self.subkey[True],
                         self.subkey[False], self.alllits[True],
                         self.alllits[False], self.allterms, self.units[True],
                         self.units[False]]
        self.next_id = 1
        self.max_vars = 0
        # term -> number of demodulators when it was last found irreducible:
        # only demodulators added later need to be tried on it again
        self.irreducible: dict = {}
        # term -> (unit, side, matcher) that rewrote it last time, wherever
        # the step did not depend on the clause it was in
        self.redexes: dict = {}
        self.demod_seq = 0
        self.cut_max = CUT_MAX_LITS
        self.wheap: list = []
        self.aheap: list = []
        self.picks = 0
        self.ticks = 0
        self.dead = 0
        self.kept_now = 0
        self.fig = {"given": 0, "generated": 0, "kept": 0, "demodulations": 0,
                    "forward_subsumed": 0, "backward_deleted": 0,
                    "subsumption_resolutions": 0, "tautologies": 0, "repeats": 0}
        self.drawn: set = set()       # the conclusions drawn so far (their literals)
        self.started = time.monotonic()
        self.cpu_started = time.process_time()

    # ------------------------------------------------------------ limits
    def check(self) -> None:
        self.ticks += 1
        if self.ticks & 63:
            return
        if time.monotonic() > self.deadline:
            raise LimitReached("time")
        if self.cpu_deadline is not None and time.process_time() > self.cpu_deadline:
            raise LimitReached("time")
        if self.memory_mb and not (self.ticks & 4095):
            if rss_mb() > self.memory_mb:
                raise LimitReached("memory")

    # ------------------------------------------------------------ clauses
    def new(self, raw_lits, rule, parents, info, conj=None) -> Clause:
        lits, nv = normalize(raw_lits, self.eq)
        if conj is None:
            conj = any(p.conj for p in parents)
        c = Clause(self.next_id, lits, nv, rule, tuple(parents), info, conj)
        self.next_id += 1
        if nv > self.max_vars:
            self.max_vars = nv
        return c

    def kill(self, c: Clause) -> None:
        if c.alive:
            c.alive = False
            self.kept_now -= 1
            self.dead += 1
            if self.dead > 2000:
                for ix in self._indexes:
                    ix.note_dead(self.dead)
                self.dead = 0

    def is_eq(self, atom) -> bool:
        return self.eq and type(atom) is tuple and atom[0] == EQ

    # ------------------------------------------------------------ passive set
    def push(self, c: Clause) -> None:
        w = c.weight * (1.0 if c.conj else self.st.axiom_factor)
        heapq.heappush(self.wheap, (w, c.id, c))
        heapq.heappush(self.aheap, (c.id, c))

    def pick(self) -> Clause | None:
        while self.wheap or self.aheap:
            self.picks += 1
            if self.picks % (self.st.pick_ratio + 1) == 0:
                heap = self.aheap if self.aheap else self.wheap
            else:
                heap = self.wheap if self.wheap else self.aheap
            c = heapq.heappop(heap)[-1]
            if c.alive and not c.active:
                return c
        return None

    def keep(self, c: Clause) -> None:
        self.fig["kept"] += 1
        self.kept_now += 1
        if self.max_clauses is not None and self.kept_now > self.max_clauses:
            raise LimitReached("clauses")
        if len(c.lits) == 1:
            self.unit_conflict(c)
            sign, atom = c.lits[0]
            self.units[sign].insert(atom, (c,))
        self.push(c)

    # ------------------------------------------------------------ eligibility
    def select(self, c: Clause) -> tuple:
        mode = self.st.selection
        negs = [i for i, (s, _a) in enumerate(c.lits) if not s]
        if not negs or mode == "none":
            return ()
        if mode == "all":
            return tuple(negs)
        w = self.kbo.weight
        if mode == "lightest":
            return (min(negs, key=lambda i: w(c.lits[i][1])),)
        return (max(negs, key=lambda i: w(c.lits[i][1])),)

    def prepare(self, c: Clause) -> None:
        c.maxl = tuple(self.kbo.maximal_literals(c.lits)) if len(c.lits) > 1 else (0,)
        c.sel = self.select(c)
        c.elig = c.sel if c.sel else c.maxl
        c.key = max(range(len(c.lits)), key=lambda k: R._size(c.lits[k][1]))

    def into_positions(self, atom):
        """Non-variable subterms of an atom that superposition may rewrite:
        ``(position, subterm)``; for an equation only in a side that is not
        smaller than the other."""
        if type(atom) is not tuple:
            return
        if self.is_eq(atom):
            for k in (1, 2):
                if self.kbo.gt(atom[3 - k], atom[k]):
                    continue
                for p, u in subterms(atom[k]):
                    if type(u) is not int:
                        yield (k,) + p, u
        else:
            for k in range(1, len(atom)):
                for p, u in subterms(atom[k]):
                    if type(u) is not int:
                        yield (k,) + p, u

    def activate(self, c: Clause) -> None:
        self.prepare(c)
        c.active = True
        kbo = self.kbo
        lits = c.lits
        for i in c.elig:
            sign, atom = lits[i]
            if sign and c.sel:
                continue
            if not self.is_eq(atom):
                self.res[sign].insert(atom, (c, i))
            for pos, u in self.into_positions(atom):
                self.sup_into.insert(u, (c, i, pos))
            if sign and self.is_eq(atom) and not c.sel:
                for side in (0, 1):
                    l, r = atom[1 + side], atom[2 - side]
                    if not kbo.gt(r, l):
                        self.sup_from.insert(l, (c, i, side))
        if len(lits) == 1 and lits[0][0] and self.is_eq(lits[0][1]):
            _s, (_e, l, r) = lits[0]
            self.demod_seq += 1
            q = self.demod_seq
            cmp = kbo.compare(l, r)
            if cmp == ">":
                self.demod.insert(l, (c, 0, True, q))
            elif cmp == "<":
                self.demod.insert(r, (c, 1, True, q))
            elif cmp is None:
                # unorientable: each instance is checked when used; instances
                # of a permutative equation (x + y = y + x) need no weights
                how = PERMUTATIVE if permutative(l, r) else False
                if type(l) is not int:
                    self.demod.insert(l, (c, 0, how, q))
                if type(r) is not int:
                    self.demod.insert(r, (c, 1, how, q))
        ks, ka = lits[c.key]
        self.subkey[ks].insert(ka, (c, c.key))
        if self.is_eq(ka):
            self.subkey[ks].insert((EQ, ka[2], ka[1]), (c, c.key))
        seen = set()
        for k, (s, a) in enumerate(lits):
            self.alllits[s].insert(a, (c, k))
            if self.is_eq(a):
                self.alllits[s].insert((EQ, a[2], a[1]), (c, k))
            if type(a) is tuple:
                for x in a[1:]:
                    for _p, u in subterms(x):
                        if type(u) is not int and u not in seen:
                            seen.add(u)
                            self.allterms.insert(u, (c,))

    # ------------------------------------------------------------ simplification
    def process_new(self, c: Clause) -> None:
        """Forward-simplify a freshly derived clause and keep it (passive)."""
        self.fig["generated"] += 1
        if not c.lits:
            raise Refuted(c)
        # A conclusion drawn before, to the letter (variables renumbered): the
        # first one was simplified and kept or found redundant, and what is
        # redundant stays so as the clause set grows, so this one adds nothing
        # (38 % of the conclusions of the Boolean-ring commutativity run).
        if c.lits in self.drawn:
            self.fig["repeats"] += 1
            return
        if len(self.drawn) >= DRAWN_MAX:
            self.drawn.clear()
        self.drawn.add(c.lits)
        if R.is_tautology(c.lits, self.eq):
            self.fig["tautologies"] += 1
            return
        c = self.forward_simplify(c)
        if c is None:
            return
        if not c.lits:
            raise Refuted(c)
        self.keep(c)

    def forward_simplify(self, c: Clause) -> Clause | None:
        while True:
            c = self.demodulate(c)
            c = self.drop_trivial(c)
            if not c.lits:
                return c
            if R.is_tautology(c.lits, self.eq):
                self.fig["tautologies"] += 1
                return None
            if self.subsumed(c):
                self.fig["forward_subsumed"] += 1
                return None
            c2 = self.cut(c)
            if c2 is None:
                return c
            self.fig["subsumption_resolutions"] += 1
            c = c2

    def drop_trivial(self, c: Clause) -> Clause:
        """Delete literals ``t != t`` (equality resolution, empty unifier)."""
        if not self.eq:
            return c
        while True:
            for i, (s, a) in enumerate(c.lits):
                if not s and type(a) is tuple and a[0] == EQ and a[1] == a[2]:
                    lits, info = R.equality_resolution(c, i, {})
                    c = self.new(lits, "equality_resolution", (c,), info)
                    break
            else:
                return c

    def _redex(self, c: Clause):
        """The first position (innermost, leftmost) that an active unit
        equation rewrites: ``(unit, side, literal, position, matcher)``."""
        for j, (sign, atom) in enumerate(c.lits):
            if type(atom) is not tuple:
                continue
            guard = atom if (sign and self.is_eq(atom)) else None
            for k in range(1, len(atom)):
                found = self._find(atom[k], (k,), c, guard)
                if found is not None:
                    a, side, pos, m = found
                    return a, side, j, pos, m
        return None

    def _find(self, t, pos, c, guard):
        if type(t) is int:
            return None
        seen = self.irreducible.get(t)
        if seen == self.demod_seq:
            return None          # no demodulator can rewrite t or its subterms
        hit = self.redexes.get(t)
        if hit is not None and hit[0].alive and hit[0] is not c and (
                guard is None or len(pos) != 1):
            # t was rewritten before, in another clause: the same step again
            # (it need not be innermost any more; any redex will do)
            return hit[0], hit[1], pos, hit[2]
        if type(t) is tuple:
            for k in range(1, len(t)):
                found = self._find(t[k], pos + (k,), c, guard)
                if found is not None:
                    return found
        kbo = self.kbo
        blocked = False
        for l, (a, side, oriented, seq) in self.demod.generalizations(t):
            self.check()
            if seen is not None and seq <= seen:
                continue         # already tried on t when it was found irreducible
            if a is c:
                blocked = True
                continue
            m: dict = {}
            if not match(l, t, m):
                continue
            rr = instantiate(a.lits[0][1][2 - side], m)
            if oriented is not True and not (
                    kbo.gt_balanced(t, rr) if oriented is PERMUTATIVE else kbo.gt(t, rr)):
                continue
            if guard is not None and len(pos) == 1:
                # a whole side of a positive equation: the unit's instance must
                # be smaller than the clause
                other = guard[3 - pos[0]]
                if not kbo.gt(other, rr) and _is_renaming(m):
                    blocked = True
                    continue
            else:
                if len(self.redexes) > 200_000:
                    self.redexes.clear()
                self.redexes[t] = (a, side, m)
            return a, side, pos, m
        if not blocked:
            if len(self.irreducible) > 200_000:
                self.irreducible.clear()
            self.irreducible[t] = self.demod_seq
        return None

    def demodulate(self, c: Clause) -> Clause:
        """Rewrite ``c`` to normal form with the active unit equations, one
        recorded step per rewritten position."""
        if not self.demod.size:
            return c
        cur = c
        while True:
            found = self._redex(cur)
            if found is None:
                break
            a, side, j, pos, m = found
            lits, info = R.demodulation(a, side, cur, j, pos, m)
            self.fig["demodulations"] += 1
            lits = tuple(lits)
            if has_duplicates(lits, self.eq):
                cur = self.new(lits, "demodulation", (a, cur), info)
            else:
                # skip renormalizing the clauses in the middle of the chain
                cur = Clause.intermediate(self.next_id, lits, cur.nvars, "demodulation",
                                          (a, cur), info, a.conj or cur.conj)
                self.next_id += 1
        if cur.raw:
            last = cur
            cur = self.new(last.lits, "demodulation", last.parents, last.info, last.conj)
        return cur

    def subsumed(self, c: Clause) -> bool:
        seen = set()
        n = len(c.lits)
        for sign, atom in c.lits:
            for _t, (d, _k) in self.subkey[sign].generalizations(atom):
                self.check()
                if d.id in seen or len(d.lits) > n:
                    continue
                seen.add(d.id)
                if self.may_subsume(d, c) and R.subsumes(d.lits, c.lits, self.eq,
                                                    d.key or 0) is not None:
                    return True
        return False

    def cut(self, c: Clause) -> Clause | None:
        """One subsumption resolution step on ``c`` if an active clause allows it."""
        seen = set()
        n = len(c.lits)
        for sign, atom in c.lits:
            for sg in (not sign, sign):
                for _t, (d, _k) in self.subkey[sg].generalizations(atom):
                    self.check()
                    if d.id in seen or len(d.lits) > n or len(d.lits) > self.cut_max:
                        continue
                    seen.add(d.id)
                    if not self.may_cut(d, c):
                        continue
                    found = R.find_subsumption_resolution(d.lits, c.lits, self.eq)
                    if found is not None:
                        i, j, m = found
                        lits, info = R.subsumption_resolution(d, i, c, j, m)
                        return self.new(lits, "subsumption_resolution", (d, c), info)
        return None

    def unit_conflict(self, c: Clause) -> None:
        """A new unit clause against the kept units of opposite sign: derive
        the empty clause at once when they are complementary."""
        sign, atom = c.lits[0]
        oc = self.max_vars + 1
        q = rename(atom, oc)
        if self.is_eq(atom):
            queries = [q, (EQ, q[2], q[1])]
        else:
            queries = [q]
        for qq in queries:
            for at_d, (d,) in self.units[not sign].unifiable(qq):
                self.check()
                s: dict = {}
                if not unify(qq, at_d, s):
                    continue
                if not self.is_eq(atom):
                    lits, info = R.resolution(c, 0, oc, d, 0, 0, s)
                    raise Refuted(self.new(lits, "resolution", (c, d), info))
                pos_c, opos, neg_c, oneg = (c, oc, d, 0) if sign else (d, 0, c, oc)
                pa = pos_c.lits[0][1]
                na = neg_c.lits[0][1]
                for side in (0, 1):
                    for k in (1, 2):
                        if (R.inst(pa[1 + side], opos, s) == R.inst(na[k], oneg, s)
                                and R.inst(pa[2 - side], opos, s)
                                == R.inst(na[3 - k], oneg, s)):
                            lits, info = R.superposition(pos_c, 0, side, opos,
                                                         neg_c, 0, (k,), oneg, s)
                            mid = self.new(lits, "superposition", (pos_c, neg_c), info)
                            lits2, info2 = R.equality_resolution(mid, 0, {})
                            raise Refuted(self.new(lits2, "equality_resolution",
                                                   (mid,), info2))

    def backward_simplify(self, g: Clause) -> None:
        """Rewrite and delete active clauses with the new active clause ``g``."""
        lits = g.lits
        if len(lits) == 1 and lits[0][0] and self.is_eq(lits[0][1]):
            _s, (_e, l, r) = lits[0]
            cmp = self.kbo.compare(l, r)
            sides = [l] if cmp == ">" else [r] if cmp == "<" else [x for x in (l, r) if type(x) is not int]
            cands = {}
            for side in sides:
                for _u, (d,) in self.allterms.instances(side):
                    self.check()
                    if d is not g and d.alive and d.active:
                        cands[d.id] = d
            for d in sorted(cands.values(), key=lambda x: x.id):
                if not d.alive:
                    continue
                d2 = self.demodulate(d)
                if d2 is not d:
                    self.kill(d)
                    self.fig["backward_deleted"] += 1
                    self.process_new(d2)
        ks, ka = lits[g.key]
        for _a, (d, _k) in self.alllits[ks].instances(ka):
            self.check()
            if d is g or not d.alive or not d.active or len(d.lits) < len(lits):
                continue
            if self.may_subsume(g, d) and R.subsumes(lits, d.lits, self.eq, g.key or 0) is not None:
                self.kill(d)
                self.fig["backward_deleted"] += 1

    # ------------------------------------------------------------ inferences
    def generate(self, g: Clause) -> None:
        """Every inference between the given clause ``g`` and the active set
        (``g`` included, renamed apart)."""
        off = self.max_vars + 1
        kbo = self.kbo
        gt = kbo.gt
        lits = g.lits
        emit = self.process_new
        new = self.new
        check = self.check
        # resolution
        for i in g.elig:
            sign, atom = lits[i]
            if self.is_eq(atom) or (sign and g.sel):
                continue
            q = rename(atom, off)
            for at_b, (b, j) in self.res[not sign].unifiable(q):
                check()
                s: dict = {}
                if unify(q, at_b, s):
                    cl, info = R.resolution(g, i, off, b, j, 0, s)
                    emit(new(cl, "resolution", (g, b), info))
        # superposition from g into active clauses
        if not g.sel:
            for i in g.maxl:
                sign, atom = lits[i]
                if not sign or not self.is_eq(atom):
                    continue
                for side in (0, 1):
                    l, r = atom[1 + side], atom[2 - side]
                    if gt(r, l):
                        continue
                    ql = rename(l, off)
                    for u, (b, j, pos) in self.sup_into.unifiable(ql):
                        check()
                        s = {}
                        if not unify(ql, u, s):
                            continue
                        if gt(R.inst(r, off, s), apply(ql, s)):
                            continue
                        ab = b.lits[j][1]
                        if self.is_eq(ab):
                            k = pos[0]
                            if gt(R.inst(ab[3 - k], 0, s), R.inst(ab[k], 0, s)):
                                continue
                        cl, info = R.superposition(g, i, side, off, b, j, pos, 0, s)
                        emit(new(cl, "superposition", (g, b), info))
        # superposition from active clauses into g
        for j in g.elig:
            sign, atom = lits[j]
            if sign and g.sel:
                continue
            eq = self.is_eq(atom)
            for pos, u in list(self.into_positions(atom)):
                qu = rename(u, off)
                for l, (a, i, side) in self.sup_from.unifiable(qu):
                    check()
                    if a is g:
                        continue
                    s = {}
                    if not unify(l, qu, s):
                        continue
                    if gt(R.inst(a.lits[i][1][2 - side], 0, s), R.inst(l, 0, s)):
                        continue
                    if eq:
                        k = pos[0]
                        if gt(R.inst(atom[3 - k], off, s), R.inst(atom[k], off, s)):
                            continue
                    cl, info = R.superposition(a, i, side, 0, g, j, pos, off, s)
                    emit(new(cl, "superposition", (a, g), info))
        # equality resolution
        for i in g.elig:
            sign, atom = lits[i]
            if sign or not self.is_eq(atom):
                continue
            check()
            s = {}
            if unify(atom[1], atom[2], s):
                cl, info = R.equality_resolution(g, i, s)
                emit(new(cl, "equality_resolution", (g,), info))
        if g.sel:
            return
        # factoring and equality factoring
        for i in g.maxl:
            sign, atom = lits[i]
            if not sign:
                continue
            if not self.is_eq(atom):
                h = atom if type(atom) is str else atom[0]
                for j, (s2, a2) in enumerate(lits):
                    if j == i or not s2 or self.is_eq(a2):
                        continue
                    if j in g.maxl and j < i:
                        continue
                    if (a2 if type(a2) is str else a2[0]) != h:
                        continue
                    check()
                    s = {}
                    if unify(atom, a2, s):
                        cl, info = R.factoring(g, i, j, s)
                        emit(new(cl, "factoring", (g,), info))
                continue
            for si in (0, 1):
                sl, tl = atom[1 + si], atom[2 - si]
                if gt(tl, sl):
                    continue
                for j, (s2, a2) in enumerate(lits):
                    if j == i or not s2 or not self.is_eq(a2):
                        continue
                    for sj in (0, 1):
                        check()
                        s = {}
                        if not unify(sl, a2[1 + sj], s):
                            continue
                        if gt(R.inst(tl, 0, s), R.inst(sl, 0, s)):
                            continue
                        cl, info = R.equality_factoring(g, i, si, j, sj, s)
                        emit(new(cl, "equality_factoring", (g,), info))

    # ------------------------------------------------------------ the loop
    def load(self) -> None:
        for lits, rule, fields, conj in self.inputs:
            self.check()
            # the input step records the clause as given (variables renormalized)
            atoms, mapping = normalize_vars([a for _, a in lits])
            raw = tuple((sg, a) for (sg, _), a in zip(lits, atoms))
            nv = len(mapping)
            fields = dict(fields)
            if "varnames" in fields:      # the user's names, renumbered with the clause
                given = fields["varnames"]
                names = [""] * nv
                for old, new in mapping.items():
                    if 0 <= old < len(given):
                        names[new] = given[old]
                fields["varnames"] = tuple(names)
            c = Clause(self.next_id, raw, nv, rule, (), fields, conj)
            self.next_id += 1
            self.max_vars = max(self.max_vars, nv)
            c.source = fields.get("formula")
            lits2, _ = normalize(raw, self.eq)
            if len(lits2) != len(raw):
                c = self.new(raw, "duplicate_removal", (c,), {})
            if not c.lits:
                raise Refuted(c)
            if R.is_tautology(c.lits, self.eq):
                continue
            if self.st.sos and not conj:
                c2 = self.forward_simplify(c)
                if c2 is None:
                    continue
                if not c2.lits:
                    raise Refuted(c2)
                self.fig["kept"] += 1
                self.kept_now += 1
                self.activate(c2)
                if len(c2.lits) == 1:
                    self.unit_conflict(c2)
                    self.units[c2.lits[0][0]].insert(c2.lits[0][1], (c2,))
            else:
                self.process_new(c)

    def run(self) -> dict:
        """Saturate.  Returns ``{"outcome", "empty", "limit", "figures",
        "reason"}`` with ``empty`` the empty clause of a refutation."""
        out = {"outcome": None, "empty": None, "limit": None, "reason": ""}
        try:
            self.load()
            while True:
                self.check()
                g = self.pick()
                if g is None:
                    out["outcome"] = "saturated"
                    out["reason"] = "no clause left to pick: the clause set is saturated"
                    break
                g2 = self.forward_simplify(g)
                if g2 is not g:
                    self.kill(g)
                    if g2 is None:
                        continue
                    if not g2.lits:
                        raise Refuted(g2)
                    self.kept_now += 1
                g = g2
                self.fig["given"] += 1
                self.activate(g)
                self.backward_simplify(g)
                self.generate(g)
        except Refuted as r:
            out["outcome"] = "refutation"
            out["empty"] = r.clause
            out["reason"] = "the empty clause was derived"
        except LimitReached as lim:
            out["outcome"] = "limit"
            out["limit"] = lim.kind
            out["reason"] = {"time": "time limit reached",
                             "memory": "memory limit reached",
                             "clauses": "kept-clause limit reached"}[lim.kind]
        except MemoryError:
            reserve.release()
            self.wheap = self.aheap = []
            out["outcome"] = "limit"
            out["limit"] = "memory"
            out["reason"] = "ran out of memory"
        except RecursionError:
            out["outcome"] = "limit"
            out["limit"] = "memory"
            out["reason"] = "terms nested too deeply for the engine"
        out["figures"] = self.figures()
        return out

    def figures(self) -> dict:
        f = dict(self.fig)
        f["seconds"] = round(time.monotonic() - self.started, 4)
        f["cpu_seconds"] = round(time.process_time() - self.cpu_started, 4)
        f["given_per_second"] = round(f["given"] / f["cpu_seconds"], 1) if f["cpu_seconds"] > 0 else 0.0
        return f



