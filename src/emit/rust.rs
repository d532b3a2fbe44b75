//! The Rust module of `cleave derive --rust`: one self-contained, std-only module with a function
//! per branch and per effective Hamiltonian, plus the table-driven `energy` entry point.
//! Start from [`rust`]. Exact coefficients become `f64` expressions here, once, from their
//! structure (`terms::fraction`); nothing is recomputed.

use std::collections::BTreeSet;

use crate::exact::Radicand;
use std::fmt::Write;

use num_bigint::BigInt;
use num_traits::Signed;

use super::terms::{self, Atom};
use super::{report, text};
use crate::engine::{Branch, Derivation, ModelSpace, OperatorForm};
use crate::exact::{Field, RatFunc, Rational};
use crate::model::Model;

/// Rust keywords (strict, reserved and edition-dependent), written as raw identifiers when a
/// parameter has one of these names.
const KEYWORDS: [&str; 52] = [
    "as", "async", "await", "break", "const", "continue", "crate", "dyn", "else", "enum", "extern",
    "false", "fn", "for", "if", "impl", "in", "let", "loop", "match", "mod", "move", "mut", "pub",
    "ref", "return", "self", "Self", "static", "struct", "super", "trait", "true", "type",
    "unsafe", "use", "where", "while", "abstract", "become", "box", "do", "final", "macro",
    "override", "priv", "typeof", "unsized", "virtual", "yield", "try", "gen",
];
/// Keywords that cannot be raw identifiers; these get a trailing underscore instead.
const NOT_RAW: [&str; 5] = ["crate", "self", "Self", "super", "_"];
/// Names the generated code uses itself, or that a pattern would read as something else (a
/// `const` or an enum variant in scope); a parameter with such a name gets a trailing underscore.
const RESERVED: [&str; 11] = [
    "lambda",
    "horner",
    "PARAMETERS",
    "BRANCHES",
    "ORDER",
    "QUANTITIES",
    "None",
    "Some",
    "Ok",
    "Err",
    "f64",
];

/// A parameter's name in generated code.
#[derive(Clone, Debug)]
struct Ident {
    /// As written in code (`g`, `r#type`).
    code: String,
    /// Without the raw prefix, for building `_type` when unused.
    bare: String,
}

/// The Rust module of `cleave derive --rust`.
pub(crate) fn rust(model: &Model, derivation: &Derivation, name: &str) -> String {
    let names = &derivation.parameters;
    let mut idents = param_idents(names);
    // Algebraic roots become constants, named after their place in the derivation's list.
    for r in 0..derivation.roots.len() {
        let code = format!("ROOT_{}", r + 1);
        idents.push(Ident { code: code.clone(), bare: code });
    }
    let mut body = String::new();
    let mut roots: BTreeSet<Radicand> = BTreeSet::new();
    let mut dispatch: Vec<(String, Vec<usize>)> = Vec::new();
    for (space_idx, space) in derivation.model_spaces.iter().enumerate() {
        for (branch_idx, branch) in space.branches.iter().enumerate() {
            let fn_name = format!("energy_space{}_branch{}", space_idx + 1, branch_idx + 1);
            let used = branch_function(
                &mut body,
                &fn_name,
                model,
                derivation,
                name,
                (space_idx, space),
                (branch_idx, branch),
                &idents,
                &mut roots,
            );
            dispatch.push((fn_name, used));
        }
        hamiltonian_function(
            &mut body, model, derivation, name, space_idx, space, &idents, &mut roots,
        );
        if let Some(form) = &space.operator_form {
            operator_form_functions(&mut body, derivation, space_idx, form, &idents, &mut roots);
        }
    }
    let mut quantity_dispatch = Vec::new();
    for (q, quantity) in derivation.quantities.iter().enumerate() {
        let fn_name = format!("quantity_{}", snake(&quantity.name, q));
        let doc = format!(
            "The named quantity `{}` of the model, as a series in lambda:",
            doc_safe(&quantity.name)
        );
        series_function(
            &mut body,
            &fn_name,
            &doc,
            &quantity.series,
            derivation,
            &idents,
            &mut roots,
        );
        quantity_dispatch.push(fn_name);
    }
    let mut out = String::new();
    header(&mut out, model, derivation, name);
    let quoted: Vec<String> = names.iter().map(|n| format!("{n:?}")).collect();
    let _ = writeln!(
        out,
        "/// Parameter names in the order the functions below and `params` of [`energy`] take them.\n\
         pub const PARAMETERS: [&str; {}] = [{}];\n",
        names.len(),
        quoted.join(", ")
    );
    let _ = writeln!(
        out,
        "/// The order N in lambda at which every series here is truncated.\npub const ORDER: u32 = {};\n",
        derivation.order
    );
    let _ = writeln!(
        out,
        "/// Number of branches, the valid `index` values of [`energy`] being `0..BRANCHES`.\n\
         pub const BRANCHES: usize = {};\n",
        dispatch.len()
    );
    for (r, atom) in derivation.roots.iter().enumerate() {
        let _ = writeln!(
            out,
            "/// `{}`: the exact algebraic number, rounded once to the nearest `f64`.\n\
             const ROOT_{}: f64 = {:?};\n",
            atom.name(),
            r + 1,
            atom.approximation().to_f64()
        );
    }
    for root in &roots {
        let value = root.to_f64().sqrt();
        let _ = writeln!(
            out,
            "/// `sqrt({root})`, the exact square root rounded once to the nearest `f64`.\n\
             const SQRT_{root}: f64 = {value:?};\n"
        );
    }
    out.push_str(
        "/// `c[0] + c[1] x + c[2] x^2 + ...` by Horner's rule.\n\
         fn horner(coefficients: &[f64], x: f64) -> f64 {\n    \
         coefficients.iter().rev().fold(0.0, |acc, c| acc * x + c)\n}\n\n",
    );
    energy_dispatch(&mut out, &dispatch);
    if !quantity_dispatch.is_empty() {
        quantities_dispatch(&mut out, derivation, &quantity_dispatch);
    }
    out.push_str(&body);
    out
}

/// A lowercase identifier made of a name's letters and digits (`ZZ` gives `zz`), or `q{k}` when
/// nothing is left.
fn snake(name: &str, k: usize) -> String {
    let res: String = name
        .chars()
        .map(|c| if c.is_ascii_alphanumeric() { c.to_ascii_lowercase() } else { '_' })
        .collect();
    if res.is_empty() || res.starts_with(|c: char| c.is_ascii_digit()) {
        format!("q{}_{res}", k + 1)
    } else {
        res
    }
}

/// `QUANTITIES` and the table-driven `quantity(index, lambda, params)`.
fn quantities_dispatch(out: &mut String, derivation: &Derivation, fns: &[String]) {
    let names: Vec<String> =
        derivation.quantities.iter().map(|q| format!("{:?}", q.name)).collect();
    let _ = writeln!(
        out,
        "/// The model's named quantities, the valid `index` values of [`quantity`] being their\n\
         /// positions here.\npub const QUANTITIES: [&str; {}] = [{}];\n",
        names.len(),
        names.join(", ")
    );
    out.push_str(
        "/// The named quantity `index` (see [`QUANTITIES`]) at `lambda`, with parameter values\n\
         /// `params` in the order of [`PARAMETERS`]; `f64::NAN` for an unknown index or too few\n\
         /// parameters.\n\
         pub fn quantity(index: usize, lambda: f64, params: &[f64]) -> f64 {\n    \
         if params.len() < PARAMETERS.len() {\n        return f64::NAN;\n    }\n    \
         match index {\n",
    );
    let args: Vec<String> =
        (0..derivation.parameters.len()).map(|p| format!("params[{p}]")).collect();
    for (index, fn_name) in fns.iter().enumerate() {
        let mut all = vec!["lambda".to_string()];
        all.extend(args.iter().cloned());
        let _ = writeln!(out, "        {index} => {fn_name}({}),", all.join(", "));
    }
    out.push_str("        _ => f64::NAN,\n    }\n}\n");
}

/// A function `fn_name(lambda, params...)` evaluating `series` (coefficients of `lambda^k`).
fn series_function(
    out: &mut String,
    fn_name: &str,
    doc: &str,
    series: &[RatFunc],
    derivation: &Derivation,
    idents: &[Ident],
    roots: &mut BTreeSet<Radicand>,
) {
    let names = &text::Names::for_derivation(derivation);
    let _ = writeln!(
        out,
        "\n/// {doc}\n///\n/// ```text\n/// {}\n/// ```",
        doc_safe(&text::series(series, names))
    );
    horner_function(out, fn_name, series, derivation, idents, roots, names);
}

/// `pub fn fn_name(lambda, params...) -> f64` evaluating the coefficients `series` of
/// `lambda^k` by Horner's rule; every parameter is an argument (unused ones prefixed `_`), so
/// the table-driven entry points can pass them all.
fn horner_function(
    out: &mut String,
    fn_name: &str,
    series: &[RatFunc],
    derivation: &Derivation,
    idents: &[Ident],
    roots: &mut BTreeSet<Radicand>,
    names: &text::Names,
) {
    let coefficients: Vec<String> =
        series.iter().map(|c| value_code(c, idents, roots, names).0).collect();
    let used = used_params(series.iter());
    let (args, allow) = arguments(&idents[..derivation.parameters.len()], &used);
    if allow {
        out.push_str("#[allow(non_snake_case)]\n");
    }
    let _ = writeln!(out, "pub fn {fn_name}(lambda: f64{args}) -> f64 {{");
    let _ = writeln!(out, "    horner(\n        &[");
    for c in &coefficients {
        let _ = writeln!(out, "            {c},");
    }
    out.push_str("        ],\n        lambda,\n    )\n}\n");
}

/// One function per term of a model space's operator form, giving its coefficient.
fn operator_form_functions(
    out: &mut String,
    derivation: &Derivation,
    space_idx: usize,
    form: &OperatorForm,
    idents: &[Ident],
    roots: &mut BTreeSet<Radicand>,
) {
    for term in super::operators::grouped(form) {
        let suffix: String = term
            .label
            .chars()
            .map(|c| if c.is_ascii_alphanumeric() { c.to_ascii_lowercase() } else { '_' })
            .collect::<String>()
            .split('_')
            .filter(|p| !p.is_empty())
            .collect::<Vec<_>>()
            .join("_");
        let suffix = if suffix == "1" { "identity".to_string() } else { suffix };
        let fn_name = format!("coefficient_space{}_{suffix}", space_idx + 1);
        let doc = format!(
            "The coefficient of `{}` in the effective Hamiltonian of model space {} written in {}:",
            doc_safe(&term.label),
            space_idx + 1,
            match form.target {
                crate::model::Target::Spins => "spin operators (`S^a = sigma^a/2`)",
                crate::model::Target::Qubits => "Pauli operators",
            }
        );
        series_function(out, &fn_name, &doc, &term.coefficient, derivation, idents, roots);
    }
}

fn header(out: &mut String, model: &Model, derivation: &Derivation, name: &str) {
    // Plain comments, not `//!`: the module is used as a file module or pulled in with
    // `include!` inside `mod x { ... }`, where inner doc comments do not compile.
    let _ = writeln!(
        out,
        "// Perturbation series of `{}` to order {}, generated by cleave.",
        doc_safe(name),
        derivation.order
    );
    out.push_str(
        "//
",
    );
    let _ = writeln!(
        out,
        "// The Hamiltonian is `H(lambda) = H0 + lambda V{}`; each branch energy is\n\
         // `E(lambda) = sum_k lambda^k E^(k)` with exact coefficients turned into `f64` expressions.",
        if model.perturbations().len() > 1 { " + lambda^2 V2 + ..." } else { "" }
    );
    out.push_str(
        "// Every series is truncated at order `ORDER`, so its error is of order lambda^(ORDER+1).\n",
    );
    if crate::engine::asymptotic_caution_applies(model) {
        out.push_str(
            "// With an oscillator the series is typically asymptotic rather than convergent: use\n\
             // it only where its last terms are small.\n",
        );
    }
    if derivation.model_spaces.iter().any(|s| !s.notes.is_empty()) {
        out.push_str("// Some model spaces carry notes on a cut-off space; see their functions.\n");
    }
    if !model.fixed().is_empty() {
        let values: Vec<String> =
            model.fixed().iter().map(|(n, v)| format!("`{n} = {v}`")).collect();
        let _ = writeln!(out, "// Fixed before deriving: {}.", values.join(", "));
    }
    out.push_str(
        "// Self-contained: it uses only `std`. Use it as a module file, or with\n\
         // `mod series { include!(concat!(env!(\"OUT_DIR\"), \"/series.rs\")); }` from a build script.\n\n",
    );
}

fn energy_dispatch(out: &mut String, dispatch: &[(String, Vec<usize>)]) {
    out.push_str(
        "/// The energy of branch `index` at `lambda`, with parameter values `params` in the order of\n\
         /// [`PARAMETERS`]. Branches are counted as in cleave's JSON: model spaces in order, then\n\
         /// their branches.\n\
         ///\n\
         /// Returns `f64::NAN` when `index` is not below [`BRANCHES`] or `params` holds fewer than\n\
         /// `PARAMETERS.len()` values.\n\
         pub fn energy(index: usize, lambda: f64, params: &[f64]) -> f64 {\n    \
         if params.len() < PARAMETERS.len() {\n        return f64::NAN;\n    }\n    \
         match index {\n",
    );
    for (index, (fn_name, params)) in dispatch.iter().enumerate() {
        let args: Vec<String> = params.iter().map(|p| format!("params[{p}]")).collect();
        let mut all = vec!["lambda".to_string()];
        all.extend(args);
        let _ = writeln!(out, "        {index} => {fn_name}({}),", all.join(", "));
    }
    out.push_str("        _ => f64::NAN,\n    }\n}\n");
}

/// The description of a model space shared by its functions' docs.
fn space_doc(model: &Model, space: &ModelSpace, number: usize, names: &text::Names) -> String {
    let energies: Vec<String> = space.unperturbed.iter().map(|e| text::scalar(e, names)).collect();
    let states: Vec<String> =
        space.basis.iter().map(|v| text::state(v, model.basis(), names)).collect();
    format!("model space {number} (E0 = {}; basis {})", energies.join(", "), states.join(", "))
}

/// The caution paragraph of every function's doc.
fn caution(out: &mut String, derivation: &Derivation, name: &str, space: &ModelSpace) {
    let _ = writeln!(
        out,
        "///\n/// From the model `{}`, to order {}. The series is truncated there, so the error is of\n\
         /// order lambda^{}; trust it only where its last terms are small.",
        doc_safe(name),
        derivation.order,
        derivation.order + 1
    );
    for note in &space.notes {
        let _ = writeln!(out, "///\n/// Caution: {}.", doc_safe(&report::note_text(note)));
    }
}

#[allow(clippy::too_many_arguments)]
fn branch_function(
    out: &mut String,
    fn_name: &str,
    model: &Model,
    derivation: &Derivation,
    name: &str,
    (space_idx, space): (usize, &ModelSpace),
    (branch_idx, branch): (usize, &Branch),
    idents: &[Ident],
    roots: &mut BTreeSet<Radicand>,
) -> Vec<usize> {
    // The report's names, with the unperturbed energy differences it factors over.
    let names = &text::Names::for_derivation(derivation);
    let d = space.basis.len();
    let split = match (&branch.not_split, branch.split_at) {
        (Some(ns), _) => format!("not split at order {}", ns.order),
        (None, Some(s)) => format!("splits from its siblings at order {s}"),
        (None, None) if d == 1 => "the only state of its model space".to_string(),
        (None, None) => "never splits from its siblings".to_string(),
    };
    let _ = writeln!(
        out,
        "\n/// Branch {} of {}: multiplicity {}, {split}.",
        branch_idx + 1,
        doc_safe(&space_doc(model, space, space_idx + 1, names)),
        branch.multiplicity
    );
    let _ = writeln!(
        out,
        "///\n/// ```text\n/// E(lambda) = {}\n/// ```",
        doc_safe(&text::series(&branch.energy, names))
    );
    if let Some(ns) = &branch.not_split {
        let _ = writeln!(
            out,
            "///\n/// This branch's group could not be split exactly at order {} ({}); the function\n\
             /// evaluates only the coefficients common to the group, up to order {}, so its error is\n\
             /// of order lambda^{}. The secular polynomial of the group is\n\
             /// `{} = 0`.",
            ns.order,
            doc_safe(&ns.reason),
            ns.order.saturating_sub(1),
            ns.order,
            doc_safe(&text::polynomial(&ns.characteristic, names))
        );
    }
    caution(out, derivation, name, space);
    horner_function(out, fn_name, &branch.energy, derivation, idents, roots, names);
    (0..derivation.parameters.len()).collect()
}

#[allow(clippy::too_many_arguments)]
fn hamiltonian_function(
    out: &mut String,
    model: &Model,
    derivation: &Derivation,
    name: &str,
    space_idx: usize,
    space: &ModelSpace,
    idents: &[Ident],
    roots: &mut BTreeSet<Radicand>,
) {
    // The report's names, with the unperturbed energy differences it factors over.
    let names = &text::Names::for_derivation(derivation);
    let d = space.basis.len();
    let _ = writeln!(
        out,
        "\n/// The effective Hamiltonian (Hermitian form) of {} at `lambda`, as `(re, im)` pairs:\n\
         /// `H_eff(lambda) = sum_k lambda^k H^(k)` with",
        doc_safe(&space_doc(model, space, space_idx + 1, names))
    );
    out.push_str("///\n/// ```text\n");
    for (k, matrix) in space.effective_hamiltonian.iter().enumerate() {
        let _ = writeln!(out, "/// H^({k}) =");
        for row in matrix.to_rows() {
            let cells: Vec<String> = row.iter().map(|x| text::scalar(x, names)).collect();
            let _ = writeln!(out, "///   [ {} ]", doc_safe(&cells.join(", ")));
        }
    }
    out.push_str("/// ```\n");
    if !space.normalized {
        let norms: Vec<String> = space.basis_norms.iter().map(|g| text::scalar(g, names)).collect();
        let _ = writeln!(
            out,
            "///\n/// The basis is orthogonal but not normalized (squared norms {}); the matrix is\n\
             /// written in that basis.",
            doc_safe(&norms.join(", "))
        );
    }
    caution(out, derivation, name, space);
    let mut entries: Vec<Vec<(String, String)>> = Vec::new();
    let mut all_values: Vec<&RatFunc> = Vec::new();
    let mut uses_lambda = false;
    for a in 0..d {
        let mut row = Vec::new();
        for b in 0..d {
            let mut re = Vec::new();
            let mut im = Vec::new();
            for matrix in &space.effective_hamiltonian {
                let value = matrix.get(a, b);
                all_values.push(value);
                let (r, i) = value_code(value, idents, roots, names);
                re.push(r);
                im.push(i);
            }
            let re = polynomial_code(re, &mut uses_lambda);
            let im = polynomial_code(im, &mut uses_lambda);
            row.push((re, im));
        }
        entries.push(row);
    }
    let used = used_params(all_values.into_iter());
    let (args, allow) = arguments(&idents[..derivation.parameters.len()], &used);
    if allow {
        out.push_str("#[allow(non_snake_case)]\n");
    }
    let lambda = if uses_lambda { "lambda" } else { "_lambda" };
    let _ = writeln!(
        out,
        "pub fn effective_hamiltonian_space{}({lambda}: f64{args}) -> [[(f64, f64); {d}]; {d}] {{\n    [",
        space_idx + 1
    );
    for row in &entries {
        out.push_str("        [\n");
        for (re, im) in row {
            let _ = writeln!(out, "            ({re}, {im}),");
        }
        out.push_str("        ],\n");
    }
    out.push_str("    ]\n}\n");
}

/// `horner(&[c0, c1, ...], lambda)` with trailing zero coefficients dropped, or `0.0`.
fn polynomial_code(mut coefficients: Vec<String>, uses_lambda: &mut bool) -> String {
    while coefficients.last().is_some_and(|c| c == "0.0") {
        coefficients.pop();
    }
    if coefficients.is_empty() {
        return "0.0".to_string();
    }
    *uses_lambda = true;
    format!("horner(&[{}], lambda)", coefficients.join(", "))
}

/// The parameter indices the values mention, ascending.
fn used_params<'a>(values: impl Iterator<Item = &'a RatFunc>) -> BTreeSet<usize> {
    let mut res = BTreeSet::new();
    for value in values {
        for p in terms::fraction(value).params() {
            res.insert(p.0 as usize);
        }
    }
    res
}

/// `, g: f64, _t: f64` for the parameters (unused ones prefixed by `_`), and whether a name needs
/// `#[allow(non_snake_case)]`.
fn arguments(idents: &[Ident], used: &BTreeSet<usize>) -> (String, bool) {
    let taken: BTreeSet<&str> = idents.iter().map(|i| i.bare.as_str()).collect();
    let mut chosen: Vec<String> = Vec::new();
    for (idx, ident) in idents.iter().enumerate() {
        let name = if used.contains(&idx) {
            ident.code.clone()
        } else {
            let mut candidate = format!("_{}", ident.bare);
            while taken.contains(candidate.as_str()) || chosen.contains(&candidate) {
                candidate.push('_');
            }
            candidate
        };
        chosen.push(name);
    }
    let allow = chosen.iter().any(|n| !is_snake_case(n.trim_start_matches("r#")));
    let args: String = chosen.iter().map(|n| format!(", {n}: f64")).collect();
    (args, allow)
}

/// Mirrors rustc's `non_snake_case` test: no uppercase letter and no doubled inner underscore.
fn is_snake_case(ident: &str) -> bool {
    let trimmed = ident.trim_matches('_');
    !trimmed.chars().any(char::is_uppercase) && !trimmed.contains("__")
}

/// Valid, distinct identifiers for the parameters, in declaration order.
fn param_idents(names: &[String]) -> Vec<Ident> {
    let mut res: Vec<Ident> = Vec::new();
    for name in names {
        let mut bare: String = name
            .chars()
            .map(|c| if c.is_ascii_alphanumeric() || c == '_' { c } else { '_' })
            .collect();
        if bare.is_empty() || bare.starts_with(|c: char| c.is_ascii_digit()) {
            bare.insert_str(0, "p_");
        }
        if NOT_RAW.contains(&bare.as_str())
            || RESERVED.contains(&bare.as_str())
            || is_sqrt_const(&bare)
        {
            bare.push('_');
        }
        while res.iter().any(|i| i.bare == bare) || RESERVED.contains(&bare.as_str()) {
            bare.push('_');
        }
        let code =
            if KEYWORDS.contains(&bare.as_str()) { format!("r#{bare}") } else { bare.clone() };
        res.push(Ident { code, bare });
    }
    res
}

/// Whether a name looks like one of the generated `SQRT_n` constants.
fn is_sqrt_const(name: &str) -> bool {
    name.strip_prefix("SQRT_")
        .is_some_and(|rest| !rest.is_empty() && rest.chars().all(|c| c.is_ascii_digit()))
}

/// `(re, im)` code of a value; either is `0.0` when that part vanishes.
fn value_code(
    value: &RatFunc,
    idents: &[Ident],
    roots: &mut BTreeSet<Radicand>,
    names: &text::Names,
) -> (String, String) {
    if let Some(code) = factored_code(value, idents, roots, names) {
        return (code, "0.0".to_string());
    }
    let fraction = terms::fraction(value);
    for atom in fraction.numer.iter().chain(&fraction.denom) {
        if !atom.root.is_one() {
            roots.insert(atom.root.clone());
        }
    }
    let part = |atoms: &[Atom], imaginary: bool| -> Vec<Atom> {
        atoms.iter().filter(|a| a.imaginary == imaginary).cloned().collect()
    };
    let (numer_re, numer_im) = (part(&fraction.numer, false), part(&fraction.numer, true));
    if fraction.denom.is_empty() {
        return (sum_code(&numer_re, idents), sum_code(&numer_im, idents));
    }
    let (denom_re, denom_im) = (part(&fraction.denom, false), part(&fraction.denom, true));
    if denom_im.is_empty() {
        let d = sum_code(&denom_re, idents);
        return (quotient(&numer_re, &d, idents), quotient(&numer_im, &d, idents));
    }
    // (a + ib) / (c + id) = ((ac + bd) + i(bc - ad)) / (c^2 + d^2), with the parts bound once.
    let bind = format!(
        "let (nr, ni, dr, di): (f64, f64, f64, f64) = ({}, {}, {}, {}); let norm = dr * dr + di * di;",
        sum_code(&numer_re, idents),
        sum_code(&numer_im, idents),
        sum_code(&denom_re, idents),
        sum_code(&denom_im, idents)
    );
    (
        format!("{{ {bind} (nr * dr + ni * di) / norm }}"),
        format!("{{ {bind} (ni * dr - nr * di) / norm }}"),
    )
}

/// A real value in the report's factored form, `-4.0 / 27.0 * h.powi(2) / xi` or
/// `g.powi(4) * (w + delta) / (w * (2.0 * w + delta).powi(3))`: fewer operations and better
/// rounding than the expanded denominator; `None` where the report does not factor it.
fn factored_code(
    value: &RatFunc,
    idents: &[Ident],
    roots: &mut BTreeSet<Radicand>,
    names: &text::Names,
) -> Option<String> {
    let parts = text::factor_value(value, names)?;
    if parts.radicand.is_negative() {
        return None;
    }
    let poly_code = |(p, e): &(crate::exact::Poly, u32)| -> Option<String> {
        let atoms = terms::atoms(p);
        if atoms.iter().any(|a| a.imaginary || !a.root.is_one()) {
            return None;
        }
        let code = sum_code(&atoms, idents);
        let code = if atoms.len() > 1 { format!("({code})") } else { code };
        Some(if *e == 1 { code } else { format!("{code}.powi({e})") })
    };
    let mut top: Vec<String> = Vec::new();
    if !parts.constant.is_one() || (parts.radicand.is_one() && parts.numer.is_empty()) {
        top.push(rational_literal(&parts.constant));
    }
    if !parts.radicand.is_one() {
        roots.insert(parts.radicand.abs());
        top.push(format!("SQRT_{}", parts.radicand));
    }
    for f in &parts.numer {
        top.push(poly_code(f)?);
    }
    let bottom: Vec<String> = parts.denom.iter().map(poly_code).collect::<Option<_>>()?;
    let mut code = String::new();
    if parts.negative {
        code.push('-');
    }
    // The rational literal may itself be `a / b`: keep it first so `/` binds as intended.
    code.push_str(&top.join(" * "));
    match bottom.as_slice() {
        [] => {}
        [single] if !spaced_outside_parentheses(single) => code.push_str(&format!(" / {single}")),
        _ => code.push_str(&format!(" / ({})", bottom.join(" * "))),
    }
    Some(code)
}

/// Whether `code` has a space outside parentheses (so it is not one factor).
fn spaced_outside_parentheses(code: &str) -> bool {
    let mut depth = 0i32;
    for ch in code.chars() {
        match ch {
            '(' => depth += 1,
            ')' => depth -= 1,
            ' ' if depth == 0 => return true,
            _ => {}
        }
    }
    false
}

/// `numer / denom` with the parentheses precedence needs, `0.0` for a zero numerator.
fn quotient(numer: &[Atom], denom: &str, idents: &[Ident]) -> String {
    if numer.is_empty() {
        return "0.0".to_string();
    }
    let top = sum_code(numer, idents);
    let top = if numer.len() > 1 { format!("({top})") } else { top };
    // A single factor needs no parentheses; a product or sum does, since `/` binds left.
    let simple = !denom.contains([' ', '*', '/']);
    let bottom = if simple { denom.to_string() } else { format!("({denom})") };
    format!("{top} / {bottom}")
}

/// The magnitudes of `atoms` with their signs as one `f64` expression (`i` factors dropped: the
/// caller has split real and imaginary parts).
fn sum_code(atoms: &[Atom], idents: &[Ident]) -> String {
    if atoms.is_empty() {
        return "0.0".to_string();
    }
    let mut res = String::new();
    for (idx, atom) in atoms.iter().enumerate() {
        match (idx == 0, atom.negative) {
            (true, false) => {}
            (true, true) => res.push('-'),
            (false, false) => res.push_str(" + "),
            (false, true) => res.push_str(" - "),
        }
        res.push_str(&atom_code(atom, idents));
    }
    res
}

/// `21.0 / 8.0 * SQRT_2 * g.powi(2) * t`: the rational first, so `/` binds as intended.
fn atom_code(atom: &Atom, idents: &[Ident]) -> String {
    let mut parts: Vec<String> = Vec::new();
    if !atom.magnitude.is_one() || (atom.root.is_one() && atom.factors.is_empty()) {
        parts.push(rational_literal(&atom.magnitude));
    }
    if !atom.root.is_one() {
        parts.push(format!("SQRT_{}", atom.root));
    }
    for (param, exponent) in &atom.factors {
        let ident = idents.get(param.0 as usize).map_or("f64::NAN", |i| i.code.as_str());
        if *exponent == 1 {
            parts.push(ident.to_string());
        } else {
            parts.push(format!("{ident}.powi({exponent})"));
        }
    }
    parts.join(" * ")
}

/// An exact rational as an `f64` expression: `3.0`, `-21.0 / 8.0` (one correctly rounded
/// division when both parts are exact in `f64`), else the nearest decimal literal.
fn rational_literal(value: &Rational) -> String {
    let limit = BigInt::from(1u64 << 53);
    let (numer, denom) = (value.numer(), value.denom());
    if numer.abs() <= limit && denom <= &limit {
        if value.is_integer() {
            return format!("{numer}.0");
        }
        return format!("{numer}.0 / {denom}.0");
    }
    let x = value.to_f64();
    if x.is_finite() {
        format!("{x:?}")
    } else if x.is_sign_negative() {
        "f64::NEG_INFINITY".to_string()
    } else {
        "f64::INFINITY".to_string()
    }
}

/// Keeps text from breaking out of a `///` line or a code span.
fn doc_safe(raw: &str) -> String {
    raw.replace(['\n', '\r'], " ").replace('`', "'")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keyword_parameters_become_valid_identifiers() {
        let names: Vec<String> = ["type", "fn", "self", "lambda", "g", "SQRT_2", "None"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        let codes: Vec<String> = param_idents(&names).into_iter().map(|i| i.code).collect();
        assert_eq!(codes, ["r#type", "r#fn", "self_", "lambda_", "g", "SQRT_2_", "None_"]);
    }

    #[test]
    fn snake_case_mirrors_rustc() {
        assert!(is_snake_case("w_c"));
        assert!(is_snake_case("_g"));
        assert!(!is_snake_case("Delta"));
        assert!(!is_snake_case("a__b"));
    }

    #[test]
    fn rationals_become_exact_divisions() {
        let r = Rational::ratio(-21, 8).expect("non-zero denominator");
        assert_eq!(rational_literal(&r), "-21.0 / 8.0");
        assert_eq!(rational_literal(&Rational::from_i64(3)), "3.0");
    }
}
