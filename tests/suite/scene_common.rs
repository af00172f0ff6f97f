//! Shared checks of the scene tests.
#![allow(dead_code)]

use biasline::scene::{Placement, Scene};

/// invariant: no two annotation boxes placed by the program overlap (boxes the
/// user dragged are the user's choice and are left out).
pub fn assert_annotations_apart(name: &str, s: &Scene) {
    let placed: Vec<_> = s
        .annotations
        .iter()
        .filter(|a| a.placement != Placement::User)
        .collect();
    for (i, a) in placed.iter().enumerate() {
        for b in &placed[i + 1..] {
            assert!(
                !a.rect.overlaps(&b.rect),
                "{name}: {} overlaps {} ({:?} / {:?})",
                a.key,
                b.key,
                a.rect,
                b.rect
            );
        }
    }
}
