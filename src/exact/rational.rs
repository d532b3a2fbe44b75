//! Exact rational numbers, a newtype over `num_rational::BigRational` reduced on construction.

use std::cmp::Ordering;
use std::fmt;

use num_bigint::BigInt;
use num_integer::Integer;
use num_rational::BigRational;
use num_traits::{One, Signed, ToPrimitive, Zero};

use super::{forward_ops, Field, RatFunc, SquareRoot};

/// An exact rational number in lowest terms with a positive denominator.
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
pub struct Rational(BigRational);

impl Rational {
    /// `numer / denom`; `None` when `denom` is zero.
    pub fn new(numer: BigInt, denom: BigInt) -> Option<Rational> {
        if denom.is_zero() {
            None
        } else {
            Some(Rational(BigRational::new(numer, denom)))
        }
    }
    /// The integer `value`.
    pub fn from_i64(value: i64) -> Rational {
        Rational(BigRational::from_integer(BigInt::from(value)))
    }
    /// The integer `value`.
    pub fn from_bigint(value: BigInt) -> Rational {
        Rational(BigRational::from_integer(value))
    }
    /// `numer / denom` for machine integers; `None` when `denom` is zero.
    pub fn ratio(numer: i64, denom: i64) -> Option<Rational> {
        Rational::new(BigInt::from(numer), BigInt::from(denom))
    }
    /// The numerator (carries the sign).
    pub fn numer(&self) -> &BigInt {
        self.0.numer()
    }
    /// The denominator (always positive).
    pub fn denom(&self) -> &BigInt {
        self.0.denom()
    }
    /// Whether the value is an integer.
    pub fn is_integer(&self) -> bool {
        self.0.is_integer()
    }
    /// Whether the value is negative.
    pub fn is_negative(&self) -> bool {
        self.0.is_negative()
    }
    /// Whether the value is positive.
    pub fn is_positive(&self) -> bool {
        self.0.is_positive()
    }
    /// The absolute value.
    pub fn abs(&self) -> Rational {
        Rational(self.0.abs())
    }
    /// `-1`, `0` or `1`.
    pub fn signum(&self) -> i32 {
        match self.0.cmp(&BigRational::zero()) {
            Ordering::Less => -1,
            Ordering::Equal => 0,
            Ordering::Greater => 1,
        }
    }
    /// Integer power; negative exponents invert (`None` for `0^-k`).
    pub fn pow(&self, exponent: i32) -> Option<Rational> {
        if exponent < 0 && self.0.is_zero() {
            return None;
        }
        Some(Rational(num_traits::Pow::pow(&self.0, exponent)))
    }
    /// The value as an `i64` when it is an integer that fits.
    pub fn to_i64(&self) -> Option<i64> {
        if self.0.is_integer() {
            self.0.numer().to_i64()
        } else {
            None
        }
    }
    /// The nearest `f64` (a conversion, not arithmetic; used by numeric checks and emitters).
    pub fn to_f64(&self) -> f64 {
        self.0.to_f64().unwrap_or(f64::NAN)
    }
    /// The underlying `BigRational`.
    pub fn as_big(&self) -> &BigRational {
        &self.0
    }
    /// Wraps a `BigRational` (always reduced by `num_rational`).
    pub fn from_big(value: BigRational) -> Rational {
        Rational(value)
    }
    /// Least common multiple of the denominators and gcd of the numerators is what callers need to
    /// clear fractions; this returns `lcm(self.denom, other)` helper for such loops.
    pub fn denom_lcm(&self, acc: &BigInt) -> BigInt {
        self.0.denom().lcm(acc)
    }

    fn add_ref(&self, rhs: &Rational) -> Rational {
        Rational(&self.0 + &rhs.0)
    }
    fn sub_ref(&self, rhs: &Rational) -> Rational {
        Rational(&self.0 - &rhs.0)
    }
    fn mul_ref_impl(&self, rhs: &Rational) -> Rational {
        Rational(&self.0 * &rhs.0)
    }
    fn neg_ref(&self) -> Rational {
        Rational(-&self.0)
    }
}

forward_ops!(Rational);

impl Field for Rational {
    fn zero() -> Rational {
        Rational(BigRational::zero())
    }
    fn one() -> Rational {
        Rational(BigRational::one())
    }
    fn is_zero(&self) -> bool {
        self.0.is_zero()
    }
    fn is_one(&self) -> bool {
        self.0.is_one()
    }
    fn inv(&self) -> Option<Rational> {
        if self.0.is_zero() {
            None
        } else {
            Some(Rational(self.0.recip()))
        }
    }
    fn from_rational(value: &Rational) -> Rational {
        value.clone()
    }
    fn conj(&self) -> Rational {
        self.clone()
    }
    fn mul_ref(&self, other: &Rational) -> Rational {
        self.mul_ref_impl(other)
    }
    fn to_ratfunc(&self) -> RatFunc {
        RatFunc::from_rational(self)
    }
}

impl SquareRoot for Rational {
    fn sqrt(&self) -> Option<Rational> {
        if self.is_negative() {
            return None;
        }
        let n = self.0.numer().sqrt();
        let d = self.0.denom().sqrt();
        if &(&n * &n) == self.0.numer() && &(&d * &d) == self.0.denom() {
            Some(Rational(BigRational::new(n, d)))
        } else {
            None
        }
    }
}

/// Contract syntax: `3`, `-21/8`.
impl fmt::Display for Rational {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.0.is_integer() {
            write!(f, "{}", self.0.numer())
        } else {
            write!(f, "{}/{}", self.0.numer(), self.0.denom())
        }
    }
}

impl fmt::Debug for Rational {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(self, f)
    }
}

impl From<i64> for Rational {
    fn from(value: i64) -> Rational {
        Rational::from_i64(value)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn small_rational() -> impl Strategy<Value = Rational> {
        (-6i64..=6, 1i64..=6).prop_map(|(n, d)| Rational::ratio(n, d).expect("d is positive"))
    }

    #[test]
    fn square_roots_and_display() {
        let q = |n, d| Rational::ratio(n, d).expect("non-zero denominator");
        assert_eq!(q(9, 4).sqrt(), Some(q(3, 2)));
        assert_eq!(q(2, 1).sqrt(), None);
        assert_eq!(q(-4, 1).sqrt(), None);
        assert_eq!(q(-42, 16).to_string(), "-21/8");
        assert_eq!(q(0, 5).inv(), None);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn field_laws(a in small_rational(), b in small_rational(), c in small_rational()) {
            prop_assert_eq!(crate::exact::field_law_failure(&a, &b, &c), None);
        }
    }
}
