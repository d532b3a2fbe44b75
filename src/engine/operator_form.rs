//! The effective Hamiltonian of a model space written in spin or qubit operators
//! (`focus 0 as spins`): the model-space states are mapped one to one onto the product states of
//! spins 1/2 (or qubits), and each order of the Hermitian effective Hamiltonian is expanded in
//! products of the Pauli matrices, `H = 2^-n Σ_P tr(P H) P` (the Pauli strings are an orthogonal
//! basis of the operators on n two-level systems; common practice, e.g. Nielsen & Chuang,
//! Quantum Computation and Quantum Information (2000), §2.1.8 and §8.3.3).

use super::ModelSpace;
use crate::exact::{Field, Radical, RatFunc};
use crate::model::{Model, Target};

/// The most spins or qubits an operator form may have (the expansion has `4^n` terms).
pub const MAX_TARGETS: usize = 8;

/// One component of a spin or qubit operator: `S^x` or `X`, and so on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Component {
    /// `x`
    X,
    /// `y`
    Y,
    /// `z`
    Z,
}

/// One term: a product of components of distinct targets, with its coefficient series.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OperatorTerm {
    /// `(target index, component)` in increasing target order; empty for the identity.
    pub factors: Vec<(usize, Component)>,
    /// The coefficient of `lambda^k`, `k = 0..=N`.
    pub coefficient: Vec<RatFunc>,
}

/// A model space's effective Hamiltonian as a sum of products of spin or qubit operators.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OperatorForm {
    /// Spins (`S^a = σ^a/2`) or qubits (Pauli matrices).
    pub target: Target,
    /// The names of the spins or qubits, in order.
    pub names: Vec<String>,
    /// The non-zero terms: the identity first, then by number of factors, targets, components.
    pub terms: Vec<OperatorTerm>,
    /// For each spin or qubit product state (target 0 the highest bit, `1` meaning spin down or
    /// `|1>`), the model-space basis state it stands for.
    pub model_state: Vec<usize>,
}

/// How the states of one declared space enter the targets.
enum Role {
    /// Constant over the model space.
    Spectator,
    /// A two-level target: local state 0 is `|0>` (spin up), 1 is `|1>`.
    Qubit(usize),
    /// A fermion space whose sites are singly occupied: site `k` is target `first + k`.
    Sites { first: usize, per_site: usize },
}

/// Writes `space`'s effective Hamiltonian in `target` operators; the error says why it cannot be
/// and what to change.
pub(crate) fn operator_form(
    model: &Model,
    space: &ModelSpace,
    target: Target,
) -> Result<OperatorForm, String> {
    let basis = model.basis();
    let layout = basis.layout();
    if !space.normalized {
        return Err("the model-space states are not normalized exactly, so they cannot be mapped \
                    onto spin or qubit states; write H0 so that its levels are product states"
            .into());
    }
    let mut states = Vec::with_capacity(space.basis.len());
    for v in &space.basis {
        match v.entries() {
            [(idx, c)] if c.is_one() => states.push(basis.factors(*idx)),
            _ => {
                return Err("the model-space states are not single product states, so they \
                            cannot be mapped one to one onto spin or qubit states; write H0 so \
                            that its levels are spanned by product states"
                    .into())
            }
        }
    }
    // Which spaces carry targets.
    let mut roles = Vec::new();
    let mut names = Vec::new();
    let fermion_spaces = layout.spaces().iter().filter(|s| s.is_fermionic()).count();
    for (k, declared) in layout.spaces().iter().enumerate() {
        let varies = states.iter().any(|s| s[k] != states[0][k]);
        let fermions = declared.kind().fermions();
        let role = match (target, fermions) {
            (Target::Spins, Some(f)) if f.index_sets().len() >= 2 && varies => {
                let per_site = f.n_modes() / f.index_sets()[0].len();
                if per_site != 2 {
                    return Err(format!(
                        "the sites of `{}` have {per_site} modes each; `as spins` needs two \
                         (up, down) per site",
                        declared.name
                    ));
                }
                let first = names.len();
                for value in f.index_sets()[0].values() {
                    names.push(if fermion_spaces == 1 {
                        format!("s{value}")
                    } else {
                        format!("{}{value}", declared.name)
                    });
                }
                Role::Sites { first, per_site }
            }
            (_, Some(_)) if varies => {
                return Err(format!(
                    "the occupation of `{}` varies within the model space; `as qubits` maps \
                     two-level spaces only (use `as spins` for singly occupied sites)",
                    declared.name
                ))
            }
            (_, None) if varies => {
                if target == Target::Spins && declared.dimension() != 2 {
                    return Err(format!(
                        "`{}` ({}) varies within the model space but is not a spin 1/2; use \
                         `as qubits` for ladders",
                        declared.name,
                        declared.kind().declaration()
                    ));
                }
                names.push(declared.name.clone());
                Role::Qubit(names.len() - 1)
            }
            _ => Role::Spectator,
        };
        roles.push(role);
    }
    let n = names.len();
    if n == 0 || n > MAX_TARGETS {
        return Err(format!(
            "the model space would map onto {n} spins or qubits; cleave writes operator forms \
             for 1 to {MAX_TARGETS}"
        ));
    }
    // The target state (bit k - from the highest - is target k's |1>) of each model-space state.
    let mut images: Vec<usize> = Vec::with_capacity(states.len());
    for (a, digits) in states.iter().enumerate() {
        let mut bits = 0usize;
        for (k, role) in roles.iter().enumerate() {
            match role {
                Role::Spectator => {}
                Role::Qubit(t) => match digits[k] {
                    0 => {}
                    1 => bits |= 1 << (n - 1 - t),
                    _ => {
                        return Err(format!(
                            "the model-space state {} has `{}` above its two lowest states, \
                             which a qubit does not hold; focus on states with 0 or 1 there",
                            basis.ket_label(space_state(space, a)),
                            layout.spaces()[k].name
                        ))
                    }
                },
                Role::Sites { first, per_site } => {
                    let fermions = layout.spaces()[k].kind().fermions().expect("a fermion space");
                    let local = digits[k] as u64;
                    let n_modes = fermions.n_modes();
                    for site in 0..fermions.index_sets()[0].len() {
                        let occupied = |m: usize| local & (1u64 << (n_modes - 1 - m)) != 0;
                        let (up, dn) = (occupied(site * per_site), occupied(site * per_site + 1));
                        match (up, dn) {
                            (true, false) => {}
                            (false, true) => bits |= 1 << (n - 1 - (first + site)),
                            _ => {
                                return Err(format!(
                                    "site {} of the model-space state {} is not singly \
                                     occupied; `as spins` needs one electron on every site \
                                     (focus on the level with no double occupancy)",
                                    site + 1,
                                    basis.ket_label(space_state(space, a))
                                ))
                            }
                        }
                    }
                }
            }
        }
        images.push(bits);
    }
    let dimension = 1usize << n;
    let mut preimage = vec![usize::MAX; dimension];
    for (a, &t) in images.iter().enumerate() {
        if preimage[t] != usize::MAX {
            return Err("two model-space states map onto the same spin or qubit state, so the \
                        map is not one to one"
                .into());
        }
        preimage[t] = a;
    }
    if images.len() != dimension {
        return Err(format!(
            "the model space holds {} of the {dimension} states of its {n} spins or qubits, so \
             its operator form is not unique; keep every state of the spins or qubits (drop an \
             S_z sector, or focus on all their levels)",
            images.len()
        ));
    }
    let scale = RatFunc::from_i64(dimension as i64).inv().expect("non-zero");
    let i = RatFunc::constant(Radical::i());
    let mut terms = Vec::new();
    let n_strings = 1usize << (2 * n);
    let mut strings: Vec<Vec<u8>> = (0..n_strings)
        .map(|code| (0..n).map(|k| ((code >> (2 * (n - 1 - k))) & 3) as u8).collect())
        .collect();
    // Identity first, then by weight, then by position and component.
    strings.sort_by_key(|s| {
        let weight = s.iter().filter(|c| **c != 0).count();
        let support: Vec<(usize, u8)> =
            s.iter().enumerate().filter(|(_, c)| **c != 0).map(|(k, c)| (k, *c)).collect();
        (weight, support)
    });
    for string in strings {
        let weight = string.iter().filter(|c| **c != 0).count();
        let flip: usize = string
            .iter()
            .enumerate()
            .filter(|(_, c)| matches!(c, 1 | 2))
            .map(|(k, _)| 1 << (n - 1 - k))
            .sum();
        // Spin operators are half the Pauli matrices.
        let factor = match target {
            Target::Spins => RatFunc::from_i64(1i64 << weight) * &scale,
            Target::Qubits => scale.clone(),
        };
        let coefficient: Vec<RatFunc> = space
            .effective_hamiltonian
            .iter()
            .map(|h| {
                let mut acc = RatFunc::zero();
                for u in 0..dimension {
                    // tr(P H) = Σ_u phase_P(u) <u|H|flip_P(u)>, with P|u> = phase_P(u)|flip_P(u)>.
                    let entry = h.get(preimage[u], preimage[u ^ flip]);
                    if entry.is_zero() {
                        continue;
                    }
                    let mut phase = RatFunc::one();
                    for (k, c) in string.iter().enumerate() {
                        let bit = (u >> (n - 1 - k)) & 1;
                        match (c, bit) {
                            (2, 0) => phase *= &i,
                            (2, _) => phase *= &-i.clone(),
                            (3, 1) => phase = -phase,
                            _ => {}
                        }
                    }
                    acc += &(phase * entry);
                }
                acc * &factor
            })
            .collect();
        if coefficient.iter().all(Field::is_zero) {
            continue;
        }
        let factors = string
            .iter()
            .enumerate()
            .filter_map(|(k, c)| {
                let component = match c {
                    1 => Component::X,
                    2 => Component::Y,
                    3 => Component::Z,
                    _ => return None,
                };
                Some((k, component))
            })
            .collect();
        terms.push(OperatorTerm { factors, coefficient });
    }
    Ok(OperatorForm { target, names, terms, model_state: preimage })
}

/// The product-basis index of model-space state `a` (a single product state here).
fn space_state(space: &ModelSpace, a: usize) -> usize {
    space.basis[a].entries()[0].0
}
