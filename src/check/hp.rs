//! Fixed-point numbers of a chosen precision on big integers: the values `m * 2^-bits`.
//! `cleave check` evaluates exact values and refines eigenvalues in them where the error of a
//! high-order series lies far below `f64` rounding.

use num_bigint::{BigInt, Sign};
use num_traits::{Signed, ToPrimitive, Zero};

use crate::exact::{Poly, RatFunc, Rational};

/// The precision of a computation: every number is an integer multiple of `2^-bits`.
#[derive(Clone, Copy, Debug)]
pub struct Precision {
    /// Fractional bits.
    pub bits: u32,
}

/// A real fixed-point number `m * 2^-bits`.
pub type Fix = BigInt;

/// A complex fixed-point number.
#[derive(Clone, Debug, Default)]
pub struct CFix {
    /// Real part.
    pub re: Fix,
    /// Imaginary part.
    pub im: Fix,
}

impl Precision {
    /// The number `value` rounded toward zero.
    pub fn of_rational(self, value: &Rational) -> Fix {
        (value.numer() << self.bits) / value.denom()
    }
    /// The number `value` exactly (an `f64` is a dyadic rational; far-off exponents are cut).
    pub fn of_f64(self, value: f64) -> Fix {
        if value == 0.0 || !value.is_finite() {
            return Fix::zero();
        }
        let (mantissa, exponent) = decompose(value);
        let shift = exponent + i64::from(self.bits);
        let m = BigInt::from(mantissa);
        if shift >= 0 {
            m << (shift as u64)
        } else {
            m >> ((-shift) as u64)
        }
    }
    /// The nearest `f64`.
    pub fn to_f64(self, value: &Fix) -> f64 {
        // Keep 64 significant bits, then scale: exact enough and never overflows.
        let bits = value.bits() as i64;
        let drop = (bits - 64).max(0);
        let head = (value >> (drop as u64)).to_f64().unwrap_or(0.0);
        head * 2f64.powi((drop - i64::from(self.bits)) as i32)
    }
    /// `a * b`.
    pub fn mul(self, a: &Fix, b: &Fix) -> Fix {
        (a * b) >> self.bits
    }
    /// `a / b`; `None` when `b` is zero.
    pub fn div(self, a: &Fix, b: &Fix) -> Option<Fix> {
        (!b.is_zero()).then(|| (a << self.bits) / b)
    }
    /// `sqrt(a)` for `a >= 0`.
    pub fn sqrt(self, a: &Fix) -> Fix {
        if a.sign() != Sign::Plus {
            return Fix::zero();
        }
        (a << self.bits).sqrt()
    }
    /// One, `2^bits`.
    pub fn one(self) -> Fix {
        BigInt::from(1) << self.bits
    }
    /// `a / b` for complex numbers; `None` when `b` is zero.
    pub fn cdiv(self, a: &CFix, b: &CFix) -> Option<CFix> {
        let norm = self.mul(&b.re, &b.re) + self.mul(&b.im, &b.im);
        let re = self.mul(&a.re, &b.re) + self.mul(&a.im, &b.im);
        let im = self.mul(&a.im, &b.re) - self.mul(&a.re, &b.im);
        Some(CFix { re: self.div(&re, &norm)?, im: self.div(&im, &norm)? })
    }
    /// The value of the rational function `value` with every symbol `p` set to `symbols[p]`;
    /// `None` when its denominator vanishes there (or a symbol has no value).
    pub fn eval(self, value: &RatFunc, symbols: &[Fix]) -> Option<CFix> {
        let numer = self.eval_poly(value.numer(), symbols)?;
        let denom = self.eval_poly(value.denom(), symbols)?;
        self.cdiv(&numer, &denom)
    }
    fn eval_poly(self, poly: &Poly, symbols: &[Fix]) -> Option<CFix> {
        let mut acc = CFix::default();
        for (monomial, coeff) in poly.terms() {
            let mut factor = self.one();
            for (p, e) in monomial.factors() {
                let x = symbols.get(p.0 as usize)?;
                for _ in 0..*e {
                    factor = self.mul(&factor, x);
                }
            }
            for (s, c) in coeff.terms() {
                let radicand = Rational::from_bigint(s.abs().to_bigint());
                let root = self.sqrt(&self.of_rational(&radicand));
                let term = self.mul(&self.mul(&root, &self.of_rational(c)), &factor);
                if s.is_negative() {
                    acc.im += term;
                } else {
                    acc.re += term;
                }
            }
        }
        Some(acc)
    }
    /// The real root of the rational polynomial `coeffs` (from `x^0` up) in `(lo, hi]`, where it
    /// has exactly one, to this precision (bisection on exact rationals).
    pub fn root_in(self, coeffs: &[Rational], lo: &Rational, hi: &Rational) -> Fix {
        let eval = |x: &Rational| -> Rational {
            coeffs.iter().rev().fold(Rational::from_i64(0), |acc, c| acc * x + c)
        };
        let half = Rational::ratio(1, 2).expect("2 != 0");
        let (mut lo, mut hi) = (lo.clone(), hi.clone());
        let sign_hi = eval(&hi).signum();
        let target = Rational::new(BigInt::from(1), BigInt::from(1) << (self.bits + 2))
            .expect("non-zero denominator");
        while (hi.clone() - &lo) > target {
            let mid = (lo.clone() + &hi) * &half;
            let s = eval(&mid).signum();
            if s == 0 {
                return self.of_rational(&mid);
            }
            if s == sign_hi {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        self.of_rational(&hi)
    }
}

/// `value = mantissa * 2^exponent` with an integer mantissa.
fn decompose(value: f64) -> (i64, i64) {
    let bits = value.to_bits();
    let sign = if bits >> 63 == 0 { 1 } else { -1 };
    let exponent = ((bits >> 52) & 0x7ff) as i64;
    let mantissa = if exponent == 0 {
        (bits & 0xf_ffff_ffff_ffff) << 1
    } else {
        (bits & 0xf_ffff_ffff_ffff) | 0x10_0000_0000_0000
    };
    (sign * mantissa as i64, exponent - 1075)
}

/// The eigenvalues of the real symmetric matrix `a` (row-major, `n x n`) by cyclic Jacobi
/// rotations in fixed point (Golub & Van Loan, Matrix Computations, 4th ed. 2013, §8.5).
pub fn symmetric_eigenvalues(prec: Precision, mut a: Vec<Vec<Fix>>) -> Vec<Fix> {
    let n = a.len();
    let tiny = BigInt::from(1) << 8u32;
    for _sweep in 0..60 {
        let mut off = Fix::zero();
        for (p, row) in a.iter().enumerate() {
            for x in &row[p + 1..] {
                off = off.max(x.abs());
            }
        }
        if off <= tiny {
            break;
        }
        for p in 0..n {
            for q in p + 1..n {
                if a[p][q].abs() <= tiny {
                    continue;
                }
                // theta = (a_qq - a_pp) / (2 a_pq); t = sgn(theta) / (|theta| + sqrt(theta^2 + 1)).
                let two_apq = &a[p][q] * 2;
                let Some(theta) = prec.div(&(&a[q][q] - &a[p][p]), &two_apq) else { continue };
                let root = prec.sqrt(&(prec.mul(&theta, &theta) + prec.one()));
                let Some(mut t) = prec.div(&prec.one(), &(theta.abs() + root)) else { continue };
                if theta.sign() == Sign::Minus {
                    t = -t;
                }
                let c = prec
                    .div(&prec.one(), &prec.sqrt(&(prec.mul(&t, &t) + prec.one())))
                    .unwrap_or_else(|| prec.one());
                let s = prec.mul(&t, &c);
                for row in a.iter_mut() {
                    let (akp, akq) = (row[p].clone(), row[q].clone());
                    row[p] = prec.mul(&c, &akp) - prec.mul(&s, &akq);
                    row[q] = prec.mul(&s, &akp) + prec.mul(&c, &akq);
                }
                let (row_p, row_q) = (a[p].clone(), a[q].clone());
                for (k, (apk, aqk)) in row_p.iter().zip(&row_q).enumerate() {
                    a[p][k] = prec.mul(&c, apk) - prec.mul(&s, aqk);
                    a[q][k] = prec.mul(&s, apk) + prec.mul(&c, aqk);
                }
            }
        }
    }
    (0..n).map(|k| a[k][k].clone()).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trips_and_square_roots() {
        let prec = Precision { bits: 200 };
        let x = prec.of_f64(-0.375);
        assert_eq!(prec.to_f64(&x), -0.375);
        let two = prec.of_rational(&Rational::from_i64(2));
        let r = prec.sqrt(&two);
        assert!((prec.to_f64(&r) - std::f64::consts::SQRT_2).abs() < 1e-15);
        // A 2x2 matrix [[2, 1], [1, 2]] has eigenvalues 1 and 3.
        let one = prec.one();
        let mut eig = symmetric_eigenvalues(
            prec,
            vec![vec![two.clone(), one.clone()], vec![one.clone(), two.clone()]],
        );
        eig.sort();
        assert!((prec.to_f64(&eig[0]) - 1.0).abs() < 1e-15);
        assert!((prec.to_f64(&eig[1]) - 3.0).abs() < 1e-15);
    }
}
