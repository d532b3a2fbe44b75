//! The engine against values from outside the project: published coefficients, textbook formulas
//! and series expansions of exactly solvable problems, plus bad input and its messages.
//! Each test is a minimal model and one call of `check_derive`; expected series are written as
//! exact strings in the model's own scalar syntax.

use cleave::engine::{derive, Branch, Derivation, DeriveOptions, EngineError, ModelSpace};
use cleave::exact::{Field, RatFunc, Symbols};
use cleave::model::Model;
use num_bigint::BigInt;
use num_rational::BigRational;

/// Loads `text` and derives it to `order`; the model comes back for tests that need its matrices.
pub(crate) fn check_derive(text: &str, order: u32) -> (Model, Derivation) {
    let (model, _) = match cleave::load(text) {
        Ok(res) => res,
        Err(d) => panic!("did not lower:\n{}", d.render(text, "model.clv")),
    };
    let derivation = match derive(&model, &DeriveOptions::new(order)) {
        Ok(res) => res,
        Err(err) => panic!("did not derive: {err}"),
    };
    (model, derivation)
}

/// Reads exact values printed in the model language, with the derivation's parameter names.
fn values(derivation: &Derivation, texts: &[&str]) -> Vec<RatFunc> {
    texts.iter().map(|t| value(derivation, t)).collect()
}

pub(crate) fn value(derivation: &Derivation, text: &str) -> RatFunc {
    cleave::lower::eval_scalar(text, &derivation.parameters)
        .unwrap_or_else(|d| panic!("bad expected value {text:?}:\n{}", d.render(text, "x")))
}

fn show(derivation: &Derivation, series: &[RatFunc]) -> String {
    let symbols = Symbols { names: &derivation.parameters };
    let parts: Vec<String> = series.iter().map(|c| c.display(symbols).to_string()).collect();
    format!("[{}]", parts.join(", "))
}

/// The one branch of `space` whose series is `energy`; fails listing every branch otherwise.
fn branch_with<'a>(
    derivation: &Derivation,
    space: &'a ModelSpace,
    energy: &[RatFunc],
) -> &'a Branch {
    let found: Vec<&Branch> = space.branches.iter().filter(|b| b.energy == energy).collect();
    if found.len() != 1 {
        let listed: Vec<String> = space
            .branches
            .iter()
            .map(|b| {
                format!(
                    "  {} mult {} split_at {:?}",
                    show(derivation, &b.energy),
                    b.multiplicity,
                    b.split_at
                )
            })
            .collect();
        panic!(
            "expected exactly one branch {}, found {}; the branches are\n{}",
            show(derivation, energy),
            found.len(),
            listed.join("\n")
        );
    }
    found[0]
}

/// Asserts that `space` has exactly the branches `expected`: (series, multiplicity, `split_at`).
fn assert_branches(
    derivation: &Derivation,
    space: &ModelSpace,
    expected: &[(Vec<RatFunc>, usize, Option<u32>)],
) {
    assert_eq!(space.branches.len(), expected.len(), "number of branches");
    for (energy, multiplicity, split_at) in expected {
        let branch = branch_with(derivation, space, energy);
        assert_eq!(
            branch.multiplicity,
            *multiplicity,
            "multiplicity of {}",
            show(derivation, energy)
        );
        assert_eq!(branch.split_at, *split_at, "split_at of {}", show(derivation, energy));
    }
}

/// The model space whose unperturbed energies are `energies` (written as strings).
fn space_at<'a>(derivation: &'a Derivation, energies: &[&str]) -> &'a ModelSpace {
    let wanted = values(derivation, energies);
    derivation
        .model_spaces
        .iter()
        .find(|s| s.unperturbed == wanted)
        .unwrap_or_else(|| panic!("no model space at {energies:?}"))
}

/// Coefficients of `lambda^k`, `k = 0..=n`, of `sqrt(a(lambda))`, where `a(lambda) = sum a_k
/// lambda^k` and `root` is the chosen square root of `a_0` (the branch of the closed form).
/// From `s^2 = a`: `s_n = (a_n - sum_{k=1..n-1} s_k s_{n-k}) / (2 s_0)`.
fn sqrt_series(radicand: &[RatFunc], root: RatFunc, n: usize) -> Vec<RatFunc> {
    assert_eq!(root.clone() * &root, radicand[0], "root is not a square root of a_0");
    let two_root_inv = (root.clone() + &root).inv().expect("non-zero a_0");
    let mut res = vec![root];
    for m in 1..=n {
        let mut acc = radicand.get(m).cloned().unwrap_or_else(RatFunc::zero);
        for k in 1..m {
            acc -= &(res[k].clone() * &res[m - k]);
        }
        res.push(acc * &two_root_inv);
    }
    res
}

/// `(p(lambda) + sign * sqrt(r(lambda))) / 2` to order `n`, for the two eigenvalues of a 2x2
/// block with trace `p` and discriminant `r`; `root` is `sqrt(r_0)` with the sign of the branch.
fn half_trace_plus_root(
    trace: &[RatFunc],
    radicand: &[RatFunc],
    root: RatFunc,
    n: usize,
) -> Vec<RatFunc> {
    let half = RatFunc::from_i64(2).inv().expect("2 is invertible");
    sqrt_series(radicand, root, n)
        .into_iter()
        .enumerate()
        .map(|(k, s)| (trace.get(k).cloned().unwrap_or_else(RatFunc::zero) + &s) * &half)
        .collect()
}

// ---------------------------------------------------------------------------------------------
// 1. Quartic anharmonic oscillator.

/// Ground-level coefficients of `H = p^2/2 + x^2/2 + g x^4` by an independent recursion.
///
/// With `psi = exp(-x^2/2) phi(x)` the eigenvalue equation becomes
/// `-phi''/2 + x phi' + g x^4 phi = (E - 1/2) phi`. Writing `phi = sum g^n phi_n`, `phi_0 = 1`,
/// `phi_n = sum_{k>=1} c_{n,k} x^(2k)` (no constant term: intermediate normalization) and
/// `E = 1/2 + sum g^n e_n`, and using `L x^(2k) = 2k x^(2k) - k(2k-1) x^(2k-2)` for
/// `L phi = -phi''/2 + x phi'`, the coefficient of `x^0` gives `e_n = -c_{n,1}` and that of
/// `x^(2k)`, `k >= 1`, gives
/// `2k c_{n,k} = (k+1)(2k+1) c_{n,k+1} - c_{n-1,k-2} + sum_{j=1..n-1} e_j c_{n-j,k}`,
/// solved from `k = 2n` down. This is the polynomial recursion of Bender & Wu, Phys. Rev. 184,
/// 1231 (1969), Sec. II, re-derived here (closed form) rather than copied.
fn quartic_ground_coefficients(n_max: usize) -> Vec<BigRational> {
    let zero = || BigRational::from_integer(BigInt::from(0));
    let int = |v: usize| BigRational::from_integer(BigInt::from(v));
    // c[n][k] for k = 0..=2n.
    let mut c: Vec<Vec<BigRational>> = vec![vec![int(1)]];
    let mut e = vec![BigRational::new(BigInt::from(1), BigInt::from(2))];
    for n in 1..=n_max {
        let top = 2 * n;
        let mut cn = vec![zero(); top + 2];
        for k in (1..=top).rev() {
            let mut rhs = int((k + 1) * (2 * k + 1)) * &cn[k + 1];
            if k >= 2 {
                if let Some(x) = c[n - 1].get(k - 2) {
                    rhs -= x;
                }
            }
            for j in 1..n {
                if let Some(x) = c[n - j].get(k) {
                    rhs += &e[j] * x;
                }
            }
            cn[k] = rhs / int(2 * k);
        }
        e.push(-cn[1].clone());
        cn.truncate(top + 1);
        c.push(cn);
    }
    e
}

#[test]
fn quartic_oscillator_ground_level_matches_bender_wu() {
    let order = 10;
    let (_, derivation) = check_derive(
        r#"space q = oscillator(46)
let x = (q.lower + q.raise) / sqrt(2)
H0 = q.n + 1/2
V = x^4
focus 1/2
"#,
        order,
    );
    let space = &derivation.model_spaces[0];
    assert!(space.notes.is_empty(), "46 states should be enough: {:?}", space.notes);
    // Bender & Wu, Phys. Rev. 184, 1231 (1969), the ground-state coefficients A_n of
    // E = sum A_n g^n for x^4 (their Table I), as recalled from memory; the recursion above
    // confirms each of them.
    let published = [
        "1/2",
        "3/4",
        "-21/8",
        "333/16",
        "-30885/128",
        "916731/256",
        "-65518401/1024",
        "2723294673/2048",
        "-1030495099053/32768",
        "54626982511455/65536",
        "-6417007431590595/262144",
    ];
    let expected = values(&derivation, &published);
    let recursion: Vec<RatFunc> = quartic_ground_coefficients(order as usize)
        .iter()
        .map(|r| value(&derivation, &r.to_string()))
        .collect();
    assert_eq!(recursion, expected, "the test's recursion disagrees with the recalled values");
    assert_branches(&derivation, space, &[(expected, 1, None)]);
}

// ---------------------------------------------------------------------------------------------
// 2. A p electron in a field: Zeeman effect of the spin-orbit multiplets.

const P_SHELL: &str = r#"param xi > 0, B
space l = spin(1)
space e = spin(1/2)
H0 = xi * (l.z * e.z + (l.up * e.down + l.down * e.up) / 2)
V = B * (l.z + 2 * e.z)
"#;

#[test]
fn p_shell_zeeman_splitting_follows_lande_and_the_two_by_two_blocks() {
    let (_, derivation) = check_derive(P_SHELL, 3);
    let v = |t: &[&str]| values(&derivation, t);
    // First order: E = E_j + g_j m_j B with the Lande factors g_{3/2} = 4/3 and g_{1/2} = 2/3
    // (Lande formula; e.g. Bransden & Joachain, Physics of Atoms and Molecules, 2nd ed. 2003,
    // Sec. 5.1). H0 = xi L.S gives E_{3/2} = xi/2 and E_{1/2} = -xi.
    //
    // Higher orders (closed form): m_j = +-3/2 are product states |+-1, +-1/2>, eigenstates of
    // H0 + V, so E = xi/2 +- 2B exactly. For m_j = 1/2, in the basis |3/2, 1/2>, |1/2, 1/2>,
    // with |3/2, 1/2> = sqrt(2/3)|0,+> + sqrt(1/3)|1,->, |1/2, 1/2> = sqrt(1/3)|0,+> -
    // sqrt(2/3)|1,->, and Lz + 2Sz = 1 on |0,+> and 0 on |1,->, the block is
    //   [ xi/2 + 2B/3    sqrt(2) B/3 ]
    //   [ sqrt(2) B/3    -xi + B/3   ]
    // with eigenvalues -xi/4 + B/2 +- sqrt(9 xi^2/16 + xi B/4 + B^2/4). Expanding the root in B,
    //   E_+ = xi/2 + 2B/3 + 4B^2/(27 xi) - 8B^3/(243 xi^2) + ...,
    //   E_- = -xi + B/3 - 4B^2/(27 xi) + 8B^3/(243 xi^2) + ...;
    // m_j = -1/2 follows from B -> -B. The test recomputes these series below from the closed
    // form rather than trusting the hand expansion.
    let upper = space_at(&derivation, &["xi/2"]);
    let lower = space_at(&derivation, &["-xi"]);
    for sign in ["", "-"] {
        let b = value(&derivation, &format!("{sign}B"));
        // Trace -xi/2 + B; discriminant (3 xi/2 + B/3)^2 + 8 B^2/9.
        let trace = vec![value(&derivation, "-xi/2"), b.clone()];
        let d = value(&derivation, "3*xi/2");
        let third = value(&derivation, "1/3");
        let radicand = vec![
            d.clone() * &d,
            (d.clone() + &d) * &b * &third,
            b.clone() * &b * &value(&derivation, "1/9 + 8/9"),
        ];
        let up = half_trace_plus_root(&trace, &radicand, value(&derivation, "3*xi/2"), 3);
        let down = half_trace_plus_root(&trace, &radicand, value(&derivation, "-3*xi/2"), 3);
        let hand_up = v(&[
            "xi/2",
            &format!("{sign}2/3*B"),
            "4*B^2/(27*xi)",
            &format!("-({sign}8*B^3/(243*xi^2))"),
        ]);
        assert_eq!(up, hand_up, "closed form against the hand expansion");
        branch_with(&derivation, upper, &up);
        branch_with(&derivation, lower, &down);
    }
    assert_branches(
        &derivation,
        upper,
        &[
            (v(&["xi/2", "2*B", "0", "0"]), 1, Some(1)),
            (v(&["xi/2", "-2*B", "0", "0"]), 1, Some(1)),
            (v(&["xi/2", "2/3*B", "4*B^2/(27*xi)", "-8*B^3/(243*xi^2)"]), 1, Some(1)),
            (v(&["xi/2", "-2/3*B", "4*B^2/(27*xi)", "8*B^3/(243*xi^2)"]), 1, Some(1)),
        ],
    );
    assert_branches(
        &derivation,
        lower,
        &[
            (v(&["-xi", "1/3*B", "-4*B^2/(27*xi)", "8*B^3/(243*xi^2)"]), 1, Some(1)),
            (v(&["-xi", "-1/3*B", "-4*B^2/(27*xi)", "-8*B^3/(243*xi^2)"]), 1, Some(1)),
        ],
    );
}

// ---------------------------------------------------------------------------------------------
// 3. Two-site Hubbard model at half filling.

#[test]
fn hubbard_dimer_superexchange_and_ground_state_series() {
    let order = 8;
    let (_, derivation) = check_derive(
        r#"param t, U > 0
space h = levels(D1, D2, S0, T0)
H0 = U * (|D1><D1| + |D2><D2|)
V = -sqrt(2) * t * (|S0><D1| + |D1><S0| + |S0><D2| + |D2><S0|)
"#,
        order,
    );
    let low = space_at(&derivation, &["0"]);
    let high = space_at(&derivation, &["U"]);
    // Closed form: S0 couples only to (D1 + D2)/sqrt(2), with amplitude -2t, so the singlet pair
    // is the block [[0, -2t], [-2t, U]] with eigenvalues (U -+ sqrt(U^2 + 16 t^2))/2; T0 and the
    // antisymmetric (D1 - D2)/sqrt(2) are exact eigenstates at 0 and U.
    let trace = values(&derivation, &["U"]);
    let radicand = values(&derivation, &["U^2", "0", "16*t^2"]);
    let ground = half_trace_plus_root(&trace, &radicand, value(&derivation, "-U"), order as usize);
    let bonding = half_trace_plus_root(&trace, &radicand, value(&derivation, "U"), order as usize);
    // Superexchange: the singlet lies J = 4t^2/U below the triplet at second order (Anderson,
    // Phys. Rev. 115, 2 (1959); common practice for the half-filled Hubbard model at large U).
    assert_eq!(ground[2], value(&derivation, "-4*t^2/U"));
    let zeros = vec![RatFunc::zero(); order as usize + 1];
    assert_branches(&derivation, low, &[(ground, 1, Some(2)), (zeros, 1, Some(2))]);
    let mut flat = vec![RatFunc::zero(); order as usize + 1];
    flat[0] = value(&derivation, "U");
    assert_branches(&derivation, high, &[(bonding, 1, Some(2)), (flat, 1, Some(2))]);
}

// ---------------------------------------------------------------------------------------------
// 4. Linear Stark effect of hydrogen n = 2.

#[test]
fn hydrogen_n2_linear_stark_effect() {
    let (_, derivation) = check_derive(
        r#"param F
space h = levels(s2, p0, pp, pm)
H0 = 0 * |s2><s2|
V = -3 * F * (|s2><p0| + |p0><s2|)
"#,
        4,
    );
    // <2s|z|2p0> = -3 a0 (Bethe & Salpeter, Quantum Mechanics of One- and Two-Electron Atoms,
    // 1957, Sec. 51): first-order energies +-3F (units e a0), and the m = +-1 pair untouched at
    // every order since V does not reach it. The pair differs from its siblings from order 1
    // on, so the engine reports split_at = 1 with multiplicity 2.
    let space = &derivation.model_spaces[0];
    let v = |t: &[&str]| values(&derivation, t);
    assert_branches(
        &derivation,
        space,
        &[
            (v(&["0", "3*F", "0", "0", "0"]), 1, Some(1)),
            (v(&["0", "-3*F", "0", "0", "0"]), 1, Some(1)),
            (v(&["0", "0", "0", "0", "0"]), 2, Some(1)),
        ],
    );
}

// ---------------------------------------------------------------------------------------------
// 5. Spin 1 with single-ion anisotropy in a transverse field.

#[test]
fn spin_one_transverse_field_against_exact_roots() {
    let order = 8;
    let (_, derivation) = check_derive(
        r#"param D > 0, B
space s = spin(1)
H0 = D * s.z^2
V = B * s.x
"#,
        order,
    );
    // Closed form: (|+1> - |-1>)/sqrt(2) is an exact eigenstate at D, since s.x sends it to
    // zero (the two paths to |0> cancel); |0> and (|+1> + |-1>)/sqrt(2) form [[D, B], [B, 0]] with
    // eigenvalues (D +- sqrt(D^2 + 4B^2))/2.
    let trace = values(&derivation, &["D"]);
    let radicand = values(&derivation, &["D^2", "0", "4*B^2"]);
    let upper = half_trace_plus_root(&trace, &radicand, value(&derivation, "D"), order as usize);
    let lower = half_trace_plus_root(&trace, &radicand, value(&derivation, "-D"), order as usize);
    let mut flat = vec![RatFunc::zero(); order as usize + 1];
    flat[0] = value(&derivation, "D");
    let doublet = space_at(&derivation, &["D"]);
    assert_branches(&derivation, doublet, &[(upper, 1, Some(2)), (flat.clone(), 1, Some(2))]);
    let stays = branch_with(&derivation, doublet, &flat);
    let state = stays.state.as_ref().expect("a single branch has a state");
    let psi0 = &state.coefficients[0];
    // Basis order of spin(1) is m = +1, 0, -1.
    let (a, b) = (psi0.get(0), psi0.get(2));
    assert!(psi0.get(1).is_zero() && !a.is_zero() && a == -b, "psi0 = {psi0:?}");
    assert_branches(&derivation, space_at(&derivation, &["0"]), &[(lower, 1, None)]);
}

// ---------------------------------------------------------------------------------------------
// 6. A degeneracy lifted only at third order, and one never lifted.

#[test]
fn spin_three_halves_doublet_splits_at_third_order() {
    let (_, derivation) = check_derive(
        r#"param D > 0, b
space s = spin(3/2)
H0 = D * s.z^2
V = b * s.x
"#,
        4,
    );
    // Why third order (closed argument): s.x changes m by one, so <+3/2|H_eff^(k)|-3/2> needs
    // three steps and vanishes for k < 3; the rotation by pi about x commutes with H and swaps
    // m and -m, so the diagonal entries of H_eff are equal at every order. The splitting is
    // +-(3b^3/16D^2): the path +3/2 -> +1/2 -> -1/2 -> -3/2 has amplitudes sqrt(3)/2, 1,
    // sqrt(3)/2 and two denominators 9D/4 - D/4 = 2D. The m = +-1/2 doublet already splits at
    // first order since <+1/2|s.x|-1/2> = 1.
    let doublet = space_at(&derivation, &["9/4*D"]);
    let up =
        branch_with_prefix(&derivation, doublet, &["9/4*D", "0", "3*b^2/(8*D)", "3*b^3/(16*D^2)"]);
    let down =
        branch_with_prefix(&derivation, doublet, &["9/4*D", "0", "3*b^2/(8*D)", "-3*b^3/(16*D^2)"]);
    assert_eq!((up.multiplicity, up.split_at), (1, Some(3)));
    assert_eq!((down.multiplicity, down.split_at), (1, Some(3)));
    let inner = space_at(&derivation, &["1/4*D"]);
    assert!(inner.branches.iter().all(|b| b.split_at == Some(1) && b.multiplicity == 1));
}

/// The one branch of `space` whose series starts with `prefix`.
fn branch_with_prefix<'a>(
    derivation: &Derivation,
    space: &'a ModelSpace,
    prefix: &[&str],
) -> &'a Branch {
    let prefix = values(derivation, prefix);
    let found: Vec<&Branch> =
        space.branches.iter().filter(|b| b.energy.starts_with(&prefix)).collect();
    assert_eq!(found.len(), 1, "branches starting with {}", show(derivation, &prefix));
    found[0]
}

#[test]
fn mirror_symmetric_pair_never_splits() {
    let (_, derivation) = check_derive(
        r#"param g
space d = levels(A, B, C, E)
H0 = |C><C| + |E><E|
V = g * (|A><C| + |C><A| + |B><E| + |E><B|)
focus 0
"#,
        5,
    );
    // A with C and B with E are two identical, uncoupled copies of [[0, g], [g, 1]]: every order
    // of H_eff is a multiple of the identity on {A, B}, so the pair never splits (multiplicity
    // 2, split_at null). Closed form: (1 - sqrt(1 + 4 g^2))/2 = -g^2 + g^4 - 2 g^6 + ...
    let trace = values(&derivation, &["1"]);
    let radicand = values(&derivation, &["1", "0", "4*g^2"]);
    let lower = half_trace_plus_root(&trace, &radicand, value(&derivation, "-1"), 5);
    assert_branches(&derivation, &derivation.model_spaces[0], &[(lower, 2, None)]);
}

// ---------------------------------------------------------------------------------------------
// 7. Quasi-degenerate model space: the canonical second-order formula.

#[test]
fn quasi_degenerate_second_order_matches_canonical_formula() {
    let (model, derivation) = check_derive(
        r#"param g, delta
space d = levels(A, B, C, E)
H0 = delta * |B><B| + 5 * |C><C| + 8 * |E><E|
V = g * (|A><C| + |C><A|) + 2 * g * (|B><C| + |C><B|) - g * (|A><E| + |E><A|) + 3 * g * (|B><E| + |E><B|) + g * (|A><B| + |B><A|)
focus 0, delta
"#,
        2,
    );
    // H_eff^(2)_ab = 1/2 sum_c V_ac V_cb [1/(E_a - E_c) + 1/(E_b - E_c)], c outside the model
    // space (Shavitt & Redmon, J. Chem. Phys. 73, 5711 (1980), the second-order canonical Van
    // Vleck term; ENGINE.md section 4), and Bloch's form H_B^(2)_ab = sum_c V_ac V_cb/(E_b - E_c)
    // (Bloch's wave operator to first order). Both computed here from the model's matrices.
    let space = &derivation.model_spaces[0];
    let h0 = model.h0();
    let v = &model.perturbations()[0];
    let energy = |i: usize| h0.get(i, i);
    let half = RatFunc::from_i64(2).inv().expect("2 is invertible");
    // Product index of each model-space basis state (unit vectors, since H0 is diagonal).
    let model_states: Vec<usize> = space.basis.iter().map(|u| u.entries()[0].0).collect();
    assert_eq!(model_states.len(), 2);
    let outside = [2usize, 3];
    for (a_pos, &a) in model_states.iter().enumerate() {
        for (b_pos, &b) in model_states.iter().enumerate() {
            let mut canonical = RatFunc::zero();
            let mut bloch = RatFunc::zero();
            for &c in &outside {
                let vv = v.get(a, c) * &v.get(c, b);
                let da = (energy(a) - &energy(c)).inv().expect("outside levels differ");
                let db = (energy(b) - &energy(c)).inv().expect("outside levels differ");
                canonical += &(vv.clone() * &(da + &db) * &half);
                bloch += &(vv * &db);
            }
            assert_eq!(space.effective_hamiltonian[2].get(a_pos, b_pos), &canonical, "({a}, {b})");
            assert_eq!(space.bloch_hamiltonian[2].get(a_pos, b_pos), &bloch, "Bloch ({a}, {b})");
            assert_eq!(space.effective_hamiltonian[1].get(a_pos, b_pos), &v.get(a, b));
        }
    }
}

// ---------------------------------------------------------------------------------------------
// 8. Bad input.

const TWO_LEVELS: &str = r#"param g
space s = spin(1/2)
H0 = s.z
V = g * s.x
"#;

/// Derives `text` to `order` and returns the error.
fn check_derive_error(text: &str, order: u32) -> EngineError {
    let (model, _) = cleave::load(text).expect("the model lowers");
    derive(&model, &DeriveOptions::new(order)).expect_err("the derivation should fail")
}

#[test]
fn order_zero_is_bad_input() {
    assert_eq!(
        check_derive_error(TWO_LEVELS, 0),
        EngineError::BadOrder("the order must be at least 1".into())
    );
}

#[test]
fn absurd_order_is_bad_input() {
    assert_eq!(
        check_derive_error(TWO_LEVELS, 1001),
        EngineError::BadOrder("order 1001 is beyond what cleave computes (at most 1000)".into())
    );
}

#[test]
fn focus_on_no_level_lists_the_levels() {
    let text = format!("{TWO_LEVELS}focus 1\n");
    assert_eq!(
        check_derive_error(&text, 2),
        EngineError::BadFocus {
            line: 0,
            message: "focus energy 1 is not an H0 level; the levels are -1/2, 1/2".into()
        }
    );
}

/// Runs the binary on `model` with `args` in a temp dir; returns the exit status and stderr.
fn run_cleave(model: &str, args: &[&str]) -> (i32, String) {
    let dir = tempfile::tempdir().expect("a temp dir");
    std::fs::write(dir.path().join("model.clv"), model).expect("write the model");
    let output = std::process::Command::new(env!("CARGO_BIN_EXE_cleave"))
        .args(args)
        .current_dir(dir.path())
        .output()
        .expect("run cleave");
    (output.status.code().unwrap_or(-1), String::from_utf8_lossy(&output.stderr).into_owned())
}

#[test]
fn bad_orders_and_focus_exit_with_status_two() {
    let cases: [(&str, &[&str], &str); 3] = [
        (TWO_LEVELS, &["derive", "model.clv", "--order", "0"], "the order must be at least 1"),
        (
            TWO_LEVELS,
            &["derive", "model.clv", "--order", "5000"],
            "--order 5000: the order must be at most 1000",
        ),
        (
            "param g\nspace s = spin(1/2)\nH0 = s.z\nV = g * s.x\nfocus 1\n",
            &["derive", "model.clv"],
            "focus energy 1 is not an H0 level; the levels are -1/2, 1/2",
        ),
    ];
    for (model, args, message) in cases {
        let (status, stderr) = run_cleave(model, args);
        assert_eq!(status, 2, "{args:?}: stderr\n{stderr}");
        assert!(stderr.contains(message), "{args:?}: expected {message:?} in\n{stderr}");
        assert!(!stderr.contains("panicked"), "{stderr}");
    }
}

/// Issue 9, finding 9: each input error is located at its own source: the focus line that names
/// no level (not the first focus line), the `--order` flag (not a focus line), the `order`
/// statement; an undeclared symbol suggests declaring it.
#[test]
fn issue_9_errors_on_the_right_line() {
    let model = "param a > 0
space d = levels(X, Y)
H0 = a * |X><X| + 2 * a * |Y><Y|
V = |X><Y| + |Y><X|
focus a
focus 2*a
focus 7*a
";
    let (status, stderr) = run_cleave(model, &["derive", "model.clv"]);
    assert_eq!(status, 2, "{stderr}");
    assert!(stderr.contains("model.clv:7:1: focus energy 7*a is not an H0 level"), "{stderr}");
    let focused = "param g\nspace s = spin(1/2)\nH0 = s.z\nV = g * s.x\nfocus 1/2\n";
    for flag in ["0", "1000000"] {
        let (status, stderr) = run_cleave(focused, &["derive", "model.clv", "--order", flag]);
        assert_eq!(status, 2, "{stderr}");
        assert!(stderr.starts_with(&format!("--order {flag}:")), "--order {flag}: {stderr}");
    }
    let in_file = format!("{focused}order 1001\n");
    let (status, stderr) = run_cleave(&in_file, &["derive", "model.clv"]);
    assert_eq!(status, 2, "{stderr}");
    assert!(stderr.contains("model.clv:6:7: the order must be at most 1000"), "{stderr}");
    let undeclared = "space s = spin(1/2)\nH0 = s.z\nV = kappa * s.x\n";
    let (status, stderr) = run_cleave(undeclared, &["derive", "model.clv"]);
    assert_eq!(status, 2, "{stderr}");
    assert!(stderr.contains("declare a real symbol with `param kappa`"), "{stderr}");
}

// ---------------------------------------------------------------------------------------------
// Snapshots of every example: report and JSON of `derive`, report and JSON of `levels`. These
// are snapshots, not checks: their values come from the project itself.

/// Derives the example `stem` at its own order (else 2, the command line's default) and
/// snapshots the four outputs under `derive__{stem}_...`.
fn check_example(stem: &str, text: &str) {
    let (model, _) = cleave::load(text).expect("the example lowers");
    let order = model.order().unwrap_or(2);
    let derivation = derive(&model, &DeriveOptions::new(order)).expect("the example derives");
    let name = format!("examples/{stem}.clv");
    let spectrum = &derivation.spectrum;
    let outputs = [
        ("report", cleave::emit::report(&model, &derivation, &name, &Vec::new())),
        ("json", cleave::emit::json(&model, &derivation)),
        ("levels_report", cleave::emit::levels_report(&model, spectrum, &name)),
        ("levels_json", cleave::emit::levels_json(&model, spectrum)),
    ];
    let _guard = crate::support::snapshot_settings().bind_to_scope();
    for (kind, output) in outputs {
        insta::assert_snapshot!(format!("{stem}_{kind}"), output);
    }
}

#[test]
fn example_axial_spin() {
    check_example("axial_spin", include_str!("../../examples/axial_spin.clv"));
}

#[test]
fn example_hubbard_dimer() {
    check_example("hubbard_dimer", include_str!("../../examples/hubbard_dimer.clv"));
}

#[test]
fn example_lambda_three_level() {
    check_example("lambda_three_level", include_str!("../../examples/lambda_three_level.clv"));
}

#[test]
fn example_quartic_oscillator() {
    check_example("quartic_oscillator", include_str!("../../examples/quartic_oscillator.clv"));
}

#[test]
fn example_qubit_resonator() {
    check_example("qubit_resonator", include_str!("../../examples/qubit_resonator.clv"));
}

#[test]
fn example_spin_one_axial() {
    check_example("spin_one_axial", include_str!("../../examples/spin_one_axial.clv"));
}

#[test]
fn example_spin_orbit_field() {
    check_example("spin_orbit_field", include_str!("../../examples/spin_orbit_field.clv"));
}

#[test]
fn example_dot_trimer() {
    check_example("dot_trimer", include_str!("../../examples/dot_trimer.clv"));
}

/// Every bundled example has its snapshot test above; a new example must add one.
#[test]
fn every_example_is_snapshotted() {
    let covered = [
        "axial_spin",
        "dispersive_readout",
        "dot_trimer",
        "holstein_dimer",
        "hubbard_dimer",
        "hubbard_dimer_spin",
        "hubbard_ring4",
        "hubbard_triangle",
        "lambda_three_level",
        "quartic_oscillator",
        "qubit_resonator",
        "rotor_stark",
        "spin_one_axial",
        "spin_orbit_field",
        "two_transmons",
    ];
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/examples");
    let mut found: Vec<String> = std::fs::read_dir(dir)
        .expect("examples folder")
        .filter_map(|e| e.ok()?.file_name().into_string().ok())
        .filter_map(|n| n.strip_suffix(".clv").map(str::to_string))
        .collect();
    found.sort();
    assert_eq!(found, covered);
}

/// A first-order secular matrix whose characteristic polynomial `x^4 - 2x^3 - 3x^2 + 4x + 1` has
/// no rational roots and no quadratic factors over the rationals (its roots are not expressible
/// with square roots of rationals): the branches are written with `root(P, k)`, and their values
/// are the eigenvalues that a general-purpose library (nalgebra) finds for the same matrix.
#[test]
fn quartic_secular_polynomial_splits_with_algebraic_roots() {
    let (_, derivation) = check_derive(
        r#"
space d = levels(A, B, C, D, E)
H0 = 3*|E><E|
V = |A><B| + |B><A| + |B><C| + |C><B| + |C><D| + |D><C| + 2*|A><A|
order 2
"#,
        2,
    );
    assert_eq!(derivation.roots.len(), 4);
    assert!(derivation
        .roots
        .iter()
        .all(|r| r.name().starts_with("root_between(x^4 - 2*x^3 - 3*x^2 + 4*x + 1, ")));
    let degenerate = &derivation.model_spaces[0];
    assert_eq!(degenerate.branches.len(), 4);
    let n_params = derivation.parameters.len();
    let mut found: Vec<f64> = degenerate
        .branches
        .iter()
        .map(|b| {
            assert_eq!(b.split_at, Some(1));
            let symbols: Vec<f64> =
                derivation.roots.iter().map(|r| r.approximation().to_f64()).collect();
            let mut values = vec![0.0; n_params];
            values.extend(symbols);
            cleave::check::evaluate(&b.energy[1], &values).expect("finite").0
        })
        .collect();
    found.sort_by(f64::total_cmp);
    let m = nalgebra::DMatrix::from_row_slice(
        4,
        4,
        &[2.0, 1.0, 0.0, 0.0, 1.0, 0.0, 1.0, 0.0, 0.0, 1.0, 0.0, 1.0, 0.0, 0.0, 1.0, 0.0],
    );
    let mut expected = nalgebra::SymmetricEigen::new(m).eigenvalues.as_slice().to_vec();
    expected.sort_by(f64::total_cmp);
    for (f, e) in found.iter().zip(&expected) {
        assert!((f - e).abs() < 1e-12, "{found:?} vs {expected:?}");
    }
}

/// Two uncoupled pairs inside one degenerate level split separately with square roots, and the
/// second order is the closed form `|<psi|V|E>|^2 / (0 - E_E)` with `psi = (|A> ± |B>)/sqrt(2)`.
#[test]
fn uncoupled_pairs_split_with_square_roots() {
    let (_, derivation) = check_derive(
        r#"
space d = levels(A, B, C, D, E)
H0 = 2*|E><E|
V = sqrt(2)*(|A><B| + |B><A|) + sqrt(3)*(|C><D| + |D><C|) + |A><E| + |E><A| + |C><E| + |E><C|
"#,
        2,
    );
    let degenerate = &derivation.model_spaces[0];
    for first in ["-sqrt(3)", "-sqrt(2)", "sqrt(2)", "sqrt(3)"] {
        let energy = values(&derivation, &["0", first, "-1/4"]);
        let branch = branch_with(&derivation, degenerate, &energy);
        assert_eq!((branch.multiplicity, branch.split_at), (1, Some(1)));
    }
}

/// Six degenerate sites in a chain: the first-order secular polynomial of the path graph,
/// `x^6 - 5x^4 + 6x^2 - 1`, factors into two irreducible cubics, whose roots are `2 cos(k pi/7)`
/// (closed form: the path graph's eigenvectors are `v_j = sin(j k pi / 7)`, a standard result).
/// A shift `s` on the first site enters at second order as `s |v_1|^2 / |v|^2 = (2/7) s sin^2(k
/// pi / 7)`, which the exact branches must reproduce root by root.
#[test]
fn six_site_chain_splits_into_two_cubics() {
    let (_, derivation) = check_derive(
        r#"
param t > 0, s
space c = levels(S1, S2, S3, S4, S5, S6)
H0 = 0
V = t*(|S1><S2| + |S2><S1| + |S2><S3| + |S3><S2| + |S3><S4| + |S4><S3| + |S4><S5| + |S5><S4| + |S5><S6| + |S6><S5|)
V2 = s*|S1><S1|
"#,
        2,
    );
    assert_eq!(derivation.roots.len(), 6);
    let mut moduli: Vec<String> = derivation.roots.iter().map(|r| r.name()).collect();
    moduli.sort();
    assert!(moduli[0].starts_with("root_between(x^3 + x^2 - 2*x - 1, "));
    assert!(moduli[5].starts_with("root_between(x^3 - x^2 - 2*x + 1, "));
    let space = &derivation.model_spaces[0];
    let mut values = vec![1.0, 1.0];
    values.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
    let mut found: Vec<(f64, f64)> = space
        .branches
        .iter()
        .map(|b| {
            let e1 = cleave::check::evaluate(&b.energy[1], &values).expect("finite").0;
            let e2 = cleave::check::evaluate(&b.energy[2], &values).expect("finite").0;
            (e1, e2)
        })
        .collect();
    found.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut expected: Vec<(f64, f64)> = (1..=6)
        .map(|k| {
            let angle = k as f64 * std::f64::consts::PI / 7.0;
            (2.0 * angle.cos(), 2.0 / 7.0 * angle.sin().powi(2))
        })
        .collect();
    expected.sort_by(|a, b| a.0.total_cmp(&b.0));
    for (f, e) in found.iter().zip(&expected) {
        assert!(
            (f.0 - e.0).abs() < 1e-12 && (f.1 - e.1).abs() < 1e-12,
            "{found:?} vs {expected:?}"
        );
    }
}

/// `cleave check` compares the series with exact diagonalization (nalgebra): a coefficient that is
/// off by one percent fails, and the correct series passes even where the next coefficient
/// nearly cancels the one after it (the predicted error then follows both).
#[test]
fn numeric_check_accepts_right_and_rejects_wrong_series() {
    let text = r#"
space d = levels(A, B, C, D)
H0 = matrix(d, [[0, 0, 0, 0], [0, 1, 0, 0], [0, 0, 0, 0], [0, 0, 0, 1]])
V = matrix(d, [[0, 1, 0, 2], [1, -1, 0, sqrt(2)], [0, 0, sqrt(2), 1], [2, sqrt(2), 1, -1]])
"#;
    let (model, derivation) = check_derive(text, 4);
    let options = cleave::check::CheckOptions { at: Vec::new(), order: Some(2) };
    let right = cleave::check::verify(&model, &derivation, &options);
    assert_eq!(right.branches.len(), 4);
    assert!(right.branches.iter().all(|b| b.passed), "{right:?}");
    let mut wrong = derivation.clone();
    let coefficient = &mut wrong.model_spaces[0].branches[0].energy[2];
    *coefficient = coefficient.clone()
        * RatFunc::from_rational(&cleave::exact::Rational::ratio(101, 100).unwrap());
    let checked = cleave::check::verify(&model, &wrong, &options);
    assert!(!checked.branches[0].passed, "{checked:?}");
    assert!(checked.branches[1..].iter().all(|b| b.passed));
}

/// Without `focus`, every Fock level of a big oscillator is derived. The states of high levels
/// need square roots of products of many primes (`sqrt(116!/100!)`, say), far beyond 64 bits:
/// every state is computed exactly, and the energies are too: the ground level's against Bender &
/// Wu (1969), as above.
#[test]
fn states_with_radicands_beyond_64_bits_are_exact() {
    let (_, derivation) = check_derive(
        r#"
space q = oscillator(120)
let x = (q.lower + q.raise) / sqrt(2)
H0 = q.n + 1/2
V = x^4
"#,
        4,
    );
    assert_eq!(derivation.model_spaces.len(), 120);
    let ground = &derivation.model_spaces[0].branches[0];
    assert_eq!(
        ground.energy,
        values(&derivation, &["1/2", "3/4", "-21/8", "333/16", "-30885/128"])
    );
    let branches = derivation.model_spaces.iter().flat_map(|s| &s.branches);
    assert!(branches.clone().all(|b| b.state.is_some() && b.state_missing.is_none()));
    // Some state coefficient has a square-free radicand beyond 64 bits, held exactly.
    let big_radicand = branches
        .filter_map(|b| b.state.as_ref())
        .flat_map(|s| &s.coefficients)
        .flat_map(|v| v.entries())
        .flat_map(|(_, x)| x.numer().terms())
        .flat_map(|(_, c)| c.terms())
        .any(|(s, _)| s.to_i64().is_none());
    assert!(big_radicand);
}

/// `sqrt(4294967311) * sqrt(4294967357)` is the square root of a 65-bit square-free product of two
/// primes; through the library it is exactly that, not 1, and it prints and reads back.
#[test]
fn product_of_square_roots_beyond_64_bits_is_exact() {
    let (_, derivation) = check_derive(
        r#"
space s = spin(1/2)
H0 = s.z
V = sqrt(4294967311) * sqrt(4294967357) * s.z
"#,
        1,
    );
    let upper = &derivation.model_spaces[1].branches[0].energy;
    assert_eq!(upper[1], value(&derivation, "1/2*sqrt(18446744400127067027)"));
    assert_eq!(show(&derivation, upper), "[1/2, 1/2*sqrt(18446744400127067027)]");
    let product = value(&derivation, "sqrt(4294967311) * sqrt(4294967357)");
    assert!(!product.is_one());
    assert_eq!(product.clone() * &product, value(&derivation, "18446744400127067027"));
}

// ---------------------------------------------------------------------------------------------
// Models written with fermions, sums, sectors, rotors and ladders (issue 7).

/// The half-filled Hubbard dimer written with fermion modes and a sector: its singlet follows
/// the closed form `(U - sqrt(U^2 + 16 t^2))/2` of the 2x2 singlet block (the same block as the
/// hand-built dimer above), its `S_z = 0` triplet state stays at 0; second order is Anderson's
/// superexchange `-J = -4t^2/U` (Anderson, Phys. Rev. 115, 2 (1959)).
#[test]
fn fermion_hubbard_dimer_superexchange() {
    let order = 6;
    let (model, derivation) = check_derive(
        r#"param t, U > 0
space c = fermions(1..2, [up, dn])
H0 = U * sum(i in 1..2: c[i, up].n * c[i, dn].n)
V = -t * sum(s in [up, dn]: c[1, s].create * c[2, s].annihilate + c[2, s].create * c[1, s].annihilate)
sector sum(i in 1..2, s in [up, dn]: c[i, s].n) = 2, sum(i in 1..2: c[i, up].n - c[i, dn].n) = 0
focus 0
"#,
        order,
    );
    assert_eq!(model.basis().dimension(), 4, "two singly and two doubly occupied states");
    let low = space_at(&derivation, &["0"]);
    let trace = values(&derivation, &["U"]);
    let radicand = values(&derivation, &["U^2", "0", "16*t^2"]);
    let ground = half_trace_plus_root(&trace, &radicand, value(&derivation, "-U"), order as usize);
    assert_eq!(ground[2], value(&derivation, "-4*t^2/U"));
    let zeros = vec![RatFunc::zero(); order as usize + 1];
    assert_branches(&derivation, low, &[(ground, 1, Some(2)), (zeros, 1, Some(2))]);
}

/// Three sites on a ring, three electrons, `S_z = 1/2`: at second order the Heisenberg triangle
/// `J Σ (S_i.S_j - 1/4)`, `J = 4t^2/U` (Anderson 1959), whose `S = 1/2` pair lies at
/// `-3J/2 = -6t^2/U` and whose `S = 3/2` state stays exactly at 0 to every order (its
/// `S_z = 3/2` partner `|up, up, up>` cannot hop, and the model conserves total spin).
#[test]
fn fermion_hubbard_triangle_superexchange() {
    let (_, derivation) = check_derive(include_str!("../../examples/hubbard_triangle.clv"), 6);
    let low = space_at(&derivation, &["0"]);
    let pair = derivation.model_spaces[0]
        .branches
        .iter()
        .find(|b| b.multiplicity == 2)
        .expect("the S = 1/2 pair");
    assert_eq!(pair.energy[2], value(&derivation, "-6*t^2/U"));
    let zeros = vec![RatFunc::zero(); 7];
    let quartet = branch_with(&derivation, low, &zeros);
    assert_eq!(quartet.multiplicity, 1);
    assert_eq!(low.branches.len(), 2);
}

/// A linear rotor in a field, second order against the textbook formula
/// `E2 = d^2 F^2/(2B) [J(J+1) - 3M^2] / [J(J+1)(2J-1)(2J+3)]`, and `-d^2 F^2/(6B)` for
/// `J = 0` (Townes & Schawlow, Microwave Spectroscopy (1955), ch. 10; from memory). The rotor
/// keeps `J <= 6`, enough for second order of `J <= 4`.
#[test]
fn rotor_stark_second_order() {
    let (_, derivation) = check_derive(
        "param B > 0, mu, F\nspace r = rotor(6)\nH0 = B * r.j2\nV = -mu * F * r.cos\n",
        2,
    );
    for j in 0..=4i64 {
        let energy = format!("{}*B", j * (j + 1));
        let space = space_at(&derivation, &[&energy]);
        for m in 0..=j {
            let expected = if j == 0 {
                value(&derivation, "-mu^2*F^2/(6*B)")
            } else {
                let numer = j * (j + 1) - 3 * m * m;
                let denom = 2 * j * (j + 1) * (2 * j - 1) * (2 * j + 3);
                value(&derivation, &format!("({numer})*mu^2*F^2/({denom}*B)"))
            };
            let branch = space
                .branches
                .iter()
                .find(|b| b.energy[2] == expected)
                .unwrap_or_else(|| panic!("no branch for J = {j}, M = ±{m}"));
            assert_eq!(branch.multiplicity, if m == 0 { 1 } else { 2 }, "J = {j}, M = ±{m}");
        }
        assert!(space.notes.is_empty(), "rotor(6) is enough at second order for J = {j}");
    }
}

/// A cut-off rotor is warned about exactly where the cut can change a reported coefficient, with
/// a cut that makes them exact; a cut too low changes the coefficients it names and no others.
#[test]
fn rotor_cut_is_noted_with_a_sufficient_j() {
    // J = 0 of rotor(4) at order 6: its wave operator needs J = 3 at most (the state to third
    // order fixes the energy to sixth by Wigner's 2n+1 rule), so no note, and the series is the
    // one of a larger rotor.
    let (_, derivation) = check_derive(include_str!("../../examples/rotor_stark.clv"), 6);
    let ground = &derivation.model_spaces[0];
    assert!(ground.notes.is_empty(), "{:?}", ground.notes);
    let text = include_str!("../../examples/rotor_stark.clv").replace("rotor(4)", "rotor(8)");
    let (_, exact) = check_derive(&text, 6);
    assert_eq!(ground.branches[0].energy, exact.model_spaces[0].branches[0].energy);
    // The J = 4 level sits at the cut: noted, and the declaration it names is enough.
    let top = derivation.model_spaces.last().expect("the J = 4 level");
    let Some(cleave::engine::Note::Truncation { sufficient, .. }) = top.notes.first() else {
        panic!("the J = 4 level reaches past the cut")
    };
    let text = include_str!("../../examples/rotor_stark.clv").replace("rotor(4)", sufficient);
    let (_, enough) = check_derive(&text, 6);
    let same_level = enough.model_spaces.iter().find(|s| s.unperturbed == top.unperturbed);
    assert!(same_level.is_some_and(|s| s.notes.is_empty()), "{sufficient} is enough");
    // Second order is Townes & Schawlow's -d^2 F^2/(6B) whatever the cut; a rotor cut at J = 2
    // changes the sixth order of J = 0 (its wave operator needs J = 3), and is warned about.
    let e = &exact.model_spaces[0].branches[0].energy;
    assert_eq!(e[2], value(&exact, "-mu^2*F^2/(6*B)"));
    let text = include_str!("../../examples/rotor_stark.clv").replace("rotor(4)", "rotor(2)");
    let (_, short) = check_derive(&text, 6);
    let cut = &short.model_spaces[0];
    assert_ne!(cut.branches[0].energy[6], e[6], "the cut at J = 2 changes sixth order");
    assert_eq!(cut.branches[0].energy[2], e[2]);
    let Some(cleave::engine::Note::Truncation { energies_from: Some(k), .. }) = cut.notes.first()
    else {
        panic!("the cut at J = 2 is noted for the energies")
    };
    assert!(*k <= 6, "the note names sixth order or before ({k})");
    for (j, (a, b)) in cut.branches[0].energy.iter().zip(e).enumerate().take(*k as usize) {
        assert_eq!(a, b, "E^({j}) below the order the note names is exact");
    }
}

/// Two transmons as ladders: no truncation caution (the three levels are the model), the same
/// model with `oscillator(3)` gets one; focus by state picks the levels of |00>, |10>, |01>,
/// |11>. Second order of |10> is `J^2/(ω1 - ω2)` with `ω1 - ω2 = -3/4` (second-order
/// perturbation theory of the two-state exchange block; common practice).
#[test]
fn transmon_ladders_and_focus_by_state() {
    let text = include_str!("../../examples/two_transmons.clv");
    let (_, derivation) = check_derive(text, 4);
    let energies: Vec<RatFunc> =
        derivation.model_spaces.iter().map(|s| s.unperturbed[0].clone()).collect();
    assert_eq!(energies, values(&derivation, &["0", "5", "23/4", "43/4"]));
    assert!(derivation.model_spaces.iter().all(|s| s.notes.is_empty()));
    assert_eq!(derivation.model_spaces[1].branches[0].energy[2], value(&derivation, "-4/3*J^2"));
    let cut = text.replace("ladder(3)", "oscillator(3)");
    let (_, truncated) = check_derive(&cut, 4);
    assert!(truncated.model_spaces.iter().any(|s| !s.notes.is_empty()));
}

#[test]
fn example_hubbard_triangle() {
    check_example("hubbard_triangle", include_str!("../../examples/hubbard_triangle.clv"));
}

#[test]
fn example_hubbard_ring4() {
    check_example("hubbard_ring4", include_str!("../../examples/hubbard_ring4.clv"));
}

#[test]
fn example_rotor_stark() {
    check_example("rotor_stark", include_str!("../../examples/rotor_stark.clv"));
}

#[test]
fn example_two_transmons() {
    check_example("two_transmons", include_str!("../../examples/two_transmons.clv"));
}

#[test]
fn example_hubbard_dimer_spin() {
    check_example("hubbard_dimer_spin", include_str!("../../examples/hubbard_dimer_spin.clv"));
}

#[test]
fn example_dispersive_readout() {
    check_example("dispersive_readout", include_str!("../../examples/dispersive_readout.clv"));
}

#[test]
fn example_holstein_dimer() {
    check_example("holstein_dimer", include_str!("../../examples/holstein_dimer.clv"));
}

/// Derives `text` to `order` and asserts an up-front refusal (exit status 1) naming `expected`.
fn check_too_costly(text: &str, order: u32, expected: &str) {
    let (model, _) = cleave::load(text).expect("the model lowers");
    match derive(&model, &DeriveOptions::new(order)) {
        Err(cleave::engine::EngineError::Infeasible(why)) => {
            assert!(why.contains("this derivation is too large"), "{why}");
            assert!(why.contains(expected), "expected {expected:?} in {why}");
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
}

/// Issue 12, items 2, 3 and 7: derivations that would run for hours or exhaust memory are
/// refused before they start, by an estimate of their cost, with advice.
#[test]
fn issue_12_costly_derivations_are_refused_up_front() {
    // A hundred parameters to order 4: C(104, 4) = 4598126 terms in a coefficient.
    let names: Vec<String> = (0..100).map(|k| format!("p{k}")).collect();
    let many = format!(
        "param {}\nspace d = levels(G, E)\nH0 = |E><E|\nV = ({}) * (|G><E| + |E><G|)\n",
        names.join(", "),
        names.join(" + ")
    );
    check_too_costly(&many, 4, "can have 4598126 terms");
    // Order 1000 of a four-state model with two parameters.
    let axial = "param D > 0, b\nspace s = spin(3/2)\nH0 = D * s.z^2\nV = b * s.x\n";
    check_too_costly(axial, 1000, "lower the order");
    // Every level of a long numeric oscillator, to a high order.
    check_too_costly(
        "space q = oscillator(2000)\nH0 = q.n\nV = q.lower + q.raise\n",
        40,
        "2000 model space(s), the largest of 1 states, in 2000 states with no parameters to order \
         40 would take far too long",
    );
    // Ten spins 1/2 in an Ising chain, focus on a level of 252 states: the dense secular
    // algebra of the model space, not the sparse count, is what is too large.
    let mut chain = String::from("param J\n");
    for k in 1..=10 {
        chain.push_str(&format!("space s{k} = spin(1/2)\n"));
    }
    let bonds = |op: &str| -> Vec<String> {
        (1..10).map(|k| format!("s{k}.{op}*s{}.{op}", k + 1)).collect()
    };
    chain.push_str(&format!("H0 = J * ({})\n", bonds("z").join(" + ")));
    chain.push_str(&format!(
        "V = {} + {}\nfocus 1/4*J\n",
        bonds("x").join(" + "),
        bonds("y").join(" + ")
    ));
    check_too_costly(&chain, 2, "a model space of 252 states is too large");
}
