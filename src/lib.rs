//! cleave: exact perturbation theory for small model Hamiltonians.
//!
//! The library turns model text into exact perturbation series and writes them out; it does no
//! I/O of its own. Read `DEVELOPERS.md` for the map; the modules to start from are
//! [`syntax`] (text to tree), [`lower`] (tree to [`model::Model`]), [`engine`] (model to
//! [`engine::Derivation`]) and [`emit`] (derivation to report, JSON, LaTeX, Rust).
//!
//! A tour from text to results: a spin 1 with an axial anisotropy `D` in a transverse field `B`,
//! whose doublet `m = ±1` splits only at second order.
//!
//! ```
//! let text = "param D > 0, B\nspace s = spin(1)\nH0 = D * s.z^2\nV = B * s.x\nfocus D\n";
//! let (model, _spans) = cleave::load(text).expect("a valid model");
//! let derivation = cleave::engine::derive(&model, &cleave::engine::DeriveOptions::new(4))
//!     .expect("derivable");
//! let doublet = &derivation.model_spaces[0];
//! assert_eq!(doublet.branches.len(), 2);
//! assert!(doublet.branches.iter().all(|b| b.split_at == Some(2)));
//! let report = cleave::emit::report(&model, &derivation, "axial.clv", &Vec::new());
//! assert!(report.contains("B^2/D"));
//! let json = cleave::emit::json(&model, &derivation);
//! assert!(json.contains("\"split_at\": 2"));
//! let options = cleave::emit::LatexOptions { standalone: false, at: Vec::new() };
//! let latex = cleave::emit::latex(&model, &derivation, "axial.clv", &options);
//! assert!(latex.contains("\\begin{tabular}"));
//! ```
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
