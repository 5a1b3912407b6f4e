//! Water analyses: ion balance, Langelier index, calcium carbonate precipitation potential and
//! dose searches, each check value with its source.

use protolyte::analysis::water::{BalanceLimit, MeasuredIon, ion_balance};
use protolyte::{Catalog, Error};

/// The Reference Composition of standard seawater at S = 35 (F. J. Millero, R. Feistel,
/// D. G. Wright, T. J. McDougall, Deep-Sea Res. I 55 (2008) 50–72), mol/kg of solution, from
/// memory to seven decimals. The composition is electrically neutral by construction, so its
/// ion balance error is zero up to the recall and rounding of these numbers.
fn reference_seawater() -> Vec<MeasuredIon> {
    let ions: [(&str, i32, f64); 13] = [
        ("Na+", 1, 0.4689674),
        ("Mg2+", 2, 0.0528171),
        ("Ca2+", 2, 0.0102821),
        ("K+", 1, 0.0102077),
        ("Sr2+", 2, 0.0000907),
        ("Cl-", -1, 0.5458696),
        ("SO4^2-", -2, 0.0282352),
        ("Br-", -1, 0.0008421),
        ("F-", -1, 0.0000683),
        ("HCO3-", -1, 0.0017177),
        ("CO3^2-", -2, 0.0002390),
        ("B(OH)4-", -1, 0.0000788),
        ("OH-", -1, 0.0000080),
    ];
    ions.iter()
        .map(|&(n, z, mol)| MeasuredIon::mmol_per_l(n, z, 1000.0 * mol).unwrap())
        .collect()
}

#[test]
fn reference_seawater_balances() {
    let b = ion_balance(&reference_seawater()).unwrap();
    // Σ cations 605.555 meq/kg, Σ anions 605.533 meq/kg (sums of the composition above).
    assert!((b.cations_meq_per_l - 605.555).abs() < 0.01, "{b:?}");
    assert!((b.anions_meq_per_l - 605.533).abs() < 0.01, "{b:?}");
    // Electroneutral by construction (Millero et al. 2008): |error| well below 0.01 %.
    assert!(b.error_percent.abs() < 0.01, "{b:?}");
    // Standard Methods 1030 E (common practice): 5 % for anion sums of 10-800 meq/L.
    assert_eq!(b.acceptance_limit(), Some(BalanceLimit::ErrorPercent(5.0)));
    assert_eq!(b.within_acceptance(), Some(true));
}

#[test]
fn leaving_out_a_major_ion_shows_in_the_balance() {
    // The same composition without sulfate: the balance error is 100·2·28.2352/(1211.088 -
    // 56.470) = +4.89 %, still inside the 5 % of Standard Methods 1030 E for this anion sum
    // (the rule's blind spot for brines); without chloride far outside.
    let no_so4: Vec<_> = reference_seawater()
        .into_iter()
        .filter(|i| i.name() != "SO4^2-")
        .collect();
    let b = ion_balance(&no_so4).unwrap();
    assert!((b.error_percent - 100.0 * 56.4704 / (605.555 + 605.533 - 56.4704)).abs() < 0.01);
    assert_eq!(b.within_acceptance(), Some(true));
    let no_cl: Vec<_> = reference_seawater().into_iter().filter(|i| i.name() != "Cl-").collect();
    let b = ion_balance(&no_cl).unwrap();
    assert!(b.error_percent > 60.0);
    assert_eq!(b.within_acceptance(), Some(false));
}

#[test]
fn acceptance_rule_of_standard_methods() {
    // Standard Methods 1030 E (common practice): anion sum 0-3.0 meq/L, ±0.2 meq/L;
    // 3.0-10.0 meq/L, ±2 %; 10-800 meq/L, ±5 %.
    let b = |cat: f64, an: f64| {
        ion_balance(&[
            MeasuredIon::mmol_per_l("Na+", 1, cat).unwrap(),
            MeasuredIon::mmol_per_l("Cl-", -1, an).unwrap(),
        ])
        .unwrap()
    };
    assert_eq!(b(2.19, 2.0).within_acceptance(), Some(true));
    assert_eq!(b(2.21, 2.0).within_acceptance(), Some(false));
    assert_eq!(b(5.0, 4.9).acceptance_limit(), Some(BalanceLimit::ErrorPercent(2.0)));
    assert_eq!(b(5.0, 4.9).within_acceptance(), Some(true)); // 1.01 %
    assert_eq!(b(5.0, 4.7).within_acceptance(), Some(false)); // 3.09 %
    assert_eq!(b(50.0, 46.0).within_acceptance(), Some(true)); // 4.17 %
    assert_eq!(b(50.0, 44.0).within_acceptance(), Some(false)); // 6.38 %
    assert_eq!(b(1000.0, 900.0).acceptance_limit(), None);
    assert_eq!(b(1000.0, 900.0).within_acceptance(), None);
}

#[test]
fn lab_units_convert_by_molar_mass() {
    let cat = Catalog::builtin();
    // 1 meq/L of Ca2+ is 20.04 mg/L, of Mg2+ 12.15 mg/L, of SO4^2- 48.03 mg/L (half the
    // molar masses 40.078, 24.305, 96.06; IUPAC standard atomic weights).
    let ca = MeasuredIon::from_catalog_mg_per_l(&cat, "calcium", 40.078).unwrap();
    assert!((ca.meq_per_l() - 2.0).abs() < 1e-9);
    let mg = MeasuredIon::from_catalog_mg_per_l(&cat, "mg2+", 24.305).unwrap();
    assert!((mg.meq_per_l() - 2.0).abs() < 1e-9);
    let so4 = MeasuredIon::species_mg_per_l("SO4^2-", -2, 96.06).unwrap();
    assert!((so4.meq_per_l() - 2.0).abs() < 1e-3);
    let so4b = MeasuredIon::species_mg_per_l("SO4", -2, 96.06).unwrap();
    assert_eq!(so4.mmol(), so4b.mmol());
    // 50.04 mg/L as CaCO3 of alkalinity is 1 meq/L (common practice).
    let alk = MeasuredIon::alkalinity_mg_per_l_as_caco3(50.04345).unwrap();
    assert!((alk.meq_per_l() - 1.0).abs() < 1e-9);
    assert_eq!(alk.charge(), -1);
}

#[test]
fn ion_balance_refuses_what_it_cannot_judge() {
    assert!(matches!(
        MeasuredIon::mmol_per_l("x", 0, 1.0),
        Err(Error::InvalidParameter { .. })
    ));
    assert!(matches!(
        MeasuredIon::mmol_per_l("x", 1, f64::NAN),
        Err(Error::InvalidAmount { .. })
    ));
    assert!(matches!(
        MeasuredIon::mmol_per_l("x", 1, -1.0),
        Err(Error::InvalidAmount { .. })
    ));
    assert!(MeasuredIon::mg_per_l("x", 1, 1.0, 0.0).is_err());
    assert!(MeasuredIon::species_mg_per_l("Xq", 1, 1.0).is_err());
    let only_cations = [MeasuredIon::mmol_per_l("Na+", 1, 1.0).unwrap()];
    assert!(ion_balance(&only_cations).is_err());
    assert!(ion_balance(&[]).is_err());
    let zero_anion = [
        MeasuredIon::mmol_per_l("Na+", 1, 1.0).unwrap(),
        MeasuredIon::mmol_per_l("Cl-", -1, 0.0).unwrap(),
    ];
    assert!(ion_balance(&zero_anion).is_err());
}
