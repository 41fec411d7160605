"""Suites, their runs, reuse of earlier verdicts, and comparison of runs.

Three layers, each usable on its own:

* **Suites** (the user's side): :func:`load_suite` reads a manifest
  (``suite.toml``, format in DEVELOPERS.md, "Suites"), expands its globs,
  reads every problem with its includes and the suite's axiom files, and
  reports every problem it finds at once (:class:`SuiteError`), each with its
  ``file:line:col``, before anything is submitted.  :func:`submission` turns
  a loaded suite into the body of ``POST /api/corpus/runs``.
* **Runs** (the server's side): :func:`create_run` reads the submitted
  bundles again (the server trusts no hash it is sent), hashes every axiom
  statement after includes are resolved, plans the consistency guard (one
  satisfiability check per distinct axiom set) and the reuse of the last run's
  verdicts (:func:`plan_reuse`), then writes one batch through
  :class:`service.store.Store` and the run record through
  :class:`CorpusStore`.
* **Views and comparisons**: :func:`run_view` (pure) joins a run record with
  its job records and marks every obligation on axioms the run found
  contradictory; :func:`view_of` reads the records and writes that mark on
  the job records too, where the settle hook (:mod:`service.corpus_marks`)
  has not already; :func:`compare` (pure) puts each obligation in one
  list (on contradictory axioms, flipped, lost, gained, answered, added,
  removed) and says what is unexpected, slower or faster, and whose axioms
  used changed.

DEVELOPERS.md, "Corpus runs", has the record layout and the rules.
"""

from __future__ import annotations

import difflib
import glob
import hashlib
import json
import os
import posixpath
import re
import secrets
import time
import tomllib
from dataclasses import dataclass, field

from worker import verdict as V
from worker.syntax import InputError, Span, bundle_reader, load_problem
from worker.syntax.formulas import CONJECTURE, NEGATED_CONJECTURE

from . import corpus_marks as CM
from .corpus_marks import (MARK_FIELD, MARK_SEP, contradiction_text, mark_text,  # noqa: F401
                           unmarked_reason)

MANIFEST = "suite.toml"
MAIN = "_suite_.nj"                 # the synthetic main file of a problem with suite axioms
GUARD_MAIN = "_axioms_.nj"          # the axioms-only problem of the consistency guard
GUARD_FILE = "(axiom check)"        # the job "file" of a guard job
DEFAULT_AXIOM_CHECK_TIME = 2.0
DEFAULT_TIME_THRESHOLD = 1.0        # seconds: a smaller change in time is not reported
DEFAULT_TIME_RATIO = 1.5            # ... nor one by less than this factor
SETTINGS_KEYS = ("strategy", "equality", "model_search", "max_model_size")
REUSABLE_PROOF = frozenset({V.THEOREM, V.UNSATISFIABLE})
REUSABLE_MODEL = frozenset({V.COUNTER_SATISFIABLE, V.SATISFIABLE})
FINAL = frozenset({"done", "failed", "cancelled"})


# =================================================================== suites

@dataclass
class SuiteProblem:
    file: str                       # relative to the suite folder, posix
    bundle: dict                    # {"main", "files", "language"} as the API takes it
    obligations: list               # conjecture names, or [None]
    problem: object = None          # the Problem read on the user's side


@dataclass
class Suite:
    name: str
    description: str
    source: str
    time_limit: float
    folder: str
    manifest: str
    axioms: list                    # axiom files, relative to the folder
    problems: list                  # of SuiteProblem
    expectations: dict              # obligation key -> SZS status
    notes: str = ""
    settings: dict = field(default_factory=dict)
    axiom_check_time: float = DEFAULT_AXIOM_CHECK_TIME

    def keys(self) -> list:
        return [obligation_key(p.file, c) for p in self.problems for c in p.obligations]


class SuiteError(Exception):
    """Every problem found while loading a suite."""

    def __init__(self, errors: list):
        self.errors = errors
        super().__init__(self.render())

    def render(self) -> str:
        n = len(self.errors)
        tail = f"{n} problem{'s' if n != 1 else ''} in the suite; nothing was submitted"
        return "\n".join([e.render() for e in self.errors] + [tail])


def obligation_key(file: str, conjecture: str | None) -> str:
    """``file#conjecture``, or ``file`` for a file without a conjecture."""
    return file if conjecture is None else f"{file}#{conjecture}"


def _line_of(text: str, pattern: str, start_at: str | None = None) -> tuple[int, int, str]:
    """(line, col, line text) of the first line matching ``pattern`` (a
    regex), searched after the line matching ``start_at`` when given."""
    lines = text.split("\n")
    begin = 0
    if start_at:
        for i, ln in enumerate(lines):
            if re.match(start_at, ln):
                begin = i
                break
    rx = re.compile(pattern)
    for i in range(begin, len(lines)):
        m = rx.search(lines[i])
        if m:
            return i + 1, m.start() + 1 + (len(m.group(0)) - len(m.group(0).lstrip())), lines[i]
    return 1, 1, lines[0] if lines else ""


class _Errors:
    def __init__(self, manifest_name: str, manifest_text: str):
        self.items: list = []
        self.seen: set = set()
        self.mname = manifest_name
        self.mtext = manifest_text

    def add(self, err: InputError) -> None:
        key = err.render()
        if key not in self.seen:
            self.seen.add(key)
            self.items.append(err)

    def manifest(self, message: str, pattern: str | None = None, table: str | None = None,
                 hint: str | None = None) -> None:
        line, col, text = (_line_of(self.mtext, pattern, table and rf"^\s*\[{re.escape(table)}\]")
                           if pattern else (1, 1, self.mtext.split("\n")[0]))
        self.add(InputError(message, Span(self.mname, line, col), text, hint))


def _key_pattern(key: str) -> str:
    return rf'^\s*(?:"{re.escape(key)}"|\'{re.escape(key)}\'|{re.escape(key)})\s*='


def _relocate(err: InputError, prefix: str) -> InputError:
    """The same error with its file named relative to where the user stands."""
    if err.span is None or not prefix or err.span.file.startswith("/"):
        return err
    span = Span(posixpath.normpath(posixpath.join(prefix, err.span.file)),
                err.span.line, err.span.col)
    return InputError(err.message, span, err.line_text, err.hint)


def _expand(folder: str, patterns, what: str, errs: _Errors, field_name: str) -> list:
    out = []
    for pat in patterns:
        if not isinstance(pat, str) or not pat:
            errs.manifest(f"'{field_name}' must list file names or globs", _key_pattern(field_name),
                          "suite")
            continue
        if pat.startswith("/") or pat == ".." or pat.startswith("../") or "/../" in pat:
            errs.manifest(f"{what} '{pat}' lies outside the suite's folder",
                          re.escape(json.dumps(pat)) + "|" + re.escape(pat), "suite",
                          "paths are relative to the manifest's folder and stay inside it")
            continue
        hits = sorted(glob.glob(pat, root_dir=folder or ".", recursive=True))
        hits = [h.replace(os.sep, "/") for h in hits
                if os.path.isfile(os.path.join(folder, h))]
        if not hits:
            errs.manifest(f"{what} '{pat}' matches no file in {folder or '.'}",
                          re.escape(json.dumps(pat)) + "|" + re.escape(pat), "suite")
        for h in hits:
            h = posixpath.normpath(h)
            if h not in out:
                out.append(h)
    return out


def _read_into(folder: str, files: dict):
    """A read function over the suite folder that records what it reads
    (the bundle sent to the service)."""
    def read(path: str) -> str:
        if path in files:
            return files[path]
        if path.startswith("/") or path == ".." or path.startswith("../"):
            raise InputError(f"'{path}' lies outside the suite's folder: only files "
                             f"inside it can be included")
        real = os.path.join(folder, path)
        try:
            with open(real, encoding="utf-8") as fh:
                text = fh.read()
        except FileNotFoundError:
            raise
        except IsADirectoryError:
            raise InputError(f"cannot read '{path}': it is a folder") from None
        except UnicodeDecodeError as e:
            raise InputError(f"cannot read '{path}': it is not UTF-8 text ({e.reason})") from None
        except OSError as e:
            raise InputError(f"cannot read '{path}': {e.strerror or e}") from None
        files[path] = text
        return text
    return read


def problem_bundle(folder: str, axioms: list, file: str) -> tuple[dict, object]:
    """Read one problem of a suite: ``(bundle, Problem)``.  With suite axioms
    the main file is a synthetic native file that includes each axiom file and
    then the problem file.  Raises InputError."""
    files: dict = {}
    read = _read_into(folder, files)
    if axioms:
        main_text = "".join(f'include "{a}"\n' for a in axioms) + f'include "{file}"\n'
        files[MAIN] = main_text
        problem = load_problem(MAIN, read)
        main = MAIN
    else:
        problem = load_problem(file, read)
        main = file
    ordered = {main: files[main]}
    ordered.update((k, v) for k, v in files.items() if k != main)
    return {"main": main, "files": ordered, "language": None}, problem


def load_suite(path: str) -> Suite:
    """Read the suite at ``path`` (a folder with ``suite.toml``, or a manifest
    file).  Raises :class:`SuiteError` listing every problem found."""
    if os.path.isdir(path):
        folder, manifest = path, os.path.join(path, MANIFEST)
    else:
        folder, manifest = os.path.dirname(path), path
    shown = os.path.normpath(manifest)
    prefix = os.path.normpath(folder) if folder else ""
    prefix = "" if prefix == "." else prefix
    try:
        with open(manifest, encoding="utf-8") as fh:
            text = fh.read()
    except FileNotFoundError:
        what = (f"'{path}' has no manifest: expected {shown}" if os.path.isdir(path)
                else f"no such suite manifest: {shown}")
        raise SuiteError([InputError(what, None, None,
                                     "a suite is a folder with a suite.toml; see "
                                     "DEVELOPERS.md, \"Suites\"")]) from None
    except (OSError, UnicodeDecodeError) as e:
        raise SuiteError([InputError(f"cannot read {shown}: {e}")]) from None
    errs = _Errors(shown, text)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as e:
        m = re.search(r"\(at line (\d+), column (\d+)\)", str(e))
        line, col = (int(m.group(1)), int(m.group(2))) if m else (1, 1)
        msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", str(e)) or "not valid TOML"
        lines = text.split("\n")
        raise SuiteError([InputError(f"the manifest is not valid TOML: {msg}",
                                     Span(shown, line, col),
                                     lines[line - 1] if 0 < line <= len(lines) else None)]) from None

    s = data.get("suite")
    if not isinstance(s, dict):
        errs.manifest("the manifest has no [suite] table", None, None,
                      "start it with [suite] and the fields name, description, source, "
                      "time_limit, axioms, problems")
        raise SuiteError(errs.items)

    def need(key, kinds, what):
        v = s.get(key)
        if v is None:
            errs.manifest(f"[suite] has no '{key}' ({what})", r"^\s*\[suite\]")
            return None
        if not isinstance(v, kinds) or isinstance(v, bool):
            errs.manifest(f"'{key}' must be {what}", _key_pattern(key), "suite")
            return None
        return v

    name = need("name", str, "a text")
    description = need("description", str, "a text")
    source = need("source", str, "a text")
    time_limit = need("time_limit", (int, float), "a number of seconds")
    if time_limit is not None and time_limit <= 0:
        errs.manifest("'time_limit' must be more than 0 seconds", _key_pattern("time_limit"), "suite")
    axiom_pats = need("axioms", list, "a list of files or globs (may be empty)")
    problem_pats = need("problems", list, "a list of files or globs")
    notes = s.get("notes", "")
    if not isinstance(notes, str):
        errs.manifest("'notes' must be a text", _key_pattern("notes"), "suite")
        notes = ""
    if name is not None and not re.fullmatch(r"[A-Za-z0-9_.-]{1,80}", name):
        errs.manifest("'name' must be 1 to 80 letters, digits, '-', '_' or '.'",
                      _key_pattern("name"), "suite")
    known = {"name", "description", "source", "time_limit", "axioms", "problems", "notes"}
    for k in s:
        if k not in known:
            errs.manifest(f"unknown field '{k}' in [suite]", _key_pattern(k), "suite",
                          "known fields: " + ", ".join(sorted(known)))
    for k in data:
        if k not in ("suite", "settings", "expectations"):
            errs.manifest(f"unknown table [{k}]", rf"^\s*\[{re.escape(k)}\]",
                          None, "known tables: [suite], [settings], [expectations]")

    settings = {}
    check_time = DEFAULT_AXIOM_CHECK_TIME
    st = data.get("settings", {})
    if not isinstance(st, dict):
        errs.manifest("'settings' must be a table", r"settings")
        st = {}
    for k, v in st.items():
        if k == "axiom_check_time":
            if isinstance(v, bool) or not isinstance(v, (int, float)) or v <= 0:
                errs.manifest("'axiom_check_time' must be a positive number of seconds",
                              _key_pattern(k), "settings")
            else:
                check_time = float(v)
        elif k in SETTINGS_KEYS:
            settings[k] = v
        else:
            errs.manifest(f"unknown setting '{k}'", _key_pattern(k), "settings",
                          "known settings: " + ", ".join(SETTINGS_KEYS + ("axiom_check_time",)))

    axioms = _expand(folder, axiom_pats or [], "axiom file", errs, "axioms")
    files = [f for f in _expand(folder, problem_pats or [], "problem", errs, "problems")
             if f not in axioms]
    if problem_pats is not None and not problem_pats:
        errs.manifest("'problems' lists nothing", _key_pattern("problems"), "suite")

    # Axiom files on their own: readable, and no conjectures in them.
    for a in axioms:
        try:
            _, ap = problem_bundle(folder, [], a)
            for c in ap.conjectures():
                errs.add(_relocate(InputError(
                    f"the axiom file has a conjecture '{c.name}'; axiom files give axioms only",
                    c.span, None, "move the conjecture to a problem file"), prefix))
        except InputError as e:
            errs.add(_relocate(e, prefix))
        except FileNotFoundError:
            errs.add(InputError(f"cannot read '{a}': no such file"))

    problems = []
    first_conj: dict = {}
    for f in files:
        try:
            bundle, prob = problem_bundle(folder, axioms, f)
        except InputError as e:
            errs.add(_relocate(e, prefix))
            continue
        obligations = prob.obligations()
        for c in prob.conjectures():
            other = first_conj.get(c.name)
            if other is not None and other[0] != f:
                errs.add(_relocate(InputError(
                    f"duplicate conjecture name '{c.name}': it also names a conjecture "
                    f"at {_relocate(InputError('', other[1]), prefix).span}",
                    c.span, None, "conjecture names are unique in a suite"), prefix))
            else:
                first_conj.setdefault(c.name, (f, c.span))
        problems.append(SuiteProblem(f, bundle, obligations, prob))

    expectations = {}
    ex = data.get("expectations", {})
    if not isinstance(ex, dict):
        errs.manifest("'expectations' must be a table of file or file#conjecture = status",
                      r"expectations")
        ex = {}
    by_file = {p.file: p for p in problems}
    listed = set(files)
    for key, status in ex.items():
        pat = _key_pattern(key)
        if not isinstance(status, str) or status not in V.STATUSES:
            close = (difflib.get_close_matches(status, V.STATUSES, n=1, cutoff=0.6)
                     if isinstance(status, str) else [])
            hint = "one of: " + ", ".join(V.STATUSES)
            if close:
                hint = f"did you mean '{close[0]}'? ({hint})"
            errs.manifest(f"'{status}' is not an SZS status name", pat, "expectations", hint)
            continue
        file, _, conj = key.partition("#")
        if file not in listed:
            errs.manifest(f"expectation for '{file}', which is not a problem of the suite",
                          pat, "expectations")
            continue
        p = by_file.get(file)
        if p is None:
            continue            # the file did not read: already reported
        if conj:
            if conj not in p.obligations:
                errs.manifest(f"'{file}' has no conjecture named '{conj}'", pat, "expectations",
                              "its obligations: " + ", ".join(
                                  obligation_key(file, c) for c in p.obligations))
                continue
            full = obligation_key(file, conj)
        else:
            if len(p.obligations) != 1:
                errs.manifest(f"'{file}' has {len(p.obligations)} conjectures: name one "
                              f"as '{file}#NAME'", pat, "expectations")
                continue
            full = obligation_key(file, p.obligations[0])
        if full in expectations:
            errs.manifest(f"a second expectation for '{full}'", pat, "expectations")
            continue
        expectations[full] = status

    if errs.items:
        raise SuiteError(errs.items)
    return Suite(name=name, description=description, source=source,
                 time_limit=float(time_limit), folder=folder, manifest=shown,
                 axioms=axioms, problems=problems, expectations=expectations,
                 notes=notes, settings=settings, axiom_check_time=check_time)


def submission(suite: Suite, *, full: bool = False) -> dict:
    """The body of ``POST /api/corpus/runs`` for a loaded suite."""
    return {"suite": suite.name, "manifest": os.path.basename(suite.manifest),
            "manifest_path": manifest_path(suite.manifest),
            "description": suite.description, "source": suite.source,
            "time_limit": suite.time_limit, "settings": dict(suite.settings),
            "axiom_check_time": suite.axiom_check_time,
            "axiom_files": list(suite.axioms),
            "expectations": dict(suite.expectations), "full": bool(full),
            "problems": [{"file": p.file, "bundle": p.bundle} for p in suite.problems]}


def manifest_path(manifest: str) -> str:
    """The manifest as the user named it, relative to where the run was
    started (an absolute path when it lies above that folder): what tells
    apart runs of one suite name made from different folders."""
    shown = os.path.normpath(manifest).replace(os.sep, "/")
    if os.path.isabs(shown):
        try:
            rel = os.path.relpath(shown).replace(os.sep, "/")
        except ValueError:          # another drive
            return shown
        if rel != ".." and not rel.startswith("../"):
            return rel
    return shown


# ================================================================= hashing

def statement_hash(st) -> str:
    """Content hash of one statement after includes are resolved: its role
    and formula (variable names, spacing and comments aside)."""
    role = "axiom" if st.role not in (CONJECTURE, NEGATED_CONJECTURE) else st.role
    return hashlib.sha256(f"{role}\n{st.formula!r}".encode()).hexdigest()[:16]


def axiom_table(problem) -> dict:
    """name -> content hash of every statement that is not a conjecture."""
    return {s.name: statement_hash(s) for s in problem.statements
            if s.role not in (CONJECTURE, NEGATED_CONJECTURE)}


def axiom_places(problem) -> dict:
    """name -> the file (after includes) of every statement that is not a
    conjecture."""
    return {s.name: (s.span.file if s.span is not None else None) for s in problem.statements
            if s.role not in (CONJECTURE, NEGATED_CONJECTURE)}


def axiom_index(run: dict) -> list:
    """Every axiom of a run as ``{"name", "file", "hash"}``, sorted: from the
    run's ``axiom_index`` when stored, else (runs made before it was) from its
    axiom sets, without the file."""
    stored = run.get("axiom_index")
    if isinstance(stored, list):
        return stored
    seen = {(n, h) for table in (run.get("axiom_sets") or {}).values() for n, h in table.items()}
    return [{"name": n, "file": None, "hash": h} for n, h in sorted(seen)]


def axiom_changes(before: list | None, after: list | None) -> dict:
    """Axioms added, removed and edited (same name, other content hash) from
    one run's :func:`axiom_index` to another's.  An axiom that only moved to
    another file is not a change.  Each item: ``{"name", "file"}`` (the file
    it is in, or was in when removed; None when the run did not record it),
    edited ones also ``"file_before"``."""
    def by_name(index):
        out: dict = {}
        for e in index or []:
            d = out.setdefault(e["name"], {"hashes": set(), "files": set()})
            d["hashes"].add(e["hash"])
            if e.get("file"):
                d["files"].add(e["file"])
        return out

    def where(d):
        return ", ".join(sorted(d["files"])) or None

    a, b = by_name(before), by_name(after)
    return {"added": [{"name": n, "file": where(b[n])} for n in sorted(b) if n not in a],
            "removed": [{"name": n, "file": where(a[n])} for n in sorted(a) if n not in b],
            "edited": [{"name": n, "file": where(b[n]), "file_before": where(a[n])}
                       for n in sorted(b) if n in a and a[n]["hashes"] != b[n]["hashes"]]}


def set_id(table: dict) -> str:
    canon = json.dumps(sorted(table.items()), separators=(",", ":"))
    return hashlib.sha256(canon.encode()).hexdigest()[:12]


def axioms_only_text(problem) -> str:
    """The problem's axioms alone, printed in the native language (the
    consistency guard's problem)."""
    from worker.syntax.printer import format_statement
    keep = [s for s in problem.statements if s.role not in (CONJECTURE, NEGATED_CONJECTURE)]
    lines = ["# the axioms alone: the consistency check of a suite run"]
    for s in keep:
        role = "hypothesis" if s.role == "hypothesis" else "axiom"
        text = format_statement(s)
        lines.append(role + text[len(s.role):])
    return "\n".join(lines) + "\n"


# ================================================================= reuse

def plan_reuse(obligations: list, previous: dict | None, prev_jobs: dict, fetch_result, *,
               full: bool = False, check_proof=None, check_model=None, clausify=None) -> dict:
    """Which obligations keep the previous run's verdict.

    ``obligations``: dicts with ``key``, ``conjecture``, ``problem``,
    ``axioms`` (name -> hash), ``conjecture_hash``.  ``previous``: the last
    run record of the suite (or None); ``prev_jobs``: its job records by
    obligation key; ``fetch_result(job_id) -> {"proof", "model"}``.

    A proof is reused when every axiom it used is still present with the same
    hash, the conjecture is unchanged, and the stored proof passes the proof
    checker against the new problem.  A countermodel (or model) is reused when
    the conjecture is unchanged and the model evaluator accepts it against the
    new problem.  Returns index -> reuse info; every other index is searched."""
    if check_proof is None:
        from worker.certify.proofcheck import check_proof
    if check_model is None:
        from worker.certify.evaluate import check_model
    if clausify is None:
        from worker.clausify import clausify
    out: dict = {}
    if full or not previous:
        return out
    prev_obl = {o["key"]: o for o in previous.get("obligations", [])}
    prev_sets = previous.get("axiom_sets", {})
    for i, ob in enumerate(obligations):
        old = prev_obl.get(ob["key"])
        rec = prev_jobs.get(ob["key"])
        if old is None or rec is None or rec.get("state") != "done":
            continue
        if old.get("conjecture_hash") != ob.get("conjecture_hash"):
            continue
        verdict = rec.get("verdict")
        t0 = time.monotonic()
        if verdict in REUSABLE_PROOF:
            old_table = prev_sets.get(old.get("axiom_set"), {})
            used = rec.get("axioms_used") or []
            if not all(n in ob["axioms"] and old_table.get(n) == ob["axioms"][n] for n in used):
                continue
            proof = (fetch_result(rec["id"]) or {}).get("proof")
            if not proof or proof.get("conjecture") != ob["conjecture"]:
                continue
            try:
                cp = clausify(ob["problem"], ob["conjecture"])
                rep = check_proof(proof, ob["problem"], cp)
            except Exception:            # a refusal, never a reuse
                continue
            kind = "proof-replayed"
        elif verdict in REUSABLE_MODEL:
            model = (fetch_result(rec["id"]) or {}).get("model")
            if not model:
                continue
            try:
                rep = check_model(model, ob["problem"], ob["conjecture"])
            except Exception:
                continue
            kind = "model-evaluated"
        else:
            continue
        if not rep.ok:
            continue
        out[i] = {"from_job": rec["id"], "from_run": previous["id"], "kind": kind,
                  "verdict": verdict, "checked": rep.checked,
                  "check_seconds": round(time.monotonic() - t0, 4),
                  "saved_seconds": float(rec.get("seconds") or 0.0),
                  "record": rec}
    return out


def plan_guard_reuse(guards: list, previous: dict | None, store, check_model=None) -> dict:
    """Which consistency checks a model of the last run's checks settles at
    once: a stored model of a satisfiable axiom set is evaluated against each
    new axioms-only problem (the same set first); if every axiom holds in it,
    the set is satisfiable, with that model.  Returns guard index -> info."""
    if check_model is None:
        from worker.certify.evaluate import check_model
    if not previous:
        return {}
    old = [g for g in previous.get("guards", []) if g.get("job")]
    if not old:
        return {}
    recs = {r["id"]: r for r in store.get_jobs([g["job"] for g in old])}
    models = []
    for g in old:
        rec = recs.get(g["job"])
        if rec and rec.get("state") == "done" and rec.get("verdict") == V.SATISFIABLE:
            model = store.get_result(rec["id"]).get("model")
            if model:
                models.append((g["set"], rec, model))
    out = {}
    for i, g in enumerate(guards):
        same = [m for m in models if m[0] == g["set"]]
        for sid, rec, model in (same + [m for m in models if m[0] != g["set"]])[:4]:
            t0 = time.monotonic()
            try:
                rep = check_model(model, g["problem"], None)
            except Exception:
                continue
            if rep.ok:
                out[i] = {"from_job": rec["id"], "from_run": previous["id"],
                          "kind": "model-evaluated", "check_seconds":
                          round(time.monotonic() - t0, 4), "record": rec}
                break
    return out


# ================================================================= records

class CorpusStore:
    """Run records, kept until deleted, under ``nj:corpus:``."""

    P = CM.P

    def __init__(self, r):
        self.r = r

    def k_run(self, rid): return CM.k_run(rid)
    def k_runs(self, owner, suite): return f"{self.P}runs:{owner}:{suite}"
    def k_suites(self, owner): return f"{self.P}suites:{owner}"

    def save_run(self, run: dict) -> None:
        """The run record and, in the same transaction, its job index
        (``corpus_marks.k_batch``: each job's place, for the settle hook)."""
        from .store import pack
        pipe = self.r.pipeline(transaction=True)
        pipe.set(self.k_run(run["id"]), pack(run))
        index = CM.job_index(run)
        if index and run.get("batch"):
            pipe.hset(CM.k_batch(run["batch"]), mapping=index)
        pipe.zadd(self.k_runs(run["owner"], run["suite"]), {run["id"]: run["created"]})
        pipe.sadd(self.k_suites(run["owner"]), run["suite"])
        pipe.execute()

    def get_run(self, rid: str) -> dict | None:
        from .store import unpack
        return unpack(self.r.get(self.k_run(rid)))

    def runs(self, owner: str, suite: str, newest_first: bool = True) -> list:
        ids = (self.r.zrevrange if newest_first else self.r.zrange)(self.k_runs(owner, suite), 0, -1)
        return [x.decode() if isinstance(x, bytes) else x for x in ids]

    def last_run(self, owner: str, suite: str) -> dict | None:
        ids = self.runs(owner, suite)
        return self.get_run(ids[0]) if ids else None

    def suites(self, owner: str) -> list:
        return sorted(x.decode() if isinstance(x, bytes) else x
                      for x in self.r.smembers(self.k_suites(owner)))


def new_run_id() -> str:
    return "r" + secrets.token_hex(6)


class RunRefused(Exception):
    """The submission cannot become a run (bad input, over a limit)."""

    def __init__(self, message: str, error: InputError | None = None, code: str = "bad_request"):
        super().__init__(message)
        self.message, self.error, self.code = message, error, code


def _settings_of(body: dict) -> dict:
    raw = body.get("settings") or {}
    if not isinstance(raw, dict):
        raise RunRefused("settings must be an object")
    out = {}
    for k, v in raw.items():
        if k not in SETTINGS_KEYS:
            raise RunRefused(f"unknown setting '{k}'")
        out[k] = v
    return out


def read_submission(body: dict, *, max_time_limit: float, max_jobs: int) -> dict:
    """Check a run submission and read every problem in it (no storage)."""
    if not isinstance(body, dict):
        raise RunRefused("the body must be a JSON object")
    suite = body.get("suite")
    if not isinstance(suite, str) or not re.fullmatch(r"[A-Za-z0-9_.-]{1,80}", suite):
        raise RunRefused("suite must be a name of 1 to 80 letters, digits, '-', '_' or '.'")
    tl = body.get("time_limit")
    if isinstance(tl, bool) or not isinstance(tl, (int, float)) or tl <= 0:
        raise RunRefused("time_limit must be a positive number of seconds")
    if tl > max_time_limit:
        raise RunRefused(f"time_limit {tl} is over the server's limit of {max_time_limit} "
                         f"seconds", code="limit")
    act = body.get("axiom_check_time", DEFAULT_AXIOM_CHECK_TIME)
    if isinstance(act, bool) or not isinstance(act, (int, float)) or act <= 0:
        raise RunRefused("axiom_check_time must be a positive number of seconds")
    act = min(float(act), max_time_limit)
    settings = _settings_of(body)
    expectations = body.get("expectations") or {}
    if not isinstance(expectations, dict) or not all(
            isinstance(k, str) and v in V.STATUSES for k, v in expectations.items()):
        raise RunRefused("expectations must map obligation keys to SZS status names")
    items = body.get("problems")
    if not isinstance(items, list) or not items:
        raise RunRefused("problems must be a non-empty list")
    obligations = []
    seen_files = set()
    for i, item in enumerate(items):
        if not isinstance(item, dict) or not isinstance(item.get("file"), str):
            raise RunRefused(f"problems[{i}] must have a file and a bundle")
        b = item.get("bundle")
        if not (isinstance(b, dict) and isinstance(b.get("main"), str)
                and isinstance(b.get("files"), dict) and b["main"] in b["files"]
                and all(isinstance(k, str) and isinstance(v, str) for k, v in b["files"].items())):
            raise RunRefused(f"problems[{i}].bundle must have a main file among its files")
        if item["file"] in seen_files:
            raise RunRefused(f"problem file '{item['file']}' is listed twice")
        seen_files.add(item["file"])
        bundle = {"main": b["main"], "files": dict(b["files"]), "language": b.get("language")}
        try:
            problem = load_problem(bundle["main"], bundle_reader(bundle["files"]),
                                   language=bundle["language"])
        except InputError as e:
            raise RunRefused(e.render(), e, code="input_error") from None
        table = axiom_table(problem)
        places = axiom_places(problem)
        for c in problem.obligations():
            ch = statement_hash(problem.statement(c)) if c is not None else None
            obligations.append({"key": obligation_key(item["file"], c), "file": item["file"],
                                "conjecture": c, "problem": problem, "bundle": bundle,
                                "axioms": table, "axiom_set": set_id(table),
                                "places": places, "conjecture_hash": ch})
    if len(obligations) > max_jobs:
        raise RunRefused(f"{len(obligations)} proof obligations in one run; the limit is "
                         f"{max_jobs}", code="too_many_jobs")
    return {"suite": suite, "time_limit": float(tl), "axiom_check_time": act,
            "settings": settings, "expectations": expectations,
            "obligations": obligations, "full": bool(body.get("full", False)),
            "meta": {k: (v[:1000] if isinstance(v, str) else v) for k, v in
                     ((k, body.get(k)) for k in ("manifest", "manifest_path", "description",
                                                 "source", "axiom_files"))
                     if isinstance(v, (str, list))}}


def create_run(store, corpus: CorpusStore, dispatcher, owner: str, body: dict, *,
               queue_name: str, max_time_limit: float, max_jobs: int) -> dict:
    """Record a run of a suite and queue what must be searched.  Returns the
    run record.  Raises :class:`RunRefused` (nothing stored then)."""
    sub = read_submission(body, max_time_limit=max_time_limit, max_jobs=max_jobs)
    obligations = sub["obligations"]
    previous = corpus.last_run(owner, sub["suite"])
    prev_jobs = {}
    if previous and not sub["full"]:
        ids = [o["job"] for o in previous["obligations"]]
        recs = {rec["id"]: rec for rec in store.get_jobs(ids)}
        prev_jobs = {o["key"]: recs[o["job"]] for o in previous["obligations"] if o["job"] in recs}
    reuse = plan_reuse(obligations, previous, prev_jobs, store.get_result, full=sub["full"])

    # The consistency guard: one axioms-only problem per distinct axiom set.
    sets: dict = {}
    for ob in obligations:
        sets.setdefault(ob["axiom_set"], ob)
    guards = []
    for sid, ob in sets.items():
        if not ob["axioms"]:
            continue
        text = axioms_only_text(ob["problem"])
        guards.append({"set": sid, "axioms": len(ob["axioms"]),
                       "bundle": {"main": GUARD_MAIN, "files": {GUARD_MAIN: text},
                                  "language": "native"}})
    guard_ok = []
    for g in guards:   # a guard text that does not read back is left out (unknown)
        try:
            g["problem"] = load_problem(GUARD_MAIN, bundle_reader(g["bundle"]["files"]),
                                        language="native")
            guard_ok.append(g)
        except InputError:
            g["skipped"] = "the axioms could not be printed for the check"
    guard_reuse = {} if sub["full"] else plan_guard_reuse(guard_ok, previous, store)
    jobs = [{"file": GUARD_FILE, "conjecture": None, "bundle": g["bundle"],
             "time_limit": sub["axiom_check_time"], "reuse_key": None} for g in guard_ok]
    jobs += [{"file": ob["file"], "conjecture": ob["conjecture"],
              "bundle": ob["bundle"], "time_limit": sub["time_limit"], "reuse_key": None}
             for ob in obligations]
    if len(jobs) > max_jobs:
        raise RunRefused(f"{len(jobs)} jobs in one run (axiom checks counted); the limit "
                         f"is {max_jobs}", code="too_many_jobs")
    n = len(guard_ok)
    # a reused verdict keeps its source's reason, but not the contradiction
    # mark an earlier run put on it: this run's axioms are judged afresh
    reused_for_store = {n + i: dict(info["record"], reason=unmarked_reason(info["record"]))
                        for i, info in reuse.items()}
    reused_for_store.update({i: info["record"] for i, info in guard_reuse.items()})
    rid = new_run_id()
    bid, ids = store.create_batch(owner, jobs, label=f"{CM.LABEL_PREFIX}{sub['suite']} {rid}",
                                  queue_name=queue_name, settings=sub["settings"],
                                  enqueue=dispatcher.enqueue if dispatcher else None,
                                  reused=reused_for_store)
    for i, (g, jid) in enumerate(zip(guard_ok, ids[:n])):
        g["job"] = jid
        if i in guard_reuse:
            g["reused"] = {k: v for k, v in guard_reuse[i].items() if k != "record"}
    axiom_sets = {ob["axiom_set"]: ob["axioms"] for ob in obligations}
    index = sorted({(n, ob["places"].get(n) or "", h) for ob in obligations
                    for n, h in ob["axioms"].items()})
    run = {"id": rid, "suite": sub["suite"], "owner": owner, "by": owner,
           "created": time.time(), "batch": bid, "full": sub["full"],
           "previous": previous["id"] if previous else None,
           "time_limit": sub["time_limit"], "axiom_check_time": sub["axiom_check_time"],
           "settings": sub["settings"], "expectations": sub["expectations"],
           **sub["meta"],
           "axiom_sets": axiom_sets,
           "axiom_index": [{"name": n, "file": f or None, "hash": h} for n, f, h in index],
           "guards": [{k: g[k] for k in ("set", "axioms", "job", "skipped", "reused") if k in g}
                      for g in guards],
           "obligations": []}
    for i, (ob, jid) in enumerate(zip(obligations, ids[n:])):
        info = reuse.get(i)
        run["obligations"].append({
            "key": ob["key"], "file": ob["file"], "conjecture": ob["conjecture"],
            "job": jid, "axiom_set": ob["axiom_set"], "conjecture_hash": ob["conjecture_hash"],
            "reused": None if info is None else {k: v for k, v in info.items() if k != "record"}})
    corpus.save_run(run)
    # what settled before the job index was written (a quick guard), and
    # verdicts written at once by reuse: the settle hook did not see them
    try:
        CM.note_found(store, run)
    except Exception:        # the run is stored; reading it marks as well
        import logging
        logging.getLogger(__name__).warning("corpus run %s: contradiction marks not "
                                            "written at creation", rid, exc_info=True)
    return run


# =================================================================== views

def _guard_state(g: dict, rec: dict | None, model_size) -> dict:
    out = {"set": g["set"], "axioms": g["axioms"], "job": g.get("job"),
           "verdict": None, "consistent": None, "model_size": None, "seconds": None,
           "reused": g.get("reused") is not None}
    if g.get("skipped"):
        out["reason"] = g["skipped"]
        return out
    if rec is None:
        return out
    out["state"] = rec.get("state")
    out["verdict"] = rec.get("verdict")
    out["seconds"] = rec.get("seconds")
    if rec.get("verdict") in (V.UNSATISFIABLE, V.CONTRADICTORY_AXIOMS):
        out["consistent"] = False
    elif rec.get("verdict") == V.SATISFIABLE:
        out["consistent"] = True
        out["model_size"] = model_size
    return out


def run_view(run: dict, jobs: dict, guard_models: dict | None = None) -> dict:
    """Join a run record with its job records (``job id -> record``).
    ``guard_models``: guard job id -> model size (for satisfiable guards).

    An axiom set is contradictory when its guard refuted it, or when the
    engine's (checked) proof of some conjecture never used the conjecture
    (a ContradictoryAxioms verdict).  Every row on such a set has
    ``axioms_contradictory`` true, whatever its verdict (a Theorem there is
    still a valid entailment, but a vacuous one: ``vacuous``); the view's
    ``contradictions`` say how each set was found out."""
    guard_models = guard_models or {}
    guards = [_guard_state(g, jobs.get(g.get("job")), guard_models.get(g.get("job")))
              for g in run.get("guards", [])]
    broken: dict = {}
    for g in guards:
        if g["consistent"] is False and g["set"] not in broken:
            broken[g["set"]] = {"set": g["set"], "job": g.get("job"), "found_by": "axiom check",
                                "key": None}
    for ob in run["obligations"]:
        if ((jobs.get(ob["job"]) or {}).get("verdict") == V.CONTRADICTORY_AXIOMS
                and ob["axiom_set"] not in broken):
            broken[ob["axiom_set"]] = {"set": ob["axiom_set"], "job": ob["job"],
                                       "found_by": "obligation", "key": ob["key"]}
    rows = []
    for ob in run["obligations"]:
        rec = jobs.get(ob["job"]) or {}
        verdict = rec.get("verdict")
        contradictory = ob["axiom_set"] in broken
        expected = run.get("expectations", {}).get(ob["key"])
        reused = ob.get("reused")
        rows.append({
            "key": ob["key"], "file": ob["file"], "conjecture": ob["conjecture"],
            "job": ob["job"], "state": rec.get("state"), "verdict": verdict,
            "seconds": (reused["check_seconds"] if reused else rec.get("seconds")),
            "search_seconds": rec.get("seconds"),
            "axioms_used": rec.get("axioms_used") or [],
            "reused": reused is not None, "reuse": reused,
            "expected": expected,
            "unexpected": bool(expected and verdict in V.DEFINITE and verdict != expected),
            "axioms_contradictory": contradictory,
            "vacuous": bool(contradictory and verdict in V.PROVED)})
    all_jobs = [ob["job"] for ob in run["obligations"]] + [g.get("job") for g in guards if g.get("job")]
    finished = all((jobs.get(j) or {}).get("state") in FINAL for j in all_jobs)
    if broken:
        consistent = False
    elif all(g["consistent"] is True for g in guards):
        consistent = True
    else:
        consistent = None
    reused = [r for r in rows if r["reused"]]
    saved = sum(r["reuse"]["saved_seconds"] for r in reused)
    checks = sum(r["reuse"]["check_seconds"] for r in reused)
    summary = {
        "run": run["id"], "suite": run["suite"], "batch": run["batch"],
        "created": run["created"], "by": run.get("by"), "previous": run.get("previous"),
        "full": run.get("full", False), "manifest": run.get("manifest"),
        "manifest_path": run.get("manifest_path"),
        "total": len(rows),
        "axiom_checks": sum(1 for g in guards if g.get("job")),
        "done": sum(1 for r in rows if r["state"] in FINAL),
        "settled": sum(1 for r in rows if r["verdict"] in V.DEFINITE),
        "finished": finished,
        "reused": len(reused), "searched": len(rows) - len(reused),
        "theorems": sum(1 for r in rows if r["verdict"] in V.PROVED),
        "counter_satisfiable": sum(1 for r in rows if r["verdict"] in V.REFUTED),
        "undecided": sum(1 for r in rows if r["state"] in FINAL and r["verdict"] not in V.DEFINITE),
        "unexpected": sum(1 for r in rows if r["unexpected"]),
        "vacuous": sum(1 for r in rows if r["vacuous"]),
        "on_contradictory_axioms": sum(1 for r in rows if r["axioms_contradictory"]),
        "contradictory_sets": len(broken),
        "axioms_consistent": consistent,
        "time_saved_seconds": round(max(0.0, saved - checks), 3),
        "reuse_check_seconds": round(checks, 3),
        "search_seconds": round(sum(r["seconds"] or 0.0 for r in rows if not r["reused"]), 3),
    }
    return {"summary": summary, "guards": guards, "rows": rows, "axioms": axiom_index(run),
            "contradictions": list(broken.values())}


# The mark on the job record of an obligation whose axioms a run found
# contradictory, and when it is written: service/corpus_marks.py (the words
# in the field ``axioms_contradictory`` and after the job's own ``reason``).


def mark_contradictory_jobs(store, run: dict, view: dict, jobs: dict) -> list:
    """Write the contradiction mark on the job record of every finished
    obligation of ``run`` on a contradictory axiom set that does not carry it
    yet (the guard jobs aside), as ``view`` found them; each set is noted
    for the settle hook too (``corpus_marks``).  WATCH-guarded per job: a
    record deleted meanwhile is left deleted, never recreated in part; a
    second writer finds the mark and stops.  Returns the ids marked."""
    found = {c["set"]: c for c in view.get("contradictions", [])}
    if not found:
        return []
    marked = []
    for c in found.values():
        marked += CM.note_contradiction(store, run, c)
    by_key = {ob["key"]: ob for ob in run["obligations"]}
    for row in view["rows"]:
        rec = jobs.get(row["job"]) or {}
        if (not row.get("axioms_contradictory") or rec.get("state") not in FINAL
                or rec.get(MARK_FIELD) or row["job"] in marked):
            continue
        ob = by_key.get(row["key"])
        if CM.mark_job(store, row["job"], run["id"], found.get(ob["axiom_set"]) if ob else None):
            marked.append(row["job"])
    return marked


def _kind(verdict) -> str:
    if verdict in V.PROVED:
        return "proved"
    if verdict in V.REFUTED:
        return "refuted"
    return "open"


def compare(a: dict, b: dict, *, threshold: float = DEFAULT_TIME_THRESHOLD,
            ratio: float = DEFAULT_TIME_RATIO) -> dict:
    """What changed from run view ``a`` (the base) to run view ``b``.

    Every obligation lands in at most one of the verdict categories below,
    tried in this order (DEVELOPERS.md, "Corpus runs", has the same list):

    * contradictory: b found the axiom set of the obligation contradictory
      (its verdict, Theorem or ContradictoryAxioms or anything, says nothing
      about the conjecture); new obligations too.
    * added / removed: in b only / in a only.  A removed obligation is
      ``settled`` when a gave it a definite verdict on axioms not known to be
      contradictory: dropping it fails the gate (``removed_settled``).
    * flipped: proved in a, refuted in b, or the other way round, when b's
      verdict is not the one b's manifest expects (or it expects nothing).
    * lost: definite in a, without a definite verdict in b (a job still
      running is not lost).
    * gained: b has the verdict b's manifest expects, and a had none (open),
      or a had the opposite definite one (proved <-> refuted).  The second
      kind is a definite verdict that changed: its line has ``fixed`` (and
      ``expected_before``, a's expectation, so that a flip the manifest was
      edited to expect can be told from a repair).  The CLI, ``--json``
      and the console all show this list; none has a rule of its own.
    * answered: without a definite verdict in a, definite in b, and the
      manifest expects nothing of it (no way to tell whether the answer is
      the wanted one).  Open in a and now definite but not the expected
      verdict: in ``unexpected`` only.

    A verdict of a on contradictory axioms counts as no verdict (such a line
    has ``before_contradictory``).  Apart from these: unexpected (b's definite
    verdict differs from b's expectation; a check of b against its manifest,
    so it may name an obligation that is also flipped, added or
    contradictory); slower / faster (both searched and settled the same way,
    time changed by at least ``threshold`` seconds and the factor ``ratio``);
    axioms_changed (proved in both, with another set of axioms used);
    axiom_changes (the axioms themselves, :func:`axiom_changes`).

    ``suites`` names both runs' suites; ``suite`` is their common name, None
    when they differ (``across_suites``: the caller asked for it)."""
    ra = {r["key"]: r for r in a["rows"]}
    rb = {r["key"]: r for r in b["rows"]}
    sa, sb = a["summary"]["suite"], b["summary"]["suite"]
    out = {"a": a["summary"]["run"], "b": b["summary"]["run"],
           "suite": sb if sa == sb else None, "suites": {"a": sa, "b": sb},
           "across_suites": sa != sb,
           "contradictory": [], "gained": [], "answered": [], "lost": [], "flipped": [],
           "unexpected": [], "slower": [], "faster": [], "axioms_changed": [], "added": [],
           "removed": [],
           "reused": b["summary"]["reused"], "searched": b["summary"]["searched"],
           "axioms_consistent": {"a": a["summary"]["axioms_consistent"],
                                 "b": b["summary"]["axioms_consistent"]},
           "finished": a["summary"]["finished"] and b["summary"]["finished"],
           "axiom_changes": axiom_changes(a.get("axioms"), b.get("axioms"))}
    for key, y in rb.items():
        x = ra.get(key)
        if y["unexpected"]:
            out["unexpected"].append({"key": key, "verdict": y["verdict"], "expected": y["expected"]})
        line = {"key": key, "before": x["verdict"] if x else None, "after": y["verdict"]}
        if x is not None and x.get("axioms_contradictory"):
            line["before_contradictory"] = True
        if y.get("axioms_contradictory"):
            out["contradictory"].append(dict(line, new=x is None))
            continue
        if x is None:
            out["added"].append({"key": key, "after": y["verdict"], "expected": y["expected"]})
            continue
        before = None if x.get("axioms_contradictory") else x["verdict"]
        kx, ky = _kind(before), _kind(y["verdict"])
        if kx == "open" and ky != "open":
            if y["expected"] is None:
                out["answered"].append(line)
            elif y["verdict"] == y["expected"]:
                out["gained"].append(line)
            # else: in unexpected
        elif kx != "open" and ky == "open":
            if y["state"] in FINAL:
                out["lost"].append(line)
        elif kx != ky:
            if y["expected"] is not None and y["verdict"] == y["expected"]:
                # a definite verdict changed, to the one the manifest expects
                out["gained"].append(dict(line, fixed=True, expected_before=x["expected"]))
            else:
                out["flipped"].append(line)
        else:
            if ky == "proved":
                ua, ub = set(x["axioms_used"]), set(y["axioms_used"])
                if ua != ub:
                    out["axioms_changed"].append({"key": key, "added": sorted(ub - ua),
                                                  "removed": sorted(ua - ub)})
            if ky != "open" and not x["reused"] and not y["reused"]:
                sa_, sb_ = x["seconds"] or 0.0, y["seconds"] or 0.0
                if abs(sb_ - sa_) >= threshold and max(sa_, sb_) >= ratio * max(min(sa_, sb_), 1e-3):
                    out["slower" if sb_ > sa_ else "faster"].append(
                        {"key": key, "before": sa_, "after": sb_})
    for key, x in ra.items():
        if key not in rb:
            out["removed"].append({"key": key, "before": x["verdict"],
                                   "settled": bool(x["verdict"] in V.DEFINITE
                                                   and not x.get("axioms_contradictory"))})
    out["removed_settled"] = sum(1 for x in out["removed"] if x["settled"])
    out["regression"] = bool(out["contradictory"] or out["lost"] or out["flipped"]
                             or out["unexpected"] or out["axioms_consistent"]["b"] is False)
    return out


def fixed_count(diff: dict | None) -> int:
    """How many of a comparison's gained obligations had the opposite
    definite verdict before (``fixed``)."""
    return sum(1 for x in (diff or {}).get("gained", []) if x.get("fixed"))


COUNTED = ("contradictory", "gained", "answered", "lost", "flipped", "unexpected", "added",
           "removed")


def counts(diff: dict | None) -> dict:
    """The number in each list of a comparison, and ``removed_settled``
    (all 0 without one)."""
    if diff is None:
        return {**{k: 0 for k in COUNTED}, "removed_settled": 0}
    return {**{k: len(diff[k]) for k in COUNTED},
            "removed_settled": diff.get("removed_settled", 0)}


def suites_refusal(a: dict, b: dict) -> str | None:
    """Why runs ``a`` and ``b`` (records) are not compared unless asked for
    explicitly: the message when they are runs of different suites, else
    None.  Obligations are matched by file#conjecture only, so a comparison
    across suites mostly says that the files differ."""
    if a.get("suite") == b.get("suite"):
        return None
    return (f"run {a['id']} is of suite '{a.get('suite')}' and run {b['id']} of suite "
            f"'{b.get('suite')}': runs of different suites are not compared, since their "
            f"obligations are matched by file and conjecture name only")


def last_two(corpus: CorpusStore, owner: str, suite: str) -> tuple | None:
    """(the run before the last, the last run) of an owner's suite, or None
    when it has fewer than two runs."""
    ids = corpus.runs(owner, suite)
    return (ids[1], ids[0]) if len(ids) >= 2 else None


def view_of(store, corpus: CorpusStore, run: dict, *, mark: bool = True) -> dict:
    """The view of a stored run, reading its jobs (and guard model sizes).
    With ``mark`` (the default), the job records of finished obligations on
    axioms the run found contradictory get the contradiction mark
    (:func:`mark_contradictory_jobs`) when they lack it: the store's settle
    hook writes it as the jobs settle (``corpus_marks``), reading a run
    writes what that missed (runs stored before the run's job index, a
    failed hook)."""
    ids = [o["job"] for o in run["obligations"]] + [g["job"] for g in run.get("guards", [])
                                                    if g.get("job")]
    jobs = {rec["id"]: rec for rec in store.get_jobs(ids)}
    sizes = {}
    for g in run.get("guards", []):
        rec = jobs.get(g.get("job"))
        if rec and rec.get("verdict") == V.SATISFIABLE:
            model = store.get_result(g["job"]).get("model")
            if model:
                sizes[g["job"]] = model.get("size")
    view = run_view(run, jobs, sizes)
    if mark:
        mark_contradictory_jobs(store, run, view, jobs)
    return view


__all__ = ["Suite", "SuiteProblem", "SuiteError", "load_suite", "submission", "obligation_key",
           "statement_hash", "axiom_table", "plan_reuse", "CorpusStore", "create_run",
           "read_submission", "RunRefused", "run_view", "compare", "counts", "view_of",
           "axiom_index", "axiom_changes", "last_two", "manifest_path", "suites_refusal",
           "mark_contradictory_jobs", "unmarked_reason", "contradiction_text", "MARK_FIELD",
           "fixed_count"]
