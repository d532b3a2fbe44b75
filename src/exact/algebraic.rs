//! The field `K(alpha) = K[x]/(f)` for a real root `alpha` of an irreducible rational polynomial
//! `f`, over the field `K` of rational functions of the parameters with radical coefficients.
//! Start from [`Algebraic`].
//!
//! Elements are polynomials in `alpha` of degree below `deg f` with [`RatFunc`] coefficients. The
//! modulus travels with each element that needs it, so constants (and `zero()`, `one()`) carry
//! none. The ring is a field exactly when `f` is irreducible over `K`: a rational polynomial of
//! odd degree irreducible over the rationals qualifies, since the radical field has degree a power
//! of two, and adjoining parameters (transcendentals) adds no algebraic roots. When `f` factors
//! over `K`, some non-zero element has no inverse and [`Field::inv`] returns `None` for it, which
//! callers treat as "cannot split here" (`engine::algebraic`).

use std::sync::Arc;

use super::univariate::UniPoly;
use super::{forward_ops, Field, Monomial, ParamId, Poly, RatFunc, Rational};

/// The parameter id that stands for `alpha` when an element is written as a rational function;
/// the engine renames it to the root's own id.
pub const ALPHA: ParamId = ParamId(u32::MAX);

/// An element of `K(alpha)`.
#[derive(Clone, Debug)]
pub struct Algebraic {
    /// Coefficients of `alpha^0, alpha^1, ...`, no trailing zeros, fewer than `deg f`.
    coeffs: Vec<RatFunc>,
    /// The monic modulus `f`, coefficients from `x^0` up; `None` for constants.
    modulus: Option<Arc<Vec<Rational>>>,
}

impl PartialEq for Algebraic {
    fn eq(&self, other: &Algebraic) -> bool {
        self.coeffs == other.coeffs
    }
}
impl Eq for Algebraic {}

impl Algebraic {
    /// The generator `alpha` of `Q(alpha)` for a monic irreducible `f` of degree at least 2.
    pub fn generator(modulus: &UniPoly<Rational>) -> Algebraic {
        let monic = modulus.monic();
        Algebraic {
            coeffs: vec![RatFunc::zero(), RatFunc::one()],
            modulus: Some(Arc::new(monic.coeffs().to_vec())),
        }
    }
    /// A constant.
    pub fn constant(value: RatFunc) -> Algebraic {
        let mut coeffs = vec![value];
        trim(&mut coeffs);
        Algebraic { coeffs, modulus: None }
    }
    /// The coefficients of `alpha^k`.
    pub fn coeffs(&self) -> &[RatFunc] {
        &self.coeffs
    }
    fn with(&self, coeffs: Vec<RatFunc>, other: &Algebraic) -> Algebraic {
        let modulus = self.modulus.clone().or_else(|| other.modulus.clone());
        let mut res = Algebraic { coeffs, modulus };
        res.reduce();
        res
    }
    fn reduce(&mut self) {
        if let Some(f) = &self.modulus {
            let n = f.len() - 1;
            while self.coeffs.len() > n {
                let top = self.coeffs.pop().expect("longer than n");
                let shift = self.coeffs.len() - n;
                // alpha^(n + shift) = -sum_k f_k alpha^(k + shift).
                for (k, fk) in f.iter().take(n).enumerate() {
                    if !fk.is_zero() {
                        self.coeffs[k + shift] -= &(top.clone() * RatFunc::from_rational(fk));
                    }
                }
            }
        }
        trim(&mut self.coeffs);
    }
    fn add_ref(&self, rhs: &Algebraic) -> Algebraic {
        let n = self.coeffs.len().max(rhs.coeffs.len());
        let coeffs = (0..n)
            .map(|k| match (self.coeffs.get(k), rhs.coeffs.get(k)) {
                (Some(a), Some(b)) => a.clone() + b,
                (Some(a), None) => a.clone(),
                (None, Some(b)) => b.clone(),
                (None, None) => RatFunc::zero(),
            })
            .collect();
        self.with(coeffs, rhs)
    }
    fn neg_ref(&self) -> Algebraic {
        Algebraic {
            coeffs: self.coeffs.iter().map(|c| -c.clone()).collect(),
            modulus: self.modulus.clone(),
        }
    }
    fn sub_ref(&self, rhs: &Algebraic) -> Algebraic {
        self.add_ref(&rhs.neg_ref())
    }
    fn mul_ref_impl(&self, rhs: &Algebraic) -> Algebraic {
        if self.coeffs.is_empty() || rhs.coeffs.is_empty() {
            return Algebraic::zero();
        }
        let mut coeffs = vec![RatFunc::zero(); self.coeffs.len() + rhs.coeffs.len() - 1];
        for (i, a) in self.coeffs.iter().enumerate() {
            if a.is_zero() {
                continue;
            }
            for (j, b) in rhs.coeffs.iter().enumerate() {
                if !b.is_zero() {
                    coeffs[i + j] += &(a.clone() * b);
                }
            }
        }
        self.with(coeffs, rhs)
    }
    /// The value written as a rational function in which [`ALPHA`] stands for `alpha`.
    pub fn to_ratfunc_in_alpha(&self) -> RatFunc {
        let alpha = RatFunc::from_poly(Poly::term(
            Monomial::var_pow(ALPHA, 1),
            crate::exact::Radical::one(),
        ));
        let mut acc = RatFunc::zero();
        let mut power = RatFunc::one();
        for c in &self.coeffs {
            if !c.is_zero() {
                acc += &(c.clone() * &power);
            }
            power *= &alpha;
        }
        acc
    }
}

fn trim(coeffs: &mut Vec<RatFunc>) {
    while coeffs.last().is_some_and(RatFunc::is_zero) {
        coeffs.pop();
    }
}

forward_ops!(Algebraic);

impl Field for Algebraic {
    fn zero() -> Algebraic {
        Algebraic { coeffs: Vec::new(), modulus: None }
    }
    fn one() -> Algebraic {
        Algebraic::constant(RatFunc::one())
    }
    fn is_zero(&self) -> bool {
        self.coeffs.is_empty()
    }
    /// The inverse by the extended Euclidean algorithm in `K[x]` against the modulus.
    fn inv(&self) -> Option<Algebraic> {
        if self.coeffs.is_empty() {
            return None;
        }
        if self.coeffs.len() == 1 {
            return Some(Algebraic::constant(self.coeffs[0].inv()?));
        }
        let f = self.modulus.as_ref()?;
        let modulus = UniPoly::new(f.iter().map(RatFunc::from_rational).collect());
        let a = UniPoly::new(self.coeffs.clone());
        // Invariant: s_k * a = r_k (mod f).
        let (mut r0, mut r1) = (modulus, a);
        let (mut s0, mut s1) = (UniPoly::<RatFunc>::zero(), UniPoly::<RatFunc>::one());
        while r1.degree().unwrap_or(0) > 0 {
            let (q, r) = r0.divrem(&r1)?;
            let s = s0 - &q * &s1;
            r0 = std::mem::replace(&mut r1, r);
            s0 = std::mem::replace(&mut s1, s);
        }
        // r1 is a non-zero constant exactly when gcd(a, f) = 1, which irreducibility guarantees.
        let c = r1.coeffs().first()?.inv()?;
        let mut res =
            Algebraic { coeffs: s1.scale(&c).coeffs().to_vec(), modulus: self.modulus.clone() };
        res.reduce();
        Some(res)
    }
    fn from_rational(value: &Rational) -> Algebraic {
        Algebraic::constant(RatFunc::from_rational(value))
    }
    /// `alpha` is real, so conjugation acts on the coefficients only.
    fn conj(&self) -> Algebraic {
        Algebraic {
            coeffs: self.coeffs.iter().map(RatFunc::conj).collect(),
            modulus: self.modulus.clone(),
        }
    }
    fn to_ratfunc(&self) -> RatFunc {
        self.to_ratfunc_in_alpha()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(n: i64) -> Rational {
        Rational::from_i64(n)
    }

    #[test]
    fn arithmetic_modulo_a_cubic() {
        // alpha^3 = 3 alpha - 1 for x^3 - 3x + 1.
        let f = UniPoly::new(vec![q(1), q(-3), q(0), q(1)]);
        let a = Algebraic::generator(&f);
        let cube = a.clone() * &a * &a;
        let expected = a.clone() * Algebraic::from_i64(3) - Algebraic::one();
        assert_eq!(cube, expected);
        let inv = a.inv().expect("alpha is not zero");
        assert_eq!(inv * &a, Algebraic::one());
        let b = a.clone() * &a + Algebraic::from_i64(2);
        assert_eq!(b.inv().expect("non-zero") * &b, Algebraic::one());
    }
}
