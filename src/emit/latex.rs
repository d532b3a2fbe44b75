//! The LaTeX of `cleave derive --latex`: per model space a booktabs table of branches, the
//! effective Hamiltonian by order, the secular polynomials and each branch's series.
//! Start from [`latex`]. Values are typeset from their structure (`terms::fraction`), never from
//! their text form; only the packages amsmath and booktabs are needed.

use std::fmt::Write;

use super::terms::{self, Atom, Fraction};
use super::text;
use super::{report, LatexOptions};
use crate::check;
use crate::engine::{Branch, Derivation, ModelSpace, Note, OperatorForm, SecularEquation};
use crate::exact::{Field, RatFunc, Rational};
use crate::linalg::SparseVec;
use crate::model::{Basis, LabelField, Model, Target};
use num_traits::One;

/// Width, in rough character units, of a displayed line before it breaks; about the text width
/// of an article page at 10pt, with room for an equation number.
const LINE_BUDGET: usize = 56;
/// Width of a table (in `\small`) before it is transposed or split.
const TABLE_BUDGET: usize = 72;
/// Width of a table cell beyond which the value moves out of the table into the series.
const CELL_LIMIT: usize = 28;
/// Width of a fraction that is still set whole inside a series rather than as `1/D (...)`.
const FRACTION_LIMIT: usize = 24;

/// Greek letters that LaTeX names by a lowercase macro.
const GREEK: [&str; 26] = [
    "alpha",
    "beta",
    "gamma",
    "delta",
    "epsilon",
    "varepsilon",
    "zeta",
    "eta",
    "theta",
    "vartheta",
    "iota",
    "kappa",
    "lambda",
    "mu",
    "nu",
    "xi",
    "pi",
    "rho",
    "sigma",
    "tau",
    "upsilon",
    "phi",
    "varphi",
    "chi",
    "psi",
    "omega",
];
/// Capital Greek letters that LaTeX has macros for (the others look like Latin capitals).
const GREEK_CAPITAL: [&str; 11] =
    ["Gamma", "Delta", "Theta", "Lambda", "Xi", "Pi", "Sigma", "Upsilon", "Phi", "Psi", "Omega"];

/// A piece of math with an estimate of its printed width.
#[derive(Clone, Debug, Default)]
struct Tex {
    text: String,
    width: usize,
}

impl Tex {
    fn new(text: impl Into<String>, width: usize) -> Tex {
        Tex { text: text.into(), width }
    }

    fn push(&mut self, other: &Tex) {
        self.text.push_str(&other.text);
        self.width += other.width;
    }

    fn push_str(&mut self, text: &str, width: usize) {
        self.text.push_str(text);
        self.width += width;
    }
}

/// The LaTeX of `cleave derive --latex`: a fragment to `\input`, or with `options.standalone` a
/// complete document.
pub(crate) fn latex(
    model: &Model,
    derivation: &Derivation,
    name: &str,
    options: &LatexOptions,
) -> String {
    let names = &latex_names(derivation);
    let mut out = String::new();
    // Numeric values of the algebraic roots join the parameter values, under their LaTeX names.
    let mut with_roots = options.clone();
    if !with_roots.at.is_empty() {
        let root_names = &names[derivation.parameters.len()..];
        for (name, atom) in root_names.iter().zip(&derivation.roots) {
            with_roots.at.push((name.clone(), atom.approximation()));
        }
    }
    let plain_options = options;
    let options = &with_roots;
    if options.standalone {
        out.push_str("\\documentclass{article}\n\\usepackage{amsmath}\n\\usepackage{booktabs}\n");
        out.push_str("\\begin{document}\n");
        let _ = writeln!(
            out,
            "\\section*{{Perturbation series of \\texttt{{{}}}}}",
            file_name(short_name(name))
        );
    } else {
        let _ = writeln!(
            out,
            "% Perturbation series of {}, written by cleave.",
            name.replace(['\n', '\r'], " ")
        );
        out.push_str("% Needs \\usepackage{amsmath} and \\usepackage{booktabs}.\n");
    }
    out.push_str(&introduction(model, derivation, name, plain_options));
    let factoring = text::Names::with_spectrum(names.clone(), &derivation.spectrum);
    let context = |idx: usize, space| SpaceContext {
        model,
        space,
        number: idx + 1,
        names,
        factoring: &factoring,
        n_params: derivation.parameters.len(),
        roots: &derivation.roots,
        order: derivation.order,
        name,
        options,
    };
    for (idx, space) in derivation.model_spaces.iter().enumerate() {
        out.push('\n');
        model_space(&mut out, &context(idx, space));
    }
    // Quantities typeset with the first model space's context (its names and factoring, which
    // every model space shares).
    if let Some(first) = derivation.model_spaces.first() {
        if !derivation.quantities.is_empty() {
            quantities(&mut out, derivation, &context(0, first));
        }
    }
    if options.standalone {
        out.push_str("\\end{document}\n");
    }
    out
}

/// Symbol names for typesetting: the parameters, then `rho_r` for the `r`-th algebraic root
/// (typeset `\rho_{r}`), whose definitions the introduction gives.
fn latex_names(derivation: &Derivation) -> Vec<String> {
    let mut names = derivation.parameters.clone();
    names.extend((1..=derivation.roots.len()).map(|r| format!("rho_{r}")));
    names
}

/// The convention sentence that opens the output.
fn introduction(
    model: &Model,
    derivation: &Derivation,
    name: &str,
    options: &LatexOptions,
) -> String {
    let names = &latex_names(derivation);
    let mut out = String::new();
    let _ = write!(
        out,
        "{{\\sloppy Exact perturbation series of \\texttt{{{}}} to order $N = {}$ for $H(\\lambda) = H_0 + \\lambda V{}$. \
         Branch energies are $E(\\lambda) = \\sum_{{k=0}}^{{N}} \\lambda^k E^{{(k)}}$; tables and matrices give \
         the coefficients of $\\lambda^k$.",
        file_name(name),
        derivation.order,
        if model.perturbations().len() > 1 { " + \\lambda^2 V_2 + \\dots" } else { "" }
    );
    let n_params = derivation.parameters.len();
    if n_params > 0 {
        let symbols: Vec<String> =
            names[..n_params].iter().map(|n| format!("${}$", symbol(n).text)).collect();
        let _ = write!(out, " Parameters: {}.", symbols.join(", "));
    }
    if !model.fixed().is_empty() {
        let values: Vec<String> =
            model.fixed().iter().map(|(n, v)| format!("${} = {v}$", symbol(n).text)).collect();
        let _ = write!(out, " Fixed before deriving: {}.", values.join(", "));
    }

    if !options.at.is_empty() {
        let _ = write!(out, " Numeric values are given at {}.", at_text(&options.at, names));
    }
    if crate::engine::asymptotic_caution_applies(model) {
        out.push_str(
            " The series are truncated at order $N$; with an oscillator they are typically \
             asymptotic rather than convergent, so use them only where their terms still \
             decrease.",
        );
    }
    out.push_str("\\par}\n");
    out
}

/// A rational in math mode: `-\frac{3}{2}`, `2`.
fn rational_tex(value: &Rational) -> String {
    let no_names: Vec<String> = Vec::new();
    inline_value(&terms::fraction(&RatFunc::from_rational(value)), &no_names).text
}

/// `x^3 - x^2 - 2 x + 1` for rational coefficients, highest power first.
fn polynomial_tex(coeffs: &[RatFunc]) -> String {
    let no_names: Vec<String> = Vec::new();
    let mut res = String::new();
    for (k, c) in coeffs.iter().enumerate().rev() {
        if c.is_zero() {
            continue;
        }
        let text = inline_value(&terms::fraction(c), &no_names).text;
        let (sign, magnitude) = match text.strip_prefix('-') {
            Some(rest) => ("-", rest.trim().to_string()),
            None => ("+", text),
        };
        if res.is_empty() {
            if sign == "-" {
                res.push('-');
            }
        } else {
            res.push_str(if sign == "-" { " - " } else { " + " });
        }
        let power = match k {
            0 => String::new(),
            1 => "x".into(),
            _ => format!("x^{{{k}}}"),
        };
        match (power.is_empty(), magnitude.as_str()) {
            (true, m) => res.push_str(m),
            (false, "1") => res.push_str(&power),
            (false, m) => res.push_str(&format!("{m} {power}")),
        }
    }
    res
}

/// `$g = \frac{1}{10}$, $t = 2$` for the `--at` values.
fn at_text(at: &super::ParamValues, names: &[String]) -> String {
    let values: Vec<String> = at
        .iter()
        .map(|(n, v)| {
            let value = RatFunc::from_rational(v);
            format!("${} = {}$", symbol(n).text, inline_value(&terms::fraction(&value), names).text)
        })
        .collect();
    values.join(", ")
}

/// Everything the parts of one model space's output read.
struct SpaceContext<'a> {
    model: &'a Model,
    space: &'a ModelSpace,
    number: usize,
    names: &'a [String],
    /// The same names with the energy differences that values are factored over.
    factoring: &'a text::Names,
    /// Number of model parameters; symbols from here on are the algebraic `roots`.
    n_params: usize,
    /// The algebraic numbers of the derivation.
    roots: &'a [crate::engine::RootAtom],
    order: u32,
    name: &'a str,
    options: &'a LatexOptions,
}

fn model_space(out: &mut String, ctx: &SpaceContext<'_>) {
    let space = ctx.space;
    let basis = ctx.model.basis();
    let d = space.basis.len();
    let energies: Vec<String> = space.unperturbed.iter().map(|e| value_tex(e, ctx).text).collect();
    let _ = writeln!(out, "\\paragraph{{Model space {}.}}", ctx.number);
    let _ = write!(
        out,
        "{{\\sloppy Unperturbed energ{} $E_0 = {}$; {d} state{}{}. Basis: ",
        if energies.len() > 1 { "ies" } else { "y" },
        energies.join(",\\ "),
        if d == 1 { "" } else { "s" },
        if space.unperturbed.len() > 1 { ", quasi-degenerate" } else { "" }
    );
    let kets: Vec<String> = space
        .basis
        .iter()
        .enumerate()
        .map(|(a, v)| {
            let state = state(v, basis, ctx.names).text;
            if d == 1 {
                format!("${state}$")
            } else {
                format!("$e_{{{}}} = {state}$", a + 1)
            }
        })
        .collect();
    let _ = write!(out, "{}.", kets.join(", "));
    if !space.normalized {
        let norms: Vec<String> =
            space.basis_norms.iter().map(|g| format!("${}$", value_tex(g, ctx).text)).collect();
        let _ = write!(
            out,
            " These states are not normalized (squared norms {}); the matrices below are written \
             in this basis.",
            norms.join(", ")
        );
    }
    // Sloppy spacing (the group opened above) lets a long list of kets break between them.
    out.push_str("\\par}\n");
    branch_table(out, ctx);
    if d > 1 {
        effective_hamiltonian(out, ctx);
    }
    for secular in &space.secular {
        secular_equation(out, secular, ctx.names);
    }
    out.push_str("\nThe branch series:\n");
    for (b, branch) in space.branches.iter().enumerate() {
        branch_series(out, b + 1, branch, ctx);
    }
    if space.branches.iter().any(|b| b.state.is_some()) {
        out.push_str(
            "\nThe states in intermediate normalization (each correction is orthogonal to \
             $\\psi^{(0)}$), to the order each is determined:\n",
        );
        for (b, branch) in space.branches.iter().enumerate() {
            let Some(state) = &branch.state else { continue };
            for (k, vector) in state.coefficients.iter().enumerate() {
                let lhs = Tex::new(format!("\\psi_{{{}}}^{{({k})}} = ", b + 1), 8);
                display(out, &lhs, &state_pieces(vector, ctx), None);
            }
        }
    }
    if let Some(form) = &space.operator_form {
        operator_form(out, form, ctx);
    }
    for note in &space.notes {
        let _ = writeln!(out, "\n\\noindent\\emph{{Note.}} {}", note_latex(note));
    }
}

/// A note as a sentence in text mode.
fn note_latex(note: &Note) -> String {
    match note {
        Note::Truncation { .. } => {
            let sentence = report::note_text(note);
            let mut chars = sentence.chars();
            let capitalized = match chars.next() {
                Some(first) => first.to_uppercase().chain(chars).collect(),
                None => String::new(),
            };
            format!("{}.", escape_text(&capitalized))
        }
    }
}

/// One table cell: the exact value (or a mark when too long), with the number beside it.
fn cell(value: &RatFunc, ctx: &SpaceContext<'_>, too_long: &mut bool) -> Tex {
    let exact = value_tex(value, ctx);
    let mut res = if exact.width > CELL_LIMIT {
        *too_long = true;
        Tex::new("\\ast", 1)
    } else {
        exact
    };
    if !ctx.options.at.is_empty() && !value.is_zero() {
        let number = numeric(value, ctx.names, &ctx.options.at);
        res.push_str(" \\approx ", 2);
        res.push(&number);
    }
    res
}

/// A number from `check::evaluate_named`, with six significant digits.
fn numeric(value: &RatFunc, names: &[String], at: &super::ParamValues) -> Tex {
    match check::evaluate_named(value, names, at) {
        Some((re, im)) if im != 0.0 => {
            let sign = if im < 0.0 { " - " } else { " + " };
            let (re, im) = (float(re), float(im.abs()));
            Tex::new(format!("{}{sign}{}\\,i", re.text, im.text), re.width + im.width + 4)
        }
        Some((re, _)) => float(re),
        None => Tex::new("\\text{undefined}", 9),
    }
}

/// `1.23457`, `-0.0012`, `6.02214 \times 10^{23}`: six significant digits.
fn float(x: f64) -> Tex {
    if x == 0.0 {
        return Tex::new("0", 1);
    }
    if !x.is_finite() {
        return Tex::new("\\text{overflow}", 8);
    }
    let scientific = format!("{x:.5e}");
    let (mantissa, exponent) = scientific.split_once('e').unwrap_or((&scientific, "0"));
    let exponent: i32 = exponent.parse().unwrap_or(0);
    if (-3..5).contains(&exponent) {
        let decimals = (5 - exponent) as usize;
        let fixed = format!("{x:.decimals$}");
        let trimmed = if fixed.contains('.') {
            fixed.trim_end_matches('0').trim_end_matches('.')
        } else {
            &fixed
        };
        return Tex::new(trimmed.to_string(), trimmed.len());
    }
    let mantissa = mantissa.trim_end_matches('0').trim_end_matches('.');
    Tex::new(format!("{mantissa} \\times 10^{{{exponent}}}"), mantissa.len() + 5)
}

fn split_text(branch: &Branch, d: usize) -> String {
    match (&branch.not_split, branch.split_at) {
        (Some(ns), _) => format!("not split at {}", ns.order),
        (None, Some(s)) => s.to_string(),
        (None, None) if d == 1 => "---".to_string(),
        (None, None) => "never".to_string(),
    }
}

fn branch_table(out: &mut String, ctx: &SpaceContext<'_>) {
    let space = ctx.space;
    let d = space.basis.len();
    let n_orders = ctx.order as usize + 1;
    let mut too_long = false;
    // cells[b][k]: branch b, order k; `None` where a branch that could not be split stops.
    let cells: Vec<Vec<Option<Tex>>> = space
        .branches
        .iter()
        .map(|branch| {
            (0..n_orders)
                .map(|k| branch.energy.get(k).map(|value| cell(value, ctx, &mut too_long)))
                .collect()
        })
        .collect();
    let splits: Vec<String> = space.branches.iter().map(|b| split_text(b, d)).collect();
    let order_widths: Vec<usize> = (0..n_orders)
        .map(|k| {
            cells.iter().map(|row| row[k].as_ref().map_or(3, |c| c.width)).max().unwrap_or(3).max(5)
        })
        .collect();
    let normal_width = 3 + order_widths.iter().map(|w| w + 2).sum::<usize>() + 8 + 12;
    let energies: Vec<String> = space.unperturbed.iter().map(|e| value_tex(e, ctx).text).collect();
    let mut caption = format!(
        "Energy branches of model space~{} of \\texttt{{{}}} ($E_0 = {}$) to order $N = {}$: \
         coefficients $E^{{(k)}}$ of $\\lambda^k$, multiplicity at order $N$, and the order at which \
         each branch splits from its siblings.",
        ctx.number,
        file_name(short_name(ctx.name)),
        energies.join(",\\ "),
        ctx.order
    );
    if !ctx.options.at.is_empty() {
        let _ = write!(
            caption,
            " Numbers after $\\approx$ are at {}.",
            at_text(&ctx.options.at, ctx.names)
        );
    }
    // Not a float: the table stays with its section, and a minipage keeps it on one page.
    out.push_str(
        "\n\\par\\medskip\\noindent\\begin{minipage}{\\linewidth}\n\\centering\n\\small\n",
    );
    let _ = writeln!(out, "\\refstepcounter{{table}}Table~\\thetable: {caption}\\par\\medskip");
    if normal_width <= TABLE_BUDGET {
        let _ = writeln!(out, "\\begin{{tabular}}{{@{{}}c{}cc@{{}}}}", "l".repeat(n_orders));
        out.push_str("\\toprule\nbranch");
        for k in 0..n_orders {
            let _ = write!(out, " & $E^{{({k})}}$");
        }
        out.push_str(" & multiplicity & split at \\\\\n\\midrule\n");
        for (b, row) in cells.iter().enumerate() {
            let _ = write!(out, "{}", b + 1);
            for value in row {
                match value {
                    Some(tex) => {
                        let _ = write!(out, " & ${}$", tex.text);
                    }
                    None => out.push_str(" & ---"),
                }
            }
            let _ = writeln!(out, " & {} & {} \\\\", space.branches[b].multiplicity, splits[b]);
        }
        out.push_str("\\bottomrule\n\\end{tabular}\n");
    } else {
        // Orders as rows, branches as columns, in as many blocks as the width needs.
        let label_width = 12;
        let branch_widths: Vec<usize> = cells
            .iter()
            .map(|row| {
                row.iter().map(|c| c.as_ref().map_or(3, |t| t.width)).max().unwrap_or(3).max(12)
            })
            .collect();
        let mut blocks: Vec<Vec<usize>> = Vec::new();
        let mut width = label_width;
        for (b, w) in branch_widths.iter().enumerate() {
            match blocks.last_mut() {
                Some(block) if width + w + 2 <= TABLE_BUDGET => {
                    block.push(b);
                    width += w + 2;
                }
                _ => {
                    blocks.push(vec![b]);
                    width = label_width + w + 2;
                }
            }
        }
        for (idx, block) in blocks.iter().enumerate() {
            if idx > 0 {
                out.push_str("\n\\medskip\n");
            }
            let _ = writeln!(out, "\\begin{{tabular}}{{@{{}}l{}@{{}}}}", "l".repeat(block.len()));
            out.push_str("\\toprule\n");
            for &b in block {
                let _ = write!(out, " & branch {}", b + 1);
            }
            out.push_str(" \\\\\n\\midrule\n");
            for k in 0..n_orders {
                let _ = write!(out, "$E^{{({k})}}$");
                for row in block.iter().map(|&b| &cells[b]) {
                    match &row[k] {
                        Some(tex) => {
                            let _ = write!(out, " & ${}$", tex.text);
                        }
                        None => out.push_str(" & ---"),
                    }
                }
                out.push_str(" \\\\\n");
            }
            out.push_str("\\midrule\nmultiplicity");
            for &b in block {
                let _ = write!(out, " & {}", space.branches[b].multiplicity);
            }
            out.push_str(" \\\\\nsplit at");
            for &b in block {
                let _ = write!(out, " & {}", splits[b]);
            }
            out.push_str(" \\\\\n\\bottomrule\n\\end{tabular}\n");
        }
    }
    let mut remarks: Vec<String> = Vec::new();
    if too_long {
        remarks.push(
            "Entries $\\ast$ are too long for the table; they appear in the branch series below."
                .to_string(),
        );
    }
    // The algebraic numbers this table uses, defined where the reader meets them.
    let n_params = ctx.n_params;
    let mut used: Vec<usize> = space
        .branches
        .iter()
        .flat_map(|b| &b.energy)
        .flat_map(|c| c.params())
        .filter(|p| p.0 as usize >= n_params)
        .map(|p| p.0 as usize - n_params)
        .collect();
    used.sort_unstable();
    used.dedup();
    for r in used {
        let atom = &ctx.roots[r];
        let poly: Vec<RatFunc> = atom.polynomial.iter().map(RatFunc::from_rational).collect();
        let (lo, hi) = atom.bounds();
        remarks.push(format!(
            "${}$ is the real root of ${} = 0$ between ${}$ and ${}$ ($\\approx {:.10}$).",
            symbol(&ctx.names[n_params + r]).text,
            polynomial_tex(&poly),
            rational_tex(&lo),
            rational_tex(&hi),
            atom.approximation().to_f64()
        ));
    }
    if space.branches.iter().any(|b| b.not_split.is_some()) {
        remarks.push(
            "A branch marked ``not split'' belongs to a group whose secular polynomial has no exact \
             roots; --- marks the orders that are therefore unknown."
                .to_string(),
        );
    }
    if !remarks.is_empty() {
        let _ = writeln!(out, "\n\\smallskip\n\\footnotesize {}", remarks.join(" "));
    }
    out.push_str("\\end{minipage}\\par\\medskip\n");
}

fn effective_hamiltonian(out: &mut String, ctx: &SpaceContext<'_>) {
    let d = ctx.space.basis.len();
    out.push_str(
        "\nThe effective Hamiltonian (Hermitian form) in the basis above, order by order: \
         $H^{(k)}_{\\mathrm{eff}}$ is the coefficient of $\\lambda^k$.\n",
    );
    for (k, matrix) in ctx.space.effective_hamiltonian.iter().enumerate() {
        let lhs = Tex::new(format!("H^{{({k})}}_{{\\mathrm{{eff}}}} = "), 8);
        if matrix.is_zero() {
            let _ = writeln!(out, "\\begin{{equation*}}\n{}0\n\\end{{equation*}}", lhs.text);
            continue;
        }
        let cells: Vec<Vec<Tex>> = matrix
            .to_rows()
            .iter()
            .map(|r| r.iter().map(|x| value_tex(x, ctx)).collect())
            .collect();
        let col_widths: Vec<usize> =
            (0..d).map(|c| cells.iter().map(|r| r[c].width).max().unwrap_or(1)).collect();
        let width = lhs.width + col_widths.iter().map(|w| w + 2).sum::<usize>() + 2;
        if width <= LINE_BUDGET + 8 {
            if d > 10 {
                // amsmath's matrices hold 10 columns unless told otherwise.
                let _ = writeln!(out, "\\setcounter{{MaxMatrixCols}}{{{d}}}");
            }
            let _ = writeln!(out, "\\begin{{equation*}}\n{}\\begin{{bmatrix}}", lhs.text);
            let rows: Vec<String> = cells
                .iter()
                .map(|row| row.iter().map(|c| c.text.as_str()).collect::<Vec<_>>().join(" & "))
                .collect();
            let _ = writeln!(out, "{}", rows.join(" \\\\\n"));
            out.push_str("\\end{bmatrix}\n\\end{equation*}\n");
        } else {
            let _ = writeln!(
                out,
                "Too wide for a matrix, so the non-zero entries of $H^{{({k})}}_{{\\mathrm{{eff}}}}$ \
                 on and above the diagonal (the rest follow by Hermiticity):"
            );
            for a in 0..d {
                for b in a..d {
                    let value = matrix.get(a, b);
                    if value.is_zero() {
                        continue;
                    }
                    let lhs = Tex::new(
                        format!(
                            "\\bigl(H^{{({k})}}_{{\\mathrm{{eff}}}}\\bigr)_{{{},{}}} = ",
                            a + 1,
                            b + 1
                        ),
                        12,
                    );
                    let pieces = series_pieces(&[terms::fraction(value)], "", false, ctx.names);
                    display(out, &lhs, &pieces, None);
                }
            }
        }
    }
}

fn secular_equation(out: &mut String, secular: &SecularEquation, names: &[String]) {
    let _ = writeln!(
        out,
        "\nSecular equation at order {} (characteristic polynomial of the matrix split there):",
        secular.order
    );
    let coeffs: Vec<Fraction> = secular.characteristic.iter().map(terms::fraction).collect();
    let pieces = series_pieces(&coeffs, "x", true, names);
    display(out, &Tex::new("", 0), &pieces, Some(&Tex::new(" = 0", 2)));
    let roots: Vec<Tex> = secular
        .roots
        .iter()
        .enumerate()
        .map(|(idx, (root, multiplicity))| {
            let mut tex = Tex::new(if idx == 0 { "" } else { ",\\quad " }, 2);
            tex.push(&scalar(root, names));
            if *multiplicity > 1 {
                tex.push_str(&format!("\\ (\\times {multiplicity})"), 4);
            }
            tex
        })
        .collect();
    out.push_str("with roots\n");
    display(out, &Tex::new("x = ", 3), &roots, None);
}

fn branch_series(out: &mut String, number: usize, branch: &Branch, ctx: &SpaceContext<'_>) {
    let coeffs: Vec<Fraction> = branch.energy.iter().map(terms::fraction).collect();
    // A coefficient with a non-trivial denominator reads better factored.
    let factored: Vec<Option<FactoredTex>> =
        branch.energy.iter().map(|c| factored_form(c, ctx)).collect();
    let mut pieces = series_pieces_with(&coeffs, &factored, "\\lambda", false, ctx.names);

    if pieces.is_empty() {
        pieces.push(Tex::new("0", 1));
    }
    let next = branch.energy.len();
    pieces.push(Tex::new(format!(" + O(\\lambda^{{{next}}})"), 8));
    let lhs = Tex::new(format!("E_{{{number}}}(\\lambda) = "), 7);
    display(out, &lhs, &pieces, None);
    let basis = ctx.model.basis();
    let from: Vec<String> = branch
        .zeroth_order
        .iter()
        .map(|v| format!("${}$", state(v, basis, ctx.names).text))
        .collect();
    match from.as_slice() {
        [] => {}
        // Sloppy spacing lets a long sum of kets break between its terms.
        [one] => {
            let _ = writeln!(out, "{{\\sloppy Branch {number} comes from {one}.\\par}}");
        }
        several => {
            let _ = writeln!(
                out,
                "{{\\sloppy Branch {number} comes from the span of {}.\\par}}",
                several.join(", ")
            );
        }
    }
    if let Some(ns) = &branch.not_split {
        let _ = writeln!(
            out,
            "Branch {number} could not be split at order {} ({}): the coefficients above are common \
             to its group, whose secular polynomial is",
            ns.order,
            escape_text(&ns.reason)
        );
        let coeffs: Vec<Fraction> = ns.characteristic.iter().map(terms::fraction).collect();
        let pieces = series_pieces(&coeffs, "x", true, ctx.names);
        display(out, &Tex::new("", 0), &pieces, Some(&Tex::new(" = 0", 2)));
        out.push_str("The effective Hamiltonian still holds; its eigenvalues are the branches.\n");
    }
}

/// A coefficient series `c_0 + c_1 λ + ...` as display pieces, factored where that reads better.
fn coefficient_pieces(coeffs: &[RatFunc], ctx: &SpaceContext<'_>) -> Vec<Tex> {
    let fractions: Vec<Fraction> = coeffs.iter().map(terms::fraction).collect();
    let factored: Vec<Option<FactoredTex>> = coeffs.iter().map(|c| factored_form(c, ctx)).collect();
    let mut pieces = series_pieces_with(&fractions, &factored, "\\lambda", false, ctx.names);
    if pieces.is_empty() {
        pieces.push(Tex::new("0", 1));
    }
    pieces.push(Tex::new(format!(" + O(\\lambda^{{{}}})", coeffs.len()), 8));
    pieces
}

/// The named quantities, one display each.
fn quantities(out: &mut String, derivation: &Derivation, ctx: &SpaceContext<'_>) {
    out.push_str(
        "\n\\paragraph{Quantities.}\nCombinations of branch energies named in the model:\n",
    );
    for quantity in &derivation.quantities {
        let lhs_name = symbol(&quantity.name);
        let lhs = Tex::new(format!("{}(\\lambda) = ", lhs_name.text), lhs_name.width + 4);
        display(out, &lhs, &coefficient_pieces(&quantity.series, ctx), None);
    }
}

/// The target's name as a subscript: `s1` gives `1`, other names stay as written.
fn target_subscript(name: &str) -> String {
    match name.strip_prefix('s') {
        Some(rest) if !rest.is_empty() && rest.chars().all(|c| c.is_ascii_digit()) => {
            rest.to_string()
        }
        _ => format!("\\mathrm{{{}}}", escape_math(name)),
    }
}

/// The effective Hamiltonian in spin or Pauli operators: one display per grouped term.
fn operator_form(out: &mut String, form: &OperatorForm, ctx: &SpaceContext<'_>) {
    let (what, convention) = match form.target {
        Target::Spins => ("spin operators", "$\\mathbf{S} = \\boldsymbol{\\sigma}/2$"),
        Target::Qubits => ("Pauli operators", "$Z\\lvert 0\\rangle = \\lvert 0\\rangle$"),
    };
    let _ = writeln!(
        out,
        "\nThe effective Hamiltonian in {what} ({convention}) is $\\sum_t c_t(\\lambda)\\, O_t$ with"
    );
    for term in super::operators::grouped(form) {
        let operator = operator_tex(form, &term);
        let lhs = Tex::new(format!("{}:\\quad ", operator.text), operator.width + 2);
        display(out, &lhs, &coefficient_pieces(&term.coefficient, ctx), None);
    }
}

/// `\mathbf{S}_{1}\cdot\mathbf{S}_{2}`, `S^{z}_{1} S^{z}_{2}`, `Z_{a} Z_{b}` or `1`.
fn operator_tex(form: &OperatorForm, term: &super::operators::GroupedTerm) -> Tex {
    let spin = |k: usize| format!("\\mathbf{{S}}_{{{}}}", target_subscript(&form.names[k]));
    let mut parts: Vec<String> = Vec::new();
    for (i, j) in &term.pairs {
        parts.push(format!("({}\\cdot {})", spin(*i), spin(*j)));
    }
    for (k, c) in &term.factors {
        let component = super::operators::component_name(form.target, *c);
        parts.push(match form.target {
            Target::Spins => {
                format!("S^{{{component}}}_{{{}}}", target_subscript(&form.names[*k]))
            }
            Target::Qubits => format!("{component}_{{{}}}", target_subscript(&form.names[*k])),
        });
    }
    if parts.len() == 1 && term.pairs.len() == 1 {
        parts[0] = parts[0].trim_start_matches('(').trim_end_matches(')').to_string();
    }
    let text = if parts.is_empty() { "1".to_string() } else { parts.join("\\,") };
    let width = 3 * (term.pairs.len() * 2 + term.factors.len()).max(1);
    Tex::new(text, width)
}

/// Writes `lhs pieces suffix` as `equation*` when it fits a line, else as `multline*` broken
/// between pieces.
fn display(out: &mut String, lhs: &Tex, pieces: &[Tex], suffix: Option<&Tex>) {
    let mut pieces = pieces.to_vec();
    if pieces.is_empty() {
        pieces.push(Tex::new("0", 1));
    }
    if let (Some(suffix), Some(last)) = (suffix, pieces.last_mut()) {
        last.push(suffix);
    }
    let total = lhs.width + pieces.iter().map(|p| p.width).sum::<usize>();
    if total <= LINE_BUDGET {
        let body: String = pieces.iter().map(|p| p.text.as_str()).collect();
        let _ = writeln!(out, "\\begin{{equation*}}\n{}{body}\n\\end{{equation*}}", lhs.text);
        return;
    }
    let mut lines: Vec<String> = Vec::new();
    let mut line = lhs.text.clone();
    let mut width = lhs.width;
    let mut line_has_piece = false;
    for piece in &pieces {
        if line_has_piece && width + piece.width > LINE_BUDGET {
            lines.push(std::mem::take(&mut line));
            width = 0;
        }
        line.push_str(&piece.text);
        width += piece.width;
        line_has_piece = true;
    }
    lines.push(line);
    let _ = writeln!(out, "\\begin{{multline*}}\n{}\n\\end{{multline*}}", lines.join(" \\\\\n"));
}

/// The operator that joins a term with `negative` sign after `first` terms.
fn operator(negative: bool, first: bool) -> Tex {
    match (first, negative) {
        (true, false) => Tex::default(),
        (true, true) => Tex::new("-", 1),
        (false, false) => Tex::new(" + ", 2),
        (false, true) => Tex::new(" - ", 2),
    }
}

/// `var^{k}`, empty for `k = 0`.
fn power(var: &str, k: usize) -> Tex {
    match k {
        _ if var.is_empty() => Tex::default(),
        0 => Tex::default(),
        1 => Tex::new(var, 1),
        _ => Tex::new(format!("{var}^{{{k}}}"), 2 + k.to_string().len() / 2),
    }
}

/// The terms of `sum_k coeffs[k] var^k`, each with its joining operator, as pieces between which
/// a line may break. A coefficient that is a sum stays grouped as `var^k (a + b)`, and one that is
/// too long a fraction as `var^k/D (a + b)`, so that each coefficient can still be read off.
fn series_pieces(coeffs: &[Fraction], var: &str, descending: bool, names: &[String]) -> Vec<Tex> {
    series_pieces_with(coeffs, &[], var, descending, names)
}

/// A coefficient typeset from its factored form: sign and magnitude, and for a magnitude too wide
/// for a line, the same value as a fraction of the short factors times the long numerator factor,
/// whose terms may then go on several lines.
struct FactoredTex {
    negative: bool,
    magnitude: Tex,
    split: Option<(Vec<Tex>, Vec<Atom>)>,
}

/// [`series_pieces`] where `factored[k]`, when given, is the sign and magnitude to typeset for
/// coefficient `k` instead of its expanded form.
fn series_pieces_with(
    coeffs: &[Fraction],
    factored: &[Option<FactoredTex>],
    var: &str,
    descending: bool,
    names: &[String],
) -> Vec<Tex> {
    let mut order: Vec<usize> = (0..coeffs.len()).collect();
    if descending {
        order.reverse();
    }
    let mut res: Vec<Tex> = Vec::new();
    for k in order {
        let coeff = &coeffs[k];
        if coeff.is_zero() {
            continue;
        }
        let first = res.is_empty();
        let power = power(var, k);
        if let Some(Some(f)) = factored.get(k) {
            let mut piece = operator(f.negative, first);
            match &f.split {
                Some((prefix, long)) if f.magnitude.width > LINE_BUDGET / 2 => {
                    let mut prefix = prefix.clone();
                    let mut tail = prefix.pop().unwrap_or_default();
                    if let Some(head) = prefix.first_mut() {
                        piece.push(head);
                        *head = piece;
                        res.extend(prefix);
                    } else {
                        piece.push(&tail);
                        tail = piece;
                    }
                    if !power.text.is_empty() {
                        tail.push_str("\\,", 0);
                        tail.push(&power);
                    }
                    if long.is_empty() {
                        res.push(tail);
                    } else {
                        tail.push_str("\\bigl(", 1);
                        grouped(&mut res, tail, long, names);
                    }
                }
                _ => {
                    piece.push(&f.magnitude);
                    if !power.text.is_empty() {
                        piece.push_str("\\,", 0);
                        piece.push(&power);
                    }
                    res.push(piece);
                }
            }
            continue;
        }
        if coeff.denom.is_empty() {
            if let [atom] = coeff.numer.as_slice() {
                let mut piece = operator(atom.negative, first);
                let magnitude = atom_tex(atom, names);
                if power.text.is_empty() {
                    piece.push(&magnitude);
                } else if is_unit(atom) {
                    piece.push(&power);
                } else {
                    piece.push(&magnitude);
                    piece.push_str("\\,", 0);
                    piece.push(&power);
                }
                res.push(piece);
                continue;
            }
            let (negative, inner) = pull_sign(&coeff.numer);
            if power.text.is_empty() {
                for (idx, atom) in coeff.numer.iter().enumerate() {
                    let mut piece = operator(atom.negative, first && idx == 0);
                    piece.push(&atom_tex(atom, names));
                    res.push(piece);
                }
                continue;
            }
            let mut opening = operator(negative, first);
            opening.push(&power);
            opening.push_str("\\bigl(", 1);
            grouped(&mut res, opening, &inner, names);
            continue;
        }
        let whole = inline_value(coeff, names);
        let (negative, inner) = pull_sign(&coeff.numer);
        let denominator = inline_sum(&coeff.denom, names);
        if whole.width <= FRACTION_LIMIT {
            let mut piece = operator(negative, first);
            let numerator = inline_sum(&inner, names);
            piece.push(&frac(&numerator, &denominator));
            if !power.text.is_empty() {
                piece.push_str("\\,", 0);
                piece.push(&power);
            }
            res.push(piece);
        } else {
            let mut opening = operator(negative, first);
            let top = if power.text.is_empty() { Tex::new("1", 1) } else { power };
            opening.push(&frac(&top, &denominator));
            opening.push_str("\\bigl(", 1);
            grouped(&mut res, opening, &inner, names);
        }
    }
    res
}

/// Pushes `opening a + b - c \bigr)`: as one piece when the group is short enough to keep on one
/// line, else one piece per atom so the line may break inside the parentheses.
fn grouped(res: &mut Vec<Tex>, opening: Tex, atoms: &[Atom], names: &[String]) {
    let mut whole = opening.clone();
    whole.push(&inline_sum(atoms, names));
    whole.push_str("\\bigr)", 1);
    if whole.width <= LINE_BUDGET / 2 {
        res.push(whole);
        return;
    }
    let mut pending = Some(opening);
    for (idx, atom) in atoms.iter().enumerate() {
        let mut piece = pending.take().unwrap_or_default();
        piece.push(&operator(atom.negative, idx == 0));
        piece.push(&atom_tex(atom, names));
        if idx + 1 == atoms.len() {
            piece.push_str("\\bigr)", 1);
        }
        res.push(piece);
    }
}

/// When every atom is negative, `(true, negated atoms)`, so that a sum reads `-(a + b)`.
fn pull_sign(atoms: &[Atom]) -> (bool, Vec<Atom>) {
    if !atoms.is_empty() && atoms.iter().all(|a| a.negative) {
        (true, atoms.iter().map(Atom::negated).collect())
    } else {
        (false, atoms.to_vec())
    }
}

fn frac(numerator: &Tex, denominator: &Tex) -> Tex {
    Tex::new(
        format!("\\frac{{{}}}{{{}}}", numerator.text, denominator.text),
        numerator.width.max(denominator.width) + 1,
    )
}

/// Whether the atom's magnitude is exactly 1 with nothing else.
fn is_unit(atom: &Atom) -> bool {
    atom.root.is_one() && !atom.imaginary && atom.factors.is_empty() && atom.magnitude.is_one()
}

/// A value of a model space typeset inline, factored over the unperturbed energy differences
/// when that is shorter than the expanded fraction.
fn value_tex(value: &RatFunc, ctx: &SpaceContext<'_>) -> Tex {
    let expanded = scalar(value, ctx.names);
    match factored_tex(value, ctx) {
        Some((negative, magnitude)) if magnitude.width < expanded.width => {
            let mut res = operator(negative, true);
            res.push(&magnitude);
            res
        }
        _ => expanded,
    }
}

/// [`factored_tex`] with the split form for a magnitude too wide for a line: the longest sum
/// among the numerator factors (to the first power) comes out of the fraction.
fn factored_form(value: &RatFunc, ctx: &SpaceContext<'_>) -> Option<FactoredTex> {
    let (negative, magnitude) = factored_tex(value, ctx)?;
    let split = (|| {
        let parts = text::factor_value(value, ctx.factoring)?;
        let long_idx = parts
            .numer
            .iter()
            .enumerate()
            .filter(|(_, (p, e))| *e == 1 && p.terms().len() > 1)
            .max_by_key(|(_, (p, _))| p.terms().len())
            .map(|(idx, _)| idx);
        let mut rest = text::Factored {
            negative: false,
            constant: parts.constant.clone(),
            radicand: parts.radicand,
            numer: parts.numer.clone(),
            denom: parts.denom.clone(),
        };
        let long = match long_idx {
            Some(idx) => terms::atoms(&rest.numer.remove(idx).0),
            None => Vec::new(),
        };
        Some((factored_parts_pieces(&rest, ctx, LINE_BUDGET / 2), long))
    })();
    Some(FactoredTex { negative, magnitude, split })
}

/// The sign and the unsigned magnitude of a value typeset from its factored form,
/// `\frac{g^{4} (w + \delta)}{w (2 w + \delta)^{3}}`.
fn factored_tex(value: &RatFunc, ctx: &SpaceContext<'_>) -> Option<(bool, Tex)> {
    let parts = text::factor_value(value, ctx.factoring)?;
    Some((parts.negative, factored_parts_tex(&parts, ctx)))
}

/// The unsigned magnitude of factored parts as a fraction.
fn factored_parts_tex(parts: &text::Factored, ctx: &SpaceContext<'_>) -> Tex {
    let pieces = factored_parts_pieces(parts, ctx, usize::MAX);
    let mut res = Tex::default();
    for piece in &pieces {
        res.push(piece);
    }
    res
}

/// [`factored_parts_tex`] as pieces between which a line may break: the numerator over the
/// first denominator factors, then `\cdot \frac{1}{...}` for the others, each denominator at most
/// `budget` wide (one factor at least).
fn factored_parts_pieces(
    parts: &text::Factored,
    ctx: &SpaceContext<'_>,
    budget: usize,
) -> Vec<Tex> {
    // A sum is parenthesized unless it stands alone above or below the fraction bar.
    let factor = |(p, e): &(crate::exact::Poly, u32), alone: bool| -> Tex {
        let atoms = terms::atoms(p);
        let mut tex = inline_sum(&atoms, ctx.names);
        if atoms.len() > 1 && !(alone && *e == 1) {
            let mut wrapped = Tex::new("\\left(", 1);
            wrapped.push(&tex);
            wrapped.push_str("\\right)", 1);
            tex = wrapped;
        }
        if *e > 1 {
            tex.push_str(&format!("^{{{e}}}"), 1);
        }
        tex
    };
    let join = |parts: Vec<Tex>| -> Tex {
        let mut res = Tex::default();
        for (idx, part) in parts.iter().enumerate() {
            if idx > 0 {
                res.push_str(" ", 0);
            }
            res.push(part);
        }
        res
    };
    let mut top: Vec<Tex> = Vec::new();
    if !parts.constant.numer().is_one() || (parts.numer.is_empty() && parts.radicand.is_one()) {
        let n = parts.constant.numer().to_string();
        top.push(Tex::new(n.clone(), n.len()));
    }
    if !parts.radicand.is_one() {
        let r = parts.radicand.abs().to_string();
        if !parts.radicand.is_unit() {
            top.push(Tex::new(format!("\\sqrt{{{r}}}"), r.len() + 1));
        }
        if parts.radicand.is_negative() {
            top.push(Tex::new("i", 1));
        }
    }
    let top_alone = top.is_empty() && parts.numer.len() == 1;
    top.extend(parts.numer.iter().map(|f| factor(f, top_alone)));
    let mut bottom: Vec<Tex> = Vec::new();
    if !parts.constant.denom().is_one() {
        let d = parts.constant.denom().to_string();
        bottom.push(Tex::new(d.clone(), d.len()));
    }
    let bottom_alone = bottom.is_empty() && parts.denom.len() == 1;
    bottom.extend(parts.denom.iter().map(|f| factor(f, bottom_alone)));
    let numerator = if top.is_empty() { Tex::new("1", 1) } else { join(top) };
    if bottom.is_empty() {
        return vec![numerator];
    }
    let mut chunks: Vec<Vec<Tex>> = vec![Vec::new()];
    let mut width = 0;
    for factor in bottom {
        let last = chunks.last_mut().expect("one chunk");
        if !last.is_empty() && width + factor.width > budget {
            chunks.push(Vec::new());
            width = 0;
        }
        width += factor.width + 1;
        chunks.last_mut().expect("one chunk").push(factor);
    }
    let mut res = Vec::new();
    for (idx, chunk) in chunks.into_iter().enumerate() {
        if idx == 0 {
            res.push(frac(&numerator, &join(chunk)));
        } else {
            let mut piece = Tex::new(" \\cdot ", 1);
            piece.push(&frac(&Tex::new("1", 1), &join(chunk)));
            res.push(piece);
        }
    }
    res
}

/// A value typeset inline: a sum, or a fraction of sums.
fn scalar(value: &RatFunc, names: &[String]) -> Tex {
    inline_value(&terms::fraction(value), names)
}

fn inline_value(value: &Fraction, names: &[String]) -> Tex {
    if value.denom.is_empty() {
        return inline_sum(&value.numer, names);
    }
    let (negative, inner) = pull_sign(&value.numer);
    let mut res = operator(negative, true);
    res.push(&frac(&inline_sum(&inner, names), &inline_sum(&value.denom, names)));
    res
}

fn inline_sum(atoms: &[Atom], names: &[String]) -> Tex {
    if atoms.is_empty() {
        return Tex::new("0", 1);
    }
    let mut res = Tex::default();
    for (idx, atom) in atoms.iter().enumerate() {
        res.push(&operator(atom.negative, idx == 0));
        res.push(&atom_tex(atom, names));
    }
    res
}

/// The magnitude of an atom: `\frac{3}{4}\sqrt{2}\, i\, g^{2} \delta`.
fn atom_tex(atom: &Atom, names: &[String]) -> Tex {
    let mut parts: Vec<Tex> = Vec::new();
    let rest = !atom.root.is_one() || atom.imaginary || !atom.factors.is_empty();
    if !atom.magnitude.is_one() || !rest {
        let (numer, denom) =
            (atom.magnitude.numer().to_string(), atom.magnitude.denom().to_string());
        if atom.magnitude.is_integer() {
            parts.push(Tex::new(numer.clone(), numer.len()));
        } else {
            parts.push(frac(
                &Tex::new(numer.clone(), numer.len()),
                &Tex::new(denom.clone(), denom.len()),
            ));
        }
    }
    if !atom.root.is_one() {
        let root = atom.root.to_string();
        parts.push(Tex::new(format!("\\sqrt{{{root}}}"), root.len() + 1));
    }
    if atom.imaginary {
        parts.push(Tex::new("i", 1));
    }
    for (param, exponent) in &atom.factors {
        let name = names.get(param.0 as usize).map_or("?", String::as_str);
        let mut tex = symbol(name);
        if *exponent > 1 {
            tex.push_str(&format!("^{{{exponent}}}"), 1);
        }
        parts.push(tex);
    }
    let mut res = Tex::default();
    for (idx, part) in parts.iter().enumerate() {
        if idx > 0 {
            // A thin space after a root or `i` keeps `\sqrt{2}\, g` from reading as one radicand.
            let previous = &parts[idx - 1].text;
            if previous.starts_with("\\sqrt") || previous == "i" {
                res.push_str("\\,", 0);
            } else {
                res.push_str(" ", 0);
            }
        }
        res.push(part);
    }
    res
}

/// A parameter typeset as a symbol: Greek names as letters, a trailing number or the part after
/// `_` as a subscript, other multi-letter names upright.
fn symbol(name: &str) -> Tex {
    let (base, subscript) = match name.split_once('_') {
        Some((base, sub)) if !base.is_empty() && !sub.is_empty() => (base, Some(sub)),
        _ => {
            let stem = name.trim_end_matches(|c: char| c.is_ascii_digit());
            if !stem.is_empty() && stem.len() < name.len() {
                (stem, Some(&name[stem.len()..]))
            } else {
                (name, None)
            }
        }
    };
    let mut res = symbol_part(base);
    if let Some(sub) = subscript {
        let sub_tex = if sub.chars().all(|c| c.is_ascii_digit()) {
            Tex::new(sub, sub.len())
        } else {
            symbol_part(sub)
        };
        res.push_str(&format!("_{{{}}}", sub_tex.text), sub_tex.width.div_ceil(2));
    }
    res
}

fn symbol_part(name: &str) -> Tex {
    if GREEK.contains(&name) || GREEK_CAPITAL.contains(&name) {
        return Tex::new(format!("\\{name}"), 1);
    }
    if name.chars().count() == 1 && name.chars().all(|c| c.is_ascii_alphabetic()) {
        return Tex::new(name, 1);
    }
    // Upright letters of a multi-letter name set wider than the budget's unit.
    Tex::new(format!("\\mathrm{{{}}}", escape_math(name)), (3 * name.chars().count()).div_ceil(2))
}

/// A model-space state: a ket, or a sum of kets with exact coefficients.
/// A state as pieces between which a line may break: one per ket with its coefficient, and a
/// long coefficient itself broken as the series are (factored where the report factors it).
fn state_pieces(vector: &SparseVec<RatFunc>, ctx: &SpaceContext<'_>) -> Vec<Tex> {
    let (basis, names) = (ctx.model.basis(), ctx.names);
    let mut res = Vec::new();
    for (k, (idx, coeff)) in vector.entries().iter().enumerate() {
        let value = terms::fraction(coeff);
        if value.denom.is_empty() && value.numer.len() == 1 {
            let atom = &value.numer[0];
            let mut piece = operator(atom.negative, k == 0);
            if !is_unit(atom) {
                piece.push(&atom_tex(atom, names));
                piece.push_str("\\,", 0);
            }
            piece.push(&ket(basis, *idx));
            res.push(piece);
            continue;
        }
        let factored = [factored_form(coeff, ctx)];
        let mut inner = series_pieces_with(&[value], &factored, "", false, names);
        // One product or fraction needs no parentheses: its sign joins the sum.
        if let [single] = inner.as_slice() {
            let (negative, rest) = match single.text.strip_prefix('-') {
                Some(rest) => (true, rest),
                None => (false, single.text.as_str()),
            };
            if !has_top_level_sum(rest) {
                let mut piece = operator(negative, k == 0);
                piece.push_str(rest, single.width);
                piece.push_str("\\,", 0);
                piece.push(&ket(basis, *idx));
                res.push(piece);
                continue;
            }
        }
        let mut opening = operator(false, k == 0);
        opening.push_str("\\bigl(", 1);
        if let Some(first) = inner.first_mut() {
            opening.push(first);
            *first = opening;
        }
        if let Some(last) = inner.last_mut() {
            last.push_str("\\bigr)", 1);
            last.push(&ket(basis, *idx));
        }
        res.extend(inner);
    }
    res
}

/// Whether typeset math has a `+` or `-` outside braces and `\\left`/`\\right` groups.
fn has_top_level_sum(text: &str) -> bool {
    let mut depth = 0i32;
    for ch in text.chars() {
        match ch {
            '{' | '(' => depth += 1,
            '}' | ')' => depth -= 1,
            '+' | '-' if depth == 0 => return true,
            _ => {}
        }
    }
    false
}

fn state(vector: &SparseVec<RatFunc>, basis: &Basis, names: &[String]) -> Tex {
    if let [(idx, coeff)] = vector.entries() {
        if coeff.is_one() {
            return ket(basis, *idx);
        }
    }
    let mut res = Tex::default();
    for (k, (idx, coeff)) in vector.entries().iter().enumerate() {
        let value = terms::fraction(coeff);
        let single = value.denom.is_empty() && value.numer.len() == 1;
        if single {
            let atom = &value.numer[0];
            res.push(&operator(atom.negative, k == 0));
            if !is_unit(atom) {
                res.push(&atom_tex(atom, names));
                res.push_str("\\,", 0);
            }
        } else {
            res.push(&operator(false, k == 0));
            res.push_str("\\bigl(", 1);
            res.push(&inline_value(&value, names));
            res.push_str("\\bigr)", 1);
        }
        res.push(&ket(basis, *idx));
    }
    if res.text.is_empty() {
        res = Tex::new("0", 1);
    }
    res
}

/// `\lvert 0, +\tfrac12, \mathrm{L}\rangle` for a product-basis state.
fn ket(basis: &Basis, state_idx: usize) -> Tex {
    let labels: Vec<Tex> = basis
        .fields(state_idx)
        .into_iter()
        .flatten()
        .map(|field| match field {
            LabelField::Count(n) => Tex::new(n.to_string(), n.to_string().len()),
            // The contract labels spin states with an explicit sign: `+1`, `0`, `-1`.
            LabelField::Signed(m) if m.is_integer() => {
                let text = if m.is_positive() { format!("+{m}") } else { m.to_string() };
                let width = text.len();
                Tex::new(text, width)
            }
            LabelField::Signed(m) => {
                let sign = if m.is_negative() { "-" } else { "+" };
                let (p, q) = (m.numer().magnitude().to_string(), m.denom().to_string());
                let text = if p.len() == 1 && q.len() == 1 {
                    format!("{sign}\\tfrac{p}{q}")
                } else {
                    format!("{sign}\\tfrac{{{p}}}{{{q}}}")
                };
                Tex::new(text, 2 + p.len().max(q.len()))
            }
            LabelField::Name(label) => {
                Tex::new(format!("\\mathrm{{{}}}", escape_math(&label)), label.chars().count())
            }
        })
        .collect();
    let mut res = Tex::new("\\lvert ", 1);
    for (k, label) in labels.iter().enumerate() {
        if k > 0 {
            res.push_str(", ", 1);
        }
        res.push(label);
    }
    res.push_str("\\rangle", 1);
    res
}

/// A model's display name for `\texttt`, escaped, with break points after `/` and `_` so a
/// long path wraps instead of running into the margin.
fn file_name(raw: &str) -> String {
    let mut res = String::new();
    for ch in raw.chars() {
        res.push_str(&escape_text(&ch.to_string()));
        if matches!(ch, '/' | '_') {
            res.push_str("\\allowbreak{}");
        }
    }
    res
}

/// The last component of a path-like display name, short enough for headings and captions (the
/// introduction gives the name in full).
fn short_name(name: &str) -> &str {
    name.rsplit(['/', '\\']).find(|part| !part.is_empty()).unwrap_or(name)
}

/// Escapes text-mode specials (`\ _ # % & $ { } ^ ~`).
fn escape_text(raw: &str) -> String {
    escape(raw, ["\\textbackslash{}", "\\textasciicircum{}", "\\textasciitilde{}"])
}

/// Escapes specials inside `\mathrm{...}`.
fn escape_math(raw: &str) -> String {
    escape(raw, ["\\backslash ", "\\hat{}", "\\sim "])
}

/// Backslash-escapes `_ # % & $ { }`, writes `\`, `^` and `~` as `words` (in that order), and
/// turns line breaks into spaces.
fn escape(raw: &str, words: [&str; 3]) -> String {
    let mut res = String::with_capacity(raw.len());
    for ch in raw.chars() {
        match ch {
            '\\' => res.push_str(words[0]),
            '^' => res.push_str(words[1]),
            '~' => res.push_str(words[2]),
            '_' | '#' | '%' | '&' | '$' | '{' | '}' => {
                res.push('\\');
                res.push(ch);
            }
            '\n' | '\r' => res.push(' '),
            _ => res.push(ch),
        }
    }
    res
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn symbols_follow_the_naming_rules() {
        let cases = [
            ("g", "g"),
            ("delta", "\\delta"),
            ("Omega", "\\Omega"),
            ("Alpha", "\\mathrm{Alpha}"),
            ("g2", "g_{2}"),
            ("w_c", "w_{c}"),
            ("omega_c", "\\omega_{c}"),
            ("J_zz", "J_{\\mathrm{zz}}"),
            ("g_12", "g_{12}"),
            ("eps", "\\mathrm{eps}"),
            ("a_b_c", "a_{\\mathrm{b\\_c}}"),
            ("_x", "\\mathrm{\\_x}"),
        ];
        for (name, expected) in cases {
            assert_eq!(symbol(name).text, expected, "{name}");
        }
    }

    #[test]
    fn kets_show_each_factor_label() {
        use crate::model::space::{Ladder, Levels, Spin};
        use crate::model::Space;
        let spaces = vec![
            Space::new("q", Ladder::oscillator(3)),
            Space::new("s", Spin { twice_j: 1 }),
            Space::new("d", Levels { labels: vec!["L_1".into()] }),
        ];
        let basis = Basis::new(spaces).expect("small basis");
        // State 3 is |1, +1/2, L_1>: the oscillator index varies slowest.
        assert_eq!(ket(&basis, 2).text, "\\lvert 1, +\\tfrac12, \\mathrm{L\\_1}\\rangle");
        assert_eq!(ket(&basis, 1).text, "\\lvert 0, -\\tfrac12, \\mathrm{L\\_1}\\rangle");
    }

    #[test]
    fn text_is_escaped() {
        assert_eq!(escape_text("a_b#c%d&e$f{g}"), "a\\_b\\#c\\%d\\&e\\$f\\{g\\}");
    }

    #[test]
    fn floats_have_six_significant_digits() {
        assert_eq!(float(0.075).text, "0.075");
        assert_eq!(float(-1.0 / 3.0).text, "-0.333333");
        assert_eq!(float(123456.0).text, "1.23456 \\times 10^{5}");
        assert_eq!(float(1.0e-7).text, "1 \\times 10^{-7}");
    }
}
