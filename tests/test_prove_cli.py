"""``nightjar prove``: human and JSON output, exit codes, warnings."""

import json

from service.cli import main

GROUP = """
axiom left_identity: forall x. e * x = x
axiom left_inverse: forall x. i(x) * x = e
axiom associativity: forall x y z. (x * y) * z = x * (y * z)
"""

ENDLESS = """
axiom irreflexive: forall x. not lt(x, x)
axiom transitive: forall x y z. lt(x, y) and lt(y, z) implies lt(x, z)
axiom unbounded: forall x. exists y. lt(x, y)
"""


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text)
    return str(p)


def test_theorem_human_output(tmp_path, capsys):
    f = write(tmp_path, "g.nj", GROUP + "conjecture right_identity: forall x. x * e = x\n")
    assert main(["prove", f, "--time-limit", "10"]) == 0
    out = capsys.readouterr().out
    assert "right_identity: Theorem" in out
    assert "given" in out and "generated" in out and "kept" in out
    assert "false" in out                   # the empty clause closes the proof
    assert " * " in out and "*(" not in out       # infix notation
    assert "certificate: proof replayed" in out


def test_json_lines_one_per_obligation(tmp_path, capsys):
    f = write(tmp_path, "two.nj", GROUP + "conjecture a: i(e) = e\n"
              "conjecture b: forall x y. x * y = y * x\n")
    code = main(["prove", f, "--json", "--time-limit", "5"])
    lines = [json.loads(l) for l in capsys.readouterr().out.splitlines() if l.strip()]
    assert [l["conjecture"] for l in lines] == ["a", "b"]
    for l in lines:
        for k in ("file", "conjecture", "status", "seconds", "strategy", "axioms_used",
                  "proof", "model", "certificate"):
            assert k in l
    assert lines[0]["status"] == "Theorem" and lines[0]["proof"]["steps"]
    assert lines[1]["status"] == "CounterSatisfiable"
    assert code == 0


def test_undecided_gives_exit_3(tmp_path, capsys):
    f = write(tmp_path, "endless.nj", ENDLESS)
    assert main(["prove", f, "--time-limit", "0.5", "--no-models"]) == 3
    out = capsys.readouterr().out
    assert "Timeout" in out and "why:" in out


def test_input_error_gives_exit_1_with_location(tmp_path, capsys):
    f = write(tmp_path, "bad.nj", "axiom a: p(a\n")
    assert main(["prove", f]) == 1
    err = capsys.readouterr().err
    assert "bad.nj:" in err and "Traceback" not in err


def test_contradictory_axioms_warning(tmp_path, capsys):
    f = write(tmp_path, "c.nj", "axiom a: p\naxiom b: not p\nconjecture g: q\n")
    assert main(["prove", f]) == 0
    cap = capsys.readouterr()
    assert "ContradictoryAxioms" in cap.out
    assert "WARNING" in cap.err and "WARNING" in cap.out


def test_strategy_and_equality_options(tmp_path, capsys):
    f = write(tmp_path, "g.nj", GROUP + "conjecture inv: forall x. i(i(x)) = x\n")
    assert main(["prove", f, "--json", "--strategy", "light-select", "--no-models"]) == 0
    line = json.loads(capsys.readouterr().out)
    assert line["strategy"] == "light-select" and line["status"] == "Theorem"
    assert main(["prove", f, "--json", "--equality", "axioms", "--no-models"]) in (0, 3)
    line = json.loads(capsys.readouterr().out)
    assert line["status"] in ("Theorem", "Timeout")
    if line["proof"]:
        assert any(s["rule"] == "equality_axiom" for s in line["proof"]["steps"])
    assert main(["prove", f, "--strategy", "nonsense"]) == 2


def test_a_verdict_settled_without_saturation_does_not_list_empty_figures(tmp_path, capsys,
                                                                         monkeypatch):
    """A countermodel found by the first model-search slice, no saturation
    probe before it: no 'given 0, generated 0, kept 0' line, which reads as if
    the search did nothing."""
    import worker.portfolio as P
    from service import cli
    monkeypatch.setattr(P, "PROBE_SECONDS", 0.0)
    f = tmp_path / "nc.nj"
    f.write_text("axiom left_identity: forall x. e * x = x\n"
                 "axiom left_inverse: forall x. i(x) * x = e\n"
                 "axiom associativity: forall x y z. (x * y) * z = x * (y * z)\n"
                 "conjecture commutes: forall x y. x * y = y * x\n")
    assert cli.main(["prove", str(f)]) == 0
    out = capsys.readouterr().out
    assert "CounterSatisfiable" in out and "given 0" not in out
    assert "strategy model-search (settled before any saturation step)" in out
