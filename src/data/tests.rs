//! The data files against the Rust tables they were converted from (kept until the
//! conversion is checked, then removed with the tables).

use super::records::{ComplexPartRecord, PartRecord};
use super::*;

fn meta(source: &str, from_memory: bool) -> Meta {
    Meta {
        source: source.to_string(),
        from_memory,
        origin: "rust tables".into(),
        form_ion_sizes: Vec::new(),
        molar_mass: None,
    }
}

fn build_from_rust_tables() -> Catalog {
    let mut cat = Catalog::empty();
    for r in super::protolytes::FAMILIES {
        let pkas: Vec<f64> = r.steps.iter().map(|s| s.pka).collect();
        let steps = r
            .steps
            .iter()
            .map(|s| Step {
                pka: s.pka,
                dh_kj_per_mol: s.dh_kj_per_mol,
                dcp_j_per_mol_k: s.dcp_j_per_mol_k,
            })
            .collect();
        let p = Protolyte::new(r.name, &pkas, r.charge_most_protonated)
            .unwrap()
            .with_steps(steps)
            .unwrap()
            .with_formula(r.formula)
            .with_source(r.source);
        let p = match r.ion_size_angstrom {
            Some(a) => p.with_ion_size_angstrom(a).unwrap(),
            None => p,
        };
        cat.add_protolyte_with(p, r.synonyms, meta(r.source, r.from_memory)).unwrap();
    }
    for r in super::ions::IONS {
        let i = Ion::new(r.name, r.charge).unwrap().with_formula(r.formula);
        let i = match r.ion_size_angstrom {
            Some(a) => i.with_ion_size_angstrom(a).unwrap(),
            None => i,
        };
        cat.add_ion_with(i, r.synonyms, meta(r.source, r.from_memory)).unwrap();
    }
    for r in super::reagents::REAGENTS {
        let parts: Vec<(Constituent, u32)> = r
            .parts
            .iter()
            .map(|(p, n)| {
                let c = match p {
                    PartRecord::Form { family, protons } => Constituent::Form {
                        protolyte: cat.protolyte(family).unwrap(),
                        protons: *protons as usize,
                    },
                    PartRecord::Ion(name) => Constituent::Ion(cat.ion(name).unwrap()),
                    PartRecord::Proton => Constituent::Proton,
                    PartRecord::Hydroxide => Constituent::Hydroxide,
                };
                (c, *n)
            })
            .collect();
        let x = Reagent::new(r.name, Some(r.molar_mass_g_per_mol), parts)
            .unwrap()
            .with_formula(r.formula);
        cat.add_reagent_with(x, r.synonyms, meta(r.source, false)).unwrap();
    }
    for r in super::complexes::COMPLEXES {
        let parts: Vec<(ComplexPart, i32)> = r
            .parts
            .iter()
            .map(|(p, n)| {
                let c = match p {
                    ComplexPartRecord::Base(f) => ComplexPart::Base(cat.protolyte(f).unwrap()),
                    ComplexPartRecord::Ion(i) => ComplexPart::Ion(cat.ion(i).unwrap()),
                    ComplexPartRecord::Proton => ComplexPart::Proton,
                };
                (c, *n)
            })
            .collect();
        let c = Complex::new(r.name, parts, r.log_beta).unwrap().with_source(r.source);
        let c = match r.dh_kj_per_mol {
            Some(h) => c.with_enthalpy_kj_per_mol(h).unwrap(),
            None => c,
        };
        let c = match r.ion_size_angstrom {
            Some(a) => c.with_ion_size_angstrom(a).unwrap(),
            None => c,
        };
        cat.add_complex_with(c, &[], meta(r.source, r.from_memory)).unwrap();
    }
    cat
}

#[test]
fn data_files_equal_the_rust_tables() {
    let old = build_from_rust_tables();
    let new = Catalog::read_builtin();
    assert!(new.problems.is_empty(), "{:?}", new.problems);
    assert_eq!(old.protolytes, new.protolytes);
    assert_eq!(old.ions, new.ions);
    assert_eq!(old.reagents, new.reagents);
    assert_eq!(old.complexes, new.complexes);
    assert_eq!(old.info.len(), new.info.len());
    for (a, b) in old.info.iter().zip(&new.info) {
        assert_eq!(
            (a.kind, &a.name, &a.synonyms, &a.formula, &a.summary, &a.source, a.from_memory),
            (b.kind, &b.name, &b.synonyms, &b.formula, &b.summary, &b.source, b.from_memory)
        );
        assert_eq!(a.keys, b.keys);
    }
    assert_eq!(old.index, new.index);
}
