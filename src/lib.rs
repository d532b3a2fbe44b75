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

/// Where a failed derivation points in its model: a [`Diagnostic`] at the focus line or quantity
/// term it names, at the `order` statement, or at the statement the engine most likely means
/// ([`lower::SourceMap::engine_input`]). `None` for errors that are not about the text: a
/// computation that cannot be done, or an order given from outside the model (`order_given`).
pub fn locate_engine_error(
    source_map: &lower::SourceMap,
    err: &engine::EngineError,
    order_given: bool,
) -> Option<Diagnostic> {
    use engine::EngineError;
    let fallback = source_map.engine_input();
    let (message, span) = match err {
        EngineError::Infeasible(_) => return None,
        EngineError::BadOrder(_) if order_given => return None,
        EngineError::BadOrder(why) => (why, source_map.order?),
        EngineError::BadFocus { line, message } => {
            (message, source_map.focus.get(*line).copied().unwrap_or(fallback))
        }
        EngineError::BadQuantity { quantity, term, message } => {
            let span = source_map
                .quantities
                .get(*quantity)
                .map(|(whole, terms)| terms.get(*term).copied().unwrap_or(*whole));
            (message, span.unwrap_or(fallback))
        }
        EngineError::BadInput(why) => (why, fallback),
    };
    Some(Diagnostic::new(message.clone(), span))
}
