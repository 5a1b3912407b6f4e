use protolyte::*;

fn cat() -> Catalog { Catalog::builtin() }
fn ion(n: &str) -> Ion { cat().ion(n).unwrap() }
fn fam(n: &str) -> Protolyte { cat().protolyte(n).unwrap() }
fn form(p: &Protolyte, j: usize) -> Constituent { Constituent::Form { protolyte: p.clone(), protons: j } }
fn davies() -> Conditions { Conditions::new(Temperature::celsius(25.0), ActivityModel::Davies) }

fn solve(parts: &[(Vec<(Constituent, u32)>, f64)], c: Conditions) -> Equilibrium {
    let mut r = Recipe::new();
    for (i, (p, m)) in parts.iter().enumerate() {
        let re = Reagent::new(&format!("r{i}"), None, p.clone()).unwrap();
        r.add(&re, Amount::molal(*m)).unwrap();
    }
    r.compile(&c).unwrap().solve().unwrap()
}

#[test]
fn explore() {
    let k = ion("potassium"); let na = ion("sodium");
    let ph = fam("phthalate"); let po4 = fam("phosphate"); let b = fam("borate"); let co3 = fam("carbonate"); let ox = fam("oxalate");
    for t in [0.0, 25.0, 37.0] {
        let c = Conditions::new(Temperature::celsius(t), ActivityModel::Davies);
        let khp = solve(&[(vec![(Constituent::Ion(k.clone()),1),(form(&ph,1),1)], 0.05)], c);
        let p1 = solve(&[(vec![(Constituent::Ion(k.clone()),1),(form(&po4,2),1)], 0.025),(vec![(Constituent::Ion(na.clone()),2),(form(&po4,1),1)], 0.025)], c);
        let p2 = solve(&[(vec![(Constituent::Ion(k.clone()),1),(form(&po4,2),1)], 0.008695),(vec![(Constituent::Ion(na.clone()),2),(form(&po4,1),1)], 0.03043)], c);
        let bx = solve(&[(vec![(Constituent::Ion(na.clone()),2),(form(&b,1),2),(form(&b,0),2)], 0.01)], c);
        let cb = solve(&[(vec![(Constituent::Ion(na.clone()),1),(form(&co3,1),1)], 0.025),(vec![(Constituent::Ion(na.clone()),2),(form(&co3,0),1)], 0.025)], c);
        let tx = solve(&[(vec![(Constituent::Ion(k.clone()),1),(form(&ox,1),1),(form(&ox,2),1)], 0.05)], c);
        println!("T={t}: KHP {:.4} P1 {:.4} P2 {:.4} borax {:.4} carb {:.4} tetrox {:.4} I_tx {:.4} pKw {:.4}", khp.ph(), p1.ph(), p2.ph(), bx.ph(), cb.ph(), tx.ph(), tx.ionic_strength_molal(), -water::log10_kw(Temperature::celsius(t)));
    }
    for t in [0.0,5.0,10.0,15.0,20.0,25.0,30.0,35.0,37.0,40.0,45.0,50.0,60.0,75.0,100.0] {
        let tt = Temperature::celsius(t);
        let dh = DebyeHuckelConstants::at(tt);
        println!("t={t} pKw={:.4} rho={:.6} eps={:.3} A={:.5} B={:.5}", -water::log10_kw(tt), water::density_kg_per_l(tt), water::dielectric_constant(tt), dh.a, dh.b);
    }
}
