//! Operators as written: sums and products of the spaces' own operators, kept as an expression
//! until a basis is chosen, then turned into a matrix by applying them to each basis state.
//! Start from [`OperatorExpr`]. That is what lets a sector of a large product space be worked on
//! without ever forming an operator on the whole product: only the states the sector keeps (and
//! the few a product passes through on the way) are touched.

use std::sync::Arc;

use super::basis::{Basis, Key, Layout};
use super::space::{LocalOperator, ModeAction};
use super::Operator;
use crate::exact::{Field, RatFunc, ValueSize};

/// An operator on the product of the declared spaces, as an expression in their local operators.
/// Cheap to clone. Operators on one non-fermion space are multiplied and added as matrices as soon
/// as they meet, so `(q.lower + q.raise)^4` is one local matrix.
#[derive(Clone, Debug)]
pub struct OperatorExpr {
    node: Arc<Node>,
    /// Leaf applications per basis state, a bound on the work of [`OperatorExpr::matrix`].
    cost: u64,
}

#[derive(Debug)]
enum Node {
    Identity,
    /// A matrix on one space; `columns` is its transpose, read column by column when applied.
    Local {
        space: usize,
        matrix: Operator,
        columns: Operator,
    },
    /// A fermionic mode operator.
    Mode {
        space: usize,
        mode: usize,
        action: ModeAction,
    },
    /// `Σ c_k A_k`; empty for zero.
    Sum(Vec<(RatFunc, OperatorExpr)>),
    /// `A_1 A_2 ... A_n`, at least two factors; `A_n` acts first.
    Product(Vec<OperatorExpr>),
}

/// A state that an operator takes out of the basis (a sector it does not conserve).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LeavesBasis {
    /// The basis state acted on.
    pub from: usize,
    /// The product state reached, which the basis does not have.
    pub to: Key,
}

/// A state on which an operator is not diagonal.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct NotDiagonal {
    /// The product state acted on.
    pub from: Key,
    /// Another product state it is taken to.
    pub to: Key,
}

/// Products with more factors than this stay nested instead of being flattened, so that
/// repeated squaring cannot build an exponentially long list.
const MAX_FLAT_FACTORS: usize = 64;

impl OperatorExpr {
    fn new(node: Node) -> OperatorExpr {
        let cost = match &node {
            Node::Identity => 0,
            Node::Local { .. } | Node::Mode { .. } => 1,
            Node::Sum(terms) => terms.iter().fold(0u64, |acc, (_, t)| acc.saturating_add(t.cost)),
            Node::Product(factors) => {
                factors.iter().fold(0u64, |acc, f| acc.saturating_add(f.cost))
            }
        };
        OperatorExpr { node: Arc::new(node), cost }
    }
    /// The zero operator.
    pub fn zero() -> OperatorExpr {
        OperatorExpr::new(Node::Sum(Vec::new()))
    }
    /// The identity.
    pub fn identity() -> OperatorExpr {
        OperatorExpr::new(Node::Identity)
    }
    /// A matrix acting on factor `space` alone, in that factor's state order.
    pub fn local(space: usize, matrix: Operator) -> OperatorExpr {
        if matrix.is_zero() {
            return OperatorExpr::zero();
        }
        let columns = matrix.transpose();
        OperatorExpr::new(Node::Local { space, matrix, columns })
    }
    /// Mode `mode`'s `action` on the fermion space `space`.
    pub fn mode(space: usize, mode: usize, action: ModeAction) -> OperatorExpr {
        OperatorExpr::new(Node::Mode { space, mode, action })
    }
    /// A space's named operator on factor `space`.
    pub fn from_local(space: usize, local: LocalOperator) -> OperatorExpr {
        match local {
            LocalOperator::Matrix(matrix) => OperatorExpr::local(space, matrix),
            LocalOperator::Mode { mode, action } => OperatorExpr::mode(space, mode, action),
        }
    }
    /// The size of the largest coefficient in the expression (matrix entries and weights).
    pub fn entry_size(&self) -> ValueSize {
        match &*self.node {
            Node::Identity | Node::Mode { .. } => RatFunc::one().size(),
            Node::Local { matrix, .. } => matrix
                .triplets()
                .map(|(_, _, x)| x.size())
                .fold(ValueSize::default(), ValueSize::max),
            Node::Sum(terms) => terms
                .iter()
                .map(|(c, t)| c.size().max(t.entry_size()))
                .fold(ValueSize::default(), ValueSize::max),
            Node::Product(factors) => factors
                .iter()
                .map(OperatorExpr::entry_size)
                .fold(ValueSize::default(), ValueSize::max),
        }
    }
    /// The largest dimension of a space a matrix of the expression acts on (1 if none).
    pub fn max_local_dimension(&self) -> usize {
        match &*self.node {
            Node::Identity | Node::Mode { .. } => 1,
            Node::Local { matrix, .. } => matrix.n_rows(),
            Node::Sum(terms) => {
                terms.iter().map(|(_, t)| t.max_local_dimension()).max().unwrap_or(1)
            }
            Node::Product(factors) => {
                factors.iter().map(OperatorExpr::max_local_dimension).max().unwrap_or(1)
            }
        }
    }
    /// Leaf applications per basis state: how much work forming the matrix takes.
    pub fn cost(&self) -> u64 {
        self.cost
    }
    /// Whether this is the zero operator as written (an empty sum).
    pub fn is_zero(&self) -> bool {
        matches!(&*self.node, Node::Sum(terms) if terms.is_empty())
    }
    /// The terms `(c_k, A_k)` of this operator read as a sum.
    fn terms(&self) -> Vec<(RatFunc, OperatorExpr)> {
        match &*self.node {
            Node::Sum(terms) => terms.clone(),
            _ => vec![(RatFunc::one(), self.clone())],
        }
    }
    /// `c * self`.
    pub fn scale(&self, c: &RatFunc) -> OperatorExpr {
        if c.is_zero() {
            return OperatorExpr::zero();
        }
        if c.is_one() {
            return self.clone();
        }
        match &*self.node {
            Node::Local { space, matrix, .. } => OperatorExpr::local(*space, matrix.scale(c)),
            Node::Sum(terms) => OperatorExpr::new(Node::Sum(
                terms.iter().map(|(k, t)| (k.mul_ref(c), t.clone())).collect(),
            )),
            _ => OperatorExpr::new(Node::Sum(vec![(c.clone(), self.clone())])),
        }
    }
    /// `self + other`; matrices on one space are added, multiples of one term collected.
    pub fn add(&self, other: &OperatorExpr) -> OperatorExpr {
        let mut locals: Vec<(usize, Operator)> = Vec::new();
        let mut identity = RatFunc::zero();
        let mut rest: Vec<(RatFunc, OperatorExpr)> = Vec::new();
        for (c, term) in self.terms().into_iter().chain(other.terms()) {
            match &*term.node {
                Node::Local { space, matrix, .. } => {
                    let scaled = matrix.scale(&c);
                    match locals.iter_mut().find(|(s, _)| s == space) {
                        Some((_, acc)) => *acc = acc.add(&scaled),
                        None => locals.push((*space, scaled)),
                    }
                }
                Node::Identity => identity += &c,
                _ => match rest.iter_mut().find(|(_, t)| t.same_as(&term)) {
                    Some((acc, _)) => *acc += &c,
                    None => rest.push((c, term)),
                },
            }
        }
        let mut terms: Vec<(RatFunc, OperatorExpr)> = Vec::new();
        for (space, matrix) in locals {
            let local = OperatorExpr::local(space, matrix);
            if !local.is_zero() {
                terms.push((RatFunc::one(), local));
            }
        }
        if !identity.is_zero() {
            terms.push((identity, OperatorExpr::identity()));
        }
        terms.extend(rest.into_iter().filter(|(c, _)| !c.is_zero()));
        match terms.as_slice() {
            [(c, term)] if c.is_one() => term.clone(),
            _ => OperatorExpr::new(Node::Sum(terms)),
        }
    }
    /// `self - other`.
    pub fn sub(&self, other: &OperatorExpr) -> OperatorExpr {
        self.add(&other.scale(&-RatFunc::one()))
    }
    /// `self + c * identity`.
    pub fn add_scalar(&self, c: &RatFunc) -> OperatorExpr {
        self.add(&OperatorExpr::identity().scale(c))
    }
    /// Structural identity: the same shared node, or the same mode operator.
    fn same_as(&self, other: &OperatorExpr) -> bool {
        if Arc::ptr_eq(&self.node, &other.node) {
            return true;
        }
        match (&*self.node, &*other.node) {
            (
                Node::Mode { space: a, mode: b, action: c },
                Node::Mode { space: x, mode: y, action: z },
            ) => (a, b, c) == (x, y, z),
            _ => false,
        }
    }
    /// The factors of this operator read as a product.
    fn factors(&self) -> Vec<OperatorExpr> {
        match &*self.node {
            Node::Product(factors) => factors.clone(),
            _ => vec![self.clone()],
        }
    }
    /// `self * other` (`other` acts first).
    pub fn mul(&self, other: &OperatorExpr) -> OperatorExpr {
        if self.is_zero() || other.is_zero() {
            return OperatorExpr::zero();
        }
        match (&*self.node, &*other.node) {
            (Node::Identity, _) => return other.clone(),
            (_, Node::Identity) => return self.clone(),
            (Node::Sum(terms), _) if terms.len() == 1 => {
                return terms[0].1.mul(other).scale(&terms[0].0)
            }
            (_, Node::Sum(terms)) if terms.len() == 1 => {
                return self.mul(&terms[0].1).scale(&terms[0].0)
            }
            _ => {}
        }
        let (left, right) = (self.factors(), other.factors());
        if left.len() + right.len() > MAX_FLAT_FACTORS {
            return OperatorExpr::new(Node::Product(vec![self.clone(), other.clone()]));
        }
        let mut factors: Vec<OperatorExpr> = Vec::with_capacity(left.len() + right.len());
        for factor in left.into_iter().chain(right) {
            let merged = match (factors.last().map(|f| &*f.node), &*factor.node) {
                (
                    Some(Node::Local { space: a, matrix: x, .. }),
                    Node::Local { space: b, matrix: y, .. },
                ) if a == b => Some(OperatorExpr::local(*a, x.mul(y))),
                _ => None,
            };
            match merged {
                Some(product) if product.is_zero() => return OperatorExpr::zero(),
                Some(product) => *factors.last_mut().expect("merged with the last") = product,
                None => factors.push(factor),
            }
        }
        match factors.len() {
            1 => factors.pop().expect("one factor"),
            _ => OperatorExpr::new(Node::Product(factors)),
        }
    }
    /// `self^n`.
    pub fn pow(&self, n: u64) -> OperatorExpr {
        if let Node::Local { space, matrix, .. } = &*self.node {
            let identity = Operator::identity(matrix.n_rows());
            let power = power_by_squaring(identity, matrix.clone(), n, |a, b| a.mul(b));
            return OperatorExpr::local(*space, power);
        }
        power_by_squaring(OperatorExpr::identity(), self.clone(), n, OperatorExpr::mul)
    }
    /// The Hermitian adjoint.
    pub fn adjoint(&self) -> OperatorExpr {
        match &*self.node {
            Node::Identity => self.clone(),
            Node::Local { space, matrix, .. } => OperatorExpr::local(*space, matrix.adjoint()),
            Node::Mode { space, mode, action } => {
                OperatorExpr::mode(*space, *mode, action.adjoint())
            }
            Node::Sum(terms) => OperatorExpr::new(Node::Sum(
                terms.iter().map(|(c, t)| (c.conj(), t.adjoint())).collect(),
            )),
            Node::Product(factors) => OperatorExpr::new(Node::Product(
                factors.iter().rev().map(|f| f.adjoint()).collect(),
            )),
        }
    }

    /// Applies the operator to the state `vector` (pairs of product state and amplitude).
    fn apply(&self, layout: &Layout, vector: Vec<(Key, RatFunc)>) -> Vec<(Key, RatFunc)> {
        if vector.is_empty() {
            return vector;
        }
        match &*self.node {
            Node::Identity => vector,
            Node::Local { space, columns, .. } => {
                let mut res = Vec::with_capacity(vector.len());
                for (key, c) in &vector {
                    let local = layout.digit(*key, *space);
                    for (row, value) in columns.row(local).entries() {
                        res.push((layout.with_digit(*key, *space, *row), c.mul_ref(value)));
                    }
                }
                merge(res)
            }
            Node::Mode { space, mode, action } => {
                let fermions = layout.spaces()[*space]
                    .kind()
                    .fermions()
                    .expect("mode operators act on fermion spaces");
                let mut res = Vec::with_capacity(vector.len());
                for (key, c) in vector {
                    let local = layout.digit(key, *space) as u64;
                    let Some((new_local, negative)) = fermions.act(local, *mode, *action) else {
                        continue;
                    };
                    let odd = *action != ModeAction::Number;
                    let negative = negative ^ (odd && layout.parity_before(key, *space));
                    let key = layout.with_digit(key, *space, new_local as usize);
                    res.push((key, if negative { -c } else { c }));
                }
                res
            }
            Node::Sum(terms) => {
                let mut res = Vec::new();
                for (c, term) in terms {
                    let image = term.apply(layout, vector.clone());
                    res.extend(image.into_iter().map(|(k, v)| (k, v * c)));
                }
                merge(res)
            }
            Node::Product(factors) => {
                factors.iter().rev().fold(vector, |acc, factor| factor.apply(layout, acc))
            }
        }
    }

    /// The image of product state `key`.
    pub fn image(&self, layout: &Layout, key: Key) -> Vec<(Key, RatFunc)> {
        self.apply(layout, vec![(key, RatFunc::one())])
    }

    /// The matrix of this operator on `basis`, or the first basis state it takes outside.
    pub fn matrix(&self, basis: &Basis) -> Result<Operator, LeavesBasis> {
        let mut triplets = Vec::new();
        for col in 0..basis.dimension() {
            for (key, value) in self.image(basis.layout(), basis.key(col)) {
                let row = basis.index_of(key).ok_or(LeavesBasis { from: col, to: key })?;
                triplets.push((row, col, value));
            }
        }
        Ok(Operator::from_triplets(basis.dimension(), basis.dimension(), triplets))
    }

    /// The eigenvalue of product state `key` when the operator is diagonal there.
    pub fn diagonal_value(&self, layout: &Layout, key: Key) -> Result<RatFunc, NotDiagonal> {
        let image = self.image(layout, key);
        match image.as_slice() {
            [] => Ok(RatFunc::zero()),
            [(k, value)] if *k == key => Ok(value.clone()),
            _ => {
                let to = image.iter().map(|(k, _)| *k).find(|k| *k != key).expect("off-diagonal");
                Err(NotDiagonal { from: key, to })
            }
        }
    }
}

/// Sorts by product state, adds equal ones and drops zeros.
fn merge(mut pairs: Vec<(Key, RatFunc)>) -> Vec<(Key, RatFunc)> {
    pairs.sort_by_key(|(k, _)| *k);
    let mut res: Vec<(Key, RatFunc)> = Vec::with_capacity(pairs.len());
    for (key, value) in pairs {
        match res.last_mut() {
            Some((last, acc)) if *last == key => *acc += &value,
            _ => res.push((key, value)),
        }
    }
    res.retain(|(_, v)| !v.is_zero());
    res
}

/// `base^n` by repeated squaring, starting from `identity`.
fn power_by_squaring<T>(identity: T, base: T, mut n: u64, mul: impl Fn(&T, &T) -> T) -> T {
    let mut acc = identity;
    let mut square = base;
    while n > 0 {
        if n & 1 == 1 {
            acc = mul(&acc, &square);
        }
        n >>= 1;
        if n > 0 {
            square = mul(&square, &square);
        }
    }
    acc
}
