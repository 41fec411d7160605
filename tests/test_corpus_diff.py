"""Corpus runs on fakeredis: comparison of runs, reuse on rerun, the
consistency guard, diff exit codes.

Runs go through the corpus API with the Flask test client; the jobs are
worked off in-process with ``worker.jobs.attempt`` (what a worker does) and
the real engine, on problems small enough to settle in a fraction of a second.
"""

from __future__ import annotations

import json
import textwrap
from pathlib import Path

import fakeredis
import pytest
from rq import Queue

from service import cli_corpus
from service import corpus as C
from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.store import Store, pack, unpack
from worker import jobs


# -- comparison on hand-made views ------------------------------------------

def view(rid, rows, expectations=None, guards=None, jobs_extra=None, sets=None, suite="s"):
    """A run record and its job records from (key, verdict, seconds, axioms,
    reused); ``sets``: key -> axiom set id (default "A")."""
    sets = sets or {}
    run = {"id": rid, "suite": suite, "owner": "o", "created": 0.0, "batch": "b" + rid,
           "expectations": expectations or {}, "axiom_sets": {"A": {}},
           "guards": guards or [], "obligations": []}
    recs = {}
    for i, (key, verdict, secs, axioms, reused) in enumerate(rows):
        jid = f"{rid}-j{i}"
        run["obligations"].append({
            "key": key, "file": key.split("#")[0], "conjecture": key.split("#")[-1],
            "job": jid, "axiom_set": sets.get(key, "A"), "conjecture_hash": "h",
            "reused": ({"kind": "proof-replayed", "check_seconds": 0.01,
                        "saved_seconds": secs, "from_job": "x"} if reused else None)})
        recs[jid] = {"id": jid, "state": "done" if verdict else "running",
                     "verdict": verdict, "seconds": secs, "axioms_used": axioms}
    recs.update(jobs_extra or {})
    return C.run_view(run, recs)


VERDICT_LISTS = ("contradictory", "gained", "answered", "lost", "flipped", "added", "removed")


def listed_once(d):
    """Every obligation in at most one of the comparison's verdict lists."""
    keys = [x["key"] for k in VERDICT_LISTS for x in d[k]]
    return len(keys) == len(set(keys))


def test_compare_sorts_every_kind_of_change():
    a = view("A", [("f#gain", "Timeout", 10.0, [], False),
                   ("f#gain_cs", "Timeout", 10.0, [], False),
                   ("f#wrong_way", "Timeout", 10.0, [], False),
                   ("f#free_t", "Timeout", 10.0, [], False),
                   ("f#free_cs", "GaveUp", 10.0, [], False),
                   ("f#lose", "Theorem", 0.2, ["x"], False),
                   ("f#flip1", "Theorem", 0.2, ["x"], False),
                   ("f#flip2", "CounterSatisfiable", 0.1, [], False),
                   ("f#slow", "Theorem", 0.1, ["x"], False),
                   ("f#jitter", "Theorem", 0.1, ["x"], False),
                   ("f#axioms", "Theorem", 0.1, ["x", "y"], False),
                   ("f#reused", "Theorem", 0.1, ["x"], False),
                   ("f#gone", "Theorem", 0.1, ["x"], False),
                   ("f#gone_cs", "CounterSatisfiable", 0.1, [], False),
                   ("f#gone_open", "Timeout", 10.0, [], False)])
    b = view("B", [("f#gain", "Theorem", 1.0, ["x"], False),
                   ("f#gain_cs", "CounterSatisfiable", 1.0, [], False),
                   ("f#wrong_way", "CounterSatisfiable", 1.0, [], False),
                   ("f#free_t", "Theorem", 1.0, ["x"], False),
                   ("f#free_cs", "CounterSatisfiable", 1.0, [], False),
                   ("f#lose", "Timeout", 10.0, [], False),
                   ("f#flip1", "CounterSatisfiable", 0.2, [], False),
                   ("f#flip2", "Theorem", 0.1, ["x"], False),
                   ("f#slow", "Theorem", 3.5, ["x"], False),
                   ("f#jitter", "Theorem", 0.6, ["x"], False),
                   ("f#axioms", "Theorem", 0.1, ["x", "z"], False),
                   ("f#reused", "Theorem", 5.0, ["x"], True),
                   ("f#new", "CounterSatisfiable", 0.1, [], False),
                   ("f#new_t", "Theorem", 0.1, ["x"], False)],
             expectations={"f#flip1": "Theorem", "f#gain": "Theorem",
                           "f#gain_cs": "CounterSatisfiable", "f#wrong_way": "Theorem",
                           "f#new_t": "CounterSatisfiable"})
    d = C.compare(a, b)
    keys = lambda k: [x["key"] for x in d[k]]
    # gained: now the verdict the manifest expects (a CounterSatisfiable too,
    # when that is what it expects); never a new obligation
    assert keys("gained") == ["f#gain", "f#gain_cs"]
    # a definite verdict with no expectation to judge it: answered, not gained
    assert keys("answered") == ["f#free_t", "f#free_cs"]
    # a CounterSatisfiable where a Theorem is expected: unexpected, not gained
    assert "f#wrong_way" in keys("unexpected") and "f#wrong_way" not in keys("gained")
    assert keys("lost") == ["f#lose"]
    assert keys("flipped") == ["f#flip1", "f#flip2"]
    assert d["flipped"][0]["before"] == "Theorem" and d["flipped"][0]["after"] == "CounterSatisfiable"
    assert keys("unexpected") == ["f#wrong_way", "f#flip1", "f#new_t"]   # f#gain is as expected
    assert keys("slower") == ["f#slow"] and keys("faster") == []   # jitter and reuse aside
    assert d["axioms_changed"] == [{"key": "f#axioms", "added": ["z"], "removed": ["y"]}]
    # new obligations are listed once, as added (not also as gained)
    assert keys("added") == ["f#new", "f#new_t"]
    assert d["added"][1] == {"key": "f#new_t", "after": "Theorem", "expected": "CounterSatisfiable"}
    assert keys("removed") == ["f#gone", "f#gone_cs", "f#gone_open"]
    assert [x["settled"] for x in d["removed"]] == [True, True, False]
    assert d["removed_settled"] == 2
    assert listed_once(d)
    assert d["regression"] is True
    assert C.counts(d) == {"contradictory": 0, "gained": 2, "answered": 2, "lost": 1,
                           "flipped": 2, "unexpected": 3, "added": 2, "removed": 3,
                           "removed_settled": 2}


def test_the_diff_text_has_one_line_per_obligation():
    a = view("A", [("f#flip", "Theorem", 0.1, ["x"], False),
                   ("f#stays_wrong", "CounterSatisfiable", 0.1, [], False),
                   ("f#gone", "Theorem", 0.1, ["x"], False),
                   ("f#gone_open", "Timeout", 3.0, [], False)])
    b = view("B", [("f#flip", "CounterSatisfiable", 0.1, [], False),
                   ("f#stays_wrong", "CounterSatisfiable", 0.1, [], False),
                   ("f#new", "CounterSatisfiable", 0.1, [], False)],
             expectations={"f#flip": "Theorem", "f#stays_wrong": "Theorem", "f#new": "Theorem"})
    text = cli_corpus.diff_text(C.compare(a, b))
    lines = text.splitlines()
    for key in ("f#flip", "f#stays_wrong", "f#new", "f#gone", "f#gone_open"):
        assert sum(1 for ln in lines if f" {key} " in ln + " ") == 1, (key, text)
    flip = next(ln for ln in lines if " f#flip " in ln)
    assert flip.startswith("FLIPPED") and "UNEXPECTED: the manifest expects Theorem" in flip
    new = next(ln for ln in lines if " f#new " in ln + " ")
    assert new.startswith("added") and "UNEXPECTED" in new
    assert next(ln for ln in lines if " f#stays_wrong " in ln).startswith("unexpected")
    assert next(ln for ln in lines if " f#gone " in ln).startswith("REMOVED")
    assert next(ln for ln in lines if " f#gone_open " in ln + " ").startswith("removed")
    assert "1 added, 2 removed (1 of them settled)" in lines[-1]


def test_no_change_is_no_regression_and_a_running_job_is_not_lost():
    a = view("A", [("f#g", "Theorem", 0.1, ["x"], False), ("f#h", "Theorem", 0.1, ["x"], False)])
    b = view("B", [("f#g", "Theorem", 0.12, ["x"], True), ("f#h", None, None, [], False)])
    d = C.compare(a, b)
    assert d["lost"] == [] and d["flipped"] == [] and d["regression"] is False
    assert d["finished"] is False


def test_guard_marks_theorems_vacuous_and_sets_consistency():
    guard = [{"set": "A", "axioms": 3, "job": "g1"}]
    rows = [("f#t", "Theorem", 0.1, ["x"], False), ("f#c", "CounterSatisfiable", 0.1, [], False)]
    v = view("A", rows, guards=guard,
             jobs_extra={"g1": {"id": "g1", "state": "done", "verdict": "Unsatisfiable"}})
    assert v["summary"]["axioms_consistent"] is False
    assert [r["vacuous"] for r in v["rows"]] == [True, False]
    # every obligation on the refuted set is marked, whatever its verdict
    assert [r["axioms_contradictory"] for r in v["rows"]] == [True, True]
    assert v["summary"]["vacuous"] == 1 and v["summary"]["on_contradictory_axioms"] == 2
    assert v["contradictions"] == [{"set": "A", "job": "g1", "found_by": "axiom check",
                                    "key": None}]
    v = view("A", rows, guards=guard,
             jobs_extra={"g1": {"id": "g1", "state": "running", "verdict": None}})
    assert v["summary"]["axioms_consistent"] is None and v["summary"]["finished"] is False
    v = view("A", rows, guards=guard,
             jobs_extra={"g1": {"id": "g1", "state": "done", "verdict": "Satisfiable"}})
    assert v["summary"]["axioms_consistent"] is True
    assert not any(r["vacuous"] for r in v["rows"])


def test_a_contradictory_axioms_verdict_marks_its_set_even_without_the_guard():
    guard = [{"set": "A", "axioms": 3, "job": "g1"}]
    rows = [("f#t", "Theorem", 0.1, ["x"], False), ("f#c", "ContradictoryAxioms", 0.1, ["x"], False)]
    v = view("A", rows, guards=guard,
             jobs_extra={"g1": {"id": "g1", "state": "done", "verdict": "Timeout"}})
    assert v["summary"]["axioms_consistent"] is False
    assert [r["vacuous"] for r in v["rows"]] == [True, True]
    assert v["contradictions"] == [{"set": "A", "job": "A-j1", "found_by": "obligation",
                                    "key": "f#c"}]
    line = cli_corpus.axioms_line(v["summary"], v["guards"], v["contradictions"])
    assert line.startswith("AXIOMS CONTRADICTORY: 1 axiom set (1 shown contradictory by a "
                           "ContradictoryAxioms verdict); the 2 obligations on it")


def test_contradictory_axioms_are_their_own_loud_kind_and_never_gained():
    """The reported case: an axiom made the set inconsistent; searched
    obligations came out ContradictoryAxioms, reused ones still say Theorem."""
    exp = {"f#ring_comm": "Theorem", "f#t1": "Theorem", "f#t2": "Theorem", "f#other": "Theorem"}
    a = view("A", [("f#ring_comm", "Timeout", 5.0, [], False),
                   ("f#t1", "Theorem", 0.1, ["x"], False),
                   ("f#t2", "Theorem", 0.1, ["x"], False),
                   ("f#other", "Timeout", 5.0, [], False)], expectations=exp)
    guard = [{"set": "A", "axioms": 3, "job": "g1"}, {"set": "B", "axioms": 2, "job": "g2"}]
    b = view("B", [("f#ring_comm", "ContradictoryAxioms", 0.2, ["x", "bad"], False),
                   ("f#t1", "Theorem", 0.1, ["x"], True),
                   ("f#t2", "ContradictoryAxioms", 0.2, ["x", "bad"], False),
                   ("f#other", "Theorem", 0.3, ["y"], False)],
             expectations=exp, guards=guard, sets={"f#other": "B"},
             jobs_extra={"g1": {"id": "g1", "state": "done", "verdict": "Unsatisfiable"},
                         "g2": {"id": "g2", "state": "done", "verdict": "Satisfiable"}})
    r = {x["key"]: x for x in b["rows"]}
    # the reused Theorem carries the same warning as the rest of its set
    assert r["f#t1"]["axioms_contradictory"] and r["f#t1"]["vacuous"]
    assert not r["f#other"]["axioms_contradictory"]       # another, consistent, axiom set
    d = C.compare(a, b)
    assert [(x["key"], x["before"], x["after"]) for x in d["contradictory"]] == [
        ("f#ring_comm", "Timeout", "ContradictoryAxioms"),
        ("f#t1", "Theorem", "Theorem"),
        ("f#t2", "Theorem", "ContradictoryAxioms")]
    assert [x["key"] for x in d["gained"]] == ["f#other"]          # its set is consistent
    assert d["lost"] == [] and d["flipped"] == [] and listed_once(d)
    # ContradictoryAxioms differs from the expected Theorem: unexpected, and said on the line
    assert [x["key"] for x in d["unexpected"]] == ["f#ring_comm", "f#t2"]
    assert d["regression"] is True and C.counts(d)["contradictory"] == 3
    text = cli_corpus.diff_text(d)
    lines = text.splitlines()
    assert lines[1].startswith("AXIOMS CONTRADICTORY in run B: the verdicts of its 3 "
                               "obligations")
    ring = [ln for ln in lines if "f#ring_comm" in ln]
    assert len(ring) == 1 and ring[0].startswith("CONTRADICTORY ")
    assert "Timeout -> ContradictoryAxioms" in ring[0]
    assert not any(ln.startswith("gained") and "ring_comm" in ln for ln in lines)
    assert lines[-1].startswith("3 on contradictory axioms, 0 flipped, 0 lost, 2 unexpected, "
                                "1 gained")
    assert cli_corpus.exit_code(dict(b["summary"], **C.counts(d))) == 5

    # the axioms fixed: a verdict on contradictory axioms counts as none
    c = view("C", [("f#ring_comm", "Timeout", 5.0, [], False),
                   ("f#t1", "Theorem", 0.1, ["x"], True),
                   ("f#t2", "Theorem", 0.1, ["x"], False),
                   ("f#other", "Theorem", 0.3, ["y"], True)], expectations=exp)
    d = C.compare(b, c)
    assert d["contradictory"] == [] and d["lost"] == [] and d["flipped"] == []
    assert [(x["key"], x["before"], x.get("before_contradictory")) for x in d["gained"]] == [
        ("f#t1", "Theorem", True), ("f#t2", "ContradictoryAxioms", True)]
    assert d["regression"] is False
    assert "Theorem (on contradictory axioms) -> Theorem" in cli_corpus.diff_text(d)


def test_run_exit_codes():
    assert cli_corpus.exit_code({"lost": 0, "flipped": 0, "unexpected": 0,
                                 "axioms_consistent": True, "undecided": 0}) == 0
    assert cli_corpus.exit_code({"undecided": 2, "axioms_consistent": None}) == 3
    for k in ("lost", "flipped", "unexpected", "contradictory"):
        assert cli_corpus.exit_code({k: 1, "undecided": 2}) == 5
        assert cli_corpus.exit_code({k: 1, "removed_settled": 1}) == 5
    assert cli_corpus.exit_code({"axioms_consistent": False}) == 5
    # settled obligations of the last run removed from the suite: 6, before 3
    assert cli_corpus.exit_code({"removed_settled": 1, "undecided": 2}) == 6
    assert cli_corpus.exit_code({"removed_settled": 1, "undecided": 2}, allow_removed=True) == 3
    assert cli_corpus.exit_code({"removed_settled": 1}, allow_removed=True) == 0


class FakeClient:
    def __init__(self, diff, suites=("s",)):
        self.diff, self.suites, self.asked = diff, suites, []

    def get(self, path, **q):
        self.asked.append((path, q))
        if path == "/api/corpus/suites":
            return {"suites": [{"suite": s} for s in self.suites]}
        return self.diff


def diff_exit(monkeypatch, capsys, diff, argv, suites=("s",)):
    fake = FakeClient(diff, suites)
    monkeypatch.setattr(cli_corpus, "_client", lambda args: fake)
    from service.cli import main
    code = main(["corpus", "diff", *argv])
    return code, capsys.readouterr(), fake


def test_diff_command_exit_status(monkeypatch, capsys):
    a = view("A", [("f#g", "Theorem", 0.1, ["x"], False)])
    same = C.compare(a, view("B", [("f#g", "Theorem", 0.1, ["x"], False)]))
    flip = C.compare(a, view("B", [("f#g", "CounterSatisfiable", 0.1, [], False)]))
    code, out, fake = diff_exit(monkeypatch, capsys, same, [])
    assert code == 0 and "no changes" in out.out
    assert fake.asked[-1] == ("/api/corpus/diff", {"threshold": 1.0, "suite": "s"})
    code, out, fake = diff_exit(monkeypatch, capsys, flip, ["rA", "rB", "--json"])
    assert code == 5
    assert fake.asked[-1][1]["a"] == "rA" and fake.asked[-1][1]["b"] == "rB"
    import json
    assert json.loads(out.out)["flipped"][0]["key"] == "f#g"
    code, out, _ = diff_exit(monkeypatch, capsys, flip, [])
    assert code == 5 and "FLIPPED" in out.out
    code, out, _ = diff_exit(monkeypatch, capsys, same, [], suites=("s", "t"))
    assert code == 2 and "--suite" in out.err
    code, out, _ = diff_exit(monkeypatch, capsys, same, ["only-one"])
    assert code == 2


# -- runs through the API on fakeredis ----------------------------------------

AXIOMS = {
    "ax/rules.nj": """\
        axiom step: forall x y. edge(x, y) implies path(x, y)
        axiom chain: forall x y z. path(x, y) and edge(y, z) implies path(x, z)
        """,
    "ax/facts.nj": """\
        axiom ab: edge(a, b)
        axiom bc: edge(b, c)
        axiom lamp: lit(a)
        """,
}
GOALS = {
    "goals/paths.nj": """\
        conjecture ab_path: path(a, b)
        conjecture ac_path: path(a, c)
        conjecture ca_path: path(c, a)
        """,
    "goals/lamps.nj": """\
        conjecture a_lit: lit(a)
        conjecture b_lit: lit(b)
        """,
}
MANIFEST = """\
[suite]
name = "paths"
description = "a small path suite"
source = "made up for a test"
time_limit = 5
axioms = ["ax/*.nj"]
problems = ["goals/*.nj"]

[settings]
axiom_check_time = 2

[expectations]
"goals/paths.nj#ab_path" = "Theorem"
"goals/paths.nj#ac_path" = "Theorem"
"goals/paths.nj#ca_path" = "CounterSatisfiable"
"goals/lamps.nj#a_lit" = "Theorem"
"goals/lamps.nj#b_lit" = "CounterSatisfiable"
"""


def write_suite(root: Path, overrides=None) -> Path:
    files = {"suite.toml": MANIFEST, **AXIOMS, **GOALS, **(overrides or {})}
    for name, text in files.items():
        p = root / name
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(textwrap.dedent(text))
    return root


@pytest.fixture
def env():
    r = fakeredis.FakeRedis()
    app = create_app(Config(max_time_limit=60), r)
    store = Store(r)
    tok = store.add_token("alice")

    class E:
        pass
    e = E()
    e.r, e.store, e.c = r, store, app.test_client()
    e.h = {"Authorization": f"Bearer {tok}"}

    def run_all():
        for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
            q = Queue(qn, connection=r)
            for rq_id in q.job_ids:
                jobs.attempt(rq_id.rsplit("-", 1)[0], connection=r)
                q.remove(rq_id)

    def run_suite(path, full=False):
        body = C.submission(C.load_suite(str(path)), full=full)
        resp = e.c.post("/api/corpus/runs", json=body, headers=e.h)
        assert resp.status_code == 202, resp.get_json()
        first = resp.get_json()
        run_all()
        v = e.c.get(f"/api/corpus/runs/{first['run']}", headers=e.h).get_json()
        assert v["summary"]["finished"]
        return first, v
    e.run_all, e.run_suite = run_all, run_suite
    return e


def rows(v):
    return {r["key"].split("#")[1]: r for r in v["rows"]}


def test_first_run_then_rerun_reuses_everything(env, tmp_path):
    root = write_suite(tmp_path)
    first, v1 = env.run_suite(root)
    assert first["reused"] == 0 and first["searched"] == 5
    got = {k: r["verdict"] for k, r in rows(v1).items()}
    assert got == {"ab_path": "Theorem", "ac_path": "Theorem", "ca_path": "CounterSatisfiable",
                   "a_lit": "Theorem", "b_lit": "CounterSatisfiable"}
    s = v1["summary"]
    assert s["axioms_consistent"] is True and s["unexpected"] == 0 and s["previous"] is None
    (g,) = v1["guards"]
    assert g["verdict"] == "Satisfiable" and g["axioms"] == 5 and g["model_size"] >= 1
    # the server recorded the content hash of every axiom and the settings
    rec = C.CorpusStore(env.r).get_run(s["run"])
    (table,) = rec["axiom_sets"].values()
    assert sorted(table) == ["ab", "bc", "chain", "lamp", "step"]
    assert rec["by"] == "alice" and rec["time_limit"] == 5 and rec["axiom_check_time"] == 2

    _, v2 = env.run_suite(root)
    assert v2["summary"]["reused"] == 5 and v2["summary"]["searched"] == 0
    # the consistency check: the last run's model, evaluated against the axioms again
    (g2,) = v2["guards"]
    assert g2["reused"] and g2["consistent"] is True and g2["model_size"] == g["model_size"]
    assert v2["summary"]["axioms_consistent"] is True
    kinds = {k: r["reuse"]["kind"] for k, r in rows(v2).items()}
    assert kinds["ac_path"] == "proof-replayed" and kinds["b_lit"] == "model-evaluated"
    assert v2["summary"]["previous"] == s["run"]
    assert v2["diff"]["flipped"] == [] and v2["summary"]["lost"] == 0

    _, v3 = env.run_suite(root, full=True)
    assert v3["summary"]["reused"] == 0 and v3["summary"]["searched"] == 5


def test_axiom_edit_gives_the_expected_reused_searched_and_flipped_lines(env, tmp_path):
    root = write_suite(tmp_path)
    env.run_suite(root)
    # edit: bc becomes edge(b, d); add: edge(c, a); lamp unchanged
    write_suite(tmp_path, {"ax/facts.nj": """\
        axiom ab: edge(a, b)
        axiom bc: edge(b, d)
        axiom ca: edge(c, a)
        axiom lamp: lit(a)
        """})
    _, v = env.run_suite(root)
    r = rows(v)
    # proofs that used only unchanged axioms: replayed and reused
    assert r["ab_path"]["reused"] and r["a_lit"]["reused"]
    # the proof of ac_path used bc, which changed: searched again, never reused
    assert not r["ac_path"]["reused"] and r["ac_path"]["verdict"] == "CounterSatisfiable"
    # ca_path's countermodel falls to the new edge(c, a): searched, now a Theorem
    assert not r["ca_path"]["reused"] and r["ca_path"]["verdict"] == "Theorem"
    d = v["diff"]
    assert sorted((x["key"], x["before"], x["after"]) for x in d["flipped"]) == [
        ("goals/paths.nj#ac_path", "Theorem", "CounterSatisfiable"),
        ("goals/paths.nj#ca_path", "CounterSatisfiable", "Theorem")]
    assert sorted(x["key"] for x in d["unexpected"]) == ["goals/paths.nj#ac_path",
                                                         "goals/paths.nj#ca_path"]
    assert v["summary"]["flipped"] == 2 and cli_corpus.exit_code(v["summary"]) == 5
    # the same through the diff endpoint (default: the suite's last two runs)
    dd = env.c.get("/api/corpus/diff?suite=paths", headers=env.h).get_json()
    assert dd["b"] == v["summary"]["run"] and len(dd["flipped"]) == 2 and dd["regression"]
    text = cli_corpus.diff_text(dd)
    assert "FLIPPED     goals/paths.nj#ac_path" in text


def test_contradictory_axiom_edit_trips_the_guard(env, tmp_path):
    root = write_suite(tmp_path)
    env.run_suite(root)
    write_suite(tmp_path, {"ax/facts.nj": """\
        axiom ab: edge(a, b)
        axiom bc: edge(b, c)
        axiom lamp: lit(a)
        axiom dark: forall x. not lit(x)
        """})
    _, v = env.run_suite(root)
    s = v["summary"]
    assert s["axioms_consistent"] is False
    (g,) = v["guards"]
    assert g["verdict"] == "Unsatisfiable" and g["consistent"] is False
    assert not g["reused"]          # the old model fails the new axiom 'dark'
    r = rows(v)
    proved = [k for k, x in r.items() if x["verdict"] in ("Theorem", "ContradictoryAxioms")]
    assert "b_lit" in proved           # everything follows from contradictory axioms
    assert all(r[k]["vacuous"] for k in proved)
    assert cli_corpus.exit_code(s) == 5
    assert cli_corpus.axioms_line(s, v["guards"]).startswith("AXIOMS CONTRADICTORY")


def test_a_stored_proof_that_no_longer_checks_is_searched_again(env, tmp_path):
    root = write_suite(tmp_path)
    _, v1 = env.run_suite(root)
    # Corrupt the stored proof of ac_path (a wrong clause in its last input
    # step); its axioms are unchanged, so only the checker can tell.
    jid = rows(v1)["ac_path"]["job"]
    key = env.store.k_result(jid)
    proof = unpack(env.r.hget(key, "proof"))
    step = next(s for s in proof["steps"] if s["rule"] == "input" and s.get("formula") == "bc")
    step["clause"] = [[True, ["edge", "c", "b"]]]
    env.r.hset(key, "proof", pack(proof))
    _, v2 = env.run_suite(root)
    r = rows(v2)
    assert not r["ac_path"]["reused"] and r["ac_path"]["verdict"] == "Theorem"
    assert r["ab_path"]["reused"]


def test_plan_reuse_rules(tmp_path):
    """The reuse rules on their own, with stand-in checkers that count calls."""
    from types import SimpleNamespace as NS
    ok = NS(ok=True, checked=3)
    calls = []

    def check_proof(proof, problem, cp):
        calls.append("proof")
        return ok

    def check_model(model, problem, conj):
        calls.append("model")
        return NS(ok=conj != "m_bad", checked=2)

    prev = {"id": "r1", "axiom_sets": {"S": {"a": "h1", "b": "h2"}}, "obligations": [
        {"key": k, "job": "j" + k, "axiom_set": "S", "conjecture_hash": "c"}
        for k in ("t_ok", "t_changed", "t_gone", "t_conj", "m_ok", "m_bad", "t_timeout")]}
    recs = {k: {"id": "j" + k, "state": "done", "verdict": v, "seconds": 2.0,
                "axioms_used": ["a"] if k != "t_gone" else ["b"]}
            for k, v in (("t_ok", "Theorem"), ("t_changed", "Theorem"), ("t_gone", "Theorem"),
                         ("t_conj", "Theorem"), ("m_ok", "CounterSatisfiable"),
                         ("m_bad", "CounterSatisfiable"), ("t_timeout", "Timeout"))}
    now = {"a": "h1", "c": "h9"}          # b removed, c added
    obligations = []
    for k in prev["obligations"]:
        table = dict(now)
        if k["key"] == "t_changed":
            table["a"] = "h1-edited"
        obligations.append({"key": k["key"], "conjecture": k["key"], "problem": None,
                            "axioms": table,
                            "conjecture_hash": "other" if k["key"] == "t_conj" else "c"})
    fetch = lambda jid: {"proof": {"conjecture": jid[1:]}, "model": {"size": 1}}
    plan = C.plan_reuse(obligations, prev, recs, fetch, check_proof=check_proof,
                        check_model=check_model, clausify=lambda p, c: None)
    reused = {obligations[i]["key"]: info["kind"] for i, info in plan.items()}
    assert reused == {"t_ok": "proof-replayed", "m_ok": "model-evaluated"}
    assert calls.count("proof") == 1        # hash mismatches never reach the checker
    assert plan[0]["saved_seconds"] == 2.0 and plan[0]["from_run"] == "r1"
    assert C.plan_reuse(obligations, prev, recs, fetch, full=True, check_proof=check_proof,
                        check_model=check_model, clausify=lambda p, c: None) == {}


def test_bad_submissions_are_refused_before_anything_is_stored(env, tmp_path):
    root = write_suite(tmp_path)
    body = C.submission(C.load_suite(str(root)))
    body["problems"][0]["bundle"]["files"]["goals/lamps.nj"] = "conjecture a_lit: lit(a) and\n"
    r = env.c.post("/api/corpus/runs", json=body, headers=env.h)
    assert r.status_code == 400
    err = r.get_json()["error"]
    assert err["code"] == "input_error" and err["file"] == "goals/lamps.nj" and err["line"] == 1
    r = env.c.post("/api/corpus/runs", json={**body, "time_limit": 1000}, headers=env.h)
    assert r.status_code == 400 and r.get_json()["error"]["code"] == "limit"
    assert env.r.keys("nj:corpus:*") == [] and env.r.keys("nj:job:*") == []
    assert env.c.get("/api/corpus/runs/rnope", headers=env.h).status_code == 404
    assert env.c.post("/api/corpus/runs", json=body).status_code == 401


SLOW_AXIOMS = """\
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit: forall x. e * x = x
axiom inv: forall x. i(x) * x = e
axiom inj: forall x y. s(x) = s(y) implies x = y
axiom notz: forall x. s(x) != e
axiom lamp: lit(a)
"""


def test_axiom_edit_gives_lost_and_gained_lines(env, tmp_path):
    """Without commutativity the group conjecture has no proof, and (the
    successor is injective and misses e) no finite countermodel: it runs to
    its time limit.  Removing the axiom loses it; putting it back gains it."""
    files = {
        "suite.toml": MANIFEST.replace('name = "paths"', 'name = "groups"')
                              .replace("time_limit = 5", "time_limit = 1")
                              .replace("axiom_check_time = 2", "axiom_check_time = 0.5")
                              .split("[expectations]")[0],
        "ax/group.nj": SLOW_AXIOMS + "axiom comm: forall x y. x * y = y * x\n",
        "goals/g.nj": "conjecture commutes: forall x y. x * y = y * x\n"
                      "conjecture lamp_lit: lit(a)\n",
    }
    for name, text in files.items():
        (tmp_path / name).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / name).write_text(text)
    _, v1 = env.run_suite(tmp_path)
    assert {k: r["verdict"] for k, r in rows(v1).items()} == {
        "commutes": "Theorem", "lamp_lit": "Theorem"}

    (tmp_path / "ax/group.nj").write_text(SLOW_AXIOMS)            # comm removed
    _, v2 = env.run_suite(tmp_path)
    r = rows(v2)
    assert r["commutes"]["verdict"] == "Timeout" and not r["commutes"]["reused"]
    assert r["lamp_lit"]["reused"]
    d = v2["diff"]
    assert [(x["key"], x["before"], x["after"]) for x in d["lost"]] == [
        ("goals/g.nj#commutes", "Theorem", "Timeout")]
    assert d["gained"] == [] and d["flipped"] == [] and d["regression"]
    assert cli_corpus.exit_code(v2["summary"]) == 5
    assert "lost        goals/g.nj#commutes" in cli_corpus.diff_text(d)

    (tmp_path / "ax/group.nj").write_text(SLOW_AXIOMS + "axiom comm: forall x y. x * y = y * x\n")
    _, v3 = env.run_suite(tmp_path)
    d = v3["diff"]
    # the manifest expects nothing of it: a definite verdict again, "answered"
    # (gained needs an expectation it now meets)
    assert [(x["key"], x["before"], x["after"]) for x in d["answered"]] == [
        ("goals/g.nj#commutes", "Timeout", "Theorem")]
    assert d["gained"] == [] and d["lost"] == [] and not d["regression"]
    assert "answered    goals/g.nj#commutes" in cli_corpus.diff_text(d)
    assert cli_corpus.exit_code(v3["summary"]) == 0
    # only infinite models: the consistency check can neither refute nor satisfy
    assert v3["summary"]["axioms_consistent"] is None


# -- the axioms themselves: what changed between two runs ---------------------

class ApiClient:
    """The CLI's client, answered by the Flask test client."""

    def __init__(self, env):
        self.env = env

    def get(self, path, **q):
        resp = self.env.c.get(path, query_string={k: v for k, v in q.items() if v is not None},
                              headers=self.env.h)
        assert resp.status_code == 200, resp.get_json()
        return resp.get_json()


def test_diff_names_the_axioms_edited_added_and_removed(env, tmp_path, monkeypatch, capsys):
    root = write_suite(tmp_path)
    _, v1 = env.run_suite(root)
    # bc edited, lamp removed, ca added; the rules file untouched; ab only respaced
    write_suite(tmp_path, {"ax/facts.nj": """\
        axiom ab:   edge(a,b)   # the same content
        axiom bc: edge(b, d)
        axiom ca: edge(c, a)
        """})
    _, v2 = env.run_suite(root)
    want = {"added": [{"name": "ca", "file": "ax/facts.nj"}],
            "removed": [{"name": "lamp", "file": "ax/facts.nj"}],
            "edited": [{"name": "bc", "file": "ax/facts.nj", "file_before": "ax/facts.nj"}]}
    assert v2["diff"]["axiom_changes"] == want
    # the stored run names every axiom with its file and hash
    rec = C.CorpusStore(env.r).get_run(v2["summary"]["run"])
    assert {(e["name"], e["file"]) for e in rec["axiom_index"]} == {
        ("ab", "ax/facts.nj"), ("bc", "ax/facts.nj"), ("ca", "ax/facts.nj"),
        ("chain", "ax/rules.nj"), ("step", "ax/rules.nj")}

    monkeypatch.setattr(cli_corpus, "_client", lambda args: ApiClient(env))
    from service.cli import main
    code = main(["corpus", "diff", "--suite", "paths", "--json"])
    out = capsys.readouterr().out
    import json
    d = json.loads(out)
    assert d["axiom_changes"] == want
    # every key the JSON had before is still there, unchanged in meaning
    for k in ("a", "b", "suite", "gained", "lost", "flipped", "unexpected", "slower", "faster",
              "axioms_changed", "added", "removed", "reused", "searched",
              "axioms_consistent", "finished", "regression", "guards_b"):
        assert k in d, k
    assert code == 5 and len(d["flipped"]) == 3     # ac_path, ca_path, a_lit (lamp gone)

    main(["corpus", "diff", "--suite", "paths"])
    text = capsys.readouterr().out
    lines = text.splitlines()
    head = lines.index("axioms changed: 1 edited, 1 added, 1 removed")
    assert lines[head + 1].split() == ["edited", "bc", "(ax/facts.nj)"]
    assert lines[head + 2].split() == ["added", "ca", "(ax/facts.nj)"]
    assert lines[head + 3].split() == ["removed", "lamp", "(was", "in", "ax/facts.nj)"]
    # near the top: before the gained, lost and flipped lines
    first_change = min(i for i, ln in enumerate(lines)
                       if ln.split()[:1] in (["FLIPPED"], ["lost"], ["gained"]))
    assert head < first_change
    assert "using other axioms" in lines[-1]

    # a rerun with no edit: none
    _, v3 = env.run_suite(root)
    assert v3["diff"]["axiom_changes"] == {"added": [], "removed": [], "edited": []}
    assert "axioms changed: none" in cli_corpus.diff_text(v3["diff"])


def test_axioms_moved_to_another_file_are_not_changes_and_old_runs_still_compare():
    before = [{"name": "x", "file": "ax1/a.nj", "hash": "h1"},
              {"name": "y", "file": "ax1/a.nj", "hash": "h2"}]
    after = [{"name": "x", "file": "ax2/a.nj", "hash": "h1"},
             {"name": "y", "file": "ax2/a.nj", "hash": "h9"}]
    assert C.axiom_changes(before, after) == {
        "added": [], "removed": [],
        "edited": [{"name": "y", "file": "ax2/a.nj", "file_before": "ax1/a.nj"}]}
    # one name in two files of one run (local axioms of two problems): a
    # change in either is an edit of that name
    two = before + [{"name": "y", "file": "p.nj", "hash": "h3"}]
    assert C.axiom_changes(two, two)["edited"] == []
    assert C.axiom_changes(two, before)["edited"][0]["name"] == "y"
    # a run stored before the index: its axiom sets, no file
    old = {"axiom_sets": {"s1": {"x": "h1", "y": "h2"}, "s2": {"x": "h1"}}}
    assert C.axiom_index(old) == [{"name": "x", "file": None, "hash": "h1"},
                                  {"name": "y", "file": None, "hash": "h2"}]
    ch = C.axiom_changes(C.axiom_index(old), after)
    assert ch["edited"] == [{"name": "y", "file": "ax2/a.nj", "file_before": None}]
    a = view("A", [("f#g", "Theorem", 0.1, ["x"], False)])
    b = view("B", [("f#g", "Theorem", 0.1, ["x"], False)])
    assert C.compare(a, b)["axiom_changes"] == {"added": [], "removed": [], "edited": []}
    assert "(was" not in cli_corpus.diff_text(C.compare(a, b))


def test_runs_from_two_folders_are_told_apart(env, tmp_path, monkeypatch, capsys):
    write_suite(tmp_path / "one")
    write_suite(tmp_path / "two")
    monkeypatch.chdir(tmp_path)
    env.run_suite("one")
    env.run_suite(str(tmp_path / "two" / "suite.toml"))     # absolute: stored relative
    monkeypatch.setattr(cli_corpus, "_client", lambda args: ApiClient(env))
    from service.cli import main
    assert main(["corpus", "runs"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert len(lines) == 2
    assert lines[0].endswith(" two/suite.toml") and lines[1].endswith(" one/suite.toml")
    runs = env.c.get("/api/corpus/suites/paths/runs", headers=env.h).get_json()["runs"]
    assert [r["manifest_path"] for r in runs] == ["two/suite.toml", "one/suite.toml"]
    assert [r["manifest"] for r in runs] == ["suite.toml", "suite.toml"]
    # a run stored before the path was: still listed, with its file name
    cs = C.CorpusStore(env.r)
    rec = cs.get_run(runs[1]["run"])
    del rec["manifest_path"]
    cs.save_run(rec)
    assert main(["corpus", "runs", "--suite", "paths"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].endswith(" two/suite.toml") and lines[1].endswith(" suite.toml")
    assert not lines[1].endswith("/suite.toml")


def test_manifest_path_is_relative_to_where_the_run_started(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert C.manifest_path("corpus/demo/./suite.toml") == "corpus/demo/suite.toml"
    assert C.manifest_path(str(tmp_path / "x" / "suite.toml")) == "x/suite.toml"
    assert C.manifest_path("/elsewhere/suite.toml") == "/elsewhere/suite.toml"


def test_the_run_report_says_the_batch_holds_the_axiom_check_too(env, tmp_path):
    root = write_suite(tmp_path)
    first, v = env.run_suite(root)
    s = v["summary"]
    assert s["total"] == 5 and s["axiom_checks"] == 1 and first["axiom_checks"] == 1
    assert len(env.store.batch_job_ids(s["batch"])) == 6
    head = cli_corpus.report_text(v).splitlines()[0]
    assert head.endswith(f"5 obligations (batch {s['batch']}: 6 jobs, the 5 obligations "
                         f"plus 1 axiom consistency check)")
    # no axioms, no check: nothing to say
    no_ax = dict(s, axiom_checks=0)
    assert cli_corpus.checks_note(no_ax) == ""
    assert "consistency" not in cli_corpus._batch_part(no_ax)


# -- contradictory axioms, removed obligations, suites, the run list ----------

RING_MANIFEST = """\
[suite]
name = "rings"
description = "a group without commutativity, and a lamp"
source = "made up for a test"
time_limit = 1
axioms = ["ax/*.nj"]
problems = ["goals/*.nj"]

[settings]
axiom_check_time = 0.5

[expectations]
"goals/g.nj#ring_comm" = "Theorem"
"goals/g.nj#lamp_lit" = "Theorem"
"""
DARK = "axiom dark: forall x. not lit(x)\n"     # with lamp: lit(a), contradictory


def write_rings(root: Path, extra: str = "") -> Path:
    files = {"suite.toml": RING_MANIFEST, "ax/group.nj": SLOW_AXIOMS + extra,
             "goals/g.nj": "conjecture ring_comm: forall x y. x * y = y * x\n"
                           "conjecture lamp_lit: lit(a)\n"}
    for name, text in files.items():
        (root / name).parent.mkdir(parents=True, exist_ok=True)
        (root / name).write_text(text)
    return root


class StatusClient:
    """What ``nightjar status JOB`` asks for, answered by the Flask test client."""

    def __init__(self, env):
        self.env = env

    def job(self, jid):
        resp = self.env.c.get(f"/api/jobs/{jid}", headers=self.env.h)
        assert resp.status_code == 200
        return resp.get_json()


def test_a_contradictory_axiom_marks_every_obligation_and_the_reused_theorem_too(
        env, tmp_path, monkeypatch, capsys):
    root = write_rings(tmp_path)
    _, v1 = env.run_suite(root)
    assert {k: r["verdict"] for k, r in rows(v1).items()} == {
        "ring_comm": "Timeout", "lamp_lit": "Theorem"}

    write_rings(tmp_path, DARK)                      # appended: the lamp proof still replays
    _, v2 = env.run_suite(root)
    r = rows(v2)
    assert r["lamp_lit"]["reused"] and r["lamp_lit"]["verdict"] == "Theorem"
    assert r["ring_comm"]["verdict"] == "ContradictoryAxioms" and not r["ring_comm"]["reused"]
    assert all(x["axioms_contradictory"] for x in r.values())
    assert r["lamp_lit"]["vacuous"]
    s = v2["summary"]
    assert s["axioms_consistent"] is False and s["on_contradictory_axioms"] == 2
    d = v2["diff"]
    assert sorted((x["key"], x["before"], x["after"]) for x in d["contradictory"]) == [
        ("goals/g.nj#lamp_lit", "Theorem", "Theorem"),
        ("goals/g.nj#ring_comm", "Timeout", "ContradictoryAxioms")]
    assert d["gained"] == [] and s["gained"] == 0 and s["contradictory"] == 2
    assert cli_corpus.exit_code(s) == 5

    # the job records say so: the API's job, `nightjar status`, and the mark's text
    jid = r["lamp_lit"]["job"]
    job = env.c.get(f"/api/jobs/{jid}", headers=env.h).get_json()
    assert job["verdict"] == "Theorem"               # the entailment stands
    assert job["axioms_contradictory"].startswith(
        f"AXIOMS CONTRADICTORY (corpus run {s['run']}: refuted on their own by the axiom "
        f"check {v2['guards'][0]['job']}): the entailment holds, but vacuously")
    # the mark follows the worker's own reason (what `status` and the job page show)
    src = env.c.get(f"/api/jobs/{job['reused_from']}", headers=env.h).get_json()
    assert src["reason"] and "AXIOMS" not in src["reason"]
    assert job["reason"] == src["reason"] + "; and: " + job["axioms_contradictory"]
    ca = env.c.get(f"/api/jobs/{r['ring_comm']['job']}", headers=env.h).get_json()
    assert ca["axioms_contradictory"] and ca["reason"].startswith("the axioms contradict each other")
    guard = env.c.get(f"/api/jobs/{v2['guards'][0]['job']}", headers=env.h).get_json()
    assert "axioms_contradictory" not in guard
    from service import cli_client
    monkeypatch.setattr(cli_client, "_client", lambda args: StatusClient(env))
    from service.cli import main
    assert main(["status", jid]) == 0
    out = capsys.readouterr().out
    assert "Theorem" in out and "AXIOMS CONTRADICTORY (corpus run" in out
    # reading the run again writes nothing twice
    env.c.get(f"/api/corpus/runs/{s['run']}", headers=env.h)
    again = env.c.get(f"/api/jobs/{jid}", headers=env.h).get_json()
    assert again["reason"] == job["reason"]
    # the run report marks both lines
    report = cli_corpus.report_text(v2)
    assert report.splitlines()[1].startswith("AXIOMS CONTRADICTORY: 1 axiom set (1 refuted on "
                                             "its own by the axiom check")
    lamp = next(ln for ln in report.splitlines() if "#lamp_lit" in ln)
    assert "reused" in lamp and "VACUOUS" in lamp

    # the axioms fixed: the reused copy carries no mark, the vacuous Theorem
    # became a real one (gained), the contradiction that was no verdict is not lost
    write_rings(tmp_path)
    _, v3 = env.run_suite(root)
    r3 = rows(v3)
    assert r3["lamp_lit"]["reused"] and not r3["lamp_lit"]["axioms_contradictory"]
    job3 = env.c.get(f"/api/jobs/{r3['lamp_lit']['job']}", headers=env.h).get_json()
    assert job3["reused_from"] == jid and job3["reason"] == src["reason"]
    assert "axioms_contradictory" not in job3
    d = v3["diff"]
    assert [(x["key"], x.get("before_contradictory")) for x in d["gained"]] == [
        ("goals/g.nj#lamp_lit", True)]
    assert d["lost"] == [] and d["contradictory"] == [] and not d["regression"]
    assert cli_corpus.exit_code(v3["summary"]) == 3          # ring_comm: Timeout again


def test_removing_a_settled_obligation_fails_the_gate_unless_allowed(
        env, tmp_path, monkeypatch, capsys):
    root = write_suite(tmp_path)
    _, v1 = env.run_suite(root)
    # a_lit (a Theorem) deleted with its expectation; b_lit stays
    write_suite(tmp_path, {"goals/lamps.nj": "conjecture b_lit: lit(b)\n",
                           "suite.toml": MANIFEST.replace(
                               '"goals/lamps.nj#a_lit" = "Theorem"\n', "")})
    _, v2 = env.run_suite(root)
    d = v2["diff"]
    assert d["removed"] == [{"key": "goals/lamps.nj#a_lit", "before": "Theorem", "settled": True}]
    assert d["removed_settled"] == 1 and not d["regression"]
    assert v2["summary"]["removed_settled"] == 1
    assert cli_corpus.exit_code(v2["summary"]) == 6
    assert cli_corpus.exit_code(v2["summary"], allow_removed=True) == 0
    monkeypatch.setattr(cli_corpus, "_client", lambda args: ApiClient(env))
    from service.cli import main
    assert main(["corpus", "diff", "--suite", "paths"]) == 6
    out = capsys.readouterr()
    assert "REMOVED     goals/lamps.nj#a_lit  (was Theorem" in out.out
    assert "no longer in the suite (goals/lamps.nj#a_lit)" in out.err and "--allow-removed" in out.err
    assert main(["corpus", "diff", "--suite", "paths", "--allow-removed"]) == 0
    capsys.readouterr()
    # a removed obligation that had no verdict hides nothing: no gate
    a = view("A", [("f#g", "Theorem", 0.1, ["x"], False), ("f#t", "Timeout", 5.0, [], False)])
    b = view("B", [("f#g", "Theorem", 0.1, ["x"], True)])
    assert cli_corpus.diff_exit_code(C.compare(a, b)) == 0


class RaisingApiClient(ApiClient):
    """As ApiClient, but an error answer raises the client's ApiError."""

    def get(self, path, **q):
        from service.client import ApiError
        resp = self.env.c.get(path, query_string={k: v for k, v in q.items() if v is not None},
                              headers=self.env.h)
        if resp.status_code != 200:
            raise ApiError(resp.status_code, resp.get_json()["error"])
        return resp.get_json()


def test_runs_of_two_suites_are_compared_only_when_asked(env, tmp_path, monkeypatch, capsys):
    write_suite(tmp_path / "one")
    write_suite(tmp_path / "two", {"suite.toml": MANIFEST.replace('name = "paths"',
                                                                  'name = "lanes"')})
    _, va = env.run_suite(tmp_path / "one")
    _, vb = env.run_suite(tmp_path / "two")
    ra, rb = va["summary"]["run"], vb["summary"]["run"]
    resp = env.c.get(f"/api/corpus/diff?a={ra}&b={rb}", headers=env.h)
    assert resp.status_code == 400
    err = resp.get_json()["error"]
    assert err["code"] == "different_suites" and err["suites"] == {"a": "paths", "b": "lanes"}
    assert "across_suites=1" in err["message"]
    assert env.c.get(f"/api/corpus/diff?a={ra}&b={rb}&across_suites=maybe",
                     headers=env.h).status_code == 400
    d = env.c.get(f"/api/corpus/diff?a={ra}&b={rb}&across_suites=1", headers=env.h).get_json()
    assert d["across_suites"] is True and d["suite"] is None
    assert d["suites"] == {"a": "paths", "b": "lanes"}
    # one suite: as before
    same = env.c.get(f"/api/corpus/diff?a={ra}&b={ra}", headers=env.h).get_json()
    assert same["across_suites"] is False and same["suite"] == "paths"

    monkeypatch.setattr(cli_corpus, "_client", lambda args: RaisingApiClient(env))
    from service.cli import main
    assert main(["corpus", "diff", ra, rb]) == 2
    out = capsys.readouterr()
    assert out.out == ""
    assert f"run {ra} is of suite 'paths' and run {rb} of suite 'lanes'" in out.err
    assert f"nightjar corpus diff {ra} {rb} --across-suites" in out.err
    code = main(["corpus", "diff", ra, rb, "--across-suites"])
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].startswith(f"SUITES DIFFER: run {ra} is of suite paths, run {rb} of suite "
                               f"lanes")
    assert lines[1] == f"suites paths -> lanes: run {ra} -> run {rb}"
    assert code == 0          # the same files and verdicts: nothing else to say


def test_corpus_runs_lists_newest_first_across_suites(env, tmp_path, monkeypatch, capsys):
    write_suite(tmp_path / "p")
    write_suite(tmp_path / "o", {"suite.toml": MANIFEST.replace('name = "paths"',
                                                                'name = "other"')})
    made = [env.run_suite(tmp_path / x)[1]["summary"]["run"] for x in ("p", "o", "p")]
    # distinct, known creation times: paths, other, paths
    cs = C.CorpusStore(env.r)
    for t, rid in zip((1000.0, 2000.0, 3000.0), made):
        rec = cs.get_run(rid)
        rec["created"] = t
        cs.save_run(rec)
    monkeypatch.setattr(cli_corpus, "_client", lambda args: ApiClient(env))
    from service.cli import main
    assert main(["corpus", "runs"]) == 0
    lines = capsys.readouterr().out.splitlines()
    # grouped by suite ("other" first, then "paths") would be made[1], made[2], made[0]
    assert [ln.split()[0] for ln in lines] == [made[2], made[1], made[0]]
    assert [ln.split()[3] for ln in lines] == ["paths", "other", "paths"]
    assert main(["corpus", "runs", "--json"]) == 0
    listed = json.loads(capsys.readouterr().out)["runs"]
    assert [x["run"] for x in listed] == [made[2], made[1], made[0]]
    assert main(["corpus", "runs", "--suite", "paths"]) == 0
    assert [ln.split()[0] for ln in capsys.readouterr().out.splitlines()] == [made[2], made[0]]


# -- a flip to the expected verdict is gained (QA: fixing a regression) ------

def test_a_flip_to_the_expected_verdict_is_gained_and_marked_fixed():
    """QA's case: a broken axiom turned eight expected Theorems into
    CounterSatisfiable (run B); the axiom put back (run C), they are Theorems
    again.  B -> C is a repair: gained (fixed), no regression.  A flip away
    from the expectation, or with none, still fails the gate."""
    exp = {"f#t1": "Theorem", "f#t2": "Theorem", "f#cs": "CounterSatisfiable",
           "f#away": "Theorem"}
    b = view("B", [("f#t1", "CounterSatisfiable", 0.1, [], False),
                   ("f#t2", "CounterSatisfiable", 0.1, [], False),
                   ("f#cs", "Theorem", 0.1, ["x"], False),
                   ("f#away", "Theorem", 0.1, ["x"], False),
                   ("f#free", "Theorem", 0.1, ["x"], False)], expectations=exp)
    c = view("C", [("f#t1", "Theorem", 0.2, ["x"], False),
                   ("f#t2", "Theorem", 0.2, ["x"], False),
                   ("f#cs", "CounterSatisfiable", 0.1, [], False),
                   ("f#away", "CounterSatisfiable", 0.1, [], False),
                   ("f#free", "CounterSatisfiable", 0.1, [], False)], expectations=exp)
    d = C.compare(b, c)
    assert [(x["key"], x["before"], x["after"], x.get("fixed")) for x in d["gained"]] == [
        ("f#t1", "CounterSatisfiable", "Theorem", True),
        ("f#t2", "CounterSatisfiable", "Theorem", True),
        ("f#cs", "Theorem", "CounterSatisfiable", True)]
    assert d["gained"][0]["expected_before"] == "Theorem"      # B's manifest: a repair
    # away from the expectation, and with no expectation: flipped, as before
    assert [x["key"] for x in d["flipped"]] == ["f#away", "f#free"]
    assert [x["key"] for x in d["unexpected"]] == ["f#away"]
    assert listed_once(d) and d["regression"] is True and C.fixed_count(d) == 3
    # without the two real flips the comparison passes the gate
    keep = lambda v: dict(v, rows=[r for r in v["rows"] if r["key"] not in ("f#away", "f#free")])
    d2 = C.compare(keep(b), keep(c))
    assert d2["regression"] is False and d2["flipped"] == [] and len(d2["gained"]) == 3
    assert cli_corpus.diff_exit_code(d2) == 0
    assert C.counts(d2)["gained"] == 3 and C.counts(d2)["flipped"] == 0
    # the terminal: loud, one line each, the count said twice
    lines = cli_corpus.diff_text(d2).splitlines()
    assert any(ln.startswith("DEFINITE VERDICTS CHANGED: 3 obligations") for ln in lines)
    t1 = [ln for ln in lines if " f#t1 " in ln]
    assert len(t1) == 1 and t1[0].startswith("FIXED ")
    assert "CounterSatisfiable -> Theorem (a definite verdict changed, to the one the " \
           "manifest expects)" in t1[0]
    assert not any(ln.startswith("FLIPPED") or ln.startswith("gained") for ln in lines)
    assert "0 flipped" in lines[-1] and "3 gained (3 of them fixed" in lines[-1]


def test_a_flip_the_manifest_was_edited_to_expect_says_so():
    """The manifest's expectation changed with the verdict (the demo's second
    axiom version): gained, fixed, and the line names what was expected before."""
    a = view("A", [("f#g", "Theorem", 0.1, ["x"], False)], expectations={"f#g": "Theorem"})
    b = view("B", [("f#g", "CounterSatisfiable", 0.1, [], False)],
             expectations={"f#g": "CounterSatisfiable"})
    d = C.compare(a, b)
    assert d["flipped"] == [] and not d["regression"]
    (g,) = d["gained"]
    assert g["fixed"] and g["expected_before"] == "Theorem"
    line = next(ln for ln in cli_corpus.diff_text(d).splitlines() if " f#g " in ln)
    assert line.startswith("FIXED") and "run A's manifest expected Theorem" in line
    # an open verdict that became the expected one: gained, not fixed
    a = view("A", [("f#g", "Timeout", 5.0, [], False)], expectations={"f#g": "Theorem"})
    b = view("B", [("f#g", "Theorem", 0.1, ["x"], False)], expectations={"f#g": "Theorem"})
    d = C.compare(a, b)
    assert "fixed" not in d["gained"][0] and C.fixed_count(d) == 0
    text = cli_corpus.diff_text(d)
    assert "DEFINITE VERDICTS CHANGED" not in text and "of them fixed" not in text
    assert next(ln for ln in text.splitlines() if " f#g " in ln).startswith("gained")


def test_fixing_a_broken_axiom_passes_the_gate_through_run_and_diff(
        env, tmp_path, monkeypatch, capsys):
    """The QA steps on the paths suite: an edited axiom loses an expected
    Theorem to a countermodel (exit 5); the axiom put back, the rerun and
    `corpus diff` both exit 0 and list it as gained and FIXED."""
    root = write_suite(tmp_path)
    env.run_suite(root)
    write_suite(tmp_path, {"ax/facts.nj": AXIOMS["ax/facts.nj"].replace("edge(b, c)",
                                                                        "edge(b, d)")})
    _, v2 = env.run_suite(root)
    assert [(x["key"], x["after"]) for x in v2["diff"]["flipped"]] == [
        ("goals/paths.nj#ac_path", "CounterSatisfiable")]
    assert cli_corpus.exit_code(v2["summary"]) == 5
    write_suite(tmp_path)                                  # the original axiom back
    _, v3 = env.run_suite(root)
    d = v3["diff"]
    assert d["flipped"] == [] and d["unexpected"] == [] and not d["regression"]
    assert [(x["key"], x["before"], x["after"], x["fixed"]) for x in d["gained"]] == [
        ("goals/paths.nj#ac_path", "CounterSatisfiable", "Theorem", True)]
    s = v3["summary"]
    assert s["gained"] == 1 and s["flipped"] == 0 and cli_corpus.exit_code(s) == 0
    assert cli_corpus.json_summary(v3)["changes"]["gained"][0]["fixed"] is True
    assert "FIXED       goals/paths.nj#ac_path  CounterSatisfiable -> Theorem" in \
        cli_corpus.diff_text(d)

    monkeypatch.setattr(cli_corpus, "_client", lambda args: ApiClient(env))
    from service.cli import main
    assert main(["corpus", "diff", "--suite", "paths"]) == 0
    out = capsys.readouterr().out
    assert "FIXED       goals/paths.nj#ac_path" in out and "1 gained (1 of them fixed" in out
    assert main(["corpus", "diff", "--suite", "paths", "--json"]) == 0
    dj = json.loads(capsys.readouterr().out)
    assert dj["gained"][0]["fixed"] is True and dj["flipped"] == [] and not dj["regression"]


# -- a suite with one run: nothing to compare yet -----------------------------

def test_diff_of_a_suite_with_one_run_is_not_a_failure(env, tmp_path, monkeypatch, capsys):
    monkeypatch.setattr(cli_corpus, "_client", lambda args: RaisingApiClient(env))
    from service.cli import main
    # no run at all: the suite is unknown, a usage error as before
    assert main(["corpus", "diff", "--suite", "paths"]) == 2
    assert "has 0 runs" in capsys.readouterr().err
    _, v = env.run_suite(write_suite(tmp_path))
    rid = v["summary"]["run"]
    for argv in (["--suite", "paths"], []):            # named, or the only suite
        assert main(["corpus", "diff", *argv]) == 0
        out = capsys.readouterr()
        assert out.out.strip() == (f"suite paths has one run ({rid}): nothing to compare "
                                   f"yet; the next run of the suite will be compared with it")
        assert out.err == ""
    assert main(["corpus", "diff", "--suite", "paths", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["compared"] is False and d["regression"] is False and d["b"] == rid
    # two runs named explicitly: one of them missing is still an error
    assert main(["corpus", "diff", rid, "rnosuch"]) == 2
    assert "no run rnosuch" in capsys.readouterr().err
    # the API itself still says that a comparison needs two
    resp = env.c.get("/api/corpus/diff?suite=paths", headers=env.h)
    assert resp.status_code == 404 and "needs two" in resp.get_json()["error"]["message"]
    env.run_suite(tmp_path)
    assert main(["corpus", "diff", "--suite", "paths"]) == 0
    assert "no changes" in capsys.readouterr().out


def test_the_cli_refusal_of_two_suites_gives_only_the_cli_way(env, tmp_path, monkeypatch,
                                                              capsys):
    write_suite(tmp_path / "one")
    write_suite(tmp_path / "two", {"suite.toml": MANIFEST.replace('name = "paths"',
                                                                  'name = "lanes"')})
    ra = env.run_suite(tmp_path / "one")[1]["summary"]["run"]
    rb = env.run_suite(tmp_path / "two")[1]["summary"]["run"]
    monkeypatch.setattr(cli_corpus, "_client", lambda args: RaisingApiClient(env))
    from service.cli import main
    assert main(["corpus", "diff", ra, rb]) == 2
    err = capsys.readouterr().err
    assert "across_suites" not in err                     # the API's parameter
    assert err.splitlines() == [
        f"nightjar: run {ra} is of suite 'paths' and run {rb} of suite 'lanes': runs of "
        f"different suites are not compared, since their obligations are matched by file "
        f"and conjecture name only",
        f"nightjar: to compare them anyway: nightjar corpus diff {ra} {rb} --across-suites"]
    # the API keeps its own hint
    msg = env.c.get(f"/api/corpus/diff?a={ra}&b={rb}", headers=env.h).get_json()["error"]
    assert msg["message"].endswith("ask with across_suites=1")
    # an answer without the suites field (an older service): cut before the hint
    assert cli_corpus.suites_refusal_text({"message": "x differs; to compare them anyway, "
                                                      "ask with across_suites=1"}, None) == \
        "x differs"
