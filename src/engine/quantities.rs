//! Named quantities: linear combinations of branch energies, each branch picked by the
//! unperturbed state it comes from (`quantity ZZ = E|1, 1> - E|1, 0> - E|0, 1> + E|0, 0>`).

use super::{EngineError, ModelSpace};
use crate::exact::{Field, RatFunc};
use crate::model::Model;

/// The series of one named quantity.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct QuantitySeries {
    /// The name as written.
    pub name: String,
    /// The coefficient of `lambda^k`, `k = 0..=N`.
    pub series: Vec<RatFunc>,
}

/// The series of every quantity of `model` from the derived model spaces.
pub(crate) fn quantities(
    model: &Model,
    spaces: &[ModelSpace],
    order: u32,
) -> Result<Vec<QuantitySeries>, EngineError> {
    let mut res = Vec::new();
    for (q_idx, quantity) in model.quantities().iter().enumerate() {
        let mut series = vec![RatFunc::zero(); order as usize + 1];
        for (t_idx, (state, weight)) in quantity.terms.iter().enumerate() {
            let fail = |why: String| EngineError::BadQuantity {
                quantity: q_idx,
                term: t_idx,
                message: format!("{} {why}", model.basis().ket_label(*state)),
            };
            // The branches whose unperturbed states have a component along `state`.
            let candidates: Vec<(usize, usize)> = spaces
                .iter()
                .enumerate()
                .flat_map(|(s, space)| {
                    space.branches.iter().enumerate().filter_map(move |(b, branch)| {
                        let touches = branch
                            .zeroth_order
                            .iter()
                            .any(|v| v.entries().iter().any(|(i, _)| i == state));
                        touches.then_some((s, b))
                    })
                })
                .collect();
            let (s, b) = match candidates.as_slice() {
                [] => {
                    return Err(fail(
                        "belongs to no model space studied; add its level to a `focus` line".into(),
                    ))
                }
                [one] => *one,
                _ => {
                    return Err(fail(
                        "is spread over several branches of a degenerate level; name a state \
                         of a level that is not degenerate, or a single branch's state"
                            .into(),
                    ))
                }
            };
            let branch = &spaces[s].branches[b];
            if branch.multiplicity > 1 || branch.energy.len() < series.len() {
                return Err(fail(format!(
                    "names a branch that is still degenerate at order {order} (multiplicity {})",
                    branch.multiplicity
                )));
            }
            for (acc, e) in series.iter_mut().zip(&branch.energy) {
                *acc += &(e.clone() * weight);
            }
        }
        res.push(QuantitySeries { name: quantity.name.clone(), series });
    }
    Ok(res)
}
