//! Cautions about a model space's results that the reader must see: a cut-off space (an
//! oscillator, a rotor) whose top states the wave operator reached.

use super::{Note, Solved, Working};
use crate::model::Model;

/// Warns when the wave operator came close enough to the top of a cut-off space that the
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
        // Only a space that stands for a larger one cut off has a rung; rungs count up from 0.
        let Some(top) = space.kind().rung(0).map(|r| r.top) else { continue };
        let rung = |local: usize| space.kind().rung(local).map_or(0, |r| r.level);
        // Coupling range of the perturbation in this factor.
        let mut range = 0usize;
        for v in model.perturbations() {
            for (r, c, _) in v.triplets() {
                let (a, b) = (rung(basis.factors(r)[space_idx]), rung(basis.factors(c)[space_idx]));
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
                .map(|(p, _)| rung(basis.factors(*p)[space_idx]))
                .max()
                .unwrap_or(0)
        };
        let reach: Vec<usize> = solved
            .omega_support
            .iter()
            .map(|s| s.iter().map(reach_of).max().unwrap_or(0))
            .collect();
        // Energy order m uses Omega_0 .. Omega_{m-1}; it is safe while they stay `range` below top.
        let first_bad = (0..order).find(|&m| reach[m] + range > top);
        if let Some(m) = first_bad {
            let needed_top = reach[0] + range * (order + 1);
            notes.push(Note::Truncation {
                space: space.name.clone(),
                cut: space.kind().declaration(),
                first_affected: (m + 1) as u32,
                sufficient: space.kind().declaration_with_top(needed_top),
            });
        }
    }
    notes
}
