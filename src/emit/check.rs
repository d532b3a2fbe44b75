//! The table and the plot of `cleave check`.

use std::fmt::Write;

use crate::check::{BranchCheck, Radius, Verification};
use crate::engine::Derivation;

fn radius_text(radius: Option<Radius>) -> String {
    match radius {
        Some(Radius::At(r)) => format!("{r:.4}"),
        Some(Radius::Beyond(r)) => format!(">{r:.3}"),
        None => "-".to_string(),
    }
}

fn branch_name(b: &BranchCheck) -> String {
    format!("{}.{}", b.space + 1, b.branch + 1)
}

/// The readable table of `cleave check`.
pub fn check_report(derivation: &Derivation, verification: &Verification, name: &str) -> String {
    let _ = derivation;
    let mut out = String::new();
    let _ = writeln!(out, "Numeric check of {name} to order {}", verification.order);
    if !verification.values.is_empty() {
        let values: Vec<String> = verification
            .values
            .iter()
            .map(|v| {
                let who = if v.given { "--at" } else { "chosen" };
                format!("{} = {} ({who})", v.name, v.value)
            })
            .collect();
        let _ = writeln!(out, "parameters: {}", values.join(", "));
        if verification.values.iter().any(|v| !v.given) {
            let _ = writeln!(
                out,
                "  (parameters without --at get distinct rationals, positive, that keep the H0 \
                 levels as distinct as in general; the series is derived at these values)"
            );
        }
    } else if !verification.at.is_empty() {
        let values: Vec<String> =
            verification.at.iter().map(|(n, v)| format!("{n} = {v}")).collect();
        let _ = writeln!(out, "parameters: {}", values.join(", "));
    }
    for note in &verification.notes {
        let _ = writeln!(out, "note: {note}");
    }
    if let Some(why) = &verification.skipped {
        let _ = writeln!(out, "skipped: {why}");
        let _ = writeln!(out, "0 branches checked");
        return out;
    }
    let _ = writeln!(
        out,
        "error E_N(lambda) - E_exact(lambda) against exact diagonalization of H(lambda) \
         (nalgebra, refined in fixed point) at lambda = rho/64 ... rho/1024"
    );
    let _ = writeln!(
        out,
        "{:<8} {:>5} {:>8} {:>8} {:>10} {:>10} {:>10} {:>10}  {:<6}",
        "branch",
        "order",
        "slope",
        "expected",
        "err/pred",
        "deviation",
        "radius",
        "root test",
        "result"
    );
    for b in &verification.branches {
        if let Some(why) = &b.skipped {
            let _ = writeln!(out, "{:<8} skipped: {why}", branch_name(b));
            continue;
        }
        let slope = match (b.slope, b.passed) {
            (Some(s), _) => format!("{s:.2}"),
            (None, true) => "exact".to_string(),
            (None, false) => "-".to_string(),
        };
        let ratio = b.next_order_ratio.map_or("-".to_string(), |r| format!("{r:.6}"));
        let deviation = b.deviation.map_or("-".to_string(), |d| format!("{d:.1e}"));
        let root_test = b.root_test.map_or("-".to_string(), |r| format!("{r:.4}"));
        let _ = writeln!(
            out,
            "{:<8} {:>5} {:>8} {:>8} {:>10} {:>10} {:>10} {:>10}  {:<6}",
            branch_name(b),
            b.tested_order,
            slope,
            b.expected_slope,
            ratio,
            deviation,
            radius_text(b.radius),
            root_test,
            if b.passed { "ok" } else { "FAIL" }
        );
        if let Some(why) = &b.shortened {
            let _ = writeln!(out, "{:<8} tested to order {}: {why}", "", b.tested_order);
        }
    }
    let skipped = verification.branches.len() - verification.n_checked();
    let _ = writeln!(
        out,
        "{} branches checked, {} failed, {} skipped",
        verification.n_checked(),
        verification.n_failed(),
        skipped
    );
    let _ = writeln!(
        out,
        "err/pred is the error divided by the one the {} further derived coefficients predict \
         (1 when they are right too), deviation its largest relative miss; radius is the distance \
         to the nearest exceptional point of H(lambda) the branch meets (its series converges \
         inside it), root test |E_k|^(-1/k) a cross-check that can lie on either side.",
        crate::check::EXTRA_ORDERS
    );
    let with_pade: Vec<&BranchCheck> =
        verification.branches.iter().filter(|b| !b.pade.is_empty()).collect();
    if !with_pade.is_empty() {
        let _ = writeln!(
            out,
            "\nsummation: truncated series and diagonal Pade approximant [L/L] (from all derived \
             coefficients) against the exact eigenvalue the branch continues into on the real axis"
        );
        let _ = writeln!(
            out,
            "{:<8} {:>8} {:>10} {:>14} {:>12} {:>12}",
            "branch", "lambda/r", "lambda", "exact", "series err", "Pade err"
        );
        for b in with_pade {
            for row in &b.pade {
                let pade = row.pade.map_or("-".to_string(), |p| format!("{:.2e}", p - row.exact));
                let _ = writeln!(
                    out,
                    "{:<8} {:>8.2} {:>10.4e} {:>14.8} {:>12.2e} {:>12}",
                    branch_name(b),
                    row.relative,
                    row.lambda,
                    row.exact,
                    row.series - row.exact,
                    pade
                );
            }
        }
        let _ = writeln!(
            out,
            "(r is the radius above, or the scale of the coefficients where that is smaller; the \
             truncated series is not to be used beyond r, the approximant only where it agrees \
             with the exact value)"
        );
    }
    out
}

/// An SVG log–log plot of the error of every branch against lambda, with tick labels, a
/// reference line of the expected slope per branch and a legend beside the plot area.
pub fn check_plot(verification: &Verification) -> String {
    let (plot_w, height, margin) = (560.0, 440.0, 64.0);
    let legend_w = 210.0;
    let width = plot_w + legend_w;
    let shown: Vec<&BranchCheck> =
        verification.branches.iter().filter(|b| b.skipped.is_none()).collect();
    let series_points = |b: &BranchCheck| -> Vec<(f64, f64)> {
        b.samples
            .iter()
            .chain(&b.precise)
            .filter(|(l, e)| *e > 0.0 && *l > 0.0)
            .map(|(l, e)| (l.log10(), e.log10()))
            .collect()
    };
    let (mut x0, mut x1, mut y0, mut y1) =
        (f64::INFINITY, f64::NEG_INFINITY, f64::INFINITY, f64::NEG_INFINITY);
    for b in &shown {
        for (x, y) in series_points(b) {
            x0 = x0.min(x);
            x1 = x1.max(x);
            y0 = y0.min(y);
            y1 = y1.max(y);
        }
    }
    if !x0.is_finite() || x1 <= x0 {
        (x0, x1) = (-3.0, 0.0);
    }
    if !y0.is_finite() || y1 <= y0 {
        (y0, y1) = (-16.0, 0.0);
    }
    let (x0, x1, y0, y1) = (x0.floor(), x1.ceil(), y0.floor(), y1.ceil());
    let sx = |x: f64| margin + (x - x0) / (x1 - x0) * (plot_w - 1.5 * margin);
    let sy = |y: f64| height - margin - (y - y0) / (y1 - y0) * (height - 1.6 * margin);
    let mut out = String::new();
    let _ = writeln!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width}\" height=\"{height}\" \
         font-family=\"sans-serif\" font-size=\"12\">"
    );
    let _ = writeln!(out, "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>");
    let (left, right, top, bottom) = (sx(x0), sx(x1), sy(y1), sy(y0));
    let _ = writeln!(
        out,
        "<rect x=\"{left:.1}\" y=\"{top:.1}\" width=\"{:.1}\" height=\"{:.1}\" fill=\"none\" \
         stroke=\"black\"/>",
        right - left,
        bottom - top
    );
    // Ticks at whole decades, at most about ten per axis.
    let step = |span: f64| ((span / 10.0).ceil()).max(1.0);
    let xs = step(x1 - x0);
    let mut x = x0;
    while x <= x1 + 1e-9 {
        let px = sx(x);
        let _ = writeln!(
            out,
            "<line x1=\"{px:.1}\" y1=\"{bottom:.1}\" x2=\"{px:.1}\" y2=\"{:.1}\" stroke=\"black\"/>\
             <text x=\"{px:.1}\" y=\"{:.1}\" text-anchor=\"middle\">1e{}</text>",
            bottom + 5.0,
            bottom + 18.0,
            x as i64
        );
        x += xs;
    }
    let ys = step(y1 - y0);
    let mut y = y0;
    while y <= y1 + 1e-9 {
        let py = sy(y);
        let _ = writeln!(
            out,
            "<line x1=\"{:.1}\" y1=\"{py:.1}\" x2=\"{left:.1}\" y2=\"{py:.1}\" stroke=\"black\"/>\
             <text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\">1e{}</text>",
            left - 5.0,
            left - 7.0,
            py + 4.0,
            y as i64
        );
        y += ys;
    }
    let _ = writeln!(
        out,
        "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\">lambda</text>",
        (left + right) / 2.0,
        height - 12.0
    );
    let _ = writeln!(
        out,
        "<text x=\"14\" y=\"{c:.1}\" transform=\"rotate(-90 14 {c:.1})\" \
         text-anchor=\"middle\">|E_N(lambda) - E_exact(lambda)|</text>",
        c = (top + bottom) / 2.0
    );
    let _ = writeln!(
        out,
        "<clipPath id=\"area\"><rect x=\"{left:.1}\" y=\"{top:.1}\" width=\"{:.1}\" \
         height=\"{:.1}\"/></clipPath>",
        right - left,
        bottom - top
    );
    let colors =
        ["#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#8c564b", "#e377c2", "#17becf"];
    let legend_x = plot_w + 10.0;
    let _ =
        writeln!(out, "<text x=\"{legend_x:.1}\" y=\"{:.1}\">branch (expected slope)</text>", top);
    for (k, b) in shown.iter().enumerate() {
        let color = colors[k % colors.len()];
        let points = series_points(b);
        let path: Vec<String> =
            points.iter().map(|(x, y)| format!("{:.2},{:.2}", sx(*x), sy(*y))).collect();
        if !path.is_empty() {
            let _ = writeln!(
                out,
                "<polyline clip-path=\"url(#area)\" fill=\"none\" stroke=\"{color}\" \
                 points=\"{}\"/>",
                path.join(" ")
            );
        }
        for (l, e) in &b.precise {
            if *e > 0.0 {
                let _ = writeln!(
                    out,
                    "<circle cx=\"{:.2}\" cy=\"{:.2}\" r=\"2.5\" fill=\"{color}\"/>",
                    sx(l.log10()),
                    sy(e.log10())
                );
            }
        }
        // The expected slope through the branch's largest precise point, dashed.
        if let Some((l, e)) = b.precise.iter().copied().rfind(|(_, e)| *e > 0.0) {
            let slope = f64::from(b.expected_slope);
            let (ax, ay) = (l.log10(), e.log10());
            let (bx, by) = (x0, ay + slope * (x0 - ax));
            let _ = writeln!(
                out,
                "<line clip-path=\"url(#area)\" x1=\"{:.2}\" y1=\"{:.2}\" x2=\"{:.2}\" \
                 y2=\"{:.2}\" stroke=\"{color}\" stroke-dasharray=\"4 3\"/>",
                sx(ax),
                sy(ay),
                sx(bx),
                sy(by)
            );
        }
        let ly = top + 18.0 * (k as f64 + 1.0);
        let _ = writeln!(
            out,
            "<line x1=\"{legend_x:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"{color}\" \
             stroke-width=\"2\"/><text x=\"{:.1}\" y=\"{ly:.1}\">{} ({}){}</text>",
            ly - 4.0,
            legend_x + 22.0,
            ly - 4.0,
            legend_x + 28.0,
            branch_name(b),
            b.expected_slope,
            if b.passed { "" } else { " FAIL" }
        );
    }
    let ly = top + 18.0 * (shown.len() as f64 + 2.0);
    let _ = writeln!(
        out,
        "<text x=\"{legend_x:.1}\" y=\"{ly:.1}\">dashed: expected slope</text>\
         <text x=\"{legend_x:.1}\" y=\"{:.1}\">dots: refined beyond f64</text>",
        ly + 16.0
    );
    out.push_str("</svg>\n");
    out
}
