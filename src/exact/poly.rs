//! STUB — to be replaced: sparse multivariate polynomials in the parameters over `Radical`.
use super::{ParamId, Radical};

/// A monomial: `(parameter, exponent)` pairs sorted by parameter, exponents positive.
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug, Default)]
pub struct Monomial(Vec<(ParamId, u32)>);

impl Monomial {
    /// The `(parameter, exponent)` pairs.
    pub fn factors(&self) -> &[(ParamId, u32)] {
        &self.0
    }
}

/// A polynomial: monomials in canonical order with non-zero `Radical` coefficients.
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug, Default)]
pub struct Poly {
    terms: Vec<(Monomial, Radical)>,
}

impl Poly {
    /// The terms in canonical order.
    pub fn terms(&self) -> &[(Monomial, Radical)] {
        &self.terms
    }
}
