//! Sparse multivariate polynomials in the parameters with [`Radical`] coefficients.
//! Start from [`Poly`]; its terms are kept in graded lexicographic order, highest first (see
//! [`Monomial::graded_cmp`]), so the first term is the leading one and `==` is structural.
//! [`Poly::gcd`] is the multivariate gcd that keeps `RatFunc` in lowest terms.

use std::cmp::Ordering;
use std::collections::BTreeSet;
use std::fmt;

use super::radical::ZERO;
use super::{forward_ops, Field, ParamId, Radical, Symbols};

/// A monomial: `(parameter, exponent)` pairs sorted by parameter, exponents positive.
///
/// The derived `Ord` is lexicographic on the pairs; the order that polynomials use is
/// [`Monomial::graded_cmp`].
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug, Default)]
pub struct Monomial(Vec<(ParamId, u32)>);

impl Monomial {
    /// The `(parameter, exponent)` pairs.
    pub fn factors(&self) -> &[(ParamId, u32)] {
        &self.0
    }
    /// The empty monomial `1`.
    pub fn one() -> Monomial {
        Monomial(Vec::new())
    }
    /// `p^exponent` (the monomial `1` when `exponent` is zero).
    pub fn var_pow(p: ParamId, exponent: u32) -> Monomial {
        if exponent == 0 {
            Monomial::one()
        } else {
            Monomial(vec![(p, exponent)])
        }
    }
    /// A monomial from any pairs: sorts them, adds exponents of repeated parameters, drops zeros.
    pub fn new(mut factors: Vec<(ParamId, u32)>) -> Monomial {
        factors.sort_by_key(|(p, _)| *p);
        let mut res: Vec<(ParamId, u32)> = Vec::with_capacity(factors.len());
        for (p, e) in factors {
            match res.last_mut() {
                Some((last, acc)) if *last == p => *acc += e,
                _ => res.push((p, e)),
            }
        }
        res.retain(|(_, e)| *e > 0);
        Monomial(res)
    }
    /// Whether this is the monomial `1`.
    pub fn is_one(&self) -> bool {
        self.0.is_empty()
    }
    /// The total degree.
    pub fn degree(&self) -> u32 {
        self.0.iter().map(|(_, e)| e).sum()
    }
    /// The exponent of `p`.
    pub fn degree_in(&self, p: ParamId) -> u32 {
        self.0.iter().find(|(q, _)| *q == p).map_or(0, |(_, e)| *e)
    }
    /// The product.
    pub fn mul(&self, other: &Monomial) -> Monomial {
        if other.0.is_empty() {
            return self.clone();
        }
        if self.0.is_empty() {
            return other.clone();
        }
        let mut res = Vec::with_capacity(self.0.len() + other.0.len());
        let (mut left, mut right) = (self.0.iter().peekable(), other.0.iter().peekable());
        loop {
            match (left.peek(), right.peek()) {
                (Some(&&(p, e)), Some(&&(q, f))) => match p.cmp(&q) {
                    Ordering::Less => {
                        res.push((p, e));
                        left.next();
                    }
                    Ordering::Greater => {
                        res.push((q, f));
                        right.next();
                    }
                    Ordering::Equal => {
                        res.push((p, e + f));
                        left.next();
                        right.next();
                    }
                },
                (Some(&&pair), None) => {
                    res.push(pair);
                    left.next();
                }
                (None, Some(&&pair)) => {
                    res.push(pair);
                    right.next();
                }
                (None, None) => break,
            }
        }
        Monomial(res)
    }
    /// `self / other` when `other` divides `self`.
    pub fn div(&self, other: &Monomial) -> Option<Monomial> {
        let mut res = Vec::with_capacity(self.0.len());
        let mut right = other.0.iter().peekable();
        for &(p, e) in &self.0 {
            match right.peek() {
                Some(&&(q, f)) if q == p => {
                    if f > e {
                        return None;
                    }
                    if e > f {
                        res.push((p, e - f));
                    }
                    right.next();
                }
                Some(&&(q, _)) if q < p => return None,
                _ => res.push((p, e)),
            }
        }
        if right.next().is_some() {
            return None;
        }
        Some(Monomial(res))
    }
    /// The greatest common divisor (minimum exponents).
    pub fn gcd(&self, other: &Monomial) -> Monomial {
        let res = self.0.iter().filter_map(|&(p, e)| {
            let f = other.degree_in(p);
            (f > 0).then_some((p, e.min(f)))
        });
        Monomial(res.collect())
    }
    /// The monomial without `p`.
    pub fn without(&self, p: ParamId) -> Monomial {
        Monomial(self.0.iter().filter(|(q, _)| *q != p).copied().collect())
    }
    /// The canonical term order: graded lexicographic. Higher total degree is greater; at equal
    /// degree the first parameter (lowest `ParamId`) whose exponents differ decides, a larger
    /// exponent being greater. This puts `g^2` before `g*t` before `t^2` before `g`.
    pub fn graded_cmp(&self, other: &Monomial) -> Ordering {
        self.degree().cmp(&other.degree()).then_with(|| {
            for (&(p, e), &(q, f)) in self.0.iter().zip(&other.0) {
                if p != q {
                    // The one with the smaller parameter has a positive exponent where the other
                    // has none.
                    return if p < q { Ordering::Greater } else { Ordering::Less };
                }
                if e != f {
                    return e.cmp(&f);
                }
            }
            self.0.len().cmp(&other.0.len())
        })
    }
    /// The factors in contract syntax, e.g. `["g^2", "t"]`.
    pub(crate) fn factor_strings(&self, symbols: Symbols<'_>) -> Vec<String> {
        self.0
            .iter()
            .map(|(p, e)| {
                let name = symbols.names.get(p.0 as usize).map_or("?", String::as_str);
                if *e == 1 {
                    name.to_string()
                } else {
                    format!("{name}^{e}")
                }
            })
            .collect()
    }
}

/// A polynomial: monomials in canonical order with non-zero `Radical` coefficients.
///
/// Terms are sorted by [`Monomial::graded_cmp`], highest first.
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug, Default)]
pub struct Poly {
    terms: Vec<(Monomial, Radical)>,
}

impl Poly {
    /// The terms in canonical order.
    pub fn terms(&self) -> &[(Monomial, Radical)] {
        &self.terms
    }
    /// The zero polynomial.
    pub fn zero() -> Poly {
        Poly { terms: Vec::new() }
    }
    /// The constant `1`.
    pub fn one() -> Poly {
        Poly::constant(Radical::one())
    }
    /// A constant polynomial.
    pub fn constant(value: Radical) -> Poly {
        if value.is_zero() {
            Poly::zero()
        } else {
            Poly { terms: vec![(Monomial::one(), value)] }
        }
    }
    /// The parameter `p`.
    pub fn var(p: ParamId) -> Poly {
        Poly { terms: vec![(Monomial::var_pow(p, 1), Radical::one())] }
    }
    /// `coef * monomial`.
    pub fn term(monomial: Monomial, coef: Radical) -> Poly {
        if coef.is_zero() {
            Poly::zero()
        } else {
            Poly { terms: vec![(monomial, coef)] }
        }
    }
    /// A polynomial from terms in any order: sorts, merges equal monomials, drops zeros.
    pub fn from_terms(mut terms: Vec<(Monomial, Radical)>) -> Poly {
        terms.sort_by(|(m, _), (n, _)| n.graded_cmp(m));
        let mut res: Vec<(Monomial, Radical)> = Vec::with_capacity(terms.len());
        for (m, c) in terms {
            match res.last_mut() {
                Some((last, acc)) if *last == m => *acc += &c,
                _ => {
                    if res.last().is_some_and(|(_, acc)| acc.is_zero()) {
                        res.pop();
                    }
                    res.push((m, c));
                }
            }
        }
        if res.last().is_some_and(|(_, acc)| acc.is_zero()) {
            res.pop();
        }
        Poly { terms: res }
    }
    /// Whether this is the zero polynomial.
    pub fn is_zero(&self) -> bool {
        self.terms.is_empty()
    }
    /// Whether this is the constant `1`.
    pub fn is_one(&self) -> bool {
        matches!(self.terms.as_slice(), [(m, c)] if m.is_one() && c.is_one())
    }
    /// The value when no parameter appears (zero included).
    pub fn is_constant(&self) -> Option<&Radical> {
        match self.terms.as_slice() {
            [] => Some(&ZERO),
            [(m, c)] if m.is_one() => Some(c),
            _ => None,
        }
    }
    /// The total degree (`0` for constants and zero).
    pub fn degree(&self) -> u32 {
        self.terms.first().map_or(0, |(m, _)| m.degree())
    }
    /// The degree in the parameter `p`.
    pub fn degree_in(&self, p: ParamId) -> u32 {
        self.terms.iter().map(|(m, _)| m.degree_in(p)).max().unwrap_or(0)
    }
    /// The leading term in the canonical order; `None` for zero.
    pub fn leading_term(&self) -> Option<&(Monomial, Radical)> {
        self.terms.first()
    }
    /// The leading coefficient; `None` for zero.
    pub fn leading_coeff(&self) -> Option<&Radical> {
        self.terms.first().map(|(_, c)| c)
    }
    /// The parameters that appear.
    pub fn params(&self) -> BTreeSet<ParamId> {
        self.terms.iter().flat_map(|(m, _)| m.0.iter().map(|(p, _)| *p)).collect()
    }
    /// Multiplies by a constant.
    pub fn scale(&self, factor: &Radical) -> Poly {
        if factor.is_zero() {
            return Poly::zero();
        }
        if factor.is_one() {
            return self.clone();
        }
        Poly { terms: self.terms.iter().map(|(m, c)| (m.clone(), c * factor)).collect() }
    }
    /// Multiplies by `coef * monomial` (the order is preserved, so no sorting is needed).
    pub fn mul_term(&self, monomial: &Monomial, coef: &Radical) -> Poly {
        if coef.is_zero() {
            return Poly::zero();
        }
        let terms = self.terms.iter().map(|(m, c)| (m.mul(monomial), c * coef));
        Poly { terms: terms.collect() }
    }
    /// The polynomial divided by its leading coefficient (zero stays zero).
    pub fn monic(&self) -> Poly {
        match self.leading_coeff() {
            Some(c) if !c.is_one() => {
                self.scale(&c.inv().expect("leading coefficient is non-zero"))
            }
            _ => self.clone(),
        }
    }
    /// Non-negative integer power.
    pub fn pow(&self, exponent: u32) -> Poly {
        let mut res = Poly::one();
        let mut base = self.clone();
        let mut rest = exponent;
        while rest > 0 {
            if rest & 1 == 1 {
                res = &res * &base;
            }
            rest >>= 1;
            if rest > 0 {
                base = &base * &base;
            }
        }
        res
    }
    /// Complex conjugate of the coefficients (parameters are real).
    pub fn conj(&self) -> Poly {
        Poly { terms: self.terms.iter().map(|(m, c)| (m.clone(), c.conj())).collect() }
    }
    /// Substitutes `value` for the parameter `p`.
    pub fn eval_param(&self, p: ParamId, value: &Radical) -> Poly {
        if !self.terms.iter().any(|(m, _)| m.degree_in(p) > 0) {
            return self.clone();
        }
        let mut powers: Vec<Radical> = vec![Radical::one()];
        let terms = self.terms.iter().map(|(m, c)| {
            let e = m.degree_in(p) as usize;
            while powers.len() <= e {
                let next = powers.last().expect("starts with one entry") * value;
                powers.push(next);
            }
            (m.without(p), c * &powers[e])
        });
        Poly::from_terms(terms.collect())
    }
    /// `self / divisor` when the division is exact, `None` otherwise (or when `divisor` is zero).
    ///
    /// Multivariate division by the leading term: if `divisor` divides `self`, every remainder
    /// is a multiple of `divisor`, so its leading term is divisible by the divisor's leading term;
    /// the first one that is not proves the division inexact.
    pub fn div_exact(&self, divisor: &Poly) -> Option<Poly> {
        let (lead_mono, lead_coef) = divisor.terms.first()?;
        if self.is_zero() {
            return Some(Poly::zero());
        }
        let lead_inv = lead_coef.inv().expect("leading coefficient is non-zero");
        if divisor.terms.len() == 1 {
            let terms = self.terms.iter().map(|(m, c)| Some((m.div(lead_mono)?, c * &lead_inv)));
            return Some(Poly { terms: terms.collect::<Option<_>>()? });
        }
        if divisor.degree() > self.degree() {
            return None;
        }
        for (p, e) in divisor.terms.iter().flat_map(|(m, _)| m.0.iter()) {
            if self.degree_in(*p) < *e {
                return None;
            }
        }
        // The remainder in an ordered map, so that each step costs a few map updates rather than
        // a pass over the whole remainder: leading terms come off the top in canonical order,
        // which is also the order of the quotient's terms.
        let mut rest: std::collections::BTreeMap<Graded, Radical> =
            self.terms.iter().map(|(m, c)| (Graded(m.clone()), c.clone())).collect();
        let mut quotient = Vec::new();
        while let Some((Graded(m), c)) = rest.pop_first() {
            let q_mono = m.div(lead_mono)?;
            let q_coef = &c * &lead_inv;
            for (dm, dc) in &divisor.terms[1..] {
                let product = dc * &q_coef;
                match rest.entry(Graded(dm.mul(&q_mono))) {
                    std::collections::btree_map::Entry::Occupied(mut entry) => {
                        let left = entry.get().clone() - &product;
                        if left.is_zero() {
                            entry.remove();
                        } else {
                            *entry.get_mut() = left;
                        }
                    }
                    std::collections::btree_map::Entry::Vacant(entry) => {
                        entry.insert(-product);
                    }
                }
            }
            quotient.push((q_mono, q_coef));
        }
        Some(Poly { terms: quotient })
    }
    /// The greatest common divisor, monic (leading coefficient `1`); `gcd(0, 0) = 0`.
    ///
    /// Fast paths come first (a constant, a monomial, equal polynomials, one dividing the other);
    /// otherwise monomial contents are split off and the rest goes through a recursive content
    /// and primitive-part computation with a primitive pseudo-remainder sequence in one main
    /// parameter.
    pub fn gcd(&self, other: &Poly) -> Poly {
        if self.is_zero() {
            return other.monic();
        }
        if other.is_zero() {
            return self.monic();
        }
        if self.is_constant().is_some() || other.is_constant().is_some() {
            return Poly::one();
        }
        let self_content = self.monomial_content();
        let other_content = other.monomial_content();
        let mono = self_content.gcd(&other_content);
        if self.terms.len() == 1 || other.terms.len() == 1 {
            return Poly::term(mono, Radical::one());
        }
        let left = self.div_monomial(&self_content);
        let right = other.div_monomial(&other_content);
        let res = gcd_no_monomial(&left, &right);
        res.mul_term(&mono, &Radical::one())
    }
    /// The gcd of all monomials (minimum exponents).
    pub fn monomial_content(&self) -> Monomial {
        let mut terms = self.terms.iter();
        let Some((first, _)) = terms.next() else { return Monomial::one() };
        let mut res = first.clone();
        for (m, _) in terms {
            if res.is_one() {
                break;
            }
            res = res.gcd(m);
        }
        res
    }
    /// Prints in contract syntax, e.g. `g^2 + 3*t - 1/2`; the terms are in canonical order.
    pub fn display<'a>(&'a self, symbols: Symbols<'a>) -> impl fmt::Display + 'a {
        PolyDisplay { poly: self, symbols }
    }
    /// Writes the terms as a sum.
    pub(crate) fn write_sum(
        &self,
        f: &mut fmt::Formatter<'_>,
        symbols: Symbols<'_>,
    ) -> fmt::Result {
        if self.terms.is_empty() {
            return write!(f, "0");
        }
        for (idx, (m, c)) in self.terms.iter().enumerate() {
            let factors = m.factor_strings(symbols);
            if c.is_single_term() || factors.is_empty() {
                c.write_sum(f, &factors, idx == 0)?;
            } else {
                // A sum of radicals times parameters: `(1 + sqrt(2))*g`.
                if idx > 0 {
                    write!(f, " + ")?;
                }
                write!(f, "({c})*{}", factors.join("*"))?;
            }
        }
        Ok(())
    }
    /// Whether the polynomial prints as a single product (no `+` or `-` between terms).
    pub(crate) fn is_product(&self) -> bool {
        match self.terms.as_slice() {
            [(_, c)] => c.is_single_term(),
            _ => false,
        }
    }

    /// Divides every term by a monomial known to divide all of them.
    fn div_monomial(&self, m: &Monomial) -> Poly {
        if m.is_one() {
            return self.clone();
        }
        let terms =
            self.terms.iter().map(|(n, c)| (n.div(m).expect("m divides every term"), c.clone()));
        Poly { terms: terms.collect() }
    }
    /// Coefficients as a polynomial in `x`: entry `k` is the coefficient of `x^k`.
    fn coeffs_in(&self, x: ParamId) -> Vec<Poly> {
        let mut res: Vec<Vec<(Monomial, Radical)>> =
            vec![Vec::new(); self.degree_in(x) as usize + 1];
        // Removing the same power of x from monomials keeps their graded order, so every bucket
        // is already sorted.
        for (m, c) in &self.terms {
            res[m.degree_in(x) as usize].push((m.without(x), c.clone()));
        }
        res.into_iter().map(|terms| Poly { terms }).collect()
    }
    /// The inverse of [`Poly::coeffs_in`].
    fn from_coeffs(coeffs: &[Poly], x: ParamId) -> Poly {
        let mut terms = Vec::new();
        for (k, coef) in coeffs.iter().enumerate() {
            let power = Monomial::var_pow(x, u32::try_from(k).expect("degree fits in u32"));
            terms.extend(coef.terms.iter().map(|(m, c)| (m.mul(&power), c.clone())));
        }
        Poly::from_terms(terms)
    }

    fn add_ref(&self, rhs: &Poly) -> Poly {
        if rhs.terms.is_empty() {
            return self.clone();
        }
        if self.terms.is_empty() {
            return rhs.clone();
        }
        // Terms run from the highest monomial down.
        let res = super::merge_sum(&self.terms, &rhs.terms, |m, n| n.graded_cmp(m), |c, d| c + d);
        Poly { terms: res }
    }
    fn sub_ref(&self, rhs: &Poly) -> Poly {
        self.add_ref(&rhs.neg_ref())
    }
    fn mul_ref_impl(&self, rhs: &Poly) -> Poly {
        if self.is_zero() || rhs.is_zero() {
            return Poly::zero();
        }
        if let [(m, c)] = rhs.terms.as_slice() {
            return self.mul_term(m, c);
        }
        if let [(m, c)] = self.terms.as_slice() {
            return rhs.mul_term(m, c);
        }
        let mut products = Vec::with_capacity(self.terms.len() * rhs.terms.len());
        for (m, c) in &self.terms {
            for (n, d) in &rhs.terms {
                products.push((m.mul(n), c * d));
            }
        }
        Poly::from_terms(products)
    }
    fn neg_ref(&self) -> Poly {
        Poly { terms: self.terms.iter().map(|(m, c)| (m.clone(), -c)).collect() }
    }
}
forward_ops!(Poly);

/// A monomial ordered so that the canonical leading term (the greatest in graded order) comes
/// first in a `BTreeMap`.
#[derive(PartialEq, Eq)]
struct Graded(Monomial);

impl Ord for Graded {
    fn cmp(&self, other: &Graded) -> Ordering {
        other.0.graded_cmp(&self.0)
    }
}

impl PartialOrd for Graded {
    fn partial_cmp(&self, other: &Graded) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

struct PolyDisplay<'a> {
    poly: &'a Poly,
    symbols: Symbols<'a>,
}

impl fmt::Display for PolyDisplay<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.poly.write_sum(f, self.symbols)
    }
}

/// The gcd of `start` and a list of polynomials, monic. The smallest entries go first and the
/// fold stops once it reaches `1`, which for coprime inputs usually happens at once.
fn gcd_fold(start: Poly, polys: &[Poly]) -> Poly {
    let mut order: Vec<&Poly> = polys.iter().filter(|p| !p.is_zero()).collect();
    order.sort_by_key(|p| p.terms.len());
    let mut res = start;
    for p in order {
        if res.is_one() {
            break;
        }
        res = res.gcd(p);
    }
    res.monic()
}

/// The primitive part with respect to the coefficient list's own content.
fn primitive_part(coeffs: Vec<Poly>) -> Vec<Poly> {
    let content = gcd_fold(Poly::zero(), &coeffs);
    if content.is_one() {
        return coeffs;
    }
    coeffs.iter().map(|p| p.div_exact(&content).expect("content divides every entry")).collect()
}

/// Gcd of two non-constant polynomials without monomial content, monic.
fn gcd_no_monomial(left: &Poly, right: &Poly) -> Poly {
    if left.is_constant().is_some() || right.is_constant().is_some() {
        return Poly::one();
    }
    let left_monic = left.monic();
    let right_monic = right.monic();
    if left_monic == right_monic {
        return left_monic;
    }
    let (small, large) = if left.terms.len() <= right.terms.len() {
        (&left_monic, &right_monic)
    } else {
        (&right_monic, &left_monic)
    };
    // Trial division catches the frequent case of one factor list containing the other, and a
    // polynomial of total degree one is irreducible, so for it the division decides.
    if large.div_exact(small).is_some() {
        return small.clone();
    }
    if small.degree() == 1 {
        return Poly::one();
    }
    let left_params = left.params();
    let right_params = right.params();
    // A parameter present on one side only cannot occur in the gcd, so the gcd divides each of
    // that side's coefficients with respect to it.
    if let Some(&x) = left_params.difference(&right_params).next() {
        return gcd_fold(right_monic, &left.coeffs_in(x));
    }
    if let Some(&x) = right_params.difference(&left_params).next() {
        return gcd_fold(left_monic, &right.coeffs_in(x));
    }
    // Main parameter: the smallest degree on the smaller side keeps the remainder sequence short,
    // and a constant leading coefficient there allows plain division instead of pseudo-division.
    let x = *left_params
        .iter()
        .min_by_key(|p| {
            let small_degree = small.degree_in(**p);
            let lead = &small.coeffs_in(**p)[small_degree as usize];
            (small_degree, lead.is_constant().is_none(), large.degree_in(**p))
        })
        .expect("a non-constant polynomial has a parameter");
    let mut a = large.coeffs_in(x);
    let mut b = small.coeffs_in(x);
    if a.len() < b.len() {
        std::mem::swap(&mut a, &mut b);
    }
    // gcd = gcd(contents) * gcd(primitive parts). The contents share one fold that usually stops
    // at `1` after a step or two; the primitive part of the last non-zero remainder of any
    // remainder sequence of `a` and `b` is the gcd of their primitive parts.
    let mut all_coeffs = a.clone();
    all_coeffs.extend(b.iter().cloned());
    let content = gcd_fold(Poly::zero(), &all_coeffs);
    loop {
        let rem = pseudo_remainder(&a, &b);
        if rem.is_empty() {
            break;
        }
        if rem.len() == 1 {
            return content;
        }
        // Making each remainder primitive keeps coefficients as small as the gcd itself.
        a = b;
        b = primitive_part(rem);
    }
    let last = Poly::from_coeffs(&primitive_part(b), x);
    (&content * &last).monic()
}

/// Pseudo-remainder of `a` by `b` as polynomials in one parameter with polynomial coefficients
/// (dense, entry `k` the coefficient of `x^k`, no trailing zeros, `b` non-empty). When the
/// leading coefficient of `b` is a constant, plain division is used instead.
fn pseudo_remainder(a: &[Poly], b: &[Poly]) -> Vec<Poly> {
    let lead = b.last().expect("divisor is non-zero");
    let lead_const = lead.is_constant().map(|c| c.inv().expect("leading coefficient is non-zero"));
    let mut rest: Vec<Poly> = a.to_vec();
    while rest.len() >= b.len() {
        let top = rest.last().expect("non-empty").clone();
        let shift = rest.len() - b.len();
        match &lead_const {
            Some(lead_inv) => {
                let factor = top.scale(lead_inv);
                for (k, coef) in b.iter().enumerate() {
                    rest[k + shift] = &rest[k + shift] - &(coef * &factor);
                }
            }
            None => {
                for (idx, entry) in rest.iter_mut().enumerate() {
                    let scaled = &*entry * lead;
                    *entry =
                        if idx >= shift { &scaled - &(&b[idx - shift] * &top) } else { scaled };
                }
            }
        }
        while rest.last().is_some_and(Poly::is_zero) {
            rest.pop();
        }
    }
    rest
}

#[cfg(test)]
mod tests {
    use super::*;

    fn g() -> Poly {
        Poly::var(ParamId(0))
    }
    fn t() -> Poly {
        Poly::var(ParamId(1))
    }
    fn u() -> Poly {
        Poly::var(ParamId(2))
    }
    fn c(n: i64) -> Poly {
        Poly::constant(Radical::from_i64(n))
    }

    #[test]
    fn canonical_order_is_graded_lex() {
        let p = &t() + &(&g() * &t()) + &g().pow(2) + &t().pow(2) + &g() + &c(1);
        let names = ["g".to_string(), "t".to_string()];
        let shown = p.display(Symbols { names: &names }).to_string();
        assert_eq!(shown, "g^2 + g*t + t^2 + g + t + 1");
    }

    #[test]
    fn exact_division() {
        let p = &g().pow(2) - &t().pow(2);
        assert_eq!(p.div_exact(&(&g() - &t())), Some(&g() + &t()));
        assert_eq!(p.div_exact(&(&g() - &c(1))), None);
        assert_eq!(p.div_exact(&Poly::zero()), None);
        assert_eq!(p.div_exact(&c(2)).map(|q| q.scale(&Radical::from_i64(2))), Some(p));
    }

    #[test]
    fn gcd_of_difference_of_squares_and_cube() {
        let a = &g().pow(2) - &t().pow(2);
        let b = (&g() + &t()).pow(3);
        assert_eq!(a.gcd(&b), &g() + &t());
    }

    #[test]
    fn gcd_of_products_of_linear_forms() {
        let e1 = &(&g() * &c(2)) - &u();
        let e2 = &u() - &t();
        let e3 = &(&g() + &t()) + &u();
        let a = &(&e1 * &e2) * &e3.pow(2);
        let b = &(&e1 * &e3) * &(&t() + &c(5));
        assert_eq!(a.gcd(&b), (&e1 * &e3).monic());
        assert_eq!(e2.gcd(&e3), Poly::one());
        let m = &g().pow(2) * &t();
        assert_eq!(m.gcd(&(&(&g() * &t().pow(3)) + &g().pow(3))), g());
    }

    #[test]
    fn gcd_with_radical_coefficients() {
        let s2 = Poly::constant(Radical::sqrt_of(&super::super::Rational::from_i64(2)));
        let f = &g() - &s2;
        let a = &f * &(&g() + &t());
        let b = &f * &(&g() - &t());
        assert_eq!(a.gcd(&b), f);
    }

    #[test]
    fn evaluation() {
        let p = &(&g().pow(2) * &t()) + &g();
        let at = p.eval_param(ParamId(0), &Radical::from_i64(3));
        assert_eq!(at, &(&t() * &c(9)) + &c(3));
    }
}
