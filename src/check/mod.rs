//! Numeric verification of a derivation against exact diagonalization; the only home of `f64`.
//! Start from [`verify`].

use crate::engine::Derivation;
use crate::exact::Rational;
use crate::model::Model;

/// Options of `cleave check`.
#[derive(Clone, Debug, Default)]
pub struct CheckOptions {
    /// Parameter values by name; parameters not given get a default.
    pub at: Vec<(String, Rational)>,
}

/// The outcome of a numeric verification.
#[derive(Clone, Debug)]
pub struct Verification {
    /// Per branch (in JSON order), the fitted log-log slope of the error against lambda.
    pub slopes: Vec<f64>,
}

/// Compares every branch of `derivation` with exact diagonalization of `H0 + lambda V`.
pub fn verify(model: &Model, derivation: &Derivation, options: &CheckOptions) -> Verification {
    let _ = (model, derivation, options);
    unimplemented!()
}
