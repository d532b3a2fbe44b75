//! Kato's reduction: the branches of one model space, found stage by stage (ENGINE.md §5).
//!
//! A stage is a series `A(lambda) = sum_k lambda^k A_k` on a small space with a diagonal metric.
//! When `A_0` is a multiple `mu` of the identity, the branches of `(A - mu)/lambda` (one order
//! shorter) are those of `A` shifted by `mu`; otherwise `A_0` is split into eigenspaces and each
//! eigenspace becomes a model space of its own, with its own effective Hamiltonian (Kato,
//! Perturbation Theory for Linear Operators, 1966, ch. II §2.3, the reduction process).

use super::algebraic::{algebraic_branches, Context};
use super::bloch::{wave_operator, Bloch, Problem};
use super::Scalar;
use crate::exact::{Field, RatFunc};
use crate::linalg::{DenseMatrix, SparseMatrix, SparseVec};
use crate::spectrum::eigen;

/// One stage of the reduction: `series[k]` is `A_k`, self-adjoint for `metric`.
pub(crate) struct Stage<F> {
    pub series: Vec<DenseMatrix<F>>,
    pub metric: Vec<F>,
}

/// A branch as the reduction finds it, in the coordinates of the stage that asked.
#[derive(Clone, Debug)]
pub(crate) struct RawBranch<F> {
    /// Energy coefficients from `lambda^0` up; shorter than the stage when it did not split.
    /// Written as rational functions, in which algebraic roots (`root_between(P, lo, hi)`) appear as extra
    /// symbols.
    pub energy: Vec<RatFunc>,
    /// How many states stay together at the last order computed.
    pub multiplicity: usize,
    /// Order at which this branch's group became distinct from the rest of its model space.
    pub split_at: Option<usize>,
    /// Eigenvector series (coefficients of `lambda^k`), known to the order it has; `None` for a
    /// group that does not split.
    pub vector: Option<Vec<SparseVec<F>>>,
    /// Order at which the branch stood alone (its vector is determined to `N - isolated_at`).
    pub isolated_at: usize,
    /// Zeroth-order states spanning the branch's group (one for a single branch), in the
    /// coordinates of the stage that asked; empty where they are not in this field (a branch
    /// written with an algebraic root).
    pub span: Vec<SparseVec<F>>,
    /// Set when the reduction stopped because a secular matrix could not be split exactly.
    pub not_split: Option<eigen::NotSplit>,
}

/// A secular problem met during the reduction: `det(x - A_0) = 0` at `order`.
#[derive(Clone, Debug)]
pub(crate) struct RawSecular {
    pub order: usize,
    pub characteristic: Vec<RatFunc>,
    pub roots: Vec<(RatFunc, usize)>,
}

/// The reduction needs a number its field cannot hold (a square root in the rationals, say).
#[derive(Clone, Debug)]
pub(crate) struct FieldTooSmall;

/// The branches of `stage`, whose lowest coefficient is the `offset`-th order of the original
/// series.
pub(crate) fn branches<F: Scalar>(
    stage: Stage<F>,
    offset: usize,
    ctx: &mut Context,
) -> Result<Vec<RawBranch<F>>, FieldTooSmall> {
    let d = stage.metric.len();
    let a0 = &stage.series[0];
    if d == 1 {
        return Ok(vec![RawBranch {
            energy: stage.series.iter().map(|m| m.get(0, 0).to_ratfunc()).collect(),
            multiplicity: 1,
            split_at: None,
            // The one state is the eigenvector at every order this stage knows.
            vector: Some(
                (0..stage.series.len())
                    .map(|k| {
                        if k == 0 {
                            SparseVec::from_pairs(vec![(0, F::one())])
                        } else {
                            SparseVec::new()
                        }
                    })
                    .collect(),
            ),
            isolated_at: offset,
            not_split: None,
            span: vec![SparseVec::from_pairs(vec![(0, F::one())])],
        }]);
    }
    let whole = || (0..d).map(|k| SparseVec::from_pairs(vec![(k, F::one())])).collect();
    if let Some(mu) = scalar_value(a0) {
        if stage.series.len() == 1 {
            return Ok(vec![RawBranch {
                energy: vec![mu.to_ratfunc()],
                multiplicity: d,
                split_at: None,
                vector: None,
                isolated_at: offset,
                not_split: None,
                span: whole(),
            }]);
        }
        let child = Stage { series: stage.series[1..].to_vec(), metric: stage.metric.clone() };
        let mut res = branches(child, offset + 1, ctx)?;
        let mu = mu.to_ratfunc();
        for b in &mut res {
            b.energy.insert(0, mu.clone());
        }
        return Ok(res);
    }
    let a0_rf = a0.map(F::to_ratfunc);
    let metric_rf: Vec<RatFunc> = stage.metric.iter().map(F::to_ratfunc).collect();
    let spaces = match eigen::eigenspaces(&a0_rf, &metric_rf) {
        Ok(spaces) => spaces,
        Err(not_split) => {
            let series_rf: Vec<DenseMatrix<RatFunc>> =
                stage.series.iter().map(|m| m.map(F::to_ratfunc)).collect();
            if let Some(res) = algebraic_branches(&series_rf, &metric_rf, offset, ctx) {
                // Each branch stands alone from here. Its state carries the root's symbol, which
                // only rational functions hold; other fields leave it out (and `solve_fields`
                // repeats the model space in rational functions to get it).
                return Ok(res
                    .into_iter()
                    .map(|b| RawBranch {
                        energy: b.energy,
                        multiplicity: 1,
                        split_at: Some(offset),
                        span: Vec::new(),
                        vector: b
                            .vector
                            .iter()
                            .map(|v| {
                                v.iter()
                                    .map(F::from_ratfunc)
                                    .collect::<Option<Vec<F>>>()
                                    .map(dense_to_sparse)
                            })
                            .collect::<Option<Vec<_>>>(),
                        isolated_at: offset,
                        not_split: None,
                    })
                    .collect());
            }
            return Ok(vec![RawBranch {
                energy: Vec::new(),
                multiplicity: d,
                split_at: None,
                vector: None,
                isolated_at: offset,
                not_split: Some(not_split),
                span: whole(),
            }]);
        }
    };
    ctx.secular.push(RawSecular {
        order: offset,
        characteristic: a0_rf.characteristic_polynomial(),
        roots: spaces.iter().map(|s| (s.value.clone(), s.vectors.len())).collect(),
    });
    // New basis: the eigenvectors of A_0, grouped by eigenvalue.
    let mut columns: Vec<Vec<F>> = Vec::with_capacity(d);
    let mut energies = Vec::with_capacity(d);
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for space in &spaces {
        let value = F::from_ratfunc(&space.value).ok_or(FieldTooSmall)?;
        let mut group = Vec::new();
        for v in &space.vectors {
            group.push(columns.len());
            columns.push(
                v.iter()
                    .map(|x| F::from_ratfunc(x).ok_or(FieldTooSmall))
                    .collect::<Result<_, _>>()?,
            );
            energies.push(value.clone());
        }
        groups.push(group);
    }
    let u = DenseMatrix::from_columns(&columns, d);
    // A'_k = G'^{-1} U^dag G A_k U with the new metric G' = U^dag G U (diagonal by construction).
    let g = DenseMatrix::diagonal(&stage.metric);
    let u_dag_g = u.adjoint().mul(&g);
    let new_metric: Vec<F> = (0..d).map(|k| u_dag_g.mul(&u).get(k, k).clone()).collect();
    let g_inv = DenseMatrix::diagonal(
        &new_metric
            .iter()
            .map(|x| x.inv().expect("eigenvectors have non-zero norm"))
            .collect::<Vec<_>>(),
    );
    let left = g_inv.mul(&u_dag_g);
    let terms: Vec<SparseMatrix<F>> = stage.series[1..]
        .iter()
        .map(|a| {
            let t = left.mul(a).mul(&u);
            SparseMatrix::from_rows(d, t.to_rows().into_iter().map(dense_to_sparse).collect())
        })
        .collect();
    let problem = Problem { energies, metric: new_metric, terms };
    let order = stage.series.len() - 1;
    let mut res = Vec::new();
    for group in &groups {
        let bloch = wave_operator(&problem, group, order);
        let child = Stage {
            series: bloch.hermitian.clone(),
            metric: group.iter().map(|&i| problem.metric[i].clone()).collect(),
        };
        for mut b in branches(child, offset, ctx)? {
            b.split_at = b.split_at.or(Some(offset));
            let to_stage = |v: SparseVec<F>| dense_to_sparse(u.mul_vec(&sparse_to_dense(&v, d)));
            b.vector = b.vector.map(|c| lift(&bloch, &c).into_iter().map(to_stage).collect());
            // At order zero the wave operator is the embedding of the group.
            b.span = b
                .span
                .iter()
                .map(|v| to_stage(lift(&bloch, std::slice::from_ref(v)).remove(0)))
                .collect();
            res.push(b);
        }
    }
    Ok(res)
}

/// `Omega(lambda) S^(-1/2)(lambda) c(lambda)`: a model-space eigenvector series `c` carried to the
/// whole space of the problem (ENGINE.md §4: the des Cloizeaux eigenvector `c` of `H_eff` is
/// `S^(1/2)` times one of `H_B`, which `Omega` maps to the full eigenvector).
pub(crate) fn lift<F: Field>(bloch: &Bloch<F>, c: &[SparseVec<F>]) -> Vec<SparseVec<F>> {
    let len = c.len();
    let d = bloch.model.len();
    let t: Vec<Vec<F>> = (0..len)
        .map(|m| {
            let mut acc = vec![F::zero(); d];
            for k in 0..=m {
                let dense = sparse_to_dense(&c[m - k], d);
                for (a, x) in bloch.s_inv_half[k].mul_vec(&dense).into_iter().enumerate() {
                    acc[a] += &x;
                }
            }
            acc
        })
        .collect();
    (0..len)
        .map(|m| {
            let mut pairs = Vec::new();
            for j in 0..=m {
                for (a, coeff) in t[m - j].iter().enumerate() {
                    if coeff.is_zero() {
                        continue;
                    }
                    for (i, v) in bloch.omega[j][a].entries() {
                        pairs.push((*i, coeff.mul_ref(v)));
                    }
                }
            }
            SparseVec::from_pairs(pairs)
        })
        .collect()
}

fn scalar_value<F: Field>(a: &DenseMatrix<F>) -> Option<F> {
    if !a.is_diagonal() {
        return None;
    }
    let mu = a.get(0, 0).clone();
    (1..a.n_rows()).all(|i| *a.get(i, i) == mu).then_some(mu)
}

pub(crate) fn dense_to_sparse<F: Field>(v: Vec<F>) -> SparseVec<F> {
    SparseVec::from_pairs(v.into_iter().enumerate().filter(|(_, x)| !x.is_zero()).collect())
}

pub(crate) fn sparse_to_dense<F: Field>(v: &SparseVec<F>, n: usize) -> Vec<F> {
    let mut res = vec![F::zero(); n];
    for (i, x) in v.entries() {
        res[*i] = x.clone();
    }
    res
}
