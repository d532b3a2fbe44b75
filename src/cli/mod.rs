//! The command line: clap structs, reading model files, writing outputs (`-` is stdout) and
//! printing diagnostics with their source line and caret. Start from [`run`].
//! The only module that touches files and the terminal; it knows nothing of how results are made.

use std::ffi::OsString;
use std::io::Write;
use std::path::{Path, PathBuf};

use clap::{Args, Parser, Subcommand};

use crate::check::{self, CheckOptions, SweepOptions};
use crate::diagnostics::Diagnostic;
use crate::emit::{self, LatexOptions, ParamValues};
use crate::engine::{self, DeriveOptions, EngineError};
use crate::exact::Rational;
use crate::lower::{self, SourceMap};
use crate::model::{Model, SubstituteError};
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
    #[command(flatten)]
    budget: Budget,
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

/// Limits on one run; past either the run stops with exit status 1 and writes nothing.
#[derive(Debug, Args, Clone, Copy)]
struct Budget {
    /// Stop after S seconds of wall-clock time.
    #[arg(long, value_name = "S", global = true)]
    max_seconds: Option<u64>,
    /// Stop when more than M MiB of memory are in use (Linux).
    #[arg(long, value_name = "M", global = true)]
    max_memory: Option<u64>,
}

#[derive(Debug, Args)]
struct LevelsArgs {
    /// The model file (`*.clv`).
    model: PathBuf,
    /// Fix a parameter to an exact value before anything is computed, e.g. `--set wq=5`
    /// (repeatable); the outputs list the fixed values.
    #[arg(long, value_name = "NAME=VALUE")]
    set: Vec<String>,
    /// Write the levels as JSON to PATH (`-` for stdout).
    #[arg(long, value_name = "PATH")]
    json: Option<PathBuf>,
}

#[derive(Debug, Args)]
struct DeriveArgs {
    /// The model file (`*.clv`).
    model: PathBuf,
    /// Fix a parameter to an exact value before anything is computed, e.g. `--set wq=5`
    /// (repeatable); the outputs list the fixed values.
    #[arg(long, value_name = "NAME=VALUE")]
    set: Vec<String>,
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
    /// Fix a parameter to an exact value before anything is computed, e.g. `--set wq=5`
    /// (repeatable); the outputs list the fixed values.
    #[arg(long, value_name = "NAME=VALUE")]
    set: Vec<String>,
    /// The order in lambda (default: the model's `order`, else 2).
    #[arg(long, value_name = "N")]
    order: Option<u32>,
    /// A parameter value, e.g. `--at g=1/10` (repeatable); others get a default.
    #[arg(long, value_name = "NAME=VALUE")]
    at: Vec<String>,
    /// Write an SVG plot of the errors to PATH (a name ending in `.svg`, or `-`).
    #[arg(long, value_name = "PATH")]
    plot: Option<PathBuf>,
    /// Write an SVG level diagram to PATH: exact levels and the series of each order against
    /// lambda, up to 1.5 times the estimated radius of convergence (at most 1) or --lambda-max.
    #[arg(long, value_name = "PATH")]
    diagram: Option<PathBuf>,
    /// With --diagram, the largest lambda drawn.
    #[arg(long, value_name = "L", requires = "diagram")]
    lambda_max: Option<f64>,
    /// With --diagram, draw against one parameter at lambda = 1 instead, e.g. `--against g=0..1/2`.
    #[arg(long, value_name = "NAME=FROM..TO", requires = "diagram")]
    against: Option<String>,
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
    let _watchdog = Watchdog::start(cli.budget);
    match execute(cli.command) {
        Ok(()) => Outcome::Success,
        Err(failure) => {
            // Nothing is left to report a failure to stderr with, so its own failure is ignored.
            let _ = std::io::stderr().write_all(failure.message.as_bytes());
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
    /// Maps an engine error: infeasible is exit 1, bad input is exit 2 located at its cause: the
    /// focus line it names, the `order` statement or the `--order` flag (`order_flag`), else the
    /// line the engine most likely means (see [`SourceMap::engine_input`]).
    fn engine_failure(&self, err: EngineError, order_flag: bool) -> Failure {
        if let Some(diagnostic) = crate::locate_engine_error(&self.source_map, &err, order_flag) {
            return self.located(&diagnostic);
        }
        match err {
            EngineError::Infeasible(why) => Failure::infeasible(format!("{}: {why}", self.name)),
            other => Failure::bad_input(format!("error: --order: {other}")),
        }
    }
}

fn load(path: &Path) -> Result<Loaded, Failure> {
    let name = path.display().to_string();
    let bytes = std::fs::read(path)
        .map_err(|err| Failure::bad_input(format!("{name}: cannot read the model: {err}")))?;
    let text = match String::from_utf8(bytes) {
        Ok(text) => text,
        Err(err) => {
            // Located at the first byte that is not UTF-8, with the text before it.
            let valid = err.utf8_error().valid_up_to();
            let bytes = err.into_bytes();
            let prefix = String::from_utf8_lossy(&bytes[..valid]).into_owned();
            let rest = String::from_utf8_lossy(&bytes[valid..]).into_owned();
            let diagnostic = Diagnostic::new(
                format!(
                    "the model is not UTF-8 text (byte 0x{:02X} here); save it as UTF-8",
                    bytes[valid]
                ),
                crate::diagnostics::Span::new(valid, valid),
            );
            return Err(Failure::bad_input(diagnostic.render(&(prefix + &rest), &name)));
        }
    };
    // A byte-order mark is no part of the model.
    let text = text.strip_prefix('\u{feff}').map(str::to_string).unwrap_or(text);
    match crate::load(&text) {
        Ok((model, source_map)) => Ok(Loaded { model, source_map, text, name }),
        Err(diagnostic) => Err(Failure::bad_input(diagnostic.render(&text, &name))),
    }
}

/// Puts the exact values of `--set NAME=VALUE` into the model (see [`Model::substitute`]).
fn fix_parameters(loaded: Loaded, items: &[String]) -> Result<Loaded, Failure> {
    if items.is_empty() {
        return Ok(loaded);
    }
    let mut values = Vec::new();
    for item in items {
        let Some((name, value)) = item.split_once('=') else {
            return Err(Failure::bad_input(format!("error: --set {item}: expected NAME=VALUE")));
        };
        let value = lower::parse_rational(value.trim())
            .map_err(|d| Failure::bad_input(format!("error: --set {item}: {}", d.message)))?;
        values.push((name.trim().to_string(), value));
    }
    let model = loaded.model.substitute(&values).map_err(|err| {
        let item = match &err {
            SubstituteError::UnknownParameter { name, .. }
            | SubstituteError::Twice { name }
            | SubstituteError::NotPositive { name }
            | SubstituteError::Pole { name } => {
                items.iter().rev().find(|i| i.split('=').next().map(str::trim) == Some(name))
            }
        };
        Failure::bad_input(format!("error: --set {}: {err}", item.map_or("", String::as_str)))
    })?;
    Ok(Loaded { model, ..loaded })
}

fn execute(command: Command) -> Result<(), Failure> {
    match command {
        Command::Levels(args) => levels(args),
        Command::Derive(args) => derive(args),
        Command::Check(args) => check_command(args),
    }
}

fn levels(args: LevelsArgs) -> Result<(), Failure> {
    let mut plan = OutputPlan::default();
    if let Some(path) = &args.json {
        plan.add("json", path, &args.model)?;
    }
    let loaded = fix_parameters(load(&args.model)?, &args.set)?;
    let spectrum = spectrum::unperturbed_levels(&loaded.model)
        .map_err(|err| Failure::infeasible(format!("{}: {err}", loaded.name)))?;
    let mut outputs = Outputs::new(plan);
    outputs.set("json", || emit::levels_json(&loaded.model, &spectrum));
    outputs
        .report_unless_stdout_taken(|| emit::levels_report(&loaded.model, &spectrum, &loaded.name));
    outputs.write()
}

fn derive(args: DeriveArgs) -> Result<(), Failure> {
    let mut plan = OutputPlan::default();
    for (option, path) in [("json", &args.json), ("latex", &args.latex), ("rust", &args.rust)] {
        if let Some(path) = path {
            plan.add(option, path, &args.model)?;
        }
    }
    check_order_flag(args.order)?;
    let loaded = fix_parameters(load(&args.model)?, &args.set)?;
    let at = parse_at(&args.at, &loaded.model)?;
    let options = DeriveOptions { order: order(args.order, &loaded)?, states: args.states };
    let progress = ProgressLine::new();
    let derivation = engine::derive_with_progress(&loaded.model, &options, progress.reporter())
        .map_err(|err| loaded.engine_failure(err, args.order.is_some()))?;
    progress.finish();
    let model = &loaded.model;
    let mut outputs = Outputs::new(plan);
    outputs.set("json", || emit::json(model, &derivation));
    outputs.set("latex", || {
        let latex_options = LatexOptions { standalone: args.standalone, at: at.clone() };
        emit::latex(model, &derivation, &loaded.name, &latex_options)
    });
    outputs.set("rust", || emit::rust(model, &derivation, &loaded.name));
    outputs.report_unless_stdout_taken(|| emit::report(model, &derivation, &loaded.name, &at));
    outputs.write()
}

fn check_command(args: CheckArgs) -> Result<(), Failure> {
    let mut plan = OutputPlan::default();
    if let Some(path) = &args.plot {
        plan.add("plot", path, &args.model)?;
    }
    if let Some(path) = &args.diagram {
        plan.add("diagram", path, &args.model)?;
    }
    check_order_flag(args.order)?;
    let loaded = fix_parameters(load(&args.model)?, &args.set)?;
    let at = parse_at(&args.at, &loaded.model)?;
    if let Some(path) = &args.plot {
        // The plot is SVG; a name that promises another format is refused rather than written
        // with SVG inside.
        let is_svg = path.extension().is_some_and(|e| e.eq_ignore_ascii_case("svg"));
        if !is_stdout(path) && !is_svg {
            return Err(Failure::bad_input(format!(
                "--plot {}: the plot is written as SVG only; give a file name ending in .svg \
                 (or `-` for stdout)",
                path.display()
            )));
        }
    }
    // The parameters are set first and the series derived numerically, a few orders beyond
    // the one tested: those coefficients predict the error of the order-N series.
    let tested = order(args.order, &loaded)?;
    let check_options = CheckOptions { at, order: Some(tested) };
    // Refused before deriving: the derivation would be wasted on a matrix too large to check.
    if let Some(why) = check::too_large(&loaded.model, &check_options) {
        return Err(Failure::infeasible(format!("{}: {why}", loaded.name)));
    }
    let (derivation, verification) = check::run(&loaded.model, &check_options)
        .map_err(|err| loaded.engine_failure(err, args.order.is_some()))?;
    let table = emit::check_report(&derivation, &verification, &loaded.name);
    // With `--plot -` the plot takes stdout, so the table goes to stderr, where the verdict
    // below still follows it.
    let table_on_stderr = plan.claims_stdout();
    let mut outputs = Outputs::new(plan);
    outputs.set("plot", || emit::check_plot(&verification));
    if table_on_stderr {
        let _ = std::io::stderr().write_all(table.as_bytes());
    } else {
        outputs.report_unless_stdout_taken(|| table);
    }
    if args.diagram.is_some() {
        let against =
            args.against.as_deref().map(|a| parse_against(a, &loaded.model)).transpose()?;
        let options = SweepOptions {
            at: check_options.at.clone(),
            order: Some(tested),
            lambda_max: args.lambda_max,
            against,
            points: None,
        };
        let sweep = check::sweep(&loaded.model, &derivation, &options);
        let diagram = emit::diagram(&loaded.model, &derivation, &sweep, &loaded.name);
        outputs.set("diagram", || diagram);
    }
    outputs.write()?;
    // A branch whose error is not what a correct series leaves is a result the user must not
    // trust: the table says which, and the exit status lets scripts stop. A check that compared
    // nothing proves nothing, and says so the same way.
    let failed = verification.n_failed();
    if failed > 0 {
        return Err(Failure::infeasible(format!(
            "{failed} of {} branches failed the numeric check; see the table above",
            verification.n_checked()
        )));
    }
    if verification.n_checked() == 0 {
        return Err(Failure::infeasible(
            "no branch was compared (the table says why); nothing was verified",
        ));
    }
    Ok(())
}

/// Refuses `--order N` outside 1..=[`engine::MAX_ORDER`] before the model is even read.
fn check_order_flag(flag: Option<u32>) -> Result<(), Failure> {
    match flag {
        Some(0) => Err(Failure::bad_input("--order 0: the order must be at least 1")),
        Some(n) if n > engine::MAX_ORDER => Err(Failure::bad_input(format!(
            "--order {n}: the order must be at most {}",
            engine::MAX_ORDER
        ))),
        _ => Ok(()),
    }
}

/// `--order`, else the model's `order`, else [`DEFAULT_ORDER`]; a model's order outside
/// 1..=[`engine::MAX_ORDER`] is refused at its statement.
fn order(flag: Option<u32>, loaded: &Loaded) -> Result<u32, Failure> {
    if let Some(n) = flag {
        return Ok(n);
    }
    match (loaded.model.order(), loaded.source_map.order) {
        (Some(n), Some(span)) if n == 0 || n > engine::MAX_ORDER => {
            let why = if n == 0 {
                "the order must be at least 1".to_string()
            } else {
                format!("the order must be at most {}", engine::MAX_ORDER)
            };
            Err(loaded.located(&Diagnostic::new(why, span)))
        }
        (Some(n), _) => Ok(n),
        (None, _) => Ok(DEFAULT_ORDER),
    }
}

/// Parses `--against NAME=FROM..TO` for a parameter of the model.
fn parse_against(item: &str, model: &Model) -> Result<(String, f64, f64), Failure> {
    let bad = |why: String| Failure::bad_input(format!("error: --against {item}: {why}"));
    let Some((name, range)) = item.split_once('=') else {
        return Err(bad("expected NAME=FROM..TO".into()));
    };
    let name = name.trim();
    if !model.params().iter().any(|p| p.name == name) {
        let known = model.param_names().join(", ");
        return Err(bad(format!("the model has no free parameter `{name}` (it has: {known})")));
    }
    let Some((from, to)) = range.split_once("..") else {
        return Err(bad("expected a range FROM..TO".into()));
    };
    let value = |text: &str| {
        lower::parse_rational(text.trim()).map(|v| v.to_f64()).map_err(|d| bad(d.message))
    };
    let (from, to) = (value(from)?, value(to)?);
    if from >= to {
        return Err(bad("the range must go up".into()));
    }
    Ok((name.to_string(), from, to))
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

/// Where one output goes: stdout (`-`) or a file.
#[derive(Clone, Debug, PartialEq, Eq)]
enum Target {
    Stdout,
    /// A file, with the option that named it (for messages) and its resolved identity (the
    /// canonical parent directory joined with the file name), which detects two options naming
    /// one file by different spellings.
    File {
        path: PathBuf,
        identity: PathBuf,
    },
    /// An existing file that is not a regular file (`/dev/stdout`, a named pipe): written in
    /// place, since renaming over it would replace the device.
    Special {
        path: PathBuf,
        identity: PathBuf,
    },
}

/// The outputs asked for, validated before anything is computed: no two outputs name one file,
/// none names the model, at most one claims stdout, and every file's directory exists.
#[derive(Default)]
struct OutputPlan {
    targets: Vec<(&'static str, Target)>,
}

impl OutputPlan {
    /// Validates `--OPTION PATH` and adds it to the plan.
    fn add(&mut self, option: &'static str, path: &Path, model: &Path) -> Result<(), Failure> {
        let target = if is_stdout(path) {
            if let Some((other, _)) = self.targets.iter().find(|(_, t)| *t == Target::Stdout) {
                return Err(Failure::bad_input(format!(
                    "--{option} -: stdout is already taken by --{other} -; only one output can go \
                     to stdout, write the other to a file"
                )));
            }
            Target::Stdout
        } else {
            let identity = file_identity(option, path)?;
            if file_identity("", model).is_ok_and(|m| m == identity) {
                return Err(Failure::bad_input(format!(
                    "--{option} {}: that is the model file; choose another path",
                    path.display()
                )));
            }
            for (other, target) in &self.targets {
                let seen = match target {
                    Target::File { identity, .. } | Target::Special { identity, .. } => identity,
                    Target::Stdout => continue,
                };
                if *seen == identity {
                    return Err(Failure::bad_input(format!(
                        "--{option} {}: --{other} writes the same file; give each output its own \
                         path",
                        path.display()
                    )));
                }
            }
            let special = std::fs::metadata(&identity).is_ok_and(|m| !m.is_file());
            if special {
                Target::Special { path: path.to_path_buf(), identity }
            } else {
                Target::File { path: path.to_path_buf(), identity }
            }
        };
        self.targets.push((option, target));
        Ok(())
    }
    fn claims_stdout(&self) -> bool {
        self.targets.iter().any(|(_, t)| *t == Target::Stdout)
    }
}

/// The canonical parent directory of `path` joined with its file name; fails when the path
/// names no file or its directory does not exist.
fn file_identity(option: &str, path: &Path) -> Result<PathBuf, Failure> {
    let shown = if option.is_empty() {
        path.display().to_string()
    } else {
        format!("--{option} {}", path.display())
    };
    let Some(file_name) = path.file_name() else {
        return Err(Failure::bad_input(format!("{shown}: not a file name")));
    };
    let parent = match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    let dir = parent.canonicalize().map_err(|err| {
        Failure::bad_input(format!(
            "{shown}: the directory {} is unusable: {err}",
            parent.display()
        ))
    })?;
    if !dir.is_dir() {
        return Err(Failure::bad_input(format!(
            "{shown}: {} is not a directory",
            parent.display()
        )));
    }
    let res = dir.join(file_name);
    if res.is_dir() {
        return Err(Failure::bad_input(format!("{shown}: that is a directory")));
    }
    Ok(res)
}

/// The outputs of one run, each produced in full before anything is written.
struct Outputs {
    plan: OutputPlan,
    texts: Vec<(Target, String)>,
}

impl Outputs {
    fn new(plan: OutputPlan) -> Outputs {
        Outputs { plan, texts: Vec::new() }
    }
    /// The text of the output that `option` named in the plan; nothing if it was not asked for.
    fn set(&mut self, option: &str, text: impl FnOnce() -> String) {
        if let Some((_, target)) = self.plan.targets.iter().find(|(o, _)| *o == option) {
            self.texts.push((target.clone(), text()));
        }
    }
    /// The readable report goes to stdout when no other output claims it.
    fn report_unless_stdout_taken(&mut self, report: impl FnOnce() -> String) {
        if !self.plan.claims_stdout() {
            self.texts.push((Target::Stdout, report()));
        }
    }
    /// Writes every output all-or-nothing: each file first goes to a temporary file beside it,
    /// then stdout and special files are written, and only when all of that succeeded are the
    /// temporary files renamed over their targets. A failure removes the temporary files and
    /// leaves every previous file as it was.
    fn write(self) -> Result<(), Failure> {
        // From here on the watchdog lets the run finish: stopping it now could leave a
        // temporary file behind.
        WRITING.store(true, std::sync::atomic::Ordering::SeqCst);
        let mut staged: Vec<(PathBuf, PathBuf)> = Vec::new();
        let discard = |staged: &[(PathBuf, PathBuf)]| {
            for (temp, _) in staged {
                let _ = std::fs::remove_file(temp);
            }
        };
        for (target, text) in &self.texts {
            let Target::File { path, identity } = target else { continue };
            let temp = temp_path(identity);
            if let Err(err) = write_synced(&temp, text) {
                let _ = std::fs::remove_file(&temp);
                discard(&staged);
                return Err(Failure::infeasible(format!(
                    "cannot write {}: {err}; no output was changed",
                    path.display()
                )));
            }
            staged.push((temp, path.clone()));
        }
        for (target, text) in &self.texts {
            let (shown, result) = match target {
                Target::File { .. } => continue,
                Target::Stdout => {
                    let mut stdout = std::io::stdout().lock();
                    (
                        "stdout".to_string(),
                        stdout.write_all(text.as_bytes()).and_then(|()| stdout.flush()),
                    )
                }
                Target::Special { path, identity } => (
                    path.display().to_string(),
                    std::fs::OpenOptions::new()
                        .write(true)
                        .open(identity)
                        .and_then(|mut file| file.write_all(text.as_bytes())),
                ),
            };
            match result {
                // A closed pipe (`cleave derive m.clv | head`) is the reader's choice.
                Err(err) if err.kind() != std::io::ErrorKind::BrokenPipe => {
                    discard(&staged);
                    return Err(Failure::infeasible(format!(
                        "cannot write to {shown}: {err}; no output file was changed"
                    )));
                }
                _ => {}
            }
        }
        for (idx, (temp, path)) in staged.iter().enumerate() {
            if let Err(err) = std::fs::rename(temp, path) {
                discard(&staged[idx..]);
                return Err(Failure::infeasible(format!(
                    "cannot replace {}: {err}",
                    path.display()
                )));
            }
        }
        Ok(())
    }
}

/// A temporary name beside `identity` (same directory, so the rename is atomic), hidden and
/// marked with the process id.
fn temp_path(identity: &Path) -> PathBuf {
    let name = identity.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default();
    identity.with_file_name(format!(".{name}.{}.cleave-tmp", std::process::id()))
}

/// Writes `text` to a new file at `path` and waits until it is on disk.
fn write_synced(path: &Path, text: &str) -> std::io::Result<()> {
    let mut file = std::fs::File::create(path)?;
    file.write_all(text.as_bytes())?;
    file.sync_all()
}

/// Set once outputs are being written; the watchdog then no longer stops the run.
static WRITING: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// A thread that ends the process with exit status 1 and a message once the run exceeds its
/// [`Budget`]; it stops watching when dropped, at the end of [`run`].
struct Watchdog {
    done: Option<std::sync::Arc<std::sync::atomic::AtomicBool>>,
}

impl Watchdog {
    fn start(budget: Budget) -> Watchdog {
        use std::sync::atomic::{AtomicBool, Ordering};
        if budget.max_seconds.is_none() && budget.max_memory.is_none() {
            return Watchdog { done: None };
        }
        WRITING.store(false, Ordering::SeqCst);
        let done = std::sync::Arc::new(AtomicBool::new(false));
        let seen_done = done.clone();
        let start = std::time::Instant::now();
        std::thread::spawn(move || loop {
            std::thread::sleep(std::time::Duration::from_millis(20));
            if seen_done.load(Ordering::SeqCst) || WRITING.load(Ordering::SeqCst) {
                return;
            }
            let elapsed = start.elapsed().as_secs();
            let over_time = budget
                .max_seconds
                .filter(|&s| elapsed >= s)
                .map(|s| format!("stopped after {s} s (--max-seconds {s})"));
            let over_memory = budget.max_memory.and_then(|m| {
                let used = resident_mib()?;
                (used > m).then(|| format!("stopped at {used} MiB in use (--max-memory {m})"))
            });
            if let Some(why) = over_time.or(over_memory) {
                let _ = std::io::stderr().write_all(
                    format!(
                        "{why}; nothing was written. Lower the order, focus on fewer levels \
                         (`focus`), keep to one sector, cut oscillators shorter, or write fixed \
                         numbers for some parameters\n"
                    )
                    .as_bytes(),
                );
                std::process::exit(1);
            }
        });
        Watchdog { done: Some(done) }
    }
}

impl Drop for Watchdog {
    fn drop(&mut self) {
        if let Some(done) = &self.done {
            done.store(true, std::sync::atomic::Ordering::SeqCst);
        }
    }
}

/// Resident memory of this process in MiB, where `/proc` tells it.
fn resident_mib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let kib: u64 = status
        .lines()
        .find_map(|l| l.strip_prefix("VmRSS:"))?
        .trim()
        .trim_end_matches("kB")
        .trim()
        .parse()
        .ok()?;
    Some(kib / 1024)
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
