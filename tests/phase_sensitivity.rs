//! Sensitivities of systems with phase rows (a present solid, a fixed partial pressure, a
//! fixed pH), held to central finite differences of full solves. The finite differences are
//! the check values: they need no published source.

use protolyte::{ActivityModel, Amount, Catalog, Conditions, Parameter, Pressure, Recipe, System, Temperature};

fn davies() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies)
}

/// A hard water (calcium chloride with sodium carbonate, scenario values) with calcite allowed:
/// supersaturated, so calcite is present at equilibrium.
fn calcite_water() -> System {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("calcium chloride").unwrap(), Amount::molal(0.004))
        .unwrap()
        .add(&cat.reagent("sodium carbonate").unwrap(), Amount::molal(0.003))
        .unwrap()
        .add(&cat.reagent("sodium bicarbonate").unwrap(), Amount::molal(0.002))
        .unwrap()
        .add_complexes(cat.complexes())
        .allow_solid(&cat.solid("calcite").unwrap());
    r.compile(&davies()).unwrap()
}

/// Sodium bicarbonate (scenario value) open to 400 µatm CO₂.
fn open_co2() -> System {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("sodium bicarbonate").unwrap(), Amount::molal(0.002))
        .unwrap()
        .add(&cat.reagent("acetic acid").unwrap(), Amount::molal(0.0005))
        .unwrap()
        .fix_partial_pressure(&cat.gas("CO2(g)").unwrap(), Pressure::microatm(400.0))
        .unwrap();
    r.compile(&davies()).unwrap()
}

/// Acetic acid with ammonia (scenario values) held at pH 6.
fn fixed_ph() -> System {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("acetic acid").unwrap(), Amount::molal(0.01))
        .unwrap()
        .add(&cat.reagent("ammonium chloride").unwrap(), Amount::molal(0.005))
        .unwrap()
        .fix_ph(6.0)
        .unwrap();
    r.compile(&davies()).unwrap()
}

/// (pH, log₁₀ m of every species, amount of each named phase row as the row's multiplier).
fn observe(sys: &System, rows: &[&str]) -> (f64, Vec<f64>, Vec<f64>) {
    let eq = sys.solve().unwrap();
    let logs = eq.species().iter().map(|s| s.molal.max(1e-300).log10()).collect();
    let amounts = rows
        .iter()
        .map(|&n| {
            if n == "pH" {
                -eq.proton_uptake_molal()
            } else if let Some((ion, added)) = eq.charge_balance_ion_added_molal()
                && ion == n
            {
                -added
            } else if let Some(s) = eq.solid(n) {
                s.amount_molal
            } else {
                -eq.gas(n).unwrap().taken_up_molal
            }
        })
        .collect();
    (eq.ph(), logs, amounts)
}

/// Holds every analytic derivative by a total and by a few log K to central differences.
fn check(sys: &System, rows: &[&str]) -> f64 {
    let eq = sys.solve().unwrap();
    let sens = eq.sensitivities(sys).unwrap();
    let mut worst: f64 = 0.0;
    let mut params: Vec<(Parameter, f64)> = Vec::new();
    for c in 1..sys.components().len() {
        let t = sys.components()[c].total_molal;
        if t > 0.0 {
            params.push((Parameter::Total(c), t));
        }
    }
    for (s, sp) in sys.species().iter().enumerate().skip(1) {
        if eq.species()[s].molal > 1e-9 {
            params.push((Parameter::Log10K(s), sp.log10_k));
        }
    }
    for (param, base) in params {
        let h = match param {
            Parameter::Total(_) => base * 1e-5,
            _ => 1e-5,
        };
        let mut up = sys.clone();
        let mut down = sys.clone();
        match param {
            Parameter::Total(c) => {
                up.set_total_molal(c, base + h).unwrap();
                down.set_total_molal(c, base - h).unwrap();
            }
            Parameter::Log10K(s) => {
                up.set_log10_k(s, base + h).unwrap();
                down.set_log10_k(s, base - h).unwrap();
            }
            Parameter::StrongBase => unreachable!(),
        }
        let (pu, lu, au) = observe(&up, rows);
        let (pd, ld, ad) = observe(&down, rows);
        let fd_ph = (pu - pd) / (2.0 * h);
        let an_ph = sens.dph(param).unwrap();
        let err = (an_ph - fd_ph).abs() / (1e-3 + fd_ph.abs());
        assert!(err < 1e-4, "{param:?}: dpH analytic {an_ph} vs {fd_ph}"); // analytic vs finite differences, same result two ways; 1e-4 tolerance chosen for this test
        worst = worst.max(err);
        for s in 0..lu.len() {
            if eq.species()[s].molal < 1e-12 {
                continue;
            }
            let fd = (lu[s] - ld[s]) / (2.0 * h);
            let an = sens.dlog10_molal(s, param).unwrap();
            let err = (an - fd).abs() / (1e-3 + fd.abs());
            assert!(err < 1e-4, "{param:?} species {s}: analytic {an} vs {fd}"); // analytic vs finite differences, same result two ways; 1e-4 tolerance chosen for this test
            worst = worst.max(err);
        }
        for (j, &n) in rows.iter().enumerate() {
            let fd = (au[j] - ad[j]) / (2.0 * h);
            let an = sens.dphase_amount_molal(n, param).unwrap();
            let scale = match param {
                Parameter::Total(_) => 1.0,
                _ => au[j].abs().max(1e-9),
            };
            let err = (an - fd).abs() / (1e-3 * scale + fd.abs());
            assert!(err < 1e-4, "{param:?} row {n}: analytic {an} vs {fd}"); // analytic vs finite differences, same result two ways; 1e-4 tolerance chosen for this test
            worst = worst.max(err);
        }
    }
    worst
}

#[test]
fn calcite_present_matches_finite_differences() {
    let sys = calcite_water();
    let eq = sys.solve().unwrap();
    assert!(eq.solid("calcite").unwrap().amount_molal > 1e-4); // 1e-4: calcite clearly present, bound chosen for this test
    let worst = check(&sys, &["calcite"]);
    eprintln!("calcite water: worst relative disagreement {worst:.2e}");
}

#[test]
fn open_co2_matches_finite_differences() {
    let sys = open_co2();
    let worst = check(&sys, &["CO2(g)"]);
    // Strong base is sodium with its hydroxide: under Davies (one γ for every monovalent ion)
    // and without sodium complexes the two derivatives agree; the open system's buffer
    // capacity takes in CO₂ from the gas.
    let sens = sys.solve().unwrap().sensitivities(&sys).unwrap();
    let na = sys.component_index("sodium").unwrap();
    let (a, b) = (
        sens.dph(protolyte::Parameter::StrongBase).unwrap(),
        sens.dph(Parameter::Total(na)).unwrap(),
    );
    assert!((a - b).abs() < 1e-9 * b.abs(), "{a} vs {b}"); // same result two ways (see comment above); 1e-9 relative tolerance
    assert!(a > 0.0);
    eprintln!("open CO2: worst relative disagreement {worst:.2e}");
}

#[test]
fn fixed_ph_matches_finite_differences() {
    let sys = fixed_ph();
    let eq = sys.solve().unwrap();
    let sens = eq.sensitivities(&sys).unwrap();
    // The pH is imposed: no parameter moves it.
    for c in 1..sys.components().len() {
        assert!(sens.dph(Parameter::Total(c)).unwrap().abs() < 1e-12); // imposed pH: zero derivative, by definition; 1e-12 rounding tolerance
    }
    let worst = check(&sys, &["pH"]);
    eprintln!("fixed pH: worst relative disagreement {worst:.2e}");
}

#[test]
fn absent_rows_have_no_amount_derivative() {
    let sys = open_co2();
    let eq = sys.solve().unwrap();
    let sens = eq.sensitivities(&sys).unwrap();
    assert!(sens.dphase_amount_molal("calcite", Parameter::Total(1)).is_none());
    assert!(sens.dphase_amount_molal("CO2(g)", Parameter::Total(99)).is_none());
}

/// pH and calcite amount of the hard water with calcite at log K_sp `lk` (no ΔH°: the
/// value holds at 25 °C) under a CO₂ partial pressure with log K_H `lkh`.
fn with_constants(lk: f64, lkh: f64) -> (System, f64, f64) {
    let cat = Catalog::builtin();
    let c = cat.solid("calcite").unwrap();
    // Its own name, so that the catalogue's calcite is reported beside it (at SI ≠ 0 when
    // log K differs, not allowed: no effect on the solution).
    let calcite = protolyte::Solid::new("test calcite", c.parts().to_vec(), lk).unwrap();
    let g = cat.gas("CO2(g)").unwrap();
    let co2 = protolyte::Gas::new("CO2(g)", g.family(), g.protons(), lkh).unwrap();
    let mut r = Recipe::new();
    r.add(&cat.reagent("calcium chloride").unwrap(), Amount::molal(0.004))
        .unwrap()
        .add(&cat.reagent("sodium carbonate").unwrap(), Amount::molal(0.003))
        .unwrap()
        .add_complexes(cat.complexes())
        .allow_solid(&calcite)
        .fix_partial_pressure(&co2, Pressure::microatm(400.0))
        .unwrap();
    let sys = r.compile(&davies()).unwrap();
    let eq = sys.solve().unwrap();
    let amount = eq.solid("test calcite").unwrap().amount_molal;
    (sys, eq.ph(), amount)
}

#[test]
fn solid_and_gas_constants_match_finite_differences() {
    // inputs near the catalogue's calcite and CO2 constants; the check is against finite differences, so any value serves
    let (lk, lkh) = (-8.48, -1.47);
    let (sys, _, amount) = with_constants(lk, lkh);
    assert!(amount > 1e-4); // 1e-4: calcite clearly present, bound chosen for this test
    let sens = sys.solve().unwrap().sensitivities(&sys).unwrap();
    let h = 1e-5;
    let (_, pu, au) = with_constants(lk + h, lkh);
    let (_, pd, ad) = with_constants(lk - h, lkh);
    let (fd_ph, fd_amount) = ((pu - pd) / (2.0 * h), (au - ad) / (2.0 * h));
    let an = sens.dph_dphase_log10k("test calcite").unwrap();
    assert!((an - fd_ph).abs() < 1e-4 * fd_ph.abs().max(1e-3), "{an} vs {fd_ph}"); // analytic vs finite differences, same result two ways; 1e-4 tolerance chosen for this test
    let an_amount = sens
        .dphase_amount_dphase_log10k("test calcite", "test calcite")
        .unwrap();
    assert!(
        (an_amount - fd_amount).abs() < 1e-4 * fd_amount.abs(), // analytic vs finite differences, same result two ways; 1e-4 tolerance chosen for this test
        "{an_amount} vs {fd_amount}"
    );
    let (_, pu, _) = with_constants(lk, lkh + h);
    let (_, pd, _) = with_constants(lk, lkh - h);
    let fd = (pu - pd) / (2.0 * h);
    let an = sens.dph_dphase_log10k("CO2(g)").unwrap();
    assert!((an - fd).abs() < 1e-4 * fd.abs().max(1e-3), "{an} vs {fd}"); // analytic vs finite differences, same result two ways; 1e-4 tolerance chosen for this test
    // Aragonite, reported but not allowed to form: its constant has no effect.
    assert_eq!(sens.dph_dphase_log10k("aragonite"), Some(0.0)); // not allowed to form, so no effect: zero by definition
    // A name that is no row gives none.
    assert!(sens.dph_dphase_log10k("no such solid").is_none());
}

#[test]
fn water_analysis_closed_on_an_ion_matches_finite_differences() {
    // Total alkalinity fixed, sodium closing the charge balance (scenario values).
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("calcium chloride").unwrap(), Amount::molal(0.001))
        .unwrap()
        .add(&cat.reagent("sodium bicarbonate").unwrap(), Amount::molal(0.0019))
        .unwrap()
        .add_complexes(cat.complexes())
        .fix_alkalinity(0.002)
        .unwrap()
        .close_charge_balance_on(&cat.ion("sodium").unwrap())
        .unwrap();
    let worst = check(&r.compile(&davies()).unwrap(), &[]);
    eprintln!("alkalinity closed on sodium: worst relative disagreement {worst:.2e}");
    // A fixed pH with chloride closing the balance: the chloride added is a derivative too.
    let mut r = Recipe::new();
    r.add(&cat.reagent("ammonia").unwrap(), Amount::molal(0.01))
        .unwrap()
        .add(&cat.reagent("sodium bicarbonate").unwrap(), Amount::molal(0.002))
        .unwrap()
        .fix_ph(9.0)
        .unwrap()
        .close_charge_balance_on(&cat.ion("chloride").unwrap())
        .unwrap();
    let worst = check(&r.compile(&davies()).unwrap(), &["chloride"]);
    eprintln!("pH closed on chloride: worst relative disagreement {worst:.2e}");
}
