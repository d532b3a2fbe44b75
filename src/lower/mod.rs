//! From the syntax tree to the typed [`Model`]: resolving names, telling scalars from operators,
//! and evaluating both exactly. Start from [`lower`]; it also returns a [`SourceMap`] so that later
//! errors can point back into the text. Reads `ast` only, never pest pairs; knows no output format.

mod error;
mod eval;

use std::collections::BTreeMap;

pub use error::{LowerError, MAX_EXPONENT};

use crate::diagnostics::{At, Diagnostic, Span};
use crate::exact::{Field, RatFunc, Rational};
use crate::model::space::{Fermions, IndexValue, Ladder, Levels, Rotor, Spin};
use crate::model::{self, Basis, Key, Layout, Model, ModelError, Param, Space, MAX_DIMENSION};
use crate::syntax::{self, ast};
use eval::{Binding, Scope, Value};

/// Where the parts of a [`Model`] were written, for errors found after lowering.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SourceMap {
    /// The `param` item of each parameter, indexed like [`Model::params`].
    pub params: Vec<Span>,
    /// The `space` statement of each factor, in declaration order.
    pub spaces: Vec<Span>,
    /// The `H0 = ...` statement.
    pub h0: Span,
    /// The statement of each perturbation term (`perturbations[k]` is `V(k+1)`); `None` for a
    /// term that was left out and is zero.
    pub perturbations: Vec<Option<Span>>,
    /// Each `focus` statement, in order (as in [`Model::focus`]).
    pub focus: Vec<Span>,
    /// The `order` statement, if any.
    pub order: Option<Span>,
    /// Each `quantity` statement, with the span of each of its `E|...>` terms (in
    /// [`Model::quantities`] order).
    pub quantities: Vec<(Span, Vec<Span>)>,
}

impl SourceMap {
    /// Where to point an input problem found by the engine, which has no span of its own: the
    /// first `focus` line if there is one (the usual culprit), else the `V` statement.
    pub fn engine_input(&self) -> Span {
        self.focus
            .first()
            .copied()
            .or_else(|| self.perturbations.first().copied().flatten())
            .unwrap_or(self.h0)
    }
}

/// The most operator leaf applications per basis state that forming one operator may take.
pub const MAX_OPERATOR_COST: u64 = 1_000_000;

/// The most product states searched for the states of a sector.
pub const MAX_SECTOR_SEARCH: u128 = 1 << 22;

/// A `sector` condition: a diagonal operator and the value kept.
struct SectorCondition {
    operator: model::OperatorExpr,
    value: Rational,
    operator_span: Span,
    span: Span,
}

/// Lowers a parsed model to a checked [`Model`] and its [`SourceMap`].
pub fn lower(file: &ast::File) -> Result<(Model, SourceMap), Diagnostic> {
    check_declarations(file)?;
    let (params, param_spans) = lower_params(file);
    let param_names: Vec<String> = params.iter().map(|p| p.name.clone()).collect();
    let has_sector = file.statements.iter().any(|s| matches!(s, ast::Statement::Sector(_)));
    let declared = lower_spaces(file, &param_names, has_sector)?;
    let mut scope = Scope::new(declared.spaces.clone(), &param_names);
    for (name, binding) in declared.bindings {
        scope.bind(&name, binding);
    }
    // Terms by their order: 0 for H0, k for Vk; each with its name, operator, statement and value.
    let mut terms: BTreeMap<usize, (String, model::OperatorExpr, Span, Span)> = BTreeMap::new();
    let mut focus_lines: Vec<&ast::FocusDecl> = Vec::new();
    let mut sectors: Vec<SectorCondition> = Vec::new();
    let mut quantity_decls: Vec<(&ast::QuantityDecl, Vec<(ast::StateKet, RatFunc)>)> = Vec::new();
    let mut order = None;
    let mut order_span = None;
    for statement in &file.statements {
        match statement {
            ast::Statement::Param(_) | ast::Statement::Space(_) => {}
            ast::Statement::Let(decl) => {
                let value = scope.eval(&decl.value)?;
                scope.bind(&decl.name.name, Binding::Value(value));
            }
            ast::Statement::Term(def) => {
                let term = term_index(&def.name.name)
                    .ok_or_else(|| LowerError::UnknownTerm { name: def.name.name.clone() })
                    .at(def.name.span)
                    .map_err(|d| {
                        d.with_hint(format!("write `let {} = ...` to name a value", def.name.name))
                    })?;
                let value = scope.eval(&def.value)?;
                let operator = scope
                    .to_operator(value.clone())
                    .ok_or(LowerError::BadIndex)
                    .at(def.value.span)?;
                if terms.contains_key(&term) {
                    // `V` and `V1` are the same term.
                    return Err(LowerError::DeclaredTwice { name: def.name.name.clone() })
                        .at(def.name.span);
                }
                terms.insert(term, (def.name.name.clone(), operator, def.span, def.value.span));
                scope.bind(&def.name.name, Binding::Value(value));
            }
            ast::Statement::Focus(decl) => focus_lines.push(decl),
            ast::Statement::Quantity(decl) => {
                let terms = scope.eval_quantity(&decl.value)?;
                quantity_decls.push((decl, terms));
            }
            ast::Statement::Sector(decl) => {
                for item in &decl.items {
                    let operator = match scope.eval(&item.operator)? {
                        Value::Operator(operator) => operator,
                        _ => {
                            return Err(LowerError::Expected {
                                what: "a sector needs an operator, like `sum(i in 1..N: c[i].n)`",
                            })
                            .at(item.operator.span)
                        }
                    };
                    let value = scope.eval(&item.value)?;
                    let value = scope
                        .as_rational(&value)
                        .ok_or(LowerError::SectorNotRational)
                        .at(item.value.span)?;
                    sectors.push(SectorCondition {
                        operator,
                        value,
                        operator_span: item.operator.span,
                        span: item.span,
                    });
                }
            }
            ast::Statement::Order(decl) => {
                let value = scope.eval(&decl.order)?;
                let rational = scope.as_rational(&value);
                let n = match rational.as_ref().map(|r| (r.is_integer() && !r.is_negative(), r)) {
                    Some((true, r)) => r
                        .to_i64()
                        .and_then(|n| u32::try_from(n).ok())
                        .filter(|&n| n <= model::MAX_ORDER)
                        .ok_or(LowerError::OrderTooLarge),
                    _ => Err(LowerError::BadOrder),
                }
                .at(decl.order.span)?;
                if order.is_some() {
                    return Err(LowerError::DeclaredTwice { name: "order".to_string() })
                        .at(decl.span);
                }
                order = Some(n);
                order_span = Some(decl.span);
            }
        }
    }
    let end = Span::new(file.span.end, file.span.end);
    let (_, h0_expr, h0_span, h0_value_span) =
        terms.remove(&0).ok_or(LowerError::MissingH0).at(end)?;
    let n_perturbations = terms.keys().next_back().copied().unwrap_or(0);
    if !terms.contains_key(&1) {
        let diagnostic = Err::<(), _>(LowerError::MissingV).at(end).expect_err("an error");
        return Err(diagnostic.with_hint("add a line `V = ...`; it enters at first order"));
    }
    let basis = if sectors.is_empty() {
        Basis::new(declared.spaces.clone()).expect("dimension checked by lower_spaces")
    } else {
        sector_basis(&declared.spaces, &sectors)?
    };
    let materialize = |name: &str, operator: &model::OperatorExpr, span: Span| {
        operator.matrix(&basis).map_err(|leaves| {
            let layout = basis.layout();
            Diagnostic::new(
                LowerError::SectorBroken {
                    term: name.to_string(),
                    from: basis.ket_label(leaves.from),
                    to: layout.ket(leaves.to),
                }
                .to_string(),
                span,
            )
        })
    };
    let h0 = materialize("H0", &h0_expr, h0_value_span)?;
    let mut names = vec!["H0".to_string()];
    let mut spans = vec![h0_span];
    let mut perturbations = Vec::new();
    let mut perturbation_spans = Vec::new();
    for k in 1..=n_perturbations {
        match terms.remove(&k) {
            Some((name, operator, span, value_span)) => {
                perturbations.push(materialize(&name, &operator, value_span)?);
                names.push(name);
                spans.push(span);
                perturbation_spans.push(Some(span));
            }
            None => {
                names.push(format!("V{k}"));
                spans.push(end);
                perturbations.push(model::Operator::zeros(basis.dimension(), basis.dimension()));
                perturbation_spans.push(None);
            }
        }
    }
    let (focus, focus_spans) = lower_focus(&scope, &focus_lines, &basis, &h0)?;
    let mut targets = Vec::new();
    for decl in &focus_lines {
        targets.push(match decl.target.as_ref().map(|t| t.name.as_str()) {
            Some("spins") => Some(model::Target::Spins),
            Some("qubits") => Some(model::Target::Qubits),
            _ => None,
        });
    }
    let mut quantities = Vec::new();
    let mut quantity_spans = Vec::new();
    for (decl, terms) in quantity_decls {
        if quantities.iter().any(|q: &model::Quantity| q.name == decl.name.name) {
            return Err(LowerError::DeclaredTwice { name: decl.name.name.clone() })
                .at(decl.name.span);
        }
        let mut resolved = Vec::new();
        let mut spans = Vec::new();
        for (ket, weight) in terms {
            resolved.push((resolve_state(&ket, &basis)?, weight));
            spans.push(ket.span);
        }
        quantities.push(model::Quantity { name: decl.name.name.clone(), terms: resolved });
        quantity_spans.push((decl.span, spans));
    }
    let h0_for_errors = h0.clone();
    let perturbations_for_errors = perturbations.clone();
    let error_basis = basis.clone();
    let model = Model::new(params, basis, h0, perturbations, focus, order).map_err(|err| {
        let operator = |term: usize| {
            if term == 0 {
                &h0_for_errors
            } else {
                &perturbations_for_errors[term - 1]
            }
        };
        match err {
            ModelError::NotHermitian { term, row, col } => {
                let err = not_hermitian(
                    &error_basis,
                    &names[term],
                    operator(term),
                    row,
                    col,
                    &param_names,
                );
                Diagnostic::new(err.to_string(), value_span(file, spans[term]))
            }
            ModelError::WrongDimension { term } => {
                Diagnostic::new(format!("{} has the wrong size", names[term]), spans[term])
            }
            ModelError::MissingPerturbation => {
                Diagnostic::new(LowerError::MissingV.to_string(), end)
            }
        }
    })?;
    let model = model.with_targets(targets).with_quantities(quantities);
    let source_map = SourceMap {
        params: param_spans,
        spaces: declared.spans,
        h0: h0_span,
        perturbations: perturbation_spans,
        focus: focus_spans,
        order: order_span,
        quantities: quantity_spans,
    };
    Ok((model, source_map))
}

/// The product states where every sector operator takes its value.
fn sector_basis(spaces: &[Space], sectors: &[SectorCondition]) -> Result<Basis, Diagnostic> {
    let first_span = sectors[0].span;
    let layout = Layout::new(spaces.to_vec())
        .filter(|l| l.product_dimension() <= MAX_SECTOR_SEARCH)
        .ok_or(LowerError::ProductTooLarge)
        .at(first_span)?;
    let mut kept: Vec<Key> = (0..layout.product_dimension()).collect();
    for condition in sectors {
        let mut values: Vec<Rational> = Vec::new();
        let mut next = Vec::new();
        for &key in &kept {
            let value = condition.operator.diagonal_value(&layout, key).map_err(|off| {
                Diagnostic::new(
                    LowerError::SectorNotDiagonal {
                        from: layout.ket(off.from),
                        to: layout.ket(off.to),
                    }
                    .to_string(),
                    condition.operator_span,
                )
            })?;
            let value = value
                .as_constant()
                .and_then(|c| c.as_rational())
                .ok_or(LowerError::SectorNotRational)
                .at(condition.operator_span)?;
            if value == condition.value {
                next.push(key);
            } else if values.len() < 64 && !values.contains(&value) {
                values.push(value);
            }
        }
        if next.is_empty() {
            values.sort_by(|a, b| a.as_big().cmp(b.as_big()));
            let values = values.iter().map(ToString::to_string).collect();
            return Err(LowerError::EmptySector { values }).at(condition.span);
        }
        kept = next;
    }
    if kept.len() > MAX_DIMENSION {
        return Err(LowerError::TooManyStates)
            .at(sectors[sectors.len() - 1].span)
            .map_err(|d| d.with_hint(format!("the sector keeps {} states", kept.len())));
    }
    Ok(Basis::sector(layout, kept).expect("keys come from the layout"))
}

/// The `focus` lines as sets of H0 energies: an energy as written, or the energy of the level
/// holding a named state.
fn lower_focus(
    scope: &Scope,
    lines: &[&ast::FocusDecl],
    basis: &Basis,
    h0: &model::Operator,
) -> Result<(Vec<Vec<RatFunc>>, Vec<Span>), Diagnostic> {
    let mut focus: Vec<Vec<RatFunc>> = Vec::new();
    let mut spans = Vec::new();
    for decl in lines {
        let mut energies = Vec::new();
        for item in &decl.items {
            let energy = match item {
                ast::FocusItem::Energy(expr) => match scope.eval(expr)? {
                    Value::Scalar(value) => value,
                    _ => {
                        return Err(LowerError::Expected {
                            what: "a focus energy must be a scalar, not an operator",
                        })
                        .at(expr.span)
                    }
                },
                ast::FocusItem::State(ket) => state_energy(ket, basis, h0)?,
            };
            if !energies.contains(&energy) {
                energies.push(energy);
            }
        }
        let same = |line: &Vec<RatFunc>| {
            line.len() == energies.len() && energies.iter().all(|e| line.contains(e))
        };
        if focus.iter().any(same) {
            return Err(LowerError::FocusRepeated).at(decl.span);
        }
        focus.push(energies);
        spans.push(decl.span);
    }
    Ok((focus, spans))
}

/// The H0 energy of the level holding the state `ket`.
fn state_energy(
    ket: &ast::StateKet,
    basis: &Basis,
    h0: &model::Operator,
) -> Result<RatFunc, Diagnostic> {
    let idx = resolve_state(ket, basis)?;
    let row = h0.row(idx);
    let diagonal_only = row.entries().iter().all(|(col, _)| *col == idx)
        && (0..basis.dimension()).all(|r| r == idx || h0.get(r, idx).is_zero());
    if !diagonal_only {
        return Err(LowerError::NotAnEigenstate { ket: ket_text(ket) })
            .at(ket.span)
            .map_err(|d| d.with_hint("name its level by its H0 energy instead"));
    }
    Ok(h0.get(idx, idx))
}

fn ket_text(ket: &ast::StateKet) -> String {
    format!("|{}>", ket.fields.iter().map(|(text, _)| text.as_str()).collect::<Vec<_>>().join(", "))
}

/// The basis index of the product state `ket`.
fn resolve_state(ket: &ast::StateKet, basis: &Basis) -> Result<usize, Diagnostic> {
    let written = format!(
        "|{}>",
        ket.fields.iter().map(|(text, _)| text.as_str()).collect::<Vec<_>>().join(", ")
    );
    let layout = basis.layout();
    let n_fields: usize = layout.spaces().iter().map(|s| s.kind().n_fields()).sum();
    if ket.fields.len() != n_fields {
        let spaces: Vec<String> = layout
            .spaces()
            .iter()
            .map(|s| format!("{} for `{}`", s.kind().n_fields(), s.name))
            .collect();
        return Err(LowerError::UnknownState {
            ket: written,
            why: format!(
                "a state has {n_fields} fields here ({}), this ket has {}",
                spaces.join(", "),
                ket.fields.len()
            ),
        })
        .at(ket.span);
    }
    let mut digits = Vec::new();
    let mut fields = ket.fields.iter();
    for space in layout.spaces() {
        let mine: Vec<&(String, Span)> = fields.by_ref().take(space.kind().n_fields()).collect();
        let texts: Vec<&str> = mine.iter().map(|(t, _)| t.as_str()).collect();
        let span = mine.iter().fold(mine[0].1, |acc, (_, s)| acc.to(*s));
        let local = space
            .kind()
            .find_state(&texts)
            .ok_or_else(|| LowerError::UnknownState {
                ket: written.clone(),
                why: format!(
                    "`{}` is not a state of `{}` ({})",
                    texts.join(", "),
                    space.name,
                    space.kind().declaration()
                ),
            })
            .at(span)?;
        digits.push(local);
    }
    basis
        .index_of(layout.key_of(&digits))
        .ok_or(LowerError::StateOutsideSector { ket: written.clone() })
        .at(ket.span)
}

/// The span of the value of the term statement at `statement`, so that a Hermiticity error
/// underlines the operator rather than the name.
fn value_span(file: &ast::File, statement: Span) -> Span {
    file.statements
        .iter()
        .find_map(|s| match s {
            ast::Statement::Term(def) if def.span == statement => Some(def.value.span),
            _ => None,
        })
        .unwrap_or(statement)
}

/// `H0` is term 0; `V` and `V1` are term 1; `Vk` is term k.
fn term_index(name: &str) -> Option<usize> {
    match name {
        "H0" => Some(0),
        "V" => Some(1),
        _ => {
            let digits = name.strip_prefix('V')?;
            if digits.starts_with('0') {
                return None;
            }
            digits.parse::<usize>().ok().filter(|k| *k >= 1 && *k <= 64)
        }
    }
}

fn not_hermitian(
    basis: &Basis,
    term: &str,
    operator: &model::Operator,
    row: usize,
    col: usize,
    param_names: &[String],
) -> LowerError {
    let symbols = crate::exact::Symbols { names: param_names };
    let label = |idx: usize| {
        let ket = basis.ket_label(idx);
        ket.trim_start_matches('|').trim_end_matches('>').to_string()
    };
    // Report the entry that is present, so the message never reads `0 but conj(0)`.
    let (row, col) = if operator.get(row, col).is_zero() { (col, row) } else { (row, col) };
    LowerError::NotHermitian {
        term: term.to_string(),
        entry: format!("<{}|{term}|{}>", label(row), label(col)),
        value: operator.get(row, col).display(symbols).to_string(),
        mirror: format!("<{}|{term}|{}>", label(col), label(row)),
        mirror_conj: operator.get(col, row).conj().display(symbols).to_string(),
    }
}

/// Every declared name once, in source order; the second declaration is the one reported.
fn check_declarations(file: &ast::File) -> Result<(), Diagnostic> {
    let mut seen: BTreeMap<String, Span> = BTreeMap::new();
    let mut declare = |ident: &ast::Ident| -> Result<(), Diagnostic> {
        if ident.name == "i" {
            return Err(LowerError::Reserved { name: ident.name.clone() })
                .at(ident.span)
                .map_err(|d| d.with_hint("`i` is the imaginary unit"));
        }
        if seen.insert(ident.name.clone(), ident.span).is_some() {
            return Err(LowerError::DeclaredTwice { name: ident.name.clone() }).at(ident.span);
        }
        Ok(())
    };
    for statement in &file.statements {
        match statement {
            ast::Statement::Param(decl) => {
                for item in &decl.items {
                    // The outputs write the series in `lambda` and secular equations in `x`;
                    // a parameter of either name would read as them.
                    let meaning = match item.name.name.as_str() {
                        "lambda" => Some("`lambda` is the expansion parameter of the series"),
                        "x" => Some("`x` is the variable of the secular equations"),
                        _ => None,
                    };
                    if let Some(meaning) = meaning {
                        return Err(LowerError::Reserved { name: item.name.name.clone() })
                            .at(item.name.span)
                            .map_err(|d| d.with_hint(format!("{meaning}; choose another name")));
                    }
                    declare(&item.name)?;
                }
            }
            ast::Statement::Space(decl) => declare(&decl.name)?,
            ast::Statement::Let(decl) => declare(&decl.name)?,
            ast::Statement::Term(def) => {
                // `V` and `V1` name one term; the later one is caught when terms are collected.
                declare(&def.name)?
            }
            ast::Statement::Quantity(decl) => declare(&decl.name)?,
            ast::Statement::Focus(_) | ast::Statement::Order(_) | ast::Statement::Sector(_) => {}
        }
    }
    Ok(())
}

fn lower_params(file: &ast::File) -> (Vec<Param>, Vec<Span>) {
    let mut params = Vec::new();
    let mut spans = Vec::new();
    for statement in &file.statements {
        if let ast::Statement::Param(decl) = statement {
            for item in &decl.items {
                params.push(Param { name: item.name.name.clone(), positive: item.positive });
                spans.push(item.span);
            }
        }
    }
    (params, spans)
}

/// The declared spaces (a family expanded into its members) with their statements and the names
/// they bind.
struct Declared {
    spaces: Vec<Space>,
    spans: Vec<Span>,
    bindings: Vec<(String, Binding)>,
}

/// The declared spaces, checking their arguments and that their product stays within
/// [`MAX_DIMENSION`] (reported at the space that crosses it) unless a sector will cut it down.
fn lower_spaces(
    file: &ast::File,
    param_names: &[String],
    has_sector: bool,
) -> Result<Declared, Diagnostic> {
    let scalars = Scope::new(Vec::new(), param_names);
    let mut declared = Declared { spaces: Vec::new(), spans: Vec::new(), bindings: Vec::new() };
    let mut dimension: u128 = 1;
    let limit = if has_sector { MAX_SECTOR_SEARCH } else { MAX_DIMENSION as u128 };
    let whole = |expr: &ast::Expr, err: LowerError| -> Result<usize, Diagnostic> {
        let value = scalars.eval(expr)?;
        let n = scalars
            .as_rational(&value)
            .filter(|r| r.is_integer() && !r.is_negative())
            .ok_or(err)
            .at(expr.span)?;
        Ok(n.to_i64().and_then(|n| usize::try_from(n).ok()).unwrap_or(usize::MAX))
    };
    for statement in &file.statements {
        let ast::Statement::Space(decl) = statement else { continue };
        let kind_span = decl.kind.span();
        let kind: Box<dyn Fn(&str) -> Space> = match &decl.kind {
            ast::SpaceKind::Oscillator { n_states, .. } => {
                let n = whole(n_states, LowerError::BadOscillator)?;
                if n == 0 {
                    return Err(LowerError::BadOscillator).at(n_states.span);
                }
                let n = n.min(MAX_DIMENSION + 1);
                Box::new(move |name| Space::new(name, Ladder::oscillator(n)))
            }
            ast::SpaceKind::Ladder { n_states, .. } => {
                let n = whole(n_states, LowerError::BadLadder)?;
                if n == 0 {
                    return Err(LowerError::BadLadder).at(n_states.span);
                }
                let n = n.min(MAX_DIMENSION + 1);
                Box::new(move |name| Space::new(name, Ladder::physical(n)))
            }
            ast::SpaceKind::Rotor { j_max, .. } => {
                let j = whole(j_max, LowerError::BadRotor).map_err(|d| {
                    d.with_hint("write the highest J as a whole number: `rotor(4)`")
                })?;
                if j > 150 {
                    return Err(LowerError::TooManyStates).at(j_max.span);
                }
                Box::new(move |name| Space::new(name, Rotor { j_max: j }))
            }
            ast::SpaceKind::Spin { j, .. } => {
                let value = scalars.eval(j)?;
                let twice_j = scalars
                    .as_rational(&value)
                    .map(|r| r * Rational::from_i64(2))
                    .filter(|r| r.is_integer() && r.is_positive())
                    .ok_or(LowerError::BadSpin)
                    .at(j.span)
                    .map_err(|d| d.with_hint("write j as a whole number or a half: `spin(1/2)`, `spin(1)`, `spin(3/2)`"))?;
                let twice_j =
                    twice_j.to_i64().and_then(|n| u32::try_from(n).ok()).unwrap_or(u32::MAX);
                let twice_j = twice_j.min(MAX_DIMENSION as u32);
                Box::new(move |name| Space::new(name, Spin { twice_j }))
            }
            ast::SpaceKind::Levels { labels, .. } => {
                let mut names: Vec<String> = Vec::new();
                for label in labels {
                    if names.contains(&label.name) {
                        return Err(LowerError::DuplicateLevel { label: label.name.clone() })
                            .at(label.span);
                    }
                    names.push(label.name.clone());
                }
                Box::new(move |name| Space::new(name, Levels { labels: names.clone() }))
            }
            ast::SpaceKind::Fermions { index_sets, span } => {
                let sets = index_sets
                    .iter()
                    .map(|set| scalars.eval_index_set(set, false))
                    .collect::<Result<Vec<_>, _>>()?;
                let fermions = Fermions::new(sets).ok_or(LowerError::BadFermions).at(*span)?;
                Box::new(move |name| Space::new(name, fermions.clone()))
            }
        };
        let members: Vec<(String, Vec<IndexValue>)> = match &decl.family {
            None => vec![(decl.name.name.clone(), Vec::new())],
            Some(sets) => {
                let sets = sets
                    .iter()
                    .map(|set| scalars.eval_index_set(set, false))
                    .collect::<Result<Vec<_>, _>>()?;
                let mut combos: Vec<Vec<IndexValue>> = vec![Vec::new()];
                for set in &sets {
                    combos = combos
                        .into_iter()
                        .flat_map(|prefix| {
                            set.values().into_iter().map(move |v| {
                                let mut c = prefix.clone();
                                c.push(v);
                                c
                            })
                        })
                        .collect();
                    if combos.len() > 64 {
                        return Err(LowerError::TooManyStates).at(decl.span);
                    }
                }
                let mut bound = BTreeMap::new();
                let first_idx = declared.spaces.len();
                let named: Vec<(String, Vec<IndexValue>)> = combos
                    .into_iter()
                    .map(|c| {
                        let index: Vec<String> = c.iter().map(ToString::to_string).collect();
                        (format!("{}[{}]", decl.name.name, index.join(",")), c)
                    })
                    .collect();
                for (k, (_, index)) in named.iter().enumerate() {
                    bound.insert(index.clone(), first_idx + k);
                }
                declared
                    .bindings
                    .push((decl.name.name.clone(), Binding::Family { sets, members: bound }));
                named
            }
        };
        for (name, _) in &members {
            let space = kind(name);
            dimension = dimension.saturating_mul(space.dimension() as u128);
            if dimension > limit {
                let err = Err::<(), _>(if has_sector {
                    LowerError::ProductTooLarge
                } else {
                    LowerError::TooManyStates
                })
                .at(kind_span)
                .expect_err("an error");
                return Err(if has_sector {
                    err
                } else {
                    err.with_hint("keep fewer states, or a `sector` of conserved quantities")
                });
            }
            if decl.family.is_none() {
                declared.bindings.push((name.clone(), Binding::Space(declared.spaces.len())));
            }
            declared.spaces.push(space);
            declared.spans.push(decl.span);
        }
    }
    Ok(declared)
}

/// Parses and evaluates one scalar expression in which the names `params` stand for
/// `RatFunc::param(ParamId(k))`, as in a value printed by cleave and read back.
pub fn eval_scalar(text: &str, params: &[String]) -> Result<RatFunc, Diagnostic> {
    let expr = syntax::parse_expr(text)?;
    let scope = Scope::new(Vec::new(), params);
    match scope.eval(&expr)? {
        Value::Scalar(value) => Ok(value),
        _ => Err(LowerError::Expected { what: "expected a scalar" }).at(expr.span),
    }
}

/// Parses a rational number written as a scalar expression (`1/8`, `0.125`, `-3`, `2^-3`), as
/// in `--at g=1/8`.
pub fn parse_rational(text: &str) -> Result<Rational, Diagnostic> {
    let value = eval_scalar(text, &[])?;
    value
        .as_constant()
        .and_then(|c| c.as_rational())
        .ok_or(LowerError::Expected { what: "expected a rational number" })
        .at(Span::new(0, text.len()))
}
