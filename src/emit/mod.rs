//! Output formats, each a pure function of a computed result: report, JSON, LaTeX, Rust.
//! Start from [`report`] and [`json`]. Emitters never recompute anything; they know nothing of
//! parsing, files or engine internals.

mod check;
mod json;
mod report;
mod text;

pub use check::{check_plot, check_report};
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

/// The LaTeX of `cleave derive --latex`.
pub fn latex(model: &Model, derivation: &Derivation, name: &str, options: &LatexOptions) -> String {
    let _ = (model, derivation, name, options);
    unimplemented!()
}

/// The Rust module of `cleave derive --rust`.
pub fn rust(model: &Model, derivation: &Derivation, name: &str) -> String {
    let _ = (model, derivation, name);
    unimplemented!()
}
