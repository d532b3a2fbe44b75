//! The level diagram of `cleave check --diagram`: branch energies against lambda (or against one
//! parameter at lambda = 1), the exact levels of `H(lambda)` as solid lines and the series of each order as dashed curves, each
//! branch labelled by its states and the estimated radius of convergence marked.
//! A pure function of a [`Sweep`] and the [`Derivation`] it came from.

use std::fmt::Write;

use super::text;
use crate::check::Sweep;
use crate::engine::Derivation;
use crate::model::Model;

const WIDTH: f64 = 760.0;
const HEIGHT: f64 = 500.0;
const LEFT: f64 = 80.0;
const RIGHT: f64 = 210.0;
const TOP: f64 = 64.0;
const BOTTOM: f64 = 56.0;
const COLORS: [&str; 8] =
    ["#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#8c564b", "#e377c2", "#17becf"];

/// The SVG level diagram of `sweep`, a sweep of `derivation` of `model` (named `name`).
pub fn diagram(model: &Model, derivation: &Derivation, sweep: &Sweep, name: &str) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{WIDTH}\" height=\"{HEIGHT}\" \
         viewBox=\"0 0 {WIDTH} {HEIGHT}\" font-family=\"sans-serif\" font-size=\"12\">"
    );
    let _ = writeln!(out, "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>");
    let mut title = format!("Levels of {} against {}", escape(name), escape(&sweep.axis));
    let mut values: Vec<String> = Vec::new();
    if sweep.axis != "lambda" {
        values.push("lambda = 1".to_string());
    }
    values.extend(
        sweep.at.iter().filter(|(n, _)| *n != sweep.axis).map(|(n, v)| format!("{n} = {v}")),
    );
    if !values.is_empty() {
        let _ = write!(title, " at {}", escape(&values.join(", ")));
    }
    if !model.fixed().is_empty() {
        let values: Vec<String> = model.fixed().iter().map(|(n, v)| format!("{n} = {v}")).collect();
        let _ = write!(title, " (fixed: {})", escape(&values.join(", ")));
    }
    let _ = writeln!(out, "<text x=\"{LEFT}\" y=\"22\" font-size=\"14\">{title}</text>");
    if let Some(why) = &sweep.skipped {
        let _ = writeln!(out, "<text x=\"{LEFT}\" y=\"60\">no diagram: {}</text>", escape(why));
        out.push_str("</svg>\n");
        return out;
    }
    let x0 = sweep.axis_values.first().copied().unwrap_or(0.0);
    let x1 = sweep.axis_values.last().copied().filter(|x| *x > x0).unwrap_or(x0 + 1.0);
    let (y0, y1) = energy_window(sweep);
    let plot_w = WIDTH - LEFT - RIGHT;
    let plot_h = HEIGHT - TOP - BOTTOM;
    let sx = |x: f64| LEFT + (x - x0) / (x1 - x0) * plot_w;
    let sy = |y: f64| TOP + plot_h - (y - y0) / (y1 - y0) * plot_h;
    let _ = writeln!(
        out,
        "<defs><clipPath id=\"plot\"><rect x=\"{LEFT}\" y=\"{TOP}\" width=\"{plot_w}\" \
         height=\"{plot_h}\"/></clipPath></defs>"
    );
    axes(&mut out, &sweep.axis, (x0, x1), (y0, y1), &sx, &sy);

    // Exact levels: every eigenvalue of H(lambda) in ascending order, solid.
    let n_levels = sweep.exact.iter().map(Vec::len).min().unwrap_or(0);
    let _ = writeln!(out, "<g clip-path=\"url(#plot)\" fill=\"none\">");
    for k in 0..n_levels {
        let values: Vec<f64> = sweep.exact.iter().map(|eig| eig[k]).collect();
        if values.iter().all(|v| *v < y0 - (y1 - y0) || *v > y1 + (y1 - y0)) {
            continue;
        }
        let _ = writeln!(
            out,
            "<polyline stroke=\"#444\" stroke-width=\"1.6\" points=\"{}\"/>",
            points(&sweep.axis_values, &values, &sx, &sy, (y0, y1))
        );
    }
    // The series of each order, dashed in the branch's color, fainter for lower orders.
    for (idx, branch) in sweep.branches.iter().enumerate() {
        let color = COLORS[idx % COLORS.len()];
        let n_orders = branch.partial_sums.len();
        for (k, values) in branch.partial_sums.iter().enumerate().skip(1) {
            let opacity = 0.3 + 0.7 * k as f64 / (n_orders - 1).max(1) as f64;
            let _ = writeln!(
                out,
                "<polyline stroke=\"{color}\" stroke-width=\"1.4\" stroke-dasharray=\"6 4\" \
                 stroke-opacity=\"{opacity:.2}\" points=\"{}\"/>",
                points(&sweep.axis_values, values, &sx, &sy, (y0, y1))
            );
        }
    }
    let _ = writeln!(out, "</g>");

    // The radius of convergence, where the estimate falls inside the range.
    if let Some(r) = sweep.radius.filter(|r| *r > x0 && *r < x1) {
        let x = sx(r);
        let _ = writeln!(
            out,
            "<line x1=\"{x:.2}\" y1=\"{TOP}\" x2=\"{x:.2}\" y2=\"{:.2}\" stroke=\"#888\" \
             stroke-dasharray=\"2 3\"/>\n<text x=\"{:.2}\" y=\"{:.2}\" fill=\"#555\">radius ~ \
             {}</text>",
            TOP + plot_h,
            x + 4.0,
            TOP + 14.0,
            tick_label(r, r / 100.0)
        );
    }

    // Labels at the right end of each branch's highest order, pushed apart to stay legible.
    let names = text::Names::for_derivation(derivation);
    let mut labels: Vec<(f64, String, &str)> = sweep
        .branches
        .iter()
        .enumerate()
        .map(|(idx, b)| {
            // At the exact level the branch becomes, else at its series.
            let exact_end =
                b.exact_index.and_then(|k| sweep.exact.last().and_then(|e| e.get(k))).copied();
            let series_end = b.partial_sums.last().and_then(|v| v.last()).copied();
            let end = exact_end.or(series_end).unwrap_or(y0);
            let y = sy(end.clamp(y0, y1));
            (y, branch_label(model, derivation, b.space, b.branch, &names), COLORS[idx % 8])
        })
        .collect();
    labels.sort_by(|a, b| a.0.total_cmp(&b.0));
    for k in 1..labels.len() {
        if labels[k].0 < labels[k - 1].0 + 14.0 {
            labels[k].0 = labels[k - 1].0 + 14.0;
        }
    }
    for (y, label, color) in &labels {
        let _ = writeln!(
            out,
            "<text x=\"{:.2}\" y=\"{:.2}\" fill=\"{color}\" font-size=\"11\">{}</text>",
            LEFT + plot_w + 8.0,
            y + 4.0,
            escape(label)
        );
    }

    // Legend.
    let legend_y = 44.0;
    let _ = writeln!(
        out,
        "<line x1=\"{LEFT}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#444\" \
         stroke-width=\"1.6\"/><text x=\"{:.1}\" y=\"{:.1}\">exact diagonalization</text>\
         <line x1=\"{:.1}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#1f77b4\" \
         stroke-dasharray=\"6 4\"/><text x=\"{:.1}\" y=\"{:.1}\">series to order 1 .. {} \
         (fainter: lower order)</text>",
        LEFT + 24.0,
        LEFT + 30.0,
        legend_y,
        LEFT + 190.0,
        LEFT + 214.0,
        LEFT + 220.0,
        legend_y,
        sweep.branches.iter().map(|b| b.partial_sums.len().saturating_sub(1)).max().unwrap_or(0),
        y = legend_y - 4.0,
    );
    out.push_str("</svg>\n");
    out
}

/// The energy range shown: the exact levels the branches start on and their series of the
/// highest order inside the radius, over the whole range of lambda, with a margin.
fn energy_window(sweep: &Sweep) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    let radius = sweep.radius.unwrap_or(f64::INFINITY);
    for b in &sweep.branches {
        let tracked = b.exact_index.map(|k| sweep.exact.iter().filter_map(move |e| e.get(k)));
        let series = b.partial_sums.last().into_iter().flat_map(|values| {
            values.iter().zip(&sweep.axis_values).filter(|(_, l)| **l <= radius).map(|(v, _)| v)
        });
        for v in tracked.into_iter().flatten().chain(series) {
            if v.is_finite() {
                lo = lo.min(*v);
                hi = hi.max(*v);
            }
        }
    }
    if !lo.is_finite() {
        return (-1.0, 1.0);
    }
    let span = hi - lo;
    let pad = if span > 1e-9 * (1.0 + lo.abs()) { 0.12 * span } else { 0.5 * (1.0 + lo.abs()) };
    (lo - pad, hi + pad)
}

/// Axes, ticks with labels, grid lines and axis titles.
fn axes(
    out: &mut String,
    axis: &str,
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
    sx: &dyn Fn(f64) -> f64,
    sy: &dyn Fn(f64) -> f64,
) {
    let bottom = HEIGHT - BOTTOM;
    let right = WIDTH - RIGHT;
    let (x_step, x_ticks) = ticks(x0, x1);
    for x in x_ticks {
        let px = sx(x);
        let _ = writeln!(
            out,
            "<line x1=\"{px:.2}\" y1=\"{TOP}\" x2=\"{px:.2}\" y2=\"{bottom}\" stroke=\"#eee\"/>\
             <line x1=\"{px:.2}\" y1=\"{bottom}\" x2=\"{px:.2}\" y2=\"{:.2}\" stroke=\"black\"/>\
             <text x=\"{px:.2}\" y=\"{:.2}\" text-anchor=\"middle\">{}</text>",
            bottom + 5.0,
            bottom + 18.0,
            tick_label(x, x_step)
        );
    }
    let (y_step, y_ticks) = ticks(y0, y1);
    for y in y_ticks {
        let py = sy(y);
        let _ = writeln!(
            out,
            "<line x1=\"{LEFT}\" y1=\"{py:.2}\" x2=\"{right}\" y2=\"{py:.2}\" stroke=\"#eee\"/>\
             <line x1=\"{:.2}\" y1=\"{py:.2}\" x2=\"{LEFT}\" y2=\"{py:.2}\" stroke=\"black\"/>\
             <text x=\"{:.2}\" y=\"{:.2}\" text-anchor=\"end\">{}</text>",
            LEFT - 5.0,
            LEFT - 8.0,
            py + 4.0,
            tick_label(y, y_step)
        );
    }
    let _ = writeln!(
        out,
        "<rect x=\"{LEFT}\" y=\"{TOP}\" width=\"{:.2}\" height=\"{:.2}\" fill=\"none\" \
         stroke=\"black\"/>",
        right - LEFT,
        bottom - TOP
    );
    let _ = writeln!(
        out,
        "<text x=\"{:.2}\" y=\"{:.2}\" text-anchor=\"middle\">{}</text>\
         <text x=\"18\" y=\"{:.2}\" transform=\"rotate(-90 18 {:.2})\" \
         text-anchor=\"middle\">energy</text>",
        (LEFT + right) / 2.0,
        bottom + 36.0,
        escape(axis),
        (TOP + bottom) / 2.0,
        (TOP + bottom) / 2.0
    );
}

/// Round tick positions covering `[lo, hi]`: steps of 1, 2 or 5 times a power of ten, about
/// six of them.
fn ticks(lo: f64, hi: f64) -> (f64, Vec<f64>) {
    let raw = (hi - lo) / 6.0;
    let magnitude = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * magnitude)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * magnitude);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (step, (first..=last).map(|k| k as f64 * step).collect())
}

/// A tick value with as many decimals as the step needs.
fn tick_label(value: f64, step: f64) -> String {
    let decimals = (-step.log10().floor()).max(0.0) as usize;
    let res = format!("{value:.decimals$}");
    // `-0` and `-0.00` read as noise.
    if res.trim_start_matches('-').chars().all(|c| c == '0' || c == '.') {
        res.trim_start_matches('-').to_string()
    } else {
        res
    }
}

/// The SVG points of a curve, with values far outside the window cut to keep the file sane
/// (the clip path hides the rest).
fn points(
    axis_values: &[f64],
    values: &[f64],
    sx: &dyn Fn(f64) -> f64,
    sy: &dyn Fn(f64) -> f64,
    (y0, y1): (f64, f64),
) -> String {
    let span = y1 - y0;
    axis_values
        .iter()
        .zip(values)
        .filter(|(_, v)| v.is_finite())
        .map(|(l, v)| format!("{:.2},{:.2}", sx(*l), sy(v.clamp(y0 - 2.0 * span, y1 + 2.0 * span))))
        .collect::<Vec<_>>()
        .join(" ")
}

/// A branch's label: the unperturbed state it comes from where it is one state, else its
/// unperturbed energy and multiplicity.
fn branch_label(
    model: &Model,
    derivation: &Derivation,
    space: usize,
    branch: usize,
    names: &text::Names,
) -> String {
    let model_space = &derivation.model_spaces[space];
    let b = &model_space.branches[branch];
    let state = match (&b.state, model_space.basis.len()) {
        (Some(s), _) if !s.coefficients.is_empty() => {
            Some(text::ket_sum(&s.coefficients[0], model.basis(), names))
        }
        (_, 1) => Some(text::ket_sum(&model_space.basis[0], model.basis(), names)),
        _ => None,
    };
    let mut label = match state {
        Some(s) if s.chars().count() <= 28 => s,
        Some(s) => s.chars().take(27).collect::<String>() + "…",
        None => match b.energy.first() {
            Some(e0) => format!("E0 = {}", text::scalar(e0, names)),
            None => String::new(),
        },
    };
    if b.multiplicity > 1 {
        let _ = write!(label, " (x{})", b.multiplicity);
    }
    format!("{}.{} {label}", space + 1, branch + 1)
}

fn escape(text: &str) -> String {
    text.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_cover_the_range() {
        let (step, t) = ticks(0.0, 0.5);
        assert_eq!(step, 0.1);
        assert_eq!(t.len(), 6);
        assert_eq!(tick_label(t[3], step), "0.3");
        let (step, t) = ticks(-2.7, 13.1);
        assert_eq!(step, 5.0);
        assert_eq!(t, vec![0.0, 5.0, 10.0]);
        assert_eq!(tick_label(-0.0001, 0.1), "0.0");
    }
}
