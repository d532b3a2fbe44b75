//! STUB — to be replaced: rational functions of the parameters over `Radical`, in lowest terms.
use std::fmt;

use super::{forward_ops, Field, ParamId, Poly, Radical, Rational, SquareRoot, Symbols};

/// A rational function `numer / denom` of the real parameters with `Radical` coefficients, always
/// in lowest terms with a normalized denominator, so `==` is equality of functions.
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug)]
pub struct RatFunc {
    numer: Poly,
    denom: Poly,
}

impl RatFunc {
    /// The parameter `p` as a function.
    pub fn param(_p: ParamId) -> RatFunc {
        unimplemented!()
    }
    /// A constant.
    pub fn constant(_value: Radical) -> RatFunc {
        unimplemented!()
    }
    /// The constant value when no parameter appears.
    pub fn as_constant(&self) -> Option<Radical> {
        unimplemented!()
    }
    /// The numerator (lowest terms).
    pub fn numer(&self) -> &Poly {
        &self.numer
    }
    /// The denominator (lowest terms, normalized).
    pub fn denom(&self) -> &Poly {
        &self.denom
    }
    /// Integer power; `None` for a negative power of zero.
    pub fn pow(&self, _exponent: i32) -> Option<RatFunc> {
        unimplemented!()
    }
    /// Prints in contract syntax (`-21/8*g^2`, `sqrt(2)*t/3`) with the given parameter names.
    pub fn display<'a>(&'a self, symbols: Symbols<'a>) -> impl fmt::Display + 'a {
        let _ = symbols;
        struct D;
        impl fmt::Display for D {
            fn fmt(&self, _f: &mut fmt::Formatter<'_>) -> fmt::Result {
                unimplemented!()
            }
        }
        D
    }
    fn add_ref(&self, _rhs: &RatFunc) -> RatFunc {
        unimplemented!()
    }
    fn sub_ref(&self, _rhs: &RatFunc) -> RatFunc {
        unimplemented!()
    }
    fn mul_ref_impl(&self, _rhs: &RatFunc) -> RatFunc {
        unimplemented!()
    }
    fn neg_ref(&self) -> RatFunc {
        unimplemented!()
    }
}
forward_ops!(RatFunc);

impl Field for RatFunc {
    fn zero() -> RatFunc {
        unimplemented!()
    }
    fn one() -> RatFunc {
        unimplemented!()
    }
    fn is_zero(&self) -> bool {
        unimplemented!()
    }
    fn inv(&self) -> Option<RatFunc> {
        unimplemented!()
    }
    fn from_rational(_value: &Rational) -> RatFunc {
        unimplemented!()
    }
    fn conj(&self) -> RatFunc {
        unimplemented!()
    }
    fn to_ratfunc(&self) -> RatFunc {
        self.clone()
    }
}

impl SquareRoot for RatFunc {
    fn sqrt(&self) -> Option<RatFunc> {
        unimplemented!()
    }
}
