//! Output formats, each a pure function of a computed result: report, JSON, LaTeX, Rust.
//! Start from [`report()`] and [`json()`]; [`latex()`] and [`rust()`] write a paper's tables and code
//! to embed; [`diagram()`] draws levels against lambda. Emitters never recompute anything; they know nothing of
//! parsing, files or engine internals.

mod check;
mod diagram;
mod json;
mod latex;
mod operators;
mod report;
mod rust;
mod terms;
mod text;

pub use check::{check_plot, check_report};
pub use diagram::diagram;
pub use json::{json, levels_json};
pub use report::{levels_report, report};

use crate::engine::Derivation;
use crate::exact::Rational;
use crate::model::Model;

/// Numeric values of parameters for printing numbers beside exact coefficients (`--at`).
pub type ParamValues = Vec<(String, Rational)>;

/// Options of the LaTeX emitter.
#[derive(Clone, Debug, Default)]
pub struct LatexOptions {
    /// Write a complete document instead of a fragment to `\input`.
    pub standalone: bool,
    /// Parameter values for numeric columns.
    pub at: ParamValues,
}

/// The LaTeX of `cleave derive --latex`: a fragment to `\input` (needing the packages amsmath
/// and booktabs), or with `options.standalone` a complete document.
pub fn latex(model: &Model, derivation: &Derivation, name: &str, options: &LatexOptions) -> String {
    latex::latex(model, derivation, name, options)
}

/// The Rust module of `cleave derive --rust`: std-only code with a function per branch and per
/// effective Hamiltonian, and the table-driven `energy(index, lambda, params)`.
pub fn rust(model: &Model, derivation: &Derivation, name: &str) -> String {
    rust::rust(model, derivation, name)
}
