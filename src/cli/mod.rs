//! The command line: clap structs, reading model files, writing outputs (`-` is stdout) and
//! printing diagnostics with their source line and caret. Start from [`run`].
//! The only module that touches files and the terminal; it knows nothing of how results are made.

use std::ffi::OsString;
use std::io::Write;
use std::path::{Path, PathBuf};

use clap::{Args, Parser, Subcommand};

use crate::check::{self, CheckOptions};
use crate::diagnostics::Diagnostic;
use crate::emit::{self, LatexOptions, ParamValues};
use crate::engine::{self, DeriveOptions, EngineError};
use crate::exact::Rational;
use crate::lower::{self, SourceMap};
use crate::model::Model;
use crate::spectrum;

/// How a run ended; `main` maps it to the exit status.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Outcome {
    /// Everything asked for was written (exit status 0).
    Success,
    /// A computation that cannot be done (exit status 1).
    Infeasible,
    /// Bad input: a model error, a bad option or an unreadable file (exit status 2).
    BadInput,
}

/// `cleave`: exact perturbation theory for small model Hamiltonians.
#[derive(Debug, Parser)]
#[command(name = "cleave", version, about)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// The unperturbed spectrum: each exact H0 eigenvalue, its degeneracy and its states.
    Levels(LevelsArgs),
    /// Effective Hamiltonians, energy series with their splittings, and state corrections.
    Derive(DeriveArgs),
    /// Numeric verification against exact diagonalization of H0 + lambda V.
    Check(CheckArgs),
}

#[derive(Debug, Args)]
struct LevelsArgs {
    /// The model file (`*.clv`).
    model: PathBuf,
    /// Write the levels as JSON to PATH (`-` for stdout).
    #[arg(long, value_name = "PATH")]
    json: Option<PathBuf>,
}

#[derive(Debug, Args)]
struct DeriveArgs {
    /// The model file (`*.clv`).
    model: PathBuf,
    /// The order in lambda (default: the model's `order`, else 2).
    #[arg(long, value_name = "N")]
    order: Option<u32>,
    /// Report state corrections through order K (default: the smaller of N and 4).
    #[arg(long, value_name = "K")]
    states: Option<u32>,
    /// Write JSON to PATH (`-` for stdout).
    #[arg(long, value_name = "PATH")]
    json: Option<PathBuf>,
    /// Write LaTeX to PATH (`-` for stdout).
    #[arg(long, value_name = "PATH")]
    latex: Option<PathBuf>,
    /// With --latex, write a complete document instead of a fragment.
    #[arg(long, requires = "latex")]
    standalone: bool,
    /// Write a Rust module to PATH (`-` for stdout).
    #[arg(long, value_name = "PATH")]
    rust: Option<PathBuf>,
    /// A parameter value for numeric columns, e.g. `--at g=1/10` (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    at: Vec<String>,
}

#[derive(Debug, Args)]
struct CheckArgs {
    /// The model file (`*.clv`).
    model: PathBuf,
    /// The order in lambda (default: the model's `order`, else 2).
    #[arg(long, value_name = "N")]
    order: Option<u32>,
    /// A parameter value, e.g. `--at g=1/10` (repeatable); others get a default.
    #[arg(long, value_name = "NAME=VALUE")]
    at: Vec<String>,
    /// Write an SVG plot of the errors to PATH.
    #[arg(long, value_name = "PATH")]
    plot: Option<PathBuf>,
}

/// The order used when neither `--order` nor the model's `order` gives one.
const DEFAULT_ORDER: u32 = 2;

/// Runs cleave with these arguments (the first is the program name), printing to stdout and
/// stderr.
pub fn run<I, T>(args: I) -> Outcome
where
    I: IntoIterator<Item = T>,
    T: Into<OsString> + Clone,
{
    let cli = match Cli::try_parse_from(args) {
        Ok(cli) => cli,
        Err(err) => {
            // `--help` and `--version` arrive here too and are successes.
            let _ = err.print();
            return if err.use_stderr() { Outcome::BadInput } else { Outcome::Success };
        }
    };
    match execute(cli.command) {
        Ok(()) => Outcome::Success,
        Err(failure) => {
            eprint!("{}", failure.message);
            failure.outcome
        }
    }
}

/// A failed run: its outcome and the full text for stderr.
struct Failure {
    outcome: Outcome,
    message: String,
}

impl Failure {
    fn bad_input(message: impl Into<String>) -> Failure {
        Failure { outcome: Outcome::BadInput, message: ensure_newline(message.into()) }
    }
    fn infeasible(message: impl Into<String>) -> Failure {
        Failure { outcome: Outcome::Infeasible, message: ensure_newline(message.into()) }
    }
}

fn ensure_newline(mut message: String) -> String {
    if !message.ends_with('\n') {
        message.push('\n');
    }
    message
}

/// A model read from disk with what is needed to point into it.
struct Loaded {
    model: Model,
    source_map: SourceMap,
    text: String,
    name: String,
}

impl Loaded {
    /// A bad-input failure located at `span` in this model.
    fn located(&self, diagnostic: &Diagnostic) -> Failure {
        Failure::bad_input(diagnostic.render(&self.text, &self.name))
    }
    /// Maps an engine error: infeasible is exit 1, bad input is exit 2 located at the line the
    /// engine most likely means (see [`SourceMap::engine_input`]).
    fn engine_failure(&self, err: EngineError) -> Failure {
        match err {
            EngineError::Infeasible(why) => Failure::infeasible(format!("{}: {why}", self.name)),
            EngineError::BadInput(why) => {
                self.located(&Diagnostic::new(why, self.source_map.engine_input()))
            }
        }
    }
}

fn load(path: &Path) -> Result<Loaded, Failure> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path)
        .map_err(|err| Failure::bad_input(format!("{name}: cannot read the model: {err}")))?;
    match crate::load(&text) {
        Ok((model, source_map)) => Ok(Loaded { model, source_map, text, name }),
        Err(diagnostic) => Err(Failure::bad_input(diagnostic.render(&text, &name))),
    }
}

fn execute(command: Command) -> Result<(), Failure> {
    match command {
        Command::Levels(args) => levels(args),
        Command::Derive(args) => derive(args),
        Command::Check(args) => check_command(args),
    }
}

fn levels(args: LevelsArgs) -> Result<(), Failure> {
    let loaded = load(&args.model)?;
    let spectrum = spectrum::unperturbed_levels(&loaded.model)
        .map_err(|err| Failure::infeasible(format!("{}: {err}", loaded.name)))?;
    let mut outputs = Outputs::default();
    if let Some(path) = &args.json {
        outputs.push(path, emit::levels_json(&loaded.model, &spectrum));
    }
    outputs
        .report_unless_stdout_taken(|| emit::levels_report(&loaded.model, &spectrum, &loaded.name));
    outputs.write()
}

fn derive(args: DeriveArgs) -> Result<(), Failure> {
    let loaded = load(&args.model)?;
    let at = parse_at(&args.at, &loaded.model)?;
    let options = DeriveOptions { order: order(args.order, &loaded.model), states: args.states };
    let progress = ProgressLine::new();
    let derivation = engine::derive_with_progress(&loaded.model, &options, progress.reporter())
        .map_err(|err| loaded.engine_failure(err))?;
    progress.finish();
    let model = &loaded.model;
    let mut outputs = Outputs::default();
    if let Some(path) = &args.json {
        outputs.push(path, emit::json(model, &derivation));
    }
    if let Some(path) = &args.latex {
        let latex_options = LatexOptions { standalone: args.standalone, at: at.clone() };
        outputs.push(path, emit::latex(model, &derivation, &loaded.name, &latex_options));
    }
    if let Some(path) = &args.rust {
        outputs.push(path, emit::rust(model, &derivation, &loaded.name));
    }
    outputs.report_unless_stdout_taken(|| emit::report(model, &derivation, &loaded.name, &at));
    outputs.write()
}

fn check_command(args: CheckArgs) -> Result<(), Failure> {
    let loaded = load(&args.model)?;
    let at = parse_at(&args.at, &loaded.model)?;
    // The series is derived two orders further than tested: those coefficients predict the
    // error of the order-N series, which makes the numeric test sharp.
    let tested = order(args.order, &loaded.model);
    let extra = if tested + 2 <= engine::MAX_ORDER { 2 } else { 0 };
    let options = DeriveOptions::new(tested + extra);
    let derivation =
        engine::derive(&loaded.model, &options).map_err(|err| loaded.engine_failure(err))?;
    let check_options = CheckOptions { at, order: Some(tested) };
    let verification = check::verify(&loaded.model, &derivation, &check_options);
    let mut outputs = Outputs::default();
    if let Some(path) = &args.plot {
        outputs.push(path, emit::check_plot(&verification));
    }
    let text = emit::check_report(&derivation, &verification, &loaded.name);
    outputs.report_unless_stdout_taken(|| text);
    outputs.write()?;
    // A branch whose error does not fall like lambda^(N+1) is a result the user must not trust:
    // the table says which, and the exit status lets scripts stop.
    let failed = verification.branches.iter().filter(|b| !b.passed).count();
    if failed > 0 {
        return Err(Failure::infeasible(format!(
            "{failed} of {} branches failed the numeric check; see the table above",
            verification.branches.len()
        )));
    }
    Ok(())
}

/// `--order`, else the model's `order`, else [`DEFAULT_ORDER`].
fn order(flag: Option<u32>, model: &Model) -> u32 {
    flag.or(model.order()).unwrap_or(DEFAULT_ORDER)
}

/// Parses `--at NAME=VALUE` items against the model's parameters. Values are exact rationals
/// written like model scalars (`1/10`, `0.1`, `1e-3`).
fn parse_at(items: &[String], model: &Model) -> Result<ParamValues, Failure> {
    let mut res: ParamValues = Vec::new();
    for item in items {
        let Some((name, value)) = item.split_once('=') else {
            return Err(Failure::bad_input(format!("--at {item}: expected NAME=VALUE")));
        };
        let name = name.trim();
        let Some(param) = model.params().iter().find(|p| p.name == name) else {
            let known = model.param_names().join(", ");
            let has = if known.is_empty() {
                "it has none".to_string()
            } else {
                format!("it has: {known}")
            };
            return Err(Failure::bad_input(format!(
                "--at {item}: the model has no parameter `{name}` ({has})"
            )));
        };
        let value: Rational = lower::parse_rational(value)
            .map_err(|d| Failure::bad_input(format!("--at {item}: {}", d.message)))?;
        if param.positive && !value.is_positive() {
            return Err(Failure::bad_input(format!(
                "--at {item}: {}",
                lower::LowerError::NotPositive { name: name.to_string() }
            )));
        }
        if res.iter().any(|(seen, _)| seen == name) {
            return Err(Failure::bad_input(format!("--at {item}: `{name}` is given twice")));
        }
        res.push((name.to_string(), value));
    }
    Ok(res)
}

/// The outputs of one run; written only after every one has been produced, so a failure leaves
/// no half-written set.
#[derive(Default)]
struct Outputs {
    files: Vec<(PathBuf, String)>,
}

impl Outputs {
    fn push(&mut self, path: &Path, text: String) {
        self.files.push((path.to_path_buf(), text));
    }
    fn claims_stdout(&self) -> bool {
        self.files.iter().any(|(path, _)| is_stdout(path))
    }
    /// The readable report goes to stdout when no other output claims it.
    fn report_unless_stdout_taken(&mut self, report: impl FnOnce() -> String) {
        if !self.claims_stdout() {
            self.files.push((PathBuf::from("-"), report()));
        }
    }
    fn write(self) -> Result<(), Failure> {
        if self.files.iter().filter(|(path, _)| is_stdout(path)).count() > 1 {
            return Err(Failure::bad_input("only one output can go to stdout (`-`)"));
        }
        for (path, text) in &self.files {
            if is_stdout(path) {
                let mut stdout = std::io::stdout().lock();
                // A closed pipe (`cleave derive m.clv | head`) is not an error of ours.
                let _ = stdout.write_all(text.as_bytes()).and_then(|()| stdout.flush());
            } else {
                std::fs::write(path, text).map_err(|err| {
                    Failure::bad_input(format!("cannot write {}: {err}", path.display()))
                })?;
            }
        }
        Ok(())
    }
}

fn is_stdout(path: &Path) -> bool {
    path.as_os_str() == "-"
}

/// A one-line progress report on stderr for a derivation that runs longer than a second: which
/// model space and order it is at. Only when stderr is a terminal and `CI` is unset, so pipes,
/// files and CI logs stay clean.
struct ProgressLine {
    state: Option<std::sync::Arc<std::sync::Mutex<ProgressState>>>,
}

struct ProgressState {
    start: std::time::Instant,
    last: Option<std::time::Instant>,
}

impl ProgressLine {
    fn new() -> ProgressLine {
        use std::io::IsTerminal;
        let enabled = std::io::stderr().is_terminal() && std::env::var_os("CI").is_none();
        let state = enabled.then(|| {
            std::sync::Arc::new(std::sync::Mutex::new(ProgressState {
                start: std::time::Instant::now(),
                last: None,
            }))
        });
        ProgressLine { state }
    }

    /// The callback the engine calls; it redraws the line at most five times a second.
    fn reporter(&self) -> std::sync::Arc<dyn Fn(engine::Progress) + Send + Sync> {
        let Some(state) = self.state.clone() else { return std::sync::Arc::new(|_| {}) };
        std::sync::Arc::new(move |p: engine::Progress| {
            let Ok(mut state) = state.lock() else { return };
            let now = std::time::Instant::now();
            let due = state.last.map_or(true, |t| now - t >= std::time::Duration::from_millis(200));
            if now - state.start < std::time::Duration::from_secs(1) || !due {
                return;
            }
            state.last = Some(now);
            eprint!("\rderiving: model space {}/{}, order {}\x1b[K", p.space, p.spaces, p.order);
        })
    }

    /// Clears the line if it was drawn.
    fn finish(&self) {
        let drawn = self.state.as_ref().is_some_and(|s| s.lock().is_ok_and(|s| s.last.is_some()));
        if drawn {
            eprint!("\r\x1b[K");
        }
    }
}
