//! Exact eigenspaces of a small matrix whose entries are rational functions of the parameters.
//!
//! The matrix is first written as `sum_k c_k M_k` with scalar functions `c_k` linearly independent
//! over the constants and numeric matrices `M_k` (ENGINE.md §6). When the `M_k` commute, their
//! joint eigenspaces carry the eigenvalues `sum_k c_k mu_k`; numeric eigenvalues come from the
//! characteristic polynomial (rational roots, then the quadratic formula). Otherwise a 2×2 problem
//! is solved by the quadratic formula when its discriminant is a square, and anything else is
//! reported as not split, with its characteristic polynomial.

use std::collections::BTreeMap;

use num_bigint::BigInt;

use crate::exact::univariate::UniPoly;
use crate::exact::{Field, Monomial, Poly, Radical, RatFunc, Rational, SquareRoot};
use crate::linalg::DenseMatrix;

/// One eigenvalue with a basis of its eigenspace, orthogonal for the metric used.
#[derive(Clone, Debug)]
pub struct Eigenspace {
    /// The exact eigenvalue.
    pub value: RatFunc,
    /// Mutually orthogonal eigenvectors (not normalized).
    pub vectors: Vec<Vec<RatFunc>>,
}

/// Why a matrix could not be split into eigenspaces exactly.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct NotSplit {
    /// The characteristic polynomial `det(x - A)`, coefficients from `x^0` up.
    pub characteristic: Vec<RatFunc>,
    /// A short reason, e.g. "its eigenvalues are not rational functions of the parameters".
    pub reason: String,
}

/// The eigenspaces of `a`, which must be diagonalizable (self-adjoint for `metric`), with
/// eigenvectors orthogonalized for `<x, y> = sum_i conj(x_i) metric_i y_i`.
pub fn eigenspaces(
    a: &DenseMatrix<RatFunc>,
    metric: &[RatFunc],
) -> Result<Vec<Eigenspace>, NotSplit> {
    let n = a.n_rows();
    let mut spaces: Vec<(RatFunc, Vec<Vec<RatFunc>>)> = if a.is_diagonal() {
        (0..n).map(|i| (a.get(i, i).clone(), vec![unit(n, i)])).collect()
    } else {
        let parts = constant_parts(a);
        let commuting = parts
            .iter()
            .enumerate()
            .all(|(k, (_, mk))| parts[k + 1..].iter().all(|(_, ml)| mk.mul(ml) == ml.mul(mk)));
        if commuting {
            joint_eigenspaces(n, &parts).ok_or_else(|| not_split(a, "its numeric parts have eigenvalues that square roots of rationals cannot write"))?
        } else {
            quadratic_eigenspaces(a).ok_or_else(|| {
                not_split(a, "its eigenvalues are not rational functions of the parameters")
            })?
        }
    };
    // Merge equal eigenvalues, then orthogonalize inside each eigenspace.
    let mut merged: Vec<(RatFunc, Vec<Vec<RatFunc>>)> = Vec::new();
    for (value, vectors) in spaces.drain(..) {
        match merged.iter_mut().find(|(v, _)| *v == value) {
            Some((_, acc)) => acc.extend(vectors),
            None => merged.push((value, vectors)),
        }
    }
    sort_by_value(&mut merged);
    Ok(merged
        .into_iter()
        .map(|(value, vectors)| Eigenspace { value, vectors: gram_schmidt(vectors, metric) })
        .collect())
}

fn unit(n: usize, i: usize) -> Vec<RatFunc> {
    let mut v = vec![RatFunc::zero(); n];
    v[i] = RatFunc::one();
    v
}

fn not_split(a: &DenseMatrix<RatFunc>, reason: &str) -> NotSplit {
    NotSplit { characteristic: a.characteristic_polynomial(), reason: reason.to_string() }
}

/// Ascending when every value is a real constant; otherwise the order of first appearance.
fn sort_by_value<T>(spaces: &mut [(RatFunc, T)]) {
    let keys: Option<Vec<Radical>> =
        spaces.iter().map(|(v, _)| v.as_constant().filter(Radical::is_real)).collect();
    if keys.is_some() {
        spaces.sort_by(|(a, _), (b, _)| {
            let diff = (a.clone() - b).as_constant().expect("constants");
            real_sign(&diff).cmp(&0)
        });
    }
}

/// The sign of a real element of the radical field, exactly: each `sqrt(s)` is bracketed by
/// rationals from integer square roots at growing precision until the sum's sign is certain.
pub fn real_sign(value: &Radical) -> i32 {
    if value.is_zero() {
        return 0;
    }
    let mut bits: u32 = 16;
    loop {
        let scale = BigInt::from(1) << bits;
        let (mut lo, mut hi) = (Rational::zero(), Rational::zero());
        for (s, c) in value.terms() {
            // floor(sqrt(s) * 2^bits) <= sqrt(s) 2^bits < that + 1.
            let root = (s.to_bigint() * &scale * &scale).sqrt();
            let low = Rational::new(root.clone(), scale.clone()).expect("scale > 0");
            let high = Rational::new(root + 1, scale.clone()).expect("scale > 0");
            let (a, b) = (c.clone() * &low, c.clone() * &high);
            if c.is_negative() {
                lo += &b;
                hi += &a;
            } else {
                lo += &a;
                hi += &b;
            }
        }
        if lo.is_positive() {
            return 1;
        }
        if hi.is_negative() {
            return -1;
        }
        bits *= 2;
    }
}

/// Gram–Schmidt without normalization (no new square roots): `v_k -= <u_l, v_k>/<u_l, u_l> u_l`.
pub fn gram_schmidt(vectors: Vec<Vec<RatFunc>>, metric: &[RatFunc]) -> Vec<Vec<RatFunc>> {
    let mut res: Vec<(Vec<RatFunc>, RatFunc)> = Vec::new();
    for mut v in vectors {
        for (u, norm) in &res {
            let overlap = inner(u, &v, metric);
            if overlap.is_zero() {
                continue;
            }
            let factor = overlap * norm.inv().expect("non-zero norm");
            for (vi, ui) in v.iter_mut().zip(u) {
                *vi -= &factor.mul_ref(ui);
            }
        }
        let norm = inner(&v, &v, metric);
        if !norm.is_zero() {
            res.push((v, norm));
        }
    }
    res.into_iter().map(|(v, _)| v).collect()
}

/// `<x, y> = sum_i conj(x_i) g_i y_i`.
pub fn inner(x: &[RatFunc], y: &[RatFunc], metric: &[RatFunc]) -> RatFunc {
    let mut acc = RatFunc::zero();
    for ((xi, yi), g) in x.iter().zip(y).zip(metric) {
        if !xi.is_zero() && !yi.is_zero() {
            acc += &(xi.conj() * g * yi);
        }
    }
    acc
}

/// `a = sum_k c_k M_k` with the `c_k` independent over the constants and `M_k` numeric.
pub(crate) fn constant_parts(a: &DenseMatrix<RatFunc>) -> Vec<(RatFunc, DenseMatrix<Radical>)> {
    if let Some(numeric) = a.try_map(RatFunc::as_constant) {
        return vec![(RatFunc::one(), numeric)];
    }
    let n = a.n_rows();
    // A common multiple of the denominators turns every entry into a polynomial.
    let mut denominators: Vec<Poly> = Vec::new();
    for e in a.entries() {
        if !e.is_zero() && !denominators.contains(e.denom()) {
            denominators.push(e.denom().clone());
        }
    }
    let common = denominators.iter().fold(RatFunc::one(), |acc, d| acc * poly_to_ratfunc(d));
    let polys: Vec<Vec<(Monomial, Radical)>> =
        a.entries().iter().map(|e| (e.clone() * &common).numer().terms().to_vec()).collect();
    let mut monomials: BTreeMap<Monomial, usize> = BTreeMap::new();
    for p in &polys {
        for (m, _) in p {
            let next = monomials.len();
            monomials.entry(m.clone()).or_insert(next);
        }
    }
    let n_mono = monomials.len();
    let rows: Vec<Vec<Radical>> = polys
        .iter()
        .map(|p| {
            let mut row = vec![Radical::zero(); n_mono];
            for (m, c) in p {
                row[monomials[m]] = c.clone();
            }
            row
        })
        .collect();
    let (basis, pivots) = row_echelon_basis(rows.clone());
    let mono_list: Vec<Monomial> = {
        let mut v = vec![Monomial::default(); n_mono];
        for (m, idx) in &monomials {
            v[*idx] = m.clone();
        }
        v
    };
    let inv_common = common.inv().expect("product of denominators is non-zero");
    basis
        .iter()
        .zip(&pivots)
        .map(|(b, &pivot)| {
            let mut c = RatFunc::zero();
            for (coeff, m) in b.iter().zip(&mono_list) {
                if !coeff.is_zero() {
                    c += &(RatFunc::constant(coeff.clone()) * monomial_to_ratfunc(m));
                }
            }
            let mut mk = DenseMatrix::zeros(n, n);
            for (e, row) in rows.iter().enumerate() {
                mk.set(e / n, e % n, row[pivot].clone());
            }
            (c * &inv_common, mk)
        })
        .collect()
}

/// The non-zero rows of the reduced row echelon form of `rows`, with their pivot columns.
fn row_echelon_basis(rows: Vec<Vec<Radical>>) -> (Vec<Vec<Radical>>, Vec<usize>) {
    let m = DenseMatrix::from_rows(rows);
    let (n_rows, n_cols) = (m.n_rows(), m.n_cols());
    let mut m = m;
    let mut pivots = Vec::new();
    let mut row = 0;
    for col in 0..n_cols {
        if row == n_rows {
            break;
        }
        let Some(p) = (row..n_rows).find(|&r| !m.get(r, col).is_zero()) else { continue };
        if p != row {
            for j in 0..n_cols {
                let (x, y) = (m.get(p, j).clone(), m.get(row, j).clone());
                m.set(p, j, y);
                m.set(row, j, x);
            }
        }
        let inv = m.get(row, col).inv().expect("pivot non-zero");
        for j in 0..n_cols {
            let v = m.get(row, j).clone() * &inv;
            m.set(row, j, v);
        }
        for r in 0..n_rows {
            if r != row && !m.get(r, col).is_zero() {
                let f = m.get(r, col).clone();
                for j in 0..n_cols {
                    let v = m.get(r, j).clone() - f.clone() * m.get(row, j);
                    m.set(r, j, v);
                }
            }
        }
        pivots.push(col);
        row += 1;
    }
    ((0..pivots.len()).map(|r| m.row(r).to_vec()).collect(), pivots)
}

fn poly_to_ratfunc(p: &Poly) -> RatFunc {
    RatFunc::from_poly(p.clone())
}

fn monomial_to_ratfunc(m: &Monomial) -> RatFunc {
    RatFunc::from_poly(Poly::term(m.clone(), Radical::one()))
}

/// Joint eigenspaces of commuting numeric parts: refine the whole space part by part.
fn joint_eigenspaces(
    n: usize,
    parts: &[(RatFunc, DenseMatrix<Radical>)],
) -> Option<Vec<(RatFunc, Vec<Vec<RatFunc>>)>> {
    let identity: Vec<Vec<Radical>> = (0..n)
        .map(|i| (0..n).map(|j| if i == j { Radical::one() } else { Radical::zero() }).collect())
        .collect();
    let mut spaces: Vec<(RatFunc, Vec<Vec<Radical>>)> = vec![(RatFunc::zero(), identity)];
    for (c, m) in parts {
        let mut refined = Vec::new();
        for (value, basis) in spaces {
            let restricted = restrict(m, &basis)?;
            for (mu, ys) in numeric_eigenspaces(&restricted)? {
                let vectors = ys
                    .iter()
                    .map(|y| {
                        (0..n)
                            .map(|i| {
                                let mut acc = Radical::zero();
                                for (b, yk) in basis.iter().zip(y) {
                                    acc += &(b[i].clone() * yk);
                                }
                                acc
                            })
                            .collect()
                    })
                    .collect();
                refined.push((value.clone() + c.clone() * RatFunc::constant(mu), vectors));
            }
        }
        spaces = refined;
    }
    Some(
        spaces
            .into_iter()
            .map(|(v, basis)| {
                (
                    v,
                    basis
                        .into_iter()
                        .map(|b| b.into_iter().map(RatFunc::constant).collect())
                        .collect(),
                )
            })
            .collect(),
    )
}

/// The matrix of `m` on the invariant span of the columns `basis`: solves `m B = B R` for `R`
/// through `k` independent rows of `B`.
fn restrict(m: &DenseMatrix<Radical>, basis: &[Vec<Radical>]) -> Option<DenseMatrix<Radical>> {
    let n = m.n_rows();
    let k = basis.len();
    let b = DenseMatrix::from_columns(basis, n);
    let mb = m.mul(&b);
    // Augmented system [B | M B] reduced to echelon form; its first k pivot rows give R.
    let rows: Vec<Vec<Radical>> =
        (0..n).map(|i| b.row(i).iter().chain(mb.row(i)).cloned().collect()).collect();
    let (reduced, pivots) = row_echelon_basis(rows);
    if pivots.len() < k || pivots[..k].iter().enumerate().any(|(r, &p)| p != r) {
        return None;
    }
    let mut res = DenseMatrix::zeros(k, k);
    for (r, row) in reduced.iter().take(k).enumerate() {
        for j in 0..k {
            res.set(r, j, row[k + j].clone());
        }
    }
    Some(res)
}

/// Eigenvalues and eigenvector bases of a numeric matrix, or `None` when some eigenvalue is not in
/// the radical field by the methods tried (rational roots, then the quadratic formula).
pub fn numeric_eigenspaces(m: &DenseMatrix<Radical>) -> Option<Vec<(Radical, Vec<Vec<Radical>>)>> {
    let n = m.n_rows();
    if m.is_diagonal() {
        let mut res: Vec<(Radical, Vec<Vec<Radical>>)> = Vec::new();
        for i in 0..n {
            let mut e = vec![Radical::zero(); n];
            e[i] = Radical::one();
            let v = m.get(i, i).clone();
            match res.iter_mut().find(|(x, _)| *x == v) {
                Some((_, vs)) => vs.push(e),
                None => res.push((v, vec![e])),
            }
        }
        return Some(res);
    }
    // Blocks that do not couple are split on their own: two 2x2 blocks with eigenvalues ±sqrt(2)
    // and ±sqrt(3) give quadratics, where the whole matrix gives a quartic.
    let edges =
        (0..n).flat_map(|i| (0..n).map(move |j| (i, j))).filter(|&(i, j)| !m.get(i, j).is_zero());
    let blocks = super::blocks_of(n, edges);
    if blocks.len() > 1 {
        let mut res: Vec<(Radical, Vec<Vec<Radical>>)> = Vec::new();
        for block in blocks {
            let sub = DenseMatrix::from_rows(
                block
                    .iter()
                    .map(|&i| block.iter().map(|&j| m.get(i, j).clone()).collect())
                    .collect(),
            );
            for (mu, vectors) in numeric_eigenspaces(&sub)? {
                let embedded = vectors.into_iter().map(|v| {
                    let mut full = vec![Radical::zero(); n];
                    for (k, x) in block.iter().zip(v) {
                        full[*k] = x;
                    }
                    full
                });
                match res.iter_mut().find(|(x, _)| *x == mu) {
                    Some((_, vs)) => vs.extend(embedded),
                    None => res.push((mu, embedded.collect())),
                }
            }
        }
        return Some(res);
    }
    let roots = polynomial_roots(&m.characteristic_polynomial())?;
    let mut res = Vec::new();
    for mu in roots {
        let mut shifted = m.clone();
        for i in 0..n {
            let v = shifted.get(i, i).clone() - &mu;
            shifted.set(i, i, v);
        }
        let vectors = shifted.null_space();
        if vectors.is_empty() {
            return None;
        }
        res.push((mu, vectors));
    }
    let dim: usize = res.iter().map(|(_, v)| v.len()).sum();
    (dim == n).then_some(res)
}

/// The distinct roots of a polynomial with radical coefficients, when they all lie in the radical
/// field: rational roots of a rational polynomial, then the quadratic formula for what is left.
fn polynomial_roots(coeffs: &[Radical]) -> Option<Vec<Radical>> {
    if let Some(rational) = coeffs.iter().map(Radical::as_rational).collect::<Option<Vec<_>>>() {
        let poly = UniPoly::new(rational);
        let mut rest = poly.square_free_part();
        let mut res = Vec::new();
        for (root, _) in poly.rational_roots() {
            rest = rest
                .deflate(&root)
                .expect("a root of the polynomial is one of its square-free part");
            res.push(Radical::from_rational(&root));
        }
        if rest.degree().unwrap_or(0) > 0 {
            // What is left splits over the rationals into factors; quadratic ones have roots in
            // the radical field, higher ones do not (those stages go to `engine::algebraic`).
            for factor in crate::exact::roots::rational_factors(&rest)? {
                let [c0, c1, c2] = factor.coeffs() else { return None };
                let [c0, c1, c2] = [c0, c1, c2].map(Radical::from_rational);
                res.extend(quadratic_roots(&c0, &c1, &c2)?);
            }
        }
        return Some(res);
    }
    if coeffs.len() == 3 {
        return quadratic_roots(&coeffs[0], &coeffs[1], &coeffs[2]);
    }
    None
}

/// Roots of `c2 x^2 + c1 x + c0` in a field with square roots.
fn quadratic_roots<F: SquareRoot>(c0: &F, c1: &F, c2: &F) -> Option<Vec<F>> {
    let disc = c1.clone() * c1 - F::from_i64(4) * c2 * c0;
    let root = disc.sqrt()?;
    let denom = (F::from_i64(2) * c2).inv()?;
    let a = (-c1.clone() - &root) * &denom;
    let b = (-c1.clone() + &root) * &denom;
    Some(if root.is_zero() { vec![a] } else { vec![a, b] })
}

/// A 2×2 (or diagonalizable) symbolic matrix whose characteristic polynomial is a quadratic with a
/// square discriminant.
fn quadratic_eigenspaces(a: &DenseMatrix<RatFunc>) -> Option<Vec<(RatFunc, Vec<Vec<RatFunc>>)>> {
    if a.n_rows() != 2 {
        return None;
    }
    let cp = a.characteristic_polynomial();
    let roots = quadratic_roots(&cp[0], &cp[1], &cp[2])?;
    let mut res = Vec::new();
    for mu in roots {
        let mut shifted = a.clone();
        for i in 0..2 {
            let v = shifted.get(i, i).clone() - &mu;
            shifted.set(i, i, v);
        }
        res.push((mu, shifted.null_space()));
    }
    Some(res)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(n: i64) -> Radical {
        Radical::from_rational(&Rational::from_i64(n))
    }

    #[test]
    fn roots_of_a_cubic_with_an_irrational_pair() {
        // (x - 1)(x^2 - 2) = x^3 - x^2 - 2x + 2: roots 1 and ±sqrt(2).
        let roots = polynomial_roots(&[q(2), q(-2), q(-1), q(1)]).expect("splits");
        assert_eq!(roots.len(), 3);
        assert!(roots.contains(&Radical::sqrt_of(&Rational::from_i64(2))));
    }

    #[test]
    fn exact_sign_of_a_sum_of_roots() {
        // sqrt(2) + sqrt(3) - sqrt(10) = 3.146... - 3.162... < 0.
        let x = Radical::sqrt_of(&Rational::from_i64(2)) + Radical::sqrt_of(&Rational::from_i64(3))
            - Radical::sqrt_of(&Rational::from_i64(10));
        assert_eq!(real_sign(&x), -1);
    }
}
