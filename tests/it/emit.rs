//! The LaTeX and Rust emitters: snapshots of their output, standalone documents compiled with
//! pdflatex, and emitted Rust compiled with rustc and checked against cleave's own evaluation.

use std::path::{Path, PathBuf};
use std::process::Command;

use cleave::engine::{self, Derivation, DeriveOptions};
use cleave::exact::Rational;
use cleave::model::Model;

/// Snapshots `text` under the name of the running test (the checks below are helpers, so the
/// macro's own naming would use the helper's name).
fn snapshot(text: String) {
    let thread = std::thread::current();
    let test = thread.name().and_then(|n| n.rsplit("::").next()).unwrap_or("unnamed").to_string();
    let _guard = crate::support::snapshot_settings().bind_to_scope();
    insta::assert_snapshot!(test, text);
}

/// Loads model text and derives it to its own order (or 2, the contract's default).
fn derive(text: &str) -> (Model, Derivation) {
    let (model, _) = cleave::load(text).expect("test models are valid");
    let order = model.order().unwrap_or(2);
    let derivation = engine::derive(&model, &DeriveOptions::new(order)).expect("derivable");
    (model, derivation)
}

/// Snapshots the LaTeX fragment of `text`, with numbers at `at` (`name = p/q` pairs).
fn check_latex(text: &str, at: &[(&str, i64, i64)]) {
    let (model, derivation) = derive(text);
    let at = at
        .iter()
        .map(|(n, p, q)| (n.to_string(), Rational::ratio(*p, *q).expect("non-zero denominator")))
        .collect();
    let options = cleave::emit::LatexOptions { standalone: false, at };
    snapshot(cleave::emit::latex(&model, &derivation, "model.clv", &options));
}

#[test]
fn latex_numeric_oscillator() {
    check_latex(
        r#"
space q = oscillator(12)
let x = (q.lower + q.raise) / sqrt(2)
H0 = q.n + 1/2
V = x^4
focus 1/2
order 3
"#,
        &[],
    );
}

#[test]
fn latex_degenerate_spin_with_numbers() {
    check_latex(
        r#"
param D > 0, B
space s = spin(1)
H0 = D * s.z^2
V = B * s.x
order 4
"#,
        &[("D", 1, 1), ("B", 1, 10)],
    );
}

#[test]
fn latex_symbols_and_quasi_degenerate_space() {
    check_latex(
        r#"
param w_c, g2, Omega, eps
space a = levels(G1, G2, E)
H0 = 7/4 * |G2><G2| + 10 * |E><E|
V = g2 * (|E><G1| + |G1><E|) + Omega * (|E><G2| + |G2><E|) + w_c * eps * |G1><G1|
focus 0, 7/4
order 2
"#,
        &[],
    );
}

#[test]
fn latex_wide_table_is_transposed() {
    check_latex(
        r#"
param g, t
space d = levels(A, B, C)
H0 = |C><C|
V = g * (|A><C| + |C><A|) + g * (|B><C| + |C><B|) + t * (|A><B| + |B><A|)
focus 0
order 6
"#,
        &[],
    );
}

// ---------------------------------------------------------------------------------------------
// Standalone documents through pdflatex.

/// The example models of the repository plus a few shapes the examples lack.
fn latex_corpus() -> Vec<(String, String)> {
    let mut res = Vec::new();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map(|entries| entries.filter_map(|e| e.ok().map(|e| e.path())).collect())
        .unwrap_or_default();
    paths.retain(|p| p.extension().is_some_and(|e| e == "clv"));
    paths.sort();
    for path in paths {
        let text = std::fs::read_to_string(&path).expect("example readable");
        // A path as the display name, as the command line gives it, so long names are exercised.
        let name = path.to_string_lossy().to_string();
        res.push((name, text));
    }
    // Many single-state model spaces: many tables in a row must not stall the float queue.
    res.push((
        "many_spaces_&_50%.clv".to_string(),
        "space q = oscillator(24)\nlet x = (q.lower + q.raise) / sqrt(2)\nH0 = q.n + 1/2\nV = x^4\norder 2\n"
            .to_string(),
    ));
    res.push(("not_split.clv".to_string(), NOT_SPLIT.to_string()));
    // Issue #9, finding 10: a 16-state effective Hamiltonian is listed by its non-zero entries,
    // and a transmon coupled to a resonator has a fourth-order numerator too long for a line
    // (it overflowed by about 1000pt), and so are its state corrections.
    res.push((
        "sixteen_states.clv".to_string(),
        "param J, B, D > 0\nspace a = spin(3/2)\nspace b = spin(3/2)\nH0 = D + 0 * a.z\n\
         V = J * (a.x * b.x + a.y * b.y + a.z * b.z) + B * (a.z + b.x)\norder 2\n"
            .to_string(),
    ));
    res.push((
        "transmon_energies.clv".to_string(),
        "param wq > 0, wr > 0, alpha, g\nspace b = oscillator(4)\nspace a = oscillator(8)\n\
         H0 = wq * b.n + alpha / 2 * b.n * (b.n - 1) + wr * a.n\n\
         V = g * (b.raise + b.lower) * (a.raise + a.lower)\nfocus wq\norder 4\n"
            .to_string(),
    ));
    res.push(("cut_oscillator.clv".to_string(), CUT_OSCILLATOR.to_string()));
    // Long symbolic coefficients and a wide table.
    res.push((
        "long_terms.clv".to_string(),
        "param g, t, u\nspace d = levels(A, B, C, E)\nH0 = |C><C| + 2 * |E><E|\n\
         V = g * (|A><C| + |C><A|) + t * (|B><C| + |C><B|) + u * (|A><E| + |E><A|) + g * (|B><E| + |E><B|)\n\
         focus 0\norder 5\n"
            .to_string(),
    ));
    res
}

#[test]
fn latex_documents_compile_with_pdflatex() {
    let Some(pdflatex) = find_tool("pdflatex") else {
        if std::env::var_os("CI").is_some() {
            panic!("pdflatex is not installed, and CI requires the LaTeX documents to compile");
        }
        eprintln!(
            "\n!!!!!!!! pdflatex NOT FOUND: the LaTeX documents were NOT compiled. Install \
             texlive-latex-base and texlive-latex-recommended to run this check. !!!!!!!!\n"
        );
        return;
    };
    for (name, text) in latex_corpus() {
        let (model, derivation) = derive(&text);
        let options = cleave::emit::LatexOptions {
            standalone: true,
            at: derivation
                .parameters
                .iter()
                .map(|p| (p.clone(), Rational::ratio(3, 10).expect("non-zero")))
                .collect(),
        };
        let document = cleave::emit::latex(&model, &derivation, &name, &options);
        let dir = tempfile::tempdir().expect("temp dir");
        std::fs::write(dir.path().join("doc.tex"), &document).expect("write");
        let output = Command::new(&pdflatex)
            .args(["-halt-on-error", "-interaction=nonstopmode", "doc.tex"])
            .current_dir(dir.path())
            .output()
            .expect("pdflatex runs");
        let log = String::from_utf8_lossy(&output.stdout);
        assert!(
            output.status.success(),
            "{name} does not compile:\n{log}\n--- document ---\n{document}"
        );
        assert!(dir.path().join("doc.pdf").exists(), "{name}: no PDF");
        // An overfull box of more than a few points means a line or table ran into the margin.
        let overfull: Vec<&str> = log
            .lines()
            .filter(|l| l.starts_with("Overfull \\hbox"))
            .filter(|l| overfull_points(l) > 3.0)
            .collect();
        assert!(
            overfull.is_empty(),
            "{name} overflows the page:\n{}\n{document}",
            overfull.join("\n")
        );
    }
}

/// The `12.3pt` of an `Overfull \hbox (12.3pt too wide)` line.
fn overfull_points(line: &str) -> f64 {
    line.split_once('(')
        .and_then(|(_, rest)| rest.split_once("pt"))
        .and_then(|(number, _)| number.parse().ok())
        .unwrap_or(0.0)
}

/// The path of a program on `PATH`, if it is there.
fn find_tool(name: &str) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path).map(|dir| dir.join(name)).find(|p| p.is_file())
}

// ---------------------------------------------------------------------------------------------
// Emitted Rust through rustc.

/// Emits `text`'s Rust module, snapshots it, compiles it as a library with warnings denied, runs
/// a wrapper that prints every branch energy and every effective-Hamiltonian entry at `points`
/// (`(lambda, parameter values)`), and compares them with `check::evaluate` of the exact series.
fn check_rust(text: &str, points: &[(f64, &[f64])]) {
    let (model, derivation) = derive(text);
    let code = cleave::emit::rust(&model, &derivation, "model.clv");
    snapshot(code.clone());
    compile_and_compare(&derivation, &code, points);
}

/// Compiles `code` with warnings denied, runs it at `points` and compares with the exact series.
fn compile_and_compare(derivation: &Derivation, code: &str, points: &[(f64, &[f64])]) {
    assert_eq!(points.len(), 3, "three parameter points per model");
    let dir = tempfile::tempdir().expect("temp dir");
    let lib = dir.path().join("series.rs");
    std::fs::write(&lib, code).expect("write module");
    let compile = Command::new("rustc")
        .args([
            "--edition",
            "2021",
            "-D",
            "warnings",
            "--crate-type",
            "lib",
            "--crate-name",
            "series",
        ])
        .arg("--out-dir")
        .arg(dir.path())
        .arg(&lib)
        .output()
        .expect("rustc runs");
    assert!(
        compile.status.success(),
        "emitted module does not compile cleanly:\n{}\n{code}",
        String::from_utf8_lossy(&compile.stderr)
    );
    // Issue #9, finding 12: the same module pulled in with `include!` inside a module, as a
    // build script's output is, compiles too (no inner doc comments).
    std::fs::write(
        dir.path().join("included.rs"),
        "pub mod series {\n    include!(\"series.rs\");\n}\n",
    )
    .expect("write the includer");
    let included = Command::new("rustc")
        .args(["--edition", "2021", "-D", "warnings", "--crate-type", "lib"])
        .args(["--crate-name", "included", "--out-dir"])
        .arg(dir.path())
        .arg(dir.path().join("included.rs"))
        .output()
        .expect("rustc runs");
    assert!(
        included.status.success(),
        "the module does not compile under include!:\n{}",
        String::from_utf8_lossy(&included.stderr)
    );
    let n_params = derivation.parameters.len();
    let mut main = String::from("fn main() {\n");
    for (lambda, params) in points {
        assert_eq!(params.len(), n_params);
        let list: Vec<String> = params.iter().map(|p| format!("{p:?}")).collect();
        main.push_str(&format!(
            "    let lambda = {lambda:?};\n    let p: [f64; {n_params}] = [{}];\n",
            list.join(", ")
        ));
        main.push_str("    for i in 0..series::BRANCHES {\n        println!(\"{:e}\", series::energy(i, lambda, &p));\n    }\n");
        for (s, _) in derivation.model_spaces.iter().enumerate() {
            let args: Vec<String> = (0..n_params).map(|k| format!(", p[{k}]")).collect();
            main.push_str(&format!(
                "    for row in series::effective_hamiltonian_space{}(lambda{}) {{\n        for (re, im) in row {{\n            println!(\"{{:e}} {{:e}}\", re, im);\n        }}\n    }}\n",
                s + 1,
                args.concat()
            ));
        }
    }
    main.push_str("}\n");
    std::fs::write(dir.path().join("main.rs"), &main).expect("write wrapper");
    let build = Command::new("rustc")
        .args(["--edition", "2021", "--extern"])
        .arg(format!("series={}", dir.path().join("libseries.rlib").display()))
        .arg("-o")
        .arg(dir.path().join("wrapper"))
        .arg(dir.path().join("main.rs"))
        .output()
        .expect("rustc runs");
    assert!(build.status.success(), "wrapper: {}", String::from_utf8_lossy(&build.stderr));
    let run = Command::new(dir.path().join("wrapper")).output().expect("wrapper runs");
    assert!(run.status.success());
    let stdout = String::from_utf8_lossy(&run.stdout);
    let mut values = stdout
        .lines()
        .flat_map(|l| l.split_whitespace())
        .map(|v| v.parse::<f64>().unwrap_or_else(|_| panic!("not a number: {v}")));
    let mut next = || values.next().expect("enough values printed");
    for (lambda, given) in points {
        // Values mention the parameters, then the algebraic roots as further symbols.
        let mut params = given.to_vec();
        params.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
        let params = &params;
        for space in &derivation.model_spaces {
            for branch in &space.branches {
                let exact = series_value(&branch.energy, *lambda, params).0;
                assert_close(next(), exact, "energy");
            }
        }
        for space in &derivation.model_spaces {
            let d = space.basis.len();
            for a in 0..d {
                for b in 0..d {
                    let coeffs: Vec<_> =
                        space.effective_hamiltonian.iter().map(|m| m.get(a, b).clone()).collect();
                    let (re, im) = series_value(&coeffs, *lambda, params);
                    assert_close(next(), re, "H_eff re");
                    assert_close(next(), im, "H_eff im");
                }
            }
        }
    }
}

/// `sum_k lambda^k coeffs[k]` by cleave's own evaluation of each exact coefficient.
fn series_value(coeffs: &[cleave::exact::RatFunc], lambda: f64, params: &[f64]) -> (f64, f64) {
    let mut acc = (0.0, 0.0);
    for (k, c) in coeffs.iter().enumerate() {
        let (re, im) = cleave::check::evaluate(c, params).expect("finite at the test points");
        let scale = lambda.powi(k as i32);
        acc.0 += re * scale;
        acc.1 += im * scale;
    }
    acc
}

fn assert_close(emitted: f64, exact: f64, what: &str) {
    let scale = emitted.abs().max(exact.abs()).max(1e-300);
    assert!(
        (emitted - exact).abs() <= 1e-12 * scale || (emitted - exact).abs() < 1e-300,
        "{what}: emitted {emitted:e}, exact {exact:e}"
    );
}

#[test]
fn rust_numeric_oscillator() {
    check_rust(
        r#"
space q = oscillator(24)
let x = (q.lower + q.raise) / sqrt(2)
H0 = q.n + 1/2
V = 3/40 * x^4 + x^3 / 5
focus 1/2
order 4
"#,
        &[(0.01, &[]), (0.05, &[]), (0.1, &[])],
    );
}

#[test]
fn rust_symbolic_qubit_resonator() {
    check_rust(
        r#"
param w > 0, delta > 0, g
space s = spin(1/2)
space r = oscillator(6)
H0 = w * r.n + (w + delta) * s.z
V = g * (s.up * r.lower + s.down * r.raise)
focus -1/2*w - 1/2*delta
order 4
"#,
        &[(0.1, &[1.0, 0.3, 0.2]), (0.2, &[2.5, 0.7, -0.4]), (0.05, &[0.8, 1.9, 1.3])],
    );
}

#[test]
fn rust_degenerate_spin() {
    check_rust(
        r#"
param D > 0, B
space s = spin(1)
H0 = D * s.z^2
V = B * s.x
order 4
"#,
        &[(0.1, &[1.0, 0.5]), (0.2, &[2.0, -0.3]), (0.05, &[0.7, 1.1])],
    );
}

#[test]
fn rust_quasi_degenerate_levels() {
    check_rust(
        r#"
param wp, ws
space a = levels(G1, G2, E)
H0 = 7/4 * |G2><G2| + 10 * |E><E|
V = wp * (|E><G1| + |G1><E|) + ws * (|E><G2| + |G2><E|) + i * wp * (|G1><G2| - |G2><G1|)
focus 0, 7/4
order 3
"#,
        &[(0.1, &[1.0, 0.5]), (0.3, &[0.4, -1.2]), (0.02, &[2.0, 3.0])],
    );
}

/// Rust keywords as parameter names (`lambda` itself is refused since issue 12).
#[test]
fn rust_keyword_parameters() {
    check_rust(
        r#"
param type, match, Delta, lam
space s = spin(1/2)
H0 = Delta * s.z
V = type * s.x + match * s.z + lam * type * s.y
order 2
"#,
        &[
            (0.1, &[0.3, 0.2, 1.5, 0.7]),
            (0.2, &[-0.4, 0.1, 2.0, 0.3]),
            (0.05, &[1.0, -1.0, 0.9, 0.5]),
        ],
    );
}

#[test]
fn rust_of_every_example_compiles_and_agrees() {
    for (name, text) in latex_corpus() {
        let (model, derivation) = derive(&text);
        let code = cleave::emit::rust(&model, &derivation, &name);
        // Positive values everywhere, since some examples declare `param U > 0`.
        let n = derivation.parameters.len();
        let values: Vec<Vec<f64>> = (0..3)
            .map(|point| (0..n).map(|k| 0.4 + 0.3 * point as f64 + 0.17 * k as f64).collect())
            .collect();
        let points: Vec<(f64, &[f64])> =
            values.iter().zip([0.01, 0.03, 0.05]).map(|(v, l)| (l, v.as_slice())).collect();
        compile_and_compare(&derivation, &code, &points);
    }
}

#[test]
fn rust_radicals_and_imaginary_couplings() {
    check_rust(
        r#"
param g
space d = levels(A, B, C)
H0 = |C><C|
V = sqrt(2) * g * (|A><B| + |B><A|) + g * (|A><C| + |C><A|) + i * sqrt(3) * g * (|B><C| - |C><B|)
focus 0
order 3
"#,
        &[(0.1, &[1.0]), (0.2, &[-0.6]), (0.05, &[2.0])],
    );
}

#[test]
fn rust_group_that_cannot_be_split() {
    check_rust(NOT_SPLIT, &[(0.1, &[1.0, 2.0]), (0.2, &[0.5, 1.5]), (0.05, &[2.0, 0.25])]);
}

#[test]
fn latex_group_that_cannot_be_split() {
    check_latex(NOT_SPLIT, &[]);
}

/// A degenerate level whose first-order secular matrix `[[a, b], [b, -a]]` has the eigenvalues
/// `±sqrt(a^2 + b^2)`, which are not rational functions of the parameters.
const NOT_SPLIT: &str = r#"
param a, b
space d = levels(A, B, E)
H0 = |E><E|
V = a * (|A><A| - |B><B|) + b * (|A><B| + |B><A|) + |A><E| + |E><A|
focus 0
order 3
"#;

#[test]
fn rust_cubic_roots_become_constants() {
    check_rust(CUBIC, &[(0.1, &[]), (0.2, &[]), (0.05, &[])]);
}

#[test]
fn latex_cubic_roots_are_defined() {
    check_latex(CUBIC, &[]);
}

/// A degenerate level whose first-order secular polynomial `x^3 - x^2 - 2x + 1` is irreducible:
/// its branches are written with `root(P, k)`.
const CUBIC: &str = r#"
space d = levels(A, B, C, E)
H0 = |E><E|
V = |A><B| + |B><A| + |B><C| + |C><B| + |C><C| + |A><E| + |E><A|
focus 0
order 3
"#;

#[test]
fn rust_truncated_oscillator_is_cautioned() {
    check_rust(CUT_OSCILLATOR, &[(0.01, &[]), (0.02, &[]), (0.04, &[])]);
}

#[test]
fn latex_truncated_oscillator_is_noted() {
    check_latex(CUT_OSCILLATOR, &[]);
}

/// An oscillator cut so low that the wave operator reaches its top states.
const CUT_OSCILLATOR: &str = r#"
space q = oscillator(8)
let x = (q.lower + q.raise) / sqrt(2)
H0 = q.n + 1/2
V = x^4
focus 1/2
order 4
"#;

/// Every exact value the JSON prints (branch energies, effective Hamiltonians, unperturbed
/// energies) reads back through the model language as the same value, factored or not.
#[test]
fn printed_values_parse_back() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/examples");
    let mut paths: Vec<_> = std::fs::read_dir(dir)
        .expect("examples folder")
        .filter_map(|e| Some(e.ok()?.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "clv"))
        .collect();
    paths.sort();
    for path in paths {
        let text = std::fs::read_to_string(&path).expect("readable example");
        let (model, _) = cleave::load(&text).expect("valid example");
        let derivation = engine::derive(&model, &DeriveOptions::new(4)).expect("examples derive");
        if !derivation.roots.is_empty() {
            // root(P, k) is output-only syntax.
            continue;
        }
        let json: serde_json::Value =
            serde_json::from_str(&cleave::emit::json(&model, &derivation)).expect("valid JSON");
        let names = derivation.parameters.clone();
        let read = |v: &serde_json::Value| {
            cleave::lower::eval_scalar(v.as_str().expect("a string"), &names)
                .unwrap_or_else(|d| panic!("{}: {v} does not parse: {}", path.display(), d.message))
        };
        for (space, space_json) in
            derivation.model_spaces.iter().zip(json["model_spaces"].as_array().unwrap())
        {
            for (e, e_json) in
                space.unperturbed.iter().zip(space_json["unperturbed"].as_array().unwrap())
            {
                assert_eq!(&read(e_json), e, "{}", path.display());
            }
            for (b, b_json) in space.branches.iter().zip(space_json["branches"].as_array().unwrap())
            {
                for (c, c_json) in b.energy.iter().zip(b_json["energy"].as_array().unwrap()) {
                    assert_eq!(&read(c_json), c, "{}: {c_json}", path.display());
                }
            }
            for (m, m_json) in space
                .effective_hamiltonian
                .iter()
                .zip(space_json["effective_hamiltonian"].as_array().unwrap())
            {
                for (row, row_json) in m.to_rows().iter().zip(m_json.as_array().unwrap()) {
                    for (x, x_json) in row.iter().zip(row_json.as_array().unwrap()) {
                        assert_eq!(&read(x_json), x, "{}: {x_json}", path.display());
                    }
                }
            }
        }
    }
}

/// The files under `docs/` that README shows are what cleave writes today.
#[test]
fn docs_show_current_output() {
    let text = include_str!("../../examples/spin_orbit_field.clv");
    let (model, _) = cleave::load(text).expect("valid example");
    let order = model.order().unwrap_or(2);
    let derivation = engine::derive(&model, &DeriveOptions::new(order)).expect("derivable");
    let name = "examples/spin_orbit_field.clv";
    let report = cleave::emit::report(&model, &derivation, name, &Vec::new());
    let rust = cleave::emit::rust(&model, &derivation, name);
    assert_eq!(report, include_str!("../../docs/spin_orbit_field_report.txt"));
    assert_eq!(rust, include_str!("../../docs/spin_orbit_field.rs"));
}

/// Symbolic energies are typeset factored over the unperturbed energy differences,
/// `\frac{g^{4} (w + \delta)}{w (2 w + \delta)^{3}}`, where that is shorter than the expanded
/// quotient.
#[test]
fn latex_factors_over_energy_differences() {
    check_latex(include_str!("../../examples/qubit_resonator.clv"), &[]);
}
