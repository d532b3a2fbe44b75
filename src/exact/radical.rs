//! STUB — to be replaced: the field Q(i, sqrt 2, sqrt 3, ...) as sparse sums of c_s * sqrt(s).
use std::fmt;

use super::{forward_ops, Field, RatFunc, Rational, SquareRoot};

/// An element of Q(i, sqrt 2, sqrt 3, ...): a sum of `c_s * sqrt(s)` over square-free integers `s`
/// (`s = 1` is the rational part, `s = -1` is `i`, `s = -2` is `i*sqrt(2)`).
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug)]
pub struct Radical {
    terms: Vec<(i64, Rational)>,
}

impl Radical {
    /// `sqrt(value)` for any rational (negative values give `i*sqrt(|value|)`).
    pub fn sqrt_of(value: &Rational) -> Radical {
        let _ = value;
        unimplemented!()
    }
    /// The imaginary unit.
    pub fn i() -> Radical {
        unimplemented!()
    }
    /// The rational value, when there is no radical part.
    pub fn as_rational(&self) -> Option<Rational> {
        unimplemented!()
    }
    /// `(s, c_s)` pairs sorted by `s`, no zero coefficients.
    pub fn terms(&self) -> &[(i64, Rational)] {
        &self.terms
    }
    /// Whether the value is real (no term with negative `s`).
    pub fn is_real(&self) -> bool {
        unimplemented!()
    }
    fn add_ref(&self, _rhs: &Radical) -> Radical {
        unimplemented!()
    }
    fn sub_ref(&self, _rhs: &Radical) -> Radical {
        unimplemented!()
    }
    fn mul_ref_impl(&self, _rhs: &Radical) -> Radical {
        unimplemented!()
    }
    fn neg_ref(&self) -> Radical {
        unimplemented!()
    }
}
forward_ops!(Radical);

impl Field for Radical {
    fn zero() -> Radical {
        Radical { terms: Vec::new() }
    }
    fn one() -> Radical {
        unimplemented!()
    }
    fn is_zero(&self) -> bool {
        self.terms.is_empty()
    }
    fn inv(&self) -> Option<Radical> {
        unimplemented!()
    }
    fn from_rational(_value: &Rational) -> Radical {
        unimplemented!()
    }
    fn conj(&self) -> Radical {
        unimplemented!()
    }
    fn to_ratfunc(&self) -> RatFunc {
        RatFunc::constant(self.clone())
    }
}

impl SquareRoot for Radical {
    fn sqrt(&self) -> Option<Radical> {
        unimplemented!()
    }
}

/// Contract syntax: `3/2*sqrt(6) - i`.
impl fmt::Display for Radical {
    fn fmt(&self, _f: &mut fmt::Formatter<'_>) -> fmt::Result {
        unimplemented!()
    }
}
