//! Wire segments along one grid line, for the T-junction test: which
//! segments have a given point strictly inside. Scanning every segment on
//! the line for every point made connecting quadratic where many segments
//! share a line (a long rail); sorted by their start with the running
//! furthest end, a query walks back only over segments that could reach it.

use petgraph::graph::NodeIndex;

/// The segments of one line: (start, end, a vertex of the segment), start
/// < end, sorted by start; `reach[k]` is the furthest end among the first
/// k + 1.
#[derive(Default)]
pub struct Line {
    segments: Vec<(i32, i32, NodeIndex)>,
    reach: Vec<i32>,
}

impl Line {
    pub fn push(&mut self, start: i32, end: i32, vertex: NodeIndex) {
        self.segments.push((start, end, vertex));
    }

    /// Sort once every segment is in.
    pub fn finish(&mut self) {
        self.segments.sort_by_key(|s| (s.0, s.1, s.2.index()));
        let mut furthest = i32::MIN;
        self.reach = self
            .segments
            .iter()
            .map(|s| {
                furthest = furthest.max(s.1);
                furthest
            })
            .collect();
    }

    /// The vertices of the segments with `at` strictly inside.
    pub fn inside(&self, at: i32) -> impl Iterator<Item = NodeIndex> + '_ {
        // Segments starting before `at`; of those, walk back while an
        // earlier one can still reach past `at`.
        let before = self.segments.partition_point(|s| s.0 < at);
        (0..before)
            .rev()
            .take_while(move |&k| self.reach[k] > at)
            .filter(move |&k| self.segments[k].1 > at)
            .map(move |k| self.segments[k].2)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inside_finds_what_a_scan_finds() {
        // invariant: the index answers exactly as testing every segment.
        let mut s = 12345u64;
        let mut next = move |m: i32| {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((s >> 33) % m as u64) as i32
        };
        let mut line = Line::default();
        let mut all = Vec::new();
        for k in 0..300 {
            let a = next(1000);
            let b = a + 1 + next(if k % 10 == 0 { 400 } else { 20 });
            line.push(a, b, NodeIndex::new(k));
            all.push((a, b, NodeIndex::new(k)));
        }
        line.finish();
        for at in -5..1450 {
            let mut got: Vec<_> = line.inside(at).collect();
            let mut want: Vec<_> = all
                .iter()
                .filter(|s| s.0 < at && at < s.1)
                .map(|s| s.2)
                .collect();
            got.sort();
            want.sort();
            assert_eq!(got, want, "at {at}");
        }
    }
}
