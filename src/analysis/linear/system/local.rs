//! Entries of the inverse among a few unknowns, without its rows: the
//! selected inverse ([`crate::analysis::mna::SelectedInverse`], Takahashi's
//! recurrence over the factors) of the factored adjoint system, and the
//! Sherman–Morrison–Woodbury update of [`super::AdjointFactors`] read from
//! those entries alone.
//!
//! The changed entry `Ã⁻¹[o, r]` needs `X = A⁻¹` only among `o`, `r` and
//! the changed rows: `x̃_o[r] = X[o, r] − Σᵢ zᵢ·coefᵢ·X[rowᵢ, r]` with the
//! small system built from `X[rowᵢ, rowⱼ]` and `X[o, rowⱼ]`. In a chain,
//! a stage's own unknowns lie close together in the factors, so these
//! entries are on the selected pattern and each stage costs O(1) instead
//! of the O(n) of full rows. An entry off the pattern is reported as
//! such, and the caller reads the rows instead.

use super::super::{SingularSystem, C64};
use super::factored::{woodbury, AdjointFactors, Change, Probe};
use crate::analysis::mna::SelectedInverse;

/// The selected entries of the inverse at the adjoint factors' frequency.
pub struct LocalInverse {
    /// Of the transposed system: `z[u, o] = A⁻¹[o, u]`.
    z: SelectedInverse<C64>,
    /// Its largest entry.
    scale: f64,
}

impl AdjointFactors<'_, '_> {
    /// The selected inverse of the factored system (None when it is solved
    /// densely, or the recurrence fails: then read rows).
    pub fn local_inverse(&self) -> Option<LocalInverse> {
        let solver = self.sys.adjoint_solver.borrow();
        let z = solver.as_ref()?.selected_inverse()?.ok()?;
        let scale = z.largest();
        Some(LocalInverse { z, scale })
    }

    /// The error scale of the entries: the largest selected one.
    pub fn local_scale(&self, local: &LocalInverse) -> f64 {
        local.scale
    }

    /// `A⁻¹[o, u]` (zero where a probe is not an unknown); None when off
    /// the selected pattern.
    pub fn entry(&self, local: &LocalInverse, o: Probe, u: Probe) -> Option<C64> {
        match (self.sys.probe_row(o), self.sys.probe_row(u)) {
            (Some(ro), Some(ru)) => local.z.get(ru, ro),
            _ => Some(C64::default()),
        }
    }

    /// As [`Self::changed_entry`], from selected entries: None when one it
    /// needs is off the pattern (read the rows instead), `Some(Err)` when
    /// the changed system is singular to working precision.
    pub fn local_changed_entry(
        &self,
        local: &LocalInverse,
        output: Probe,
        changes: &[Change],
        read: Probe,
    ) -> Option<Result<C64, SingularSystem>> {
        let x = |a: Probe, b: Probe| self.entry(local, a, b);
        let mut v = x(output, read)?;
        if changes.is_empty() {
            return Some(Ok(v));
        }
        // Every entry read before solving: a missing one leaves it to the rows.
        let mut at_read = Vec::with_capacity(changes.len());
        for c in changes {
            at_read.push(c.coef() * x(c.probe(), read)?);
        }
        let Some(z) = woodbury(changes, output, x)? else {
            return Some(Err(SingularSystem));
        };
        for (zi, ri) in z.iter().zip(&at_read) {
            v -= zi * ri;
        }
        if !(v.re.is_finite() && v.im.is_finite()) {
            return Some(Err(SingularSystem));
        }
        Some(Ok(v))
    }
}
