//! Exact values and state vectors in the contract's text syntax, shared by report and JSON.

use crate::exact::{Field, RatFunc, Symbols};
use crate::linalg::SparseVec;
use crate::model::Basis;

/// A value in contract syntax.
pub(crate) fn scalar(value: &RatFunc, names: &[String]) -> String {
    value.display(Symbols { names }).to_string()
}

/// Whether a printed value is a sum at the top level (so it needs parentheses as a factor).
fn is_sum(text: &str) -> bool {
    let mut depth = 0i32;
    for (k, ch) in text.char_indices() {
        match ch {
            '(' => depth += 1,
            ')' => depth -= 1,
            '+' | '-' if depth == 0 && k > 0 => return true,
            _ => {}
        }
    }
    false
}

/// `c1*|a> - c2*|b>` for a vector in the product basis.
pub(crate) fn ket_sum(vector: &SparseVec<RatFunc>, basis: &Basis, names: &[String]) -> String {
    let mut res = String::new();
    for (k, (idx, coeff)) in vector.entries().iter().enumerate() {
        let ket = basis.ket_label(*idx);
        let text = scalar(coeff, names);
        let negated = scalar(&-coeff.clone(), names);
        let (sign, magnitude) =
            if text.starts_with('-') && !is_sum(&negated) { ("-", negated) } else { ("+", text) };
        if k == 0 {
            if sign == "-" {
                res.push('-');
            }
        } else {
            res.push_str(if sign == "-" { " - " } else { " + " });
        }
        if magnitude == "1" {
            res.push_str(&ket);
        } else if is_sum(&magnitude) {
            res.push_str(&format!("({magnitude})*{ket}"));
        } else {
            res.push_str(&format!("{magnitude}*{ket}"));
        }
    }
    if res.is_empty() {
        res.push('0');
    }
    res
}

/// A state: the ket label when it is a single product state with coefficient 1, else a ket sum.
pub(crate) fn state(vector: &SparseVec<RatFunc>, basis: &Basis, names: &[String]) -> String {
    match vector.entries() {
        [(idx, c)] if c.is_one() => basis.ket_label(*idx),
        _ => ket_sum(vector, basis, names),
    }
}

/// A power series `c0 + c1*lambda + c2*lambda^2 ...` with zero terms left out.
pub(crate) fn series(coeffs: &[RatFunc], names: &[String]) -> String {
    let mut res = String::new();
    for (k, c) in coeffs.iter().enumerate() {
        if c.is_zero() {
            continue;
        }
        let text = scalar(c, names);
        let negated = scalar(&-c.clone(), names);
        let (sign, magnitude) =
            if text.starts_with('-') && !is_sum(&negated) { ("-", negated) } else { ("+", text) };
        if res.is_empty() {
            if sign == "-" {
                res.push('-');
            }
        } else {
            res.push_str(if sign == "-" { " - " } else { " + " });
        }
        let factor = match k {
            0 => String::new(),
            1 => "lambda".to_string(),
            _ => format!("lambda^{k}"),
        };
        if factor.is_empty() {
            res.push_str(&magnitude);
        } else if magnitude == "1" {
            res.push_str(&factor);
        } else if is_sum(&magnitude) {
            res.push_str(&format!("({magnitude})*{factor}"));
        } else {
            res.push_str(&format!("{magnitude}*{factor}"));
        }
    }
    if res.is_empty() {
        res.push('0');
    }
    res
}

/// A polynomial in `x` from its coefficients (`x^0` first), printed from the highest power down.
pub(crate) fn polynomial(coeffs: &[RatFunc], names: &[String]) -> String {
    let mut res = String::new();
    for (k, c) in coeffs.iter().enumerate().rev() {
        if c.is_zero() {
            continue;
        }
        let text = scalar(c, names);
        let negated = scalar(&-c.clone(), names);
        let (sign, magnitude) =
            if text.starts_with('-') && !is_sum(&negated) { ("-", negated) } else { ("+", text) };
        if res.is_empty() {
            if sign == "-" {
                res.push('-');
            }
        } else {
            res.push_str(if sign == "-" { " - " } else { " + " });
        }
        let power = match k {
            0 => String::new(),
            1 => "x".to_string(),
            _ => format!("x^{k}"),
        };
        res.push_str(&match (power.is_empty(), magnitude.as_str()) {
            (true, _) => magnitude.clone(),
            (false, "1") => power,
            (false, m) if is_sum(m) => format!("({m})*{power}"),
            (false, m) => format!("{m}*{power}"),
        });
    }
    if res.is_empty() {
        res.push('0');
    }
    res
}
