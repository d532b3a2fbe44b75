//! Exact values and state vectors in the contract's text syntax, shared by report and JSON.
//!
//! Rational functions are printed with their numerator and denominator factored over the
//! differences of the unperturbed energies, the factors perturbation theory divides by, so that
//! `-g^4*(w + delta)/(w*(2*w + delta)^3)` reads as it was derived instead of as an expanded
//! quotient. The text stays in the contract's syntax and parses back to the same value.

use std::ops::Deref;

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Zero};

use crate::engine::Derivation;
use crate::exact::screen::{FactorPoint, Screen};
use crate::exact::{Field, Monomial, Poly, Radical, Radicand, RatFunc, Rational, Symbols};
use crate::linalg::SparseVec;
use crate::model::Basis;
use crate::spectrum::Spectrum;

/// Symbol names for printing, with the polynomials to factor denominators and numerators over.
pub(crate) struct Names {
    list: Vec<String>,
    factors: Vec<Poly>,
    /// Per factor, the point of `f = 0` that screens divisions (see [`Screen`]).
    points: Vec<Option<FactorPoint>>,
}

impl Deref for Names {
    type Target = [String];
    fn deref(&self) -> &[String] {
        &self.list
    }
}

impl Names {
    /// The symbols of a derivation, factoring over its unperturbed energy differences.
    pub(crate) fn for_derivation(derivation: &Derivation) -> Names {
        Names::with_spectrum(derivation.symbol_names(), &derivation.spectrum)
    }
    /// `list`, factoring over the energy differences of `spectrum`.
    pub(crate) fn with_spectrum(list: Vec<String>, spectrum: &Spectrum) -> Names {
        let symbolic: Vec<&RatFunc> = spectrum
            .levels
            .iter()
            .map(|l| &l.energy)
            .filter(|e| e.as_constant().is_none())
            .collect();
        let mut factors: Vec<Poly> = Vec::new();
        // Pairs of symbolic levels, and each symbolic level against the constant ones (its
        // difference to a constant level is the level itself shifted, so zero stands for them).
        const MAX_LEVELS: usize = 120;
        if symbolic.len() <= MAX_LEVELS {
            let zero = RatFunc::zero();
            let mut candidates: Vec<&RatFunc> = symbolic.clone();
            candidates.push(&zero);
            for (k, a) in symbolic.iter().enumerate() {
                for b in &candidates[k + 1..] {
                    let diff = (*a).clone() - *b;
                    if let Some(p) = primitive(diff.numer()) {
                        if p.degree() >= 1 && p.terms().len() > 1 && !factors.contains(&p) {
                            factors.push(p);
                        }
                    }
                }
            }
        }
        let points = factors.iter().map(FactorPoint::of).collect();
        Names { list, factors, points }
    }
}

/// `p` divided by its content, with a positive leading coefficient; `None` when the
/// coefficients are not all rational multiples of one square root.
fn primitive(p: &Poly) -> Option<Poly> {
    let content = content(p)?;
    Some(p.scale(&content.value().inv()?))
}

/// The content of a polynomial whose coefficients are rational multiples of one `sqrt(s)`: the
/// gcd of the rational parts (signed like the leading coefficient) times `sqrt(s)`.
struct Content {
    rational: Rational,
    radicand: Radicand,
}

impl Content {
    fn value(&self) -> Radical {
        Radical::basis_unchecked(self.radicand.clone(), self.rational.clone())
    }
}

fn content(p: &Poly) -> Option<Content> {
    let mut radicand = None;
    let mut numer = BigInt::zero();
    let mut denom = BigInt::one();
    for (_, c) in p.terms() {
        let [(s, q)] = c.terms() else { return None };
        if radicand.get_or_insert_with(|| s.clone()) != s {
            return None;
        }
        numer = numer.gcd(q.numer());
        denom = denom.lcm(q.denom());
    }
    let (_, first) = p.terms().first()?;
    let sign = if first.terms()[0].1.is_negative() { -BigInt::one() } else { BigInt::one() };
    Some(Content { rational: Rational::new(sign * numer, denom)?, radicand: radicand? })
}

/// A value in contract syntax, factored where that helps (see the module doc).
pub(crate) fn scalar(value: &RatFunc, names: &Names) -> String {
    let symbols = Symbols { names: &names.list };
    factored(value, names).unwrap_or_else(|| value.display(symbols).to_string())
}

/// A value written as `sign * constant * sqrt(radicand) * prod numer / prod denom`, where each
/// product runs over polynomials with powers: a monomial, powers of known energy differences, and
/// what is left.
pub(crate) struct Factored {
    /// Whether the value is negative as written.
    pub negative: bool,
    /// The positive rational constant.
    pub constant: Rational,
    /// The square-free radicand multiplying the numerator (1 for none).
    pub radicand: Radicand,
    /// Numerator factors with their powers, each with a positive leading coefficient.
    pub numer: Vec<(Poly, u32)>,
    /// Denominator factors with their powers.
    pub denom: Vec<(Poly, u32)>,
}

/// `value` factored over the unperturbed energy differences of `names`; `None` when that gains
/// nothing over the expanded form (a constant denominator, no known factor found, or
/// coefficients that are not rational multiples of one square root).
pub(crate) fn factor_value(value: &RatFunc, names: &Names) -> Option<Factored> {
    if names.factors.is_empty() || value.denom().is_constant().is_some() {
        return None;
    }
    let numer_content = content(value.numer())?;
    let denom_content = content(value.denom())?;
    if !denom_content.radicand.is_one() {
        return None;
    }
    let numer = split(value.numer(), &numer_content, &names.factors, &names.points)?;
    let denom = split(value.denom(), &denom_content, &names.factors, &names.points)?;
    if numer.powers.is_empty() && denom.powers.is_empty() {
        return None;
    }
    let constant = numer_content.rational * denom_content.rational.inv()?;
    Some(Factored {
        negative: constant.is_negative(),
        constant: constant.abs(),
        radicand: numer_content.radicand,
        numer: numer.into_factors(),
        denom: denom.into_factors(),
    })
}

/// `numer/denom` in contract syntax from [`factor_value`].
fn factored(value: &RatFunc, names: &Names) -> Option<String> {
    let parts = factor_value(value, names)?;
    let symbols = Symbols { names: &names.list };
    let mut top: Vec<String> = Vec::new();
    let mut bottom: Vec<String> = Vec::new();
    if !parts.constant.numer().is_one() {
        top.push(parts.constant.numer().to_string());
    }
    if !parts.radicand.is_one() {
        top.push(Radical::basis_unchecked(parts.radicand.clone(), Rational::one()).to_string());
    }
    if !parts.constant.denom().is_one() {
        bottom.push(parts.constant.denom().to_string());
    }
    let factor_text = |(p, e): &(Poly, u32)| {
        let text = p.display(symbols).to_string();
        let text = if is_sum(&text) { format!("({text})") } else { text };
        if *e == 1 {
            text
        } else {
            format!("{text}^{e}")
        }
    };
    top.extend(parts.numer.iter().map(factor_text));
    bottom.extend(parts.denom.iter().map(factor_text));
    let mut res = String::new();
    if parts.negative {
        res.push('-');
    }
    if top.is_empty() {
        res.push('1');
    } else {
        res.push_str(&top.join("*"));
    }
    match bottom.as_slice() {
        [] => {}
        [single] if !single.contains('*') && !single.contains('^') || is_group(single) => {
            res.push('/');
            res.push_str(single);
        }
        _ => res.push_str(&format!("/({})", bottom.join("*"))),
    }
    Some(res)
}

/// A polynomial written as `monomial * prod factor^power * rest` over a unit rational content.
struct Split {
    monomial: Monomial,
    powers: Vec<(Poly, u32)>,
    rest: Poly,
}

impl Split {
    /// The factors with their powers: the monomial (as one factor), the known factors, the rest.
    fn into_factors(self) -> Vec<(Poly, u32)> {
        let mut res = Vec::new();
        if !self.monomial.is_one() {
            res.push((Poly::term(self.monomial, Radical::one()), 1));
        }
        res.extend(self.powers);
        if !self.rest.is_one() {
            res.push((self.rest, 1));
        }
        res
    }
}

/// Whether `text` is one parenthesized group, like `(2*w + delta)`.
fn is_group(text: &str) -> bool {
    let Some(inner) = text.strip_prefix('(').and_then(|t| t.strip_suffix(')')) else {
        return false;
    };
    let mut depth = 0i32;
    for ch in inner.chars() {
        match ch {
            '(' => depth += 1,
            ')' => {
                depth -= 1;
                if depth < 0 {
                    return false;
                }
            }
            _ => {}
        }
    }
    depth == 0
}

fn split(
    poly: &Poly,
    content: &Content,
    factors: &[Poly],
    points: &[Option<FactorPoint>],
) -> Option<Split> {
    let mut rest = poly.scale(&content.value().inv()?);
    let monomial = rest.monomial_content();
    if !monomial.is_one() {
        rest = rest.div_exact(&Poly::term(monomial.clone(), Radical::one()))?;
    }
    let mut powers = Vec::new();
    let mut screen = Screen::new(&rest);
    for (f, point) in factors.iter().zip(points) {
        let mut e = 0;
        while rest.degree() >= f.degree() && screen.may_vanish(point.as_ref()) {
            match rest.div_exact(f) {
                Some(q) => {
                    rest = q;
                    screen = Screen::new(&rest);
                    e += 1;
                }
                None => break,
            }
        }
        if e > 0 {
            powers.push((f.clone(), e));
        }
    }
    // The leftover keeps a positive leading coefficient; a sign moves into the constant.
    Some(Split { monomial, powers, rest })
}

/// Whether a printed value is a sum at the top level (so it needs parentheses as a factor).
fn is_sum(text: &str) -> bool {
    let mut depth = 0i32;
    for (k, ch) in text.char_indices() {
        match ch {
            '(' => depth += 1,
            ')' => depth -= 1,
            '+' | '-' if depth == 0 && k > 0 => return true,
            _ => {}
        }
    }
    false
}

/// `c1*|a> - c2*|b>` for a vector in the product basis.
pub(crate) fn ket_sum(vector: &SparseVec<RatFunc>, basis: &Basis, names: &Names) -> String {
    signed_sum(vector.entries().iter().map(|(idx, c)| (c, basis.ket_label(*idx))), names)
}

/// A state: the ket label when it is a single product state with coefficient 1, else a ket sum.
pub(crate) fn state(vector: &SparseVec<RatFunc>, basis: &Basis, names: &Names) -> String {
    match vector.entries() {
        [(idx, c)] if c.is_one() => basis.ket_label(*idx),
        _ => ket_sum(vector, basis, names),
    }
}

/// A power series `c0 + c1*lambda + c2*lambda^2 ...` with zero terms left out.
pub(crate) fn series(coeffs: &[RatFunc], names: &Names) -> String {
    signed_sum(coeffs.iter().enumerate().map(|(k, c)| (c, power("lambda", k))), names)
}

/// A polynomial in `x` from its coefficients (`x^0` first), printed from the highest power down.
pub(crate) fn polynomial(coeffs: &[RatFunc], names: &Names) -> String {
    signed_sum(coeffs.iter().enumerate().rev().map(|(k, c)| (c, power("x", k))), names)
}

/// `""`, `x`, `x^k`.
fn power(var: &str, k: usize) -> String {
    match k {
        0 => String::new(),
        1 => var.to_string(),
        _ => format!("{var}^{k}"),
    }
}

/// Joins `coefficient*factor` terms with their signs (`a*x - b*y + (c + d)*z`), leaving out zero
/// coefficients and writing a unit coefficient as the bare factor; `0` when nothing is left.
fn signed_sum<'a>(terms: impl Iterator<Item = (&'a RatFunc, String)>, names: &Names) -> String {
    let mut res = String::new();
    for (c, factor) in terms {
        if c.is_zero() {
            continue;
        }
        let text = scalar(c, names);
        // Only a value printed with a leading minus can be written as `- magnitude`.
        let negated = if text.starts_with('-') { Some(scalar(&-c.clone(), names)) } else { None };
        let (negative, magnitude) = match negated {
            Some(negated) if !is_sum(&negated) => (true, negated),
            _ => (false, text),
        };
        res.push_str(match (res.is_empty(), negative) {
            (true, true) => "-",
            (true, false) => "",
            (false, true) => " - ",
            (false, false) => " + ",
        });
        res.push_str(&match (factor.is_empty(), magnitude.as_str()) {
            (true, _) => magnitude.clone(),
            (false, "1") => factor,
            (false, m) if is_sum(m) => format!("({m})*{factor}"),
            (false, m) => format!("{m}*{factor}"),
        });
    }
    if res.is_empty() {
        res.push('0');
    }
    res
}
