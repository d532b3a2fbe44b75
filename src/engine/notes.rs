//! Cautions about a model space's results that the reader must see: a truncated ladder whose top
//! the wave operator reached, and whether the series may be asymptotic.

use super::{Note, Solved, Working};
use crate::model::{Model, Space};

/// Whether the reader must be told that the series may be asymptotic rather than convergent: a
/// factor stands for an unbounded ladder (an oscillator or a rotor, cut off), whose perturbation
/// series typically diverge for every coupling (Bender & Wu, Phys. Rev. 184, 1231, 1969). A
/// finite few-level model's series converge inside the radius that `cleave check` reports, so
/// none of them gets the caution. Every emitter decides through this one function.
pub fn asymptotic_caution_applies(model: &Model) -> bool {
    model.basis().spaces().iter().any(|space| space.kind().rung(0).is_some())
}

/// The ladder level of local state `local_idx` of `space` and the top level kept, for a space
/// that stands for a truncated ladder (an oscillator: `n` and `N - 1`; a rotor: `J` and `Jmax`);
/// `None` for a space that is the whole model (spins, ladders, named levels, fermions).
fn truncation_level(space: &Space, local_idx: usize) -> Option<(usize, usize)> {
    space.kind().rung(local_idx).map(|rung| (rung.level, rung.top))
}

/// Warns when the wave operator came within the coupling range of the top of a truncated ladder,
/// saying which energies and which state corrections the cut can have changed.
///
/// With `r` the largest change of ladder level any perturbation makes, an operator element
/// between levels `i` and `j` is the untruncated one when `max(i, j) + r` stays at or below the
/// top (a product of ladder operators never climbs higher on the way), and nothing is missing
/// from `V psi` while `psi` stays `r` below the top. So `Omega_m` is exact while every
/// `Omega_j`, `j < m`, reaches at most `top - r`; the state correction of order `m` is then
/// exact, and so is the energy of order `m + 1` (it is `P V Omega_m`, Bloch's form, and the
/// Hermitian form is built from the same `Omega`; Bloch, Nucl. Phys. 6, 329, 1958).
pub(crate) fn truncation_notes(
    model: &Model,
    working: &Working,
    solved: &Solved,
    order: usize,
    states_to: usize,
) -> Vec<Note> {
    let basis = model.basis();
    let mut notes = Vec::new();
    for (space_idx, space) in basis.spaces().iter().enumerate() {
        let Some((_, top)) = truncation_level(space, 0) else { continue };
        let level = |local: usize| truncation_level(space, local).map_or(0, |(l, _)| l);
        // Coupling range of the perturbations in this factor.
        let mut range = 0usize;
        for v in model.perturbations() {
            for (r, c, _) in v.triplets() {
                let (a, b) = (basis.factors(r)[space_idx], basis.factors(c)[space_idx]);
                range = range.max(level(a).abs_diff(level(b)));
            }
        }
        if range == 0 {
            continue;
        }
        let reach_of = |working_idx: &usize| -> usize {
            working.columns[*working_idx]
                .entries()
                .iter()
                .map(|(p, _)| level(basis.factors(*p)[space_idx]))
                .max()
                .unwrap_or(0)
        };
        let reach: Vec<usize> = solved
            .omega_support
            .iter()
            .map(|s| s.iter().map(reach_of).max().unwrap_or(0))
            .collect();
        // The first Omega_j whose reach lets the cut in: Omega_{j+1} and later may differ.
        let Some(first_bad) = (0..reach.len()).find(|&j| reach[j] + range > top) else { continue };
        let states_from = first_bad + 1;
        // One state: Wigner's 2n+1 rule (Wigner, Math. naturwiss. Anz. ungar. Akad. Wiss. 53, 477,
        // 1935) gives the energy to order 2n+1 from the state to order n, so the energies stay
        // exact through order 2 * states_from - 1. A larger model space is held to the energy
        // `P V Omega_m`.
        let one_state = solved.hermitian.first().is_some_and(|m| m.n_rows() == 1);
        let energies_from = if one_state { 2 * states_from } else { first_bad + 2 };
        let energies = (energies_from <= order).then_some(energies_from as u32);
        let states = (states_from <= states_to).then_some(states_from as u32);
        if energies.is_none() && states.is_none() {
            continue;
        }
        // The reach grows by at most `range` per order; the last Omega that must be exact is the
        // one of the highest reported state, or the one the highest energy needs.
        let for_energy = if one_state { order / 2 } else { order.saturating_sub(1) };
        let last = for_energy.saturating_sub(1).max(states_to.saturating_sub(1));
        notes.push(Note::Truncation {
            space: space.name.clone(),
            cut: space.kind().declaration(),
            energies_from: energies,
            states_from: states,
            sufficient: space.kind().declaration_with_top(reach[0] + range * (last + 1)),
        });
    }
    notes
}
