//! Exact sparse vectors and matrices over any [`Field`]: sums, products, adjoint, tensor product.
//! Start from [`SparseMatrix`]. Knows no physics and no source spans.
#![deny(clippy::float_arithmetic)]

mod dense;

pub use dense::DenseMatrix;

use crate::exact::Field;

/// A sparse vector: `(index, value)` pairs sorted by index, no stored zeros.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SparseVec<F> {
    entries: Vec<(usize, F)>,
}

impl<F: Field> Default for SparseVec<F> {
    fn default() -> Self {
        SparseVec { entries: Vec::new() }
    }
}

impl<F: Field> SparseVec<F> {
    /// The zero vector.
    pub fn new() -> Self {
        Self::default()
    }
    /// Builds from pairs in any order; equal indices are summed and zeros dropped.
    pub fn from_pairs(mut pairs: Vec<(usize, F)>) -> Self {
        pairs.sort_by_key(|(idx, _)| *idx);
        let mut entries: Vec<(usize, F)> = Vec::with_capacity(pairs.len());
        let mut pairs = pairs.into_iter().peekable();
        while let Some((idx, value)) = pairs.next() {
            if pairs.peek().is_some_and(|(next, _)| *next == idx) {
                let mut group = vec![value];
                while let Some((_, v)) = pairs.next_if(|(next, _)| *next == idx) {
                    group.push(v);
                }
                entries.push((idx, F::sum_of(group)));
            } else {
                entries.push((idx, value));
            }
        }
        entries.retain(|(_, v)| !v.is_zero());
        SparseVec { entries }
    }
    /// The stored entries, sorted by index.
    pub fn entries(&self) -> &[(usize, F)] {
        &self.entries
    }
    /// Number of stored (non-zero) entries.
    pub fn nnz(&self) -> usize {
        self.entries.len()
    }
    /// Whether every entry is zero.
    pub fn is_zero(&self) -> bool {
        self.entries.is_empty()
    }
    /// The entry at `idx` (zero when absent).
    pub fn get(&self, idx: usize) -> F {
        match self.entries.binary_search_by_key(&idx, |(i, _)| *i) {
            Ok(pos) => self.entries[pos].1.clone(),
            Err(_) => F::zero(),
        }
    }
    /// `self + factor * other`.
    pub fn add_scaled(&self, factor: &F, other: &SparseVec<F>) -> SparseVec<F> {
        if factor.is_zero() {
            return self.clone();
        }
        let mut res = Vec::with_capacity(self.entries.len() + other.entries.len());
        let (mut a, mut b) = (self.entries.iter().peekable(), other.entries.iter().peekable());
        loop {
            match (a.peek(), b.peek()) {
                (Some((ia, va)), Some((ib, vb))) => {
                    if ia < ib {
                        res.push((*ia, va.clone()));
                        a.next();
                    } else if ib < ia {
                        res.push((*ib, factor.mul_ref(vb)));
                        b.next();
                    } else {
                        let v = va.clone() + factor.mul_ref(vb);
                        if !v.is_zero() {
                            res.push((*ia, v));
                        }
                        a.next();
                        b.next();
                    }
                }
                (Some((ia, va)), None) => {
                    res.push((*ia, va.clone()));
                    a.next();
                }
                (None, Some((ib, vb))) => {
                    res.push((*ib, factor.mul_ref(vb)));
                    b.next();
                }
                (None, None) => break,
            }
        }
        SparseVec { entries: res }
    }
    /// `factor * self`.
    pub fn scale(&self, factor: &F) -> SparseVec<F> {
        if factor.is_zero() {
            return SparseVec::new();
        }
        SparseVec { entries: self.entries.iter().map(|(i, v)| (*i, factor.mul_ref(v))).collect() }
    }
    /// Applies `f` to every stored entry, dropping results that are zero.
    pub fn map<G: Field>(&self, mut f: impl FnMut(usize, &F) -> G) -> SparseVec<G> {
        SparseVec {
            entries: self
                .entries
                .iter()
                .map(|(i, v)| (*i, f(*i, v)))
                .filter(|(_, v)| !v.is_zero())
                .collect(),
        }
    }
    /// Keeps the entries whose index satisfies `keep`.
    pub fn filter(&self, mut keep: impl FnMut(usize) -> bool) -> SparseVec<F> {
        SparseVec { entries: self.entries.iter().filter(|(i, _)| keep(*i)).cloned().collect() }
    }
    /// The bilinear form `sum_i self_i other_i` (no conjugation).
    pub fn dot(&self, other: &SparseVec<F>) -> F {
        let mut acc = Vec::new();
        let (mut a, mut b) = (0, 0);
        while a < self.entries.len() && b < other.entries.len() {
            let (ia, ib) = (self.entries[a].0, other.entries[b].0);
            if ia < ib {
                a += 1;
            } else if ib < ia {
                b += 1;
            } else {
                acc.push(self.entries[a].1.mul_ref(&other.entries[b].1));
                a += 1;
                b += 1;
            }
        }
        match acc.len() {
            0 => F::zero(),
            1 => acc.pop().expect("one value"),
            _ => F::sum_of(acc),
        }
    }
    /// Complex conjugate of every entry.
    pub fn conj(&self) -> SparseVec<F> {
        self.map(|_, v| v.conj())
    }
}

/// A sparse square or rectangular matrix stored by rows.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SparseMatrix<F> {
    n_rows: usize,
    n_cols: usize,
    rows: Vec<SparseVec<F>>,
}

impl<F: Field> SparseMatrix<F> {
    /// The zero matrix.
    pub fn zeros(n_rows: usize, n_cols: usize) -> Self {
        SparseMatrix { n_rows, n_cols, rows: vec![SparseVec::new(); n_rows] }
    }
    /// The identity of dimension `n`.
    pub fn identity(n: usize) -> Self {
        Self::diagonal((0..n).map(|_| F::one()).collect())
    }
    /// A diagonal matrix.
    pub fn diagonal(values: Vec<F>) -> Self {
        let n = values.len();
        let rows = values
            .into_iter()
            .enumerate()
            .map(|(i, v)| SparseVec::from_pairs(vec![(i, v)]))
            .collect();
        SparseMatrix { n_rows: n, n_cols: n, rows }
    }
    /// Builds from `(row, col, value)` triplets; repeated positions are summed.
    pub fn from_triplets(n_rows: usize, n_cols: usize, triplets: Vec<(usize, usize, F)>) -> Self {
        let mut per_row: Vec<Vec<(usize, F)>> = vec![Vec::new(); n_rows];
        for (r, c, v) in triplets {
            debug_assert!(r < n_rows && c < n_cols);
            per_row[r].push((c, v));
        }
        SparseMatrix {
            n_rows,
            n_cols,
            rows: per_row.into_iter().map(SparseVec::from_pairs).collect(),
        }
    }
    /// Builds from rows.
    pub fn from_rows(n_cols: usize, rows: Vec<SparseVec<F>>) -> Self {
        SparseMatrix { n_rows: rows.len(), n_cols, rows }
    }
    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.n_rows
    }
    /// Number of columns.
    pub fn n_cols(&self) -> usize {
        self.n_cols
    }
    /// The rows.
    pub fn rows(&self) -> &[SparseVec<F>] {
        &self.rows
    }
    /// Row `i`.
    pub fn row(&self, i: usize) -> &SparseVec<F> {
        &self.rows[i]
    }
    /// The entry at `(i, j)`.
    pub fn get(&self, i: usize, j: usize) -> F {
        self.rows[i].get(j)
    }
    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.rows.iter().map(SparseVec::nnz).sum()
    }
    /// Whether every entry is zero.
    pub fn is_zero(&self) -> bool {
        self.rows.iter().all(SparseVec::is_zero)
    }
    /// Iterates over `(row, col, value)` of the stored entries, row by row.
    pub fn triplets(&self) -> impl Iterator<Item = (usize, usize, &F)> {
        self.rows
            .iter()
            .enumerate()
            .flat_map(|(r, row)| row.entries.iter().map(move |(c, v)| (r, *c, v)))
    }
    /// `self + factor * other`.
    pub fn add_scaled(&self, factor: &F, other: &SparseMatrix<F>) -> SparseMatrix<F> {
        debug_assert_eq!((self.n_rows, self.n_cols), (other.n_rows, other.n_cols));
        SparseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            rows: self.rows.iter().zip(&other.rows).map(|(a, b)| a.add_scaled(factor, b)).collect(),
        }
    }
    /// `self + other`.
    pub fn add(&self, other: &SparseMatrix<F>) -> SparseMatrix<F> {
        self.add_scaled(&F::one(), other)
    }
    /// `self - other`.
    pub fn sub(&self, other: &SparseMatrix<F>) -> SparseMatrix<F> {
        self.add_scaled(&-F::one(), other)
    }
    /// `factor * self`.
    pub fn scale(&self, factor: &F) -> SparseMatrix<F> {
        SparseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            rows: self.rows.iter().map(|r| r.scale(factor)).collect(),
        }
    }
    /// `self + value * identity` (square matrices).
    pub fn add_identity(&self, value: &F) -> SparseMatrix<F> {
        self.add_scaled(value, &Self::identity(self.n_rows))
    }
    /// The matrix product `self * other`.
    pub fn mul(&self, other: &SparseMatrix<F>) -> SparseMatrix<F> {
        debug_assert_eq!(self.n_cols, other.n_rows);
        let rows = self
            .rows
            .iter()
            .map(|row| {
                let mut pairs = Vec::new();
                for (k, a) in &row.entries {
                    for (j, b) in &other.rows[*k].entries {
                        pairs.push((*j, a.mul_ref(b)));
                    }
                }
                SparseVec::from_pairs(pairs)
            })
            .collect();
        SparseMatrix { n_rows: self.n_rows, n_cols: other.n_cols, rows }
    }
    /// `self * vector`.
    pub fn mul_vec(&self, vector: &SparseVec<F>) -> SparseVec<F> {
        let pairs = self
            .rows
            .iter()
            .enumerate()
            .filter_map(|(i, row)| {
                let v = row.dot(vector);
                (!v.is_zero()).then_some((i, v))
            })
            .collect();
        SparseVec { entries: pairs }
    }
    /// The transpose.
    pub fn transpose(&self) -> SparseMatrix<F> {
        let mut per_row: Vec<Vec<(usize, F)>> = vec![Vec::new(); self.n_cols];
        for (r, c, v) in self.triplets() {
            per_row[c].push((r, v.clone()));
        }
        SparseMatrix {
            n_rows: self.n_cols,
            n_cols: self.n_rows,
            rows: per_row.into_iter().map(|entries| SparseVec { entries }).collect(),
        }
    }
    /// The Hermitian adjoint (conjugate transpose).
    pub fn adjoint(&self) -> SparseMatrix<F> {
        let t = self.transpose();
        SparseMatrix {
            n_rows: t.n_rows,
            n_cols: t.n_cols,
            rows: t.rows.iter().map(SparseVec::conj).collect(),
        }
    }
    /// The first `(row, col)` with `self[row, col] != conj(self[col, row])`, in row-major order.
    pub fn first_non_hermitian(&self) -> Option<(usize, usize)> {
        let adj = self.adjoint();
        for i in 0..self.n_rows {
            if self.rows[i] != adj.rows[i] {
                let a = &self.rows[i];
                let b = &adj.rows[i];
                let mut cols: Vec<usize> =
                    a.entries.iter().chain(&b.entries).map(|(c, _)| *c).collect();
                cols.sort_unstable();
                for c in cols {
                    if a.get(c) != b.get(c) {
                        return Some((i.min(c), i.max(c)));
                    }
                }
            }
        }
        None
    }
    /// Whether only diagonal entries are stored.
    pub fn is_diagonal(&self) -> bool {
        self.triplets().all(|(r, c, _)| r == c)
    }
    /// The diagonal entries.
    pub fn diagonal_entries(&self) -> Vec<F> {
        (0..self.n_rows.min(self.n_cols)).map(|i| self.get(i, i)).collect()
    }
    /// The Kronecker (tensor) product `self ⊗ other`; the first factor's index varies slowest.
    pub fn kron(&self, other: &SparseMatrix<F>) -> SparseMatrix<F> {
        let mut rows = Vec::with_capacity(self.n_rows * other.n_rows);
        for a_row in &self.rows {
            for b_row in &other.rows {
                let mut entries = Vec::with_capacity(a_row.nnz() * b_row.nnz());
                for (ca, va) in &a_row.entries {
                    for (cb, vb) in &b_row.entries {
                        let v = va.mul_ref(vb);
                        if !v.is_zero() {
                            entries.push((ca * other.n_cols + cb, v));
                        }
                    }
                }
                rows.push(SparseVec { entries });
            }
        }
        SparseMatrix {
            n_rows: self.n_rows * other.n_rows,
            n_cols: self.n_cols * other.n_cols,
            rows,
        }
    }
    /// Applies `f` to every stored entry (zeros dropped).
    pub fn map<G: Field>(&self, mut f: impl FnMut(&F) -> G) -> SparseMatrix<G> {
        SparseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            rows: self.rows.iter().map(|r| r.map(|_, v| f(v))).collect(),
        }
    }
    /// Like [`SparseMatrix::map`] with a fallible conversion.
    pub fn try_map<G: Field>(&self, mut f: impl FnMut(&F) -> Option<G>) -> Option<SparseMatrix<G>> {
        let mut rows = Vec::with_capacity(self.n_rows);
        for row in &self.rows {
            let mut entries = Vec::with_capacity(row.nnz());
            for (c, v) in &row.entries {
                let g = f(v)?;
                if !g.is_zero() {
                    entries.push((*c, g));
                }
            }
            rows.push(SparseVec { entries });
        }
        Some(SparseMatrix { n_rows: self.n_rows, n_cols: self.n_cols, rows })
    }
    /// The sub-matrix on the given rows and columns (in the given order).
    pub fn submatrix(&self, row_idx: &[usize], col_idx: &[usize]) -> SparseMatrix<F> {
        let mut position = vec![usize::MAX; self.n_cols];
        for (k, &c) in col_idx.iter().enumerate() {
            position[c] = k;
        }
        let rows = row_idx
            .iter()
            .map(|&r| {
                SparseVec::from_pairs(
                    self.rows[r]
                        .entries
                        .iter()
                        .filter(|(c, _)| position[*c] != usize::MAX)
                        .map(|(c, v)| (position[*c], v.clone()))
                        .collect(),
                )
            })
            .collect();
        SparseMatrix { n_rows: row_idx.len(), n_cols: col_idx.len(), rows }
    }
    /// The trace.
    pub fn trace(&self) -> F {
        let mut acc = F::zero();
        for i in 0..self.n_rows.min(self.n_cols) {
            acc += &self.get(i, i);
        }
        acc
    }
    /// The matrix as dense rows.
    pub fn to_dense(&self) -> Vec<Vec<F>> {
        self.rows
            .iter()
            .map(|row| {
                let mut dense = vec![F::zero(); self.n_cols];
                for (c, v) in &row.entries {
                    dense[*c] = v.clone();
                }
                dense
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::Rational;

    fn r(n: i64) -> Rational {
        Rational::from_i64(n)
    }

    #[test]
    fn kron_orders_first_factor_slowest() {
        let a = SparseMatrix::from_triplets(2, 2, vec![(0, 1, r(1))]);
        let b = SparseMatrix::<Rational>::identity(3);
        let k = a.kron(&b);
        assert_eq!(k.get(0, 3), r(1));
        assert_eq!(k.get(2, 5), r(1));
        assert_eq!(k.nnz(), 3);
    }

    #[test]
    fn product_matches_dense() {
        let a = SparseMatrix::from_triplets(2, 2, vec![(0, 0, r(1)), (0, 1, r(2)), (1, 0, r(3))]);
        let b = SparseMatrix::from_triplets(2, 2, vec![(0, 1, r(5)), (1, 1, r(7))]);
        let p = a.mul(&b);
        assert_eq!(p.to_dense(), vec![vec![r(0), r(19)], vec![r(0), r(15)]]);
    }
}
