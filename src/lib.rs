//! cleave: exact perturbation theory for small model Hamiltonians.
#![warn(missing_docs)]

pub mod check;
pub mod cli;
pub mod diagnostics;
pub mod emit;
pub mod engine;
pub mod exact;
pub mod linalg;
pub mod lower;
pub mod model;
pub mod spectrum;
pub mod syntax;

use diagnostics::Diagnostic;

/// Parses and lowers model text: the checked [`model::Model`] and where its parts were written.
/// Render an error with [`Diagnostic::render`], giving the same text and a display name.
pub fn load(text: &str) -> Result<(model::Model, lower::SourceMap), Diagnostic> {
    let file = syntax::parse(text)?;
    lower::lower(&file)
}
