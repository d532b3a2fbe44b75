//! A quick test, modulo a large prime, that a linear factor does not divide a polynomial: the
//! factoring of printed values and the cancellation of fractions try an exact division only
//! where this cannot rule it out. Start from [`Screen`].

use num_bigint::BigInt;
use num_integer::Integer;

use super::{Poly, Radicand, Rational};

/// The prime modulus of the division screen (`2^61 - 1`).
const MODULUS: u64 = (1 << 61) - 1;

fn mul_mod(a: u64, b: u64) -> u64 {
    u64::try_from(u128::from(a) * u128::from(b) % u128::from(MODULUS)).expect("below the modulus")
}

fn pow_mod(mut base: u64, mut exponent: u64) -> u64 {
    let mut res = 1;
    while exponent > 0 {
        if exponent & 1 == 1 {
            res = mul_mod(res, base);
        }
        base = mul_mod(base, base);
        exponent >>= 1;
    }
    res
}

/// A rational modulo the prime; `None` when its denominator is divisible by it.
fn residue(q: &Rational) -> Option<u64> {
    let modulus = BigInt::from(MODULUS);
    let to_u64 = |n: &BigInt| -> u64 {
        let r = n.mod_floor(&modulus);
        u64::try_from(r).expect("a residue fits u64")
    };
    let denom = to_u64(q.denom());
    if denom == 0 {
        return None;
    }
    Some(mul_mod(to_u64(q.numer()), pow_mod(denom, MODULUS - 2)))
}

/// The fixed value of parameter `p` at the screening point (distinct, far from small integers).
fn coordinate(p: u32) -> u64 {
    (u64::from(p) + 1).wrapping_mul(0x9E37_79B9_7F4A_7C15) % MODULUS
}

/// Where a linear factor with rational coefficients vanishes: its leading parameter `x` takes
/// `value` while every other parameter keeps its [`coordinate`].
pub(crate) struct FactorPoint {
    x: super::ParamId,
    value: u64,
}

impl FactorPoint {
    /// The point for `f`; `None` unless `f` is linear with rational coefficients.
    pub(crate) fn of(f: &Poly) -> Option<FactorPoint> {
        if f.degree() != 1 {
            return None;
        }
        let (lead, a) = f.leading_term()?;
        let x = lead.factors().first()?.0;
        let a = residue(&a.as_rational()?)?;
        if a == 0 {
            return None;
        }
        // a x + r = 0 with r the other terms at the point.
        let mut r = 0;
        for (m, c) in &f.terms()[1..] {
            let c = residue(&c.as_rational()?)?;
            let v = m
                .factors()
                .iter()
                .fold(c, |acc, (p, e)| mul_mod(acc, pow_mod(coordinate(p.0), u64::from(*e))));
            r = (r + v) % MODULUS;
        }
        let value = mul_mod(MODULUS - r, pow_mod(a, MODULUS - 2)) % MODULUS;
        Some(FactorPoint { x, value })
    }
}

/// A polynomial's coefficients modulo the prime, split by square root, for a quick proof that a
/// linear factor does not divide it.
///
/// With `p = sum_s sqrt(s) p_s` (rational `p_s`) and a monic `f` with rational coefficients,
/// `f | p` exactly when `f | p_s` for every `s`, and then every `p_s` vanishes modulo the prime
/// wherever `f` does (Gauss's lemma keeps the quotient integral at the prime when `p_s` is). A
/// non-zero value there therefore proves that `f` does not divide; a zero lets the exact division
/// decide.
/// Per square root, the residues of a polynomial's coefficients of `x^0, x^1, ...`.
type Univariate = Vec<(Radicand, Vec<u64>)>;

pub(crate) struct Screen<'a> {
    poly: &'a Poly,
    /// Per term, per square root: `(s, residue)`; `None` when some denominator is divisible by
    /// the prime (then nothing is screened).
    residues: Option<Vec<Vec<(Radicand, u64)>>>,
    /// Per leading parameter `x`: per square root, the residues of the coefficients of `x^k` with
    /// every other parameter at its coordinate, found when first needed.
    in_x: std::cell::RefCell<std::collections::BTreeMap<u32, Univariate>>,
}

impl<'a> Screen<'a> {
    /// The residues of `poly`.
    pub(crate) fn new(poly: &'a Poly) -> Screen<'a> {
        let residues = poly
            .terms()
            .iter()
            .map(|(_, c)| c.terms().iter().map(|(s, q)| Some((s.clone(), residue(q)?))).collect())
            .collect();
        Screen { poly, residues, in_x: Default::default() }
    }

    /// Whether the polynomial may vanish where `point` lies (`true` when it cannot be screened).
    pub(crate) fn may_vanish(&self, point: Option<&FactorPoint>) -> bool {
        let (Some(point), Some(residues)) = (point, &self.residues) else { return true };
        let mut cache = self.in_x.borrow_mut();
        let univariate = cache.entry(point.x.0).or_insert_with(|| {
            let mut res: Univariate = Vec::new();
            for ((m, _), parts) in self.poly.terms().iter().zip(residues) {
                let mut degree = 0;
                let at = m.factors().iter().fold(1, |acc, (p, e)| {
                    if *p == point.x {
                        degree = *e as usize;
                        acc
                    } else {
                        mul_mod(acc, pow_mod(coordinate(p.0), u64::from(*e)))
                    }
                });
                for (s, r) in parts {
                    let v = mul_mod(*r, at);
                    let slot = match res.iter().position(|(t, _)| t == s) {
                        Some(k) => k,
                        None => {
                            res.push((s.clone(), Vec::new()));
                            res.len() - 1
                        }
                    };
                    let coeffs = &mut res[slot].1;
                    if coeffs.len() <= degree {
                        coeffs.resize(degree + 1, 0);
                    }
                    coeffs[degree] = (coeffs[degree] + v) % MODULUS;
                }
            }
            res
        });
        univariate.iter().all(|(_, coeffs)| {
            coeffs.iter().rev().fold(0, |acc, c| (mul_mod(acc, point.value) + c) % MODULUS) == 0
        })
    }
}
