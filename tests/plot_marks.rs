//! Plot options: a marked pH that is not a number is refused, not dropped.
#![cfg(feature = "plot")]

use protolyte::plot::{PlotOptions, capacity_plot, distribution_plot};
use protolyte::{Amount, Catalog, Conditions, Recipe};

#[test]
fn a_marked_ph_that_is_not_finite_is_refused() {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("acetic acid").unwrap(), Amount::millimolar(10.0))
        .unwrap();
    let c = Conditions::default();
    for bad in [f64::NAN, f64::INFINITY] {
        let o = PlotOptions::default().mark_ph(bad);
        // Before: the plot was drawn without the mark, and nothing said why.
        let e = distribution_plot(&r, &c, &o).unwrap_err();
        assert!(e.to_string().contains("mark_ph"), "{e}");
        let e = capacity_plot(&r, &c, &o).unwrap_err();
        assert!(e.to_string().contains("mark_ph"), "{e}");
    }
    // A finite pH off the axis is simply not drawn.
    assert!(distribution_plot(&r, &c, &PlotOptions::default().mark_ph(30.0)).is_ok());
}
