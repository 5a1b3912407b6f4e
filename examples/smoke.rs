use protolyte::*;
fn main() -> Result<()> {
    let cat = Catalog::builtin();
    println!("problems {:?}", cat.load_problems());
    for model in [ActivityModel::Ideal, ActivityModel::Davies, ActivityModel::ExtendedDebyeHuckel] {
        let mut r = Recipe::new();
        r.add(&cat.reagent("acetic acid")?, Amount::molar(0.1))?;
        let sys = r.compile(&Conditions::new(Temperature::celsius(25.0), model))?;
        let eq = sys.solve()?;
        let g = Solver::new().path(PathChoice::General).solve(&sys)?;
        println!("{:?} pH {:.6} general {:.6} it {} {} I {:.3e} res {:?}", model, eq.ph(), g.ph(), eq.iterations(), g.iterations(), eq.ionic_strength_molal(), eq.residuals());
    }
    let mut r = Recipe::new();
    r.add(&cat.reagent("phosphoric acid")?, Amount::molar(0.01))?.add(&cat.reagent("sodium hydroxide")?, Amount::molar(0.015))?;
    let sys = r.compile(&Conditions::default())?;
    let eq = sys.solve()?;
    let g = Solver::new().path(PathChoice::General).solve(&sys)?;
    println!("phos pH {:.9} general {:.9} {:?}", eq.ph(), g.ph(), eq.residuals());
    for s in eq.species() { println!("  {} {:.4e} g {:.4}", s.name, s.molal, s.gamma); }
    let sen = eq.sensitivities(&sys)?;
    println!("beta {:.5e} dpH/dNa {:.5}", sen.buffer_capacity_molal(), sen.dph_dtotal_molal(sys.component_index("sodium").unwrap()));
    // finite difference
    let mut s2 = sys.clone(); let i = sys.component_index("sodium").unwrap();
    let t = sys.components()[i].total_molal; s2.set_total_molal(i, t + 1e-7)?;
    println!("fd {:.5}", (s2.solve()?.ph() - eq.ph())/1e-7);
    // Cu EDTA
    let mut r = Recipe::new();
    let cu = Reagent::new("cu chloride", None, vec![(Constituent::Ion(cat.ion("cu2+")?),1),(Constituent::Ion(cat.ion("chloride")?),2)])?;
    let y = Reagent::new("na2h2y", None, vec![(Constituent::Ion(cat.ion("sodium")?),2),(Constituent::Form{protolyte: cat.protolyte("edta")?, protons:2},1)])?;
    r.add(&cu, Amount::molar(0.001))?.add(&y, Amount::molar(0.0011))?.add_complexes(cat.complexes());
    let sys = r.compile(&Conditions::default())?;
    let eq = sys.solve()?;
    println!("cuedta pH {:.6} path {:?} it {} res {:?}", eq.ph(), eq.path(), eq.iterations(), eq.residuals());
    for s in eq.species() { println!("  {} {:.4e}", s.name, s.molal); }
    Ok(())
}
