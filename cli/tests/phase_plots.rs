//! The plots of `solve` for recipes with phase requests: they show the solution as solved.

use std::process::Command;

fn solve(tag: &str, recipe: &str, args: &[&str]) -> std::process::Output {
    let dir = std::env::temp_dir().join(format!("protolyte-phase-plots-{}-{tag}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("recipe.json");
    std::fs::write(&file, recipe).unwrap();
    Command::new(env!("CARGO_BIN_EXE_protolyte"))
        .args(["solve", &file.display().to_string()])
        .args(args.iter().map(|a| a.replace("DIR", &dir.display().to_string())))
        .output()
        .unwrap()
}

#[test]
fn rain_water_has_a_distribution_and_a_capacity_plot() {
    // Pure water open to 420 µatm of CO2: the carbonate comes from the gas alone. Before the
    // fix the plots dropped the gas and found 'no acid–base family' (exit 5).
    let o = solve(
        "rain",
        r#"{"format":"protolyte-recipe/1","reagents":[],"partial_pressures":[{"gas":"CO2(g)","microatm":420}]}"#,
        &["--plot", "DIR/d.svg", "--capacity-plot", "DIR/c.svg"],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let _ = std::fs::remove_dir_all(std::env::temp_dir().join(format!(
        "protolyte-phase-plots-{}-{}",
        std::process::id(),
        "rain"
    )));
}

#[test]
fn a_water_analysis_keeps_its_dic_in_the_plots() {
    // DIC and alkalinity measured, sodium closing the balance: the carbonate is the DIC's.
    let o = solve(
        "analysis",
        r#"{"format":"protolyte-recipe/1","reagents":[],"fixed_alkalinity_meq_per_kg":2,
            "fixed_dic_mmol_per_kg":2.2,"charge_balance_on":"sodium"}"#,
        &["--plot", "DIR/a.svg"],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let _ = std::fs::remove_dir_all(std::env::temp_dir().join(format!(
        "protolyte-phase-plots-{}-{}",
        std::process::id(),
        "analysis"
    )));
}

#[test]
fn data_shows_a_log_k_equation_as_it_is_applied() {
    // The equation of CO2(g) (Plummer & Busenberg 1982) gives −1.468 at 25 °C, per atm; the
    // entry's log K_H is −1.474, per bar. The library applies the equation's change from
    // 25 °C; before, `data` printed "log K = <equation>", a value the entry does not use.
    let o = Command::new(env!("CARGO_BIN_EXE_protolyte"))
        .args(["data", "CO2(g)"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(o.status.success());
    assert!(text.contains("log K(T) = log K(25 °C) + f(T) − f(298.15 K)"), "{text}");
    assert!(text.contains("log K_H -1.474"), "{text}");
    let o = Command::new(env!("CARGO_BIN_EXE_protolyte"))
        .args(["data", "--json", "CO2(g)"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("\"applied_as\""), "{text}");
}
