//! The language for many-body, molecular and circuit models: fermion modes, indexed families and
//! sums, sectors, rotors, ladders, focus by state and continued lines. Checks against results
//! from outside the project name their source; bad input snapshots its located message.

use cleave::exact::{Field, RatFunc};
use cleave::linalg::SparseMatrix;
use cleave::model::space::{Fermions, IndexSet, Ladder, ModeAction};
use cleave::model::{Basis, Operator, OperatorExpr, Space};

use crate::assert_text_snapshot;
use crate::support::render_at;

fn load(text: &str) -> cleave::model::Model {
    match cleave::load(text) {
        Ok((model, _)) => model,
        Err(d) => panic!("did not lower:\n{}", d.render(text, "model.clv")),
    }
}

macro_rules! check_language_error {
    ($line_col:expr, $text:expr) => {{
        let text: &str = $text;
        let diagnostic = cleave::load(text).expect_err("should not lower");
        assert_text_snapshot!(render_at(text, &diagnostic, $line_col));
    }};
}

fn anticommutator(a: &Operator, b: &Operator) -> Operator {
    a.mul(b).add(&b.mul(a))
}

/// `{c_j, c_k^dag} = δ_jk` and `{c_j, c_k} = 0` for every pair of modes, within one fermion
/// space and across two fermion spaces with a boson between them (the canonical anticommutation
/// relations; any text on second quantization, e.g. Negele & Orland, Quantum Many-Particle
/// Systems (1988), ch. 1).
#[test]
fn modes_obey_canonical_anticommutation() {
    let sites = IndexSet::Range { first: 1, last: 2 };
    let spins = IndexSet::Names(vec!["up".into(), "dn".into()]);
    let first = Fermions::new(vec![sites.clone(), spins]).expect("four modes");
    let second = Fermions::new(vec![IndexSet::Range { first: 1, last: 2 }]).expect("two modes");
    let spaces = vec![
        Space::new("c", first.clone()),
        Space::new("q", Ladder::oscillator(2)),
        Space::new("d", second.clone()),
    ];
    let basis = Basis::new(spaces).expect("64 states");
    let mut modes: Vec<(usize, usize)> = (0..first.n_modes()).map(|m| (0, m)).collect();
    modes.extend((0..second.n_modes()).map(|m| (2, m)));
    let op = |(space, mode): (usize, usize), action| {
        OperatorExpr::mode(space, mode, action).matrix(&basis).expect("full product basis")
    };
    let n = basis.dimension();
    for &a in &modes {
        for &b in &modes {
            let (ca, cb) = (op(a, ModeAction::Annihilate), op(b, ModeAction::Annihilate));
            let cb_dag = op(b, ModeAction::Create);
            let expected = if a == b { Operator::identity(n) } else { Operator::zeros(n, n) };
            assert_eq!(anticommutator(&ca, &cb_dag), expected, "{{c{a:?}, c{b:?}^dag}}");
            assert_eq!(anticommutator(&ca, &cb), Operator::zeros(n, n), "{{c{a:?}, c{b:?}}}");
            assert_eq!(op(a, ModeAction::Create), ca.adjoint(), "c^dag is the adjoint of c");
        }
        let number = op(a, ModeAction::Create).mul(&op(a, ModeAction::Annihilate));
        assert_eq!(number, op(a, ModeAction::Number), "n = c^dag c");
    }
}

/// At `U = 0` the levels of `N` spinless fermions on a ring of `L` sites are the sums of `N`
/// distinct band energies `-2t cos(2πk/L)` (Bloch's theorem; Ashcroft & Mermin, Solid State
/// Physics (1976), ch. 8 and 10). For `L = 4` and `L = 6` the cosines are rational.
#[test]
fn ring_without_interaction_has_band_energies() {
    for (sites, band) in [(4, vec![-2, 0, 0, 2]), (6, vec![-2, -1, -1, 1, 1, 2])] {
        for particles in 1..=2 {
            let text = format!(
                "space c = fermions(1..{sites})\n\
                 H0 = -sum(i in 1..{sites}: c[i].create * c[i % {sites} + 1].annihilate\n\
                 + c[i % {sites} + 1].create * c[i].annihilate)\n\
                 V = c[1].n\n\
                 sector sum(i in 1..{sites}: c[i].n) = {particles}\n"
            );
            let model = load(&text);
            let spectrum = cleave::spectrum::unperturbed_levels(&model).expect("a numeric H0");
            let mut found: Vec<(RatFunc, usize)> =
                spectrum.levels.iter().map(|l| (l.energy.clone(), l.states.len())).collect();
            found.sort_by_key(|(e, _)| {
                e.as_constant().and_then(|c| c.as_rational()).map(|r| r.to_f64() as i64)
            });
            // Sums over sets of `particles` distinct momenta.
            let mut sums: Vec<i64> = Vec::new();
            let k = band.len();
            for mask in 0u32..(1 << k) {
                if mask.count_ones() == particles {
                    sums.push((0..k).filter(|b| mask & (1 << b) != 0).map(|b| band[b]).sum());
                }
            }
            sums.sort();
            let mut expected: Vec<(RatFunc, usize)> = Vec::new();
            for s in sums {
                match expected.last_mut() {
                    Some((e, count)) if *e == RatFunc::from_i64(s) => *count += 1,
                    _ => expected.push((RatFunc::from_i64(s), 1)),
                }
            }
            assert_eq!(found, expected, "{particles} particles on {sites} sites");
        }
    }
}

/// The Hubbard triangle's hopping in its `N = 3, S_z = 1/2` sector equals the matrix built here
/// by hand: `c_k = Z ⊗ ... ⊗ Z ⊗ σ^- ⊗ 1 ⊗ ... ⊗ 1` on six two-state modes in the order
/// `1up, 1dn, 2up, 2dn, 3up, 3dn` (the Jordan–Wigner construction; Jordan & Wigner,
/// Z. Phys. 47, 631 (1928)), restricted to the sector states.
#[test]
fn triangle_matches_hand_built_jordan_wigner() {
    let model = load(include_str!("../../examples/hubbard_triangle.clv"));
    let one = RatFunc::one();
    let identity = SparseMatrix::<RatFunc>::identity(2);
    // Mode state 0 is empty, 1 is occupied; sigma^- takes 1 to 0; Z = (-1)^n.
    let lower = SparseMatrix::from_triplets(2, 2, vec![(0, 1, one.clone())]);
    let z = SparseMatrix::diagonal(vec![one.clone(), -one.clone()]);
    let annihilate = |mode: usize| {
        (0..6).fold(SparseMatrix::<RatFunc>::identity(1), |acc, k| {
            let factor = match k.cmp(&mode) {
                std::cmp::Ordering::Less => z.clone(),
                std::cmp::Ordering::Equal => lower.clone(),
                std::cmp::Ordering::Greater => identity.clone(),
            };
            acc.kron(&factor)
        })
    };
    let site_spin = |site: usize, spin: usize| 2 * site + spin;
    let mut hopping = SparseMatrix::<RatFunc>::zeros(64, 64);
    for site in 0..3 {
        for spin in 0..2 {
            let (a, b) = (site_spin(site, spin), site_spin((site + 1) % 3, spin));
            let hop = annihilate(a).adjoint().mul(&annihilate(b));
            hopping = hopping.add(&hop).add(&hop.adjoint());
        }
    }
    // The sector states: three electrons, two up and one down; the kron index has mode 1up as
    // its highest bit, as cleave's occupation states do.
    let ups = [0, 2, 4];
    let sector: Vec<usize> = (0..64usize)
        .filter(|s| s.count_ones() == 3)
        .filter(|s| ups.iter().filter(|&&m| s & (1 << (5 - m)) != 0).count() == 2)
        .collect();
    assert_eq!(sector.len(), 9);
    let t = cleave::lower::eval_scalar("-t", &model.param_names()).expect("a scalar");
    let expected = hopping.submatrix(&sector, &sector).scale(&t);
    assert_eq!(model.basis().dimension(), 9);
    for (idx, &state) in sector.iter().enumerate() {
        assert_eq!(model.basis().key(idx), state as u128, "the same state order");
    }
    assert_eq!(model.perturbations()[0], expected);
}

/// Clebsch–Gordan coefficients and 3j symbols as exact scalars in models (Condon & Shortley,
/// The Theory of Atomic Spectra (1935); standard table values, from memory).
#[test]
fn coupling_coefficients_in_models() {
    let eval = |text: &str| cleave::lower::eval_scalar(text, &[]).expect("a scalar");
    assert_eq!(eval("cg(1/2, 1/2, 1/2, -1/2, 1, 0)"), eval("sqrt(1/2)"));
    assert_eq!(eval("cg(1, 0, 1/2, 1/2, 1/2, 1/2)"), eval("-sqrt(1/3)"));
    // (j j 0; m -m 0) = (-1)^(j-m)/sqrt(2j+1) (Edmonds, Angular Momentum in Quantum Mechanics
    // (1957), eq. 3.7.9).
    assert_eq!(eval("threej(1, 1, 0, 1, -1, 0)"), eval("sqrt(1/3)"));
    assert_eq!(eval("threej(1, 1, 0, 0, 0, 0)"), eval("-sqrt(1/3)"));
    assert_eq!(eval("threej(1, 1, 2, 0, 0, 0)"), eval("sqrt(2/15)"));
}

/// A family of spins and a sum over neighbours with a periodic wrap give the same operator as
/// the terms written out; a statement continues inside brackets and after an operator.
#[test]
fn families_sums_and_continued_lines() {
    let short = load(
        "param J\nspace s[1..3] = spin(1/2)\n\
         H0 = J * sum(i in 1..3: s[i].z * s[i % 3 + 1].z)\n\
         V = sum(i in 1..3: s[i].x)\n",
    );
    let long = load(
        "param J\nspace a = spin(1/2)\nspace b = spin(1/2)\nspace c = spin(1/2)\n\
         H0 = J * (a.z * b.z +   # first bond\n\
         b.z * c.z + c.z * a.z)\n\
         V = a.x + b.x +\n  c.x\n",
    );
    assert_eq!(short.h0(), long.h0());
    assert_eq!(short.perturbations(), long.perturbations());
    assert_eq!(short.basis().ket_label(0), "|+1/2, +1/2, +1/2>");
    assert_eq!(short.basis().spaces()[1].name, "s[2]");
    // Pairs i < j: an inner range that runs out is empty, not an error.
    let pairs = load(
        "space s[1..3] = spin(1/2)\nH0 = sum(i in 1..3, j in i+1..3: s[i].z * s[j].z)\nV = s[1].x\n",
    );
    let written = load(
        "space s[1..3] = spin(1/2)\nH0 = s[1].z * s[2].z + s[2].z * s[3].z + s[1].z * s[3].z\nV = s[1].x\n",
    );
    assert_eq!(pairs.h0(), written.h0());
}

#[test]
fn index_out_of_range() {
    check_language_error!(
        "3:25",
        "space c = fermions(1..3, [up, dn])\nH0 = c[1, up].n\nV = c[1, up].create * c[4, up].annihilate + c[4, up].create * c[1, up].annihilate\n"
    );
}

#[test]
fn sum_over_a_backwards_range() {
    check_language_error!(
        "2:15",
        "space s[1..3] = spin(1/2)\nH0 = sum(i in 3..1: s[i].z)\nV = s[1].x\n"
    );
}

#[test]
fn sum_with_no_terms() {
    check_language_error!(
        "2:6",
        "space s[1..3] = spin(1/2)\nH0 = sum(i in 2..1: s[i].z)\nV = s[1].x\n"
    );
}

#[test]
fn range_of_fractions() {
    check_language_error!(
        "2:18",
        "space s[1..3] = spin(1/2)\nH0 = sum(i in 1..5/2: s[i].z)\nV = s[1].x\n"
    );
}

#[test]
fn sector_that_no_state_has() {
    check_language_error!(
        "4:8",
        "space c = fermions(1..2)\nH0 = c[1].n\nV = c[1].create * c[2].annihilate + c[2].create * c[1].annihilate\nsector c[1].n + c[2].n = 3\n"
    );
}

#[test]
fn perturbation_breaking_the_sector() {
    check_language_error!(
        "3:5",
        "space c = fermions(1..2)\nH0 = c[1].n\nV = c[1].create + c[1].annihilate\nsector c[1].n + c[2].n = 1\n"
    );
}

#[test]
fn sector_operator_not_diagonal() {
    check_language_error!("4:8", "space s = spin(1/2)\nH0 = s.z\nV = s.x\nsector s.x = 1/2\n");
}

#[test]
fn fermion_operator_on_a_spin() {
    check_language_error!("2:8", "space s = spin(1/2)\nH0 = s.create\nV = s.x\n");
}

#[test]
fn mode_without_index() {
    check_language_error!("2:6", "space c = fermions(1..2)\nH0 = c.n\nV = c[1].n\n");
}

#[test]
fn rotor_with_negative_j() {
    check_language_error!("1:17", "space r = rotor(-1)\nH0 = r.j2\nV = r.cos\n");
}

#[test]
fn rotor_with_fractional_j() {
    check_language_error!("1:17", "space r = rotor(3/2)\nH0 = r.j2\nV = r.cos\n");
}

#[test]
fn focus_on_a_state_no_space_has() {
    check_language_error!(
        "4:13",
        "space a = ladder(3)\nH0 = a.n\nV = a.raise + a.lower\nfocus |0>, |5>\n"
    );
}

#[test]
fn focus_on_a_ket_with_too_few_fields() {
    check_language_error!(
        "5:7",
        "space a = ladder(3)\nspace b = ladder(3)\nH0 = a.n + b.n\nV = a.raise * b.lower + a.lower * b.raise\nfocus |1>\n"
    );
}

#[test]
fn focus_repeated() {
    check_language_error!(
        "5:1",
        "space a = ladder(3)\nH0 = a.n\nV = a.raise + a.lower\nfocus 1\nfocus |1>\n"
    );
}
