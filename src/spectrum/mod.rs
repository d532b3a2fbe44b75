//! The exact spectrum of H0, grouped into degenerate levels.
//! Start from [`unperturbed_levels`]. Knows nothing of perturbation orders.
#![deny(clippy::float_arithmetic)]

pub mod eigen;

use crate::exact::{Field, RatFunc};
use crate::linalg::{DenseMatrix, SparseVec};
use crate::model::{Model, Operator};

/// One exact eigenvalue of H0 with its eigenspace.
#[derive(Clone, Debug)]
pub struct Level {
    /// The exact eigenvalue.
    pub energy: RatFunc,
    /// A basis of the eigenspace in the product basis; unit vectors when H0 is diagonal.
    pub states: Vec<SparseVec<RatFunc>>,
}

impl Level {
    /// Dimension of the eigenspace.
    pub fn degeneracy(&self) -> usize {
        self.states.len()
    }
}

/// The unperturbed spectrum, levels in ascending order where the order is known.
#[derive(Clone, Debug)]
pub struct Spectrum {
    /// The levels.
    pub levels: Vec<Level>,
    /// Whether H0 is diagonal in the product basis (then every state is a product state).
    pub diagonal: bool,
}

/// Why the spectrum could not be found exactly.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SpectrumError {
    /// H0 is neither diagonal, numeric, nor a sum of commuting symbol-times-numeric terms.
    Unsupported(String),
}

impl std::fmt::Display for SpectrumError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SpectrumError::Unsupported(why) => write!(f, "{why}"),
        }
    }
}

/// Every exact eigenvalue of H0 with its eigenspace.
///
/// A diagonal H0 is read off directly. Otherwise H0 is cut into the blocks that its off-diagonal
/// entries connect, each block is split by [`eigen::eigenspaces`], and equal eigenvalues of
/// different blocks are merged into one level.
pub fn unperturbed_levels(model: &Model) -> Result<Spectrum, SpectrumError> {
    let mut res = spectrum_of(model.h0(), &model.param_names())?;
    let positive: Vec<bool> = model.params().iter().map(|p| p.positive).collect();
    sort_with_signs(&mut res.levels, &positive);
    Ok(res)
}

/// The spectrum of any Hermitian operator on the product space (see [`unperturbed_levels`]).
pub fn spectrum_of(h0: &Operator, names: &[String]) -> Result<Spectrum, SpectrumError> {
    let diagonal = h0.is_diagonal();
    let mut levels: Vec<(RatFunc, Vec<SparseVec<RatFunc>>)> = Vec::new();
    let mut push = |value: RatFunc, vector: SparseVec<RatFunc>| match levels
        .iter_mut()
        .find(|(v, _)| *v == value)
    {
        Some((_, vs)) => vs.push(vector),
        None => levels.push((value, vec![vector])),
    };
    if diagonal {
        for (i, e) in h0.diagonal_entries().into_iter().enumerate() {
            push(e, SparseVec::from_pairs(vec![(i, RatFunc::one())]));
        }
    } else {
        let unit_metric = |k: usize| vec![RatFunc::one(); k];
        for block in connected_blocks(h0) {
            let dense = DenseMatrix::from_rows(h0.submatrix(&block, &block).to_dense());
            let spaces = eigen::eigenspaces(&dense, &unit_metric(block.len())).map_err(|e| {
                SpectrumError::Unsupported(format!(
                    "cannot find the exact spectrum of H0: a block of {} states has the \
                     characteristic polynomial {} and {}; cleave splits H0 when it is diagonal, \
                     numeric with eigenvalues in Q(i, sqrt 2, sqrt 3, ...), or a sum of commuting \
                     (symbol x numeric operator) terms; move the terms that do not commute with \
                     the rest of H0 into V",
                    block.len(),
                    characteristic_text(&e.characteristic, names),
                    e.reason
                ))
            })?;
            for space in spaces {
                for v in space.vectors {
                    let pairs =
                        v.into_iter().enumerate().map(|(k, x)| (block[k], x)).collect::<Vec<_>>();
                    push(space.value.clone(), SparseVec::from_pairs(pairs));
                }
            }
        }
    }
    // Ascending energies when they are real numbers; otherwise first appearance in the basis.
    let all_real = levels.iter().all(|(v, _)| v.as_constant().is_some_and(|c| c.is_real()));
    if all_real {
        levels.sort_by(|(a, _), (b, _)| {
            eigen::real_sign(&(a.clone() - b).as_constant().expect("constant")).cmp(&0)
        });
    }
    Ok(Spectrum {
        levels: levels.into_iter().map(|(energy, states)| Level { energy, states }).collect(),
        diagonal,
    })
}

/// Puts symbolic levels in ascending order when every difference has a sign that the declared
/// positive parameters decide (`9/4*D` above `1/4*D` for `D > 0`); otherwise leaves the order.
fn sort_with_signs(levels: &mut [Level], positive: &[bool]) {
    // Constant levels are already in ascending order; the pairwise test is quadratic, so it is
    // kept for the symbolic spectra of the size people write down.
    const MAX_LEVELS: usize = 400;
    let n = levels.len();
    if n > MAX_LEVELS || levels.iter().all(|l| l.energy.as_constant().is_some()) {
        return;
    }
    for a in 0..n {
        for b in a + 1..n {
            if known_sign(&(levels[a].energy.clone() - &levels[b].energy), positive).is_none() {
                return;
            }
        }
    }
    levels.sort_by(|a, b| {
        known_sign(&(a.energy.clone() - &b.energy), positive).expect("checked above").cmp(&0)
    });
}

/// The sign of a value for every admissible choice of the parameters, when the declared positive
/// parameters decide it: a real constant, or numerator and denominator each a sum of terms of one
/// sign in which every parameter is positive or enters with an even power.
pub fn known_sign(value: &RatFunc, positive: &[bool]) -> Option<i32> {
    if value.is_zero() {
        return Some(0);
    }
    let sign_of = |poly: &crate::exact::Poly| -> Option<i32> {
        let mut sign = 0;
        for (monomial, coeff) in poly.terms() {
            let c = coeff.as_rational()?;
            let definite = monomial
                .factors()
                .iter()
                .all(|(p, e)| e % 2 == 0 || positive.get(p.0 as usize).copied().unwrap_or(false));
            if !definite {
                return None;
            }
            let s = c.signum();
            if sign != 0 && s != sign {
                return None;
            }
            sign = s;
        }
        Some(sign)
    };
    Some(sign_of(value.numer())? * sign_of(value.denom())?)
}

/// Index sets of the blocks of a square matrix (connected components of its non-zero pattern),
/// each sorted, in order of their smallest index.
fn connected_blocks(matrix: &Operator) -> Vec<Vec<usize>> {
    blocks_of(matrix.n_rows(), matrix.triplets().map(|(r, c, _)| (r, c)))
}

/// Connected components of the graph on `0..n` with the given edges, each sorted, in order of
/// their smallest index.
pub(crate) fn blocks_of(n: usize, edges: impl Iterator<Item = (usize, usize)>) -> Vec<Vec<usize>> {
    let mut parent: Vec<usize> = (0..n).collect();
    fn find(parent: &mut [usize], mut i: usize) -> usize {
        while parent[i] != i {
            parent[i] = parent[parent[i]];
            i = parent[i];
        }
        i
    }
    for (r, c) in edges {
        let (a, b) = (find(&mut parent, r), find(&mut parent, c));
        if a != b {
            parent[a.max(b)] = a.min(b);
        }
    }
    let mut blocks: Vec<Vec<usize>> = Vec::new();
    let mut root_block = vec![usize::MAX; n];
    for i in 0..n {
        let root = find(&mut parent, i);
        if root_block[root] == usize::MAX {
            root_block[root] = blocks.len();
            blocks.push(Vec::new());
        }
        blocks[root_block[root]].push(i);
    }
    blocks
}

/// `x^2 - a^2 - b^2` for the error message, highest power first.
fn characteristic_text(coeffs: &[RatFunc], names: &[String]) -> String {
    let symbols = crate::exact::Symbols { names };
    let terms: Vec<String> = coeffs
        .iter()
        .enumerate()
        .rev()
        .filter(|(_, c)| !c.is_zero())
        .map(|(k, c)| {
            let power = match k {
                0 => String::new(),
                1 => "x".to_string(),
                _ => format!("x^{k}"),
            };
            match (power.is_empty(), c.is_one()) {
                (true, _) => format!("({})", c.display(symbols)),
                (false, true) => power,
                (false, false) => format!("({})*{power}", c.display(symbols)),
            }
        })
        .collect();
    terms.join(" + ")
}
