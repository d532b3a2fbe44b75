//! Rational functions of the real parameters over [`Radical`], always in lowest terms.
//! Start from [`RatFunc`]: the denominator is monic (leading coefficient `1` in the canonical term
//! order of [`Poly`]), so every constant sits in the numerator and derived `==` is equality.

use std::collections::BTreeSet;
use std::fmt;

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::One;

use super::{forward_ops, Field, ParamId, Poly, Radical, Rational, SquareRoot, Symbols};

/// A rational function `numer / denom` of the real parameters with `Radical` coefficients, always
/// in lowest terms with a normalized denominator, so `==` is equality of functions.
///
/// Invariants: `gcd(numer, denom) = 1`, `denom` is monic, and zero is `0 / 1`.
#[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Debug)]
pub struct RatFunc {
    numer: Poly,
    denom: Poly,
}

impl RatFunc {
    /// The parameter `p` as a function.
    pub fn param(p: ParamId) -> RatFunc {
        RatFunc { numer: Poly::var(p), denom: Poly::one() }
    }
    /// A constant.
    pub fn constant(value: Radical) -> RatFunc {
        RatFunc { numer: Poly::constant(value), denom: Poly::one() }
    }
    /// A polynomial as a function.
    pub fn from_poly(numer: Poly) -> RatFunc {
        RatFunc { numer, denom: Poly::one() }
    }
    /// `numer / denom` brought to lowest terms; `None` when `denom` is zero.
    pub fn new(numer: Poly, denom: Poly) -> Option<RatFunc> {
        if denom.is_zero() {
            return None;
        }
        let common = numer.gcd(&denom);
        Some(RatFunc::normalized(divide(&numer, &common), divide(&denom, &common)))
    }
    /// `numer / denom` for a caller that knows them coprime (no gcd is taken); the denominator
    /// is made monic.
    pub(crate) fn new_coprime(numer: Poly, denom: Poly) -> RatFunc {
        RatFunc::normalized(numer, denom)
    }
    /// The constant value when no parameter appears.
    pub fn as_constant(&self) -> Option<Radical> {
        if self.denom.is_one() {
            self.numer.is_constant().cloned()
        } else {
            None
        }
    }
    /// The polynomial when the denominator is `1`.
    pub fn as_poly(&self) -> Option<&Poly> {
        self.denom.is_one().then_some(&self.numer)
    }
    /// The numerator (lowest terms).
    pub fn numer(&self) -> &Poly {
        &self.numer
    }
    /// The denominator (lowest terms, normalized).
    pub fn denom(&self) -> &Poly {
        &self.denom
    }
    /// The parameters that appear.
    pub fn params(&self) -> BTreeSet<ParamId> {
        let mut res = self.numer.params();
        res.extend(self.denom.params());
        res
    }
    /// Integer power; `None` for a negative power of zero.
    pub fn pow(&self, exponent: i32) -> Option<RatFunc> {
        let base = if exponent < 0 { self.inv()? } else { self.clone() };
        // Powers of coprime polynomials stay coprime and powers of a monic one stay monic.
        Some(RatFunc {
            numer: base.numer.pow(exponent.unsigned_abs()),
            denom: base.denom.pow(exponent.unsigned_abs()),
        })
    }
    /// Substitutes `value` for the parameter `p`; `None` when the denominator vanishes there.
    pub fn eval_param(&self, p: ParamId, value: &Radical) -> Option<RatFunc> {
        RatFunc::new(self.numer.eval_param(p, value), self.denom.eval_param(p, value))
    }
    /// Multiplies by a constant.
    pub fn scale(&self, factor: &Radical) -> RatFunc {
        if factor.is_zero() {
            return RatFunc::zero();
        }
        RatFunc { numer: self.numer.scale(factor), denom: self.denom.clone() }
    }
    /// Prints in contract syntax (`-21/8*g^2`, `sqrt(2)*t/3`) with the given parameter names.
    ///
    /// Numerator and denominator are scaled by the least common multiple of their coefficient
    /// denominators, so `1/(2U)` prints as `1/(2*U)` rather than `1/2/U`. Terms are in the
    /// canonical order of [`Poly`]: higher total degree first.
    pub fn display<'a>(&'a self, symbols: Symbols<'a>) -> impl fmt::Display + 'a {
        RatFuncDisplay { value: self, symbols }
    }

    /// Makes `denom` monic by moving its leading coefficient into the numerator.
    fn normalized(numer: Poly, denom: Poly) -> RatFunc {
        if numer.is_zero() {
            return RatFunc::zero();
        }
        match denom.leading_coeff() {
            Some(c) if !c.is_one() => {
                let inv = c.inv().expect("leading coefficient is non-zero");
                RatFunc { numer: numer.scale(&inv), denom: denom.scale(&inv) }
            }
            _ => RatFunc { numer, denom },
        }
    }

    fn add_ref(&self, rhs: &RatFunc) -> RatFunc {
        if rhs.numer.is_zero() {
            return self.clone();
        }
        if self.numer.is_zero() {
            return rhs.clone();
        }
        // With g = gcd(d1, d2), d1 = g a and d2 = g b, the sum is (n1 b + n2 a) / (g a b), and only
        // a factor of g can cancel: gcd(n1 b + n2 a, a) = gcd(n1 b, a) = 1 since n1 and b are
        // coprime to a, and likewise for b. The branches below find g without a gcd when they can.
        let (common, left_cofactor, right_cofactor) = if self.denom == rhs.denom {
            (self.denom.clone(), Poly::one(), Poly::one())
        } else if self.denom.is_one() {
            (Poly::one(), Poly::one(), rhs.denom.clone())
        } else if rhs.denom.is_one() {
            (Poly::one(), self.denom.clone(), Poly::one())
        } else if let Some(quotient) = rhs.denom.div_exact(&self.denom) {
            (self.denom.clone(), Poly::one(), quotient)
        } else if let Some(quotient) = self.denom.div_exact(&rhs.denom) {
            (rhs.denom.clone(), quotient, Poly::one())
        } else {
            let common = self.denom.gcd(&rhs.denom);
            let left = divide(&self.denom, &common);
            let right = divide(&rhs.denom, &common);
            (common, left, right)
        };
        let numer = &(&self.numer * &right_cofactor) + &(&rhs.numer * &left_cofactor);
        if numer.is_zero() {
            return RatFunc::zero();
        }
        let denom = &(&common * &left_cofactor) * &right_cofactor;
        if common.is_one() {
            return RatFunc { numer, denom };
        }
        let cancel = numer.gcd(&common);
        // The cofactors and `common` are monic, so the quotient is monic too.
        RatFunc { numer: divide(&numer, &cancel), denom: divide(&denom, &cancel) }
    }
    fn sub_ref(&self, rhs: &RatFunc) -> RatFunc {
        self.add_ref(&rhs.neg_ref())
    }
    fn mul_ref_impl(&self, rhs: &RatFunc) -> RatFunc {
        if self.numer.is_zero() || rhs.numer.is_zero() {
            return RatFunc::zero();
        }
        if self == rhs {
            // A square of a reduced fraction is reduced: no gcd needed.
            return RatFunc { numer: &self.numer * &self.numer, denom: &self.denom * &self.denom };
        }
        // Cross-cancel: n1 and d1 are coprime and so are n2 and d2, so after removing
        // gcd(n1, d2) and gcd(n2, d1) the product is in lowest terms.
        let left_cancel = self.numer.gcd(&rhs.denom);
        let right_cancel = rhs.numer.gcd(&self.denom);
        let numer = &divide(&self.numer, &left_cancel) * &divide(&rhs.numer, &right_cancel);
        let denom = &divide(&self.denom, &right_cancel) * &divide(&rhs.denom, &left_cancel);
        RatFunc { numer, denom }
    }
    fn neg_ref(&self) -> RatFunc {
        RatFunc { numer: -&self.numer, denom: self.denom.clone() }
    }
}
forward_ops!(RatFunc);

/// `a / b` for a `b` known to divide `a`.
fn divide(a: &Poly, b: &Poly) -> Poly {
    if b.is_one() {
        return a.clone();
    }
    a.div_exact(b).expect("b is a common factor of a")
}

impl Field for RatFunc {
    fn zero() -> RatFunc {
        RatFunc { numer: Poly::zero(), denom: Poly::one() }
    }
    fn one() -> RatFunc {
        RatFunc { numer: Poly::one(), denom: Poly::one() }
    }
    fn is_zero(&self) -> bool {
        self.numer.is_zero()
    }
    fn is_one(&self) -> bool {
        self.numer.is_one() && self.denom.is_one()
    }
    fn inv(&self) -> Option<RatFunc> {
        if self.numer.is_zero() {
            return None;
        }
        Some(RatFunc::normalized(self.denom.clone(), self.numer.clone()))
    }
    fn from_rational(value: &Rational) -> RatFunc {
        RatFunc::constant(Radical::from_rational(value))
    }
    fn conj(&self) -> RatFunc {
        // The denominator stays monic: conjugation fixes the leading coefficient 1.
        RatFunc { numer: self.numer.conj(), denom: self.denom.conj() }
    }
    fn mul_ref(&self, other: &RatFunc) -> RatFunc {
        self.mul_ref_impl(other)
    }
    fn to_ratfunc(&self) -> RatFunc {
        self.clone()
    }
}

/// The monic square root of a monic polynomial, when there is one.
///
/// Terms come out from the top: with `q` the root found so far, the next term is
/// `lt(p - q^2) / (2 lt(q))`. Every term of the root lies between the square roots of the
/// lowest and the leading monomial of `p`, which bounds the loop.
fn monic_poly_sqrt(p: &Poly) -> Option<Poly> {
    let (lead, _) = p.leading_term()?;
    let (last, _) = p.terms().last()?;
    let halve = |m: &super::Monomial| {
        let factors = m.factors().iter().map(|(x, e)| (e % 2 == 0).then_some((*x, e / 2)));
        factors.collect::<Option<Vec<_>>>().map(super::Monomial::new)
    };
    let lead_root = halve(lead)?;
    let lowest_root = halve(last)?;
    let mut root = Poly::term(lead_root.clone(), Radical::one());
    let twice_lead_inv = Radical::from_i64(2).inv().expect("2 is non-zero");
    loop {
        let rest = p - &(&root * &root);
        let Some((m, c)) = rest.leading_term() else { return Some(root) };
        let next = m.div(&lead_root)?;
        if next.graded_cmp(&lowest_root) == std::cmp::Ordering::Less {
            return None;
        }
        root = &root + &Poly::term(next, c * &twice_lead_inv);
    }
}

/// Succeeds when numerator and denominator are squares up to a constant whose square root exists
/// in [`Radical`] (always the case for rational constants): `4t^2/U^2 -> 2t/U`.
impl SquareRoot for RatFunc {
    fn sqrt(&self) -> Option<RatFunc> {
        if self.numer.is_zero() {
            return Some(RatFunc::zero());
        }
        let lead = self.numer.leading_coeff().expect("non-zero numerator").clone();
        let numer_root = monic_poly_sqrt(&self.numer.monic())?;
        let denom_root = monic_poly_sqrt(&self.denom)?;
        let constant = lead.sqrt()?;
        // Roots of coprime polynomials are coprime, and the root of a monic one is monic.
        Some(RatFunc { numer: numer_root.scale(&constant), denom: denom_root })
    }
}

struct RatFuncDisplay<'a> {
    value: &'a RatFunc,
    symbols: Symbols<'a>,
}

/// Least common multiple of the denominators of all rational coefficients.
fn coefficient_denominator_lcm(poly: &Poly, acc: BigInt) -> BigInt {
    poly.terms()
        .iter()
        .flat_map(|(_, c)| c.terms().iter())
        .fold(acc, |acc, (_, q)| q.denom().lcm(&acc))
}

impl fmt::Display for RatFuncDisplay<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let RatFunc { numer, denom } = self.value;
        if denom.is_one() {
            return numer.write_sum(f, self.symbols);
        }
        let scale = coefficient_denominator_lcm(numer, BigInt::one());
        let scale = coefficient_denominator_lcm(denom, scale);
        let scale = Radical::from_rational(&Rational::from_bigint(scale));
        let numer = numer.scale(&scale);
        let denom = denom.scale(&scale);
        if numer.is_product() {
            numer.write_sum(f, self.symbols)?;
        } else {
            write!(f, "(")?;
            numer.write_sum(f, self.symbols)?;
            write!(f, ")")?;
        }
        write!(f, "/")?;
        // A lone parameter power with coefficient 1 needs no parentheses: `t^2/U`.
        let bare = matches!(denom.terms(), [(m, c)] if c.is_one() && m.factors().len() == 1);
        if bare {
            denom.write_sum(f, self.symbols)
        } else {
            write!(f, "(")?;
            denom.write_sum(f, self.symbols)?;
            write!(f, ")")
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    const NAMES: [&str; 4] = ["g", "t", "U", "w"];

    fn show(value: &RatFunc) -> String {
        let names: Vec<String> = NAMES.iter().map(|s| s.to_string()).collect();
        let res = value.display(Symbols { names: &names }).to_string();
        res
    }
    fn g() -> RatFunc {
        RatFunc::param(ParamId(0))
    }
    fn t() -> RatFunc {
        RatFunc::param(ParamId(1))
    }
    fn u() -> RatFunc {
        RatFunc::param(ParamId(2))
    }
    fn w() -> RatFunc {
        RatFunc::param(ParamId(3))
    }
    fn c(n: i64) -> RatFunc {
        RatFunc::from_i64(n)
    }
    fn frac(n: i64, d: i64) -> RatFunc {
        RatFunc::from_rational(&Rational::ratio(n, d).expect("non-zero denominator"))
    }
    fn div(a: &RatFunc, b: &RatFunc) -> RatFunc {
        a * &b.inv().expect("non-zero divisor")
    }

    #[test]
    fn cancellation() {
        let value = div(&(&g() * &g() - &t() * &t()), &(&g() - &t()));
        assert_eq!(value, &g() + &t());
        assert!(value.denom().is_one());
    }

    #[test]
    fn normalized_denominators_compare_and_print_equal() {
        let a = div(&c(1), &(&c(2) * &u()));
        let b = div(&frac(1, 2), &u());
        assert_eq!(a, b);
        assert_eq!(show(&a), "1/(2*U)");
        assert_eq!(show(&b), "1/(2*U)");
    }

    #[test]
    fn display_forms() {
        assert_eq!(show(&(&frac(-21, 8) * &g().pow(2).unwrap())), "-21/8*g^2");
        let sqrt2 = RatFunc::constant(Radical::sqrt_of(&Rational::from_i64(2)));
        assert_eq!(show(&(&(&sqrt2 * &t()) * &frac(1, 3))), "1/3*sqrt(2)*t");
        assert_eq!(show(&div(&t().pow(2).unwrap(), &u())), "t^2/U");
        let sum = &g().pow(2).unwrap() + &(&c(3) * &t());
        let energy = &(&c(2) * &u()) - &w();
        assert_eq!(show(&div(&sum, &energy)), "(g^2 + 3*t)/(2*U - w)");
        let neg = div(&(&c(-3) * &g().pow(2).unwrap()), &(&c(4) * &w()));
        assert_eq!(show(&neg), "-3*g^2/(4*w)");
        assert_eq!(show(&div(&g(), &(&u() * &w()))), "g/(U*w)");
        assert_eq!(show(&RatFunc::zero()), "0");
        let complex = &RatFunc::constant(Radical::i()) * &g();
        assert_eq!(show(&complex), "i*g");
    }

    #[test]
    fn square_roots() {
        let value = div(&(&c(4) * &t().pow(2).unwrap()), &u().pow(2).unwrap());
        let root = value.sqrt().expect("a perfect square");
        assert_eq!(&root * &root, value);
        assert_eq!(root.numer().degree(), 1);
        let square = (&(&g() + &t()) * &frac(1, 3)).pow(2).unwrap();
        assert_eq!(square.sqrt().map(|r| &r * &r), Some(square));
        let two = &c(2) * &g().pow(2).unwrap();
        assert_eq!(two.sqrt().map(|r| &r * &r), Some(two));
        assert_eq!((&g() + &t()).sqrt(), None);
        assert_eq!(g().sqrt(), None);
    }

    #[test]
    fn powers_and_substitution() {
        let value = div(&g(), &(&u() - &w()));
        let cube = value.pow(-3).unwrap();
        assert_eq!(&cube * &value.pow(3).unwrap(), RatFunc::one());
        assert_eq!(RatFunc::zero().pow(-1), None);
        let at = value.eval_param(ParamId(3), &Radical::from_i64(2)).unwrap();
        assert_eq!(at, div(&g(), &(&u() - &c(2))));
        assert_eq!(value.eval_param(ParamId(2), &Radical::zero()).unwrap(), -div(&g(), &w()));
        assert_eq!(div(&c(1), &u()).eval_param(ParamId(2), &Radical::zero()), None);
        assert_eq!(
            value.params().into_iter().collect::<Vec<_>>(),
            vec![ParamId(0), ParamId(2), ParamId(3)]
        );
    }

    #[test]
    fn conjugation_fixes_parameters() {
        let i = RatFunc::constant(Radical::i());
        let value = div(&(&i * &g()), &(&u() + &c(1)));
        assert_eq!(value.conj(), -value.clone());
        assert_eq!(g().conj(), g());
    }

    /// Small values: a ratio of polynomials in up to three parameters of degree at most 2.
    fn small_poly() -> impl Strategy<Value = RatFunc> {
        let coef = (prop::sample::select(vec![1i64, 2, -1]), -2i64..=2);
        let term = (coef, 0u32..=2, 0u32..=1, 0u32..=1);
        prop::collection::vec(term, 1..=3).prop_map(|terms| {
            terms.into_iter().fold(RatFunc::zero(), |acc, ((s, n), e0, e1, e2)| {
                let c = Radical::sqrt_of(&Rational::from_i64(s)).scale(&Rational::from_i64(n));
                let m = &(&g().pow(e0 as i32).unwrap() * &t().pow(e1 as i32).unwrap())
                    * &u().pow(e2 as i32).unwrap();
                &acc + &(&RatFunc::constant(c) * &m)
            })
        })
    }
    fn small_ratfunc() -> impl Strategy<Value = RatFunc> {
        (small_poly(), small_poly()).prop_map(|(n, d)| match d.inv() {
            Some(inv) => &n * &inv,
            None => n,
        })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(48))]
        #[test]
        fn field_laws(a in small_ratfunc(), b in small_ratfunc(), c in small_ratfunc()) {
            prop_assert_eq!(crate::exact::field_law_failure(&a, &b, &c), None);
        }

        #[test]
        fn lowest_terms(a in small_ratfunc(), b in small_ratfunc()) {
            let sum = &a + &b;
            prop_assert!(sum.numer().gcd(sum.denom()).is_one());
            prop_assert!(sum.denom().leading_coeff().is_some_and(Field::is_one));
        }

        #[test]
        fn square_root_of_square(a in small_ratfunc()) {
            let square = &a * &a;
            let root = square.sqrt();
            prop_assert!(root.is_some());
            let root = root.unwrap();
            prop_assert_eq!(&root * &root, square);
        }
    }
}
