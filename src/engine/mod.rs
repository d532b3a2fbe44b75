//! The expansion engine: effective Hamiltonians, branches and states, order by order.
//! Start from [`derive`]. Knows no output format.
#![deny(clippy::float_arithmetic)]

use crate::model::Model;

/// Options of one derivation.
#[derive(Clone, Debug)]
pub struct DeriveOptions {
    /// The order N in lambda.
    pub order: u32,
}

/// Everything derived for one model, to one order; every output reads this value.
#[derive(Clone, Debug)]
pub struct Derivation {
    /// The order N.
    pub order: u32,
}

/// Why a derivation could not be done.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum EngineError {
    /// A computation that cannot be done, with what the user can change.
    Infeasible(String),
    /// A problem with the input that the user must fix (a focus energy that is no level, ...).
    BadInput(String),
}

impl std::fmt::Display for EngineError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            EngineError::Infeasible(why) | EngineError::BadInput(why) => write!(f, "{why}"),
        }
    }
}

/// Derives the perturbation series of `model` to `options.order`.
pub fn derive(model: &Model, options: &DeriveOptions) -> Result<Derivation, EngineError> {
    let _ = (model, options);
    unimplemented!()
}
