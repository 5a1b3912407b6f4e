//! Helpers shared by the unit tests.

/// A fixed linear congruential sequence of draws in [0, 1) from `seed` (the multiplier and
/// increment of Knuth's MMIX generator, *The Art of Computer Programming*, vol. 2), so that a
/// test's pseudo-random set is the same on every run.
pub(crate) fn lcg(seed: u64) -> impl FnMut() -> f64 {
    let mut state = seed;
    move || {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (state >> 11) as f64 / (1u64 << 53) as f64
    }
}
