//! Output formats, each a pure function of a computed result: report, JSON, LaTeX, Rust.
//! Knows nothing of parsing, files or engine internals.

use crate::engine::Derivation;
use crate::exact::Rational;
use crate::model::Model;
use crate::spectrum::Spectrum;

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

/// The readable text of `cleave levels`.
pub fn levels_report(model: &Model, spectrum: &Spectrum, name: &str) -> String {
    let _ = (model, spectrum, name);
    unimplemented!()
}

/// The JSON of `cleave levels --json`.
pub fn levels_json(model: &Model, spectrum: &Spectrum) -> String {
    let _ = (model, spectrum);
    unimplemented!()
}

/// The readable report of `cleave derive`.
pub fn report(model: &Model, derivation: &Derivation, name: &str, at: &ParamValues) -> String {
    let _ = (model, derivation, name, at);
    unimplemented!()
}

/// The JSON of `cleave derive --json`.
pub fn json(model: &Model, derivation: &Derivation) -> String {
    let _ = (model, derivation);
    unimplemented!()
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
