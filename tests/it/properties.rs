//! Self-checks of the engine on random small exact models (ENGINE.md section 7): power sums,
//! the secular residual in its strong form, Hermiticity and traces of the effective Hamiltonian,
//! agreement of the Bloch and Hermitian forms, and the numeric error scaling against exact
//! diagonalization. Generators stay small so the suite stays fast.

use cleave::check::evaluate;
use cleave::engine::{derive, Derivation, DeriveOptions};
use cleave::exact::{Field, RatFunc};
use cleave::linalg::DenseMatrix;
use cleave::model::Model;
use nalgebra::{DMatrix, SymmetricEigen};
use proptest::prelude::*;

/// A series in lambda: `s[k]` is the coefficient of `lambda^k`.
type Series = Vec<RatFunc>;

/// The product of two series, truncated to `len` coefficients.
fn series_mul(a: &[RatFunc], b: &[RatFunc], len: usize) -> Series {
    let mut res = vec![RatFunc::zero(); len];
    for (i, x) in a.iter().enumerate().take(len) {
        if x.is_zero() {
            continue;
        }
        for (j, y) in b.iter().enumerate().take(len - i) {
            if !y.is_zero() {
                res[i + j] += &(x.clone() * y);
            }
        }
    }
    res
}

/// The product of two matrix series, truncated to `len` coefficients.
fn matrix_series_mul(
    a: &[DenseMatrix<RatFunc>],
    b: &[DenseMatrix<RatFunc>],
    len: usize,
) -> Vec<DenseMatrix<RatFunc>> {
    let n = a[0].n_rows();
    let mut res = vec![DenseMatrix::zeros(n, n); len];
    for (i, x) in a.iter().enumerate().take(len) {
        for (j, y) in b.iter().enumerate().take(len - i) {
            res[i + j] = res[i + j].add(&x.mul(y));
        }
    }
    res
}

/// `tr A(lambda)^k` for `k = 1..=max_power`, each truncated to `len` coefficients.
fn trace_power_sums(series: &[DenseMatrix<RatFunc>], max_power: usize, len: usize) -> Vec<Series> {
    let mut power = series.to_vec();
    let mut res = Vec::new();
    for k in 1..=max_power {
        if k > 1 {
            power = matrix_series_mul(&power, series, len);
        }
        res.push(
            (0..len).map(|m| power.get(m).map_or_else(RatFunc::zero, |p| p.trace())).collect(),
        );
    }
    res
}

/// `H(lambda) = H0 + lambda V` as a matrix series.
fn hamiltonian_series(model: &Model) -> Vec<DenseMatrix<RatFunc>> {
    let h0 = DenseMatrix::from_rows(model.h0().to_dense());
    let v = DenseMatrix::from_rows(model.perturbations()[0].to_dense());
    vec![h0, v]
}

/// One branch of the whole spectrum: its series and multiplicity.
struct FlatBranch {
    energy: Series,
    multiplicity: usize,
}

/// Every branch of every model space, or `None` when some branch could not be computed to full
/// order (a secular matrix that does not split exactly).
fn all_branches(derivation: &Derivation) -> Option<Vec<FlatBranch>> {
    let n = derivation.order as usize + 1;
    let mut res = Vec::new();
    for space in &derivation.model_spaces {
        for b in &space.branches {
            if b.energy.len() != n || b.not_split.is_some() {
                return None;
            }
            res.push(FlatBranch { energy: b.energy.clone(), multiplicity: b.multiplicity });
        }
    }
    Some(res)
}

/// The first order at which two series differ.
fn first_difference(a: &[RatFunc], b: &[RatFunc]) -> Option<usize> {
    a.iter().zip(b).position(|(x, y)| x != y)
}

/// The determinant of a matrix of series (Leibniz formula; the models have at most 4 states),
/// truncated to `len` coefficients.
fn series_determinant(entries: &[Vec<Series>], len: usize) -> Series {
    let n = entries.len();
    let mut res = vec![RatFunc::zero(); len];
    for perm in permutations(n) {
        let mut term = vec![RatFunc::zero(); len];
        term[0] = RatFunc::one();
        for (row, &col) in perm.iter().enumerate() {
            term = series_mul(&term, &entries[row][col], len);
        }
        let odd = (0..n)
            .flat_map(|i| (i + 1..n).map(move |j| (i, j)))
            .filter(|&(i, j)| perm[i] > perm[j])
            .count()
            % 2
            == 1;
        for (acc, t) in res.iter_mut().zip(term) {
            if odd {
                *acc -= &t;
            } else {
                *acc += &t;
            }
        }
    }
    res
}

fn permutations(n: usize) -> Vec<Vec<usize>> {
    if n == 0 {
        return vec![Vec::new()];
    }
    let mut res = Vec::new();
    for p in permutations(n - 1) {
        for pos in 0..n {
            let mut q = p.clone();
            q.insert(pos, n - 1);
            res.push(q);
        }
    }
    res
}

/// A random Hermitian model on `levels(A, B, C[, D])`: small integer H0 diagonal entries (so
/// degeneracies are common) and a sparse V with entries among small rationals, `sqrt(2)`, `i`
/// and the parameter `g`; half of the models have no V inside the degenerate levels.
fn model_text() -> impl Strategy<Value = String> {
    let entry = prop_oneof![
        4 => Just("0"),
        2 => Just("1"),
        1 => Just("-1"),
        1 => Just("2"),
        1 => Just("1/2"),
        1 => Just("sqrt(2)"),
        1 => Just("i"),
        1 => Just("g"),
    ];
    (3usize..=4).prop_flat_map(move |n| {
        (
            proptest::collection::vec(0i32..=2, n),
            proptest::collection::vec(entry.clone(), n * (n + 1) / 2),
            any::<bool>(),
        )
            .prop_map(move |(h0, upper, clear_blocks)| {
                let labels = &["A", "B", "C", "D"][..n];
                let mut v = vec![vec![String::new(); n]; n];
                let mut it = upper.into_iter();
                for r in 0..n {
                    for c in r..n {
                        let x = it.next().expect("n(n+1)/2 entries");
                        let x = if r == c && x == "i" { "-1" } else { x };
                        // Without V inside the degenerate levels they split at second order
                        // or later, which exercises the deeper stages of the reduction.
                        let x = if clear_blocks && h0[r] == h0[c] { "0" } else { x };
                        v[r][c] = x.to_string();
                        v[c][r] = if x == "i" { "-i".to_string() } else { x.to_string() };
                    }
                }
                let rows = |m: &Vec<Vec<String>>| {
                    let rows: Vec<String> =
                        m.iter().map(|r| format!("[{}]", r.join(", "))).collect();
                    format!("[{}]", rows.join(", "))
                };
                let h0_rows: Vec<Vec<String>> = (0..n)
                    .map(|r| {
                        (0..n)
                            .map(|c| if r == c { h0[r].to_string() } else { "0".into() })
                            .collect()
                    })
                    .collect();
                format!(
                    "param g\nspace d = levels({})\nH0 = matrix(d, {})\nV = matrix(d, {})\n",
                    labels.join(", "),
                    rows(&h0_rows),
                    rows(&v)
                )
            })
    })
}

/// Loads and derives a generated model.
fn check_derive(text: &str, order: u32) -> (Model, Derivation) {
    let (model, _) = match cleave::load(text) {
        Ok(res) => res,
        Err(d) => panic!("generated model did not lower:\n{}\n{text}", d.render(text, "model.clv")),
    };
    let derivation = derive(&model, &DeriveOptions::new(order))
        .unwrap_or_else(|err| panic!("did not derive: {err}\n{text}"));
    (model, derivation)
}

/// Power sums and the strong secular residual over the whole spectrum; `false` when some branch
/// is incomplete and the checks do not apply.
fn check_spectrum_identities(model: &Model, derivation: &Derivation, text: &str) -> bool {
    let Some(branches) = all_branches(derivation) else { return false };
    let order = derivation.order as usize;
    let len = order + 1;
    let h = hamiltonian_series(model);
    let n = h[0].n_rows();
    let total: usize = branches.iter().map(|b| b.multiplicity).sum();
    assert_eq!(total, n, "multiplicities do not add up to the dimension\n{text}");
    // Power sums: sum_b mult_b E_b^k = tr H^k mod lambda^(N+1).
    let traces = trace_power_sums(&h, n, len);
    let mut powers: Vec<Series> = branches.iter().map(|b| b.energy.clone()).collect();
    for (k, trace) in traces.iter().enumerate() {
        if k > 0 {
            for (p, b) in powers.iter_mut().zip(&branches) {
                *p = series_mul(p, &b.energy, len);
            }
        }
        let mut sum = vec![RatFunc::zero(); len];
        for (p, b) in powers.iter().zip(&branches) {
            let mult = RatFunc::from_i64(b.multiplicity as i64);
            for (s, x) in sum.iter_mut().zip(p) {
                *s += &(x.clone() * &mult);
            }
        }
        assert_eq!(&sum, trace, "power sum k = {}\n{text}", k + 1);
    }
    // Strong secular residual: ord det(H - E_b) >= mult_b (N+1) + sum_{c != b} mult_c s_bc.
    let h0 = h[0].to_rows();
    let v = h[1].to_rows();
    for (b_idx, b) in branches.iter().enumerate() {
        let mut bound = b.multiplicity * (order + 1);
        for (c_idx, c) in branches.iter().enumerate() {
            if c_idx != b_idx {
                let s = first_difference(&b.energy, &c.energy)
                    .unwrap_or_else(|| panic!("two branches with one series\n{text}"));
                bound += c.multiplicity * s;
            }
        }
        let entries: Vec<Vec<Series>> = (0..n)
            .map(|r| {
                (0..n)
                    .map(|c| {
                        let mut s = vec![RatFunc::zero(); bound];
                        s[0] = h0[r][c].clone();
                        if bound > 1 {
                            s[1] = v[r][c].clone();
                        }
                        if r == c {
                            for (x, e) in s.iter_mut().zip(&b.energy) {
                                *x -= e;
                            }
                        }
                        s
                    })
                    .collect()
            })
            .collect();
        let det = series_determinant(&entries, bound);
        assert!(
            det.iter().all(Field::is_zero),
            "det(H - E_b) has order {:?} < {bound} for branch {b_idx}\n{text}",
            det.iter().position(|x| !x.is_zero())
        );
    }
    true
}

/// Per model space: `H_eff` Hermitian, its trace the sum of the branches, and the Bloch and
/// Hermitian forms with the same traces of powers (so the same eigenvalue series).
fn check_effective_hamiltonians(derivation: &Derivation, text: &str) {
    let len = derivation.order as usize + 1;
    for space in &derivation.model_spaces {
        let heff = &space.effective_hamiltonian;
        let d = space.basis.len();
        if space.normalized {
            for (k, m) in heff.iter().enumerate() {
                assert_eq!(&m.adjoint(), m, "H_eff^({k}) is not Hermitian\n{text}");
            }
        }
        let complete = space.branches.iter().all(|b| b.energy.len() == len);
        if complete {
            for (k, m) in heff.iter().enumerate() {
                let mut sum = RatFunc::zero();
                for b in &space.branches {
                    sum += &(b.energy[k].clone() * &RatFunc::from_i64(b.multiplicity as i64));
                }
                assert_eq!(m.trace(), sum, "trace of H_eff^({k})\n{text}");
            }
        }
        let hermitian = trace_power_sums(heff, d, len);
        let bloch = trace_power_sums(&space.bloch_hamiltonian, d, len);
        assert_eq!(hermitian, bloch, "Bloch and Hermitian forms differ in spectrum\n{text}");
    }
}

/// Eigenvalues of a complex Hermitian matrix through its real symmetric embedding
/// `[[A, -B], [B, A]]`, whose spectrum is that of `A + iB`, each value twice.
fn hermitian_eigenvalues(re: &DMatrix<f64>, im: &DMatrix<f64>) -> Vec<f64> {
    let n = re.nrows();
    let big = DMatrix::from_fn(2 * n, 2 * n, |r, c| match (r < n, c < n) {
        (true, true) => re[(r, c)],
        (true, false) => -im[(r, c - n)],
        (false, true) => im[(r - n, c)],
        (false, false) => re[(r - n, c - n)],
    });
    let mut values: Vec<f64> = SymmetricEigen::new(big).eigenvalues.iter().copied().collect();
    values.sort_by(f64::total_cmp);
    values.into_iter().step_by(2).collect()
}

/// The numeric check: at `g = g_value` the error of every branch against exact diagonalization
/// falls at least like `lambda^(N+1)`: the log-log slope over the two smallest `lambda` whose
/// error is above the floating-point floor exceeds N + 1/2. Returns what went wrong.
fn check_error_scaling(model: &Model, derivation: &Derivation, g_value: f64) -> Result<(), String> {
    let Some(branches) = all_branches(derivation) else { return Ok(()) };
    let order = derivation.order as usize;
    // The parameter (if any) at g_value, then the numeric values of any algebraic roots.
    let mut params: Vec<f64> = model.params().iter().map(|_| g_value).collect();
    params.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
    let num = |x: &RatFunc| evaluate(x, &params).expect("no pole at a generic g");
    let to_matrices = |op: &cleave::model::Operator| {
        let rows = op.to_dense();
        let n = rows.len();
        let re = DMatrix::from_fn(n, n, |r, c| num(&rows[r][c]).0);
        let im = DMatrix::from_fn(n, n, |r, c| num(&rows[r][c]).1);
        (re, im)
    };
    let (h0_re, h0_im) = to_matrices(model.h0());
    let (v_re, v_im) = to_matrices(&model.perturbations()[0]);
    let lambdas = [1e-2, 5e-3, 2.5e-3, 1.25e-3];
    // errors[b][l]: the largest error of branch b's copies at lambdas[l].
    let mut errors = vec![[0.0f64; 4]; branches.len()];
    for (l, &lambda) in lambdas.iter().enumerate() {
        let exact = hermitian_eigenvalues(&(&h0_re + &v_re * lambda), &(&h0_im + &v_im * lambda));
        let mut approx: Vec<(f64, usize)> = Vec::new();
        for (b_idx, b) in branches.iter().enumerate() {
            let value: f64 = b.energy.iter().rev().fold(0.0, |acc, c| acc * lambda + num(c).0);
            approx.extend(std::iter::repeat((value, b_idx)).take(b.multiplicity));
        }
        approx.sort_by(|x, y| x.0.total_cmp(&y.0));
        for ((value, b_idx), e) in approx.iter().zip(&exact) {
            errors[*b_idx][l] = errors[*b_idx][l].max((value - e).abs());
        }
    }
    for (b_idx, err) in errors.iter().enumerate() {
        let valid: Vec<usize> = (0..lambdas.len()).filter(|&l| err[l] > 1e-13).collect();
        if let [.., l1, l2] = valid[..] {
            let slope = (err[l1] / err[l2]).ln() / (lambdas[l1] / lambdas[l2]).ln();
            if slope < order as f64 + 0.5 {
                return Err(format!(
                    "branch {b_idx}: error slope {slope:.2} < N + 1/2 = {} (errors {err:?} at \
                     lambda {lambdas:?}) at g = {g_value}",
                    order as f64 + 0.5
                ));
            }
        } else if err[0] > 1e-6 {
            return Err(format!("branch {b_idx}: errors {err:?} at g = {g_value}"));
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(32))]

    #[test]
    fn exact_self_checks_hold_on_random_models(text in model_text(), order in 2u32..=4) {
        let (model, derivation) = check_derive(&text, order);
        // Branches written with roots of a cubic (root(P, k) symbols) satisfy these identities only
        // modulo the relations between the roots, which exact equality of rational functions does
        // not see; the numeric property below covers them.
        if derivation.roots.is_empty() {
            check_effective_hamiltonians(&derivation, &text);
            check_spectrum_identities(&model, &derivation, &text);
        }
    }


    /// Every output of a random model is written without a panic, and the numeric check samples
    /// every branch: the whole pipeline after the engine, on inputs nobody chose.
    #[test]
    fn every_output_is_written(text in model_text(), order in 1u32..=3) {
        let (model, derivation) = check_derive(&text, order);
        let at = vec![("g".to_string(), cleave::exact::Rational::ratio(1, 3).expect("3 != 0"))];
        let report = cleave::emit::report(&model, &derivation, "model.clv", &at);
        let has_space = report.contains("Model space 1");
        prop_assert!(has_space, "no model space in the report");
        let json = cleave::emit::json(&model, &derivation);
        prop_assert!(serde_json::from_str::<serde_json::Value>(&json).is_ok());
        let options = cleave::emit::LatexOptions { standalone: true, at: at.clone() };
        let latex = cleave::emit::latex(&model, &derivation, "model.clv", &options);
        let closes = latex.ends_with("\\end{document}\n");
        prop_assert!(closes, "the standalone document is not closed");
        let has_entry = cleave::emit::rust(&model, &derivation, "model.clv").contains("pub fn energy(");
        prop_assert!(has_entry, "no energy entry point in the Rust module");
        // Whether each slope passes is the business of `error_falls_like_the_next_order`, which
        // allows for a coefficient that nearly cancels the next one at a given parameter value.
        let checked = cleave::check::verify(&model, &derivation, &cleave::check::CheckOptions { at, order: None });
        let sampled = !checked.branches.is_empty()
            && checked.branches.iter().all(|b| b.skipped.is_none() && !b.precise.is_empty());
        prop_assert!(sampled, "{text}\n{checked:?}");
    }

    /// A coefficient of order N+1 that happens to nearly vanish at the chosen g delays the
    /// asymptotic slope, so the check fails only when it fails at two independent values of g:
    /// a wrong coefficient is a non-zero function of g and fails at both.
    #[test]
    fn error_falls_like_the_next_order(
        text in model_text(),
        order in 2u32..=4,
        g_values in (0.5f64..2.0, 0.5f64..2.0),
    ) {
        let (model, derivation) = check_derive(&text, order);
        let first = check_error_scaling(&model, &derivation, g_values.0);
        let second = check_error_scaling(&model, &derivation, g_values.1);
        if let (Err(a), Err(b)) = (first, second) {
            // A model that does not depend on g gives the same numbers at both values, so a next
            // coefficient that nearly cancels the one after it (the error changing sign inside
            // the window) shows twice. There the check's own comparison decides: it derives
            // further orders and measures the error against what they predict, in extended
            // precision where f64 cannot resolve it.
            let checked = cleave::check::run(
                &model,
                &cleave::check::CheckOptions { at: Vec::new(), order: Some(order) },
            );
            let passed = checked.as_ref().is_ok_and(|(_, v)| v.n_failed() == 0 && v.n_checked() > 0);
            if model.is_symbolic() || !passed {
                panic!("{a}\n{b}\n{text}");
            }
        }
    }
}

/// The largest `|((H(lambda) - E(lambda)) psi(lambda))_i|` over the product basis, with every
/// value evaluated at `symbols` (the parameters, then the algebraic roots).
fn state_residual(
    model: &Model,
    energy: &[RatFunc],
    state: &[cleave::linalg::SparseVec<RatFunc>],
    lambda: f64,
    symbols: &[f64],
) -> f64 {
    let num = |x: &RatFunc| evaluate(x, symbols).expect("finite at these values");
    let n = model.basis().dimension();
    // psi(lambda) as complex components.
    let mut psi = vec![(0.0, 0.0); n];
    for (k, v) in state.iter().enumerate() {
        let w = lambda.powi(k as i32);
        for (i, x) in v.entries() {
            let (re, im) = num(x);
            psi[*i].0 += w * re;
            psi[*i].1 += w * im;
        }
    }
    let e: f64 = energy.iter().rev().fold(0.0, |acc, c| acc * lambda + num(c).0);
    let mut res: Vec<(f64, f64)> = psi.iter().map(|(re, im)| (-e * re, -e * im)).collect();
    let terms = std::iter::once(model.h0()).chain(model.perturbations());
    for (k, op) in terms.enumerate() {
        let w = lambda.powi(k as i32);
        for (r, c, x) in op.triplets() {
            let (a, b) = num(x);
            let (p, q) = psi[c];
            res[r].0 += w * (a * p - b * q);
            res[r].1 += w * (a * q + b * p);
        }
    }
    res.iter().map(|(re, im)| re.hypot(*im)).fold(0.0, f64::max)
}

/// Every reported state satisfies the eigenvalue equation to its order: the residual
/// `(H(lambda) - E(lambda)) psi(lambda)` of a state determined to order K falls like
/// `lambda^(K+1)` (checked by the ratio at two small lambda), or sits at rounding level.
fn check_states(model: &Model, derivation: &Derivation, g_value: f64) -> Result<(), String> {
    let mut symbols: Vec<f64> = model.params().iter().map(|_| g_value).collect();
    symbols.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
    for space in &derivation.model_spaces {
        for b in &space.branches {
            let Some(state) = &b.state else { continue };
            let k = state.determined_to as i32;
            let (l1, l2) = (4e-3, 2e-3);
            let r1 = state_residual(model, &b.energy, &state.coefficients, l1, &symbols);
            let r2 = state_residual(model, &b.energy, &state.coefficients, l2, &symbols);
            if r1 < 1e-11 && r2 < 1e-11 {
                continue;
            }
            let slope = (r1 / r2).ln() / (l1 / l2).ln();
            if slope < f64::from(k + 1) - 0.3 {
                return Err(format!("residual slope {slope:.2} < {} (r = {r1:e}, {r2:e})", k + 1));
            }
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    /// States of random models solve the eigenvalue equation to the order they are reported.
    #[test]
    fn states_solve_the_eigenvalue_equation(text in model_text(), order in 1u32..=3, g in 0.5f64..2.0) {
        let (model, derivation) = check_derive(&text, order);
        if let Err(why) = check_states(&model, &derivation, g) {
            panic!("{why}\n{text}");
        }
    }
}

/// The states of the bundled examples, including the three-dot example whose states carry
/// `root(P, k)`, solve the eigenvalue equation to the order they are reported.
#[test]
fn example_states_solve_the_eigenvalue_equation() {
    for name in
        ["dot_trimer", "spin_orbit_field", "qubit_resonator", "axial_spin", "lambda_three_level"]
    {
        let path = format!("{}/examples/{name}.clv", env!("CARGO_MANIFEST_DIR"));
        let text = std::fs::read_to_string(path).expect("example exists");
        let (model, derivation) = check_derive(&text, 3);
        assert!(derivation
            .model_spaces
            .iter()
            .flat_map(|s| &s.branches)
            .any(|b| b.state.is_some()));
        if let Err(why) = check_states(&model, &derivation, 0.7) {
            panic!("{name}: {why}");
        }
    }
}
