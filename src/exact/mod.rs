//! Exact scalars: the `Field` trait and its instances.
//! Start from [`Field`]; [`Rational`] is the base, [`Radical`] adjoins `i` and square roots of
//! rationals, [`RatFunc`] is a rational function of the real parameters over [`Radical`].
//! This module knows nothing of matrices, physics, output formats or floating point.
#![deny(clippy::float_arithmetic)]

mod algebraic;
pub mod angular;
pub mod factor;
mod fraction;
mod poly;
mod radical;
mod ratfunc;
mod rational;
pub mod roots;
pub(crate) mod screen;
mod size;
pub mod univariate;

use std::fmt::Debug;
use std::ops::{Add, AddAssign, Mul, MulAssign, Neg, Sub, SubAssign};

pub use algebraic::{Algebraic, ALPHA};
pub use fraction::Fraction;
pub use poly::{Monomial, Poly};
pub use radical::{split_square, Radical, Radicand};
pub use ratfunc::RatFunc;
pub use rational::Rational;
pub use size::{ValueSize, MAX_PRODUCT_WORK, MAX_VALUE_BITS, MAX_VALUE_TERMS};

/// Index of a real parameter (`param g`) in the model's parameter list.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct ParamId(pub u32);

/// A commutative field of characteristic zero with exact arithmetic.
///
/// # Laws
/// For all `a`, `b`, `c`: `+` and `*` are associative and commutative, `*` distributes over `+`,
/// `zero()` and `one()` are the identities, `a + (-a) == zero()`, and `a.inv()` is `Some(b)` with
/// `a * b == one()` exactly when `!a.is_zero()`. Values are stored in a canonical form, so `==` is
/// equality of the numbers they denote. `conj` is complex conjugation (`i -> -i`); it fixes every
/// real parameter and is an automorphism.
///
/// `zero` and `one` are functions rather than associated constants because bignum values cannot be
/// constants.
pub trait Field:
    Clone
    + Eq
    + Debug
    + Send
    + Sync
    + 'static
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Neg<Output = Self>
    + for<'a> Add<&'a Self, Output = Self>
    + for<'a> Sub<&'a Self, Output = Self>
    + for<'a> Mul<&'a Self, Output = Self>
    + for<'a> AddAssign<&'a Self>
    + for<'a> SubAssign<&'a Self>
    + for<'a> MulAssign<&'a Self>
{
    /// The additive identity.
    fn zero() -> Self;
    /// The multiplicative identity.
    fn one() -> Self;
    /// Whether this is the additive identity.
    fn is_zero(&self) -> bool;
    /// The multiplicative inverse, `None` for zero.
    fn inv(&self) -> Option<Self>;
    /// The image of a rational number.
    fn from_rational(value: &Rational) -> Self;
    /// Complex conjugate (`i -> -i`); real parameters are fixed.
    fn conj(&self) -> Self;
    /// `self * other` without consuming either operand.
    fn mul_ref(&self, other: &Self) -> Self {
        self.clone() * other
    }
    /// The image of an integer.
    fn from_i64(value: i64) -> Self {
        Self::from_rational(&Rational::from_i64(value))
    }
    /// Whether this is the multiplicative identity.
    fn is_one(&self) -> bool {
        *self == Self::one()
    }
    /// `self / other`, `None` when `other` is zero.
    fn checked_div(&self, other: &Self) -> Option<Self> {
        other.inv().map(|inv| self.mul_ref(&inv))
    }
    /// The sum of `values`. A field whose additions cost more when done one by one (fractions
    /// brought to a common denominator each time) overrides it to do that work once.
    fn sum_of(values: Vec<Self>) -> Self {
        values.into_iter().fold(Self::zero(), |acc, v| acc + &v)
    }
    /// Embeds the value into the most general scalar type, the one every output reads.
    fn to_ratfunc(&self) -> RatFunc;
}

/// A field in which some elements have square roots that stay inside it.
pub trait SquareRoot: Field {
    /// A square root inside the field, if there is one (either sign may be returned).
    fn sqrt(&self) -> Option<Self>;
}

/// Implements the owned/borrowed pairings of `+ - *` and the assigning forms for a type whose
/// `add_ref`, `sub_ref`, `mul_ref_impl` and `neg_ref` helpers do the work.
macro_rules! forward_ops {
    ($t:ty) => {
        impl std::ops::Add<&$t> for &$t {
            type Output = $t;
            fn add(self, rhs: &$t) -> $t {
                self.add_ref(rhs)
            }
        }
        impl std::ops::Add<$t> for $t {
            type Output = $t;
            fn add(self, rhs: $t) -> $t {
                self.add_ref(&rhs)
            }
        }
        impl std::ops::Add<&$t> for $t {
            type Output = $t;
            fn add(self, rhs: &$t) -> $t {
                self.add_ref(rhs)
            }
        }
        impl std::ops::Add<$t> for &$t {
            type Output = $t;
            fn add(self, rhs: $t) -> $t {
                self.add_ref(&rhs)
            }
        }
        impl std::ops::Sub<&$t> for &$t {
            type Output = $t;
            fn sub(self, rhs: &$t) -> $t {
                self.sub_ref(rhs)
            }
        }
        impl std::ops::Sub<$t> for $t {
            type Output = $t;
            fn sub(self, rhs: $t) -> $t {
                self.sub_ref(&rhs)
            }
        }
        impl std::ops::Sub<&$t> for $t {
            type Output = $t;
            fn sub(self, rhs: &$t) -> $t {
                self.sub_ref(rhs)
            }
        }
        impl std::ops::Sub<$t> for &$t {
            type Output = $t;
            fn sub(self, rhs: $t) -> $t {
                self.sub_ref(&rhs)
            }
        }
        impl std::ops::Mul<&$t> for &$t {
            type Output = $t;
            fn mul(self, rhs: &$t) -> $t {
                self.mul_ref_impl(rhs)
            }
        }
        impl std::ops::Mul<$t> for $t {
            type Output = $t;
            fn mul(self, rhs: $t) -> $t {
                self.mul_ref_impl(&rhs)
            }
        }
        impl std::ops::Mul<&$t> for $t {
            type Output = $t;
            fn mul(self, rhs: &$t) -> $t {
                self.mul_ref_impl(rhs)
            }
        }
        impl std::ops::Mul<$t> for &$t {
            type Output = $t;
            fn mul(self, rhs: $t) -> $t {
                self.mul_ref_impl(&rhs)
            }
        }
        impl std::ops::Neg for $t {
            type Output = $t;
            fn neg(self) -> $t {
                self.neg_ref()
            }
        }
        impl std::ops::Neg for &$t {
            type Output = $t;
            fn neg(self) -> $t {
                self.neg_ref()
            }
        }
        impl std::ops::AddAssign<&$t> for $t {
            fn add_assign(&mut self, rhs: &$t) {
                *self = self.add_ref(rhs);
            }
        }
        impl std::ops::SubAssign<&$t> for $t {
            fn sub_assign(&mut self, rhs: &$t) {
                *self = self.sub_ref(rhs);
            }
        }
        impl std::ops::MulAssign<&$t> for $t {
            fn mul_assign(&mut self, rhs: &$t) {
                *self = self.mul_ref_impl(rhs);
            }
        }
    };
}
pub(crate) use forward_ops;

/// The term-by-term sum of two sparse term lists sorted by `order` (first term first), dropping
/// terms that cancel: the addition of both [`Poly`] and [`Radical`].
pub(crate) fn merge_sum<K: Clone, V: Field>(
    left: &[(K, V)],
    right: &[(K, V)],
    order: impl Fn(&K, &K) -> std::cmp::Ordering,
    add: impl Fn(&V, &V) -> V,
) -> Vec<(K, V)> {
    use std::cmp::Ordering;
    let mut res = Vec::with_capacity(left.len() + right.len());
    let (mut a, mut b) = (left.iter().peekable(), right.iter().peekable());
    loop {
        match (a.peek(), b.peek()) {
            (Some((m, c)), Some((n, d))) => match order(m, n) {
                Ordering::Less => {
                    res.push((m.clone(), c.clone()));
                    a.next();
                }
                Ordering::Greater => {
                    res.push((n.clone(), d.clone()));
                    b.next();
                }
                Ordering::Equal => {
                    let sum = add(c, d);
                    if !sum.is_zero() {
                        res.push((m.clone(), sum));
                    }
                    a.next();
                    b.next();
                }
            },
            (Some(term), None) => {
                res.push((*term).clone());
                a.next();
            }
            (None, Some(term)) => {
                res.push((*term).clone());
                b.next();
            }
            (None, None) => break,
        }
    }
    res
}

/// The laws of [`Field`] on three values, for the property tests of every instance; returns the
/// first law that fails.
#[cfg(test)]
pub(crate) fn field_law_failure<F: Field>(a: &F, b: &F, c: &F) -> Option<&'static str> {
    let checks: [(&'static str, bool); 8] = [
        ("associative +", (a.clone() + b) + c == a.clone() + &(b.clone() + c)),
        ("associative *", (a.clone() * b) * c == a.clone() * &(b.clone() * c)),
        ("commutative +", a.clone() + b == b.clone() + a),
        ("commutative *", a.clone() * b == b.clone() * a),
        ("distributive", a.clone() * &(b.clone() + c) == a.clone() * b + a.clone() * c),
        ("additive inverse", (a.clone() - a).is_zero()),
        ("multiplicative inverse", a.inv().map_or(a.is_zero(), |inv| (a.clone() * &inv).is_one())),
        ("conjugation is multiplicative", (a.clone() * b).conj() == a.conj() * b.conj()),
    ];
    checks.iter().find(|(_, holds)| !holds).map(|(law, _)| *law)
}

/// Names used when printing values that mention parameters: `names[p.0]` is the name of `ParamId(p)`.
#[derive(Clone, Copy, Debug)]
pub struct Symbols<'a> {
    /// Parameter names, indexed by `ParamId`.
    pub names: &'a [String],
}
