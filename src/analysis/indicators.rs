//! Acid–base indicators: a small table of common visual indicators with their published
//! transition ranges, and the choice of those that change colour inside the steep part of
//! a titration break.
//!
//! Transition ranges are those of the table "Acid–base indicators" in the *CRC Handbook of
//! Chemistry and Physics* (section 8), entered from memory; handbooks differ from one
//! another by one or two tenths of a pH unit, and an eye reads a colour change somewhere
//! inside the range, so a range is a guide, not a measurement.

/// A visual acid–base indicator and its transition range.
///
/// # Example
///
/// ```
/// use protolyte::analysis::indicators;
///
/// let pp = indicators().iter().find(|i| i.name == "phenolphthalein").unwrap();
/// assert_eq!((pp.ph_low, pp.ph_high), (8.2, 10.0));
/// assert!(pp.from_memory);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Indicator {
    /// Common name (with the range in brackets for indicators with two ranges).
    pub name: &'static str,
    /// Lower end of the transition range (the acid colour below it).
    pub ph_low: f64,
    /// Upper end of the transition range (the base colour above it).
    pub ph_high: f64,
    /// Colour below the range.
    pub acid_colour: &'static str,
    /// Colour above the range.
    pub base_colour: &'static str,
    /// Where the range comes from.
    pub source: &'static str,
    /// True when the range was entered from memory of the source.
    pub from_memory: bool,
}

impl Indicator {
    /// Middle of the transition range (about the indicator's pKa).
    pub fn ph_mid(&self) -> f64 {
        0.5 * (self.ph_low + self.ph_high)
    }

    /// True when the whole transition range lies within `[lo, hi]` (in either order).
    ///
    /// ```
    /// use protolyte::analysis::indicators;
    /// let mo = indicators().iter().find(|i| i.name == "methyl orange").unwrap();
    /// assert!(mo.fits_within(3.0, 4.5));
    /// assert!(!mo.fits_within(4.5, 10.0));
    /// ```
    pub fn fits_within(&self, lo: f64, hi: f64) -> bool {
        let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
        self.ph_low >= lo && self.ph_high <= hi
    }
}

const CRC: &str = "CRC Handbook of Chemistry and Physics, section 8, table \"Acid–base indicators\"";

macro_rules! ind {
    ($name:expr, $lo:expr, $hi:expr, $a:expr, $b:expr) => {
        Indicator {
            name: $name,
            ph_low: $lo,
            ph_high: $hi,
            acid_colour: $a,
            base_colour: $b,
            source: CRC,
            from_memory: true,
        }
    };
}

static INDICATORS: [Indicator; 14] = [
    ind!("thymol blue (acid range)", 1.2, 2.8, "red", "yellow"),
    ind!("bromophenol blue", 3.0, 4.6, "yellow", "blue"),
    ind!("methyl orange", 3.1, 4.4, "red", "yellow"),
    ind!("bromocresol green", 3.8, 5.4, "yellow", "blue"),
    ind!("methyl red", 4.4, 6.2, "red", "yellow"),
    ind!("chlorophenol red", 4.8, 6.4, "yellow", "red"),
    ind!("bromocresol purple", 5.2, 6.8, "yellow", "purple"),
    ind!("bromothymol blue", 6.0, 7.6, "yellow", "blue"),
    ind!("phenol red", 6.8, 8.2, "yellow", "red"),
    ind!("cresol red", 7.2, 8.8, "yellow", "red"),
    ind!("thymol blue (base range)", 8.0, 9.6, "yellow", "blue"),
    ind!("phenolphthalein", 8.2, 10.0, "colourless", "pink"),
    ind!("thymolphthalein", 9.4, 10.6, "colourless", "blue"),
    ind!("alizarin yellow R", 10.1, 12.0, "yellow", "red"),
];

/// The built-in indicator table (14 common indicators), in order of rising range.
///
/// ```
/// use protolyte::analysis::indicators;
/// assert!(indicators().len() >= 10);
/// assert!(indicators().iter().all(|i| i.ph_low < i.ph_high));
/// ```
pub fn indicators() -> &'static [Indicator] {
    &INDICATORS
}

/// The indicators of `table` whose whole transition range lies within the pH interval
/// `[lo, hi]` (in either order), nearest range middle to `target` first.
///
/// ```
/// use protolyte::analysis::{indicators, indicators_within};
/// // A break from pH 7 to 10.5 with its equivalence point at 8.7.
/// let fit = indicators_within(indicators(), 7.0, 10.5, 8.7);
/// assert_eq!(fit[0].name, "thymol blue (base range)");
/// assert!(fit.iter().any(|i| i.name == "phenolphthalein"));
/// assert!(fit.iter().all(|i| i.name != "methyl orange"));
/// ```
pub fn indicators_within(table: &[Indicator], lo: f64, hi: f64, target: f64) -> Vec<Indicator> {
    if !(lo.is_finite() && hi.is_finite()) {
        return Vec::new();
    }
    let mut out: Vec<Indicator> = table.iter().filter(|i| i.fits_within(lo, hi)).copied().collect();
    if target.is_finite() {
        out.sort_by(|a, b| (a.ph_mid() - target).abs().total_cmp(&(b.ph_mid() - target).abs()));
    }
    out
}
