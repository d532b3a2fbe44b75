//! Numeric verification of a derivation against exact diagonalization; the only home of `f64`.
//! Start from [`verify`]; [`evaluate`] turns an exact value into a complex number.

use crate::engine::Derivation;
use crate::exact::{RatFunc, Rational};
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

/// The value of `value` at the parameter values `params` (indexed by `ParamId`), as `(re, im)`;
/// `None` where the denominator vanishes.
pub fn evaluate(value: &RatFunc, params: &[f64]) -> Option<(f64, f64)> {
    let numer = evaluate_poly(value.numer(), params);
    let denom = evaluate_poly(value.denom(), params);
    let norm = denom.0 * denom.0 + denom.1 * denom.1;
    if norm == 0.0 {
        return None;
    }
    Some((
        (numer.0 * denom.0 + numer.1 * denom.1) / norm,
        (numer.1 * denom.0 - numer.0 * denom.1) / norm,
    ))
}

/// Like [`evaluate`] with values given by parameter name; parameters without a value are `None`.
pub fn evaluate_named(
    value: &RatFunc,
    names: &[String],
    at: &[(String, Rational)],
) -> Option<(f64, f64)> {
    let params: Option<Vec<f64>> =
        names.iter().map(|n| at.iter().find(|(m, _)| m == n).map(|(_, v)| v.to_f64())).collect();
    evaluate(value, &params?)
}

fn evaluate_poly(poly: &crate::exact::Poly, params: &[f64]) -> (f64, f64) {
    let (mut re, mut im) = (0.0, 0.0);
    for (monomial, coeff) in poly.terms() {
        let mut factor = 1.0;
        for (p, e) in monomial.factors() {
            factor *= params[p.0 as usize].powi(*e as i32);
        }
        for (s, c) in coeff.terms() {
            let root = (s.unsigned_abs() as f64).sqrt() * c.to_f64() * factor;
            if *s < 0 {
                im += root;
            } else {
                re += root;
            }
        }
    }
    (re, im)
}
