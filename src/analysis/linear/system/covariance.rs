//! Entries of the node-noise covariance `K = A⁻¹·N·A⁻ᴴ` among a few
//! unknowns at a time, without rows of the inverse, for the per-stage noise
//! of long chains.
//!
//! `N = Σₛ dₛ·(e_a − e_b)(e_a − e_b)ᵀ` stamps each current-noise generator's
//! density like a conductance. The augmented matrix `B = [[N, A], [Aᴴ, 0]]`
//! has the inverse `[[0, A⁻ᴴ], [A⁻¹, −A⁻¹·N·A⁻ᴴ]]` (multiply out: the
//! blocks of `B·B⁻¹` are `A·A⁻¹ = I`, `N·A⁻ᴴ − A·A⁻¹·N·A⁻ᴴ = 0`, `0` and
//! `Aᴴ·A⁻ᴴ = I`), so one factorization of the sparse `B` and its selected
//! inverse ([`crate::analysis::mna::SelectedInverse`]) give both `A⁻¹` and
//! `K` on the joined pattern. N is scaled by 1/max dₛ before factoring.
//!
//! A noise power read through a combination of rows `y = Σₖ cₖ·A⁻¹[pₖ, :]`
//! is `Σₛ dₛ·|y_a − y_b|² = Σⱼₖ cₖ·conj(cⱼ)·K[pₖ, pⱼ]`, so it needs `K`
//! only among the probes of the combination.

use super::super::{Node, SingularSystem, C64};
use super::factored::{woodbury, AdjointFactors, Change, Probe};
use crate::analysis::mna::{LinearSystem, PatternCollector, SelectedInverse, Stamp};

/// The selected inverse of the augmented matrix at the factors' frequency.
pub struct Covariance {
    z: SelectedInverse<C64>,
    /// Unknowns of A.
    m: usize,
    /// The scale taken out of N.
    sigma: f64,
    /// The largest selected entry, in K's units.
    scale: f64,
}

/// A row combination `Σ cₖ·A⁻¹[pₖ, :]`.
pub type Combination = Vec<(Probe, C64)>;

impl AdjointFactors<'_, '_> {
    /// Factor the augmented matrix for current-noise `generators` (from
    /// node, to node, density A²/Hz), with every pair within each of
    /// `groups` joined in its pattern. None when the system is dense, has
    /// no noise, or the augmented matrix does not factor (then read rows).
    pub fn covariance(
        &self,
        generators: &[(Node, Node, f64)],
        groups: &[Vec<Probe>],
    ) -> Option<Covariance> {
        let entries = {
            let solver = self.sys.adjoint_solver.borrow();
            solver.as_ref()?.sparse_entries()?
        };
        let m = self.sys.size();
        let sigma = generators.iter().map(|g| g.2).fold(0.0, f64::max);
        if !(sigma > 0.0 && sigma.is_finite()) {
            return None;
        }
        let mut values: Vec<(usize, usize, C64)> = Vec::with_capacity(2 * entries.len());
        // The adjoint solver holds M = Aᵀ: B[c, m + r] = A[c, r] = M[r, c]
        // and B[m + r, c] = conj(A[c, r]).
        for &(r, c, v) in &entries {
            values.push((c, m + r, v));
            values.push((m + r, c, v.conj()));
        }
        for &(a, b, d) in generators {
            let d = C64::new(d / sigma, 0.0);
            let ra = self.sys.probe_row(Probe::Node(a));
            let rb = self.sys.probe_row(Probe::Node(b));
            for (r, c, v) in [(ra, ra, d), (rb, rb, d), (ra, rb, -d), (rb, ra, -d)] {
                if let (Some(r), Some(c)) = (r, c) {
                    values.push((r, c, v));
                }
            }
        }
        let zero = C64::default();
        for group in groups {
            let rows: Vec<usize> = group
                .iter()
                .filter_map(|&p| self.sys.probe_row(p))
                .collect();
            for &r in &rows {
                for &c in &rows {
                    // Binv[x, y] is on the pattern where B[y, x] is joined.
                    values.push((c, m + r, zero));
                    values.push((m + r, m + c, zero));
                }
            }
        }
        let mut pattern = PatternCollector::default();
        for &(r, c, _) in &values {
            Stamp::<C64>::add(&mut pattern, r, c, zero);
        }
        let mut b = LinearSystem::<C64>::with_limit(2 * m, &pattern, 0);
        for &(r, c, v) in &values {
            b.add(r, c, v);
        }
        b.factor().ok()?;
        let z = b.selected_inverse()?.ok()?;
        let scale = z.largest() * sigma;
        Some(Covariance { z, m, sigma, scale })
    }

    /// The error scale of the K entries (see [`SelectedInverse::largest`]):
    /// the largest selected entry of the augmented inverse, in K's units.
    pub fn covariance_scale(&self, cov: &Covariance) -> f64 {
        cov.scale
    }

    /// `A⁻¹[a, b]` from the augmented inverse (zero off the unknowns; None
    /// off the selected pattern).
    pub fn inverse_entry(&self, cov: &Covariance, a: Probe, b: Probe) -> Option<C64> {
        match (self.sys.probe_row(a), self.sys.probe_row(b)) {
            (Some(ra), Some(rb)) => cov.z.get(cov.m + ra, rb),
            _ => Some(C64::default()),
        }
    }

    /// `K[a, b]` (A²/Hz-weighted V²: see the module notes).
    pub fn covariance_entry(&self, cov: &Covariance, a: Probe, b: Probe) -> Option<C64> {
        match (self.sys.probe_row(a), self.sys.probe_row(b)) {
            (Some(ra), Some(rb)) => cov.z.get(cov.m + ra, cov.m + rb).map(|v| -v * cov.sigma),
            _ => Some(C64::default()),
        }
    }

    /// The noise power read through a row combination: `Σₛ dₛ·|y_a − y_b|²`.
    pub fn combined_power(&self, cov: &Covariance, c: &Combination) -> Option<f64> {
        let mut sum = C64::default();
        for &(pk, ck) in c {
            for &(pj, cj) in c {
                sum += ck * cj.conj() * self.covariance_entry(cov, pk, pj)?;
            }
        }
        Some(sum.re)
    }

    /// The combination's entry at `read`: `Σ cₖ·A⁻¹[pₖ, read]`.
    pub fn combined_entry(&self, cov: &Covariance, c: &Combination, read: Probe) -> Option<C64> {
        let mut v = C64::default();
        for &(p, k) in c {
            v += k * self.inverse_entry(cov, p, read)?;
        }
        Some(v)
    }

    /// Row `output` of the changed system's inverse as a combination of
    /// rows of A⁻¹ (the Woodbury update of [`Self::changed_row`], from the
    /// entries among `output` and the changed rows). None: an entry is off
    /// the pattern; `Some(Err)`: the changed system is singular.
    pub fn changed_combination(
        &self,
        cov: &Covariance,
        output: Probe,
        changes: &[Change],
    ) -> Option<Result<Combination, SingularSystem>> {
        let x = |a: Probe, b: Probe| self.inverse_entry(cov, a, b);
        let mut out = vec![(output, C64::new(1.0, 0.0))];
        if changes.is_empty() {
            return Some(Ok(out));
        }
        let Some(z) = woodbury(changes, output, x)? else {
            return Some(Err(SingularSystem));
        };
        out.extend(
            changes
                .iter()
                .zip(&z)
                .map(|(c, zi)| (c.probe(), -zi * c.coef())),
        );
        Some(Ok(out))
    }
}
