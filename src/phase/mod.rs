//! Phases beside the solution: solids ([`Solid`]), gases ([`Gas`], [`Pressure`]), the
//! constraints that replace a total by a measured or imposed quantity ([`Constraint`]), and
//! the saturation state a result reports ([`SolidState`], [`GasState`]).
//!
//! In the solver each of them is one linear relation in the log activities y of the
//! components (the tableau stays the one description): a solid p allowed to form adds
//! ν_p·y − ln K_p ≤ 0 (its saturation index is at most zero) and its Lagrange multiplier is the
//! amount of p present; a fixed partial pressure or a fixed pH adds an equality whose
//! multiplier is the amount exchanged with the gas phase or the acid or base it takes.

mod constraint;
mod gas;
mod saturation;
mod solid;

pub use constraint::Constraint;
pub use gas::{BAR_PER_ATM, Gas, Pressure};
pub use saturation::{ALKALINITY_REFERENCE_PKA, GasState, SUPERSATURATION_TOLERANCE, SolidState};
pub use solid::Solid;

pub(crate) use saturation::reference_protons;
#[cfg(feature = "serde")]
pub(crate) use solid::part_charge;

use std::sync::Arc;

/// What a compiled phase row stands for.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum RowKind {
    /// A solid (index into the recipe's solids as compiled); `allowed` when it may form.
    Solid { allowed: bool },
    /// A gas; `fixed` holds ln p (bar) when its partial pressure is imposed.
    Gas { fixed: Option<f64> },
    /// A fixed pH: ln a(H⁺) = the target.
    Ph { ln_a_h: f64 },
    /// A fixed total alkalinity (mol/kg): sets the H⁺ total; its amount is the H⁺ the given
    /// ions leave unbalanced.
    Alkalinity { molal: f64 },
    /// The ion closing the charge balance (terms: the ion and −z H⁺, a neutral pair); its
    /// amount is minus the ion added.
    Closure,
}

/// One phase relation compiled against a system's components: ln Q(y) = Σ ν·y − ln K, with
/// ln Q the ln of the saturation ratio for a solid, ln p (bar) for a gas, ln a(H⁺) for a
/// fixed pH.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct PhaseRow {
    pub name: Arc<str>,
    pub kind: RowKind,
    /// (component, ν), sorted by component.
    pub terms: Vec<(usize, f64)>,
    pub ln_k: f64,
    /// Σ ν·z of the components: the charge the row's reaction brings into solution (0 for
    /// solids and gases, 1 for the H⁺ of a fixed pH).
    pub charge: f64,
}

impl PhaseRow {
    /// The right-hand side c of the row as a relation ν·y = c, for rows that hold as
    /// equalities (fixed gas, fixed pH, a solid present).
    pub fn rhs(&self) -> f64 {
        match self.kind {
            RowKind::Gas { fixed: Some(lp) } => self.ln_k + lp,
            RowKind::Ph { ln_a_h } => self.ln_k + ln_a_h,
            _ => self.ln_k,
        }
    }

    /// True when the row's amount is set by the totals rather than by the solver.
    pub fn is_amount(&self) -> bool {
        matches!(self.kind, RowKind::Alkalinity { .. } | RowKind::Closure)
    }

    /// True when the row always holds as an equality.
    pub fn is_equality(&self) -> bool {
        matches!(self.kind, RowKind::Gas { fixed: Some(_) } | RowKind::Ph { .. })
    }

    /// True when the row is an inequality the solver keeps (a solid allowed to form).
    pub fn is_inequality(&self) -> bool {
        matches!(self.kind, RowKind::Solid { allowed: true })
    }

    /// ln Q at the component log activities `y`; −∞ where a component is absent.
    pub fn ln_q(&self, y: &[f64]) -> f64 {
        let mut v = -self.ln_k;
        for &(c, nu) in &self.terms {
            v += nu * y[c];
        }
        if v.is_nan() { f64::NEG_INFINITY } else { v }
    }
}

/// The pH a fixed-pH row holds, for messages: −ln a(H⁺)/ln 10 rounded to 9 decimals, so a
/// pH given as 15.74 reads 15.74 again after the round trip through ln a(H⁺).
pub(crate) fn fixed_ph_text(ln_a_h: f64) -> String {
    let ph = -ln_a_h / std::f64::consts::LN_10;
    format!("{}", (ph * 1e9).round() / 1e9)
}
