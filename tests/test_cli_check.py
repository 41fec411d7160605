"""``nightjar check`` and ``nightjar clausify``: output, JSON, exit codes."""

import json
from pathlib import Path

import pytest

from service.cli import main as cli_main

DATA = Path(__file__).parent / "data" / "syntax"
ROBOTS = str(DATA / "robots" / "main.nj")
HALL = str(DATA / "tptp" / "hall.p")
LIB = str(DATA / "tptp" / "lib")


def run(argv, capsys):
    code = cli_main(argv)
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


def test_check_human_output_lists_statements_symbols_clauses(capsys):
    code, out, err = run(["check", ROBOTS], capsys)
    assert code == 0 and err == ""
    lines = out.splitlines()
    assert lines[0] == f"{ROBOTS}: fine (native, 5 statements, 2 files read)"
    # statements: role, name, where; aligned columns
    st = [l for l in lines if l.startswith("    ") and ".nj:" in l]
    assert [l.split()[:2] for l in st] == [["axiom", "fleet"], ["hypothesis", "h1"],
                                          ["axiom", "a1"], ["axiom", "a2"],
                                          ["conjecture", "c1"]]
    assert len({l.index(l.split()[1]) for l in st}) == 1
    assert any(l.split() == ["assigned", "predicate", "arity", "2"] for l in lines)
    assert any(l.split() == ["*", "function", "arity", "2"] for l in lines)
    ob = next(l for l in lines if "conjecture c1" in l and "clauses" in l)
    assert "sk1/1" in ob      # the dock chosen for each robot in a1


def test_check_headline_counts_in_the_singular(tmp_path, capsys):
    f = tmp_path / "one.nj"
    f.write_text("axiom only: p(a)\n")
    code, out, _ = run(["check", str(f)], capsys)
    assert code == 0
    assert out.splitlines()[0] == f"{f}: fine (native, 1 statement, 1 file read)"


def test_check_json_is_stable(capsys):
    code, out, err = run(["check", "--json", ROBOTS, HALL, "--include-root", LIB], capsys)
    assert code == 0
    d = json.loads(out)
    assert d["version"] == 1 and d["ok"] is True and len(d["files"]) == 2
    r = d["files"][0]
    assert set(r) == {"file", "ok", "language", "files_read", "statements", "symbols",
                      "obligations", "warnings", "error"}
    assert r["warnings"] == []
    assert r["statements"][0] == {"name": "fleet", "role": "axiom",
                                  "language": "native",
                                  "file": str(DATA / "robots" / "common.nj"),
                                  "line": 2, "col": 1}
    assert {"name": "dock", "kind": "predicate", "arity": 1} in r["symbols"]
    (ob,) = r["obligations"]
    assert ob["conjecture"] == "c1" and ob["clauses"] > 0
    assert [s["statement"] for s in ob["skolems"]].count("a1") == 1
    t = d["files"][1]
    assert t["language"] == "tptp" and [s["name"] for s in t["statements"]][-1] == "goal"


def test_check_reports_each_file_and_exits_1_on_any_error(tmp_path, capsys):
    bad = tmp_path / "bad.nj"
    bad.write_text("axiom a: p(\n")
    code, out, err = run(["check", ROBOTS, str(bad)], capsys)
    assert code == 1
    assert out.startswith(f"{ROBOTS}: fine")
    assert f"{bad}:1:" in err and "^" in err
    code, out, err = run(["check", "--json", str(bad)], capsys)
    d = json.loads(out)
    assert code == 1 and d["ok"] is False
    e = d["files"][0]["error"]
    assert (e["file"], e["line"]) == (str(bad), 1) and "error:" in e["text"]


def test_check_language_flag_forces(tmp_path, capsys):
    f = tmp_path / "x.nj"
    f.write_text("fof(a, axiom, p).\nfof(c, conjecture, p).\n")
    assert run(["check", str(f)], capsys)[0] == 0          # told apart from the text
    code, out, err = run(["check", "--language", "native", str(f)], capsys)
    assert code == 1 and "x.nj:1:" in err


def test_check_without_library_names_the_missing_include(capsys):
    code, out, err = run(["check", HALL], capsys)
    assert code == 1 and "hall.p:2:9: error: include file 'Axioms/lockers.ax' not found" in err


def test_clausify_human_and_json(capsys):
    code, out, err = run(["clausify", ROBOTS], capsys)
    assert code == 0
    lines = out.splitlines()
    assert lines[0].startswith(f"{ROBOTS}: conjecture c1: ")
    assert any("from c1 (negated conjecture)" in l for l in lines)
    assert any(l.split()[:1] == ["sk1"] and "from a1" in l for l in lines)
    code, out, err = run(["clausify", "--json", ROBOTS], capsys)
    d = json.loads(out)
    (ob,) = d["obligations"]
    assert ob["conjecture"] == "c1"
    c = ob["clauses"][-1]
    assert set(c) == {"id", "clause", "text", "source", "role", "conj", "skolems",
                      "definitions"}
    assert c["source"] == "c1" and c["conj"] is True
    assert c["clause"] == [[False, ["dock", 0]]] and c["text"] == "not dock(X0)"
    assert "sk1" in ob["skolems"] and ob["skolems"]["sk1"]["statement"] == "a1"


def test_clausify_unknown_conjecture_is_a_usage_error(capsys):
    code, out, err = run(["clausify", ROBOTS, "--conjecture", "nope"], capsys)
    assert code == 2 and "no conjecture named 'nope'" in err and "c1" in err
    code, out, err = run(["clausify", ROBOTS, "--conjecture", "c1"], capsys)
    assert code == 0


def test_clausify_input_error_exit_1(tmp_path, capsys):
    f = tmp_path / "e.nj"
    f.write_text("")
    code, out, err = run(["clausify", str(f)], capsys)
    assert code == 1 and "empty" in err


def test_usage_errors_exit_2(capsys):
    with pytest.raises(SystemExit) as e:
        cli_main(["check"])
    assert e.value.code == 2


def test_a_clausifier_failure_is_one_line_not_a_traceback(monkeypatch, capsys):
    import worker.clausify

    def broken(problem, conjecture):
        raise ZeroDivisionError("boom")
    monkeypatch.setattr(worker.clausify, "clausify", broken)
    code, out, err = run(["check", ROBOTS], capsys)
    assert code == 1 and "internal error while clausifying conjecture c1" in err
    assert "ZeroDivisionError: boom" in err
    code, out, err = run(["clausify", ROBOTS], capsys)
    assert code == 1 and "internal error" in err


def test_check_accepts_the_pelletier_set_in_both_languages(capsys):
    """corpus/checks/pelletier (TPTP FOF, written from memory of Pelletier
    1986 by the corpus maintainers) and its native translation."""
    root = Path(__file__).parent.parent / "corpus" / "checks"
    tptp = sorted(str(p) for p in (root / "pelletier").glob("*.p"))
    native = sorted(str(p) for p in (root / "pelletier-native").glob("*.nj"))
    assert len(tptp) == len(native) == 67, (len(tptp), len(native))   # problems 1-67
    code, out, err = run(["check", "--json", *tptp, *native], capsys)
    d = json.loads(out)
    bad = [f["error"]["text"] for f in d["files"] if not f["ok"]]
    assert code == 0 and bad == []
    by_name = {Path(f["file"]).stem + Path(f["file"]).suffix: f for f in d["files"]}
    for p in tptp:
        stem = Path(p).stem
        if stem + ".nj" in by_name:
            a, b = by_name[stem + ".p"], by_name[stem + ".nj"]
            assert [s["name"] for s in a["statements"]] == [s["name"] for s in b["statements"]]
            assert [o["clauses"] for o in a["obligations"]] == \
                [o["clauses"] for o in b["obligations"]]


# -- files that cannot be opened: one nightjar: line, no made-up place, as prove -------

@pytest.mark.parametrize("command", ["check", "clausify", "prove"])
def test_a_missing_file_or_a_folder_is_one_nightjar_line(command, tmp_path, monkeypatch,
                                                         capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "sched").mkdir()
    code, out, err = run([command, "nothere.nj"], capsys)
    assert code == 1 and err == "nightjar: cannot read 'nothere.nj': no such file\n"
    code, out, err = run([command, "sched"], capsys)
    assert code == 1 and err == "nightjar: cannot read 'sched': it is a folder, not a file\n"


def test_check_json_of_a_missing_file_or_a_folder_has_no_place(tmp_path, monkeypatch,
                                                               capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "sched").mkdir()
    good = tmp_path / "ok.nj"
    good.write_text("axiom only: p(a)\n")
    code, out, err = run(["check", "--json", "nothere.nj", "sched", "ok.nj"], capsys)
    assert code == 1 and err == ""
    d = json.loads(out)
    assert d["ok"] is False and [f["ok"] for f in d["files"]] == [False, False, True]
    missing, folder = d["files"][0]["error"], d["files"][1]["error"]
    assert (missing["line"], missing["col"], folder["line"], folder["col"]) == (None,) * 4
    assert missing["text"] == "nightjar: cannot read 'nothere.nj': no such file"
    assert folder["text"] == "nightjar: cannot read 'sched': it is a folder, not a file"
    # the other files are still checked, and human output says the same lines
    code, out, err = run(["check", "nothere.nj", "sched", "ok.nj"], capsys)
    assert code == 1 and out.startswith("ok.nj: fine")
    assert err.splitlines() == [missing["text"], folder["text"]]
