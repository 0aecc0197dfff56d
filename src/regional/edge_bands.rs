//! The edges of a polygon indexed by the latitudes they span, so that the edges a circle of
//! latitude can meet are found without looking at every edge.
//!
//! z = cos θ ∈ [−1, 1] is cut into equal bands; each edge is listed in every band its z-range
//! [z_lo, z_hi] overlaps (compressed rows: `first[b]..first[b + 1]` of `edges`). A query at z
//! reads one band and keeps the edges whose range holds z, so its cost is the number of edges
//! near that latitude, not the number of vertices. With as many bands as edges, a ring of
//! short edges puts O(1) edges in a band on average (common practice: a bucket grid).

/// Edges listed by the bands of z they span (module notes).
#[derive(Debug, Clone, PartialEq)]
pub struct EdgeBands {
    bands: usize,
    /// Start of each band's list in `edges`, and one past the end.
    first: Vec<usize>,
    edges: Vec<u32>,
    /// [z_lo, z_hi] of each edge, widened by the tolerance.
    spans: Vec<(f64, f64)>,
}

/// Ranges are widened by this much so that a circle through an edge's end still meets it.
const SPAN_SLACK: f64 = 1e-9;

impl EdgeBands {
    /// The index of edges with z-ranges `spans` (each lo ≤ hi, within [−1, 1]).
    pub fn new(spans: &[(f64, f64)]) -> Self {
        let bands = spans.len().clamp(16, 1 << 16);
        let spans: Vec<(f64, f64)> = spans
            .iter()
            .map(|&(lo, hi)| (lo - SPAN_SLACK, hi + SPAN_SLACK))
            .collect();
        let band_of = |z: f64| -> usize {
            let b = ((z + 1.0) * 0.5 * bands as f64).floor();
            (b.max(0.0) as usize).min(bands - 1)
        };
        let mut count = vec![0usize; bands + 1];
        for &(lo, hi) in &spans {
            for b in band_of(lo)..=band_of(hi) {
                count[b + 1] += 1;
            }
        }
        for b in 0..bands {
            count[b + 1] += count[b];
        }
        let first = count.clone();
        let mut fill = count;
        let mut edges = vec![0u32; first[bands]];
        for (i, &(lo, hi)) in spans.iter().enumerate() {
            for b in band_of(lo)..=band_of(hi) {
                edges[fill[b]] = i as u32;
                fill[b] += 1;
            }
        }
        EdgeBands {
            bands,
            first,
            edges,
            spans,
        }
    }

    /// The edges whose z-range holds `z` (in increasing order).
    pub fn meeting(&self, z: f64) -> impl Iterator<Item = usize> + '_ {
        let b =
            (((z + 1.0) * 0.5 * self.bands as f64).floor().max(0.0) as usize).min(self.bands - 1);
        self.edges[self.first[b]..self.first[b + 1]]
            .iter()
            .map(|&i| i as usize)
            .filter(move |&i| {
                let (lo, hi) = self.spans[i];
                lo <= z && z <= hi
            })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_query_finds_exactly_the_edges_spanning_its_latitude() {
        // brute force over the ranges is the reference (common practice)
        let spans: Vec<(f64, f64)> = (0..300)
            .map(|i| {
                let a = ((i as f64) * 0.731).sin();
                let b = ((i as f64) * 1.377 + 0.2).sin() * 0.05 + a;
                (a.min(b).max(-1.0), a.max(b).min(1.0))
            })
            .collect();
        let bands = EdgeBands::new(&spans);
        for k in 0..=400 {
            let z = -1.0 + 2.0 * k as f64 / 400.0;
            let got: Vec<usize> = bands.meeting(z).collect();
            let want: Vec<usize> = (0..spans.len())
                .filter(|&i| spans[i].0 - SPAN_SLACK <= z && z <= spans[i].1 + SPAN_SLACK)
                .collect();
            assert_eq!(got, want, "z {z}");
        }
    }
}
