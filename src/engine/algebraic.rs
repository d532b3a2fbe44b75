//! Branches whose leading coefficients are roots of a rational polynomial that square roots
//! cannot solve: the computation moves to `K(alpha) = K[x]/(P)` and each root is reported as
//! `root(P, k)` (ENGINE.md §6).
//!
//! `P` runs over the irreducible factors over the rationals of what is left of the secular
//! polynomial once its rational roots are divided out (`exact::roots::rational_factors`);
//! quadratic factors give square roots instead. A factor irreducible over the rationals may still
//! factor over the radical field when the stage holds square roots: then some non-zero element has
//! no inverse, the attempt stops and the stage is reported as not split. While no such zero divisor
//! appears, arithmetic modulo `P` is arithmetic in every `K(alpha_k)` at once (Chinese remainder
//! theorem), so one result holds for every root (the "dynamic evaluation" of ENGINE.md §6, without
//! the restart on the factors found).
//!
//! A stage whose secular matrix has simple eigenvalues that square roots cannot write is solved
//! with spectral projectors instead of an eigenbasis: the other roots of `P` do not lie in
//! `K(alpha)`, so no basis of the complement is formed. For a simple eigenvalue `mu` with right
//! eigenvector `v` and left eigenvector `w` (`w^T v = 1`), Rayleigh–Schrödinger theory reads
//! `E_m = w^T sum_k A_k Omega_{m-k}` and
//! `Omega_m = M^{-1} Q (sum_k A_k Omega_{m-k} - sum_{j=1..m-1} E_{m-j} Omega_j)`
//! with `Q = 1 - v w^T` and `M = mu - A_0 + v w^T`, which is invertible and equals `mu - A_0` on
//! the range of `Q` (Kato 1966, ch. II §2, the reduced resolvent).

use super::split::RawSecular;
use super::RootAtom;
use crate::exact::univariate::UniPoly;
use crate::exact::{
    roots, Algebraic, Field, Monomial, ParamId, Poly, Radical, RatFunc, Rational, ALPHA,
};
use crate::linalg::DenseMatrix;
use crate::spectrum::eigen;

/// Shared state of one derivation's reductions.
pub(crate) struct Context {
    /// Secular problems met, in order.
    pub secular: Vec<RawSecular>,
    /// Algebraic numbers met so far, for the whole derivation.
    pub roots: Vec<RootAtom>,
    /// Number of model parameters: root `r` is written as `ParamId(n_params + r)`.
    pub n_params: u32,
    /// Told each order the wave operator of the current model space reaches.
    pub on_order: Option<std::sync::Arc<dyn Fn(usize) + Send + Sync>>,
}

impl Context {
    /// A context for one derivation, reporting orders to `on_order`.
    pub fn new(
        n_params: u32,
        on_order: Option<std::sync::Arc<dyn Fn(usize) + Send + Sync>>,
    ) -> Context {
        Context { secular: Vec::new(), roots: Vec::new(), n_params, on_order }
    }
    /// Tells the observer that order `m` is being computed.
    pub fn report_order(&self, m: usize) {
        if let Some(f) = &self.on_order {
            f(m);
        }
    }
}

/// The energy series of the simple eigenvalue `scale * nu` of `series[0] = scale * numeric`
/// (self-adjoint for `metric`), to the order of `series`, with its eigenvector series in
/// intermediate normalization (`w^T Omega_m = 0` for `m >= 1`); `None` when it is not a simple
/// eigenvalue or a zero divisor appears.
///
/// The eigenvector and the reduced resolvent come from the numeric matrix alone:
/// `(mu - A_0)^{-1} = scale^{-1} (nu - numeric)^{-1}` on the range of `Q`, which keeps the
/// symbols out of the only matrix inversion.
pub(crate) fn simple_eigenvalue_series<E: Field>(
    series: &[DenseMatrix<E>],
    metric: &[E],
    scale: &E,
    numeric: &DenseMatrix<E>,
    nu: &E,
) -> Option<(Vec<E>, Vec<Vec<E>>)> {
    let d = metric.len();
    let mut shifted = numeric.clone();
    for i in 0..d {
        let v = shifted.get(i, i).clone() - nu;
        shifted.set(i, i, v);
    }
    let kernel = shifted.try_null_space()?;
    let [v] = kernel.as_slice() else { return None };
    // w^T x = <v, x> / <v, v> for the metric, since A_0 is self-adjoint.
    let weighted: Vec<E> = v.iter().zip(metric).map(|(x, g)| x.conj() * g).collect();
    let norm: E = weighted.iter().zip(v).fold(E::zero(), |acc, (a, b)| acc + a.clone() * b);
    let inv_norm = norm.inv()?;
    let w: Vec<E> = weighted.into_iter().map(|x| x * &inv_norm).collect();
    let project =
        |x: &[E]| -> E { w.iter().zip(x).fold(E::zero(), |acc, (a, b)| acc + a.clone() * b) };
    // N = (nu - numeric + v w^T)^{-1}; on the range of Q it inverts nu - numeric.
    let mut m = DenseMatrix::zeros(d, d);
    for (i, vi) in v.iter().enumerate() {
        for (j, wj) in w.iter().enumerate() {
            let x = vi.clone() * wj - shifted.get(i, j);
            m.set(i, j, x);
        }
    }
    let resolvent = m.inverse()?.scale(&scale.inv()?);
    let mut omega: Vec<Vec<E>> = vec![v.clone()];
    let mut energy = vec![scale.clone() * nu];
    for order in 1..series.len() {
        let mut y = vec![E::zero(); d];
        for (k, a_k) in series.iter().enumerate().skip(1).take(order) {
            for (yi, x) in y.iter_mut().zip(a_k.mul_vec(&omega[order - k])) {
                *yi += &x;
            }
        }
        let e = project(&y);
        for j in 1..order {
            let c = &energy[order - j];
            for (yi, x) in y.iter_mut().zip(&omega[j]) {
                *yi -= &c.mul_ref(x);
            }
        }
        let along = project(&y);
        for (yi, vi) in y.iter_mut().zip(v) {
            *yi -= &along.mul_ref(vi);
        }
        omega.push(resolvent.mul_vec(&y));
        energy.push(e);
    }
    Some((energy, omega))
}

/// One branch found by [`algebraic_branches`]: energy and eigenvector series in the stage's
/// coordinates, with a root of `P` written as its symbol.
pub(crate) struct SimpleBranch {
    pub energy: Vec<RatFunc>,
    pub vector: Vec<Vec<RatFunc>>,
}

/// Splits a stage whose leading matrix is `c M` with a scalar `c` and a numeric `M` whose
/// characteristic polynomial is rational with simple real roots. Returns every branch; `None`
/// when the stage is of another kind or the attempt meets a zero divisor.
pub(crate) fn algebraic_branches(
    series: &[DenseMatrix<RatFunc>],
    metric: &[RatFunc],
    offset: usize,
    ctx: &mut Context,
) -> Option<Vec<SimpleBranch>> {
    let [(scale, numeric)] = eigen::constant_parts(&series[0]).try_into().ok()?;
    let char_poly: Vec<Rational> = numeric
        .characteristic_polynomial()
        .iter()
        .map(Radical::as_rational)
        .collect::<Option<_>>()?;
    let poly = UniPoly::new(char_poly);
    if poly.square_free_part().degree() != poly.degree() {
        return None;
    }
    let rational: Vec<Rational> = poly.rational_roots().into_iter().map(|(r, _)| r).collect();
    let mut rest = poly.clone();
    for r in &rational {
        rest = rest.deflate(r)?;
    }
    if rest.degree()? < 2 {
        return None;
    }
    let mut res: Vec<SimpleBranch> = Vec::new();
    let mut simple_roots: Vec<RatFunc> = rational.iter().map(RatFunc::from_rational).collect();
    let mut moduli = Vec::new();
    // Irreducible factors over the rationals: quadratics have roots in the radical field, the
    // others each get an extension of their own (so no zero divisor can appear).
    for factor in roots::rational_factors(&rest)? {
        match factor.coeffs() {
            [c0, c1, c2] => {
                let disc = c1.clone() * c1 - Rational::from_i64(4) * c2 * c0;
                let root = Radical::sqrt_of(&disc);
                let half = Rational::ratio(1, 2).expect("2 != 0") * c2.inv()?;
                for sign in [-1, 1] {
                    let mu = (Radical::from_rational(&-c1.clone())
                        + root.clone() * Radical::from_i64(sign))
                        * Radical::from_rational(&half);
                    simple_roots.push(RatFunc::constant(mu));
                }
            }
            _ => moduli.push(factor.monic()),
        }
    }
    let numeric_rf = numeric.map(|x| RatFunc::constant(x.clone()));
    for nu in &simple_roots {
        let (energy, vector) = simple_eigenvalue_series(series, metric, &scale, &numeric_rf, nu)?;
        res.push(SimpleBranch { energy, vector });
    }
    let lifted: Vec<DenseMatrix<Algebraic>> =
        series.iter().map(|m| m.map(|x| Algebraic::constant(x.clone()))).collect();
    let lifted_metric: Vec<Algebraic> =
        metric.iter().map(|g| Algebraic::constant(g.clone())).collect();
    let lifted_numeric: DenseMatrix<Algebraic> =
        numeric.map(|x| Algebraic::constant(RatFunc::constant(x.clone())));
    let lifted_scale = Algebraic::constant(scale.clone());
    let width = Rational::new(1.into(), num_bigint::BigInt::from(1) << 80).expect("non-zero");
    for modulus in moduli {
        let degree = modulus.degree()?;
        let intervals = roots::isolate_real_roots(&modulus);
        if intervals.len() != degree {
            return None;
        }
        let alpha = Algebraic::generator(&modulus);
        let (in_alpha, vector_in_alpha) = simple_eigenvalue_series(
            &lifted,
            &lifted_metric,
            &lifted_scale,
            &lifted_numeric,
            &alpha,
        )?;
        for (k, interval) in intervals.into_iter().enumerate() {
            let refined = roots::refine(&modulus, interval, &width);
            let atom =
                RootAtom { polynomial: modulus.coeffs().to_vec(), index: k + 1, interval: refined };
            let slot = match ctx
                .roots
                .iter()
                .position(|a| a.polynomial == atom.polynomial && a.index == atom.index)
            {
                Some(slot) => slot,
                None => {
                    ctx.roots.push(atom);
                    ctx.roots.len() - 1
                }
            };
            let id = ParamId(ctx.n_params + slot as u32);
            let rename = |x: &Algebraic| rename_alpha(&x.to_ratfunc(), id);
            res.push(SimpleBranch {
                energy: in_alpha.iter().map(rename).collect(),
                vector: vector_in_alpha.iter().map(|v| v.iter().map(rename).collect()).collect(),
            });
        }
    }
    ctx.secular.push(RawSecular {
        order: offset,
        characteristic: series[0].characteristic_polynomial(),
        roots: res.iter().map(|b| (b.energy[0].clone(), 1)).collect(),
    });
    Some(res)
}

/// `value`, a rational function in which root symbols of `roots` (ids from `n_params` on) may
/// appear, reduced so that each root enters as a polynomial of degree below that of its `P`, with
/// no root in a denominator; `None` when a denominator vanishes at the root (a zero divisor).
pub(crate) fn reduce_roots(value: &RatFunc, roots: &[RootAtom], n_params: u32) -> Option<RatFunc> {
    let mut value = value.clone();
    for (r, atom) in roots.iter().enumerate() {
        let id = ParamId(n_params + r as u32);
        if !value.params().contains(&id) {
            continue;
        }
        let modulus = UniPoly::new(atom.polynomial.clone());
        let as_element = |p: &Poly| -> Algebraic {
            // Collect the coefficient of each power of the root.
            let mut by_power: Vec<Vec<(Monomial, Radical)>> = Vec::new();
            for (m, c) in p.terms() {
                let power = m.degree_in(id) as usize;
                if by_power.len() <= power {
                    by_power.resize(power + 1, Vec::new());
                }
                by_power[power].push((m.without(id), c.clone()));
            }
            let alpha = Algebraic::generator(&modulus);
            let mut acc = Algebraic::zero();
            let mut power = Algebraic::one();
            for terms in by_power {
                let coeff = RatFunc::from_poly(Poly::from_terms(terms));
                acc += &(power.clone() * Algebraic::constant(coeff));
                power *= &alpha;
            }
            acc
        };
        let quotient = as_element(value.numer()) * as_element(value.denom()).inv()?;
        value = rename_alpha(&quotient.to_ratfunc(), id);
    }
    Some(value)
}

/// `value` with the placeholder [`ALPHA`] renamed to `id`.
fn rename_alpha(value: &RatFunc, id: ParamId) -> RatFunc {
    let rename = |p: &Poly| {
        Poly::from_terms(
            p.terms()
                .iter()
                .map(|(m, c)| {
                    let factors = m
                        .factors()
                        .iter()
                        .map(|(q, e)| (if *q == ALPHA { id } else { *q }, *e))
                        .collect();
                    (Monomial::new(factors), c.clone())
                })
                .collect(),
        )
    };
    RatFunc::new(rename(value.numer()), rename(value.denom())).expect("non-zero denominator")
}
