//! The structure of an exact value as sums of signed products, read by the LaTeX and Rust
//! emitters. Start from [`fraction`]. This only rewrites the representation (it splits radical
//! coefficients into their square-root terms and clears rational denominators); it derives nothing.

use num_bigint::BigInt;
use num_traits::One;

use crate::exact::{Field, ParamId, Poly, Radicand, RatFunc, Rational};

/// One signed product `sign * magnitude * sqrt(root) * (i if imaginary) * prod(p^e)`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Atom {
    /// Whether the product enters with a minus sign.
    pub negative: bool,
    /// The positive rational factor.
    pub magnitude: Rational,
    /// The square-free radicand of the square root, `1` when there is none.
    pub root: Radicand,
    /// Whether the product carries a factor `i`.
    pub imaginary: bool,
    /// `(parameter, exponent)` pairs in parameter order, exponents positive.
    pub factors: Vec<(ParamId, u32)>,
}

impl Atom {
    /// Whether the atom is a plain rational number (no root, no `i`, no parameter).
    pub fn is_rational(&self) -> bool {
        self.root.is_one() && !self.imaginary && self.factors.is_empty()
    }

    /// The atom with its sign flipped.
    pub fn negated(&self) -> Atom {
        Atom { negative: !self.negative, ..self.clone() }
    }
}

/// A value as `numer / denom`, both sums of atoms; `denom` is empty when it is 1.
#[derive(Clone, Debug)]
pub(crate) struct Fraction {
    /// The numerator's atoms, in the polynomial's canonical order; empty for zero.
    pub numer: Vec<Atom>,
    /// The denominator's atoms; empty when the denominator is 1.
    pub denom: Vec<Atom>,
}

impl Fraction {
    /// Whether the value is zero.
    pub fn is_zero(&self) -> bool {
        self.numer.is_empty()
    }

    /// The parameters this value mentions.
    pub fn params(&self) -> Vec<ParamId> {
        let mut res: Vec<ParamId> = self
            .numer
            .iter()
            .chain(&self.denom)
            .flat_map(|a| a.factors.iter().map(|(p, _)| *p))
            .collect();
        res.sort_unstable();
        res.dedup();
        res
    }
}

/// The atoms of a polynomial: one per (monomial, square-root term) pair, in canonical order.
pub(crate) fn atoms(poly: &Poly) -> Vec<Atom> {
    let mut res = Vec::new();
    for (monomial, coeff) in poly.terms() {
        for (s, c) in coeff.terms() {
            if c.is_zero() {
                continue;
            }
            res.push(Atom {
                negative: c.is_negative(),
                magnitude: c.abs(),
                root: s.abs(),
                imaginary: s.is_negative(),
                factors: monomial.factors().to_vec(),
            });
        }
    }
    res
}

/// The value as a fraction of sums: a constant rational denominator is divided into the
/// numerator, otherwise rational denominators inside both sums are cleared by their common
/// multiple so that neither sum shows a fraction.
pub(crate) fn fraction(value: &RatFunc) -> Fraction {
    let numer = atoms(value.numer());
    let denom = atoms(value.denom());
    if numer.is_empty() {
        return Fraction { numer, denom: Vec::new() };
    }
    if let [single] = denom.as_slice() {
        if single.is_rational() {
            let Some(inv) = single.magnitude.inv() else {
                return Fraction { numer, denom };
            };
            let numer = numer
                .into_iter()
                .map(|a| Atom {
                    negative: a.negative != single.negative,
                    magnitude: a.magnitude * &inv,
                    ..a
                })
                .collect();
            return Fraction { numer, denom: Vec::new() };
        }
    }
    let lcm = numer.iter().chain(&denom).fold(BigInt::one(), |acc, a| a.magnitude.denom_lcm(&acc));
    let scale = Rational::from_bigint(lcm);
    let rescale = |atoms: Vec<Atom>| -> Vec<Atom> {
        atoms.into_iter().map(|a| Atom { magnitude: a.magnitude * &scale, ..a }).collect()
    };
    let (mut numer, mut denom) = (rescale(numer), rescale(denom));
    // A leading minus in the denominator reads badly; move it to the numerator.
    if denom.first().is_some_and(|a| a.negative) {
        numer = numer.iter().map(Atom::negated).collect();
        denom = denom.iter().map(Atom::negated).collect();
    }
    Fraction { numer, denom }
}
