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
