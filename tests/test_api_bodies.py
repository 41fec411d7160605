"""Submission bodies the API must refuse with a message that says what is
wrong (QA): two forms in one body, two conjecture files of one name, JSON
that does not parse (with the parser's line and column).  Flask test client
over fakeredis; nothing may be stored by a refused body."""

from __future__ import annotations

import json

import fakeredis
import pytest

from service import cli
from service.app import create_app
from service.config import Config
from service.store import Store

AX = {"main": "ax.nj", "files": {"ax.nj": "axiom a: forall x. p(x)\n"}}
ONE = {"main": "t.nj", "files": {"t.nj": "axiom a: p(c)\nconjecture g: p(c)\n"}}


@pytest.fixture
def api():
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    tok = Store(r).add_token("alice")
    c = app.test_client()

    class A:
        pass
    a = A()
    a.r = r

    def post(body=None, data=None, content_type="application/json"):
        h = {"Authorization": f"Bearer {tok}"}
        if data is not None:
            return c.post("/api/submissions", data=data, headers=h, content_type=content_type)
        return c.post("/api/submissions", json=body, headers=h)
    a.post = post
    return a


def refused(a, resp) -> dict:
    assert resp.status_code == 400, resp.get_data(as_text=True)[:300]
    assert not list(a.r.scan_iter("nj:job:*")) and not list(a.r.scan_iter("nj:batch:*"))
    return resp.get_json()["error"]


@pytest.mark.parametrize("body,named", [
    ({"problem": ONE, "problems": []}, "'problem' and 'problems'"),
    ({"problem": ONE, "problems": [ONE]}, "'problem' and 'problems'"),
    ({"problems": [ONE], "axioms": AX, "conjectures": [{"name": "c.nj", "text": "conjecture g: p(c)\n"}]},
     "'problems' and 'axioms' with 'conjectures'"),
    ({"problem": ONE, "axioms": AX}, "'problem' and 'axioms' with 'conjectures'"),
])
def test_a_body_with_two_forms_is_refused(api, body, named):
    err = refused(api, api.post(body))
    assert err["code"] == "bad_request"
    assert err["message"].startswith("give exactly one of 'problem', 'problems', or "
                                     "'axioms' with 'conjectures'")
    assert err["message"].endswith("the body has " + named)


def test_each_form_alone_is_still_taken(api):
    assert api.post({"problem": ONE}).status_code == 202
    assert api.post({"problems": [ONE, ONE]}).status_code == 202   # one problem, run twice
    assert api.post({"axioms": AX, "conjectures": [
        {"name": "c.nj", "text": "conjecture g: p(c)\n"}]}).status_code == 202


def test_two_conjecture_files_of_one_name_are_refused(api):
    conj = [{"name": "c.nj", "text": "conjecture g: p(c)\n"},
            {"name": "d.nj", "text": "conjecture h: p(d)\n"},
            {"name": "c.nj", "text": "conjecture k: p(e)\n"}]
    err = refused(api, api.post({"axioms": AX, "conjectures": conj}))
    assert err["code"] == "bad_request"
    assert err["message"] == ("two conjecture files are named 'c.nj' (conjectures[0] and "
                              "conjectures[2]); each needs a name of its own")


@pytest.mark.parametrize("raw,line,col", [
    ('{"problem": ', 1, 13),
    ('{\n  "problem": {"main": "t.nj",\n  "files": {"t.nj": "axiom a: p"},}\n}', 3, 35),
    ('{"problem": 1,}', 1, 15),
])
def test_json_that_does_not_parse_is_told_with_its_place(api, raw, line, col):
    err = refused(api, api.post(data=raw))
    try:
        json.loads(raw)
    except json.JSONDecodeError as e:
        assert (e.lineno, e.colno) == (line, col)      # where the standard parser says
        msg = e.msg
    assert err["code"] == "bad_request"
    assert err["message"] == (f"the body could not be parsed as JSON: {msg} at line "
                              f"{line}, column {col}")
    assert (err["line"], err["col"]) == (line, col)
    assert "must be a JSON object" not in err["message"]


def test_other_bodies_that_are_no_json_object_say_what_they_are(api):
    assert refused(api, api.post(data=""))["message"] == \
        "the body is empty; send a JSON object"
    assert "not UTF-8" in refused(api, api.post(data=b'{"problem": "\xff"}'))["message"]
    msg = refused(api, api.post(data=json.dumps({"problem": ONE}),
                                content_type="text/plain"))["message"]
    assert msg == ("the body must be JSON, sent with Content-Type: application/json "
                   "(it came as text/plain)")
    for body in ("null", "[1, 2]", '"problem"'):
        assert refused(api, api.post(data=body))["message"] == "the body must be a JSON object"


def test_submit_says_which_files_would_share_a_name(tmp_path, monkeypatch, capsys):
    """The command line finds it before sending, naming the files as given."""
    (tmp_path / "x").mkdir()
    (tmp_path / "y").mkdir()
    (tmp_path / "w").mkdir()
    (tmp_path / "ax.nj").write_text("axiom a: forall x. p(x)\n")
    for d in ("x", "y"):
        (tmp_path / d / "c.nj").write_text("conjecture g: p(c)\n")
    monkeypatch.chdir(tmp_path / "w")
    monkeypatch.setenv("NIGHTJAR_SERVER", "http://127.0.0.1:9")   # never reached
    code = cli.main(["submit", "../x/c.nj", "../y/c.nj", "--axioms", "../ax.nj"])
    err = capsys.readouterr().err.strip()
    assert code == 1
    assert err == ("nightjar: cannot submit '../x/c.nj' and '../y/c.nj' together: both "
                   "would be sent as 'c.nj' (submit them from a folder that holds both)")
    code = cli.main(["submit", "../x/c.nj", "../x/c.nj", "--axioms", "../ax.nj"])
    assert code == 1
    assert capsys.readouterr().err.strip() == \
        "nightjar: cannot submit '../x/c.nj' twice in one submission"
