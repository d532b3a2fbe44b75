//! The native half of cleave's Python module: each function runs the library on model text and
//! returns the JSON that the command line writes for the same input, with the GIL released while
//! it computes. The Python package `cleave` wraps this JSON in small classes.

use pyo3::prelude::*;
use serde::Serialize;

use cleave::check::{self as verify, CheckOptions, SweepOptions};
use cleave::diagnostics::Diagnostic;
use cleave::engine::{self, DeriveOptions, EngineError};
use cleave::exact::Rational;
use cleave::lower::{self, SourceMap};
use cleave::model::Model;

/// The order used when neither the call nor the model's `order` gives one (as on the command
/// line).
const DEFAULT_ORDER: u32 = 2;

/// A failure, raised in Python as `cleave.CleaveError`.
struct Failure {
    /// The full text the command line prints on stderr.
    rendered: String,
    /// The short message, without a location.
    message: String,
    /// `(line, column)`, 1-based, when the failure points into the model.
    location: Option<(usize, usize)>,
    /// The exit status the command line would give: 2 for bad input, 1 for a computation that
    /// cannot be done.
    status: u8,
    /// The display name of the model.
    file: String,
}

impl Failure {
    fn unlocated(file: &str, message: String, status: u8) -> Failure {
        let rendered = if status == 1 {
            format!("{file}: {message}\n")
        } else {
            format!("error: {message}\n")
        };
        Failure { rendered, message, location: None, status, file: file.to_string() }
    }
    fn into_py(self, py: Python<'_>) -> PyErr {
        let make = || -> PyResult<PyErr> {
            let class = py.import("cleave._errors")?.getattr("CleaveError")?;
            let (line, column) = self.location.unzip();
            let args = (self.rendered, self.message, self.file, line, column, self.status);
            let err = class.call1(args)?;
            Ok(PyErr::from_value(err))
        };
        make().unwrap_or_else(|err| err)
    }
}

/// A model loaded from text, with what is needed to point into it.
struct Loaded {
    model: Model,
    source_map: SourceMap,
    text: String,
    name: String,
}

impl Loaded {
    fn located(&self, diagnostic: &Diagnostic) -> Failure {
        let position = diagnostic.line_col(&self.text);
        Failure {
            rendered: diagnostic.render(&self.text, &self.name),
            message: diagnostic.message.clone(),
            location: Some((position.line, position.col)),
            status: 2,
            file: self.name.clone(),
        }
    }
    /// An engine error located as the command line locates it.
    fn engine_failure(&self, err: EngineError, order_given: bool) -> Failure {
        if let Some(diagnostic) = cleave::locate_engine_error(&self.source_map, &err, order_given) {
            return self.located(&diagnostic);
        }
        match err {
            EngineError::Infeasible(why) => Failure::unlocated(&self.name, why, 1),
            other => Failure::unlocated(&self.name, format!("order: {other}"), 2),
        }
    }
    fn order(&self, given: Option<u32>) -> u32 {
        given.or(self.model.order()).unwrap_or(DEFAULT_ORDER)
    }
}

/// Parses `name = value` pairs (values as exact scalars: `5`, `-3/10`, `0.25`).
fn parse_values(
    file: &str,
    items: &[(String, String)],
) -> Result<Vec<(String, Rational)>, Failure> {
    items
        .iter()
        .map(|(name, value)| {
            lower::parse_rational(value.trim())
                .map(|v| (name.clone(), v))
                .map_err(|d| Failure::unlocated(file, format!("{name}={value}: {}", d.message), 2))
        })
        .collect()
}

/// Loads the model text and puts in the fixed values.
fn load(text: &str, name: &str, fixed: &[(String, String)]) -> Result<Loaded, Failure> {
    let (model, source_map) = cleave::load(text).map_err(|d| {
        let position = d.line_col(text);
        Failure {
            rendered: d.render(text, name),
            message: d.message.clone(),
            location: Some((position.line, position.col)),
            status: 2,
            file: name.to_string(),
        }
    })?;
    let values = parse_values(name, fixed)?;
    let model = if values.is_empty() {
        model
    } else {
        model.substitute(&values).map_err(|err| {
            let given = match &err {
                cleave::model::SubstituteError::UnknownParameter { name, .. }
                | cleave::model::SubstituteError::Twice { name }
                | cleave::model::SubstituteError::NotPositive { name }
                | cleave::model::SubstituteError::Pole { name } => name.clone(),
            };
            let value = fixed.iter().find(|(n, _)| n == &given).map_or("", |(_, v)| v.as_str());
            Failure::unlocated(name, format!("{given}={value}: {err}"), 2)
        })?
    };
    Ok(Loaded { model, source_map, text: text.to_string(), name: name.to_string() })
}

/// The free parameters as `(name, declared > 0)`.
type Parameters = Vec<(String, bool)>;

/// The parameters left free, with whether each is declared `> 0`.
fn parameters(model: &Model) -> Parameters {
    model.params().iter().map(|p| (p.name.clone(), p.positive)).collect()
}

/// Runs `work` with the GIL released and turns a failure into `cleave.CleaveError`.
fn run<T: Send>(py: Python<'_>, work: impl FnOnce() -> Result<T, Failure> + Send) -> PyResult<T> {
    py.detach(work).map_err(|failure| failure.into_py(py))
}

/// `derive(text, name, order, states, fixed, formats)`: the JSON of `cleave derive --json`, the
/// free parameters as `(name, positive)`, and the other requested outputs (`"report"`, `"latex"`,
/// `"latex_standalone"`, `"rust"`) in the order asked.
#[pyfunction]
#[pyo3(signature = (text, name, order=None, states=None, fixed=Vec::new(), formats=Vec::new()))]
#[allow(clippy::too_many_arguments)]
fn derive(
    py: Python<'_>,
    text: String,
    name: String,
    order: Option<u32>,
    states: Option<u32>,
    fixed: Vec<(String, String)>,
    formats: Vec<String>,
) -> PyResult<(String, Parameters, Vec<String>)> {
    run(py, move || {
        let loaded = load(&text, &name, &fixed)?;
        let options = DeriveOptions { order: loaded.order(order), states };
        let derivation = engine::derive(&loaded.model, &options)
            .map_err(|err| loaded.engine_failure(err, order.is_some()))?;
        let model = &loaded.model;
        let json = cleave::emit::json(model, &derivation);
        let mut others = Vec::new();
        for format in &formats {
            let latex = |standalone| {
                let options = cleave::emit::LatexOptions { standalone, at: Vec::new() };
                cleave::emit::latex(model, &derivation, &name, &options)
            };
            others.push(match format.as_str() {
                "report" => cleave::emit::report(model, &derivation, &name, &Vec::new()),
                "latex" => latex(false),
                "latex_standalone" => latex(true),
                "rust" => cleave::emit::rust(model, &derivation, &name),
                other => {
                    return Err(Failure::unlocated(&name, format!("no output format `{other}`"), 2))
                }
            });
        }
        Ok((json, parameters(model), others))
    })
}

/// `levels(text, name, fixed)`: the JSON of `cleave levels --json` and the readable report.
#[pyfunction]
#[pyo3(signature = (text, name, fixed=Vec::new()))]
fn levels(
    py: Python<'_>,
    text: String,
    name: String,
    fixed: Vec<(String, String)>,
) -> PyResult<(String, String, Parameters)> {
    run(py, move || {
        let loaded = load(&text, &name, &fixed)?;
        let spectrum = cleave::spectrum::unperturbed_levels(&loaded.model)
            .map_err(|err| Failure::unlocated(&name, err.to_string(), 1))?;
        Ok((
            cleave::emit::levels_json(&loaded.model, &spectrum),
            cleave::emit::levels_report(&loaded.model, &spectrum, &name),
            parameters(&loaded.model),
        ))
    })
}

#[derive(Serialize)]
struct CheckJson {
    order: u32,
    at: Vec<(String, f64)>,
    skipped: Option<String>,
    branches: Vec<BranchCheckJson>,
}

#[derive(Serialize)]
struct BranchCheckJson {
    space: usize,
    branch: usize,
    samples: Vec<(f64, f64)>,
    slope: Option<f64>,
    expected_slope: u32,
    radius: Option<f64>,
    next_order_ratio: Option<f64>,
    passed: bool,
}

/// `check(text, name, order, at, fixed, diagram, lambda_max, against)`: the outcome of `cleave
/// check` as JSON, its readable table, and the level diagram's SVG when `diagram` is set (against
/// lambda up to `lambda_max`, or against the parameter `against = (name, from, to)`).
#[pyfunction]
#[pyo3(signature = (text, name, order=None, at=Vec::new(), fixed=Vec::new(), diagram=false, lambda_max=None, against=None))]
#[allow(clippy::too_many_arguments)]
fn check(
    py: Python<'_>,
    text: String,
    name: String,
    order: Option<u32>,
    at: Vec<(String, String)>,
    fixed: Vec<(String, String)>,
    diagram: bool,
    lambda_max: Option<f64>,
    against: Option<(String, f64, f64)>,
) -> PyResult<(String, String, Option<String>)> {
    run(py, move || {
        let loaded = load(&text, &name, &fixed)?;
        let at = parse_values(&name, &at)?;
        let swept = against.iter().map(|(n, _, _)| n);
        for param in at.iter().map(|(n, _)| n).chain(swept) {
            if !loaded.model.params().iter().any(|p| &p.name == param) {
                let known = loaded.model.param_names().join(", ");
                return Err(Failure::unlocated(
                    &name,
                    format!("at: the model has no free parameter `{param}` (it has: {known})"),
                    2,
                ));
            }
        }
        // As on the command line: open parameters get values that keep the levels apart, the
        // series is derived numerically beyond the order tested, and a model too large to
        // diagonalize is refused before deriving.
        let tested = loaded.order(order);
        let options = CheckOptions { at: at.clone(), order: Some(tested) };
        if let Some(why) = cleave::check::too_large(&loaded.model, &options) {
            return Err(Failure::unlocated(&name, why, 1));
        }
        let (derivation, verification) = cleave::check::run(&loaded.model, &options)
            .map_err(|err| loaded.engine_failure(err, order.is_some()))?;
        let doc = CheckJson {
            order: tested,
            at: verification.at.clone(),
            skipped: verification.skipped.clone(),
            branches: verification
                .branches
                .iter()
                .map(|b| BranchCheckJson {
                    space: b.space,
                    branch: b.branch,
                    samples: b.samples.clone(),
                    slope: b.slope,
                    expected_slope: b.expected_slope,
                    // The radius where an exceptional point was found, else the bound the
                    // search reached (the radius is at least that).
                    radius: b.radius.as_ref().map(|r| match r {
                        cleave::check::Radius::At(x) | cleave::check::Radius::Beyond(x) => *x,
                    }),
                    next_order_ratio: b.next_order_ratio,
                    passed: b.passed,
                })
                .collect(),
        };
        let json = serde_json::to_string(&doc).expect("plain data serializes");
        let report = cleave::emit::check_report(&derivation, &verification, &name);
        let svg = diagram.then(|| {
            diagram_svg(&loaded.model, &derivation, &at, tested, lambda_max, against, &name)
        });
        Ok((json, report, svg))
    })
}

/// The level diagram of `cleave check --diagram`.
fn diagram_svg(
    model: &Model,
    derivation: &engine::Derivation,
    at: &[(String, Rational)],
    order: u32,
    lambda_max: Option<f64>,
    against: Option<(String, f64, f64)>,
    name: &str,
) -> String {
    let options =
        SweepOptions { at: at.to_vec(), order: Some(order), lambda_max, against, points: None };
    let sweep = verify::sweep(model, derivation, &options);
    cleave::emit::diagram(model, derivation, &sweep, name)
}

/// `evaluate_exact(text, names, values)`: the exact value of a printed scalar (read back by the
/// model language's own parser) with exact values put in for the named symbols.
#[pyfunction]
fn evaluate_exact(text: String, names: Vec<String>, values: Vec<String>) -> PyResult<String> {
    let fail = |message: String| PyErr::new::<pyo3::exceptions::PyValueError, _>(message);
    let mut value = lower::eval_scalar(&text, &names).map_err(|d| fail(d.message))?;
    for (k, v) in values.iter().enumerate() {
        let v = lower::parse_rational(v).map_err(|d| fail(d.message))?;
        value = value
            .eval_param(cleave::exact::ParamId(k as u32), &v.into())
            .ok_or_else(|| fail("a denominator vanishes".to_string()))?;
    }
    let res = value.display(cleave::exact::Symbols { names: &names }).to_string();
    Ok(res)
}

/// The native module `cleave._native`.
#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(derive, m)?)?;
    m.add_function(wrap_pyfunction!(levels, m)?)?;
    m.add_function(wrap_pyfunction!(check, m)?)?;
    m.add_function(wrap_pyfunction!(evaluate_exact, m)?)?;
    Ok(())
}
