//! How large an exact value is: the bits of its largest rational coefficient and its number of
//! terms. The model language and the engine refuse values beyond [`MAX_VALUE_BITS`] and
//! [`MAX_VALUE_TERMS`] instead of running out of time or memory. Start from [`RatFunc::size`].

use super::{RatFunc, Rational};

/// The most bits a rational coefficient (numerator plus denominator) of a model value may take:
/// about 1200 decimal digits, far more than any physical constant needs.
pub const MAX_VALUE_BITS: u64 = 4096;

/// The most terms (numerator plus denominator) a scalar of a model may have.
pub const MAX_VALUE_TERMS: u64 = 1000;

/// The most work, in products of machine words, that one product of model values may take
/// (see [`ValueSize::product_work`]); about a second.
pub const MAX_PRODUCT_WORK: u64 = 4_000_000;

/// The size of an exact value.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct ValueSize {
    /// Bits of the largest rational coefficient, numerator and denominator together (none for
    /// the denominator of an integer).
    pub bits: u64,
    /// Terms of the numerator and denominator together.
    pub terms: u64,
    /// The total degree of the numerator and the denominator together.
    pub degree: u64,
    /// The parameters that occur, as a bit set of their ids modulo 64 (a bound on their number).
    pub params: u64,
}

impl ValueSize {
    /// Whether the size is within [`MAX_VALUE_BITS`] and [`MAX_VALUE_TERMS`].
    pub fn is_allowed(&self) -> bool {
        self.bits <= MAX_VALUE_BITS && self.terms <= MAX_VALUE_TERMS
    }
    /// The larger of two sizes in each measure.
    pub fn max(self, other: ValueSize) -> ValueSize {
        ValueSize {
            bits: self.bits.max(other.bits),
            terms: self.terms.max(other.terms),
            degree: self.degree.max(other.degree),
            params: self.params | other.params,
        }
    }

    /// An estimate of the work of `n_products` products of values of these sizes, in products
    /// of machine words: every pair of terms is multiplied and its coefficients reduced, which
    /// costs about the square of their length in words.
    pub fn product_work(&self, other: &ValueSize, n_products: u64) -> u64 {
        let words = 1 + self.bits.max(other.bits) / 64;
        self.terms
            .max(1)
            .saturating_mul(other.terms.max(1))
            .saturating_mul(n_products)
            .saturating_mul(words.saturating_mul(words))
    }

    /// An upper bound on the size of a sum of `n_products` products of a value of size `self`
    /// and one of size `other` (a matrix product has the inner dimension there; a scalar
    /// product 1), found without computing it: a product of `t1` and `t2` terms has at most
    /// `t1 t2` terms, and at most as many as there are monomials of its degree in its
    /// parameters; its coefficients add their bits and the bits of the number of summands.
    pub fn product_bound(&self, other: &ValueSize, n_products: u64) -> ValueSize {
        let params = self.params | other.params;
        let degree = self.degree.saturating_add(other.degree);
        let n_params = u64::from(params.count_ones());
        let monomials = binomial_saturating(degree.saturating_add(n_params), n_params);
        // Numerator and denominator of each factor multiply separately: twice the monomials.
        let terms = self
            .terms
            .saturating_mul(other.terms)
            .saturating_mul(n_products)
            .min(monomials.saturating_mul(2));
        let summands = self.terms.min(other.terms).saturating_mul(n_products).max(1);
        let bits = self.bits + other.bits + u64::from(64 - summands.leading_zeros());
        ValueSize { bits, terms, degree, params }
    }
}

/// The bits of the numerator plus those of the denominator (none for an integer).
fn rational_bits(value: &Rational) -> u64 {
    let denom = if value.is_integer() { 0 } else { value.denom().bits() };
    value.numer().bits() + denom
}

impl RatFunc {
    /// The bits of its largest rational coefficient and its number of terms.
    pub fn size(&self) -> ValueSize {
        let mut res = ValueSize::default();
        for poly in [self.numer(), self.denom()] {
            res.terms += poly.terms().len() as u64;
            res.degree += u64::from(poly.degree());
            for p in poly.params() {
                res.params |= 1 << (p.0 % 64);
            }
            for (_, coef) in poly.terms() {
                for (_, c) in coef.terms() {
                    res.bits = res.bits.max(rational_bits(c));
                }
            }
        }
        res
    }

    /// An upper bound on the size of `self^exponent`, found without computing it: the bits grow
    /// at most `|exponent|` times plus the multinomial coefficients (`|exponent| log2 t` bits for
    /// `t` terms), and a polynomial of `t` terms has at most `C(|exponent| + t - 1, t - 1)` terms
    /// in its power.
    pub fn pow_size_bound(&self, exponent: i64) -> ValueSize {
        let n = exponent.unsigned_abs();
        let size = self.size();
        let mut res = ValueSize {
            degree: size.degree.saturating_mul(n),
            params: size.params,
            ..ValueSize::default()
        };
        for poly in [self.numer(), self.denom()] {
            let t = poly.terms().len() as u64;
            res.terms =
                res.terms.saturating_add(binomial_saturating(n + t.max(1) - 1, t.max(1) - 1));
            let mut bits = 0;
            for (_, coef) in poly.terms() {
                for (_, c) in coef.terms() {
                    bits = bits.max(rational_bits(c));
                }
            }
            // A radical coefficient with several terms mixes like further terms.
            let width = poly.terms().iter().map(|(_, c)| c.terms().len() as u64).sum::<u64>();
            let log2_width = 64 - u64::from((width.max(1) - 1).leading_zeros());
            res.bits = res.bits.max(bits.saturating_add(log2_width).saturating_mul(n)).max(2);
        }
        res
    }
}

/// `C(n, k)`, saturating at `u64::MAX`.
fn binomial_saturating(n: u64, k: u64) -> u64 {
    let k = k.min(n - k.min(n));
    let mut res: u128 = 1;
    for i in 0..k {
        res = res * u128::from(n - i) / u128::from(i + 1);
        if res > u128::from(u64::MAX) {
            return u64::MAX;
        }
    }
    res as u64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::{Field, ParamId};

    #[test]
    fn power_bounds_hold_for_small_powers() {
        let g = RatFunc::param(ParamId(0));
        let t = RatFunc::param(ParamId(1));
        let base = g + t + RatFunc::from_i64(7);
        for n in 0..12i64 {
            let bound = base.pow_size_bound(n);
            let actual = base.pow(n as i32).expect("non-zero").size();
            assert!(
                actual.bits <= bound.bits && actual.terms <= bound.terms,
                "{n}: {actual:?} {bound:?}"
            );
        }
        // (g + t + 1)^300 has C(302, 2) = 45451 terms: refused before it is computed.
        let three_terms = RatFunc::param(ParamId(0)) + RatFunc::param(ParamId(1)) + RatFunc::one();
        assert_eq!(three_terms.pow_size_bound(300).terms, 45451 + 1);
        assert!(!three_terms.pow_size_bound(300).is_allowed());
    }
}
