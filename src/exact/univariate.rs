//! Dense univariate polynomials over any [`Field`], for characteristic polynomials.
//! Start from [`UniPoly`]; for rational coefficients [`UniPoly::rational_roots`] finds every
//! rational root with its multiplicity.

use std::fmt;
use std::ops::{Add, Mul, Neg, Sub};

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Signed, ToPrimitive, Zero};

use super::{Field, Rational};

/// A polynomial `sum c_k x^k` with coefficients in `F`: entry `k` is the coefficient of `x^k`,
/// with no trailing zeros (zero is the empty list).
#[derive(Clone, PartialEq, Eq, Hash, Debug)]
pub struct UniPoly<F: Field> {
    coeffs: Vec<F>,
}

impl<F: Field> UniPoly<F> {
    /// A polynomial from coefficients, lowest power first; trailing zeros are dropped.
    pub fn new(mut coeffs: Vec<F>) -> UniPoly<F> {
        while coeffs.last().is_some_and(F::is_zero) {
            coeffs.pop();
        }
        UniPoly { coeffs }
    }
    /// The zero polynomial.
    pub fn zero() -> UniPoly<F> {
        UniPoly { coeffs: Vec::new() }
    }
    /// The constant `1`.
    pub fn one() -> UniPoly<F> {
        UniPoly { coeffs: vec![F::one()] }
    }
    /// The variable `x`.
    pub fn x() -> UniPoly<F> {
        UniPoly { coeffs: vec![F::zero(), F::one()] }
    }
    /// A constant polynomial.
    pub fn constant(value: F) -> UniPoly<F> {
        UniPoly::new(vec![value])
    }
    /// `coef * x^power`.
    pub fn monomial(coef: F, power: usize) -> UniPoly<F> {
        let mut coeffs = vec![F::zero(); power];
        coeffs.push(coef);
        UniPoly::new(coeffs)
    }
    /// The coefficients, lowest power first.
    pub fn coeffs(&self) -> &[F] {
        &self.coeffs
    }
    /// The degree; `None` for zero.
    pub fn degree(&self) -> Option<usize> {
        self.coeffs.len().checked_sub(1)
    }
    /// Whether this is the zero polynomial.
    pub fn is_zero(&self) -> bool {
        self.coeffs.is_empty()
    }
    /// The coefficient of the highest power; `None` for zero.
    pub fn leading_coeff(&self) -> Option<&F> {
        self.coeffs.last()
    }
    /// Multiplies every coefficient by `factor`.
    pub fn scale(&self, factor: &F) -> UniPoly<F> {
        UniPoly::new(self.coeffs.iter().map(|c| c.mul_ref(factor)).collect())
    }
    /// The polynomial divided by its leading coefficient (zero stays zero).
    pub fn monic(&self) -> UniPoly<F> {
        match self.leading_coeff() {
            Some(lead) if !lead.is_one() => {
                self.scale(&lead.inv().expect("leading coefficient is non-zero"))
            }
            _ => self.clone(),
        }
    }
    /// Quotient and remainder; `None` when `divisor` is zero.
    pub fn divrem(&self, divisor: &UniPoly<F>) -> Option<(UniPoly<F>, UniPoly<F>)> {
        let lead_inv = divisor.leading_coeff()?.inv().expect("leading coefficient is non-zero");
        let n = divisor.coeffs.len();
        let mut rest = self.coeffs.clone();
        if rest.len() < n {
            return Some((UniPoly::zero(), self.clone()));
        }
        let mut quotient = vec![F::zero(); rest.len() + 1 - n];
        for shift in (0..quotient.len()).rev() {
            let factor = rest[shift + n - 1].mul_ref(&lead_inv);
            if factor.is_zero() {
                continue;
            }
            for (k, coef) in divisor.coeffs.iter().enumerate() {
                rest[shift + k] -= &coef.mul_ref(&factor);
            }
            quotient[shift] = factor;
        }
        rest.truncate(n - 1);
        Some((UniPoly::new(quotient), UniPoly::new(rest)))
    }
    /// The monic greatest common divisor (Euclid); `gcd(0, 0) = 0`.
    pub fn gcd(&self, other: &UniPoly<F>) -> UniPoly<F> {
        let mut a = self.clone();
        let mut b = other.clone();
        while !b.is_zero() {
            let (_, rem) = a.divrem(&b).expect("b is non-zero");
            // Keeping the remainders monic stops coefficient growth in Q.
            a = b;
            b = rem.monic();
        }
        a.monic()
    }
    /// The derivative.
    pub fn derivative(&self) -> UniPoly<F> {
        let coeffs =
            self.coeffs.iter().enumerate().skip(1).map(|(k, c)| {
                c.mul_ref(&F::from_i64(i64::try_from(k).expect("degree fits in i64")))
            });
        UniPoly::new(coeffs.collect())
    }
    /// The square-free part `p / gcd(p, p')`, monic (characteristic zero makes this exact).
    pub fn square_free_part(&self) -> UniPoly<F> {
        if self.is_zero() {
            return UniPoly::zero();
        }
        let common = self.gcd(&self.derivative());
        let (quotient, _) =
            self.divrem(&common).expect("the gcd of a non-zero polynomial is non-zero");
        quotient.monic()
    }
    /// The value at `x` (Horner's rule).
    pub fn eval(&self, x: &F) -> F {
        let mut acc = F::zero();
        for coef in self.coeffs.iter().rev() {
            acc = acc.mul_ref(x) + coef;
        }
        acc
    }
    /// Prints in contract syntax with the variable `var`, highest power first: `x^3 - 2*x + 1/2`.
    pub fn display<'a>(&'a self, var: &'a str) -> impl fmt::Display + 'a
    where
        F: fmt::Display,
    {
        UniPolyDisplay { poly: self, var }
    }

    fn add_ref(&self, rhs: &UniPoly<F>) -> UniPoly<F> {
        let (long, short) =
            if self.coeffs.len() >= rhs.coeffs.len() { (self, rhs) } else { (rhs, self) };
        let mut coeffs = long.coeffs.clone();
        for (acc, c) in coeffs.iter_mut().zip(&short.coeffs) {
            *acc += c;
        }
        UniPoly::new(coeffs)
    }
    fn neg_ref(&self) -> UniPoly<F> {
        UniPoly { coeffs: self.coeffs.iter().map(|c| -c.clone()).collect() }
    }
    fn mul_ref_impl(&self, rhs: &UniPoly<F>) -> UniPoly<F> {
        if self.is_zero() || rhs.is_zero() {
            return UniPoly::zero();
        }
        let mut coeffs = vec![F::zero(); self.coeffs.len() + rhs.coeffs.len() - 1];
        for (i, a) in self.coeffs.iter().enumerate() {
            for (j, b) in rhs.coeffs.iter().enumerate() {
                coeffs[i + j] += &a.mul_ref(b);
            }
        }
        UniPoly::new(coeffs)
    }
}

/// Owned and borrowed pairings of `+ - *` for the generic type (the shared macro needs a
/// concrete type).
macro_rules! uni_ops {
    ($trait:ident, $method:ident, $body:expr) => {
        impl<F: Field> $trait<&UniPoly<F>> for &UniPoly<F> {
            type Output = UniPoly<F>;
            fn $method(self, rhs: &UniPoly<F>) -> UniPoly<F> {
                $body(self, rhs)
            }
        }
        impl<F: Field> $trait<UniPoly<F>> for UniPoly<F> {
            type Output = UniPoly<F>;
            fn $method(self, rhs: UniPoly<F>) -> UniPoly<F> {
                $body(&self, &rhs)
            }
        }
        impl<F: Field> $trait<&UniPoly<F>> for UniPoly<F> {
            type Output = UniPoly<F>;
            fn $method(self, rhs: &UniPoly<F>) -> UniPoly<F> {
                $body(&self, rhs)
            }
        }
    };
}
uni_ops!(Add, add, |a: &UniPoly<F>, b: &UniPoly<F>| a.add_ref(b));
uni_ops!(Sub, sub, |a: &UniPoly<F>, b: &UniPoly<F>| a.add_ref(&b.neg_ref()));
uni_ops!(Mul, mul, |a: &UniPoly<F>, b: &UniPoly<F>| a.mul_ref_impl(b));

impl<F: Field> Neg for UniPoly<F> {
    type Output = UniPoly<F>;
    fn neg(self) -> UniPoly<F> {
        self.neg_ref()
    }
}

impl<F: Field> Neg for &UniPoly<F> {
    type Output = UniPoly<F>;
    fn neg(self) -> UniPoly<F> {
        self.neg_ref()
    }
}

/// Candidates are divisors of the constant and leading integer coefficients; integers above
/// this bound are not factored and their polynomial is reported with no further rational roots.
const DIVISOR_SEARCH_BOUND: u64 = 1_000_000_000_000;

/// Above this many candidates `p/q` the search stops (no further rational roots are reported).
const CANDIDATE_LIMIT: usize = 100_000;

/// The positive divisors of `n > 0`, sorted; `None` above [`DIVISOR_SEARCH_BOUND`].
fn divisors(n: &BigInt) -> Option<Vec<u64>> {
    let n = n.abs().to_u64().filter(|n| *n <= DIVISOR_SEARCH_BOUND && *n > 0)?;
    let mut small = Vec::new();
    let mut large = Vec::new();
    let mut d = 1u64;
    while d * d <= n {
        if n % d == 0 {
            small.push(d);
            if d * d != n {
                large.push(n / d);
            }
        }
        d += 1;
    }
    small.extend(large.into_iter().rev());
    Some(small)
}

impl UniPoly<Rational> {
    /// Every rational root with its multiplicity, sorted by value.
    ///
    /// After factoring out `x^k` and clearing denominators, a root `p/q` in lowest terms has `p`
    /// dividing the constant and `q` the leading coefficient (rational root theorem). The search
    /// runs on the square-free part. When those integers exceed 10^12, or there are more than
    /// 100000 candidates, the search stops and only the roots found so far are reported.
    pub fn rational_roots(&self) -> Vec<(Rational, u32)> {
        let mut res = Vec::new();
        let Some(zero_mult) = self.coeffs.iter().position(|c| !c.is_zero()) else { return res };
        if zero_mult > 0 {
            res.push((Rational::zero(), u32::try_from(zero_mult).expect("degree fits in u32")));
        }
        let rest = UniPoly::new(self.coeffs[zero_mult..].to_vec());
        let mut reduced = integer_coeffs(&rest.square_free_part());
        let mut remaining = rest;
        let mut found = Vec::new();
        'search: while reduced.degree().is_some_and(|d| d > 0) {
            let Some(numers) = divisors(reduced.coeffs[0].numer()) else { break };
            let Some(denoms) = divisors(reduced.leading_coeff().expect("non-zero").numer()) else {
                break;
            };
            if numers.len().saturating_mul(denoms.len()) > CANDIDATE_LIMIT {
                break;
            }
            for p in &numers {
                for q in &denoms {
                    if Integer::gcd(p, q) != 1 {
                        continue;
                    }
                    for sign in [1i64, -1] {
                        let candidate =
                            Rational::new(BigInt::from(*p) * BigInt::from(sign), BigInt::from(*q))
                                .expect("q is positive");
                        if reduced.eval(&candidate).is_zero() {
                            let factor = linear_factor(&candidate);
                            let (quotient, _) = reduced.divrem(&factor).expect("non-zero");
                            reduced = integer_coeffs(&quotient);
                            found.push(candidate);
                            // The constant and leading coefficients shrank: restart with fewer
                            // candidates.
                            continue 'search;
                        }
                    }
                }
            }
            break;
        }
        for root in found {
            let mut mult = 0;
            while let Some(quotient) = remaining.deflate(&root) {
                remaining = quotient;
                mult += 1;
            }
            res.push((root, mult));
        }
        res.sort();
        res
    }
    /// `self / (x - root)` when `root` is a root, `None` otherwise.
    pub fn deflate(&self, root: &Rational) -> Option<UniPoly<Rational>> {
        if self.is_zero() {
            return None;
        }
        let (quotient, rem) = self.divrem(&linear_factor(root)).expect("x - root is non-zero");
        rem.is_zero().then_some(quotient)
    }
}

/// `x - root`.
fn linear_factor(root: &Rational) -> UniPoly<Rational> {
    UniPoly::new(vec![-root.clone(), Rational::one()])
}

/// A rational multiple with coprime integer coefficients and a positive leading coefficient.
fn integer_coeffs(poly: &UniPoly<Rational>) -> UniPoly<Rational> {
    let lcm = poly.coeffs.iter().fold(BigInt::one(), |acc, c| c.denom_lcm(&acc));
    let ints: Vec<BigInt> = poly.coeffs.iter().map(|c| (c.numer() * &lcm) / c.denom()).collect();
    let mut content = ints.iter().fold(BigInt::zero(), |acc, c| acc.gcd(c));
    if content.is_zero() {
        return poly.clone();
    }
    if ints.last().is_some_and(Signed::is_negative) {
        content = -content;
    }
    UniPoly::new(ints.into_iter().map(|c| Rational::from_bigint(c / &content)).collect())
}

struct UniPolyDisplay<'a, F: Field> {
    poly: &'a UniPoly<F>,
    var: &'a str,
}

impl<F: Field + fmt::Display> fmt::Display for UniPolyDisplay<'_, F> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.poly.is_zero() {
            return write!(f, "0");
        }
        let mut first = true;
        for (power, coef) in self.poly.coeffs.iter().enumerate().rev() {
            if coef.is_zero() {
                continue;
            }
            let text = coef.to_string();
            // A coefficient that prints as a sum gets parentheses; a leading minus becomes the
            // joining sign.
            let is_sum = text.trim_start_matches('-').contains([' ']);
            let (negative, magnitude) = match text.strip_prefix('-') {
                Some(rest) if !is_sum => (true, rest.to_string()),
                _ => (false, text.clone()),
            };
            let magnitude = if is_sum { format!("({magnitude})") } else { magnitude };
            let sign = match (first, negative) {
                (true, true) => "-",
                (true, false) => "",
                (false, true) => " - ",
                (false, false) => " + ",
            };
            let power_text = match power {
                0 => String::new(),
                1 => self.var.to_string(),
                _ => format!("{}^{power}", self.var),
            };
            let body = if power_text.is_empty() {
                magnitude
            } else if magnitude == "1" {
                power_text
            } else {
                format!("{magnitude}*{power_text}")
            };
            write!(f, "{sign}{body}")?;
            first = false;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::Radical;
    use proptest::prelude::*;

    fn q(n: i64, d: i64) -> Rational {
        Rational::ratio(n, d).expect("non-zero denominator")
    }
    fn poly(coeffs: &[(i64, i64)]) -> UniPoly<Rational> {
        UniPoly::new(coeffs.iter().map(|(n, d)| q(*n, *d)).collect())
    }
    /// The product of `(x - root)` over the given roots.
    fn from_roots(roots: &[(i64, i64)]) -> UniPoly<Rational> {
        roots.iter().fold(UniPoly::one(), |acc, (n, d)| &acc * &linear_factor(&q(*n, *d)))
    }

    #[test]
    fn display() {
        assert_eq!(
            poly(&[(1, 2), (-2, 1), (0, 1), (1, 1)]).display("x").to_string(),
            "x^3 - 2*x + 1/2"
        );
        assert_eq!(poly(&[(0, 1), (-1, 3)]).display("x").to_string(), "-1/3*x");
        assert_eq!(UniPoly::<Rational>::zero().display("x").to_string(), "0");
        let sum = Radical::one() + Radical::sqrt_of(&Rational::from_i64(2));
        let p = UniPoly::new(vec![sum, Radical::one()]);
        assert_eq!(p.display("x").to_string(), "x + (1 + sqrt(2))");
    }

    #[test]
    fn divrem_and_gcd() {
        let a = from_roots(&[(1, 1), (2, 1), (-1, 2)]);
        let b = from_roots(&[(2, 1), (3, 1)]);
        assert_eq!(a.gcd(&b), linear_factor(&q(2, 1)));
        let (quotient, rem) = a.divrem(&b).unwrap();
        assert_eq!(&(&quotient * &b) + &rem, a);
        assert!(rem.degree() < b.degree());
        assert_eq!(a.divrem(&UniPoly::zero()), None);
    }

    #[test]
    fn square_free_part_and_derivative() {
        let p = from_roots(&[(1, 1), (1, 1), (1, 1), (-2, 3)]);
        assert_eq!(p.square_free_part(), from_roots(&[(1, 1), (-2, 3)]));
        assert_eq!(poly(&[(5, 1), (3, 1), (1, 1)]).derivative(), poly(&[(3, 1), (2, 1)]));
    }

    #[test]
    fn rational_roots_with_multiplicity() {
        let p = &from_roots(&[(0, 1), (0, 1), (3, 2), (3, 2), (-5, 7)])
            * &poly(&[(2, 1), (0, 1), (1, 1)]);
        let p = p.scale(&q(3, 11));
        assert_eq!(p.rational_roots(), vec![(q(-5, 7), 1), (q(0, 1), 2), (q(3, 2), 2)]);
        assert_eq!(poly(&[(-2, 1), (0, 1), (1, 1)]).rational_roots(), vec![]);
        assert_eq!(p.eval(&q(3, 2)), Rational::zero());
        assert_eq!(p.deflate(&q(1, 1)), None);
    }

    fn small_poly() -> impl Strategy<Value = UniPoly<Rational>> {
        prop::collection::vec((-4i64..=4, 1i64..=3), 0..=4)
            .prop_map(|c| UniPoly::new(c.into_iter().map(|(n, d)| q(n, d)).collect()))
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn ring_laws_and_division(a in small_poly(), b in small_poly(), c in small_poly()) {
            prop_assert_eq!(&(&a * &b) * &c, &a * &(&b * &c));
            prop_assert_eq!(&a * &(&b + &c), &(&a * &b) + &(&a * &c));
            prop_assert_eq!(&a + &b, &b + &a);
            if let Some((quotient, rem)) = a.divrem(&b) {
                prop_assert_eq!(&(&quotient * &b) + &rem, a.clone());
            }
            let g = a.gcd(&b);
            if !g.is_zero() {
                prop_assert!(a.divrem(&g).unwrap().1.is_zero());
                prop_assert!(b.divrem(&g).unwrap().1.is_zero());
            }
        }

        #[test]
        fn roots_of_products_are_found(roots in prop::collection::vec((-6i64..=6, 1i64..=4), 1..=4)) {
            let p = from_roots(&roots);
            let found = p.rational_roots();
            let total: u32 = found.iter().map(|(_, m)| m).sum();
            prop_assert_eq!(total as usize, roots.len());
            for (root, _) in &found {
                prop_assert!(p.eval(root).is_zero());
            }
        }
    }
}
