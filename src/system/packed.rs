//! The system's uncoupled species packed for the fast path's passes (made once when the
//! system is compiled): per species its index, its slots in the power and activity-factor
//! tables, ν(H⁺) and its charge split by sign, grouped by component.

/// Largest |ν(H⁺)| of any species: families have at most 12 protons and complexes gain or
/// lose at most 12 (both checked where they are defined).
pub(crate) const NU_SPAN: usize = 12;
/// Length of the power table (x^k for k = −12..=12 at k + 12), a power of two so that an
/// index masked by `POWER_MASK` needs no bounds check.
pub(crate) const POWER_SLOTS: usize = 32;
pub(crate) const POWER_MASK: usize = POWER_SLOTS - 1;
/// Length of the table of activity factors by |z|: systems whose uncoupled species all have
/// |z| below it use the table (others retake the coefficients species by species).
pub(crate) const CHARGE_TABLE: usize = 16;
pub(crate) const CHARGE_MASK: usize = CHARGE_TABLE - 1;

/// The largest |z| of `members` (see [`CHARGE_TABLE`]).
pub(crate) fn largest_charge(members: &[Member]) -> usize {
    members.iter().map(|m| m.z2.sqrt().round() as usize).max().unwrap_or(0)
}

/// One uncoupled species as the fast path's passes read it: its index, its position in the
/// power table, its |z| (position in the table of activity factors), ν(H⁺),
/// z⁺ = max(z, 0), z⁻ = max(−z, 0) and z².
#[derive(Debug, Default, Clone, Copy, PartialEq)]
pub(crate) struct Member {
    pub(crate) s: usize,
    pub(crate) k: usize,
    pub(crate) zk: usize,
    pub(crate) nu: f64,
    pub(crate) zp: f64,
    pub(crate) zn: f64,
    pub(crate) z2: f64,
}

impl Member {
    /// Species `s` with ν(H⁺) = `nu` (within ±[`NU_SPAN`], checked when the system is
    /// compiled) and charge `z`.
    pub(crate) fn new(s: usize, nu: i32, z: f64) -> Self {
        Member {
            s,
            k: (nu + NU_SPAN as i32) as usize,
            zk: (z.abs().min(CHARGE_MASK as f64)) as usize,
            nu: f64::from(nu),
            zp: z.max(0.0),
            zn: (-z).max(0.0),
            z2: z * z,
        }
    }
}
