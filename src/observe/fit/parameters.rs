//! The unknowns of a fit: internal coefficients to degree L, optionally their linear rates of
//! change (secular variation) and external-source coefficients to a low degree, with some
//! degrees held fixed at zero.
//!
//! The full vector is laid out block by block — internal, rates (same layout), external — each
//! block order by order as [`UnknownLayout`] does. The solver sees only the free unknowns, in
//! the same order with the fixed ones left out.

use super::design::UnknownLayout;

/// Which block an unknown belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Block {
    /// Internal coefficients (the model itself).
    Internal,
    /// Rates of change of the internal coefficients, per year.
    Rate,
    /// External-source coefficients.
    External,
}

/// Layout of the full and free unknown vectors.
#[derive(Debug, Clone, PartialEq)]
pub struct ParameterLayout {
    pub internal: UnknownLayout,
    /// Whether the rate block is present.
    pub secular_variation: bool,
    pub external: Option<UnknownLayout>,
    /// Full index of each free unknown.
    free: Vec<usize>,
    /// Block and degree of each full unknown.
    kind: Vec<(Block, usize)>,
}

impl ParameterLayout {
    /// Unknowns to degree `lmax`, with rates when `secular_variation`, external coefficients to
    /// `external_lmax` (their degree 0 is always fixed: it has no field), and the internal
    /// degrees (and their rates) in `fixed_degrees` held at zero.
    pub fn new(
        lmax: usize,
        secular_variation: bool,
        external_lmax: Option<usize>,
        fixed_degrees: &[usize],
    ) -> ParameterLayout {
        let internal = UnknownLayout::new(lmax);
        let external = external_lmax.map(UnknownLayout::new);
        let mut kind = Vec::new();
        let degrees = internal.degrees();
        kind.extend(degrees.iter().map(|&l| (Block::Internal, l)));
        if secular_variation {
            kind.extend(degrees.iter().map(|&l| (Block::Rate, l)));
        }
        if let Some(e) = &external {
            kind.extend(e.degrees().into_iter().map(|l| (Block::External, l)));
        }
        let free = kind
            .iter()
            .enumerate()
            .filter(|(_, (block, l))| match block {
                Block::External => *l > 0,
                _ => !fixed_degrees.contains(l),
            })
            .map(|(i, _)| i)
            .collect();
        ParameterLayout {
            internal,
            secular_variation,
            external,
            free,
            kind,
        }
    }

    /// Length of the full vector.
    pub fn full_len(&self) -> usize {
        self.kind.len()
    }

    /// Number of free unknowns.
    pub fn free_len(&self) -> usize {
        self.free.len()
    }

    /// Full index of each free unknown.
    pub fn free_indices(&self) -> &[usize] {
        &self.free
    }

    /// Start of the rate block in the full vector.
    pub fn rate_offset(&self) -> usize {
        self.internal.len()
    }

    /// Start of the external block in the full vector.
    pub fn external_offset(&self) -> usize {
        self.internal.len() * if self.secular_variation { 2 } else { 1 }
    }

    /// Block and degree of each free unknown.
    pub fn free_kinds(&self) -> Vec<(Block, usize)> {
        self.free.iter().map(|&i| self.kind[i]).collect()
    }

    /// The free unknowns grouped by order m (internal, rate and external unknowns of one
    /// order together), as indices into the free vector; orders without free unknowns are
    /// left out. The blocks of the iterative solver's preconditioner.
    pub fn free_groups_by_order(&self) -> Vec<Vec<usize>> {
        let mut order = self.internal.orders();
        if self.secular_variation {
            order.extend(self.internal.orders());
        }
        if let Some(e) = &self.external {
            order.extend(e.orders());
        }
        let top = self
            .external
            .as_ref()
            .map_or(self.internal.lmax, |e| e.lmax.max(self.internal.lmax));
        let mut groups = vec![Vec::new(); top + 1];
        for (k, &full) in self.free.iter().enumerate() {
            groups[order[full]].push(k);
        }
        groups.retain(|g| !g.is_empty());
        groups
    }

    /// The full vector from the free one (fixed unknowns zero).
    pub fn expand(&self, free_values: &[f64]) -> Vec<f64> {
        let mut full = vec![0.0; self.full_len()];
        for (&i, &v) in self.free.iter().zip(free_values) {
            full[i] = v;
        }
        full
    }

    /// The free entries of a full row.
    pub fn gather(&self, full: &[f64], out: &mut [f64]) {
        for (o, &i) in out.iter_mut().zip(&self.free) {
            *o = full[i];
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fixed_degrees_leave_the_vector() {
        let p = ParameterLayout::new(3, true, Some(1), &[0, 1]);
        assert_eq!(p.full_len(), 16 + 16 + 4);
        // internal and rates lose degrees 0 and 1 (4 each), external loses degree 0
        assert_eq!(p.free_len(), 12 + 12 + 3);
        let full = p.expand(&vec![1.0; p.free_len()]);
        assert_eq!(full[p.internal.c_index(0, 0)], 0.0);
        assert_eq!(full[p.internal.c_index(2, 0)], 1.0);
        assert_eq!(full[p.external_offset()], 0.0);
        // every free unknown in exactly one order group; order 0 holds the zonal terms
        let groups = p.free_groups_by_order();
        let mut seen: Vec<usize> = groups.iter().flatten().copied().collect();
        seen.sort_unstable();
        assert_eq!(seen, (0..p.free_len()).collect::<Vec<_>>());
        assert_eq!(groups.len(), 4);
        // order 0: C_20, C_30 (internal and rate), C_10 external
        assert_eq!(groups[0].len(), 2 + 2 + 1);
    }
}
