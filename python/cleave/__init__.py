"""cleave from Python: exact perturbation series for small model Hamiltonians.

Three functions run the same library as the command line, with the GIL released while they
compute:

- :func:`derive` (``cleave derive``): model spaces, effective Hamiltonians, energy branches;
- :func:`levels` (``cleave levels``): the exact unperturbed spectrum;
- :func:`check` (``cleave check``): the series against exact diagonalization, and a level diagram.

Each takes a model as text or as a path to a ``.clv`` file, and fixes parameters to exact values
given as keywords (``derive("m.clv", wq=5, alpha="-3/10")`` is ``cleave derive m.clv --set wq=5
--set alpha=-3/10``). Every exact value is a :class:`Value`: its exact string, a sympy expression
(:meth:`Value.sympy`, when sympy is installed) and a numeric evaluation vectorized over numpy
arrays (:meth:`Value.evaluate`). A bad model raises :class:`CleaveError` with its file, line and
column.

>>> import cleave
>>> r = cleave.derive("param D > 0, B\\nspace s = spin(1)\\nH0 = D * s.z^2\\nV = B * s.x\\n"
...                   "focus D\\n", order=2)
>>> [b.energy[2].text for b in r.branches]
['0', 'B^2/D']
"""

from __future__ import annotations

import json as _json
import os
import re
from fractions import Fraction
from typing import Any, Dict, List, Optional, Sequence

from . import _native
from ._errors import CleaveError

__all__ = [
    "derive",
    "levels",
    "check",
    "CleaveError",
    "Derivation",
    "ModelSpace",
    "Branch",
    "Quantity",
    "Value",
    "Levels",
    "lambda_symbol",
    "Check",
]


# --- model input --------------------------------------------------------------------------------


def _read_model(model) -> tuple:
    """The model text and its display name: a path (``os.PathLike``, or a one-line ``str`` that
    ends in ``.clv`` or names a file) is read, text is taken as it is (named ``<model>``)."""
    if isinstance(model, os.PathLike):
        path = os.fspath(model)
        with open(path, encoding="utf-8") as f:
            return f.read(), path
    if not isinstance(model, str):
        raise TypeError(f"a model is text or a path, not {type(model).__name__}")
    if "\n" not in model and (model.strip().endswith(".clv") or os.path.isfile(model)):
        with open(model, encoding="utf-8") as f:
            return f.read(), model
    return model, "<model>"


def _exact_text(name: str, value) -> str:
    """An exact value as the model language writes it: ints, ``Fraction``s, strings (``"-3/10"``)
    and sympy rationals are exact; a float is taken as the decimal it prints as (``0.1`` is 1/10)."""
    if isinstance(value, bool):
        raise TypeError(f"{name}: a value is a number, not a bool")
    if isinstance(value, int):
        return str(value)
    if isinstance(value, Fraction):
        return f"{value.numerator}/{value.denominator}"
    if isinstance(value, float):
        if value != value or value in (float("inf"), float("-inf")):
            raise ValueError(f"{name}: {value} is not a number cleave can fix")
        return repr(value)
    if isinstance(value, str):
        return value
    # sympy.Rational and numpy integers, without importing either.
    numerator = getattr(value, "p", None)
    denominator = getattr(value, "q", None)
    if isinstance(numerator, int) and isinstance(denominator, int):
        return f"{numerator}/{denominator}"
    try:
        return str(int(value)) if int(value) == value else repr(float(value))
    except (TypeError, ValueError):
        raise TypeError(f"{name}: cannot use {value!r} as an exact value") from None


def _pairs(values: Dict[str, Any]) -> List[tuple]:
    return [(name, _exact_text(name, value)) for name, value in values.items()]


# --- exact values -------------------------------------------------------------------------------

_TOKEN = re.compile(r"\s*(?:(\d+(?:\.\d+)?(?:[eE][-+]?\d+)?)|([A-Za-z_][A-Za-z_0-9]*)|(\^)|(\S))")


class _Symbols:
    """The symbols a derivation's values mention: its free parameters (with their ``> 0``
    assumptions) and its algebraic numbers ``root_between(P, lo, hi)``."""

    def __init__(self, parameters: Sequence[tuple], roots: Sequence[dict]):
        self.parameters = [name for name, _ in parameters]
        self.positive = {name: positive for name, positive in parameters}
        self.roots = list(roots)
        self._sympy = None

    def sympy(self) -> Dict[str, Any]:
        """Name to sympy object: parameters as real symbols (positive where declared ``> 0``),
        ``i`` as the imaginary unit, ``sqrt``, ``root_between`` (and the older ``root``)."""
        if self._sympy is None:
            import sympy

            names: Dict[str, Any] = {
                name: sympy.Symbol(name, positive=True) if self.positive[name] else sympy.Symbol(name, real=True)
                for name in self.parameters
            }
            x = sympy.Symbol("x")
            names["i"] = sympy.I
            names["sqrt"] = sympy.sqrt
            # root(P, k): the k-th real root of P in ascending order (sympy counts real roots
            # first, in ascending order, from 0).
            names["root"] = lambda p, k: sympy.CRootOf(sympy.Poly(p, x), int(k) - 1)

            # root_between(P, lo, hi): the one real root of P strictly between lo and hi.
            def root_between(p, lo, hi):
                for r in sympy.Poly(p, x).real_roots():
                    if sympy.Rational(lo) < r < sympy.Rational(hi):
                        return r
                raise ValueError(f"no real root of {p} between {lo} and {hi}")

            names["root_between"] = root_between
            names["x"] = x
            self._sympy = names
        return self._sympy

    def to_sympy(self, text: str):
        from sympy.parsing.sympy_parser import parse_expr, standard_transformations, convert_xor

        return parse_expr(text, local_dict=dict(self.sympy()), transformations=standard_transformations + (convert_xor,))

    def compile(self, text: str):
        """A Python function of the parameter values (numpy arrays welcome) computing ``text``
        in floating point."""
        for k, root in enumerate(self.roots):
            text = text.replace(root["name"], f"_root{k}")
        pieces = []
        for number, name, caret, other in _TOKEN.findall(text):
            if number:
                pieces.append(repr(float(number)))
            elif name:
                if name == "i":
                    pieces.append("1j")
                elif name == "sqrt":
                    pieces.append("_sqrt")
                elif name.startswith("_root"):
                    pieces.append(name)
                elif name in self.positive:
                    pieces.append(f"p_{name}")
                else:
                    raise ValueError(f"cannot evaluate {text!r}: unknown name {name!r}")
            elif caret:
                pieces.append("**")
            else:
                pieces.append(other)
        code = compile("".join(pieces) or "0", "<cleave value>", "eval")
        constants = {f"_root{k}": float(r["approximation"]) for k, r in enumerate(self.roots)}

        def function(values: Dict[str, Any]):
            import numpy

            scope = {"_sqrt": numpy.sqrt, "__builtins__": {}}
            scope.update(constants)
            scope.update({f"p_{n}": numpy.asarray(v, dtype=float) for n, v in values.items()})
            return eval(code, scope)

        return function

    def values(self, params: Dict[str, Any], fixed: Dict[str, str]) -> Dict[str, Any]:
        """Checks that ``params`` gives every free parameter and nothing else."""
        unknown = [n for n in params if n not in self.positive]
        if unknown:
            name = unknown[0]
            if name in fixed:
                raise TypeError(f"`{name}` was fixed to {fixed[name]} before deriving; it takes no value now")
            raise TypeError(f"the model has no parameter `{name}` (it has: {', '.join(self.parameters) or 'none'})")
        missing = [n for n in self.parameters if n not in params]
        if missing:
            raise TypeError(f"missing values for {', '.join(missing)}")
        return params


def _real_if_real(value):
    import numpy

    value = numpy.asarray(value)
    if numpy.iscomplexobj(value) and not numpy.any(value.imag):
        value = value.real
    return value[()] if value.ndim == 0 else value


class Value:
    """One exact value of a result: a rational function of the free parameters over the
    rationals, square roots and ``i``, written as cleave writes it (``-21/8*g^2``,
    ``sqrt(2)*t/3``, ``root_between(x^3 - 3*x + 1, 0, 1)``)."""

    __slots__ = ("text", "_symbols", "_fixed", "_function")

    def __init__(self, text: str, symbols: _Symbols, fixed: Dict[str, str]):
        #: The exact string, as in the JSON and the report.
        self.text = text
        self._symbols = symbols
        self._fixed = fixed
        self._function = None

    def __str__(self) -> str:
        return self.text

    def __repr__(self) -> str:
        return f"Value({self.text!r})"

    def __eq__(self, other) -> bool:
        if isinstance(other, Value):
            return self.text == other.text
        if isinstance(other, str):
            return self.text == other
        return NotImplemented

    def __hash__(self) -> int:
        return hash(self.text)

    def sympy(self):
        """The value as a sympy expression; parameters are real sympy symbols, positive where
        the model declares them ``> 0`` (needs sympy)."""
        return self._symbols.to_sympy(self.text)

    def evaluate(self, **params):
        """The value in floating point at the given parameter values (numbers or numpy arrays,
        broadcast together); a complex result with zero imaginary part comes back real."""
        values = self._symbols.values(params, self._fixed)
        if self._function is None:
            self._function = self._symbols.compile(self.text)
        return _real_if_real(self._function(values))

    def __float__(self) -> float:
        return float(self.evaluate())


class _Record:
    """A JSON object; fields this class does not name are still there as attributes."""

    def __init__(self, data: dict, symbols: _Symbols, fixed: Dict[str, str]):
        self.data = data
        self._symbols = symbols
        self._fixed = fixed

    def _value(self, text: str) -> Value:
        return Value(text, self._symbols, self._fixed)

    def __getattr__(self, name: str):
        data = self.__dict__.get("data", {})
        if name in data:
            return data[name]
        raise AttributeError(f"{type(self).__name__} has no field {name!r}")


def lambda_symbol():
    """The sympy symbol ``lambda`` (real) in which :meth:`Branch.sympy` and the others write
    their series."""
    import sympy

    return sympy.Symbol("lambda", real=True)


def _series_sympy(values: Sequence[Value], lam):
    return sum((v.sympy() * lam**k for k, v in enumerate(values)), 0)


def _series_evaluate(values: Sequence[Value], lam, params):
    import numpy

    lam = numpy.asarray(lam, dtype=float)
    res = 0.0
    for value in reversed(values):
        res = res * lam + value.evaluate(**params)
    return _real_if_real(res)


class Branch(_Record):
    """An energy branch ``E(lambda) = sum_k energy[k] lambda^k`` of a model space."""

    @property
    def energy(self) -> List[Value]:
        """The coefficients of ``lambda^k``, ``k = 0..N`` (shorter where the branch stops)."""
        return [self._value(t) for t in self.data["energy"]]

    @property
    def multiplicity(self) -> int:
        """How many states still share the branch at the last order."""
        return self.data["multiplicity"]

    @property
    def split_at(self) -> Optional[int]:
        """The order at which the branch first differs from its siblings (``None`` where it never
        does or its model space has one state)."""
        return self.data["split_at"]

    @property
    def states(self) -> List[str]:
        """The unperturbed state(s) the branch comes from: the JSON's ``states`` where it has
        them, else the zeroth order of the branch's state."""
        if "states" in self.data:
            return list(self.data["states"])
        state = self.data.get("state")
        if state and state.get("coefficients"):
            return [state["coefficients"][0]]
        return []

    @property
    def state(self) -> Optional[dict]:
        """The state series (intermediate normalization) where the branch is a single state."""
        return self.data.get("state")

    def sympy(self, lam=None):
        """The series as a sympy polynomial in ``lam`` (default: the symbol ``lambda``)."""
        import sympy

        return _series_sympy(self.energy, lambda_symbol() if lam is None else lam)

    def evaluate(self, lam, order: Optional[int] = None, **params):
        """The series (to ``order``, default all) at ``lam`` and the parameter values, vectorized
        over numpy arrays: ``branch.evaluate(numpy.linspace(0, 0.2), g=0.1)``."""
        coefficients = self.energy if order is None else self.energy[: order + 1]
        return _series_evaluate(coefficients, lam, params)

    def __repr__(self) -> str:
        return f"Branch(states={self.states}, multiplicity={self.multiplicity}, split_at={self.split_at})"


class Quantity(_Record):
    """A named combination of branch energies (a dispersive shift, ``ZZ``), where the model
    names one."""

    @property
    def name(self) -> str:
        return self.data["name"]

    @property
    def series(self) -> List[Value]:
        """The coefficients of ``lambda^k``."""
        return [self._value(t) for t in self.data["series"]]

    def sympy(self, lam=None):
        """The series as a sympy polynomial in ``lam`` (default: the symbol ``lambda``)."""
        import sympy

        return _series_sympy(self.series, lambda_symbol() if lam is None else lam)

    def evaluate(self, lam, order: Optional[int] = None, **params):
        """The series at ``lam`` and the parameter values, vectorized over numpy arrays."""
        coefficients = self.series if order is None else self.series[: order + 1]
        return _series_evaluate(coefficients, lam, params)

    def __repr__(self) -> str:
        return f"Quantity({self.name!r})"


class ModelSpace(_Record):
    """A model space: its unperturbed energies and basis, its effective Hamiltonian order by order
    and its branches."""

    @property
    def unperturbed(self) -> List[Value]:
        return [self._value(t) for t in self.data["unperturbed"]]

    @property
    def basis(self) -> List[str]:
        return list(self.data["basis"])

    @property
    def effective_hamiltonian(self) -> List[List[List[Value]]]:
        """``[M0, M1, ..., MN]``, ``Mk`` the coefficient of ``lambda^k`` as rows of values."""
        return [[[self._value(t) for t in row] for row in m] for m in self.data["effective_hamiltonian"]]

    def effective_hamiltonian_sympy(self, lam=None):
        """The effective Hamiltonian ``sum_k Mk lambda^k`` as a sympy matrix."""
        import sympy

        lam = lambda_symbol() if lam is None else lam
        res = None
        for k, m in enumerate(self.data["effective_hamiltonian"]):
            term = sympy.Matrix([[self._symbols.to_sympy(t) for t in row] for row in m]) * lam**k
            res = term if res is None else res + term
        return res

    @property
    def branches(self) -> List[Branch]:
        return [Branch(b, self._symbols, self._fixed) for b in self.data["branches"]]

    @property
    def operator_form(self):
        """The effective Hamiltonian as an operator expression, where the JSON has one."""
        return self.data.get("operator_form")

    @property
    def notes(self) -> List[str]:
        return list(self.data.get("notes", []))

    def __repr__(self) -> str:
        return f"ModelSpace(basis={self.basis}, branches={len(self.data['branches'])})"


class Derivation(_Record):
    """The result of :func:`derive`: the same content as ``cleave derive --json``."""

    def __init__(self, text: str, parameters, others: Dict[str, str]):
        data = _json.loads(text)
        fixed = dict(data.get("fixed", {}))
        super().__init__(data, _Symbols(parameters, data.get("roots", [])), fixed)
        self._text = text
        self._others = others

    def json(self) -> str:
        """Exactly the JSON text that ``cleave derive --json`` writes for the same input."""
        return self._text

    @property
    def order(self) -> int:
        return self.data["order"]

    @property
    def parameters(self) -> List[str]:
        """The free parameters, in declaration order."""
        return list(self.data["parameters"])

    @property
    def fixed(self) -> Dict[str, str]:
        """The parameters fixed before deriving, with their exact values."""
        return dict(self._fixed)

    @property
    def model_spaces(self) -> List[ModelSpace]:
        return [ModelSpace(s, self._symbols, self._fixed) for s in self.data["model_spaces"]]

    @property
    def branches(self) -> List[Branch]:
        """Every branch, model spaces in order, then their branches (the order of the emitted
        Rust's ``energy(index, ...)``)."""
        return [b for s in self.model_spaces for b in s.branches]

    @property
    def quantities(self) -> List[Quantity]:
        """The named quantities, where the model defines some."""
        return [Quantity(q, self._symbols, self._fixed) for q in self.data.get("quantities", [])]

    def quantity(self, name: str) -> Quantity:
        for q in self.quantities:
            if q.name == name:
                return q
        raise KeyError(name)

    def symbols(self) -> Dict[str, Any]:
        """The free parameters as sympy symbols (with their ``> 0`` assumptions), by name."""
        names = self._symbols.sympy()
        return {n: names[n] for n in self.parameters}

    def value(self, text: str) -> Value:
        """An exact value written in the model's syntax, with this derivation's symbols."""
        return self._value(text)

    def report(self) -> str:
        """The readable report of ``cleave derive`` (ask with ``derive(..., report=True)``)."""
        return self._output("report")

    def latex(self, standalone: bool = False) -> str:
        """The LaTeX of ``cleave derive --latex`` (ask with ``derive(..., latex=True)``)."""
        return self._output("latex_standalone" if standalone else "latex")

    def rust(self) -> str:
        """The Rust module of ``cleave derive --rust`` (ask with ``derive(..., rust=True)``)."""
        return self._output("rust")

    def _output(self, kind: str) -> str:
        if kind not in self._others:
            flag = {"latex_standalone": "latex", "report": "report", "latex": "latex", "rust": "rust"}[kind]
            raise ValueError(f"derive(..., {flag}=True) asks for this output")
        return self._others[kind]

    def __repr__(self) -> str:
        return f"Derivation(order={self.order}, parameters={self.parameters}, model_spaces={len(self.data['model_spaces'])})"


def derive(
    model,
    order: Optional[int] = None,
    *,
    states: Optional[int] = None,
    report: bool = False,
    latex: bool = False,
    rust: bool = False,
    fixed: Optional[Dict[str, Any]] = None,
    **values,
) -> Derivation:
    """Derives the perturbation series of ``model`` (text, or a path to a ``.clv`` file).

    Args:
        order: the order in lambda (default: the model's ``order``, else 2).
        states: how many orders of state corrections (default: the smaller of the order and 4).
        report, latex, rust: also produce these outputs (:meth:`Derivation.report`, ...).
        fixed: parameters to fix, by name, for names that clash with the keywords above.
        **values: parameters fixed to exact values before deriving, e.g. ``wq=5,
            alpha="-3/10"`` (ints, ``Fraction``, strings and sympy rationals are exact; a float
            is its printed decimal).

    Raises:
        CleaveError: bad input (with file, line and column when it is in the model) or a
            computation that cannot be done.
    """
    text, name = _read_model(model)
    all_values = dict(fixed or {})
    all_values.update(values)
    formats = []
    if report:
        formats.append("report")
    if latex:
        formats += ["latex", "latex_standalone"]
    if rust:
        formats.append("rust")
    json_text, parameters, others = _native.derive(text, name, order, states, _pairs(all_values), formats)
    return Derivation(json_text, parameters, dict(zip(formats, others)))


class Level(_Record):
    """An exact eigenvalue of H0 with the states that span its eigenspace."""

    @property
    def energy(self) -> Value:
        return self._value(self.data["energy"])

    @property
    def degeneracy(self) -> int:
        return self.data["degeneracy"]

    @property
    def states(self) -> List[str]:
        return list(self.data["states"])

    def __repr__(self) -> str:
        return f"Level({self.data['energy']!r}, degeneracy={self.degeneracy})"


class Levels(_Record):
    """The result of :func:`levels`: the same content as ``cleave levels --json``."""

    def __init__(self, text: str, report: str, parameters):
        data = _json.loads(text)
        super().__init__(data, _Symbols(parameters, []), dict(data.get("fixed", {})))
        self._text = text
        self._report = report

    def json(self) -> str:
        """Exactly the JSON text of ``cleave levels --json``."""
        return self._text

    def report(self) -> str:
        """The readable text of ``cleave levels``."""
        return self._report

    @property
    def parameters(self) -> List[str]:
        return list(self.data["parameters"])

    @property
    def dimension(self) -> int:
        return self.data["dimension"]

    @property
    def levels(self) -> List[Level]:
        return [Level(l, self._symbols, self._fixed) for l in self.data["levels"]]

    def __repr__(self) -> str:
        return f"Levels(dimension={self.dimension}, levels={len(self.data['levels'])})"


def levels(model, *, fixed: Optional[Dict[str, Any]] = None, **values) -> Levels:
    """The exact unperturbed spectrum of ``model`` (``cleave levels``), with parameters fixed as
    in :func:`derive`."""
    text, name = _read_model(model)
    all_values = dict(fixed or {})
    all_values.update(values)
    json_text, report, parameters = _native.levels(text, name, _pairs(all_values))
    return Levels(json_text, report, parameters)


class BranchCheck:
    """The comparison of one branch with exact diagonalization."""

    def __init__(self, data: dict):
        self.data = data
        #: Model space and branch, 0-based.
        self.space: int = data["space"]
        self.branch: int = data["branch"]
        #: ``(lambda, |E_N(lambda) - E_exact(lambda)|)`` at the sampled points.
        self.samples = [tuple(s) for s in data["samples"]]
        #: The fitted log-log slope of the error, and the one a correct series shows (N + 1).
        self.slope: Optional[float] = data["slope"]
        self.expected_slope: int = data["expected_slope"]
        #: A root-test estimate of the radius of convergence in lambda.
        self.radius: Optional[float] = data["radius"]
        #: The error over the one the next derived orders predict (close to 1 when right).
        self.next_order_ratio: Optional[float] = data["next_order_ratio"]
        self.passed: bool = data["passed"]

    def __repr__(self) -> str:
        return f"BranchCheck({self.space + 1}.{self.branch + 1}, slope={self.slope}, passed={self.passed})"


class Check:
    """The result of :func:`check`."""

    def __init__(self, text: str, report: str, svg: Optional[str]):
        self.data = _json.loads(text)
        self._report = report
        self._svg = svg
        #: The order under test.
        self.order: int = self.data["order"]
        #: The parameter values used, by name.
        self.at: Dict[str, float] = dict(self.data["at"])
        #: Why no comparison was made, when none was.
        self.skipped: Optional[str] = self.data["skipped"]
        self.branches = [BranchCheck(b) for b in self.data["branches"]]

    @property
    def passed(self) -> bool:
        """Every branch behaves as a series of its order must (what the command line's exit
        status 0 says)."""
        return all(b.passed for b in self.branches)

    def report(self) -> str:
        """The table of ``cleave check``."""
        return self._report

    def diagram(self) -> str:
        """The SVG level diagram (ask with ``check(..., diagram=True)``)."""
        if self._svg is None:
            raise ValueError("check(..., diagram=True) asks for the diagram")
        return self._svg

    def _repr_svg_(self):
        return self._svg

    def __repr__(self) -> str:
        return f"Check(order={self.order}, passed={self.passed}, branches={len(self.branches)})"


def check(
    model,
    order: Optional[int] = None,
    *,
    at: Optional[Dict[str, Any]] = None,
    diagram: bool = False,
    lambda_max: Optional[float] = None,
    against: Optional[tuple] = None,
    fixed: Optional[Dict[str, Any]] = None,
    **values,
) -> Check:
    """Compares the series of ``model`` with exact diagonalization (``cleave check``).

    Args:
        order: the order under test (default: the model's ``order``, else 2).
        at: numeric values of the free parameters for the comparison (others are 1).
        diagram: also draw the level diagram (:meth:`Check.diagram`), against lambda up to
            ``lambda_max`` (default: 1.5 times the estimated radius, at most 1), or with
            ``against=("g", 0, 0.5)`` against one parameter at lambda = 1.
        **values: parameters fixed to exact values before deriving, as in :func:`derive`.
    """
    text, name = _read_model(model)
    all_values = dict(fixed or {})
    all_values.update(values)
    if against is not None:
        against = (str(against[0]), float(against[1]), float(against[2]))
        if not against[1] < against[2]:
            raise ValueError(f"against={against}: the range must go up")
    json_text, report, svg = _native.check(
        text, name, order, _pairs(at or {}), _pairs(all_values), diagram, lambda_max, against
    )
    return Check(json_text, report, svg)
