//! Operator forms as the trade groups them: `dot(s1, s2)` for an isotropic (Heisenberg) pair,
//! `dot(s1, s2)*dot(s3, s4)` for the four-spin products of a ring exchange, and otherwise
//! products of components `s1.z*s2.z` (spins, `S^a = σ^a/2`) or `a.Z*b.Z` (qubits, Pauli
//! matrices). Every grouping is exact: a group is formed only when its coefficients allow it.

use std::collections::BTreeMap;

use crate::engine::{Component, OperatorForm, OperatorTerm};
use crate::exact::{Field, RatFunc};
use crate::model::Target;

/// One printed term: what it multiplies, written in cleave's syntax, and its coefficient series.
pub(crate) struct GroupedTerm {
    pub label: String,
    /// Dot products `S_i . S_j` the term multiplies.
    pub pairs: Vec<(usize, usize)>,
    /// Single components it multiplies (when not grouped into dot products).
    pub factors: Vec<(usize, Component)>,
    pub coefficient: Vec<RatFunc>,
}

/// The component's name in the JSON and in labels: `x` for spins, `X` for qubits.
pub(crate) fn component_name(target: Target, component: Component) -> &'static str {
    match (target, component) {
        (Target::Spins, Component::X) => "x",
        (Target::Spins, Component::Y) => "y",
        (Target::Spins, Component::Z) => "z",
        (Target::Qubits, Component::X) => "X",
        (Target::Qubits, Component::Y) => "Y",
        (Target::Qubits, Component::Z) => "Z",
    }
}

/// `s1.z*s2.z`, or `1` for the identity.
pub(crate) fn product_label(form: &OperatorForm, term: &OperatorTerm) -> String {
    if term.factors.is_empty() {
        return "1".into();
    }
    let parts: Vec<String> = term
        .factors
        .iter()
        .map(|(t, c)| format!("{}.{}", form.names[*t], component_name(form.target, *c)))
        .collect();
    parts.join("*")
}

const COMPONENTS: [Component; 3] = [Component::X, Component::Y, Component::Z];

/// The terms, with isotropic pairs and ring-exchange products grouped (spins only).
pub(crate) fn grouped(form: &OperatorForm) -> Vec<GroupedTerm> {
    let by_factors: BTreeMap<Vec<(usize, Component)>, &Vec<RatFunc>> =
        form.terms.iter().map(|t| (t.factors.clone(), &t.coefficient)).collect();
    let len = form.terms.first().map_or(0, |t| t.coefficient.len());
    let zero = vec![RatFunc::zero(); len];
    let get = |factors: &[(usize, Component)]| -> Vec<RatFunc> {
        by_factors.get(factors).map_or_else(|| zero.clone(), |c| (*c).clone())
    };
    let mut used: Vec<Vec<(usize, Component)>> = Vec::new();
    let mut groups: Vec<(Vec<(usize, Component)>, GroupedTerm)> = Vec::new();
    if form.target == Target::Spins {
        // Pairs: c_xx = c_yy = c_zz and no other component of the pair.
        let mut pairs: Vec<(usize, usize)> = Vec::new();
        for term in &form.terms {
            if let [(i, _), (j, _)] = term.factors.as_slice() {
                if !pairs.contains(&(*i, *j)) {
                    pairs.push((*i, *j));
                }
            }
        }
        for (i, j) in pairs {
            let c = |a: Component, b: Component| get(&[(i, a), (j, b)]);
            let xx = c(Component::X, Component::X);
            let isotropic = COMPONENTS.iter().all(|a| {
                COMPONENTS.iter().all(|b| if a == b { c(*a, *b) == xx } else { c(*a, *b) == zero })
            });
            if isotropic {
                for a in COMPONENTS {
                    used.push(vec![(i, a), (j, a)]);
                }
                let label = format!("dot({}, {})", form.names[i], form.names[j]);
                groups.push((
                    vec![(i, Component::X), (j, Component::X)],
                    GroupedTerm {
                        label,
                        pairs: vec![(i, j)],
                        factors: Vec::new(),
                        coefficient: xx,
                    },
                ));
            }
        }
        // Four spins: α (i j)(k l) + β (i k)(j l) + γ (i l)(j k) of dot products.
        let mut quads: Vec<[usize; 4]> = Vec::new();
        for term in &form.terms {
            if let [(i, _), (j, _), (k, _), (l, _)] = term.factors.as_slice() {
                if !quads.contains(&[*i, *j, *k, *l]) {
                    quads.push([*i, *j, *k, *l]);
                }
            }
        }
        for q in quads {
            let c =
                |a: [Component; 4]| get(&[(q[0], a[0]), (q[1], a[1]), (q[2], a[2]), (q[3], a[3])]);
            use Component::{X, Y};
            let alpha = c([X, X, Y, Y]);
            let beta = c([X, Y, X, Y]);
            let gamma = c([X, Y, Y, X]);
            let fits = COMPONENTS.iter().all(|&a| {
                COMPONENTS.iter().all(|&b| {
                    COMPONENTS.iter().all(|&cc| {
                        COMPONENTS.iter().all(|&d| {
                            let mut expected = zero.clone();
                            for (weight, holds) in [
                                (&alpha, a == b && cc == d),
                                (&beta, a == cc && b == d),
                                (&gamma, a == d && b == cc),
                            ] {
                                if holds {
                                    for (e, w) in expected.iter_mut().zip(weight) {
                                        *e += w;
                                    }
                                }
                            }
                            c([a, b, cc, d]) == expected
                        })
                    })
                })
            });
            if !fits {
                continue;
            }
            for a in COMPONENTS {
                for b in COMPONENTS {
                    for cc in COMPONENTS {
                        for d in COMPONENTS {
                            used.push(vec![(q[0], a), (q[1], b), (q[2], cc), (q[3], d)]);
                        }
                    }
                }
            }
            let n = |k: usize| form.names[q[k]].as_str();
            for (weight, (p, r)) in
                [(alpha, ((0, 1), (2, 3))), (beta, ((0, 2), (1, 3))), (gamma, ((0, 3), (1, 2)))]
            {
                if weight.iter().all(Field::is_zero) {
                    continue;
                }
                let label = format!("dot({}, {})*dot({}, {})", n(p.0), n(p.1), n(r.0), n(r.1));
                let key = vec![
                    (q[0], Component::X),
                    (q[1], Component::X),
                    (q[2], Component::Y),
                    (q[3], Component::Y),
                ];
                let pairs = vec![(q[p.0], q[p.1]), (q[r.0], q[r.1])];
                let term = GroupedTerm { label, pairs, factors: Vec::new(), coefficient: weight };
                groups.push((key, term));
            }
        }
    }
    // Everything else as it is, in the form's order; groups stand where their first term did.
    let mut res = Vec::new();
    let mut placed = vec![false; groups.len()];
    for term in &form.terms {
        for (g, (key, _)) in groups.iter().enumerate() {
            if !placed[g] && (used.contains(&term.factors) && key.len() == term.factors.len()) {
                let same_support = key.iter().map(|f| f.0).eq(term.factors.iter().map(|f| f.0));
                if same_support {
                    placed[g] = true;
                    let group = &groups[g].1;
                    res.push(GroupedTerm {
                        label: group.label.clone(),
                        pairs: group.pairs.clone(),
                        factors: Vec::new(),
                        coefficient: group.coefficient.clone(),
                    });
                }
            }
        }
        if !used.contains(&term.factors) {
            res.push(GroupedTerm {
                label: product_label(form, term),
                pairs: Vec::new(),
                factors: term.factors.clone(),
                coefficient: term.coefficient.clone(),
            });
        }
    }
    res
}
