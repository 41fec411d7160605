"""The client commands' pieces: submission bodies built from files (includes
resolved here), the verdict table, JSON lines, progress, the one-line answer
when no service runs, and the demo's submission."""

import io
import json
import os
import socket

import fakeredis
import pytest

from service import cli, cli_client
from service.client import Client, ServiceUnavailable, submission_body


def test_submission_body_resolves_includes_on_this_side(tmp_path, monkeypatch):
    (tmp_path / "lib").mkdir()
    (tmp_path / "lib" / "ax.nj").write_text("axiom a: forall x. p(x) implies q(x)\n")
    (tmp_path / "t.nj").write_text('include "lib/ax.nj"\nconjecture g: q(c)\n')
    (tmp_path / "u.nj").write_text("conjecture h: p(c) or not p(c)\n")
    monkeypatch.chdir(tmp_path)
    one = submission_body(["t.nj"])
    assert one == {"problem": {"main": "t.nj", "files": {
        "t.nj": 'include "lib/ax.nj"\nconjecture g: q(c)\n',
        "lib/ax.nj": "axiom a: forall x. p(x) implies q(x)\n"}}}
    many = submission_body(["t.nj", "u.nj"])
    assert [p["main"] for p in many["problems"]] == ["t.nj", "u.nj"]
    ax = submission_body(["u.nj"], axioms=["lib/ax.nj"])
    assert ax == {"axioms": {"main": "lib/ax.nj",
                             "files": {"lib/ax.nj": "axiom a: forall x. p(x) implies q(x)\n"}},
                  "conjectures": [{"name": "u.nj", "text": "conjecture h: p(c) or not p(c)\n"}]}


def test_a_missing_include_is_an_input_error_before_sending(tmp_path, monkeypatch, capsys):
    (tmp_path / "t.nj").write_text('include "nowhere.nj"\nconjecture g: q\n')
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("NIGHTJAR_SERVER", "http://127.0.0.1:9")
    code = cli.main(["submit", "t.nj"])
    err = capsys.readouterr().err
    assert code == 1 and err.startswith("t.nj:1:")


def _free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.mark.parametrize("argv", [["status", "j123"], ["proof", "j123"], ["cancel", "b1"]])
def test_no_service_is_one_line_and_exit_4(argv, capsys, tmp_path, monkeypatch):
    monkeypatch.setenv("NIGHTJAR_HOME", str(tmp_path / "empty-home"))
    monkeypatch.delenv("NIGHTJAR_SERVER", raising=False)
    code = cli.main(argv)
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 4 and len(err) == 1 and "nightjar serve" in err[0]
    code = cli.main(argv + ["--server", f"http://127.0.0.1:{_free_port()}"])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 4 and len(err) == 1 and "no Nightjar service answers at" in err[0]


JOBS = [
    {"id": "j1", "batch": "b1", "file": "a.nj", "conjecture": "g", "state": "done",
     "verdict": "Theorem", "seconds": 0.1234, "strategy": "s", "attempts": 1},
    {"id": "j22", "batch": "b1", "file": "dir/long_name.nj", "conjecture": None,
     "state": "failed", "verdict": None, "seconds": None, "reason": "lost twice"},
]


def test_verdict_table_is_aligned():
    t = cli_client.verdict_table(JOBS).splitlines()
    assert t[0].split() == ["file", "conjecture", "verdict", "seconds", "job"]
    assert set(t[1]) <= {"-", " "}
    col = t[0].index("verdict")
    assert t[2][col:].startswith("Theorem") and t[3][col:].startswith("failed")
    assert "0.12" in t[2] and t[3].split()[1] == "-"
    t = cli_client.verdict_table(JOBS, {("a.nj", "g"): "CounterSatisfiable"})
    assert "expected CounterSatisfiable" in t


def test_job_lines_have_the_promised_fields():
    for j in JOBS:
        line = json.loads(json.dumps(cli_client.job_line(j)))
        assert {"id", "file", "conjecture", "status", "seconds"} <= set(line)
    assert cli_client.job_line(JOBS[0])["status"] == "Theorem"
    assert cli_client.job_line(JOBS[1])["status"] == "failed"


def test_progress_plain_lines_when_not_a_terminal():
    out = io.StringIO()
    p = cli_client.Progress(out)
    b = {"total": 4, "settled": 0, "finished": False, "verdicts": {},
         "states": {"queued": 4, "running": 0, "done": 0, "failed": 0, "cancelled": 0}}
    p(b)
    p(b)                                                 # nothing changed: no line
    p({**b, "settled": 4, "finished": True, "verdicts": {"Theorem": 4},
       "states": {**b["states"], "queued": 0, "done": 4}})
    lines = out.getvalue().splitlines()
    assert len(lines) == 2 and lines[-1].startswith("progress: 4/4 settled")
    assert "\r" not in out.getvalue()


def test_demo_submission_reads_the_demo_suite():
    body, limit, expected = cli_client.demo_submission()
    names = [c["name"] for c in body["conjectures"]]
    assert names and all(n.startswith("conjectures/") for n in names)
    mains = body["axioms"]["main"]
    assert all(m.startswith("axioms/") for m in (mains if isinstance(mains, list) else [mains]))
    assert limit > 0 and expected
    assert {f for f, _ in expected} <= set(names)


def test_demo_submission_is_accepted_by_the_api():
    """The demo's body passes the API's reading and clausifying (no engine run)."""
    from rq import Queue

    from service.app import create_app
    from service.config import Config
    from service.store import Store
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    tok = Store(r).add_token("x")
    body, limit, expected = cli_client.demo_submission()
    resp = app.test_client().post("/api/submissions", json=body,
                                  headers={"Authorization": f"Bearer {tok}"})
    assert resp.status_code == 202, resp.get_json()
    got = {(j["file"], j["conjecture"]) for j in resp.get_json()["jobs"]}
    assert set(expected) <= got
    assert Queue("nj-batch", connection=r).count == len(got)


class _NoModelClient:
    """Answers as the API does for a CounterSatisfiable verdict that came from
    saturation: no proof, and a 404 ``no_model`` for the model."""
    def proof(self, jid):
        return {"id": jid, "state": "done", "verdict": "CounterSatisfiable",
                "proof": None, "text": None}

    def model(self, jid):
        from service.client import ApiError
        raise ApiError(404, {"code": "no_model", "text": f"job {jid} has no model: its "
                             "CounterSatisfiable verdict came from saturation"})


@pytest.mark.parametrize("json_out", [False, True])
def test_proof_of_a_saturation_verdict_says_why_and_exits_3(json_out, capsys, monkeypatch):
    monkeypatch.setattr(cli_client, "_client", lambda args: _NoModelClient())
    code = cli.main(["proof", "j9"] + (["--json"] if json_out else []))
    out, err = capsys.readouterr()
    assert code == 3
    if json_out:
        rec = json.loads(out)
        assert rec["verdict"] == "CounterSatisfiable" and "came from saturation" in rec["reason"]
    else:
        assert err.strip() == ("nightjar: job j9 has no model: its CounterSatisfiable "
                               "verdict came from saturation")


# -- the commands against the real API (Flask test client, fakeredis) -----------

def _decide(problem, conjecture, settings=None):
    """Theorem for names starting with t, a countermodel for m, saturation
    (CounterSatisfiable without a model) for s, GaveUp otherwise; a file
    without conjecture is Satisfiable with a model."""
    kind = (conjecture or "n")[0] if conjecture else "n"
    status = {"t": "Theorem", "m": "CounterSatisfiable", "n": "Satisfiable",
              "s": "CounterSatisfiable"}.get(kind, "GaveUp")
    proof = ({"steps": [{"id": 0, "clause": [], "rule": "input"}],
              "conjecture": conjecture, "axioms_used": []} if kind == "t" else None)
    model = {"size": 1, "functions": {}, "predicates": {}} if kind in "mn" else None
    cert = ({"kind": "proof-replayed", "checked": 1, "detail": ""} if proof else
            {"kind": "model-evaluated", "checked": 1, "detail": ""} if model else
            {"kind": "none", "checked": 0, "detail": ""})
    return {"conjecture": conjecture, "status": status, "seconds": 0.01, "strategy": "fake",
            "reason": "", "figures": {}, "axioms_used": [], "proof": proof, "model": model,
            "certificate": cert}


@pytest.fixture
def service(monkeypatch):
    """A Client whose requests go to the API through Flask's test client; its
    job listing pages two at a time.  ``run(n)`` works off n queued jobs."""
    from rq import Queue

    from service.app import create_app
    from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
    from service.store import Store
    from worker import jobs as worker_jobs
    monkeypatch.setattr("worker.pipeline.decide", _decide)
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    tok = Store(r).add_token("alice")
    http = app.test_client()

    class TestClient(Client):
        def request(self, method, path, body=None, query=None):
            from service.client import ApiError
            q = {k: v for k, v in (query or {}).items() if v is not None}
            resp = http.open(path, method=method, json=body, query_string=q,
                             headers={"Authorization": f"Bearer {tok}"})
            if resp.status_code >= 400:
                raise ApiError(resp.status_code, resp.get_json()["error"])
            return resp.get_json()

        def jobs(self, bid, state=None, verdict=None, page=2):
            return super().jobs(bid, state, verdict, page)

    c = TestClient("http://test")
    c.store = Store(r)
    monkeypatch.setattr(cli_client, "_client", lambda args: c)

    def run(n=None):
        for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
            q = Queue(qn, connection=r)
            for rq_id in q.job_ids:
                if n is not None and n <= 0:
                    return
                worker_jobs.attempt(rq_id.rsplit("-", 1)[0], connection=r)
                q.remove(rq_id)
                n = None if n is None else n - 1
    c.run = run
    return c


def _submit(c, names):
    """One file per conjecture name, in this order; returns the submission."""
    return c.submit({"problems": [
        {"main": f"f{i}.nj", "files": {f"f{i}.nj": f"axiom a: p(c)\nconjecture {n}: p(c)\n"}}
        for i, n in enumerate(names)]})


def test_proof_of_a_batch_shows_every_job_in_order(service, capsys):
    sub = _submit(service, ["t1", "m1", "s1", "t2", "g1"])
    service.run()
    code = cli.main(["proof", sub["batch"]])
    out = capsys.readouterr().out
    assert code == 3                                # s1 and g1 have neither
    heads = [ln for ln in out.splitlines() if ln.startswith("=== ")]
    ids = [j["id"] for j in sub["jobs"]]
    assert heads == [
        f"=== f0.nj  conjecture t1  Theorem  (job {ids[0]})",
        f"=== f1.nj  conjecture m1  CounterSatisfiable  (job {ids[1]})",
        f"=== f2.nj  conjecture s1  CounterSatisfiable  (job {ids[2]})",
        f"=== f3.nj  conjecture t2  Theorem  (job {ids[3]})",
        f"=== f4.nj  conjecture g1  GaveUp  (job {ids[4]})"]
    blocks = out.split("=== ")[1:]
    assert "countermodel" in blocks[1] and "no proof or model" not in blocks[1]
    assert blocks[2].splitlines()[1] == "no proof or model (CounterSatisfiable)"
    assert blocks[4].splitlines()[1] == "no proof or model (GaveUp)"
    assert "no proof or model" not in blocks[0] + blocks[3]

    code = cli.main(["proof", sub["batch"], "--json"])
    lines = [json.loads(ln) for ln in capsys.readouterr().out.splitlines()]
    assert code == 3 and [ln["id"] for ln in lines] == ids
    assert [ln["conjecture"] for ln in lines] == ["t1", "m1", "s1", "t2", "g1"]
    assert lines[0]["proof"] and lines[1]["model"] and "saturation" in lines[2]["reason"]


def test_proof_of_a_batch_exits_0_when_every_job_has_one(service, capsys):
    sub = _submit(service, ["t1", "m1", "t2"])
    service.run()
    assert cli.main(["proof", sub["batch"]]) == 0
    assert cli.main(["proof", sub["batch"], "--json"]) == 0
    assert len(capsys.readouterr().out.strip().splitlines()) > 3
    assert cli.main(["proof", sub["jobs"][1]["id"]]) == 0      # one job: as before
    assert "countermodel" in capsys.readouterr().out


def test_cli_job_states_are_the_stores():
    from service.store import STATES
    assert cli_client.JOB_STATES == STATES


def test_status_of_a_running_batch_shows_its_jobs(service, capsys, monkeypatch):
    monkeypatch.setattr(cli_client, "STATUS_ROWS", 3)
    sub = _submit(service, ["t1", "m1", "t2", "t3", "g1"])
    ids = [j["id"] for j in sub["jobs"]]
    service.run(2)                                   # two settled, three queued
    assert cli.main(["status", sub["batch"]]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out[0].startswith(f"batch {sub['batch']}: 2/5 settled")
    table = [ln for ln in out if ln.split() and ln.split()[-1] in ids]
    assert [ln.split() for ln in table] == [
        ["f0.nj", "t1", "Theorem", "0.01", ids[0]],
        ["f1.nj", "m1", "CounterSatisfiable", "0.01", ids[1]],
        ["f2.nj", "t2", "queued", ids[2]]]
    assert out[-1] == f"... 2 more jobs; all of them: nightjar status {sub['batch']} --all"

    assert service.store.start_attempt(ids[3], "w1", 60) is not None   # one runs
    assert cli.main(["status", sub["batch"]]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out[-1] == (f"... 2 more jobs; all of them: nightjar status {sub['batch']} "
                       f"--all, or only the running ones: nightjar status {sub['batch']} "
                       f"--state running")
    assert cli.main(["status", sub["batch"], "--state", "running"]) == 0
    out = capsys.readouterr().out.splitlines()
    assert [ln.split() for ln in out if ln.split() and ln.split()[-1] in ids] == [
        ["f3.nj", "t3", "running", ids[3]]]

    assert cli.main(["status", sub["batch"], "--all"]) == 0
    out = capsys.readouterr().out.splitlines()
    assert [ln.split()[-1] for ln in out if ln.split() and ln.split()[-1] in ids] == ids
    assert not out[-1].startswith("...")

    assert cli.main(["status", sub["batch"], "--state", "queued"]) == 0
    out = capsys.readouterr().out.splitlines()
    assert [ln.split()[-1] for ln in out if ln.split() and ln.split()[-1] in ids] == [
        ids[2], ids[4]]


def test_submit_names_a_bad_file_as_given_when_read_here(tmp_path, monkeypatch, capsys):
    (tmp_path / "bad").mkdir()
    (tmp_path / "bad" / "unclosed.nj").write_text("axiom a: p(c)\nconjecture g: (p(c)\n")
    (tmp_path / "bad" / "missing-inc.nj").write_text('include "lib/none.nj"\n')
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("NIGHTJAR_SERVER", "http://127.0.0.1:9")   # never reached
    assert cli.main(["submit", "bad/unclosed.nj"]) == 1
    assert capsys.readouterr().err.startswith("bad/unclosed.nj:2:")
    assert cli.main(["submit", "./bad/unclosed.nj"]) == 1
    assert capsys.readouterr().err.startswith("./bad/unclosed.nj:2:")
    assert cli.main(["submit", "bad/missing-inc.nj"]) == 1
    assert capsys.readouterr().err.startswith("bad/missing-inc.nj:1:")
    assert cli.main(["submit", "bad/none.nj"]) == 1
    assert "'bad/none.nj'" in capsys.readouterr().err


def test_submit_names_a_bad_file_as_given_when_the_service_finds_it(
        service, tmp_path, monkeypatch, capsys):
    """Files outside the current folder go under their base names; the
    service's input error still names them as typed."""
    (tmp_path / "here").mkdir()
    (tmp_path / "other").mkdir()
    (tmp_path / "other" / "ax.nj").write_text("axiom a: p(c)\nconjecture stray: p(c)\n")
    (tmp_path / "other" / "c.nj").write_text("conjecture g: p(c)\n")
    monkeypatch.chdir(tmp_path / "here")
    code = cli.main(["submit", "../other/c.nj", "--axioms", "../other/ax.nj"])
    err = capsys.readouterr().err
    assert code == 1 and err.startswith("../other/ax.nj:2:1: error: the axioms hold")


def test_submit_json_prints_the_input_error_object_prove_json_prints(
        tmp_path, monkeypatch, capsys):
    (tmp_path / "bad").mkdir()
    (tmp_path / "bad" / "unclosed.nj").write_text("axiom a: p(c)\nconjecture g: (p(c)\n")
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("NIGHTJAR_SERVER", "http://127.0.0.1:9")   # never reached
    assert cli.main(["prove", "--json", "bad/unclosed.nj"]) == 1
    proved = capsys.readouterr()
    assert cli.main(["submit", "--json", "bad/unclosed.nj"]) == 1
    out, err = capsys.readouterr()
    rec = json.loads(out)
    assert rec == json.loads(proved.out)
    assert rec["status"] == "InputError" and rec["file"] == "bad/unclosed.nj"
    assert rec["reason"].startswith("bad/unclosed.nj:2:") and err == proved.err


def test_submit_json_prints_the_services_input_error_as_an_object(
        service, tmp_path, monkeypatch, capsys):
    (tmp_path / "ax.nj").write_text("axiom a: p(c)\nconjecture stray: p(c)\n")
    (tmp_path / "c.nj").write_text("conjecture g: p(c)\n")
    monkeypatch.chdir(tmp_path)
    assert cli.main(["submit", "--json", "c.nj", "--axioms", "ax.nj"]) == 1
    out, err = capsys.readouterr()
    rec = json.loads(out)
    assert rec["status"] == "InputError" and rec["file"] == "ax.nj"
    assert rec["reason"] == err.strip() and err.startswith("ax.nj:2:1: error:")
    # an option's value the service refuses is a usage error (exit 2), not
    # bad input: no InputError object, as prove --json prints none for one
    assert cli.main(["submit", "--json", "c.nj", "--time-limit", "1e9"]) == 2
    out, err = capsys.readouterr()
    assert out == "" and err.startswith("nightjar: --time-limit: time_limit 1e+09 is over")


def test_proof_of_one_job_names_it_and_says_what_was_checked(service, capsys):
    sub = _submit(service, ["t1", "m1"])
    service.run()
    t1, m1 = (j["id"] for j in sub["jobs"])
    assert cli.main(["proof", t1]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out[0] == f"# f0.nj: conjecture t1: Theorem (job {t1})"
    assert out[-1] == "  certificate: proof replayed, 1 step checked"
    assert cli.main(["proof", m1]) == 0
    assert capsys.readouterr().out.splitlines()[-1] == \
        "  certificate: model evaluated, 1 formula checked"
    assert cli.main(["proof", t1, "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["certificate"]["kind"] == "proof-replayed"
    assert cli.main(["status", t1]) == 0
    assert "certificate  proof replayed, 1 step checked" in capsys.readouterr().out


# -- a model is not a countermodel (QA) -----------------------------------------

def test_proof_calls_a_satisfiable_verdicts_model_a_model(service, capsys):
    sub = service.submit({"problems": [
        {"main": "sat.nj", "files": {"sat.nj": "axiom a: p(c)\n"}},
        {"main": "cs.nj", "files": {"cs.nj": "axiom a: p(c)\nconjecture m1: q(c)\n"}}]})
    service.run()
    sat, cs = (j["id"] for j in sub["jobs"])
    assert service.job(sat)["verdict"] == "Satisfiable"
    assert cli.main(["proof", sat]) == 0
    out = capsys.readouterr().out
    assert "# no proof: the verdict is Satisfiable; a model:" in out
    assert "countermodel" not in out
    assert cli.main(["proof", cs]) == 0
    assert "the verdict is CounterSatisfiable; a countermodel:" in capsys.readouterr().out
    assert cli.main(["proof", sub["batch"]]) == 0
    blocks = capsys.readouterr().out.split("=== ")[1:]
    assert "a model:" in blocks[0] and "countermodel" not in blocks[0]
    assert "a countermodel:" in blocks[1]


# -- status BATCH --json carries the jobs the table shows (QA) --------------------

def test_status_json_of_a_batch_lists_the_tables_jobs(service, capsys, monkeypatch):
    monkeypatch.setattr(cli_client, "STATUS_ROWS", 3)
    sub = _submit(service, ["t1", "m1", "t2", "t3", "g1"])
    ids = [j["id"] for j in sub["jobs"]]
    service.run(2)
    for extra, want, matching in (((), ids[:3], 5), (("--all",), ids, 5),
                                  (("--state", "queued"), ids[2:], 3)):
        assert cli.main(["status", sub["batch"], *extra]) == 0
        table = [ln.split()[-1] for ln in capsys.readouterr().out.splitlines()
                 if ln.split() and ln.split()[-1] in ids]
        assert cli.main(["status", sub["batch"], "--json", *extra]) == 0
        got = json.loads(capsys.readouterr().out)
        assert [j["id"] for j in got["jobs"]] == table == want
        assert got["jobs_matching"] == matching
        assert got["id"] == sub["batch"] and got["total"] == 5      # the summary as before
    assert got["jobs"][0]["state"] == "queued" and "verdict" in got["jobs"][0]
    service.run()                                   # finished: every job, as the table
    assert cli.main(["status", sub["batch"], "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    assert [j["id"] for j in got["jobs"]] == ids and got["jobs_matching"] == 5


# -- a reused job says so, and whose seconds it shows (QA) ---------------------------

def test_a_reused_job_shows_where_its_verdict_and_seconds_come_from(service, capsys):
    body = {"problem": {"main": "f.nj", "files": {"f.nj": "axiom a: p(c)\nconjecture t1: p(c)\n"}}}
    first = service.submit(body)
    service.run()
    orig = first["jobs"][0]["id"]
    again = service.submit(dict(body, reuse=True))
    jid = again["jobs"][0]["id"]
    assert again["jobs"][0]["reused"] and service.job(jid)["reused_from"] == orig
    assert cli.main(["status", jid]) == 0
    rows = dict(ln.split(None, 1) if not ln.startswith(("time limit", "reused from"))
                else (ln[:11].strip(), ln[11:].strip())
                for ln in capsys.readouterr().out.splitlines())
    assert rows["reused from"] == f"{orig} (its search took 0.010 s)"
    assert rows["seconds"] == "- (no search in this job)"
    assert cli.main(["status", orig]) == 0                     # a searched job: as before
    out = capsys.readouterr().out
    assert "reused from" not in out and "seconds      0.010" in out
    assert cli.main(["status", again["batch"]]) == 0
    table = [ln.split() for ln in capsys.readouterr().out.splitlines() if ln.endswith(jid)]
    assert table == [["f.nj", "t1", "Theorem", "reused", jid]]
    line = cli_client.job_line(service.job(jid))
    assert line["reused_from"] == orig and line["seconds"] == 0.01   # the record's, named


# -- a cancelled batch says so (QA) -------------------------------------------------

def test_a_cancelled_batch_says_it_was_cancelled(service, capsys):
    sub = _submit(service, ["t1", "t2"])
    assert cli.main(["status", sub["batch"]]) == 0
    assert "  verdicts: none yet" in capsys.readouterr().out.splitlines()
    assert cli.main(["cancel", sub["batch"]]) == 0
    capsys.readouterr()
    assert cli.main(["status", sub["batch"]]) == 0
    assert "  verdicts: none: the batch was cancelled" in capsys.readouterr().out.splitlines()
    assert cli_client.verdicts_text({"verdicts": {}, "finished": True, "total": 3,
                                     "states": {"cancelled": 1, "failed": 2}}) == \
        "none (1 cancelled)"


# -- option errors are usage errors, found here or by the service (QA) -------------

def test_option_errors_exit_2_whichever_side_finds_them(service, tmp_path, monkeypatch,
                                                          capsys):
    (tmp_path / "c.nj").write_text("axiom a: p(c)\nconjecture t1: p(c)\n")
    monkeypatch.chdir(tmp_path)
    assert cli.main(["submit", "c.nj", "--strategy", "nope"]) == 2     # the service's 400
    assert capsys.readouterr().err.startswith("nightjar: --strategy: unknown strategy 'nope'")
    assert cli.main(["submit", "c.nj", "--time-limit", "1000"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("nightjar: --time-limit: time_limit 1000 is over the server's "
                          "limit of 300 seconds")
    assert cli.main(["submit", "c.nj", "--label", "x" * 201]) == 2
    assert capsys.readouterr().err.startswith("nightjar: --label: label must be")
    assert cli.main(["submit", "c.nj", "--time-limit", "0.01"]) == 0   # the bound itself
    capsys.readouterr()
    # input errors stay 1: a file the service cannot read
    (tmp_path / "ax.nj").write_text("axiom a: p(c)\nconjecture stray: p(c)\n")
    assert cli.main(["submit", "c.nj", "--axioms", "ax.nj"]) == 1


def test_the_shortest_time_limit_is_one_bound_for_prove_submit_and_the_api(
        service, tmp_path, monkeypatch, capsys):
    from service.config import MIN_TIME_LIMIT
    (tmp_path / "c.nj").write_text("axiom a: p(c)\nconjecture g: p(c)\n")
    monkeypatch.chdir(tmp_path)
    assert cli.main(["prove", "c.nj", "--time-limit", "0.001"]) == 2
    assert capsys.readouterr().err == ("nightjar: --time-limit must be at least 0.01 "
                                       "seconds, not 0.001\n")
    # accepted (the stand-in engine of the fixture answers GaveUp: exit 3)
    assert cli.main(["prove", "c.nj", "--time-limit", str(MIN_TIME_LIMIT)]) == 3
    assert "c.nj: conjecture g: GaveUp" in capsys.readouterr().out
    monkeypatch.setattr(cli_client, "_client", lambda args: pytest.fail("no request"))
    for bad in ("0.001", "0", "-1", "nan", "inf"):
        assert cli.main(["submit", "c.nj", "--time-limit", bad]) == 2, bad
        assert capsys.readouterr().err.startswith("nightjar: --time-limit must be")
    from service.client import ApiError
    body = {"problem": {"main": "c.nj", "files": {"c.nj": "conjecture g: p implies p\n"}}}
    with pytest.raises(ApiError) as e:
        service.submit(dict(body, time_limit=MIN_TIME_LIMIT / 2))
    assert e.value.status == 400 and e.value.error["field"] == "time_limit"
    assert "at least 0.01 seconds" in str(e.value)
    assert service.submit(dict(body, time_limit=MIN_TIME_LIMIT))["jobs"]


# -- submit reads files as prove and check do (QA) -----------------------------------

def test_submit_has_include_root_and_language(service, tmp_path, monkeypatch, capsys):
    (tmp_path / "lib").mkdir()
    (tmp_path / "lib" / "ax.nj").write_text("axiom a: forall x. p(x) implies q(x)\n")
    (tmp_path / "c.nj").write_text('include "ax.nj"\naxiom b: p(c)\nconjecture t1: q(c)\n')
    monkeypatch.chdir(tmp_path)
    assert cli.main(["submit", "c.nj"]) == 1                  # ax.nj is not beside c.nj
    assert capsys.readouterr().err.startswith("c.nj:1:")
    assert cli.main(["prove", "c.nj", "--include-root", "lib"]) == 0
    capsys.readouterr()
    assert cli.main(["submit", "c.nj", "--include-root", "lib", "--json"]) == 0
    jid = json.loads(capsys.readouterr().out)["jobs"][0]["id"]
    sent = service.problem(jid)
    assert sent["files"]["ax.nj"] == "axiom a: forall x. p(x) implies q(x)\n"
    service.run()
    assert service.job(jid)["verdict"] == "Theorem"

    # --language: every file is read in it, here and by the service
    (tmp_path / "t.p").write_text("fof(a, axiom, p(c)).\nfof(t1, conjecture, p(c)).\n")
    assert cli.main(["submit", "t.p", "--language", "tptp", "--json"]) == 0
    jid = json.loads(capsys.readouterr().out)["jobs"][0]["id"]
    assert service.problem(jid)["language"] == "tptp"
    assert cli.main(["submit", "t.p", "--language", "native"]) == 1
    assert capsys.readouterr().err.startswith("t.p:1:")
    (tmp_path / "ax.p").write_text("fof(a, axiom, p(c)).\n")
    (tmp_path / "g.nj").write_text("conjecture t1: p(c)\n")       # native, ending and text
    assert cli.main(["submit", "g.nj", "--axioms", "ax.p"]) == 0      # each told apart
    capsys.readouterr()
    assert cli.main(["submit", "g.nj", "--axioms", "ax.p", "--language", "tptp"]) == 1
    assert capsys.readouterr().err.startswith("g.nj:1:")              # read as TPTP, refused


def test_an_unknown_option_of_submit_prints_submits_usage(capsys, monkeypatch):
    monkeypatch.setenv("NIGHTJAR_SERVER", "http://127.0.0.1:9")      # never reached
    with pytest.raises(SystemExit) as e:
        cli.main(["submit", "p1.p", "--no-such-option", "D"])
    assert e.value.code == 2
    err = capsys.readouterr().err
    assert err.startswith("usage: nightjar submit ") and "--include-root" in err
    assert err.rstrip().endswith("nightjar: unrecognized arguments: --no-such-option D")
    with pytest.raises(SystemExit) as e:
        cli.main(["token", "add", "x", "--bogus"])                   # nested commands too
    assert e.value.code == 2
    assert capsys.readouterr().err.startswith("usage: nightjar token add ")


# -- files that cannot be opened: one line, no made-up place (QA) ---------------------

@pytest.mark.parametrize("command", ["prove", "submit"])
def test_a_missing_file_or_a_folder_is_one_nightjar_line(command, tmp_path, monkeypatch,
                                                         capsys):
    monkeypatch.setenv("NIGHTJAR_SERVER", "http://127.0.0.1:9")      # never reached
    monkeypatch.chdir(tmp_path)
    (tmp_path / "sched").mkdir()
    assert cli.main([command, "nothere.nj"]) == 1
    assert capsys.readouterr().err == "nightjar: cannot read 'nothere.nj': no such file\n"
    assert cli.main([command, "sched"]) == 1
    assert capsys.readouterr().err == \
        "nightjar: cannot read 'sched': it is a folder, not a file\n"
    assert cli.main([command, str(tmp_path / "sched"), "--json"]) == 1
    out, err = capsys.readouterr()
    rec = json.loads(out)
    assert rec["status"] == "InputError" and rec["reason"] == err.strip()
    assert ":1:1:" not in err and err.startswith("nightjar: cannot read ")


# -- a job without a conjecture is named as prove names it (QA) ------------------

def test_proof_heads_a_file_without_conjecture_as_prove_does(service, capsys, tmp_path):
    from service.cli_prove import obligation_text
    sub = service.submit({"problems": [
        {"main": "cnf3.nj", "files": {"cnf3.nj": "axiom a: p(c)\n"}},
        {"main": "t.nj", "files": {"t.nj": "axiom a: p(c)\nconjecture t1: p(c)\n"}}]})
    service.run()
    sat, thm = (j["id"] for j in sub["jobs"])
    assert obligation_text(None) == "satisfiability of the file"
    assert obligation_text("t1") == "conjecture t1"
    assert cli.main(["proof", sat]) == 0
    assert capsys.readouterr().out.splitlines()[0] == \
        f"# cnf3.nj: satisfiability of the file: Satisfiable (job {sat})"
    assert cli.main(["proof", thm]) == 0
    assert capsys.readouterr().out.splitlines()[0] == \
        f"# t.nj: conjecture t1: Theorem (job {thm})"
    assert cli.main(["proof", sub["batch"]]) == 0
    heads = [ln for ln in capsys.readouterr().out.splitlines() if ln.startswith("=== ")]
    assert heads == [f"=== cnf3.nj  satisfiability of the file  Satisfiable  (job {sat})",
                     f"=== t.nj  conjecture t1  Theorem  (job {thm})"]
    # prove says it in the same words (the real engine, a one-line file)
    (tmp_path / "cnf3.nj").write_text("axiom a: p(c)\n")
    assert cli.main(["prove", str(tmp_path / "cnf3.nj"), "--time-limit", "5"]) == 0
    assert capsys.readouterr().out.splitlines()[0].startswith(
        f"{tmp_path / 'cnf3.nj'}: satisfiability of the file: Satisfiable")
