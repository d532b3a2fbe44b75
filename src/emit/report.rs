//! The readable reports of `cleave levels` and `cleave derive`.

use std::fmt::Write;

use super::{text, ParamValues};
use crate::check;
use crate::engine::{Derivation, MissingState, ModelSpace, Note, OperatorForm};
use crate::exact::{Field, RatFunc, SquareRoot};
use crate::linalg::{DenseMatrix, SparseVec};
use crate::model::{Model, Target};
use crate::spectrum::Spectrum;

/// A vector scaled to unit norm when the square root of its norm is exact.
pub(crate) fn normalized(v: &SparseVec<RatFunc>) -> SparseVec<RatFunc> {
    let norm = v.conj().dot(v);
    match norm.sqrt().and_then(|r| r.inv()) {
        Some(inv) => v.scale(&inv),
        None => v.clone(),
    }
}

/// The readable text of `cleave levels`.
pub fn levels_report(model: &Model, spectrum: &Spectrum, name: &str) -> String {
    let names = text::Names::with_spectrum(model.param_names(), spectrum);
    let basis = model.basis();
    let mut out = String::new();
    let _ = writeln!(out, "Unperturbed spectrum of {name}");
    let _ = writeln!(
        out,
        "{} states, {} levels{}",
        basis.dimension(),
        spectrum.levels.len(),
        params_suffix(&names)
    );
    if !model.fixed().is_empty() {
        let _ = writeln!(out, "{}", fixed_line(model));
    }
    if !spectrum.diagonal {
        let _ = writeln!(
            out,
            "H0 is not diagonal in the product basis; states are exact eigenvectors."
        );
    }
    let _ = writeln!(out);
    for (k, level) in spectrum.levels.iter().enumerate() {
        let _ = writeln!(
            out,
            "level {}: E0 = {}   degeneracy {}",
            k + 1,
            text::scalar(&level.energy, &names),
            level.degeneracy()
        );
        for v in &level.states {
            let _ = writeln!(out, "    {}", text::state(&normalized(v), basis, &names));
        }
    }
    out
}

/// The header line that lists the values fixed with `--set`.
fn fixed_line(model: &Model) -> String {
    let values: Vec<String> =
        model.fixed().iter().map(|(name, value)| format!("{name} = {value}")).collect();
    format!("fixed: {} (--set)", values.join(", "))
}

fn params_suffix(names: &[String]) -> String {
    if names.is_empty() {
        String::new()
    } else {
        format!(", parameters {}", names.join(", "))
    }
}

/// The readable report of `cleave derive`.
pub fn report(model: &Model, derivation: &Derivation, name: &str, at: &ParamValues) -> String {
    let names = text::Names::for_derivation(derivation);
    let mut at_with_roots = at.clone();
    if !at.is_empty() {
        at_with_roots.extend(derivation.roots.iter().map(|r| (r.name(), r.approximation())));
    }
    let at = &at_with_roots;
    let mut out = String::new();
    let _ = writeln!(out, "Perturbation series of {name} to order {}", derivation.order);
    let _ = writeln!(
        out,
        "H(lambda) = H0 + lambda V{}{}; coefficients of lambda^k, exact.",
        if model.perturbations().len() > 1 { " + lambda^2 V2 + ..." } else { "" },
        params_suffix(&derivation.parameters)
    );
    if !model.fixed().is_empty() {
        let _ = writeln!(out, "{}", fixed_line(model));
    }
    if !at.is_empty() {
        let values: Vec<String> = at
            .iter()
            .filter(|(n, _)| derivation.parameters.contains(n))
            .map(|(n, v)| format!("{n} = {v}"))
            .collect();
        let _ = writeln!(out, "Numeric values in [brackets] at {}.", values.join(", "));
    }
    for (k, space) in derivation.model_spaces.iter().enumerate() {
        let _ = writeln!(out);
        model_space_report(&mut out, model, space, k + 1, &names, at, derivation.order);
    }
    if !derivation.quantities.is_empty() {
        let _ = writeln!(out);
        let _ = writeln!(out, "== Quantities");
        for quantity in &derivation.quantities {
            let _ = writeln!(out, "{} = {}", quantity.name, text::series(&quantity.series, &names));
            for (k, c) in quantity.series.iter().enumerate() {
                let value = numeric_suffix(c, &names, at);
                let _ =
                    writeln!(out, "  {}^({k}) = {}{value}", quantity.name, text::scalar(c, &names));
            }
        }
    }
    if crate::engine::asymptotic_caution_applies(model) {
        let _ = writeln!(
            out,
            "\nnote: with an oscillator or a rotor the series is typically asymptotic, not \
             convergent; use it only where its terms still decrease (cleave check shows where)."
        );
    }
    out
}

/// The operator form of a model space's effective Hamiltonian, grouped as the trade groups it.
fn operator_form_report(out: &mut String, form: &OperatorForm, names: &text::Names) {
    let (what, convention) = match form.target {
        Target::Spins => ("spins", "S^a = sigma^a/2; dot(a, b) = a.x*b.x + a.y*b.y + a.z*b.z"),
        Target::Qubits => ("qubits", "Pauli matrices X, Y, Z; |0> has Z = +1"),
    };
    let _ = writeln!(
        out,
        "effective Hamiltonian in {what} {} ({convention}), coefficient series:",
        form.names.join(", ")
    );
    for term in super::operators::grouped(form) {
        let _ = writeln!(out, "  {}: {}", term.label, text::series(&term.coefficient, names));
    }
}

fn model_space_report(
    out: &mut String,
    model: &Model,
    space: &ModelSpace,
    number: usize,
    names: &text::Names,
    at: &ParamValues,
    order: u32,
) {
    let basis = model.basis();
    let energies: Vec<String> = space.unperturbed.iter().map(|e| text::scalar(e, names)).collect();
    let d = space.basis.len();
    let _ = writeln!(
        out,
        "== Model space {number}: E0 = {} ({d} state{}{})",
        energies.join(", "),
        if d == 1 { "" } else { "s" },
        if space.unperturbed.len() > 1 { ", quasi-degenerate" } else { "" }
    );
    let _ = writeln!(out, "basis:");
    for (a, v) in space.basis.iter().enumerate() {
        let _ = writeln!(out, "  [{}] {}", a + 1, text::state(v, basis, names));
    }
    if !space.normalized {
        let _ = writeln!(
            out,
            "  (not normalized: squared norms {}; matrices below are in this basis)",
            space.basis_norms.iter().map(|g| text::scalar(g, names)).collect::<Vec<_>>().join(", ")
        );
    }
    if d > 1 {
        let _ = writeln!(out, "effective Hamiltonian (Hermitian form), coefficient of lambda^k:");
        for (k, m) in space.effective_hamiltonian.iter().enumerate() {
            matrix(out, k, m, names);
        }
    }
    if !space.secular.is_empty() {
        let _ = writeln!(out, "secular equations:");
        for s in &space.secular {
            let roots: Vec<String> = s
                .roots
                .iter()
                .map(|(r, m)| {
                    let r = text::scalar(r, names);
                    if *m > 1 {
                        format!("{r} (x{m})")
                    } else {
                        r
                    }
                })
                .collect();
            let _ = writeln!(
                out,
                "  order {}: {} = 0  ->  x = {}",
                s.order,
                text::polynomial(&s.characteristic, names),
                roots.join(", ")
            );
        }
    }
    let _ = writeln!(out, "branches:");
    for (b, branch) in space.branches.iter().enumerate() {
        let split = match branch.split_at {
            Some(s) => format!("splits at order {s}"),
            None if d == 1 => "single state".to_string(),
            None => "never splits".to_string(),
        };
        let _ = writeln!(out, "  ({}) multiplicity {}, {}", b + 1, branch.multiplicity, split);
        let states: Vec<String> =
            branch.zeroth_order.iter().map(|v| text::state(v, basis, names)).collect();
        match states.as_slice() {
            [] => {}
            [one] => {
                let _ = writeln!(out, "      from {one}");
            }
            several => {
                let _ = writeln!(out, "      from the span of {}", several.join(", "));
            }
        }
        let _ = writeln!(out, "      E = {}", text::series(&branch.energy, names));
        for (k, c) in branch.energy.iter().enumerate() {
            let value = numeric_suffix(c, names, at);
            let _ = writeln!(out, "      E^({k}) = {}{value}", text::scalar(c, names));
        }
        if let Some(ns) = &branch.not_split {
            let _ = writeln!(
                out,
                "      not split at order {}: {}; secular polynomial {} = 0. The effective \
                 Hamiltonian above still holds; the branches of this group are its eigenvalues.",
                ns.order,
                ns.reason,
                text::polynomial(&ns.characteristic, names)
            );
        }
    }
    if space.branches.iter().any(|b| b.state.is_some() || b.state_missing.is_some()) {
        let _ = writeln!(
            out,
            "states (intermediate normalization: corrections are orthogonal to psi^(0)):"
        );
        for (b, branch) in space.branches.iter().enumerate() {
            let Some(s) = &branch.state else {
                // Say why a branch has no state rather than leaving it out silently.
                let why = match branch.state_missing {
                    Some(MissingState::Extension) => {
                        "not computed: a denominator of the state vanishes at this root of P"
                    }
                    _ => "no single state: the branch's group does not split by this order",
                };
                let _ = writeln!(out, "  ({}) {why}", b + 1);
                continue;
            };
            let _ = writeln!(out, "  ({}) determined to order {}", b + 1, s.determined_to);
            for (k, v) in s.coefficients.iter().enumerate() {
                let _ = writeln!(out, "      psi^({k}) = {}", text::ket_sum(v, basis, names));
            }
        }
        if space.branches.iter().any(|b| b.state.as_ref().is_some_and(|s| s.determined_to < order))
        {
            let _ = writeln!(
                out,
                "  A branch that splits at order s has its state determined only to order N - s."
            );
        }
    }
    if let Some(form) = &space.operator_form {
        operator_form_report(out, form, names);
    }
    for note in &space.notes {
        let _ = writeln!(out, "note: {}", note_text(note));
    }
}

fn matrix(out: &mut String, k: usize, m: &DenseMatrix<RatFunc>, names: &text::Names) {
    let cells: Vec<Vec<String>> =
        m.to_rows().iter().map(|r| r.iter().map(|x| text::scalar(x, names)).collect()).collect();
    let width = cells.iter().flatten().map(String::len).max().unwrap_or(1);
    let _ = writeln!(out, "  k = {k}:");
    for row in cells {
        let padded: Vec<String> = row.iter().map(|c| format!("{c:>width$}")).collect();
        let _ = writeln!(out, "    [ {} ]", padded.join("  "));
    }
}

fn numeric_suffix(value: &RatFunc, names: &[String], at: &ParamValues) -> String {
    if at.is_empty() {
        return String::new();
    }
    match check::evaluate_named(value, names, at) {
        Some((re, im)) if im.abs() > 0.0 => format!("   [{re:.10e} + {im:.10e} i]"),
        Some((re, _)) => format!("   [{re:.10e}]"),
        None => "   [undefined at these values]".to_string(),
    }
}

/// A note as one sentence.
pub(crate) fn note_text(note: &Note) -> String {
    match note {
        Note::Truncation { space, cut, energies_from, states_from, sufficient } => {
            let mut affected = Vec::new();
            if let Some(k) = energies_from {
                affected.push(format!("the energies from order {k} on"));
            }
            if let Some(m) = states_from {
                affected.push(format!("the state corrections from order {m} on"));
            }
            format!(
                "the space {space} = {cut} is cut off and the wave operator came within reach of \
                 its top: {} may differ from those of the uncut space (those of lower order are \
                 exact); {sufficient} makes every reported coefficient exact",
                affected.join(" and ")
            )
        }
    }
}
