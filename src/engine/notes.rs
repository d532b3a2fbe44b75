//! Cautions about a model space's results that the reader must see: a truncated oscillator whose
//! top states the wave operator reached.

use super::{Note, Solved, Working};
use crate::model::{Model, SpaceKind};

/// Whether the reader must be told that the series may be asymptotic rather than convergent: a
/// factor stands for an unbounded ladder (an oscillator, cut at its cutoff), whose perturbation
/// series typically diverge for every coupling (Bender & Wu, Phys. Rev. 184, 1231, 1969). A
/// finite few-level model's series converge inside the radius that `cleave check` reports, so
/// none of them gets the caution. Every emitter decides through this one function.
pub fn asymptotic_caution_applies(model: &Model) -> bool {
    model.basis().spaces().iter().any(|space| matches!(space.kind, SpaceKind::Oscillator { .. }))
}

/// Warns when the wave operator came close enough to the top of a truncated oscillator that the
/// cut can have changed a coefficient (ENGINE.md §8; the states within the coupling range of the
/// top lack the couplings of the untruncated operator).
pub(crate) fn truncation_notes(
    model: &Model,
    working: &Working,
    solved: &Solved,
    order: usize,
) -> Vec<Note> {
    let basis = model.basis();
    let mut notes = Vec::new();
    for (space_idx, space) in basis.spaces().iter().enumerate() {
        let SpaceKind::Oscillator { n_states } = space.kind else { continue };
        // Coupling range of the perturbation in this factor.
        let mut range = 0usize;
        for v in model.perturbations() {
            for (r, c, _) in v.triplets() {
                let (a, b) = (basis.factors(r)[space_idx], basis.factors(c)[space_idx]);
                range = range.max(a.abs_diff(b));
            }
        }
        if range == 0 {
            continue;
        }
        let reach_of = |working_idx: &usize| -> usize {
            working.columns[*working_idx]
                .entries()
                .iter()
                .map(|(p, _)| basis.factors(*p)[space_idx])
                .max()
                .unwrap_or(0)
        };
        let reach: Vec<usize> = solved
            .omega_support
            .iter()
            .map(|s| s.iter().map(reach_of).max().unwrap_or(0))
            .collect();
        let top = n_states - 1;
        // Energy order m uses Omega_0 .. Omega_{m-1}; it is safe while they stay `range` below top.
        let first_bad = (0..order).find(|&m| reach[m] + range > top);
        if let Some(m) = first_bad {
            notes.push(Note::Truncation {
                space: space.name.clone(),
                n_states,
                first_affected: (m + 1) as u32,
                sufficient: reach[0] + range * (order + 1) + 1,
            });
        }
    }
    notes
}
