"""The Python module against the command line, sympy and a published series."""

import threading
from fractions import Fraction

import numpy
import pytest
import sympy

import cleave
from cleave import _native

from conftest import EXAMPLES, REPO, run_cli


def relative(path):
    return str(path.relative_to(REPO))


@pytest.mark.parametrize("example", EXAMPLES, ids=lambda p: p.stem)
def test_derive_json_equals_the_cli_on_every_example(cli, example, monkeypatch):
    monkeypatch.chdir(REPO)
    status, stdout, stderr = run_cli(cli, "derive", relative(example), "--json", "-")
    assert status == 0, stderr
    res = cleave.derive(relative(example))
    assert res.json() == stdout
    # The classes expose what the JSON holds.
    assert len(res.model_spaces) == len(res.data["model_spaces"])
    for space, data in zip(res.model_spaces, res.data["model_spaces"]):
        assert [b.multiplicity for b in space.branches] == [b["multiplicity"] for b in data["branches"]]
        assert [b.split_at for b in space.branches] == [b["split_at"] for b in data["branches"]]
        assert [[v.text for v in b.energy] for b in space.branches] == [b["energy"] for b in data["branches"]]
    assert res.quantities == [] or "quantities" in res.data


@pytest.mark.parametrize("example", EXAMPLES, ids=lambda p: p.stem)
def test_levels_json_equals_the_cli(cli, example, monkeypatch):
    monkeypatch.chdir(REPO)
    status, stdout, stderr = run_cli(cli, "levels", relative(example), "--json", "-")
    assert status == 0, stderr
    assert cleave.levels(relative(example)).json() == stdout


def test_set_json_and_report_equal_the_cli(cli, monkeypatch):
    monkeypatch.chdir(REPO)
    model = "examples/qubit_resonator.clv"
    status, stdout, _ = run_cli(cli, "derive", model, "--set", "w=5", "--set", "delta=-3/10+1", "--json", "-")
    assert status == 0
    res = cleave.derive(model, w=5, delta=Fraction(7, 10))
    assert res.json() == stdout
    assert res.fixed == {"w": "5", "delta": "7/10"}
    assert res.parameters == ["g"]
    status, stdout, _ = run_cli(cli, "derive", model, "--set", "w=5")
    assert cleave.derive(model, w=5, report=True).report() == stdout


def test_check_report_equals_the_cli(cli, monkeypatch):
    monkeypatch.chdir(REPO)
    model = "examples/spin_orbit_field.clv"
    status, stdout, _ = run_cli(cli, "check", model, "--at", "h=1/2")
    assert status == 0
    res = cleave.check(model, at={"h": "1/2"})
    assert res.report() == stdout
    assert res.passed
    assert len(res.branches) == 6
    assert all(b.expected_slope == 3 for b in res.branches)


def test_check_draws_the_level_diagram(cli, monkeypatch, tmp_path):
    monkeypatch.chdir(REPO)
    model = "examples/qubit_resonator.clv"
    run_cli(cli, "check", model, "--at", "delta=1/2", "--diagram", tmp_path / "d.svg")
    svg = cleave.check(model, at={"delta": 0.5}, diagram=True).diagram()
    assert svg == (tmp_path / "d.svg").read_text()
    assert "3.1 |+1/2, 0&gt;" in svg
    run_cli(cli, "check", model, "--diagram", tmp_path / "g.svg", "--against", "g=0..1/2")
    svg = cleave.check(model, diagram=True, against=("g", 0, 0.5)).diagram()
    assert svg == (tmp_path / "g.svg").read_text()
    assert "against g at lambda = 1" in svg
    with pytest.raises(cleave.CleaveError, match="no free parameter `x`"):
        cleave.check(model, diagram=True, against=("x", 0, 1))


# --- exact values and sympy ---------------------------------------------------------------------

#: Rational values for the parameters, away from the examples' degeneracies.
VALUES = [Fraction(3, 7), Fraction(5, 11), Fraction(13, 17), Fraction(2, 9), Fraction(19, 23)]


def every_value(res):
    for space in res.model_spaces:
        yield from space.unperturbed
        for matrix in space.effective_hamiltonian:
            for row in matrix:
                yield from row
        for branch in space.branches:
            yield from branch.energy


def constant_sympy(text):
    """A constant printed by cleave (rationals, sqrt, i) as sympy reads it."""
    from sympy.parsing.sympy_parser import convert_xor, parse_expr, standard_transformations

    return parse_expr(text, local_dict={"i": sympy.I, "sqrt": sympy.sqrt}, transformations=standard_transformations + (convert_xor,))


@pytest.mark.parametrize("example", EXAMPLES, ids=lambda p: p.stem)
def test_sympy_of_every_value_equals_the_exact_string(example):
    res = cleave.derive(example)
    names = res.parameters
    at = dict(zip(names, VALUES))
    symbols = res.symbols()
    seen = set()
    roots_seen = False
    for value in every_value(res):
        if value.text in seen:
            continue
        seen.add(value.text)
        expr = value.sympy()
        if "root_between(" in value.text or "root(" in value.text:
            # With an algebraic number cleave's parser gives no rational function to compare;
            # sympy's CRootOf, evaluated, must agree with the numeric evaluation instead.
            floats = {n: float(v) for n, v in at.items()}
            want = complex(expr.subs({symbols[n]: sympy.Rational(v.numerator, v.denominator) for n, v in at.items()}).evalf(30))
            assert abs(complex(value.evaluate(**floats)) - want) <= 1e-9 * (1 + abs(want)), value.text
            roots_seen = True
            continue
        # cleave's own parser reads the string back and puts the same exact values in.
        exact = _native.evaluate_exact(value.text, names, [str(at[n]) for n in names])
        substituted = expr.subs({symbols[n]: sympy.Rational(v.numerator, v.denominator) for n, v in at.items()})
        assert sympy.simplify(substituted - constant_sympy(exact)) == 0, (value.text, exact)
    assert roots_seen == bool(res.data.get("roots"))
    for name in names:
        positive = f"param {name} >" in example.read_text() or f", {name} >" in example.read_text()
        assert symbols[name].is_real
        if positive:
            assert symbols[name].is_positive


def test_roots_become_sympy_roots_of_their_polynomial():
    res = cleave.derive(REPO / "examples" / "dot_trimer.clv")
    roots = res.data.get("roots", [])
    assert roots, "the trimer's secular cubic has roots no square root writes"
    for root in roots:
        value = res.value(root["name"]).sympy()
        assert abs(float(value.evalf(30)) - root["approximation"]) < 1e-12


def test_symbols_carry_the_positive_assumption():
    res = cleave.derive(REPO / "examples" / "qubit_resonator.clv")
    w, delta, g = (res.symbols()[n] for n in ("w", "delta", "g"))
    assert w.is_positive and delta.is_positive
    assert g.is_real and g.is_positive is None
    # The ground-level shift, -g^2/(2w + delta) at second order.
    e2 = res.branches[0].energy[2].sympy()
    assert sympy.simplify(e2 + g**2 / (2 * w + delta)) == 0


def test_set_gives_the_symbolic_result_evaluated():
    model = REPO / "examples" / "qubit_resonator.clv"
    symbolic = cleave.derive(model)
    fixed = cleave.derive(model, w=5, delta="1/2")
    s = symbolic.symbols()
    values = {s["w"]: 5, s["delta"]: sympy.Rational(1, 2)}
    assert len(symbolic.branches) == len(fixed.branches)
    for a, b in zip(symbolic.branches, fixed.branches):
        for x, y in zip(a.energy, b.energy):
            assert sympy.simplify(x.sympy().subs(values) - y.sympy()) == 0


# --- numeric evaluation -------------------------------------------------------------------------


def test_evaluate_is_vectorized_and_equals_the_exact_series():
    res = cleave.derive(REPO / "examples" / "qubit_resonator.clv")
    branch = res.branches[0]
    lam = numpy.linspace(0, 0.2, 5)
    g = numpy.array([0.1, 0.2, 0.3, 0.4, 0.5])
    got = branch.evaluate(lam, w=1.0, delta=0.5, g=g)
    assert got.shape == (5,)
    s = res.symbols()
    lam_symbol = cleave.lambda_symbol()
    series = branch.sympy(lam_symbol)
    for k in range(5):
        want = float(series.subs({s["w"]: 1, s["delta"]: sympy.Rational(1, 2), s["g"]: sympy.Float(g[k]), lam_symbol: sympy.Float(lam[k])}))
        assert got[k] == pytest.approx(want, rel=1e-12, abs=1e-14)
    # Broadcasting: a grid of lambda against a column of g.
    assert branch.evaluate(lam, w=1, delta=0.5, g=g[:, None]).shape == (5, 5)
    # The series to a lower order.
    assert branch.evaluate(0.1, order=0, w=1, delta=0.5, g=1) == pytest.approx(-0.75)


def test_evaluate_names_missing_and_fixed_parameters():
    res = cleave.derive(REPO / "examples" / "qubit_resonator.clv", w=2)
    with pytest.raises(TypeError, match="missing values for g"):
        res.branches[0].evaluate(0.1, delta=1)
    with pytest.raises(TypeError, match="`w` was fixed to 2"):
        res.branches[0].evaluate(0.1, w=1, delta=1, g=1)


# --- errors -------------------------------------------------------------------------------------


def test_errors_carry_file_line_column_and_the_cli_message(cli, tmp_path):
    bad = "param g\nspace s = spin(1/2)\nH0 = s.z\nV = g * s.q\n"
    path = tmp_path / "bad.clv"
    path.write_text(bad)
    status, _, stderr = run_cli(cli, "derive", path)
    assert status == 2
    with pytest.raises(cleave.CleaveError) as info:
        cleave.derive(str(path))
    err = info.value
    assert (err.file, err.line, err.column, err.status) == (str(path), 4, 11, 2)
    assert str(err) + "\n" == stderr
    assert err.message in stderr
    # Text is named <model>.
    with pytest.raises(cleave.CleaveError) as info:
        cleave.derive(bad)
    assert info.value.file == "<model>" and info.value.line == 4
    assert str(info.value).startswith("<model>:4:11: ")


def test_bad_fixed_values_are_errors():
    model = REPO / "examples" / "qubit_resonator.clv"
    with pytest.raises(cleave.CleaveError, match=r"w=-1: `w` is declared `> 0`") as info:
        cleave.derive(model, w=-1)
    assert info.value.line is None and info.value.status == 2
    with pytest.raises(cleave.CleaveError, match="no parameter `x`"):
        cleave.derive(model, x=1)


def test_a_bad_order_is_located_like_the_cli(cli, tmp_path):
    path = tmp_path / "m.clv"
    path.write_text("space s = spin(1/2)\nH0 = s.z\nV = s.x\norder 0\n")
    status, _, stderr = run_cli(cli, "derive", path)
    with pytest.raises(cleave.CleaveError) as info:
        cleave.derive(path)
    assert str(info.value) + "\n" == stderr
    assert info.value.line == 4


# --- the quartic oscillator against Bender and Wu -----------------------------------------------


def bender_wu(n_max):
    """E_n of H = p^2/2 + x^2/2 + g x^4 by the recursion of Bender & Wu, Phys. Rev. 184, 1231
    (1969), Sec. II: psi = exp(-x^2/2) sum_n g^n sum_j A[n][j] x^(2j) with A[0] = [1],
    A[n][0] = 0, turned into -A[n][j+1] (j+1)(2j+1) + 2j A[n][j] + A[n-1][j-2]
    = sum_{k=1}^{n-1} E_k A[n-k][j] and E_n = -A[n][1]; solved from the top degree 2n down."""
    A = [[Fraction(1)]]
    E = [Fraction(1, 2)]
    for n in range(1, n_max + 1):
        top = 2 * n
        a = [Fraction(0)] * (top + 2)
        for j in range(top, 0, -1):
            prev = A[n - 1][j - 2] if 0 <= j - 2 < len(A[n - 1]) else 0
            mixed = sum(E[k] * (A[n - k][j] if j < len(A[n - k]) else 0) for k in range(1, n))
            a[j] = ((j + 1) * (2 * j + 1) * a[j + 1] - prev + mixed) / (2 * j)
        A.append(a[: top + 1])
        E.append(-a[1])
    return E


def test_bender_wu_recursion_reproduces_the_published_first_coefficients():
    # Bender & Wu, Phys. Rev. 184, 1231 (1969), Table I (values from memory): 1/2, 3/4, -21/8,
    # 333/16, -30885/128, 916731/256, -65518401/1024.
    assert bender_wu(6) == [Fraction(1, 2), Fraction(3, 4), Fraction(-21, 8), Fraction(333, 16), Fraction(-30885, 128), Fraction(916731, 256), Fraction(-65518401, 1024)]


def test_quartic_oscillator_to_order_20_matches_bender_wu():
    # x = (a + a^dagger)/sqrt(2); the ground level's series at order n reaches Fock state 4n/2
    # through the wave operator, so 85 states leave every coefficient to order 20 exact (cleave
    # would add a note otherwise).
    model = (
        "space q = oscillator(85)\n"
        "let x = (q.lower + q.raise) / sqrt(2)\n"
        "H0 = q.n + 1/2\n"
        "V = x^4\n"
        "focus 1/2\n"
    )
    res = cleave.derive(model, order=20)
    (space,) = res.model_spaces
    assert space.notes == []
    (branch,) = space.branches
    got = [Fraction(v.text) for v in branch.energy]
    assert got == bender_wu(20)


# --- the API around the values ------------------------------------------------------------------


def test_unknown_json_fields_are_exposed():
    res = cleave.derive(REPO / "examples" / "spin_orbit_field.clv")
    space = res.model_spaces[0]
    assert space.secular_equations == space.data["secular_equations"]
    assert res.quantities == []
    assert space.operator_form is None
    with pytest.raises(AttributeError):
        space.no_such_field
    assert res.branches[0].states == ["-1/3*sqrt(6)*|+1, -1/2> + 1/3*sqrt(3)*|0, +1/2>"]


def test_effective_hamiltonian_as_a_sympy_matrix():
    res = cleave.derive(REPO / "examples" / "spin_orbit_field.clv")
    space = res.model_spaces[0]
    m = space.effective_hamiltonian_sympy()
    assert m.shape == (2, 2)
    assert m.is_hermitian
    lam = cleave.lambda_symbol()
    # To the order derived, its eigenvalues are the branches.
    eigen = [e.series(lam, 0, res.order + 1).removeO() for e in m.eigenvals()]
    for branch in space.branches:
        assert any(sympy.simplify(e - branch.sympy(lam)) == 0 for e in eigen), branch


def test_latex_and_rust_outputs():
    res = cleave.derive(REPO / "examples" / "spin_orbit_field.clv", latex=True, rust=True)
    assert "\\begin{tabular}" in res.latex()
    assert res.latex(standalone=True).startswith("\\documentclass")
    assert "pub fn energy(" in res.rust()
    with pytest.raises(ValueError, match="report=True"):
        res.report()


def test_the_gil_is_released_while_deriving():
    # A derivation of some tenths of a second runs in a thread while the main thread keeps
    # looping; were the GIL held, the loop would stall for the whole derivation.
    import time

    model = "space q = oscillator(205)\nlet x = (q.lower + q.raise) / sqrt(2)\nH0 = q.n + 1/2\nV = x^4\nfocus 1/2\n"
    span = []

    def work():
        start = time.perf_counter()
        res = cleave.derive(model, order=50)
        span.append((start, time.perf_counter(), res))

    thread = threading.Thread(target=work)
    last = time.perf_counter()
    thread.start()
    gaps = []
    while thread.is_alive():
        now = time.perf_counter()
        gaps.append((last, now))
        last = now
    thread.join()
    (start, end, res) = span[0]
    assert len(res.branches[0].energy) == 51
    duration = end - start
    assert duration > 0.02, "the derivation is too short to tell"
    # The middle half of the derivation is spent in the library; with the GIL held there, the
    # loop could not run at all during it.
    middle = [b for _, b in gaps if start + duration / 4 < b < end - duration / 4]
    assert len(middle) > 10, (len(middle), duration)


def test_the_module_docstring_example_runs():
    import doctest

    assert doctest.testmod(cleave).failed == 0


def test_a_missing_model_file_is_an_os_error():
    with pytest.raises(FileNotFoundError):
        cleave.derive("no/such/model.clv")
