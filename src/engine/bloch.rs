//! Bloch's wave operator and the two effective Hamiltonians of one model space.
//!
//! Notation follows ENGINE.md sections 3–4, which restate Bloch, Nucl. Phys. 6, 329 (1958) for
//! the wave operator and des Cloizeaux, Nucl. Phys. 20, 321 (1960) for the Hermitian form.
//! The problem is written in a basis where the unperturbed part `A_0` is diagonal, with a diagonal
//! metric `g` (the basis need not be normalized): `<x, y> = sum_i conj(x_i) g_i y_i`, and every
//! `A_k` is self-adjoint for that inner product (`g_i A_k[i][j] = conj(g_j A_k[j][i])`).

use crate::exact::Field;
use crate::linalg::{DenseMatrix, SparseMatrix, SparseVec};

/// A perturbation problem `A(lambda) = A_0 + sum_k lambda^k A_k` with diagonal `A_0`.
#[derive(Clone, Debug)]
pub(crate) struct Problem<F> {
    /// The diagonal of `A_0`.
    pub energies: Vec<F>,
    /// The diagonal metric `g`.
    pub metric: Vec<F>,
    /// `terms[k - 1]` is `A_k`; orders beyond the list are zero.
    pub terms: Vec<SparseMatrix<F>>,
}

/// The wave operator and effective Hamiltonians of one model space, to order `N`.
#[derive(Clone, Debug)]
pub(crate) struct Bloch<F> {
    /// Problem indices spanning the model space (`P`), in the order of the model basis.
    pub model: Vec<usize>,
    /// `omega[m][a]` is column `a` of `Omega_m` (support outside the model space for `m >= 1`);
    /// `omega[0]` are the unit vectors of `P`.
    pub omega: Vec<Vec<SparseVec<F>>>,
    /// `H_B^(m)`, `m = 0..=N`, on the model space.
    pub bloch: Vec<DenseMatrix<F>>,
    /// `H_eff^(m)`, `m = 0..=N`: the des Cloizeaux form, self-adjoint for the metric on `P`.
    pub hermitian: Vec<DenseMatrix<F>>,
    /// `S^(-1/2)` as a series, `m = 0..=N` (identity at order 0).
    pub s_inv_half: Vec<DenseMatrix<F>>,
}

impl<F: Field> Bloch<F> {
    /// The effective Hamiltonians and `S^(-1/2)` mapped into another field; `omega` is left empty
    /// (the caller keeps the original to lift states with).
    pub fn map_matrices<G: Field>(&self, f: impl Fn(&F) -> G + Copy) -> Bloch<G> {
        Bloch {
            model: self.model.clone(),
            omega: Vec::new(),
            bloch: self.bloch.iter().map(|m| m.map(f)).collect(),
            hermitian: self.hermitian.iter().map(|m| m.map(f)).collect(),
            s_inv_half: self.s_inv_half.iter().map(|m| m.map(f)).collect(),
        }
    }
}

/// Computes Bloch's wave operator for the model space `model` (a union of whole levels of `A_0`)
/// to order `order`, then `H_B` and the Hermitian `H_eff`.
///
/// Recursion (ENGINE.md §3, from Bloch 1958 with intermediate normalization `P Omega = P`):
/// `W_m = sum_{k=1..m} P A_k Omega_{m-k}`,
/// `RHS_m = sum_{k=1..m} Q A_k Omega_{m-k} - sum_{j=1..m-1} Omega_j W_{m-j}`,
/// `Omega_m[i][a] = RHS_m[i][a] / (E_a - E_i)` for `i` outside the model space.
pub(crate) fn wave_operator<F: Field>(
    problem: &Problem<F>,
    model: &[usize],
    order: usize,
) -> Bloch<F> {
    wave_operator_with(problem, model, order, &|_| {})
}

/// [`wave_operator`], telling `on_order` each order `m` as it starts.
pub(crate) fn wave_operator_with<F: Field>(
    problem: &Problem<F>,
    model: &[usize],
    order: usize,
    on_order: &dyn Fn(usize),
) -> Bloch<F> {
    let n = problem.energies.len();
    let d = model.len();
    let mut position = vec![usize::MAX; n];
    for (a, &idx) in model.iter().enumerate() {
        position[idx] = a;
    }
    // 1/(E_a - E_i), computed once per distinct model energy and outside state.
    let mut distinct: Vec<(F, Vec<Option<F>>)> = Vec::new();
    let mut energy_slot = vec![0; d];
    for (a, &idx) in model.iter().enumerate() {
        let e = &problem.energies[idx];
        energy_slot[a] = match distinct.iter().position(|(v, _)| v == e) {
            Some(slot) => slot,
            None => {
                distinct.push((e.clone(), vec![None; n]));
                distinct.len() - 1
            }
        };
    }

    let unit = |idx: usize| SparseVec::from_pairs(vec![(idx, F::one())]);
    let mut omega: Vec<Vec<SparseVec<F>>> = vec![model.iter().map(|&i| unit(i)).collect()];
    // products[k - 1][m'][a] = A_k Omega_{m'} e_a, kept because later orders reuse them.
    let n_terms = problem.terms.len();
    let mut products: Vec<Vec<Vec<SparseVec<F>>>> = vec![Vec::new(); n_terms];
    let mut bloch = vec![DenseMatrix::diagonal(
        &model.iter().map(|&i| problem.energies[i].clone()).collect::<Vec<_>>(),
    )];

    for m in 1..=order {
        on_order(m);
        for (k, term) in problem.terms.iter().enumerate().take(m) {
            // A_{k+1} Omega_{m-k-1}: only the newest column set is new at this order.
            let m_prev = m - k - 1;
            while products[k].len() <= m_prev {
                let cols = &omega[products[k].len()];
                let next = cols.iter().map(|c| term.mul_vec(c)).collect();
                products[k].push(next);
            }
        }
        // W_m and the Q part of the first sum.
        let mut w = DenseMatrix::zeros(d, d);
        let mut rhs: Vec<Vec<(usize, F)>> = vec![Vec::new(); d];
        for (k, per_order) in products.iter().enumerate().take(m.min(n_terms)) {
            for (a, col) in per_order[m - k - 1].iter().enumerate() {
                for (i, v) in col.entries() {
                    match position[*i] {
                        usize::MAX => rhs[a].push((*i, v.clone())),
                        b => *w.get_mut(b, a) += v,
                    }
                }
            }
        }
        // - sum_j Omega_j W_{m-j}.
        for j in 1..m {
            let w_prev = &bloch[m - j];
            for (a, rhs_a) in rhs.iter_mut().enumerate() {
                for (b, column) in omega[j].iter().enumerate() {
                    let coeff = w_prev.get(b, a);
                    if coeff.is_zero() {
                        continue;
                    }
                    let neg = -coeff.clone();
                    for (i, v) in column.entries() {
                        rhs_a.push((*i, neg.mul_ref(v)));
                    }
                }
            }
        }
        let mut next = Vec::with_capacity(d);
        for (a, pairs) in rhs.into_iter().enumerate() {
            let summed = SparseVec::from_pairs(pairs);
            let slot = energy_slot[a];
            let column = summed.map(|i, v| {
                let (e_a, cache) = &mut distinct[slot];
                let inv = cache[i].get_or_insert_with(|| {
                    (e_a.clone() - &problem.energies[i])
                        .inv()
                        .expect("model space is a union of whole levels")
                });
                v.mul_ref(inv)
            });
            next.push(column);
        }
        omega.push(next);
        bloch.push(w);
    }

    let model_metric: Vec<F> = model.iter().map(|&i| problem.metric[i].clone()).collect();
    let (hermitian, s_inv_half) = if d == 1 {
        // One state: H_eff = H_B = E(lambda); S^(-1/2) is a scalar series that intermediate
        // normalization removes again, so it is not computed (ENGINE.md §8).
        let ones = (0..=order).map(|m| {
            if m == 0 {
                DenseMatrix::identity(1)
            } else {
                DenseMatrix::zeros(1, 1)
            }
        });
        (bloch.clone(), ones.collect())
    } else {
        hermitian_form(&omega, &bloch, &problem.metric, &model_metric, order)
    };
    Bloch { model: model.to_vec(), omega, bloch, hermitian, s_inv_half }
}

/// `H_eff = S^(1/2) H_B S^(-1/2)` with `S = P Omega^dag Omega P` (des Cloizeaux 1960; ENGINE.md §4).
/// The adjoint is the one of the metric: `(X^dag Y)_ab = sum_i conj(X_ia) g_i Y_ib / g_a`.
fn hermitian_form<F: Field>(
    omega: &[Vec<SparseVec<F>>],
    bloch: &[DenseMatrix<F>],
    metric: &[F],
    model_metric: &[F],
    order: usize,
) -> (Vec<DenseMatrix<F>>, Vec<DenseMatrix<F>>) {
    let d = model_metric.len();
    let inv_model_metric: Vec<F> =
        model_metric.iter().map(|g| g.inv().expect("metric is positive")).collect();
    // Weighted conjugates g_i conj(Omega_j[i][a]) / g_a, reused for every S_m.
    let weighted: Vec<Vec<SparseVec<F>>> = omega
        .iter()
        .map(|cols| {
            cols.iter()
                .enumerate()
                .map(|(a, c)| c.map(|i, v| v.conj() * &metric[i] * &inv_model_metric[a]))
                .collect()
        })
        .collect();
    // T = S - P = sum_{m>=2} lambda^m S_m, S_m = sum_{j=1..m-1} Omega_j^dag Omega_{m-j}.
    let mut t = vec![DenseMatrix::zeros(d, d); order + 1];
    for (m, t_m) in t.iter_mut().enumerate().skip(2) {
        for j in 1..m {
            for (a, left) in weighted[j].iter().enumerate() {
                for (b, right) in omega[m - j].iter().enumerate() {
                    let v = left.dot(right);
                    if !v.is_zero() {
                        *t_m.get_mut(a, b) += &v;
                    }
                }
            }
        }
    }
    let s_half = binomial_series(&t, 1, order);
    let s_inv_half = binomial_series(&t, -1, order);
    let hermitian = series_mul(&series_mul(&s_half, bloch, order), &s_inv_half, order);
    (hermitian, s_inv_half)
}

/// `(1 + T)^(sign/2) = sum_j binom(sign/2, j) T^j`, truncated at `order`; `T` starts at `lambda^2`.
fn binomial_series<F: Field>(t: &[DenseMatrix<F>], sign: i64, order: usize) -> Vec<DenseMatrix<F>> {
    let d = t[0].n_rows();
    let mut res = vec![DenseMatrix::zeros(d, d); order + 1];
    res[0] = DenseMatrix::identity(d);
    let mut power = res.clone(); // T^0
    let mut coeff = F::one(); // binom(sign/2, j)
    let half = F::from_i64(sign) * F::from_i64(2).inv().expect("2 != 0");
    for j in 1..=order / 2 {
        power = series_mul(&power, t, order);
        // binom(p, j) = binom(p, j-1) (p - j + 1) / j.
        coeff = coeff
            * (half.clone() - F::from_i64(j as i64 - 1))
            * F::from_i64(j as i64).inv().expect("j > 0");
        for (r, p) in res.iter_mut().zip(&power) {
            r.add_scaled_assign(&coeff, p);
        }
    }
    res
}

/// The product of two matrix series, truncated at `order`.
pub(crate) fn series_mul<F: Field>(
    a: &[DenseMatrix<F>],
    b: &[DenseMatrix<F>],
    order: usize,
) -> Vec<DenseMatrix<F>> {
    let (n, m) = (a[0].n_rows(), b[0].n_cols());
    (0..=order)
        .map(|k| {
            let mut acc = DenseMatrix::zeros(n, m);
            for i in 0..=k {
                if i < a.len() && k - i < b.len() && !a[i].is_zero() && !b[k - i].is_zero() {
                    acc = acc.add(&a[i].mul(&b[k - i]));
                }
            }
            acc
        })
        .collect()
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::exact::Rational;

    fn r(n: i64, d: i64) -> Rational {
        Rational::ratio(n, d).unwrap()
    }

    /// The quartic anharmonic oscillator `p^2/2 + x^2/2 + lambda x^4`, ground level, in the basis
    /// `|n) = sqrt(n!) |n>` where `x = (a + a^dag)/sqrt(2)` is rational (`a|n) = n|n-1)`,
    /// `a^dag|n) = |n+1)`); a diagonal similarity that leaves the energy series unchanged.
    pub(crate) fn quartic_pub(n: usize) -> Problem<Rational> {
        quartic(n)
    }

    fn quartic(n_states: usize) -> Problem<Rational> {
        let mut x = SparseMatrix::zeros(n_states, n_states);
        let mut triplets = Vec::new();
        for n in 0..n_states {
            if n + 1 < n_states {
                triplets.push((n + 1, n, r(1, 1)));
            }
            if n > 0 {
                triplets.push((n - 1, n, r(n as i64, 1)));
            }
        }
        x = x.add(&SparseMatrix::from_triplets(n_states, n_states, triplets));
        let x2 = x.mul(&x).scale(&r(1, 2));
        let x4 = x2.mul(&x2);
        Problem {
            energies: (0..n_states).map(|n| r(2 * n as i64 + 1, 2)).collect(),
            metric: (0..n_states).map(|_| r(1, 1)).collect(),
            terms: vec![x4],
        }
    }

    #[test]
    fn quartic_oscillator_ground_level_matches_bender_wu() {
        // Bender & Wu, Phys. Rev. 184, 1231 (1969), Table I: E(lambda) = 1/2 + 3/4 lambda
        // - 21/8 lambda^2 + 333/16 lambda^3 - 30885/128 lambda^4 + 916731/256 lambda^5 - ...
        // (the coefficients through order 5 as recalled from that table; checked further in the
        // integration tests).
        let problem = quartic(30);
        let res = wave_operator(&problem, &[0], 5);
        let energies: Vec<Rational> = res.bloch.iter().map(|m| m.get(0, 0).clone()).collect();
        assert_eq!(
            energies,
            vec![r(1, 2), r(3, 4), r(-21, 8), r(333, 16), r(-30885, 128), r(916731, 256)]
        );
    }
}
