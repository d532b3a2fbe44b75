//! Answers in the physicist's terms: branches named by their states, named quantities, and
//! effective Hamiltonians written in spin or qubit operators (issue 8). Checks against closed
//! forms and against exact diagonalization name their source.

use cleave::engine::{derive, Component, Derivation, DeriveOptions, OperatorForm};
use cleave::exact::{Field, RatFunc};
use cleave::model::Target;

use crate::derive::{check_derive, value};

fn series(derivation: &Derivation, texts: &[&str]) -> Vec<RatFunc> {
    texts.iter().map(|t| value(derivation, t)).collect()
}

/// The coefficient series of the term with exactly these factors (zero when absent).
fn coefficient(form: &OperatorForm, factors: &[(&str, Component)], len: usize) -> Vec<RatFunc> {
    let wanted: Vec<(usize, Component)> = factors
        .iter()
        .map(|(name, c)| (form.names.iter().position(|n| n == name).expect("a target"), *c))
        .collect();
    form.terms
        .iter()
        .find(|t| t.factors == wanted)
        .map_or_else(|| vec![RatFunc::zero(); len], |t| t.coefficient.clone())
}

/// Rebuilds each order of the effective Hamiltonian from the operator form (2x2 Pauli matrices
/// in the target basis, `|0>` first) and compares it with the engine's matrix, exactly.
fn assert_reproduces_matrix(derivation: &Derivation, space_idx: usize) {
    let space = &derivation.model_spaces[space_idx];
    let form = space.operator_form.as_ref().expect("an operator form");
    let n = form.names.len();
    let dim = 1usize << n;
    let i = RatFunc::constant(cleave::exact::Radical::i());
    let half = RatFunc::from_i64(2).inv().expect("2");
    // <a|P|b> for one factor: bit a, bit b.
    let pauli = |c: Component, a: usize, b: usize| -> RatFunc {
        match (c, a, b) {
            (Component::X, 0, 1) | (Component::X, 1, 0) => RatFunc::one(),
            (Component::Y, 1, 0) => i.clone(),
            (Component::Y, 0, 1) => -i.clone(),
            (Component::Z, 0, 0) => RatFunc::one(),
            (Component::Z, 1, 1) => -RatFunc::one(),
            _ => RatFunc::zero(),
        }
    };
    for (k, h) in space.effective_hamiltonian.iter().enumerate() {
        let mut rebuilt = vec![vec![RatFunc::zero(); dim]; dim];
        for term in &form.terms {
            let scale = match form.target {
                Target::Spins => (0..term.factors.len()).fold(RatFunc::one(), |acc, _| acc * &half),
                Target::Qubits => RatFunc::one(),
            };
            for (a, row) in rebuilt.iter_mut().enumerate() {
                for (b, cell) in row.iter_mut().enumerate() {
                    let mut entry = term.coefficient[k].clone() * &scale;
                    for t in 0..n {
                        let (bit_a, bit_b) = ((a >> (n - 1 - t)) & 1, (b >> (n - 1 - t)) & 1);
                        match term.factors.iter().find(|(f, _)| *f == t) {
                            Some((_, c)) => entry = entry * pauli(*c, bit_a, bit_b),
                            None if bit_a != bit_b => entry = RatFunc::zero(),
                            None => {}
                        }
                    }
                    *cell += &entry;
                }
            }
        }
        assert_eq!(h.n_rows(), dim);
        for (a, row) in rebuilt.iter().enumerate() {
            for (b, cell) in row.iter().enumerate() {
                let (ma, mb) = (form.model_state[a], form.model_state[b]);
                assert_eq!(h.get(ma, mb), cell, "order {k}, entry ({a}, {b})");
            }
        }
    }
}

/// Two sites at half filling written as two spins: `H_eff = J (S1.S2 - 1/4)` with
/// `J = (sqrt(U^2 + 16 t^2) - U)/2` expanded, the closed form of the 4x4 problem (the singlet
/// block [[0, -2t], [-2t, U]] of the dimer; `4t^2/U` at second order is Anderson's
/// superexchange, Phys. Rev. 115, 2 (1959)).
#[test]
fn hubbard_dimer_as_two_spins() {
    let (_, derivation) = check_derive(include_str!("../../examples/hubbard_dimer_spin.clv"), 6);
    let form = derivation.model_spaces[0].operator_form.as_ref().expect("as spins");
    assert_eq!(form.names, ["s1", "s2"]);
    let j = series(&derivation, &["0", "0", "4*t^2/U", "0", "-16*t^4/U^3", "0", "128*t^6/U^5"]);
    let quarter = RatFunc::from_i64(-4).inv().expect("non-zero");
    let identity: Vec<RatFunc> = j.iter().map(|c| c.clone() * &quarter).collect();
    assert_eq!(coefficient(form, &[], 7), identity, "the constant -J/4");
    for c in [Component::X, Component::Y, Component::Z] {
        assert_eq!(coefficient(form, &[("s1", c), ("s2", c)], 7), j, "S1.S2 has J");
    }
    assert_eq!(form.terms.len(), 4, "nothing but the constant and the exchange");
    assert_reproduces_matrix(&derivation, 0);
}

/// The static ZZ rate of two transmons: second order
/// `2 J^2 (α1 + α2) / ((Δ + α1)(Δ - α2))`, `Δ = ω1 - ω2`, from the two-level (|10>, |01>) and
/// three-level (|11>, |20>, |02>) exchange blocks at second order (derived here: E11 gains
/// `2J^2/(ω1 - ω2 - α1) + 2J^2/(ω2 - ω1 - α2)`, E10 and E01 gain `±J^2/Δ`; common practice in
/// circuit QED). The quantity equals the same combination of the four branch series.
#[test]
fn transmon_zz_rate() {
    let (model, derivation) = check_derive(include_str!("../../examples/two_transmons.clv"), 6);
    let zz = derivation.quantities.iter().find(|q| q.name == "ZZ").expect("ZZ");
    let (w1, w2, a1, a2) = ("5", "23/4", "-1/4", "-3/10");
    let delta = format!("({w1} - {w2})");
    let closed =
        value(&derivation, &format!("2*J^2*({a1} + {a2})/(({delta} + {a1})*({delta} - {a2}))"));
    assert_eq!(zz.series[2], closed);
    assert_eq!(zz.series[2], value(&derivation, "-22/9*J^2"));
    // ZZ = E11 - E10 - E01 + E00, branch by branch.
    let energy = |space: usize| derivation.model_spaces[space].branches[0].energy.clone();
    for k in 0..=6 {
        let combination = energy(3)[k].clone() - energy(1)[k].clone() - energy(2)[k].clone()
            + energy(0)[k].clone();
        assert_eq!(zz.series[k], combination, "order {k}");
    }
    assert_eq!(model.quantities().len(), 1);
}

/// The dispersive shift of a qubit and a resonator in the rotating-wave approximation:
/// `chi = g^2/Δ` at second order (Blais et al., Phys. Rev. A 69, 062320 (2004)), and
/// `-2 g^4/Δ^3` at fourth from the expansion of the Jaynes–Cummings doublets
/// `E = ((n+1)ω_r + ... ) ± sqrt(Δ^2/4 + (n+1) g^2)` (derived here; same paper, eq. 3.3).
#[test]
fn dispersive_shift_of_a_qubit() {
    let (_, derivation) = check_derive(include_str!("../../examples/dispersive_readout.clv"), 4);
    let chi = &derivation.quantities[0];
    assert_eq!(chi.name, "chi");
    assert_eq!(
        chi.series,
        series(&derivation, &["0", "0", "g^2/(wq - wr)", "0", "-2*g^4/(wq - wr)^3"])
    );
}

/// Branches carry the states they come from: a one-state level its product state, a split level
/// its zeroth-order combination.
#[test]
fn branches_name_their_states() {
    let (model, derivation) = check_derive(include_str!("../../examples/two_transmons.clv"), 2);
    let labels: Vec<String> = derivation
        .model_spaces
        .iter()
        .map(|s| model.basis().ket_label(s.branches[0].zeroth_order[0].entries()[0].0))
        .collect();
    assert_eq!(labels, ["|0, 0>", "|1, 0>", "|0, 1>", "|1, 1>"]);
    let (_, triangle) = check_derive(include_str!("../../examples/hubbard_triangle.clv"), 2);
    let low = &triangle.model_spaces[0];
    let quartet = low.branches.iter().find(|b| b.multiplicity == 1).expect("S = 3/2");
    // The S = 3/2, S_z = 1/2 state is the symmetric sum of the three one-down states.
    let weights: Vec<&RatFunc> = quartet.zeroth_order[0].entries().iter().map(|(_, w)| w).collect();
    assert_eq!(weights.len(), 3);
    assert!(weights.iter().all(|w| **w == *weights[0]));
    let pair = low.branches.iter().find(|b| b.multiplicity == 2).expect("S = 1/2");
    assert_eq!(pair.zeroth_order.len(), 2, "a basis of the unsplit pair");
}

/// The four-site ring at half filling as four spins: nearest-neighbour exchange `4t^2/U` at
/// second order (Anderson 1959); at fourth order, further-neighbour and four-spin (ring) terms.
/// The fourth-order form is checked through the spectrum: at small `t/U` the eigenvalues of the
/// operator form, evaluated numerically, match the lowest 16 eigenvalues of the exact 70-state
/// Hubbard Hamiltonian (nalgebra) to `O(t^6/U^5)`.
#[test]
fn hubbard_ring_as_four_spins() {
    let text = include_str!("../../examples/hubbard_ring4.clv")
        .replace(", sum(i in 1..4: c[i, up].n - c[i, dn].n) = 0", "")
        .replace("focus 0", "focus 0 as spins");
    let (model, derivation) = check_derive(&text, 4);
    let space = &derivation.model_spaces[0];
    let form = space.operator_form.as_ref().expect("as spins");
    assert_eq!(form.names, ["s1", "s2", "s3", "s4"]);
    let nn = coefficient(form, &[("s1", Component::Z), ("s2", Component::Z)], 5);
    assert_eq!(nn[2], value(&derivation, "4*t^2/U"));
    let across = coefficient(form, &[("s1", Component::Z), ("s3", Component::Z)], 5);
    assert!(across[2].is_zero() && !across[4].is_zero(), "next-nearest from fourth order");
    let four = coefficient(
        form,
        &[("s1", Component::X), ("s2", Component::X), ("s3", Component::Y), ("s4", Component::Y)],
        5,
    );
    assert!(!four[4].is_zero(), "a four-spin ring term at fourth order");
    assert_reproduces_matrix(&derivation, 0);

    // Numbers: U = 1 and two small t; the operator form's eigenvalues against exact ones.
    let params = |t: f64| vec![t, 1.0];
    for t in [0.005, 0.0025] {
        let eval = |c: &RatFunc| cleave::check::evaluate(c, &params(t)).expect("defined").0;
        let dim = 16;
        let mut h = nalgebra::DMatrix::<f64>::zeros(dim, dim);
        for (k, m) in space.effective_hamiltonian.iter().enumerate() {
            for a in 0..dim {
                for b in 0..dim {
                    h[(a, b)] += eval(m.get(a, b));
                }
            }
            let _ = k;
        }
        let mut effective: Vec<f64> =
            nalgebra::SymmetricEigen::new(h).eigenvalues.as_slice().to_vec();
        effective.sort_by(f64::total_cmp);
        let n = model.basis().dimension();
        let mut full = nalgebra::DMatrix::<f64>::zeros(n, n);
        for (r, c, v) in model.h0().triplets() {
            full[(r, c)] += eval(v);
        }
        for (r, c, v) in model.perturbations()[0].triplets() {
            full[(r, c)] += eval(v);
        }
        let mut exact: Vec<f64> =
            nalgebra::SymmetricEigen::new(full).eigenvalues.as_slice().to_vec();
        exact.sort_by(f64::total_cmp);
        for (e, x) in effective.iter().zip(&exact) {
            // The neglected sixth order is some 2500 t^6/U^5 for the lowest state (measured at
            // t = 0.02); fourth-order terms are about 100 t^4/U^3, far larger at these t.
            assert!((e - x).abs() < 5000.0 * t.powi(6), "t = {t}: {e} vs {x}");
        }
        assert!(exact[15] < 0.5 && exact[16] > 0.5, "the 16 low states lie apart");
    }
}

/// A quantity that names a state in no studied level, or a still-degenerate branch, is a located
/// error (exit 2).
#[test]
fn quantities_that_name_no_branch() {
    let dir = tempfile::tempdir().expect("a temp dir");
    let run = |model: &str| {
        std::fs::write(dir.path().join("model.clv"), model).expect("write");
        let output = std::process::Command::new(env!("CARGO_BIN_EXE_cleave"))
            .args(["derive", "model.clv"])
            .current_dir(dir.path())
            .output()
            .expect("run cleave");
        (output.status.code(), String::from_utf8_lossy(&output.stderr).into_owned())
    };
    let base = "param J\nspace a = ladder(3)\nspace b = ladder(3)\nH0 = 5*a.n + 6*b.n\nV = J*(a.raise*b.lower + a.lower*b.raise)\nfocus |0, 0>\n";
    let (status, stderr) = run(&format!("{base}quantity Q = E|1, 0> - E|0, 0>\n"));
    assert_eq!(status, Some(2), "{stderr}");
    assert!(
        stderr.contains("model.clv:7:15: |1, 0> belongs to no model space studied"),
        "{stderr}"
    );
    let degenerate = "param J\nspace a = ladder(2)\nspace b = ladder(2)\nH0 = a.n + b.n\nV = J*(a.n*b.n)\nfocus 1\nquantity Q = E|1, 0>\n";
    let (status, stderr) = run(degenerate);
    assert_eq!(status, Some(2), "{stderr}");
    assert!(stderr.contains("still degenerate"), "{stderr}");
    let outside = format!("{base}quantity Q = 2 * E|0, 5>\n");
    let (status, stderr) = run(&outside);
    assert_eq!(status, Some(2), "{stderr}");
    assert!(stderr.contains("model.clv:7:23: no state |0, 5>"), "{stderr}");
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig { cases: 12, ..Default::default() })]

    /// On random pairs of three-level ladders (distinct frequencies, random couplings), the
    /// qubit form of the four-state model space reproduces its effective Hamiltonian exactly at
    /// every order, and a quantity equals the same combination of the branch series.
    #[test]
    fn operator_forms_and_quantities_are_exact(
        w2 in 3i64..9,
        a1 in -3i64..0,
        a2 in -3i64..0,
        c1 in -3i64..4,
        c2 in -3i64..4,
        c3 in -3i64..4,
    ) {
        let model = format!(
            "param J\nspace a = ladder(3)\nspace b = ladder(3)\n\
             H0 = 2*a.n + {a1}/5*a.n*(a.n - 1) + {w2}/2*b.n + {a2}/7*b.n*(b.n - 1)\n\
             V = J*({c1}*(a.raise*b.lower + a.lower*b.raise) + {c2}*a.n*b.n + {c3}*(a.raise + a.lower))\n"
        );
        let joint = format!("{model}focus |0, 0>, |1, 0>, |0, 1>, |1, 1> as qubits\n");
        let (_, derivation) = check_derive(&joint, 3);
        assert_reproduces_matrix(&derivation, 0);
        let separate = format!(
            "{model}focus |0, 0>\nfocus |1, 0>\nfocus |0, 1>\nfocus |1, 1>\n\
             quantity Q = E|1, 1> - 2*E|1, 0> + J*E|0, 1>\n"
        );
        // Levels that coincide for these numbers are skipped: two focus lines then name one level
        // (refused) or the quantity names a degenerate branch (refused, tested above).
        let Ok((model, _)) = cleave::load(&separate) else { return Ok(()) };
        if let Ok(derivation) = derive(&model, &DeriveOptions::new(3)) {
            let e = |s: usize| derivation.model_spaces[s].branches[0].energy.clone();
            let j = value(&derivation, "J");
            let q = &derivation.quantities[0].series;
            let (e11, e10, e01) = (e(3), e(1), e(2));
            for (k, value) in q.iter().enumerate() {
                let expected =
                    e11[k].clone() - e10[k].clone() * RatFunc::from_i64(2) + e01[k].clone() * &j;
                proptest::prop_assert_eq!(value, &expected);
            }
        }
    }
}
