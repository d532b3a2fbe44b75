//! The field Q(i, sqrt 2, sqrt 3, ...) as sparse sums of `c_s * sqrt(s)` over square-free `s`.
//! Start from [`Radical`]; [`split_square`] splits an integer into square and square-free parts.
//! No primitive element is ever chosen, so the one- and two-term values physics produces stay small.

use std::fmt;

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Signed, ToPrimitive, Zero};

use super::{forward_ops, Field, RatFunc, Rational, SquareRoot};

/// The square-free integer `s` under a square root `sqrt(s)` (`s = -1` is `i`), of any size.
///
/// Radicands that fit `i64` (all that physics models meet) are stored inline; larger ones as big
/// integers, so products of square roots are exact however large the radicand grows. `Ord` is the
/// order of the integers.
#[derive(Clone, PartialEq, Eq, Hash, Debug)]
pub struct Radicand(Repr);

/// Invariant: `Big` only for values outside `i64`, so equal integers have equal representations.
#[derive(Clone, PartialEq, Eq, Hash, Debug)]
enum Repr {
    Small(i64),
    Big(Box<BigInt>),
}

impl Radicand {
    /// The radicand 1 (the rational part of a value).
    pub const ONE: Radicand = Radicand(Repr::Small(1));
    /// The radicand -1 (`i`).
    pub const MINUS_ONE: Radicand = Radicand(Repr::Small(-1));

    /// The integer `value`, not checked to be square-free.
    pub(crate) fn from_bigint(value: BigInt) -> Radicand {
        match value.to_i64() {
            Some(small) => Radicand(Repr::Small(small)),
            None => Radicand(Repr::Big(Box::new(value))),
        }
    }
    /// The value when it fits `i64`.
    pub fn to_i64(&self) -> Option<i64> {
        match &self.0 {
            Repr::Small(s) => Some(*s),
            Repr::Big(_) => None,
        }
    }
    /// The value as a big integer.
    pub fn to_bigint(&self) -> BigInt {
        match &self.0 {
            Repr::Small(s) => BigInt::from(*s),
            Repr::Big(b) => (**b).clone(),
        }
    }
    /// The nearest `f64` (for numeric checks and emitted code).
    pub fn to_f64(&self) -> f64 {
        match &self.0 {
            Repr::Small(s) => s.to_f64().unwrap_or(f64::NAN),
            Repr::Big(b) => b.to_f64().unwrap_or(f64::NAN),
        }
    }
    /// Whether this is 1 (no square root).
    pub fn is_one(&self) -> bool {
        matches!(self.0, Repr::Small(1))
    }
    /// Whether this is negative (the square root carries `i`).
    pub fn is_negative(&self) -> bool {
        match &self.0 {
            Repr::Small(s) => *s < 0,
            Repr::Big(b) => b.is_negative(),
        }
    }
    /// The absolute value.
    pub fn abs(&self) -> Radicand {
        match &self.0 {
            Repr::Small(s) => match s.checked_abs() {
                Some(a) => Radicand(Repr::Small(a)),
                None => Radicand::from_bigint(BigInt::from(*s).abs()),
            },
            Repr::Big(b) => Radicand::from_bigint(b.abs()),
        }
    }
    /// Whether the absolute value is 1 (`1` or `i`).
    pub fn is_unit(&self) -> bool {
        matches!(self.0, Repr::Small(1 | -1))
    }
    /// `-self`.
    fn negated(&self) -> Radicand {
        match &self.0 {
            Repr::Small(s) if *s != i64::MIN => Radicand(Repr::Small(-s)),
            _ => Radicand::from_bigint(-self.to_bigint()),
        }
    }
    /// Whether `divisor` divides `self`.
    fn divisible_by(&self, divisor: &Radicand) -> bool {
        match (&self.0, &divisor.0) {
            (Repr::Small(a), Repr::Small(d)) => a % d == 0,
            _ => (self.to_bigint() % divisor.to_bigint()).is_zero(),
        }
    }
    /// `self / divisor` for a divisor that divides it.
    fn exact_div(&self, divisor: &Radicand) -> Radicand {
        match (&self.0, &divisor.0) {
            (Repr::Small(a), Repr::Small(d)) if !(*a == i64::MIN && *d == -1) => {
                Radicand(Repr::Small(a / d))
            }
            _ => Radicand::from_bigint(self.to_bigint() / divisor.to_bigint()),
        }
    }
    /// The non-negative gcd of the two integers.
    fn gcd(&self, other: &Radicand) -> Radicand {
        match (&self.0, &other.0) {
            (Repr::Small(a), Repr::Small(b)) => {
                Radicand::from_bigint(BigInt::from(a.unsigned_abs().gcd(&b.unsigned_abs())))
            }
            _ => Radicand::from_bigint(self.to_bigint().gcd(&other.to_bigint())),
        }
    }
}

impl From<i64> for Radicand {
    fn from(value: i64) -> Radicand {
        Radicand(Repr::Small(value))
    }
}

impl Ord for Radicand {
    fn cmp(&self, other: &Radicand) -> std::cmp::Ordering {
        match (&self.0, &other.0) {
            (Repr::Small(a), Repr::Small(b)) => a.cmp(b),
            _ => self.to_bigint().cmp(&other.to_bigint()),
        }
    }
}

impl PartialOrd for Radicand {
    fn partial_cmp(&self, other: &Radicand) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}

impl fmt::Display for Radicand {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.0 {
            Repr::Small(s) => write!(f, "{s}"),
            Repr::Big(b) => write!(f, "{b}"),
        }
    }
}

/// An element of Q(i, sqrt 2, sqrt 3, ...): a sum of `c_s * sqrt(s)` over square-free integers `s`
/// (`s = 1` is the rational part, `s = -1` is `i`, `s = -2` is `i*sqrt(2)`).
///
/// The terms are sorted by `s` and no coefficient is zero, so `==` is equality of numbers. The
/// derived `Ord` is structural (it is total and deterministic, not the order of the reals).
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug)]
pub struct Radical {
    terms: Vec<(Radicand, Rational)>,
}

/// Splits `n` into `(k, s)` with `n = k^2 * s` and `s` square-free.
///
/// Trial division runs only up to the cube root of what is left, because a remainder whose prime
/// factors all exceed its cube root has at most two of them and is square exactly when it is a
/// perfect square. So the answer is exact for every `u64`.
pub fn split_square(n: u64) -> (u64, u64) {
    if n == 0 {
        return (0, 1);
    }
    let mut rest = n;
    let mut square_root = 1u64;
    let mut free = 1u64;
    let mut d = 2u64;
    while d.saturating_mul(d).saturating_mul(d) <= rest {
        let mut count = 0;
        while rest % d == 0 {
            rest /= d;
            count += 1;
        }
        for _ in 0..count / 2 {
            square_root *= d;
        }
        if count % 2 == 1 {
            free *= d;
        }
        d += if d == 2 { 1 } else { 2 };
    }
    let root = num_integer::Roots::sqrt(&rest);
    if root * root == rest {
        square_root *= root;
    } else {
        free *= rest;
    }
    (square_root, free)
}

/// Splits a positive `BigInt` into `(k, s)` with `n = k^2 * s` and `s` square-free.
///
/// Beyond `u64`, small primes are divided out by trial division and the rest is split by Pollard's
/// rho method with Miller–Rabin primality tests (see [`split_rest`]).
fn split_square_big(n: &BigInt) -> (BigInt, BigInt) {
    if let Some(small) = n.to_u64() {
        let (k, s) = split_square(small);
        return (BigInt::from(k), BigInt::from(s));
    }
    let mut rest = n.clone();
    let mut square_root = BigInt::one();
    let mut free = BigInt::one();
    let mut d = 2u64;
    while d < 10_000 {
        let big_d = BigInt::from(d);
        let mut count = 0;
        while (&rest % &big_d).is_zero() {
            rest /= &big_d;
            count += 1;
        }
        for _ in 0..count / 2 {
            square_root *= &big_d;
        }
        if count % 2 == 1 {
            free *= &big_d;
        }
        d += if d == 2 { 1 } else { 2 };
    }
    let mut primes: Vec<BigInt> = Vec::new();
    split_rest(rest, &mut primes);
    primes.sort();
    let mut idx = 0;
    while idx < primes.len() {
        if idx + 1 < primes.len() && primes[idx] == primes[idx + 1] {
            square_root *= &primes[idx];
            idx += 2;
        } else {
            free *= &primes[idx];
            idx += 1;
        }
    }
    (square_root, free)
}

/// Appends to `out` factors of `n > 0` (free of primes below 10^4) whose product is `n`: primes,
/// found by Pollard's rho method (Brent's variant) and the Miller–Rabin test.
///
/// Miller–Rabin with the first twelve prime bases is exact below 3.3 * 10^24 and wrong for
/// composites beyond with probability below 4^-12; a composite whose factors the rho method does
/// not find within its step budget (two primes beyond some 10^9 each) is kept whole, unless it is
/// a perfect square. Radicands this large only come from model text that writes them.
fn split_rest(n: BigInt, out: &mut Vec<BigInt>) {
    if n.is_one() {
        return;
    }
    let root = n.sqrt();
    if &root * &root == n {
        split_rest(root.clone(), out);
        split_rest(root, out);
        return;
    }
    if is_probable_prime(&n) {
        out.push(n);
        return;
    }
    match rho_factor(&n) {
        Some(d) => {
            let other = &n / &d;
            split_rest(d, out);
            split_rest(other, out);
        }
        None => out.push(n),
    }
}

/// Miller–Rabin with the first twelve primes as bases, for odd `n` beyond 10^4.
fn is_probable_prime(n: &BigInt) -> bool {
    let one = BigInt::one();
    let n_minus_one = n - &one;
    let mut d = n_minus_one.clone();
    let mut r = 0u32;
    while d.is_even() {
        d >>= 1;
        r += 1;
    }
    'bases: for base in [2u32, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37] {
        let mut x = BigInt::from(base).modpow(&d, n);
        if x == one || x == n_minus_one {
            continue;
        }
        for _ in 1..r {
            x = (&x * &x) % n;
            if x == n_minus_one {
                continue 'bases;
            }
        }
        return false;
    }
    true
}

/// A non-trivial factor of the odd composite `n` by Brent's variant of Pollard's rho method, or
/// `None` when the step budget runs out.
fn rho_factor(n: &BigInt) -> Option<BigInt> {
    const BUDGET: u64 = 1 << 16;
    for c in 1u32..4 {
        let c = BigInt::from(c);
        let step = |x: &BigInt| (x * x + &c) % n;
        let (mut x, mut y) = (BigInt::from(2), BigInt::from(2));
        let mut steps = 0u64;
        let mut product = BigInt::one();
        let mut last = (x.clone(), y.clone());
        loop {
            x = step(&x);
            y = step(&step(&y));
            product = (product * (&x - &y).abs()) % n;
            steps += 1;
            if steps % 64 == 0 || product.is_zero() {
                let g = product.gcd(n);
                if g.is_one() {
                    last = (x.clone(), y.clone());
                } else {
                    // Redo the last block one step at a time when the batch overshot to `n`.
                    let (mut x1, mut y1) = last.clone();
                    let mut g = g;
                    if &g == n {
                        loop {
                            x1 = step(&x1);
                            y1 = step(&step(&y1));
                            g = (&x1 - &y1).abs().gcd(n);
                            if !g.is_one() {
                                break;
                            }
                        }
                    }
                    if &g != n {
                        return Some(g);
                    }
                    break;
                }
            }
            if steps >= BUDGET {
                return None;
            }
        }
    }
    None
}

/// The smallest prime factor of `n > 1`.
fn smallest_prime_factor(n: u64) -> u64 {
    let mut d = 2u64;
    while d.saturating_mul(d) <= n {
        if n % d == 0 {
            return d;
        }
        d += if d == 2 { 1 } else { 2 };
    }
    n
}

/// `sqrt(a) * sqrt(b) = coef * sqrt(s)` for square-free `a`, `b`.
///
/// With `g = gcd(a, b)` the product `ab = g^2 (a/g)(b/g)` and `(a/g)(b/g)` is square-free. Two
/// negative radicands give `i*sqrt|a| * i*sqrt|b| = -sqrt(ab)`, hence the sign.
fn mul_basis(a: &Radicand, b: &Radicand) -> (Rational, Radicand) {
    if a.is_one() {
        return (Rational::one(), b.clone());
    }
    if b.is_one() {
        return (Rational::one(), a.clone());
    }
    let negative = a.is_negative() && b.is_negative();
    if let (Some(x), Some(y)) = (a.to_i64(), b.to_i64()) {
        let g = x.unsigned_abs().gcd(&y.unsigned_abs());
        let g = i64::try_from(g).expect("a divisor of an i64");
        let coef = Rational::from_i64(if negative { -g } else { g });
        let s = match (x / g).checked_mul(y / g) {
            Some(s) => Radicand::from(s),
            None => Radicand::from_bigint(BigInt::from(x / g) * BigInt::from(y / g)),
        };
        return (coef, s);
    }
    let (x, y) = (a.to_bigint(), b.to_bigint());
    let g = x.gcd(&y);
    let s = Radicand::from_bigint((&x / &g) * (&y / &g));
    let coef = Rational::from_bigint(if negative { -g } else { g });
    (coef, s)
}

/// Whether the conjugation named by `base` (`-1` for complex conjugation, otherwise a radicand
/// factor from [`Radical::some_base`]) negates `sqrt(s)`.
fn flips(base: &Radicand, s: &Radicand) -> bool {
    if *base == Radicand::MINUS_ONE {
        s.is_negative()
    } else {
        s.divisible_by(base)
    }
}

/// A zero value usable where a reference with `'static` lifetime is needed.
pub(crate) static ZERO: Radical = Radical { terms: Vec::new() };

impl Radical {
    /// `sqrt(value)` for any rational (negative values give `i*sqrt(|value|)`).
    ///
    /// With `value = p/q` in lowest terms, `p = a^2 s1` and `q = b^2 s2`, the root is
    /// `a/(b s2) * sqrt(s1 s2)`; `s1 s2` is square-free because `p` and `q` are coprime.
    pub fn sqrt_of(value: &Rational) -> Radical {
        if value.is_zero() {
            return Radical::zero();
        }
        let (a, s1) = split_square_big(&value.numer().abs());
        let (b, s2) = split_square_big(value.denom());
        let s = &s1 * &s2;
        let s = if value.is_negative() { -s } else { s };
        let coef = Rational::new(a, b * s2).expect("denominator is positive");
        Radical { terms: vec![(Radicand::from_bigint(s), coef)] }
    }
    /// The imaginary unit.
    pub fn i() -> Radical {
        Radical { terms: vec![(Radicand::MINUS_ONE, Rational::one())] }
    }
    /// `coef * sqrt(s)` for an `s` the caller knows to be square-free (taken from another value).
    pub(crate) fn basis_unchecked(s: Radicand, coef: Rational) -> Radical {
        Radical::from_terms(vec![(s, coef)])
    }
    /// `coef * sqrt(s)` for a square-free `s`; `None` when `s` is not square-free or is zero.
    /// Beyond 64 bits this factors `s` (see [`Radical::sqrt_of`]).
    pub fn basis(s: impl Into<Radicand>, coef: Rational) -> Option<Radical> {
        let s = s.into();
        let magnitude = s.to_bigint().abs();
        if magnitude.is_zero() {
            return None;
        }
        let (k, _) = split_square_big(&magnitude);
        if !k.is_one() {
            return None;
        }
        Some(Radical::from_terms(vec![(s, coef)]))
    }
    /// The rational value, when there is no radical part.
    pub fn as_rational(&self) -> Option<Rational> {
        match self.terms.as_slice() {
            [] => Some(Rational::zero()),
            [(s, c)] if s.is_one() => Some(c.clone()),
            _ => None,
        }
    }
    /// `(s, c_s)` pairs sorted by `s`, no zero coefficients.
    pub fn terms(&self) -> &[(Radicand, Rational)] {
        &self.terms
    }
    /// Whether the value is real (no term with negative `s`).
    pub fn is_real(&self) -> bool {
        self.terms.iter().all(|(s, _)| !s.is_negative())
    }
    /// The real part (terms with positive `s`).
    pub fn re(&self) -> Radical {
        Radical { terms: self.terms.iter().filter(|(s, _)| !s.is_negative()).cloned().collect() }
    }
    /// The imaginary part as a real value: `x = re + i*im`.
    pub fn im(&self) -> Radical {
        let terms = self
            .terms
            .iter()
            .filter(|(s, _)| s.is_negative())
            .map(|(s, c)| (s.negated(), c.clone()));
        Radical::from_terms(terms.collect())
    }
    /// Multiplies every coefficient by a rational.
    pub fn scale(&self, factor: &Rational) -> Radical {
        if factor.is_zero() {
            return Radical::zero();
        }
        Radical { terms: self.terms.iter().map(|(s, c)| (s.clone(), c * factor)).collect() }
    }

    /// Sorts by `s`, merges equal `s` and drops zeros.
    fn from_terms(mut terms: Vec<(Radicand, Rational)>) -> Radical {
        terms.sort_by(|a, b| a.0.cmp(&b.0));
        let mut res: Vec<(Radicand, Rational)> = Vec::with_capacity(terms.len());
        for (s, c) in terms {
            match res.last_mut() {
                Some((last_s, last_c)) if *last_s == s => *last_c += &c,
                _ => {
                    if let Some((_, last_c)) = res.last() {
                        if last_c.is_zero() {
                            res.pop();
                        }
                    }
                    res.push((s, c));
                }
            }
        }
        if let Some((_, last_c)) = res.last() {
            if last_c.is_zero() {
                res.pop();
            }
        }
        Radical { terms: res }
    }
    /// Applies the automorphism that negates `sqrt(base)` (`base = -1`: complex conjugation).
    fn flip(&self, base: &Radicand) -> Radical {
        let terms = self
            .terms
            .iter()
            .map(|(s, c)| (s.clone(), if flips(base, s) { -c } else { c.clone() }));
        Radical { terms: terms.collect() }
    }
    /// A radicand `d` (or `-1`) such that negating `sqrt(d)` is an automorphism of the field the
    /// value's square roots generate: `-1` when some term is imaginary, otherwise a prime factor
    /// of a radicand, or, for radicands beyond 64 bits, a divisor `d > 1` of one of them that
    /// every other radicand either is divisible by or is coprime to (then `d` behaves like a prime
    /// for these values, because they are square-free).
    fn some_base(&self) -> Option<Radicand> {
        let (s, _) = self.terms.iter().find(|(s, _)| !s.is_one())?;
        if s.is_negative() {
            return Some(Radicand::MINUS_ONE);
        }
        if let Some(small) = s.to_i64() {
            let p = smallest_prime_factor(small.unsigned_abs());
            return Some(Radicand::from(i64::try_from(p).expect("factor of an i64")));
        }
        let mut base = s.clone();
        'refine: loop {
            for (t, _) in &self.terms {
                let g = base.gcd(&t.abs());
                if !g.is_one() && g != base {
                    base = g;
                    continue 'refine;
                }
            }
            return Some(base);
        }
    }
    /// Whether some term involves `base`.
    fn involves(&self, base: &Radicand) -> bool {
        self.terms.iter().any(|(s, _)| flips(base, s))
    }
    /// Writes `self = a + b*sqrt(base)` with `a`, `b` free of `base`.
    fn split_on(&self, base: &Radicand) -> (Radical, Radical) {
        let mut a = Vec::new();
        let mut b = Vec::new();
        for (s, c) in &self.terms {
            if flips(base, s) {
                b.push((s.exact_div(base), c.clone()));
            } else {
                a.push((s.clone(), c.clone()));
            }
        }
        (Radical::from_terms(a), Radical::from_terms(b))
    }
    /// Number of distinct primes (and `-1`) that the radicands involve.
    fn n_primes(&self) -> u32 {
        let mut rest = self.clone();
        let mut count = 0;
        while let Some(p) = rest.some_base() {
            count += 1;
            let (a, b) = rest.split_on(&p);
            rest = a + b;
        }
        count
    }

    fn add_ref(&self, rhs: &Radical) -> Radical {
        if rhs.terms.is_empty() {
            return self.clone();
        }
        if self.terms.is_empty() {
            return rhs.clone();
        }
        let res = super::merge_sum(&self.terms, &rhs.terms, Radicand::cmp, |c, d| c + d);
        Radical { terms: res }
    }
    fn sub_ref(&self, rhs: &Radical) -> Radical {
        self.add_ref(&rhs.neg_ref())
    }
    fn mul_ref_impl(&self, rhs: &Radical) -> Radical {
        if let [(s, c)] = rhs.terms.as_slice() {
            if s.is_one() {
                return self.scale(c);
            }
        }
        if let [(s, c)] = self.terms.as_slice() {
            if s.is_one() {
                return rhs.scale(c);
            }
        }
        let mut products = Vec::with_capacity(self.terms.len() * rhs.terms.len());
        for (s, c) in &self.terms {
            for (t, d) in &rhs.terms {
                let (k, st) = mul_basis(s, t);
                products.push((st, c * d * k));
            }
        }
        Radical::from_terms(products)
    }
    fn neg_ref(&self) -> Radical {
        Radical { terms: self.terms.iter().map(|(s, c)| (s.clone(), -c)).collect() }
    }
}
forward_ops!(Radical);

impl Field for Radical {
    fn zero() -> Radical {
        Radical { terms: Vec::new() }
    }
    fn one() -> Radical {
        Radical { terms: vec![(Radicand::ONE, Rational::one())] }
    }
    fn is_zero(&self) -> bool {
        self.terms.is_empty()
    }
    fn is_one(&self) -> bool {
        matches!(self.terms.as_slice(), [(s, c)] if s.is_one() && c.is_one())
    }
    /// Multiplies by conjugates: for a prime `p` (or `-1`) in the value, `x * flip_p(x)` no longer
    /// involves `p`, so at most one step per prime reaches a rational.
    fn inv(&self) -> Option<Radical> {
        if let [(s, c)] = self.terms.as_slice() {
            // Since sqrt(s)^2 = s for either sign, 1/(c sqrt(s)) = sqrt(s)/(c s).
            let inv = (c * Rational::from_bigint(s.to_bigint())).inv()?;
            return Some(Radical { terms: vec![(s.clone(), inv)] });
        }
        if self.terms.is_empty() {
            return None;
        }
        let mut numer = Radical::one();
        let mut current = self.clone();
        loop {
            if let Some(r) = current.as_rational() {
                return Some(numer.scale(&r.inv()?));
            }
            let base = current.some_base().expect("a non-rational value has a radicand");
            let conjugate = current.flip(&base);
            numer = &numer * &conjugate;
            current = &current * &conjugate;
        }
    }
    fn from_rational(value: &Rational) -> Radical {
        if value.is_zero() {
            Radical::zero()
        } else {
            Radical { terms: vec![(Radicand::ONE, value.clone())] }
        }
    }
    fn conj(&self) -> Radical {
        self.flip(&Radicand::MINUS_ONE)
    }
    fn mul_ref(&self, other: &Radical) -> Radical {
        self.mul_ref_impl(other)
    }
    fn to_ratfunc(&self) -> RatFunc {
        RatFunc::constant(self.clone())
    }
}

/// A square root with `depth` levels of denesting left (see the `SquareRoot` impl below).
fn sqrt_depth(x: &Radical, depth: u32) -> Option<Radical> {
    if let Some(r) = x.as_rational() {
        return Some(Radical::sqrt_of(&r));
    }
    if let [(s, c)] = x.terms.as_slice() {
        if *s == Radicand::MINUS_ONE {
            // c*i = (|c|/2) * (1 ± i)^2, with the sign of c.
            let half = Radical::sqrt_of(&(c.abs() * Rational::ratio(1, 2).expect("2 is non-zero")));
            let unit = if c.is_negative() { -Radical::i() } else { Radical::i() };
            return Some(half * (Radical::one() + unit));
        }
    }
    if depth == 0 {
        return None;
    }
    let base = x.some_base()?;
    let (a, b) = x.split_on(&base);
    // With y = c + d*sqrt(p): y^2 = x exactly when c^2 + p d^2 = a and 2cd = b, so
    // c^2 = (a ± n)/2 with n^2 = a^2 - p b^2, and n must be free of p when y exists.
    let p = Radical::from_rational(&Rational::from_bigint(base.to_bigint()));
    let n = sqrt_depth(&(&a * &a - &b * &b * &p), depth - 1)?;
    if n.involves(&base) {
        return None;
    }
    let sqrt_p = Radical { terms: vec![(base, Rational::one())] };
    let half = Rational::ratio(1, 2).expect("2 is non-zero");
    for signed in [n.clone(), -n] {
        let c_squared = (&a + &signed).scale(&half);
        if c_squared.is_zero() {
            continue;
        }
        let Some(c) = sqrt_depth(&c_squared, depth - 1) else { continue };
        let Some(two_c_inv) = (&c + &c).inv() else { continue };
        let y = &c + &b * &two_c_inv * &sqrt_p;
        if &(&y * &y) == x {
            return Some(y);
        }
    }
    None
}

/// Complete for rationals and single terms; for other values it denests one prime at a time
/// (`sqrt(a + b sqrt p) = c + d sqrt p`), with a recursion depth bound, and checks the result, so
/// `None` may also mean the search gave up.
impl SquareRoot for Radical {
    fn sqrt(&self) -> Option<Radical> {
        if self.is_zero() {
            return Some(Radical::zero());
        }
        let depth = (2 * self.n_primes() + 2).min(8);
        sqrt_depth(self, depth)
    }
}

/// Writes one term `sign coef*basis*factors` of a sum. `first` suppresses the leading ` + `.
/// Used by `Radical`, `Poly` and `RatFunc` so that all of them print the same way.
pub(crate) fn write_term(
    f: &mut fmt::Formatter<'_>,
    s: &Radicand,
    coef: &Rational,
    factors: &[String],
    first: bool,
) -> fmt::Result {
    let sign = if coef.is_negative() {
        if first {
            "-"
        } else {
            " - "
        }
    } else if first {
        ""
    } else {
        " + "
    };
    let magnitude = coef.abs();
    let mut parts: Vec<String> = Vec::new();
    if !magnitude.is_one() || (s.is_one() && factors.is_empty()) {
        parts.push(magnitude.to_string());
    }
    if s.is_negative() {
        parts.push("i".to_string());
    }
    if !s.is_unit() {
        parts.push(format!("sqrt({})", s.abs()));
    }
    parts.extend(factors.iter().cloned());
    write!(f, "{sign}{}", parts.join("*"))
}

impl Radical {
    /// The terms in display order: rational part, real radicals, then imaginary ones.
    pub(crate) fn display_order(&self) -> Vec<&(Radicand, Rational)> {
        let mut res: Vec<&(Radicand, Rational)> = self.terms.iter().collect();
        res.sort_by_key(|(s, _)| (s.is_negative(), s.abs()));
        res
    }
    /// Whether the value prints as one product (no `+`/`-` between terms).
    pub(crate) fn is_single_term(&self) -> bool {
        self.terms.len() == 1
    }
    /// Writes the value as a sum, continuing a sum when `first` is false.
    pub(crate) fn write_sum(
        &self,
        f: &mut fmt::Formatter<'_>,
        factors: &[String],
        first: bool,
    ) -> fmt::Result {
        for (idx, (s, c)) in self.display_order().into_iter().enumerate() {
            write_term(f, s, c, factors, first && idx == 0)?;
        }
        Ok(())
    }
}

/// Contract syntax: `3`, `-1/2`, `sqrt(2)`, `-3/2*sqrt(6)`, `2*i`, `i*sqrt(2)`, `1 + sqrt(2)`.
/// Rational part first, then real radicals by increasing radicand, then imaginary ones.
impl fmt::Display for Radical {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.terms.is_empty() {
            return write!(f, "0");
        }
        self.write_sum(f, &[], true)
    }
}

impl From<Rational> for Radical {
    fn from(value: Rational) -> Radical {
        Radical::from_rational(&value)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn q(n: i64, d: i64) -> Rational {
        Rational::ratio(n, d).expect("non-zero denominator")
    }
    fn r(n: i64) -> Radical {
        Radical::from_i64(n)
    }
    fn root(n: i64) -> Radical {
        Radical::sqrt_of(&Rational::from_i64(n))
    }

    #[test]
    fn split_square_examples() {
        assert_eq!(split_square(12), (2, 3));
        assert_eq!(split_square(1), (1, 1));
        assert_eq!(split_square(49), (7, 1));
        assert_eq!(split_square(2 * 9 * 25 * 7), (15, 14));
        // A square of a prime above the cube-root bound of the trial division.
        assert_eq!(split_square(1_000_003 * 1_000_003 * 5), (1_000_003, 5));
    }

    /// Two primes just above 2^32 (checked by trial division when this test was written): their
    /// product is a square-free radicand of 65 bits.
    const P: i64 = 4_294_967_311;
    const Q: i64 = 4_294_967_357;

    fn big(n: &str) -> Radicand {
        Radicand::from_bigint(n.parse().expect("an integer"))
    }

    #[test]
    fn radicands_beyond_64_bits_are_exact() {
        let pq = root(P) * root(Q);
        assert_eq!(pq, Radical::from_terms(vec![(big("18446744400127067027"), q(1, 1))]));
        assert_eq!(pq.to_string(), "sqrt(18446744400127067027)");
        // sqrt(pq) * sqrt(p) = p sqrt(q), back inside 64 bits.
        assert_eq!(&pq * &root(P), root(Q).scale(&Rational::from_i64(P)));
        assert_eq!(&pq * &pq, r(P) * r(Q));
        assert_eq!(root(-P) * root(-Q), -pq.clone());
        let x = r(1) + &pq + root(3);
        assert_eq!(&x * &x.inv().unwrap(), r(1));
        assert_eq!((&x * &x).sqrt().map(|y| &y * &y), Some(&x * &x));
        // A square beyond 64 bits under a root comes out.
        let square = Rational::from_bigint(BigInt::from(P) * BigInt::from(P) * BigInt::from(7));
        assert_eq!(Radical::sqrt_of(&square), root(7).scale(&Rational::from_i64(P)));
        assert!(Radical::basis(
            Radicand::from_bigint(BigInt::from(P) * BigInt::from(P) * BigInt::from(7)),
            q(1, 1)
        )
        .is_none());
    }

    #[test]
    fn sqrt_of_pulls_out_squares() {
        assert_eq!(root(8), Radical::basis(2, q(2, 1)).unwrap());
        assert_eq!(Radical::sqrt_of(&q(1, 2)), Radical::basis(2, q(1, 2)).unwrap());
        assert_eq!(Radical::sqrt_of(&q(-9, 8)), Radical::basis(-2, q(3, 4)).unwrap());
        assert_eq!(root(-1), Radical::i());
        assert_eq!(root(4), r(2));
    }

    #[test]
    fn products_of_radicals() {
        assert_eq!(Radical::i() * Radical::i(), r(-1));
        assert_eq!(root(-2) * root(-3), -root(6));
        assert_eq!(root(2) * root(6), r(2) * root(3));
        assert_eq!(root(-2) * root(2), r(2) * Radical::i());
    }

    #[test]
    fn inverses() {
        let x = r(1) + root(2);
        assert_eq!(x.inv().unwrap(), root(2) - r(1));
        let y = r(1) + root(2) + root(3);
        assert_eq!(&y * &y.inv().unwrap(), r(1));
        let z = r(2) + Radical::i() + root(-6) - root(5);
        assert_eq!(&z * &z.inv().unwrap(), r(1));
        assert_eq!(Radical::zero().inv(), None);
    }

    #[test]
    fn conjugation_and_parts() {
        let z = r(1) + root(-3);
        assert_eq!(z.conj(), r(1) - root(-3));
        assert!(!z.is_real());
        assert_eq!(z.re(), r(1));
        assert_eq!(z.im(), root(3));
    }

    #[test]
    fn square_roots() {
        assert_eq!(r(-4).sqrt().map(|y| &y * &y), Some(r(-4)));
        let two_i = r(2) * Radical::i();
        assert_eq!(two_i.sqrt().map(|y| &y * &y), Some(two_i));
        let x = r(3) + r(2) * root(2);
        assert_eq!(x.sqrt().map(|y| &y * &y), Some(x));
        let w = (r(1) + root(2) + root(-3)) * (r(1) + root(2) + root(-3));
        assert_eq!(w.sqrt().map(|y| &y * &y), Some(w));
        assert_eq!(root(2).sqrt(), None);
        assert_eq!((r(1) + root(2)).sqrt(), None);
    }

    #[test]
    fn display() {
        assert_eq!(r(3).to_string(), "3");
        assert_eq!(Radical::from_rational(&q(-1, 2)).to_string(), "-1/2");
        assert_eq!(root(2).to_string(), "sqrt(2)");
        assert_eq!(Radical::basis(6, q(-3, 2)).unwrap().to_string(), "-3/2*sqrt(6)");
        assert_eq!(Radical::i().to_string(), "i");
        assert_eq!((-Radical::i()).to_string(), "-i");
        assert_eq!((r(2) * Radical::i()).to_string(), "2*i");
        assert_eq!(root(-2).to_string(), "i*sqrt(2)");
        assert_eq!((r(1) + root(2)).to_string(), "1 + sqrt(2)");
        assert_eq!((root(-3) - r(1)).to_string(), "-1 + i*sqrt(3)");
        assert_eq!(Radical::zero().to_string(), "0");
    }

    /// Small values: up to three terms over radicands in {1, 2, 3, 6, -1, -2}.
    fn small_radical() -> impl Strategy<Value = Radical> {
        let term = (prop::sample::select(vec![1i64, 2, 3, 6, -1, -2]), -3i64..=3, 1i64..=3);
        prop::collection::vec(term, 0..=3).prop_map(|terms| {
            Radical::from_terms(
                terms.into_iter().map(|(s, n, d)| (Radicand::from(s), q(n, d))).collect(),
            )
        })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn field_laws(a in small_radical(), b in small_radical(), c in small_radical()) {
            prop_assert_eq!(crate::exact::field_law_failure(&a, &b, &c), None);
        }

        #[test]
        fn square_root_of_square(a in small_radical()) {
            let square = &a * &a;
            let root = square.sqrt();
            prop_assert!(root.is_some());
            let root = root.unwrap();
            prop_assert_eq!(&root * &root, square);
        }
    }

    #[test]
    fn rational_field_laws_spot_check() {
        // Rational has its own module; a quick inverse check keeps `q` exercised here too.
        assert_eq!(Radical::from_rational(&q(2, 3)).inv(), Some(Radical::from_rational(&q(3, 2))));
    }
}
