//! Rational functions that know their denominators: a sparse numerator over a product of powers
//! of registered factors. Start from [`Fraction`]; convert to and from [`RatFunc`] at the edges.
//!
//! Perturbation theory only ever divides by unperturbed energy differences (and the model's own
//! denominators), so sums need no gcd: they multiply up to the common product of factors, and
//! cancellation is an exact division by those factors, done only when a value is compared with
//! another's product form, stored, or converted.

use std::collections::BTreeMap;
use std::sync::{Arc, LazyLock, RwLock};

use super::screen::{FactorPoint, Screen};
use super::{forward_ops, Field, Poly, Radical, RatFunc, Rational};

/// A registered factor: a monic, non-constant polynomial, and whether it is known irreducible
/// (degree one).
struct Factor {
    poly: Arc<Poly>,
    linear: bool,
    /// Where the factor vanishes, to screen divisions by it.
    point: Option<Arc<FactorPoint>>,
}

/// Every factor met so far, for the whole process: factors are immutable once registered, so
/// values of different derivations (and threads) share the table. The index keeps one id per
/// polynomial.
#[derive(Default)]
struct Registry {
    factors: Vec<Factor>,
    index: BTreeMap<Poly, u32>,
}

static REGISTRY: LazyLock<RwLock<Registry>> = LazyLock::new(|| RwLock::new(Registry::default()));

/// The id of the monic polynomial `monic`, registering it when it is new.
fn register_monic(monic: Poly) -> u32 {
    if let Some(id) = REGISTRY.read().expect("registry lock").index.get(&monic) {
        return *id;
    }
    let mut registry = REGISTRY.write().expect("registry lock");
    if let Some(id) = registry.index.get(&monic) {
        return *id;
    }
    let id = u32::try_from(registry.factors.len()).expect("fewer than 2^32 factors");
    let linear = monic.degree() == 1;
    let point = FactorPoint::of(&monic).map(Arc::new);
    registry.factors.push(Factor { poly: Arc::new(monic.clone()), linear, point });
    registry.index.insert(monic, id);
    id
}

/// The polynomial of factor `id`.
fn factor_poly(id: u32) -> Arc<Poly> {
    Arc::clone(&REGISTRY.read().expect("registry lock").factors[id as usize].poly)
}

/// The screening point of factor `id`.
fn factor_point(id: u32) -> Option<Arc<FactorPoint>> {
    REGISTRY.read().expect("registry lock").factors[id as usize].point.clone()
}

/// Whether factor `id` is known irreducible.
fn factor_linear(id: u32) -> bool {
    REGISTRY.read().expect("registry lock").factors[id as usize].linear
}

/// `prod f_id^e` expanded.
fn expand(denom: &[(u32, u32)]) -> Poly {
    let mut res = Poly::one();
    for (id, e) in denom {
        res = &res * &factor_poly(*id).pow(*e);
    }
    res
}

/// A rational function `numer / prod_k f_k^(e_k)` over registered factors `f_k`.
///
/// The form is not canonical (a factor of the denominator may still divide the numerator), so
/// `==` compares cross products, and [`Fraction::to_ratfunc`] cancels before it hands on a value.
/// Invariants: `denom` is sorted by factor id with positive exponents; zero has an empty `denom`.
#[derive(Clone, Debug)]
pub struct Fraction {
    numer: Poly,
    denom: Vec<(u32, u32)>,
}

impl Fraction {
    /// A polynomial as a fraction.
    pub fn from_poly(numer: Poly) -> Fraction {
        Fraction { numer, denom: Vec::new() }
    }
    /// A rational function as a fraction: its denominator's monomial part becomes powers of the
    /// parameters and the rest one registered factor.
    pub fn from_ratfunc(value: &RatFunc) -> Fraction {
        let denom = Fraction::inverse_of_poly(value.denom());
        Fraction::from_poly(value.numer().clone()).mul_ref_impl(&denom)
    }
    /// The numerator as it stands (not cancelled).
    pub fn numer(&self) -> &Poly {
        &self.numer
    }
    /// The denominator as `(factor polynomial, power)` pairs.
    pub fn denom_factors(&self) -> Vec<(Poly, u32)> {
        self.denom.iter().map(|(id, e)| ((*factor_poly(*id)).clone(), *e)).collect()
    }

    /// `1 / p` for a non-zero polynomial: its monomial content becomes powers of parameters, each
    /// a registered (linear) factor, and the rest, made monic, one factor.
    fn inverse_of_poly(p: &Poly) -> Fraction {
        if let Some(c) = p.is_constant() {
            let inv = c.inv().expect("a denominator is non-zero");
            return Fraction::from_poly(Poly::constant(inv));
        }
        let monomial = p.monomial_content();
        let rest = if monomial.is_one() {
            p.clone()
        } else {
            p.div_exact(&Poly::term(monomial.clone(), Radical::one())).expect("content divides")
        };
        let mut denom: Vec<(u32, u32)> = Vec::new();
        for (param, e) in monomial.factors() {
            denom.push((register_monic(Poly::var(*param)), *e));
        }
        // A denominator handed in as one polynomial is usually a product of energy differences
        // already known: divide those out, so the factors stay linear where they can.
        let mut rest = rest;
        if rest.degree() > 1 {
            let params = rest.params();
            let linear: Vec<(u32, Arc<Poly>)> = {
                let registry = REGISTRY.read().expect("registry lock");
                let candidates = registry.factors.iter().enumerate().filter(|(_, f)| {
                    f.linear && f.poly.terms().len() > 1 && f.poly.params().is_subset(&params)
                });
                candidates
                    .map(|(id, f)| (u32::try_from(id).expect("small id"), Arc::clone(&f.poly)))
                    .collect()
            };
            for (id, f) in linear {
                while rest.degree() > 0 {
                    match rest.div_exact(&f) {
                        Some(q) => {
                            rest = q;
                            denom.push((id, 1));
                        }
                        None => break,
                    }
                }
            }
        }
        let constant = match rest.is_constant() {
            Some(c) => c.clone(),
            None => {
                denom.push((register_monic(rest.monic()), 1));
                rest.leading_coeff().expect("non-zero").clone()
            }
        };
        denom.sort_unstable();
        merge_equal(&mut denom);
        let inv = constant.inv().expect("a leading coefficient is non-zero");
        Fraction { numer: Poly::constant(inv), denom }
    }

    /// The two values over their common denominator (the larger power of each factor): the
    /// numerators scaled by their cofactors, and the common denominator.
    fn common(&self, rhs: &Fraction) -> (Poly, Poly, Vec<(u32, u32)>) {
        if self.denom == rhs.denom {
            return (self.numer.clone(), rhs.numer.clone(), self.denom.clone());
        }
        let mut common = Vec::with_capacity(self.denom.len() + rhs.denom.len());
        let mut left_cofactor: Vec<(u32, u32)> = Vec::new();
        let mut right_cofactor: Vec<(u32, u32)> = Vec::new();
        let (mut a, mut b) = (self.denom.iter().peekable(), rhs.denom.iter().peekable());
        loop {
            match (a.peek(), b.peek()) {
                (Some(&&(i, e)), Some(&&(j, f))) if i == j => {
                    common.push((i, e.max(f)));
                    if e < f {
                        left_cofactor.push((i, f - e));
                    } else if f < e {
                        right_cofactor.push((i, e - f));
                    }
                    a.next();
                    b.next();
                }
                (Some(&&(i, e)), Some(&&(j, _))) if i < j => {
                    common.push((i, e));
                    right_cofactor.push((i, e));
                    a.next();
                }
                (Some(_), Some(&&(j, f))) => {
                    common.push((j, f));
                    left_cofactor.push((j, f));
                    b.next();
                }
                (Some(&&(i, e)), None) => {
                    common.push((i, e));
                    right_cofactor.push((i, e));
                    a.next();
                }
                (None, Some(&&(j, f))) => {
                    common.push((j, f));
                    left_cofactor.push((j, f));
                    b.next();
                }
                (None, None) => break,
            }
        }
        let left = if left_cofactor.is_empty() {
            self.numer.clone()
        } else {
            &self.numer * &expand(&left_cofactor)
        };
        let right = if right_cofactor.is_empty() {
            rhs.numer.clone()
        } else {
            &rhs.numer * &expand(&right_cofactor)
        };
        (left, right, common)
    }

    /// Divides out every factor of the denominator that divides the numerator (exact division
    /// by the known factors; no gcd).
    pub fn cancel(&self) -> Fraction {
        if self.numer.is_zero() {
            return Fraction::zero();
        }
        let mut numer = self.numer.clone();
        let mut denom = Vec::with_capacity(self.denom.len());
        for &(id, e) in &self.denom {
            let f = factor_poly(id);
            let point = factor_point(id);
            let mut left = e;
            while left > 0
                && numer.degree() >= f.degree()
                && Screen::new(&numer).may_vanish(point.as_deref())
            {
                match numer.div_exact(&f) {
                    Some(q) => {
                        numer = q;
                        left -= 1;
                    }
                    None => break,
                }
            }
            if left > 0 {
                denom.push((id, left));
            }
        }
        Fraction { numer, denom }
    }

    /// The value as a [`RatFunc`] in lowest terms: cancelled by the known factors, which settles
    /// lowest terms when every factor left is linear; otherwise a gcd finishes the job.
    pub fn to_ratfunc_value(&self) -> RatFunc {
        let cancelled = self.cancel();
        if cancelled.denom.is_empty() {
            return RatFunc::from_poly(cancelled.numer);
        }
        // Distinct monic linear factors are pairwise coprime irreducibles and none divides the
        // numerator any more; a factor that may be reducible is reduced by its gcd with the
        // numerator (a gcd with that small factor only, not with the whole denominator).
        let mut numer = cancelled.numer;
        let mut denom = Poly::one();
        for (id, e) in &cancelled.denom {
            let f = factor_poly(*id);
            let mut power = (*f).clone().pow(*e);
            if !factor_linear(*id) {
                let common = numer.gcd(&power);
                if !common.is_one() {
                    numer = numer.div_exact(&common).expect("a gcd divides");
                    power = power.div_exact(&common).expect("a gcd divides");
                }
            }
            denom = &denom * &power;
        }
        // A product of monic polynomials is monic; `normalized` covers a gcd's quotient.
        RatFunc::new_coprime(numer, denom)
    }

    fn add_ref(&self, rhs: &Fraction) -> Fraction {
        if rhs.numer.is_zero() {
            return self.clone();
        }
        if self.numer.is_zero() {
            return rhs.clone();
        }
        let (left, right, denom) = self.common(rhs);
        let numer = &left + &right;
        if numer.is_zero() {
            return Fraction::zero();
        }
        Fraction { numer, denom }
    }
    fn sub_ref(&self, rhs: &Fraction) -> Fraction {
        self.add_ref(&rhs.neg_ref())
    }
    fn mul_ref_impl(&self, rhs: &Fraction) -> Fraction {
        if self.numer.is_zero() || rhs.numer.is_zero() {
            return Fraction::zero();
        }
        let numer = &self.numer * &rhs.numer;
        let mut denom = self.denom.clone();
        denom.extend_from_slice(&rhs.denom);
        denom.sort_unstable();
        merge_equal(&mut denom);
        Fraction { numer, denom }
    }
    fn neg_ref(&self) -> Fraction {
        Fraction { numer: -&self.numer, denom: self.denom.clone() }
    }
}
forward_ops!(Fraction);

/// Merges adjacent entries with the same factor id by adding their powers.
fn merge_equal(denom: &mut Vec<(u32, u32)>) {
    let mut res: Vec<(u32, u32)> = Vec::with_capacity(denom.len());
    for &(id, e) in denom.iter() {
        match res.last_mut() {
            Some((last, f)) if *last == id => *f += e,
            _ => res.push((id, e)),
        }
    }
    *denom = res;
}

/// Equality of the functions: the numerators over the common denominator agree.
impl PartialEq for Fraction {
    fn eq(&self, other: &Fraction) -> bool {
        if self.denom == other.denom {
            return self.numer == other.numer;
        }
        let (left, right, _) = self.common(other);
        left == right
    }
}

impl Eq for Fraction {}

impl Field for Fraction {
    fn zero() -> Fraction {
        Fraction { numer: Poly::zero(), denom: Vec::new() }
    }
    fn one() -> Fraction {
        Fraction { numer: Poly::one(), denom: Vec::new() }
    }
    fn is_zero(&self) -> bool {
        self.numer.is_zero()
    }
    fn is_one(&self) -> bool {
        if self.denom.is_empty() {
            self.numer.is_one()
        } else {
            self.numer == expand(&self.denom)
        }
    }
    /// `prod f^e / numer`: the numerator's factors that the denominator knows cancel first, and
    /// what remains becomes registered factors (see `inverse_of_poly`).
    fn inv(&self) -> Option<Fraction> {
        if self.numer.is_zero() {
            return None;
        }
        let cancelled = self.cancel();
        let top = Fraction::from_poly(expand(&cancelled.denom));
        Some(top.mul_ref_impl(&Fraction::inverse_of_poly(&cancelled.numer)))
    }
    fn from_rational(value: &Rational) -> Fraction {
        Fraction::from_poly(Poly::constant(Radical::from_rational(value)))
    }
    /// Conjugates the numerator and every factor (a factor with complex coefficients may need a
    /// new registration; its leading coefficient stays 1).
    fn conj(&self) -> Fraction {
        let mut denom: Vec<(u32, u32)> = self
            .denom
            .iter()
            .map(|&(id, e)| {
                let f = factor_poly(id);
                let c = f.conj();
                if c == *f {
                    (id, e)
                } else {
                    (register_monic(c), e)
                }
            })
            .collect();
        denom.sort_unstable();
        merge_equal(&mut denom);
        Fraction { numer: self.numer.conj(), denom }
    }
    fn mul_ref(&self, other: &Fraction) -> Fraction {
        self.mul_ref_impl(other)
    }
    /// Brings every value to the common denominator once (the largest power of each factor)
    /// and adds the numerators in one pass.
    fn sum_of(values: Vec<Fraction>) -> Fraction {
        let values: Vec<Fraction> = values.into_iter().filter(|v| !v.numer.is_zero()).collect();
        let mut common: BTreeMap<u32, u32> = BTreeMap::new();
        for v in &values {
            for &(id, e) in &v.denom {
                let slot = common.entry(id).or_insert(0);
                *slot = (*slot).max(e);
            }
        }
        let mut terms = Vec::new();
        for v in values {
            let cofactor: Vec<(u32, u32)> = common
                .iter()
                .filter_map(|(&id, &e)| {
                    let own = v.denom.iter().find(|(j, _)| *j == id).map_or(0, |(_, f)| *f);
                    (own < e).then_some((id, e - own))
                })
                .collect();
            let numer = if cofactor.is_empty() { v.numer } else { &v.numer * &expand(&cofactor) };
            terms.extend(numer.terms().iter().cloned());
        }
        let numer = Poly::from_terms(terms);
        if numer.is_zero() {
            return Fraction::zero();
        }
        Fraction { numer, denom: common.into_iter().collect() }
    }
    fn to_ratfunc(&self) -> RatFunc {
        self.to_ratfunc_value()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::ParamId;
    use proptest::prelude::*;

    fn var(p: u32) -> RatFunc {
        RatFunc::param(ParamId(p))
    }
    fn int(n: i64) -> RatFunc {
        RatFunc::from_i64(n)
    }

    /// Small rational functions over three parameters whose denominators are products of
    /// energy-difference-like linear forms, as the engine meets them, plus a constant.
    fn small_value() -> impl Strategy<Value = RatFunc> {
        let linear = (-2i64..=2, -2i64..=2, -2i64..=2, 0i64..=3).prop_map(|(a, b, c, k)| {
            var(0) * &int(a) + var(1) * &int(b) + var(2) * &int(c) + int(k)
        });
        (linear.clone(), linear.clone(), linear, -3i64..=3, 0u32..=1).prop_map(
            |(numer, d1, d2, k, power)| {
                let mut value = numer * &int(k);
                for d in [d1, d2] {
                    if !d.is_zero() {
                        value *= &d.pow(-i32::try_from(power).expect("small")).expect("d != 0");
                    }
                }
                value
            },
        )
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(32))]
        /// Sums, products and quotients agree with `RatFunc`, and the converted value is
        /// `RatFunc`'s canonical form (derived `==` is structural there).
        #[test]
        fn agrees_with_ratfunc(a in small_value(), b in small_value(), c in small_value()) {
            let (fa, fb, fc) =
                (Fraction::from_ratfunc(&a), Fraction::from_ratfunc(&b), Fraction::from_ratfunc(&c));
            prop_assert_eq!((fa.clone() + &fb).to_ratfunc(), a.clone() + &b);
            prop_assert_eq!((fa.clone() - &fb).to_ratfunc(), a.clone() - &b);
            prop_assert_eq!((fa.clone() * &fb).to_ratfunc(), a.clone() * &b);
            prop_assert_eq!(
                (fa.clone() * &fb + &fc).to_ratfunc(),
                a.clone() * &b + &c
            );
            if let (Some(inv), Some(expected)) = (fb.inv(), b.inv()) {
                prop_assert_eq!((fa.clone() * &inv).to_ratfunc(), a.clone() * &expected);
            }
            prop_assert_eq!(fa.conj().to_ratfunc(), a.conj());
            prop_assert_eq!(fa.clone() == fb.clone(), a == b);
        }

        #[test]
        fn field_laws(a in small_value(), b in small_value(), c in small_value()) {
            let (fa, fb, fc) =
                (Fraction::from_ratfunc(&a), Fraction::from_ratfunc(&b), Fraction::from_ratfunc(&c));
            prop_assert_eq!(crate::exact::field_law_failure(&fa, &fb, &fc), None);
        }
    }

    #[test]
    fn cancellation_by_known_factors() {
        // (x^2 - y^2) / ((x - y)^2 (x + y)) = 1 / (x - y).
        let (x, y) = (var(0), var(1));
        let diff = Fraction::from_ratfunc(&(x.clone() - &y)).inv().expect("non-zero");
        let sum = Fraction::from_ratfunc(&(x.clone() + &y)).inv().expect("non-zero");
        let top = Fraction::from_ratfunc(&(x.clone() * &x - y.clone() * &y));
        let value = top * &diff * &diff * &sum;
        assert_eq!(value.to_ratfunc(), (x - y).inv().expect("non-zero"));
        assert!(value.cancel().denom.len() == 1);
    }
}
