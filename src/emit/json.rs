//! The JSON of `cleave levels --json` and `cleave derive --json`, as CONTRACT.md fixes it.
//! Mirror structs spell out the schema; core types never derive `Serialize`.

use std::collections::BTreeMap;

use serde::Serialize;

use super::text;
use crate::engine::Derivation;
use crate::model::{Model, Target};
use crate::spectrum::Spectrum;

#[derive(Serialize)]
struct LevelsJson {
    parameters: Vec<String>,
    #[serde(skip_serializing_if = "BTreeMap::is_empty")]
    fixed: BTreeMap<String, String>,
    dimension: usize,
    levels: Vec<LevelJson>,
}

#[derive(Serialize)]
struct LevelJson {
    energy: String,
    degeneracy: usize,
    states: Vec<String>,
}

/// The JSON of `cleave levels --json`.
pub fn levels_json(model: &Model, spectrum: &Spectrum) -> String {
    let names = text::Names::with_spectrum(model.param_names(), spectrum);
    let basis = model.basis();
    let doc = LevelsJson {
        parameters: model.param_names(),
        fixed: fixed(model),
        dimension: basis.dimension(),
        levels: spectrum
            .levels
            .iter()
            .map(|l| LevelJson {
                energy: text::scalar(&l.energy, &names),
                degeneracy: l.degeneracy(),
                states: l
                    .states
                    .iter()
                    .map(|v| text::state(&super::report::normalized(v), basis, &names))
                    .collect(),
            })
            .collect(),
    };
    serde_json::to_string_pretty(&doc).expect("plain data serializes") + "\n"
}

#[derive(Serialize)]
struct DeriveJson {
    order: u32,
    parameters: Vec<String>,
    #[serde(skip_serializing_if = "BTreeMap::is_empty")]
    fixed: BTreeMap<String, String>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    roots: Vec<RootJson>,
    model_spaces: Vec<ModelSpaceJson>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    quantities: Vec<QuantityJson>,
}

/// A named combination of branch energies.
#[derive(Serialize)]
struct QuantityJson {
    name: String,
    series: Vec<String>,
}

/// A model space's effective Hamiltonian as a sum of products of spin or qubit operators.
#[derive(Serialize)]
struct OperatorFormJson {
    target: Vec<String>,
    /// `spin` (`S^a = σ^a/2`, components `x y z`) or `pauli` (components `X Y Z`).
    operators: &'static str,
    terms: Vec<OperatorTermJson>,
}

#[derive(Serialize)]
struct OperatorTermJson {
    factors: Vec<[String; 2]>,
    coefficient: Vec<String>,
}

/// An algebraic number that values write as `root_between(P, lo, hi)`.
#[derive(Serialize)]
struct RootJson {
    name: String,
    /// Coefficients of the monic `P`, from `x^0` up.
    polynomial: Vec<String>,
    /// Which real root of `P`, counting from 1 in ascending order.
    index: usize,
    /// `lo` and `hi` of the name: the root is the only one of `P` strictly between them.
    between: [String; 2],
    approximation: f64,
}

#[derive(Serialize)]
struct ModelSpaceJson {
    unperturbed: Vec<String>,
    basis: Vec<String>,
    /// Present (and false) when the basis states are orthogonal but not normalized, because the
    /// square roots of their norms are not exact; `basis_norms` then gives the squared norms, and
    /// the effective Hamiltonian is written in that unnormalized basis.
    #[serde(skip_serializing_if = "is_true")]
    normalized: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    basis_norms: Option<Vec<String>>,
    effective_hamiltonian: Vec<Vec<Vec<String>>>,
    branches: Vec<BranchJson>,
    secular_equations: Vec<SecularJson>,
    notes: Vec<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    operator_form: Option<OperatorFormJson>,
}

#[derive(Serialize)]
struct BranchJson {
    energy: Vec<String>,
    multiplicity: usize,
    split_at: Option<u32>,
    /// The unperturbed state(s) the branch comes from: its zeroth-order state, or a basis of its
    /// group's zeroth-order space while it has not split.
    states: Vec<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    not_split: Option<NotSplitJson>,
    #[serde(skip_serializing_if = "Option::is_none")]
    state: Option<StateJson>,
}

#[derive(Serialize)]
struct NotSplitJson {
    order: u32,
    characteristic_polynomial: String,
    reason: String,
}

#[derive(Serialize)]
struct StateJson {
    normalization: &'static str,
    determined_to: u32,
    coefficients: Vec<String>,
}

#[derive(Serialize)]
struct SecularJson {
    order: u32,
    characteristic_polynomial: String,
    roots: Vec<String>,
    multiplicities: Vec<usize>,
}

fn is_true(value: &bool) -> bool {
    *value
}

/// The parameters fixed with `--set`, by name, as exact strings.
fn fixed(model: &Model) -> BTreeMap<String, String> {
    model.fixed().iter().map(|(name, value)| (name.clone(), value.to_string())).collect()
}

/// The JSON of `cleave derive --json`: the contract's fields, plus `fixed` (the values of
/// `--set`, when there are any), `roots` (the `root_between(P, lo, hi)` values
/// mention, when there are any), `secular_equations`, `notes`, and per branch its `state` and,
/// where the reduction stopped, `not_split`.
pub fn json(model: &Model, derivation: &Derivation) -> String {
    let names = text::Names::for_derivation(derivation);
    let basis = model.basis();
    let doc = DeriveJson {
        order: derivation.order,
        parameters: derivation.parameters.clone(),
        fixed: fixed(model),
        roots: derivation
            .roots
            .iter()
            .map(|r| RootJson {
                name: r.name(),
                polynomial: r.polynomial.iter().map(ToString::to_string).collect(),
                index: r.index,
                between: {
                    let (lo, hi) = r.bounds();
                    [lo.to_string(), hi.to_string()]
                },
                approximation: r.approximation().to_f64(),
            })
            .collect(),
        model_spaces: derivation
            .model_spaces
            .iter()
            .map(|space| ModelSpaceJson {
                unperturbed: space.unperturbed.iter().map(|e| text::scalar(e, &names)).collect(),
                basis: space.basis.iter().map(|v| text::state(v, basis, &names)).collect(),
                normalized: space.normalized,
                basis_norms: (!space.normalized)
                    .then(|| space.basis_norms.iter().map(|n| text::scalar(n, &names)).collect()),
                effective_hamiltonian: space
                    .effective_hamiltonian
                    .iter()
                    .map(|m| {
                        m.to_rows()
                            .iter()
                            .map(|row| row.iter().map(|x| text::scalar(x, &names)).collect())
                            .collect()
                    })
                    .collect(),
                branches: space
                    .branches
                    .iter()
                    .map(|b| BranchJson {
                        energy: b.energy.iter().map(|e| text::scalar(e, &names)).collect(),
                        multiplicity: b.multiplicity,
                        split_at: b.split_at,
                        states: b
                            .zeroth_order
                            .iter()
                            .map(|v| text::state(v, basis, &names))
                            .collect(),
                        not_split: b.not_split.as_ref().map(|ns| NotSplitJson {
                            order: ns.order,
                            characteristic_polynomial: text::polynomial(&ns.characteristic, &names),
                            reason: ns.reason.clone(),
                        }),
                        state: b.state.as_ref().map(|s| StateJson {
                            normalization: "intermediate",
                            determined_to: s.determined_to,
                            coefficients: s
                                .coefficients
                                .iter()
                                .map(|v| text::ket_sum(v, basis, &names))
                                .collect(),
                        }),
                    })
                    .collect(),
                secular_equations: space
                    .secular
                    .iter()
                    .map(|s| SecularJson {
                        order: s.order,
                        characteristic_polynomial: text::polynomial(&s.characteristic, &names),
                        roots: s.roots.iter().map(|(r, _)| text::scalar(r, &names)).collect(),
                        multiplicities: s.roots.iter().map(|(_, m)| *m).collect(),
                    })
                    .collect(),
                notes: space.notes.iter().map(super::report::note_text).collect(),
                operator_form: space.operator_form.as_ref().map(|form| OperatorFormJson {
                    target: form.names.clone(),
                    operators: match form.target {
                        Target::Spins => "spin",
                        Target::Qubits => "pauli",
                    },
                    terms: form
                        .terms
                        .iter()
                        .map(|t| OperatorTermJson {
                            factors: t
                                .factors
                                .iter()
                                .map(|(k, c)| {
                                    [
                                        form.names[*k].clone(),
                                        super::operators::component_name(form.target, *c)
                                            .to_string(),
                                    ]
                                })
                                .collect(),
                            coefficient: t
                                .coefficient
                                .iter()
                                .map(|c| text::scalar(c, &names))
                                .collect(),
                        })
                        .collect(),
                }),
            })
            .collect(),
        quantities: derivation
            .quantities
            .iter()
            .map(|q| QuantityJson {
                name: q.name.clone(),
                series: q.series.iter().map(|c| text::scalar(c, &names)).collect(),
            })
            .collect(),
    };
    serde_json::to_string_pretty(&doc).expect("plain data serializes") + "\n"
}
