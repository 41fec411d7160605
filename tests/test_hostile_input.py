"""Includes in submitted problems never read files on the server outside the
configured axiom library: ``../``, absolute paths and links are refused with
a clear message (file:line:col), nothing is stored, and the file's content is
never read (every open() during the request is recorded)."""

import builtins
import os
from pathlib import Path

import fakeredis
import pytest

from service.app import create_app
from service.config import Config
from service.store import Store
from worker.syntax import InputError, bundle_reader, load_problem

SECRET = "axiom leaked: secret_of_the_server(zz)\n"


@pytest.fixture
def layout(tmp_path):
    """tmp/srv/library/Axioms/good.ax (the library), tmp/srv/secret.ax and
    tmp/outside.nj (outside it), and links inside the library pointing out."""
    lib = tmp_path / "srv" / "library"
    (lib / "Axioms").mkdir(parents=True)
    (lib / "Axioms" / "good.ax").write_text("fof(lib_ax, axiom, p(a)).\n")
    (tmp_path / "srv" / "secret.ax").write_text("fof(leaked, axiom, secret(zz)).\n")
    (tmp_path / "outside.nj").write_text(SECRET)
    os.symlink(tmp_path / "srv" / "secret.ax", lib / "Axioms" / "link.ax")
    os.symlink(tmp_path / "srv", lib / "Axioms" / "dirlink")
    return tmp_path, lib


@pytest.fixture
def opened(monkeypatch):
    """Every path passed to open() while the test runs."""
    seen = []
    real = builtins.open

    def spy(file, *a, **kw):
        seen.append(str(file))
        return real(file, *a, **kw)
    monkeypatch.setattr(builtins, "open", spy)
    return seen


@pytest.fixture
def api(layout, monkeypatch):
    tmp, lib = layout
    # Even with an axiom library configured for the server's readers, the API
    # reads only the files sent with a problem.
    monkeypatch.setenv("NIGHTJAR_TPTP_ROOT", str(lib))
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    tok = Store(r).add_token("mallory")
    return app.test_client(), {"Authorization": f"Bearer {tok}"}, r


def native_include(path):
    return f'axiom a1: p(b)\ninclude "{path}"\nconjecture g: p(b)\n'


def tptp_include(path):
    return f"fof(a1, axiom, p(b)).\ninclude('{path}').\nfof(g, conjecture, p(b)).\n"


def hostile_paths(tmp, lib):
    return [
        "../outside.nj", "../../outside.nj", "../../../../../../etc/passwd",
        "/etc/passwd", str(tmp / "outside.nj"), str(tmp / "srv" / "secret.ax"),
        "sub/../../outside.nj", "..\\..\\outside.nj", "./../outside.nj",
        str(lib / "Axioms" / "link.ax"), str(lib / "Axioms" / "dirlink" / "secret.ax"),
        str(lib / ".." / "secret.ax"), "Axioms/link.ax", "Axioms/dirlink/secret.ax",
        "Axioms/../../secret.ax", "/proc/self/environ",
    ]


@pytest.mark.parametrize("language", ["native", "tptp"])
def test_api_refuses_includes_that_leave_the_bundle(layout, api, opened, language):
    tmp, lib = layout
    client, auth, r = api
    for path in hostile_paths(tmp, lib):
        text = native_include(path) if language == "native" else tptp_include(path)
        name = "main.nj" if language == "native" else "main.p"
        opened.clear()
        resp = client.post("/api/submissions", headers=auth,
                           json={"problem": {"main": name, "files": {name: text}}})
        assert resp.status_code == 400, (path, resp.get_data()[:300])
        err = resp.get_json()["error"]
        assert err["code"] == "input_error", (path, err)
        # where: the include line of the main file
        assert (err["file"], err["line"]) == (name, 2), (path, err)
        assert err["col"] >= 1
        assert "outside" in err["message"] or "not found" in err["message"], (path, err)
        body = resp.get_data(as_text=True)
        for content in ("secret_of_the_server", "secret(zz)", "leaked", "Traceback"):
            assert content not in body, (path, content)
        # nothing outside the bundle was even opened
        touched = [p for p in opened if str(tmp) in p or p.startswith(("/etc", "/proc"))]
        assert touched == [], (path, touched)
    assert list(r.scan_iter("nj:job:*")) == []


def test_api_refuses_hostile_names_in_axioms_with_conjectures(layout, api):
    tmp, lib = layout
    client, auth, r = api
    for axioms_main in ["/etc/passwd", "../outside.nj", "../../srv/secret.ax"]:
        resp = client.post("/api/submissions", headers=auth, json={
            "axioms": {"main": axioms_main, "files": {axioms_main: "axiom a: p"}},
            "conjectures": [{"name": "c.nj", "text": "conjecture g: p\n"}]})
        # the server builds the include itself; it must stay inside the bundle
        if resp.status_code == 202:
            continue          # the axiom text came with the request: nothing of ours read
        assert resp.status_code == 400, resp.get_data()[:300]
        assert "secret(zz)" not in resp.get_data(as_text=True)
    import zlib
    stored = [zlib.decompress(r.get(k)) for k in r.scan_iter("nj:text:*")]
    assert not any(b"leaked" in t or b"secret_of_the_server" in t for t in stored)


def test_library_reader_reads_inside_and_refuses_the_rest(layout, opened):
    tmp, lib = layout
    files = {"main.p": tptp_include("Axioms/good.ax")}
    # positive control: a file inside the library is read
    problem = load_problem("main.p", bundle_reader(files, library=str(lib)),
                           include_root=str(lib))
    assert "lib_ax" in [s.name for s in problem.statements]
    for path in hostile_paths(tmp, lib):
        opened.clear()
        files = {"main.p": tptp_include(path)}
        with pytest.raises(InputError) as ei:
            load_problem("main.p", bundle_reader(files, library=str(lib)),
                         include_root=str(lib))
        e = ei.value
        assert e.span is not None and (e.span.file, e.span.line) == ("main.p", 2), path
        shown = e.render()
        assert shown.startswith("main.p:2:"), shown
        assert "outside" in e.message or "not found" in e.message, (path, e.message)
        assert "leaked" not in shown and "secret(zz)" not in shown
        secret_opened = [p for p in opened if Path(p).resolve() in
                         (tmp / "outside.nj", tmp / "srv" / "secret.ax")]
        assert secret_opened == [], (path, secret_opened)


def test_symlink_refusal_says_why(layout):
    tmp, lib = layout
    files = {"main.p": tptp_include(str(lib / "Axioms" / "link.ax"))}
    with pytest.raises(InputError) as ei:
        load_problem("main.p", bundle_reader(files, library=str(lib)))
    assert "outside the folder" in ei.value.message
    assert str(lib) in ei.value.message
