//! Phases: solids, gases and imposed quantities.

use protolyte::{ActivityModel, Amount, Catalog, Conditions, Pressure, Recipe, Temperature};

fn davies(t: f64) -> Conditions {
    Conditions::new(Temperature::celsius(t), ActivityModel::Davies)
}

#[test]
fn scratch() {
    let cat = Catalog::builtin();
    assert!(cat.load_problems().is_empty(), "{:?}", cat.load_problems());
    let co2 = cat.gas("CO2(g)").unwrap();
    let mut r = Recipe::new();
    r.fix_partial_pressure(&co2, Pressure::microatm(420.0)).unwrap();
    let eq = r.compile(&davies(25.0)).unwrap().solve().unwrap();
    println!("rain pH {} dic {} res {:?} warn {:?}", eq.ph(), eq.dic_molal(), eq.residuals(), eq.warnings());
    let mut r = Recipe::new();
    r.add(&cat.reagent("calcium carbonate").unwrap(), Amount::molal(0.01)).unwrap()
        .add_complexes(cat.complexes())
        .allow_solid(&cat.solid("calcite").unwrap())
        .fix_partial_pressure(&co2, Pressure::microatm(10f64.powf(-3.5) * 1e6)).unwrap();
    let eq = r.compile(&davies(25.0)).unwrap().solve().unwrap();
    println!("calcite open pH {} Ca {:?} solids {:?} gases {:?} res {:?} it {}", eq.ph(), eq.dissolved_total_molal("calcium"), eq.solids(), eq.gases(), eq.residuals().max_relative(), eq.iterations());
    let mut r = Recipe::new();
    r.add(&cat.reagent("calcium carbonate").unwrap(), Amount::molal(0.05)).unwrap()
        .add_complexes(cat.complexes())
        .allow_solid(&cat.solid("calcite").unwrap())
        .fix_partial_pressure(&co2, Pressure::atm(1.0)).unwrap();
    let eq = r.compile(&davies(25.0)).unwrap().solve().unwrap();
    println!("calcite 1atm pH {} Ca {:?} solids {:?} res {:?}", eq.ph(), eq.dissolved_total_molal("calcium"), eq.solid("calcite"), eq.residuals().max_relative());
    let mut r = Recipe::new();
    r.add(&cat.reagent("calcium chloride").unwrap(), Amount::molal(0.05)).unwrap()
        .add(&cat.reagent("sodium sulfate").unwrap(), Amount::molal(0.05)).unwrap();
    let eq = r.compile(&davies(25.0)).unwrap().solve().unwrap();
    println!("SI gypsum {:?} {:?}", eq.saturation_index("gypsum"), eq.warnings());
}
