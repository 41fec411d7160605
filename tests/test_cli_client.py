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
