"""Finite countermodel search: domain sizes 1, 2, ... up to a bound, over SAT.

``ModelSearch(cp).run(deadline)`` works until the ``time.monotonic()``
deadline and returns a model (DEVELOPERS.md "Models (data)", every symbol of
the clausified signature), or None when the slice ended or nothing is left to
search; the next ``run`` continues where the last one stopped.  The encoding
grows with the domain inside one SAT solver (see :mod:`worker.models.encode`).
"""

from __future__ import annotations

import os
import resource
import threading
import time

from pysat.solvers import Solver

from .encode import Encoding
from .flatten import flatten_clauses, split_clause

# The solver was picked by measurement: benchmarks/models_bench.py, recorded
# in DEVELOPERS.md "Finite model search".
DEFAULT_SOLVER = "minisat22"
# Solvers whose interrupt() works from another thread; the others are run in
# slices of a conflict budget with the clock checked between slices.
_INTERRUPTIBLE = {"glucose3", "glucose4", "glucose42", "minisat22", "maplechrono",
                  "maplecm", "maplesat", "mergesat3", "gluecard3", "gluecard4",
                  "minicard"}


_PAGE = os.sysconf("SC_PAGE_SIZE") if hasattr(os, "sysconf") else 4096


def near_memory_cap() -> bool:
    """Is the process's address space within reach of its cap (RLIMIT_AS,
    set in a work horse)?  The SAT solver is C++ code that does not survive
    running out of memory (it aborts or crashes the process), so the model
    search stops short of the cap and raises MemoryError instead, which the
    portfolio answers by dropping the model search while saturation goes on.
    The reach: an eighth of the cap, at least 48 MB and at most 512 MB."""
    try:
        soft = resource.getrlimit(resource.RLIMIT_AS)[0]
        if soft == resource.RLIM_INFINITY or soft <= 0:
            return False
        with open("/proc/self/statm") as f:
            vm = int(f.read().split()[0]) * _PAGE
    except (OSError, ValueError, IndexError):
        return False
    return vm > soft - min(max(48 << 20, soft // 8), 512 << 20)


def _guard_memory() -> None:
    if near_memory_cap():
        raise MemoryError("the model search stopped short of the memory cap")


class _Sat:
    """One incremental SAT solver with a deadline-respecting solve."""

    def __init__(self, name: str):
        self.name = name
        self.solver = Solver(name=name)
        self.clauses = 0

    def add(self, clause):
        self.solver.add_clause(clause)
        self.clauses += 1

    def add_all(self, clauses):
        _guard_memory()
        add = self.solver.add_clause
        for c in clauses:
            add(c)
        self.clauses += len(clauses)

    def solve(self, assumptions, deadline):
        """True / False, or None when the deadline came first."""
        _guard_memory()           # before any thread is started near the cap
        left = deadline - time.monotonic()
        if left <= 0:
            return None
        s = self.solver
        if left == float("inf"):
            return s.solve(assumptions=assumptions)
        if self.name in _INTERRUPTIBLE:
            # the timer interrupts the solver at the deadline; the conflict
            # budget brings control back now and then all the same, so that a
            # timer that never fires (its thread failing near a memory cap)
            # cannot leave the search running past its deadline, deaf to
            # every signal while inside the solver
            timer = threading.Timer(left, s.interrupt)
            timer.daemon = True
            timer.start()
            try:
                budget = 5_000
                while True:
                    _guard_memory()
                    s.conf_budget(budget)
                    r = s.solve_limited(assumptions=assumptions, expect_interrupt=True)
                    if r is not None:
                        return r
                    if time.monotonic() >= deadline:
                        return None
                    budget = min(budget * 2, 200_000)
            finally:
                timer.cancel()
                timer.join()
                s.clear_interrupt()     # a late interrupt must not stop the next call
        budget = 500
        while True:
            _guard_memory()
            s.conf_budget(budget)
            r = s.solve_limited(assumptions=assumptions)
            if r is not None:
                return r
            if time.monotonic() >= deadline:
                return None
            budget = min(budget * 2, 20000)

    def model(self):
        return self.solver.get_model() or []

    def delete(self):
        if self.solver is not None:
            self.solver.delete()
            self.solver = None


def _symbols(cp):
    """Functions and predicates (name -> arity) of the signature and clauses."""
    funs, preds = {}, {}
    for sym in (getattr(cp, "signature", None) or {}).values():
        if sym.name == "=":
            continue
        (funs if sym.kind == "function" else preds)[sym.name] = sym.arity

    def term(t):
        if type(t) is str:
            funs.setdefault(t, 0)
        elif type(t) is tuple:
            funs.setdefault(t[0], len(t) - 1)
            for a in t[1:]:
                term(a)

    for c in cp.clauses:
        for _s, atom in getattr(c, "lits", c):
            if type(atom) is str:
                preds.setdefault(atom, 0)
            elif atom[0] == "=":
                term(atom[1])
                term(atom[2])
            else:
                preds.setdefault(atom[0], len(atom) - 1)
                for a in atom[1:]:
                    term(a)
    return funs, preds


# The SAT variables are numbered for the largest size (see encode.py): a
# function of arity k takes max_size^(k+1) numbers.  Past this many the
# largest size is lowered (and the reason says so).
MAX_VARIABLES = 4_000_000


def _id_space(funs, preds, n):
    return sum(n ** (k + 1) for k in funs.values()) + sum(n ** k for k in preds.values())


class ModelSearch:
    """Resumable search for a finite model of a clause set."""

    def __init__(self, cp, max_size: int = 8, min_size: int = 1,
                 max_clauses: int = 5_000_000, solver: str = DEFAULT_SOLVER,
                 split: bool = True):
        self.cp = cp
        self.max_size = max_size
        self.min_size = max(1, min_size)
        self.max_clauses = max_clauses
        self.solver_name = solver
        self.exhausted = False
        self.done = False               # nothing left to search (exhausted or gave up)
        self.models_found = 0
        self.sizes_with_model: list = []
        self.sizes_excluded: list = []
        self.current_size = 1
        self.reason = ""
        self.figures = {"clauses": 0, "seconds": {}, "ground_seconds": 0.0,
                        "solve_seconds": 0.0}
        self._funs, self._preds = _symbols(cp)
        self.requested_max_size = max_size
        self.size_note = ""
        while max_size > 1 and _id_space(self._funs, self._preds, max_size) > MAX_VARIABLES:
            max_size -= 1
        if max_size < self.requested_max_size:
            self.max_size = max_size
            self.size_note = (f"sizes above {max_size} skipped: numbering the cells of "
                              f"the symbols of high arity would need over "
                              f"{MAX_VARIABLES:,} SAT variables")
        self._flat = flatten_clauses(cp.clauses)
        self._internal = set()          # split predicates: not part of the model
        if split:
            self._flat = self._split(self._flat)
        self._enc = None
        self._sat = None
        self._phase = "grow"            # grow -> solve -> (next size) grow ...
        self._clause_at = 0             # grounding progress within the size
        self._start = (0, 0)
        self._size_clauses_added = False

    def _split(self, flat):
        def new_name(arity):
            name = f"$split{len(self._internal) + 1}"
            self._internal.add(name)
            self._preds[name] = arity
            return name
        out = []
        for fc in flat:
            out += split_clause(fc, self.max_size, new_name)
        return out

    # -------------------------------------------------------------- driving
    def run(self, deadline: float | None = None):
        if deadline is None:
            deadline = float("inf")
        if self.done:
            return None
        if self._enc is None:
            self._enc = Encoding(self._flat, self._funs, self._preds, self.max_size)
            self._sat = _Sat(self.solver_name)
        enc, sat = self._enc, self._sat
        while self.current_size <= self.max_size:
            n = self.current_size
            t0 = time.monotonic()
            if self._phase == "grow":
                if not self._grow(n, deadline):
                    self._spent(n, t0)
                    return None
                if self.done:
                    return None
                self._phase = "solve" if n >= self.min_size else "next"
            if self._phase == "solve":
                t1 = time.monotonic()
                self.figures["ground_seconds"] += t1 - t0
                r = sat.solve([enc.selector(n)], deadline)
                self.figures["solve_seconds"] += time.monotonic() - t1
                self._spent(n, t0)
                if r is None:
                    self.reason = f"size {n}: time slice ended while solving"
                    return None
                if r:
                    model = self._extract(n)
                    self.models_found += 1
                    self.sizes_with_model.append(n)
                    self._next_size(n, excluded=False)
                    self.reason = f"model of size {n} found"
                    return model
                self.sizes_excluded.append(n)
                self._phase = "next"
            if self._phase == "next":
                self._next_size(n, excluded=n >= self.min_size)
        self.exhausted = not self.models_found and not self.size_note
        self.done = True
        span = (f"size {self.min_size} to {self.max_size}" if self.min_size < self.max_size
                else f"size {self.max_size}")
        if self.models_found:
            self.reason = (f"every {span} searched: models at size "
                           f"{', '.join(map(str, self.sizes_with_model))}; none at "
                           f"{', '.join(map(str, self.sizes_excluded)) or 'any other size'}")
        else:
            self.reason = f"no model of {span}"
        if self.size_note:
            self.reason += "; " + self.size_note
        self._release()
        return None

    def _spent(self, n, t0):
        secs = self.figures["seconds"]
        secs[n] = round(secs.get(n, 0.0) + time.monotonic() - t0, 4)

    def _next_size(self, n, excluded):
        if excluded:
            self._sat.add([-self._enc.selector(n)])
        self.current_size = n + 1
        self._phase = "grow"
        self._clause_at = 0
        self._start = (0, 0)
        self._size_clauses_added = False

    def _grow(self, n, deadline) -> bool:
        """Add what size n needs; False when the deadline came first."""
        enc, sat = self._enc, self._sat
        if not self._size_clauses_added:
            est = enc.estimate(n)
            if sat.clauses + est > self.max_clauses:
                self.reason = (f"size {n} skipped: the encoding would need about "
                               f"{sat.clauses + est:,} clauses, over the budget of "
                               f"{self.max_clauses:,}")
                self.done = True
                self._release()
                return True
            sat.add_all(enc.size_clauses(n))
            self._size_clauses_added = True
        clock = time.monotonic
        buf = []

        def past_deadline():
            if len(buf) > 50_000:           # hand instances to the solver in batches
                sat.add_all(buf)
                buf.clear()
            return clock() > deadline

        total = len(enc.flat)
        while self._clause_at < total:
            # clauses of fewer than two variables never ask past_deadline():
            # the clock is read here every 256 clauses as well
            if self._clause_at % 256 == 255 and clock() > deadline:
                self.reason = f"size {n}: time slice ended while grounding"
                return False
            ground = enc.grounder(self._clause_at)
            resume = ground(n, buf.append, past_deadline, self._start)
            sat.add_all(buf)
            buf.clear()
            if resume is not None:
                self._start = resume
                self.reason = f"size {n}: time slice ended while grounding"
                return False
            self._clause_at += 1
            self._start = (0, 0)
        self.figures["clauses"] = sat.clauses
        return True

    def _release(self):
        if self._sat is not None:
            self._sat.delete()
            self._sat = None

    def __del__(self):
        try:
            self._release()
        except Exception:
            pass

    # -------------------------------------------------------------- the model
    def _extract(self, n) -> dict:
        enc = self._enc
        true = {x for x in self._sat.model() if x > 0}
        funs, preds = {}, {}
        for f, k in enc.functions.items():
            values = []
            for args in _tuples(k, n):
                idx = enc.idx(args)
                v = next((v for v in range(n) if enc.fvar(f, idx, v) in true), 0)
                values.append([list(args), v])
            funs[f] = {"arity": k, "values": values}
        for p, k in enc.predicates.items():
            if p in self._internal:
                continue
            values = [[list(args), enc.pvar(p, enc.idx(args)) in true]
                      for args in _tuples(k, n)]
            preds[p] = {"arity": k, "values": values}
        return {"size": n, "functions": funs, "predicates": preds}


def _tuples(k, n):
    out = [()]
    for _ in range(k):
        out = [t + (a,) for t in out for a in range(n)]
    return out


def find_model(cp, max_size: int = 8, deadline: float | None = None, **kw):
    """Search sizes 1..max_size until the deadline; the first model or None."""
    s = ModelSearch(cp, max_size=max_size, **kw)
    try:
        return s.run(deadline)
    finally:
        s._release()
