//! The table and the plot of `cleave check`.

use std::fmt::Write;

use crate::check::Verification;
use crate::engine::Derivation;

/// The readable table of `cleave check`.
pub fn check_report(derivation: &Derivation, verification: &Verification, name: &str) -> String {
    let mut out = String::new();
    let order = verification.branches.first().map_or(derivation.order, |b| b.expected_slope - 1);
    let _ = writeln!(out, "Numeric check of {name} to order {order}");
    if !verification.at.is_empty() {
        let values: Vec<String> =
            verification.at.iter().map(|(n, v)| format!("{n} = {v}")).collect();
        let _ = writeln!(
            out,
            "parameters: {} (parameters not given with --at are 1)",
            values.join(", ")
        );
    }
    if let Some(why) = &verification.skipped {
        let _ = writeln!(out, "skipped: {why}");
        return out;
    }
    let _ = writeln!(
        out,
        "error |E_N(lambda) - E_exact(lambda)| against exact diagonalization of H(lambda) \
         (nalgebra); a correct series of order N has log-log slope N + 1"
    );
    let _ = writeln!(
        out,
        "{:<8} {:>8} {:>8} {:>10} {:>12}  {:<6}",
        "branch", "slope", "expected", "next/err", "radius~", "result"
    );
    for b in &verification.branches {
        // No slope with a pass means the error stayed at rounding level: the series is exact
        // there (a branch with no higher terms, say).
        let slope = match (b.slope, b.passed) {
            (Some(s), _) => format!("{s:.2}"),
            (None, true) => "exact".to_string(),
            (None, false) => "-".to_string(),
        };
        let radius = b.radius.map_or("-".to_string(), |r| format!("{r:.3e}"));
        let ratio = b.next_order_ratio.map_or("-".to_string(), |r| format!("{r:.3}"));
        let _ = writeln!(
            out,
            "{:<8} {:>8} {:>8} {:>10} {:>12}  {:<6}",
            format!("{}.{}", b.space + 1, b.branch + 1),
            slope,
            b.expected_slope,
            ratio,
            radius,
            if b.passed { "ok" } else { "FAIL" }
        );
    }
    let failed = verification.branches.iter().filter(|b| !b.passed).count();
    let _ = writeln!(out, "{} branches checked, {} failed", verification.branches.len(), failed);
    let _ = writeln!(
        out,
        "next/err is the error at the smallest resolved lambda divided by the one the next two \
         derived coefficients predict (1 when they are right too); radius~ is a root-test estimate \
         from the last coefficient: for an asymptotic series it shrinks with the order, and the \
         series should not be used beyond it."
    );
    out
}

/// An SVG log–log plot of the error of every branch against lambda.
pub fn check_plot(verification: &Verification) -> String {
    let (width, height, margin) = (640.0, 420.0, 60.0);
    let points: Vec<(f64, f64)> = verification
        .branches
        .iter()
        .flat_map(|b| {
            b.samples.iter().filter(|(_, e)| *e > 0.0).map(|(l, e)| (l.log10(), e.log10()))
        })
        .collect();
    let (mut x0, mut x1, mut y0, mut y1) =
        (f64::INFINITY, f64::NEG_INFINITY, f64::INFINITY, f64::NEG_INFINITY);
    for (x, y) in &points {
        x0 = x0.min(*x);
        x1 = x1.max(*x);
        y0 = y0.min(*y);
        y1 = y1.max(*y);
    }
    if !x0.is_finite() || x1 <= x0 {
        (x0, x1) = (-3.0, 0.0);
    }
    if !y0.is_finite() || y1 <= y0 {
        (y0, y1) = (-16.0, 0.0);
    }
    let sx = |x: f64| margin + (x - x0) / (x1 - x0) * (width - 2.0 * margin);
    let sy = |y: f64| height - margin - (y - y0) / (y1 - y0) * (height - 2.0 * margin);
    let mut out = String::new();
    let _ = writeln!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width}\" height=\"{height}\" \
         font-family=\"sans-serif\" font-size=\"12\">"
    );
    let _ = writeln!(out, "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>");
    let _ = writeln!(
        out,
        "<line x1=\"{m}\" y1=\"{b}\" x2=\"{r}\" y2=\"{b}\" stroke=\"black\"/>\
         <line x1=\"{m}\" y1=\"{m}\" x2=\"{m}\" y2=\"{b}\" stroke=\"black\"/>",
        m = margin,
        b = height - margin,
        r = width - margin
    );
    let _ = writeln!(
        out,
        "<text x=\"{}\" y=\"{}\" text-anchor=\"middle\">log10 lambda ({x0:.1} .. {x1:.1})</text>",
        width / 2.0,
        height - 20.0
    );
    let _ = writeln!(
        out,
        "<text x=\"16\" y=\"{}\" transform=\"rotate(-90 16 {})\" text-anchor=\"middle\">log10 error ({y0:.1} .. {y1:.1})</text>",
        height / 2.0,
        height / 2.0
    );
    let colors =
        ["#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#8c564b", "#e377c2", "#17becf"];
    for (k, b) in verification.branches.iter().enumerate() {
        let color = colors[k % colors.len()];
        let path: Vec<String> = b
            .samples
            .iter()
            .filter(|(_, e)| *e > 0.0)
            .map(|(l, e)| format!("{:.2},{:.2}", sx(l.log10()), sy(e.log10())))
            .collect();
        if path.is_empty() {
            continue;
        }
        let _ = writeln!(
            out,
            "<polyline fill=\"none\" stroke=\"{color}\" points=\"{}\"/>",
            path.join(" ")
        );
        let _ = writeln!(
            out,
            "<text x=\"{}\" y=\"{}\" fill=\"{color}\">branch {}.{} (expected slope {})</text>",
            width - margin - 200.0,
            margin + 14.0 * k as f64,
            b.space + 1,
            b.branch + 1,
            b.expected_slope
        );
    }
    out.push_str("</svg>\n");
    out
}
