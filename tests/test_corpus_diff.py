"""Corpus runs on fakeredis: comparison of runs, reuse on rerun, the
consistency guard, diff exit codes.

Runs go through the corpus API with the Flask test client; the jobs are
worked off in-process with ``worker.jobs.attempt`` (what a worker does) and
the real engine, on problems small enough to settle in a fraction of a second.
"""

from __future__ import annotations

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

def view(rid, rows, expectations=None, guards=None, jobs_extra=None):
    """A run record and its job records from (key, verdict, seconds, axioms, reused)."""
    run = {"id": rid, "suite": "s", "owner": "o", "created": 0.0, "batch": "b" + rid,
           "expectations": expectations or {}, "axiom_sets": {"A": {}},
           "guards": guards or [], "obligations": []}
    recs = {}
    for i, (key, verdict, secs, axioms, reused) in enumerate(rows):
        jid = f"{rid}-j{i}"
        run["obligations"].append({
            "key": key, "file": key.split("#")[0], "conjecture": key.split("#")[-1],
            "job": jid, "axiom_set": "A", "conjecture_hash": "h",
            "reused": ({"kind": "proof-replayed", "check_seconds": 0.01,
                        "saved_seconds": secs, "from_job": "x"} if reused else None)})
        recs[jid] = {"id": jid, "state": "done" if verdict else "running",
                     "verdict": verdict, "seconds": secs, "axioms_used": axioms}
    recs.update(jobs_extra or {})
    return C.run_view(run, recs)


def test_compare_sorts_every_kind_of_change():
    a = view("A", [("f#gain", "Timeout", 10.0, [], False),
                   ("f#lose", "Theorem", 0.2, ["x"], False),
                   ("f#flip1", "Theorem", 0.2, ["x"], False),
                   ("f#flip2", "CounterSatisfiable", 0.1, [], False),
                   ("f#slow", "Theorem", 0.1, ["x"], False),
                   ("f#jitter", "Theorem", 0.1, ["x"], False),
                   ("f#axioms", "Theorem", 0.1, ["x", "y"], False),
                   ("f#reused", "Theorem", 0.1, ["x"], False),
                   ("f#gone", "Theorem", 0.1, ["x"], False)])
    b = view("B", [("f#gain", "Theorem", 1.0, ["x"], False),
                   ("f#lose", "Timeout", 10.0, [], False),
                   ("f#flip1", "CounterSatisfiable", 0.2, [], False),
                   ("f#flip2", "Theorem", 0.1, ["x"], False),
                   ("f#slow", "Theorem", 3.5, ["x"], False),
                   ("f#jitter", "Theorem", 0.6, ["x"], False),
                   ("f#axioms", "Theorem", 0.1, ["x", "z"], False),
                   ("f#reused", "Theorem", 5.0, ["x"], True),
                   ("f#new", "CounterSatisfiable", 0.1, [], False)],
             expectations={"f#flip1": "Theorem", "f#gain": "Theorem"})
    d = C.compare(a, b)
    keys = lambda k: [x["key"] for x in d[k]]
    assert keys("gained") == ["f#gain", "f#new"]
    assert keys("lost") == ["f#lose"]
    assert keys("flipped") == ["f#flip1", "f#flip2"]
    assert d["flipped"][0]["before"] == "Theorem" and d["flipped"][0]["after"] == "CounterSatisfiable"
    assert keys("unexpected") == ["f#flip1"]          # f#gain is as expected
    assert keys("slower") == ["f#slow"] and keys("faster") == []   # jitter and reuse aside
    assert d["axioms_changed"] == [{"key": "f#axioms", "added": ["z"], "removed": ["y"]}]
    assert keys("added") == ["f#new"] and keys("removed") == ["f#gone"]
    assert d["regression"] is True
    assert C.counts(d) == {"gained": 2, "lost": 1, "flipped": 2, "unexpected": 1}


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
    assert v["summary"]["vacuous"] == 1
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


def test_run_exit_codes():
    assert cli_corpus.exit_code({"lost": 0, "flipped": 0, "unexpected": 0,
                                 "axioms_consistent": True, "undecided": 0}) == 0
    assert cli_corpus.exit_code({"undecided": 2, "axioms_consistent": None}) == 3
    for k in ("lost", "flipped", "unexpected"):
        assert cli_corpus.exit_code({k: 1, "undecided": 2}) == 5
    assert cli_corpus.exit_code({"axioms_consistent": False}) == 5


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
    assert [(x["key"], x["before"], x["after"]) for x in d["gained"]] == [
        ("goals/g.nj#commutes", "Timeout", "Theorem")]
    assert d["lost"] == [] and not d["regression"]
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
