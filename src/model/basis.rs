//! The states a model works on: product states of the declared spaces, either all of them or
//! the ones a `sector` keeps. Start from [`Basis`].

use super::space::{LabelField, Space};
use super::{Operator, MAX_DIMENSION};

/// A product state of the declared spaces as one number: the factors' local indices in mixed
/// radix, the first space's index varying slowest.
pub type Key = u128;

/// The product of the declared spaces, before any sector is chosen: how a [`Key`] is made of
/// local indices.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Layout {
    spaces: Vec<Space>,
    strides: Vec<Key>,
    product: Key,
}

impl Layout {
    /// The layout of `spaces`; `None` when the product has more states than a [`Key`] holds.
    pub fn new(spaces: Vec<Space>) -> Option<Layout> {
        let mut product: Key = 1;
        for space in &spaces {
            product = product.checked_mul(space.dimension() as Key)?;
        }
        let mut strides = vec![1; spaces.len()];
        for k in (0..spaces.len().saturating_sub(1)).rev() {
            strides[k] = strides[k + 1] * spaces[k + 1].dimension() as Key;
        }
        Some(Layout { spaces, strides, product })
    }
    /// The declared spaces in order.
    pub fn spaces(&self) -> &[Space] {
        &self.spaces
    }
    /// Number of product states.
    pub fn product_dimension(&self) -> Key {
        self.product
    }
    /// The local index of factor `space_idx` in `key`.
    pub fn digit(&self, key: Key, space_idx: usize) -> usize {
        ((key / self.strides[space_idx]) % self.spaces[space_idx].dimension() as Key) as usize
    }
    /// `key` with the local index of factor `space_idx` replaced by `local`.
    pub fn with_digit(&self, key: Key, space_idx: usize, local: usize) -> Key {
        let old = self.digit(key, space_idx) as Key;
        key - old * self.strides[space_idx] + local as Key * self.strides[space_idx]
    }
    /// The local indices of `key`.
    pub fn digits(&self, key: Key) -> Vec<usize> {
        (0..self.spaces.len()).map(|k| self.digit(key, k)).collect()
    }
    /// The key of a product state given by its local indices.
    pub fn key_of(&self, digits: &[usize]) -> Key {
        digits.iter().zip(&self.strides).map(|(d, s)| *d as Key * s).sum()
    }
    /// Whether an odd fermion operator on factor `space_idx` picks up a minus sign from the
    /// occupation of the fermion spaces before it (Jordan–Wigner across spaces).
    pub fn parity_before(&self, key: Key, space_idx: usize) -> bool {
        self.spaces[..space_idx]
            .iter()
            .enumerate()
            .filter(|(_, space)| space.is_fermionic())
            .fold(false, |acc, (k, _)| acc ^ (self.digit(key, k).count_ones() % 2 == 1))
    }
    /// The label fields of every factor of `key`.
    pub fn fields(&self, key: Key) -> Vec<Vec<LabelField>> {
        self.spaces.iter().enumerate().map(|(k, s)| s.kind().label(self.digit(key, k))).collect()
    }
    /// The ket `|a, b, c>` of `key`.
    pub fn ket(&self, key: Key) -> String {
        let fields: Vec<String> =
            self.fields(key).iter().flatten().map(ToString::to_string).collect();
        format!("|{}>", fields.join(", "))
    }
}

/// The states a model works on: every product state, or the sorted subset a sector keeps.
/// State `idx` of the basis is the product state [`Basis::key`]`(idx)`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Basis {
    layout: Layout,
    /// `None`: all product states, the index being the key.
    states: Option<Vec<Key>>,
}

impl Basis {
    /// Every product state of `spaces`; `None` when there are more than [`MAX_DIMENSION`].
    pub fn new(spaces: Vec<Space>) -> Option<Basis> {
        let layout = Layout::new(spaces)?;
        if layout.product > MAX_DIMENSION as Key {
            return None;
        }
        Some(Basis { layout, states: None })
    }
    /// The product states `keys` of `layout` (sorted here); `None` when there are more than
    /// [`MAX_DIMENSION`] or a key lies outside the product.
    pub fn sector(layout: Layout, mut keys: Vec<Key>) -> Option<Basis> {
        keys.sort_unstable();
        keys.dedup();
        if keys.len() > MAX_DIMENSION || keys.last().is_some_and(|k| *k >= layout.product) {
            return None;
        }
        Some(Basis { layout, states: Some(keys) })
    }
    /// The product layout.
    pub fn layout(&self) -> &Layout {
        &self.layout
    }
    /// The declared spaces in order.
    pub fn spaces(&self) -> &[Space] {
        &self.layout.spaces
    }
    /// Number of states.
    pub fn dimension(&self) -> usize {
        match &self.states {
            Some(keys) => keys.len(),
            None => self.layout.product as usize,
        }
    }
    /// Whether a sector keeps only some of the product states.
    pub fn is_sector(&self) -> bool {
        self.states.is_some()
    }
    /// The product state of basis state `state_idx`.
    pub fn key(&self, state_idx: usize) -> Key {
        match &self.states {
            Some(keys) => keys[state_idx],
            None => state_idx as Key,
        }
    }
    /// The basis index of product state `key`, if the basis has it.
    pub fn index_of(&self, key: Key) -> Option<usize> {
        match &self.states {
            Some(keys) => keys.binary_search(&key).ok(),
            None => (key < self.layout.product).then_some(key as usize),
        }
    }
    /// The factor indices of basis state `state_idx`.
    pub fn factors(&self, state_idx: usize) -> Vec<usize> {
        self.layout.digits(self.key(state_idx))
    }
    /// The label fields of each factor of basis state `state_idx`.
    pub fn fields(&self, state_idx: usize) -> Vec<Vec<LabelField>> {
        self.layout.fields(self.key(state_idx))
    }
    /// The ket label of basis state `state_idx`: `|a, b, c>`.
    pub fn ket_label(&self, state_idx: usize) -> String {
        self.layout.ket(self.key(state_idx))
    }
    /// The identity on the basis.
    pub fn identity(&self) -> Operator {
        Operator::identity(self.dimension())
    }
}
