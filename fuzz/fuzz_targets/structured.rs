//! Structure-aware fuzz target: the fuzzer's bytes drive a document model of our own
//! (`arbitrary`), rendered to JSON as a recipe or titration document with user definitions of
//! families, ions, reagents and complexes: extreme counts, charges and proton numbers, names
//! that collide (with the catalogue and with each other), long and non-ASCII names, extreme
//! amounts and temperatures. Each document goes through the oracles of
//! `tests/fuzz_check/mod.rs` (shared with `cargo test`): no panic, finite numbers, residuals
//! within their promise, sign sanity, one batch record per line.
//!
//! Set `PROTOLYTE_FUZZ_DUMP=1` to print each rendered document (to keep a finding as a
//! regression input in `tests/fuzz_inputs/`).
#![no_main]

use arbitrary::Arbitrary;
use libfuzzer_sys::fuzz_target;
use serde_json::{Map, Value, json};

#[path = "../../tests/fuzz_check/mod.rs"]
mod fuzz_check;

/// Names of the catalogue (of every kind), for lookups and for collisions.
const BUILTIN: &[&str] = &[
    "acetate",
    "acetic acid",
    "sodium acetate",
    "sodium",
    "chloride",
    "calcium",
    "copper",
    "zinc",
    "phosphate",
    "carbonate",
    "ammonia",
    "tris",
    "glycine",
    "sulfate",
    "hydrochloric acid",
    "nitric acid",
    "perchloric acid",
    "sodium hydroxide",
    "potassium hydroxide",
    "sodium chloride",
    "ammonium chloride",
    "calcium chloride",
    "sodium dihydrogen phosphate",
    "disodium hydrogen phosphate",
    "CuNH3^2+",
    "Zn(NH3)4^2+",
];

const ODD: &[&str] = &[
    "Ü-ion",
    "ион",
    "\u{2212}x",
    "ａｂ",
    "x\u{0}y",
    "  u1  ",
    "",
    "U1",
    "a\"b\\c",
    "\u{feff}u2",
    "H+",
    "OH-",
    "ACETATE",
    "acetate ",
];

/// A name. The first variant is what an exhausted input gives (zeros): a user name, so that
/// short inputs still define things.
#[derive(Arbitrary, Debug, Clone)]
enum Name {
    User(u8),
    User2(u8),
    Builtin(u8),
    Weird(WeirdName),
}

/// A rarer name: long, odd or free.
#[derive(Arbitrary, Debug, Clone)]
enum WeirdName {
    Long(u16),
    Odd(u8),
    Free(String),
}

impl Name {
    fn text(&self) -> String {
        match self {
            Name::Builtin(k) => BUILTIN[*k as usize % BUILTIN.len()].to_string(),
            Name::User(k) | Name::User2(k) => format!("u{}", k % 6),
            // Around the 200-character limit.
            Name::Weird(WeirdName::Long(n)) => "L".repeat(150 + (*n as usize % 120)),
            Name::Weird(WeirdName::Odd(k)) => ODD[*k as usize % ODD.len()].to_string(),
            Name::Weird(WeirdName::Free(s)) => s.chars().take(300).collect(),
        }
    }
}

const EDGE_INTS: &[i64] = &[
    0,
    1,
    -1,
    2,
    -2,
    3,
    12,
    -12,
    13,
    -13,
    24,
    -25,
    100,
    65_536,
    -65_536,
    i32::MAX as i64,
    i32::MIN as i64,
    i32::MAX as i64 - 1,
    i32::MIN as i64 + 1,
    u32::MAX as i64,
    i64::MAX,
];

/// An integer: mostly a small one (−3..3, as counts and charges are), sometimes any `i8`,
/// sometimes an edge value.
#[derive(Arbitrary, Debug, Clone, Copy)]
enum Int {
    Tiny(u8),
    Tiny2(u8),
    Tiny3(u8),
    Small(i8),
    Edge(u8),
}

impl Int {
    fn value(self) -> i64 {
        match self {
            Int::Tiny(k) | Int::Tiny2(k) | Int::Tiny3(k) => (k % 7) as i64 - 3,
            Int::Small(v) => v as i64,
            Int::Edge(k) => EDGE_INTS[k as usize % EDGE_INTS.len()],
        }
    }
}

const NICE: &[f64] = &[
    0.0, -0.0, 1e-320, 1e-300, 1e-15, 1e-9, 1e-6, 1e-3, 0.01, 0.05, 0.1, 0.5, 1.0, 2.0, 4.76, 7.0, 9.25, 10.0, 14.0,
    20.0, 25.0, 37.0, 60.0, 99.9, 100.0, 100.1, 1e3, 1e6, 1e12, 1e305, 1e308, -1.0, -1e-9, -3.0, -273.15,
];

/// A number: mostly from the list above, sometimes any `f64`.
#[derive(Arbitrary, Debug, Clone, Copy)]
enum Real {
    Nice(u8),
    Nice2(u8),
    Nice3(u8),
    Raw(f64),
}

impl Real {
    fn value(self) -> Value {
        let x = match self {
            Real::Nice(k) | Real::Nice2(k) | Real::Nice3(k) => NICE[k as usize % NICE.len()],
            Real::Raw(x) => x,
        };
        // JSON has no NaN or infinity: they become null (a type error, as a user would get).
        json!(x)
    }
}

#[derive(Arbitrary, Debug, Clone)]
struct ProtolyteDef {
    name: Name,
    pka: Vec<Real>,
    /// 250 and above add 60 to 80 more pKa values (past every limit).
    many_pka: u8,
    charge: Int,
    synonyms: Vec<Name>,
    ion_size: Option<Real>,
    molar_mass: Option<Real>,
}

#[derive(Arbitrary, Debug, Clone)]
struct IonDef {
    name: Name,
    charge: Int,
    synonyms: Vec<Name>,
    ion_size: Option<Real>,
}

#[derive(Arbitrary, Debug, Clone)]
struct ReagentPart {
    kind: u8,
    name: Name,
    protons: Option<Int>,
    count: Option<Int>,
}

#[derive(Arbitrary, Debug, Clone)]
struct ReagentDef {
    name: Name,
    parts: Vec<ReagentPart>,
    molar_mass: Option<Real>,
}

#[derive(Arbitrary, Debug, Clone)]
struct ComplexPart {
    kind: u8,
    name: Name,
    protons: Int,
    count: Option<Int>,
}

#[derive(Arbitrary, Debug, Clone)]
struct ComplexDef {
    name: Name,
    log_beta: Real,
    parts: Vec<ComplexPart>,
    enthalpy: Option<Real>,
}

#[derive(Arbitrary, Debug, Clone)]
enum AmountDef {
    Molar(Real),
    Millimolar(Real),
    Molal(Real),
    Grams(Real, Real),
    Stock(Real, Real, Real),
    Two(Real, Real),
}

/// Reagents of the catalogue for recipe lines (strong acids and bases first, for the sign
/// checks).
const REAGENTS: &[&str] = &[
    "hydrochloric acid",
    "sodium hydroxide",
    "nitric acid",
    "potassium hydroxide",
    "perchloric acid",
    "acetic acid",
    "sodium acetate",
    "sodium chloride",
    "ammonium chloride",
    "calcium chloride",
    "sodium dihydrogen phosphate",
    "disodium hydrogen phosphate",
    "sodium bicarbonate",
    "sodium carbonate",
    "tris base",
    "citric acid",
    "glycine",
];

/// The reagent of a recipe line: the catalogue's (first: what zeros give), a user's, or any
/// name.
#[derive(Arbitrary, Debug, Clone)]
enum LineName {
    Reagent(u8),
    User(u8),
    Other(Name),
}

impl LineName {
    fn text(&self) -> String {
        match self {
            LineName::Reagent(k) => REAGENTS[*k as usize % REAGENTS.len()].to_string(),
            LineName::User(k) => format!("u{}", k % 6),
            LineName::Other(n) => n.text(),
        }
    }
}

#[derive(Arbitrary, Debug, Clone)]
struct Line {
    reagent: LineName,
    amount: AmountDef,
}

#[derive(Arbitrary, Debug, Clone)]
struct TitrationDef {
    titrant: Vec<Line>,
    volume_ml: Real,
    end_volume_ml: Real,
    points: u8,
}

#[derive(Arbitrary, Debug, Clone)]
struct Doc {
    with_format: bool,
    temperature: Option<Real>,
    activity: u8,
    protolytes: Vec<ProtolyteDef>,
    ions: Vec<IonDef>,
    reagents: Vec<ReagentDef>,
    complexes: Vec<ComplexDef>,
    lines: Vec<Line>,
    /// 255 repeats the lines to many entries (past the per-document limit).
    repeat: u8,
    named_complexes: Vec<Name>,
    include_catalog: bool,
    titration: Option<TitrationDef>,
}

fn names(v: &[Name]) -> Value {
    Value::Array(v.iter().take(3).map(|n| json!(n.text())).collect())
}

fn line(l: &Line) -> Value {
    let mut m = Map::new();
    m.insert("reagent".into(), json!(l.reagent.text()));
    match &l.amount {
        AmountDef::Molar(x) => {
            m.insert("molar".into(), x.value());
        }
        AmountDef::Millimolar(x) => {
            m.insert("millimolar".into(), x.value());
        }
        AmountDef::Molal(x) => {
            m.insert("molal".into(), x.value());
        }
        AmountDef::Grams(g, v) => {
            m.insert("grams".into(), g.value());
            m.insert("final_volume_ml".into(), v.value());
        }
        AmountDef::Stock(c, a, v) => {
            m.insert("stock_molar".into(), c.value());
            m.insert("aliquot_ml".into(), a.value());
            m.insert("final_volume_ml".into(), v.value());
        }
        AmountDef::Two(a, b) => {
            m.insert("molar".into(), a.value());
            m.insert("molal".into(), b.value());
        }
    }
    Value::Object(m)
}

fn lines(v: &[Line], repeat: u8) -> Value {
    let base: Vec<Value> = v.iter().take(6).map(line).collect();
    let times = if repeat == 255 { 200 } else { 1 };
    Value::Array(base.iter().cycle().take(base.len() * times).cloned().collect())
}

fn definitions(d: &Doc) -> Option<Value> {
    let mut m = Map::new();
    if !d.protolytes.is_empty() {
        let v: Vec<Value> = d
            .protolytes
            .iter()
            .take(4)
            .map(|p| {
                let mut pka: Vec<Value> = p.pka.iter().take(6).map(|x| x.value()).collect();
                if p.many_pka >= 250 {
                    let n = 60 + 4 * (p.many_pka as usize - 250);
                    pka.extend((0..n).map(|i| json!(2.0 + i as f64 * 0.1)));
                }
                let mut o = json!({
                    "name": p.name.text(),
                    "pka": pka,
                    "charge_most_protonated": p.charge.value(),
                    "synonyms": names(&p.synonyms),
                });
                if let Some(a) = p.ion_size {
                    o["ion_size_angstrom"] = a.value();
                }
                if let Some(mm) = p.molar_mass {
                    o["molar_mass_g_per_mol"] = mm.value();
                }
                o
            })
            .collect();
        m.insert("protolytes".into(), Value::Array(v));
    }
    if !d.ions.is_empty() {
        let v: Vec<Value> = d
            .ions
            .iter()
            .take(4)
            .map(|i| {
                let mut o = json!({"name": i.name.text(), "charge": i.charge.value(), "synonyms": names(&i.synonyms)});
                if let Some(a) = i.ion_size {
                    o["ion_size_angstrom"] = a.value();
                }
                o
            })
            .collect();
        m.insert("ions".into(), Value::Array(v));
    }
    if !d.reagents.is_empty() {
        let v: Vec<Value> = d
            .reagents
            .iter()
            .take(4)
            .map(|r| {
                let parts: Vec<Value> = r
                    .parts
                    .iter()
                    .take(5)
                    .map(|p| {
                        let mut o = match p.kind % 5 {
                            0 => json!({"protolyte": p.name.text(), "protons": p.protons.map(|i| i.value()).unwrap_or(0)}),
                            1 => json!({"ion": p.name.text()}),
                            2 => json!({"proton": true}),
                            3 => json!({"hydroxide": true}),
                            _ => json!({"ion": p.name.text(), "proton": true}),
                        };
                        if let Some(c) = p.count {
                            o["count"] = json!(c.value());
                        }
                        o
                    })
                    .collect();
                let mut o = json!({"name": r.name.text(), "parts": parts});
                if let Some(mm) = r.molar_mass {
                    o["molar_mass_g_per_mol"] = mm.value();
                }
                o
            })
            .collect();
        m.insert("reagents".into(), Value::Array(v));
    }
    if !d.complexes.is_empty() {
        let v: Vec<Value> = d
            .complexes
            .iter()
            .take(4)
            .map(|c| {
                let parts: Vec<Value> = c
                    .parts
                    .iter()
                    .take(5)
                    .map(|p| {
                        let mut o = match p.kind % 4 {
                            0 => json!({"base": p.name.text()}),
                            1 => json!({"ion": p.name.text()}),
                            2 => json!({"protons": p.protons.value()}),
                            _ => json!({"base": p.name.text(), "protons": p.protons.value()}),
                        };
                        if let Some(n) = p.count {
                            o["count"] = json!(n.value());
                        }
                        o
                    })
                    .collect();
                let mut o = json!({"name": c.name.text(), "log_beta": c.log_beta.value(), "parts": parts});
                if let Some(h) = c.enthalpy {
                    o["enthalpy_kj_per_mol"] = h.value();
                }
                o
            })
            .collect();
        m.insert("complexes".into(), Value::Array(v));
    }
    (!m.is_empty()).then_some(Value::Object(m))
}

fn render(d: &Doc) -> String {
    let mut m = Map::new();
    if let Some(t) = d.temperature {
        m.insert("temperature_celsius".into(), t.value());
    }
    match d.activity % 4 {
        0 => {}
        1 => {
            m.insert("activity".into(), json!("ideal"));
        }
        2 => {
            m.insert("activity".into(), json!("davies"));
        }
        _ => {
            m.insert("activity".into(), json!("extended-debye-huckel"));
        }
    }
    if let Some(defs) = definitions(d) {
        m.insert("definitions".into(), defs);
    }
    if !d.named_complexes.is_empty() {
        m.insert("complexes".into(), names(&d.named_complexes));
    }
    if d.include_catalog {
        m.insert("include_catalog_complexes".into(), json!(true));
    }
    match &d.titration {
        None => {
            if d.with_format {
                m.insert("format".into(), json!("protolyte-recipe/1"));
            }
            m.insert("reagents".into(), lines(&d.lines, d.repeat));
        }
        Some(t) => {
            m.insert("format".into(), json!("protolyte-titration/1"));
            m.insert(
                "analyte".into(),
                json!({"volume_ml": t.volume_ml.value(), "reagents": lines(&d.lines, d.repeat)}),
            );
            m.insert("titrant".into(), json!({"reagents": lines(&t.titrant, 0)}));
            m.insert("end_volume_ml".into(), t.end_volume_ml.value());
            m.insert("points".into(), json!(t.points as usize % 30));
        }
    }
    Value::Object(m).to_string()
}

fuzz_target!(|doc: Doc| {
    let text = render(&doc);
    if std::env::var_os("PROTOLYTE_FUZZ_DUMP").is_some() {
        eprintln!("{text}");
    }
    fuzz_check::check_text(&text);
});
