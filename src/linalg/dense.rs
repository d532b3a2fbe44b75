//! Small dense matrices for the model-space algebra (effective Hamiltonians, secular problems).

use crate::exact::Field;

/// A dense matrix stored row-major.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DenseMatrix<F> {
    n_rows: usize,
    n_cols: usize,
    data: Vec<F>,
}

impl<F: Field> DenseMatrix<F> {
    /// The zero matrix.
    pub fn zeros(n_rows: usize, n_cols: usize) -> Self {
        DenseMatrix { n_rows, n_cols, data: vec![F::zero(); n_rows * n_cols] }
    }
    /// The identity.
    pub fn identity(n: usize) -> Self {
        let mut res = Self::zeros(n, n);
        for i in 0..n {
            res.data[i * n + i] = F::one();
        }
        res
    }
    /// A diagonal matrix.
    pub fn diagonal(values: &[F]) -> Self {
        let n = values.len();
        let mut res = Self::zeros(n, n);
        for (i, v) in values.iter().enumerate() {
            res.data[i * n + i] = v.clone();
        }
        res
    }
    /// Builds from rows of equal length.
    pub fn from_rows(rows: Vec<Vec<F>>) -> Self {
        let n_rows = rows.len();
        let n_cols = rows.first().map_or(0, Vec::len);
        debug_assert!(rows.iter().all(|r| r.len() == n_cols));
        DenseMatrix { n_rows, n_cols, data: rows.into_iter().flatten().collect() }
    }
    /// Builds from columns of equal length.
    pub fn from_columns(columns: &[Vec<F>], n_rows: usize) -> Self {
        let n_cols = columns.len();
        let mut res = Self::zeros(n_rows, n_cols);
        for (j, col) in columns.iter().enumerate() {
            for (i, v) in col.iter().enumerate() {
                res.data[i * n_cols + j] = v.clone();
            }
        }
        res
    }
    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.n_rows
    }
    /// Number of columns.
    pub fn n_cols(&self) -> usize {
        self.n_cols
    }
    /// The entry at `(i, j)`.
    pub fn get(&self, i: usize, j: usize) -> &F {
        &self.data[i * self.n_cols + j]
    }
    /// Sets the entry at `(i, j)`.
    pub fn set(&mut self, i: usize, j: usize, value: F) {
        self.data[i * self.n_cols + j] = value;
    }
    /// Mutable access to the entry at `(i, j)`.
    pub fn get_mut(&mut self, i: usize, j: usize) -> &mut F {
        &mut self.data[i * self.n_cols + j]
    }
    /// Column `j` as a vector.
    pub fn column(&self, j: usize) -> Vec<F> {
        (0..self.n_rows).map(|i| self.get(i, j).clone()).collect()
    }
    /// Row `i` as a slice.
    pub fn row(&self, i: usize) -> &[F] {
        &self.data[i * self.n_cols..(i + 1) * self.n_cols]
    }
    /// Whether every entry is zero.
    pub fn is_zero(&self) -> bool {
        self.data.iter().all(F::is_zero)
    }
    /// Whether every off-diagonal entry is zero.
    pub fn is_diagonal(&self) -> bool {
        (0..self.n_rows).all(|i| (0..self.n_cols).all(|j| i == j || self.get(i, j).is_zero()))
    }
    /// `self + other`.
    pub fn add(&self, other: &Self) -> Self {
        debug_assert_eq!((self.n_rows, self.n_cols), (other.n_rows, other.n_cols));
        DenseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            data: self.data.iter().zip(&other.data).map(|(a, b)| a.clone() + b).collect(),
        }
    }
    /// `self - other`.
    pub fn sub(&self, other: &Self) -> Self {
        DenseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            data: self.data.iter().zip(&other.data).map(|(a, b)| a.clone() - b).collect(),
        }
    }
    /// `self += factor * other`.
    pub fn add_scaled_assign(&mut self, factor: &F, other: &Self) {
        if factor.is_zero() {
            return;
        }
        for (a, b) in self.data.iter_mut().zip(&other.data) {
            if !b.is_zero() {
                *a += &factor.mul_ref(b);
            }
        }
    }
    /// `factor * self`.
    pub fn scale(&self, factor: &F) -> Self {
        DenseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            data: self.data.iter().map(|a| factor.mul_ref(a)).collect(),
        }
    }
    /// The matrix product.
    pub fn mul(&self, other: &Self) -> Self {
        debug_assert_eq!(self.n_cols, other.n_rows);
        let mut res = Self::zeros(self.n_rows, other.n_cols);
        for i in 0..self.n_rows {
            for k in 0..self.n_cols {
                let a = self.get(i, k);
                if a.is_zero() {
                    continue;
                }
                for j in 0..other.n_cols {
                    let b = other.get(k, j);
                    if !b.is_zero() {
                        *res.get_mut(i, j) += &a.mul_ref(b);
                    }
                }
            }
        }
        res
    }
    /// `self * vector`.
    pub fn mul_vec(&self, vector: &[F]) -> Vec<F> {
        (0..self.n_rows)
            .map(|i| {
                let mut acc = F::zero();
                for (a, b) in self.row(i).iter().zip(vector) {
                    if !a.is_zero() && !b.is_zero() {
                        acc += &a.mul_ref(b);
                    }
                }
                acc
            })
            .collect()
    }
    /// The conjugate transpose.
    pub fn adjoint(&self) -> Self {
        let mut res = Self::zeros(self.n_cols, self.n_rows);
        for i in 0..self.n_rows {
            for j in 0..self.n_cols {
                res.set(j, i, self.get(i, j).conj());
            }
        }
        res
    }
    /// The trace.
    pub fn trace(&self) -> F {
        let mut acc = F::zero();
        for i in 0..self.n_rows.min(self.n_cols) {
            acc += self.get(i, i);
        }
        acc
    }
    /// Applies `f` to every entry.
    pub fn map<G: Field>(&self, f: impl FnMut(&F) -> G) -> DenseMatrix<G> {
        DenseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            data: self.data.iter().map(f).collect(),
        }
    }
    /// Like [`DenseMatrix::map`] with a fallible conversion.
    pub fn try_map<G: Field>(&self, f: impl FnMut(&F) -> Option<G>) -> Option<DenseMatrix<G>> {
        Some(DenseMatrix {
            n_rows: self.n_rows,
            n_cols: self.n_cols,
            data: self.data.iter().map(f).collect::<Option<Vec<G>>>()?,
        })
    }
    /// The entries, row-major.
    pub fn entries(&self) -> &[F] {
        &self.data
    }
    /// Rows as vectors.
    pub fn to_rows(&self) -> Vec<Vec<F>> {
        (0..self.n_rows).map(|i| self.row(i).to_vec()).collect()
    }

    /// A basis of the null space `{x : self x = 0}` by Gauss–Jordan elimination; each basis vector
    /// has a 1 at its free column.
    pub fn null_space(&self) -> Vec<Vec<F>> {
        self.try_null_space().expect("in a field every non-zero pivot is invertible")
    }

    /// Like [`DenseMatrix::null_space`], for rings that may have zero divisors (an algebraic
    /// extension by a polynomial not known to be irreducible): `None` when a non-zero pivot has
    /// no inverse.
    pub fn try_null_space(&self) -> Option<Vec<Vec<F>>> {
        let (n_rows, n_cols) = (self.n_rows, self.n_cols);
        let mut m = self.clone();
        let mut pivot_cols = Vec::new();
        let mut row = 0;
        for col in 0..n_cols {
            if row == n_rows {
                break;
            }
            let Some(pivot) = (row..n_rows).find(|&r| !m.get(r, col).is_zero()) else {
                continue;
            };
            if pivot != row {
                for j in 0..n_cols {
                    m.data.swap(pivot * n_cols + j, row * n_cols + j);
                }
            }
            let inv = m.get(row, col).inv()?;
            for j in 0..n_cols {
                let v = m.get(row, j).mul_ref(&inv);
                m.set(row, j, v);
            }
            for r in 0..n_rows {
                if r == row || m.get(r, col).is_zero() {
                    continue;
                }
                let factor = m.get(r, col).clone();
                for j in 0..n_cols {
                    if !m.get(row, j).is_zero() {
                        let v = m.get(r, j).clone() - factor.mul_ref(m.get(row, j));
                        m.set(r, j, v);
                    }
                }
            }
            pivot_cols.push(col);
            row += 1;
        }
        let mut res = Vec::new();
        for free in (0..n_cols).filter(|c| !pivot_cols.contains(c)) {
            let mut v = vec![F::zero(); n_cols];
            v[free] = F::one();
            for (r, &pc) in pivot_cols.iter().enumerate() {
                v[pc] = -m.get(r, free).clone();
            }
            res.push(v);
        }
        Some(res)
    }

    /// The inverse by Gauss–Jordan elimination, `None` when the matrix is singular (or, in a ring
    /// with zero divisors, when a non-zero pivot has no inverse).
    pub fn inverse(&self) -> Option<Self> {
        let n = self.n_rows;
        let mut m = self.clone();
        let mut inv = Self::identity(n);
        for col in 0..n {
            let pivot = (col..n).find(|&r| !m.get(r, col).is_zero())?;
            if pivot != col {
                for j in 0..n {
                    m.data.swap(pivot * n + j, col * n + j);
                    inv.data.swap(pivot * n + j, col * n + j);
                }
            }
            let p = m.get(col, col).inv()?;
            for j in 0..n {
                let (a, b) = (m.get(col, j).mul_ref(&p), inv.get(col, j).mul_ref(&p));
                m.set(col, j, a);
                inv.set(col, j, b);
            }
            for r in 0..n {
                if r == col || m.get(r, col).is_zero() {
                    continue;
                }
                let factor = m.get(r, col).clone();
                for j in 0..n {
                    let a = m.get(r, j).clone() - factor.mul_ref(m.get(col, j));
                    let b = inv.get(r, j).clone() - factor.mul_ref(inv.get(col, j));
                    m.set(r, j, a);
                    inv.set(r, j, b);
                }
            }
        }
        Some(inv)
    }

    /// The characteristic polynomial `det(x - self)`, coefficients from `x^0` up, by
    /// Berkowitz's division-free algorithm (Berkowitz, Inf. Process. Lett. 18, 147 (1984);
    /// Samuelson's recursion over the leading principal submatrices), about `n^4 / 4`
    /// multiplications and no inverses. A matrix whose entries are all rational goes through
    /// [`DenseMatrix::rational_characteristic_polynomial`], which works on integers.
    pub fn characteristic_polynomial(&self) -> Vec<F> {
        if let Some(rational) = self.rational_characteristic_polynomial() {
            return rational.iter().map(F::from_rational).collect();
        }
        let n = self.n_rows;
        let rows: Vec<Vec<F>> =
            (0..n).map(|i| (0..n).map(|j| self.get(i, j).clone()).collect()).collect();
        let mut res = berkowitz(&rows, F::zero(), F::one(), |a, b| a.mul_ref(b));
        res.reverse();
        res
    }

    /// The characteristic polynomial of a matrix with rational entries (`None` otherwise),
    /// coefficients from `x^0` up: with `D` the common denominator, Berkowitz's algorithm runs
    /// over the integers on `D A`, whose coefficients `c_k` give `c_k / D^(n-k)` for `A`. Integer
    /// arithmetic keeps the intermediate sizes bounded by Hadamard's bound instead of the growth
    /// of fractions.
    pub fn rational_characteristic_polynomial(&self) -> Option<Vec<crate::exact::Rational>> {
        use crate::exact::Rational;
        use num_bigint::BigInt;
        let n = self.n_rows;
        let entries: Vec<Rational> = self
            .data
            .iter()
            .map(|x| x.to_ratfunc().as_constant().and_then(|c| c.as_rational()))
            .collect::<Option<_>>()?;
        let denom = entries.iter().fold(BigInt::from(1), |acc, c| c.denom_lcm(&acc));
        let rows: Vec<Vec<BigInt>> = (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| {
                        let c = &entries[i * n + j];
                        c.numer() * (&denom / c.denom())
                    })
                    .collect()
            })
            .collect();
        let scaled = berkowitz(&rows, BigInt::from(0), BigInt::from(1), |a, b| a * b);
        // scaled[k] is the coefficient of x^(n-k) in det(x - D A) = D^n det(x/D - A).
        let denom = Rational::from_bigint(denom);
        let mut res = Vec::with_capacity(n + 1);
        let mut power = Rational::one();
        for c in &scaled {
            res.push(Rational::from_bigint(c.clone()) * power.inv().expect("D > 0"));
            power *= &denom;
        }
        res.reverse();
        Some(res)
    }
}

/// Berkowitz's algorithm over a commutative ring given by its zero, one and product: the
/// coefficients of `det(x - A)` from the highest power down. For the leading `r x r` submatrix
/// `[[M, S], [R, a]]` the Toeplitz column `(1, -a, -R S, -R M S, ..., -R M^(r-2) S)` times the
/// previous coefficient vector gives the next one.
fn berkowitz<T>(rows: &[Vec<T>], zero: T, one: T, mul: impl Fn(&T, &T) -> T) -> Vec<T>
where
    T: Clone + for<'a> std::ops::AddAssign<&'a T> + for<'a> std::ops::SubAssign<&'a T>,
{
    let n = rows.len();
    let mut coeffs = vec![one.clone()];
    for r in 0..n {
        // Toeplitz column for the (r+1) x (r+1) leading submatrix.
        let mut column = vec![one.clone()];
        let mut neg_a = zero.clone();
        neg_a -= &rows[r][r];
        column.push(neg_a);
        let mut v: Vec<T> = (0..r).map(|i| rows[i][r].clone()).collect();
        for k in 0..r {
            let mut dot = zero.clone();
            for (j, vj) in v.iter().enumerate() {
                dot += &mul(&rows[r][j], vj);
            }
            let mut neg = zero.clone();
            neg -= &dot;
            column.push(neg);
            if k + 1 < r {
                v = (0..r)
                    .map(|i| {
                        let mut acc = zero.clone();
                        for (j, vj) in v.iter().enumerate() {
                            acc += &mul(&rows[i][j], vj);
                        }
                        acc
                    })
                    .collect();
            }
        }
        let mut next = vec![zero.clone(); r + 2];
        for (i, slot) in next.iter_mut().enumerate() {
            for (j, c) in coeffs.iter().enumerate().take(i + 1) {
                *slot += &mul(&column[i - j], c);
            }
        }
        coeffs = next;
    }
    coeffs
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::Rational;

    fn r(n: i64) -> Rational {
        Rational::from_i64(n)
    }

    #[test]
    fn characteristic_polynomial_of_2x2() {
        // [[1, 2], [3, 4]]: x^2 - 5x - 2 (trace 5, determinant -2).
        let a = DenseMatrix::from_rows(vec![vec![r(1), r(2)], vec![r(3), r(4)]]);
        assert_eq!(a.characteristic_polynomial(), vec![r(-2), r(-5), r(1)]);
    }

    #[test]
    fn inverse_of_2x2() {
        let a = DenseMatrix::from_rows(vec![vec![r(2), r(1)], vec![r(1), r(1)]]);
        let inv = a.inverse().expect("invertible");
        assert_eq!(a.mul(&inv), DenseMatrix::identity(2));
        assert!(DenseMatrix::from_rows(vec![vec![r(1), r(1)], vec![r(1), r(1)]])
            .inverse()
            .is_none());
    }

    #[test]
    fn null_space_of_rank_one() {
        let a = DenseMatrix::from_rows(vec![vec![r(1), r(-1)], vec![r(-1), r(1)]]);
        assert_eq!(a.null_space(), vec![vec![r(1), r(1)]]);
    }

    /// `p(A)` by Horner's rule, with `p` from `x^0` up.
    fn eval_at_matrix(coeffs: &[Rational], a: &DenseMatrix<Rational>) -> DenseMatrix<Rational> {
        let n = a.n_rows();
        let mut acc = DenseMatrix::zeros(n, n);
        for c in coeffs.iter().rev() {
            acc = a.mul(&acc);
            for i in 0..n {
                *acc.get_mut(i, i) += c;
            }
        }
        acc
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig { cases: 64, ..Default::default() })]

        /// Cayley–Hamilton: every matrix is a root of its characteristic polynomial; the
        /// coefficient of `x^(n-1)` is minus the trace. Checked on the integer path (rational
        /// entries) and on the generic path (the same matrix over rational functions).
        #[test]
        fn characteristic_polynomial_satisfies_cayley_hamilton(
            n in 1usize..7,
            entries in proptest::collection::vec((-9i64..10, 1i64..4), 36),
        ) {
            let rows: Vec<Vec<Rational>> = (0..n)
                .map(|i| (0..n).map(|j| {
                    let (p, q) = entries[i * 6 + j];
                    Rational::ratio(p, q).expect("q > 0")
                }).collect())
                .collect();
            let a = DenseMatrix::from_rows(rows.clone());
            let cp = a.characteristic_polynomial();
            proptest::prop_assert_eq!(cp.len(), n + 1);
            proptest::prop_assert_eq!(eval_at_matrix(&cp, &a), DenseMatrix::zeros(n, n));
            proptest::prop_assert_eq!(-cp[n - 1].clone(), a.trace());
            let generic: Vec<Vec<crate::exact::RatFunc>> = rows
                .iter()
                .map(|row| row.iter().map(crate::exact::RatFunc::from_rational).collect())
                .collect();
            let generic_rows: Vec<Vec<crate::exact::RatFunc>> = generic.clone();
            let by_ring = berkowitz(
                &generic_rows,
                crate::exact::RatFunc::zero(),
                crate::exact::RatFunc::one(),
                |x, y| x.mul_ref(y),
            );
            let expected: Vec<crate::exact::RatFunc> =
                cp.iter().rev().map(crate::exact::RatFunc::from_rational).collect();
            proptest::prop_assert_eq!(by_ring, expected);
        }
    }
}
