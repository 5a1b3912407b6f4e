//! `protolyte`: aqueous acid–base speciation from the command line.
//!
//! Subcommands: `solve`, `titrate`, `design`, `fit`, `batch`, `data`. Documents are JSON or
//! TOML (see docs/recipe-format.md); exit codes are listed in docs/cli.md and under
//! `protolyte --help`.

use std::fs::File;
use std::io::{self, BufRead, BufReader, BufWriter, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::OnceLock;
use std::time::Instant;

use clap::{Parser, Subcommand};
use protolyte::document::batch::{self, BatchOptions};
use protolyte::document::{
    self, DesignDoc, DesignResult, DocumentError, FitDoc, FitResult, RecipeDoc, SolveResult, TitrationDoc,
    TitrationResult,
};
use protolyte::plot::{
    PlotError, PlotOptions, capacity_plot, distribution_plot, saturation_plot, titration_svg, write_svg,
};
use protolyte::{
    Amount, Catalog, ComponentKind, Conditions, Constituent, DataKind, Equilibrium, Error, Reagent, Recipe,
};

/// Exit codes.
const EXIT_OK: u8 = 0;
const EXIT_BATCH_FAILURES: u8 = 1;
/// The command line is wrong: clap's own code, also used for a plot name that is not `.svg`.
const EXIT_USAGE: u8 = 2;
const EXIT_BAD_INPUT: u8 = 3;
const EXIT_NO_CONVERGENCE: u8 = 4;
const EXIT_OUTPUT: u8 = 5;

const AFTER_HELP: &str = "\
Exit codes:
    0  success
    1  batch: some lines failed (each has an error record in the output)
    2  the command line is wrong (unknown option, missing argument)
    3  the input cannot be read or is refused (the message names file, line and column, or the
       field), or is over an input limit (docs/cli.md)
    4  the solver did not converge
    5  the output could not be written (with --plot: the result was written, the plot was not)
  101  an internal failure (a bug; please report it). In batch, a line that hits one gets an
       \"internal\" error record instead and the run goes on

Documents are JSON or TOML; see docs/recipe-format.md.";

#[derive(Parser)]
#[command(name = "protolyte", version, about = "Aqueous acid–base speciation: pH and every species of a solution, titrations, buffer design, fits", after_help = AFTER_HELP)]
struct Cli {
    #[command(subcommand)]
    command: Command,
    /// Also read this catalogue file (`protolyte-catalog/1`, see docs/catalog-format.md):
    /// entries added beside the built-in ones, or replacing them where an entry says
    /// `replace = true`. May be given more than once; read in order.
    #[arg(long, global = true, value_name = "FILE")]
    catalog: Vec<PathBuf>,
}

/// The catalogue of this run: the built-in one with the `--catalog` files read in.
static CATALOG: OnceLock<Catalog> = OnceLock::new();

fn catalog() -> &'static Catalog {
    CATALOG.get_or_init(Catalog::builtin)
}

/// Reads the `--catalog` files once, before any command looks a name up.
fn load_catalog(files: &[PathBuf]) -> Result<(), Failure> {
    let mut cat = Catalog::builtin();
    for f in files {
        cat = cat.with_file(f).map_err(|e| Failure {
            code: EXIT_BAD_INPUT,
            message: e.to_string(),
        })?;
    }
    let _ = CATALOG.set(cat);
    Ok(())
}

#[derive(Subcommand)]
enum Command {
    /// Solve one recipe (`protolyte-recipe/1`): pH, ionic strength, every species and family.
    Solve {
        /// The recipe document (JSON or TOML), or `-` for standard input.
        file: PathBuf,
        /// Write the result as JSON instead of a table.
        #[arg(long)]
        json: bool,
        /// Also draw the distribution diagram (fraction of each form against pH) as SVG.
        #[arg(long, value_name = "FILE.svg")]
        plot: Option<PathBuf>,
        /// Also draw the buffer capacity against pH (pH 1–13, local maxima marked) as SVG.
        #[arg(long, value_name = "FILE.svg")]
        capacity_plot: Option<PathBuf>,
        /// Also draw the saturation index of each catalogue solid whose parts are present
        /// against pH (pH 2–12, strong acid or base added to the closed solution) as SVG.
        #[arg(long, value_name = "FILE.svg")]
        saturation_plot: Option<PathBuf>,
    },
    /// Simulate a titration (`protolyte-titration/1`): the curve as CSV, then its endpoints.
    Titrate {
        /// The titration request (JSON or TOML), or `-`.
        file: PathBuf,
        /// Write the curve and endpoints as JSON instead of CSV.
        #[arg(long)]
        json: bool,
        /// Write the endpoint report (equivalence points with their verdicts, half-equivalence
        /// points, notes) to this file instead of standard error; standard output then holds
        /// the curve as pure CSV either way.
        #[arg(long, value_name = "FILE")]
        endpoints: Option<PathBuf>,
        /// Also draw the curve with its equivalence points and dpH/dV as SVG.
        #[arg(long, value_name = "FILE.svg")]
        plot: Option<PathBuf>,
    },
    /// Design a buffer (`protolyte-design/1`): what to weigh or pipette, and the check solve.
    Design {
        /// The design request (JSON or TOML), or `-`.
        file: PathBuf,
        /// Write the result as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Fit measured titrations (`protolyte-fit/1`): estimates, standard errors, residuals.
    Fit {
        /// The fit request (JSON or TOML), or `-`.
        file: PathBuf,
        /// Write the report as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Calibrate a pH electrode from buffer readings (`protolyte-calibration/1`): slope as %
    /// of the Nernst slope, offset at pH 7, residuals.
    Calibrate {
        /// The calibration request (JSON or TOML), or `-`.
        file: PathBuf,
        /// Write the result as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Analyse a measured titration (`protolyte-measured/1`): the data file read (pH or mV),
    /// endpoints by derivative and Gran, the content with its uncertainty budget, and the
    /// model fit when asked.
    Analyze {
        /// The request (JSON or TOML), or `-`; its data file is found relative to it.
        file: PathBuf,
        /// Write the result as JSON.
        #[arg(long)]
        json: bool,
        /// Also draw the data, the model, the endpoints and the residuals as SVG.
        #[arg(long, value_name = "FILE.svg")]
        plot: Option<PathBuf>,
    },
    /// Solve many recipes: JSON Lines in (one recipe document per line), JSON Lines out, in
    /// input order, in parallel.
    Batch {
        /// The JSON Lines file, or `-` for standard input.
        file: PathBuf,
        /// Write to this file instead of standard output.
        #[arg(long, short)]
        output: Option<PathBuf>,
        /// Write every species and family in each record, not only the summary.
        #[arg(long)]
        full: bool,
        /// No progress bar (it is shown only when standard error is a terminal).
        #[arg(long)]
        quiet: bool,
    },
    /// List or search the catalogue (acid–base families, ions, reagents, complexes, solids,
    /// gases; built in and from `--catalog` files)
    /// with the published source of each entry.
    Data {
        /// Part of a name, synonym or formula; without it, everything is listed.
        query: Option<String>,
        /// Write the entries as JSON.
        #[arg(long)]
        json: bool,
    },
}

/// A failure that ends the program with an exit code.
struct Failure {
    code: u8,
    message: String,
}

impl From<DocumentError> for Failure {
    fn from(e: DocumentError) -> Self {
        Failure {
            code: EXIT_BAD_INPUT,
            message: e.to_string(),
        }
    }
}

fn chem(file: &str, e: Error) -> Failure {
    let code = if matches!(e, Error::NoConvergence { .. }) {
        EXIT_NO_CONVERGENCE
    } else {
        EXIT_BAD_INPUT
    };
    Failure {
        code,
        message: format!("{file}: {e}"),
    }
}

/// A refused request: its document (exit 3) or its chemistry (exit 3, or 4 when the solver
/// did not converge), attributed to `file`.
fn request_failure(file: &str, e: document::RequestError) -> Failure {
    match e {
        document::RequestError::Input(d) => d.in_file(file).into(),
        document::RequestError::Chemistry(c) => chem(file, c),
    }
}

fn output_failure(e: io::Error) -> Failure {
    Failure {
        code: EXIT_OUTPUT,
        message: format!("cannot write the output: {e}"),
    }
}

fn main() -> ExitCode {
    // A panic is a bug; say so in one line (a batch line that hits one gets an error record
    // that says the same, and the run goes on). RUST_BACKTRACE keeps the standard report.
    if std::env::var_os("RUST_BACKTRACE").is_none() {
        std::panic::set_hook(Box::new(|info| {
            eprintln!("protolyte: internal error (a bug in protolyte; please report it): {info}");
        }));
    }
    let cli = Cli::parse();
    match load_catalog(&cli.catalog).and_then(|()| run(cli.command)) {
        Ok(code) => ExitCode::from(code),
        // A reader that closed the pipe early (e.g. `| head`) wanted no more: no message.
        Err(f) if f.code == EXIT_OUTPUT && f.message.contains("Broken pipe") => ExitCode::from(EXIT_OK),
        Err(f) => {
            eprintln!("protolyte: {}", f.message);
            ExitCode::from(f.code)
        }
    }
}

fn display_name(p: &Path) -> String {
    if p == Path::new("-") {
        "<stdin>".into()
    } else {
        p.display().to_string()
    }
}

fn run(cmd: Command) -> Result<u8, Failure> {
    let stdout = io::stdout();
    let mut out = BufWriter::new(stdout.lock());
    let code = match cmd {
        Command::Solve {
            file,
            json,
            plot,
            capacity_plot,
            saturation_plot,
        } => solve(
            &file,
            json,
            [plot.as_deref(), capacity_plot.as_deref(), saturation_plot.as_deref()],
            &mut out,
        )?,
        Command::Titrate {
            file,
            json,
            endpoints,
            plot,
        } => titrate(&file, json, endpoints.as_deref(), plot.as_deref(), &mut out)?,
        Command::Design { file, json } => design(&file, json, &mut out)?,
        Command::Fit { file, json } => fit(&file, json, &mut out)?,
        Command::Calibrate { file, json } => calibrate(&file, json, &mut out)?,
        Command::Analyze { file, json, plot } => analyze(&file, json, plot.as_deref(), &mut out)?,
        Command::Batch {
            file,
            output,
            full,
            quiet,
        } => {
            drop(out);
            return run_batch(&file, output.as_deref(), full, quiet);
        }
        Command::Data { query, json } => data(query.as_deref(), json, &mut out)?,
    };
    out.flush().map_err(output_failure)?;
    Ok(code)
}

fn write_json<T: serde::Serialize>(out: &mut impl Write, v: &T) -> Result<(), Failure> {
    serde_json::to_writer_pretty(&mut *out, v).map_err(|e| output_failure(e.into()))?;
    writeln!(out).map_err(output_failure)
}

fn plot_failure(path: &Path, e: PlotError) -> Failure {
    Failure {
        code: EXIT_OUTPUT,
        message: format!(
            "{}: cannot draw or write the plot (the result above is complete): {e}",
            path.display()
        ),
    }
}

fn plot_options(name: &Option<String>) -> PlotOptions {
    match name {
        Some(n) => PlotOptions::new().title(n.clone()),
        None => PlotOptions::new(),
    }
}

/// `plots`: the distribution diagram, the buffer capacity and the saturation indices, each
/// drawn when its file is given.
fn solve(file: &Path, json: bool, plots: [Option<&Path>; 3], out: &mut impl Write) -> Result<u8, Failure> {
    let [plot, capacity, saturation] = plots;
    for p in plots {
        check_svg_name(p)?;
    }
    let name = display_name(file);
    let doc: RecipeDoc = document::load_expecting(file, document::RECIPE_FORMAT)?;
    doc.check_format(true).map_err(|e| e.in_file(&name))?;
    let (recipe, conditions) = doc.to_recipe(catalog()).map_err(|e| e.in_file(&name))?;
    let eq = recipe
        .compile(&conditions)
        .and_then(|s| s.solve())
        .map_err(|e| chem(&name, e))?;
    // A water analysis closed on an ion: its ion balance as entered (the closing ion and the
    // solids present read from the recipe, so that an ion of the document's own definitions
    // and what precipitated are counted); a fixed pH read under another pH convention.
    let result = SolveResult::from_equilibrium(&eq)
        .named(doc.name.clone())
        .with_recipe(&recipe);
    if json {
        write_json(out, &result)?;
    } else {
        write_solve_table(out, &result).map_err(output_failure)?;
    }
    // The plot comes after the result, so that a plot that cannot be drawn or written (exit 5)
    // does not take the result with it.
    if plots.iter().all(Option::is_none) {
        return Ok(EXIT_OK);
    }
    // The fractions and the buffer capacity against pH are those of the closed solution: a
    // fixed pH or partial pressure, or solids allowed to form, would hold the pH or the totals
    // the sweep moves. The result's own pH is marked on each plot.
    let closed = if doc.has_phase_requests() {
        closed_solution(&recipe, &conditions, &eq).map_err(|e| chem(&name, e))?
    } else {
        recipe
    };
    if let Some(p) = plot {
        out.flush().map_err(output_failure)?;
        let opts = plot_options(&doc.name).mark_ph(eq.ph());
        let svg = distribution_plot(&closed, &conditions, &opts).map_err(|e| plot_failure(p, e))?;
        write_svg(p, &svg).map_err(|e| plot_failure(p, e))?;
    }
    if let Some(p) = capacity {
        out.flush().map_err(output_failure)?;
        let opts = plot_options(&doc.name).mark_ph(eq.ph());
        let svg = capacity_plot(&closed, &conditions, &opts).map_err(|e| plot_failure(p, e))?;
        write_svg(p, &svg).map_err(|e| plot_failure(p, e))?;
    }
    if let Some(p) = saturation {
        out.flush().map_err(output_failure)?;
        let opts = plot_options(&doc.name).mark_ph(eq.ph());
        let svg = saturation_plot(&closed, &conditions, &opts).map_err(|e| plot_failure(p, e))?;
        write_svg(p, &svg).map_err(|e| plot_failure(p, e))?;
    }
    Ok(EXIT_OK)
}

/// The solution of `eq` closed: what the phase requests of `recipe` left dissolved (a DIC,
/// the carbon taken up from a gas, the ion that closed the charge balance, less what
/// precipitated), each family and ion at its dissolved total, with no phase request. Each
/// enters as a neutral reagent (a family's most protonated form, an ion with OH⁻ or H⁺):
/// where the pH starts does not matter to the plots, which move it with strong acid or base.
fn closed_solution(recipe: &Recipe, conditions: &Conditions, eq: &Equilibrium) -> Result<Recipe, Error> {
    let system = recipe.compile(conditions)?;
    let mut closed = Recipe::new();
    closed
        .report_solids(recipe.reported_solids())
        .report_gases(recipe.reported_gases())
        .add_complexes(recipe.complexes());
    for comp in system.components().iter().skip(1) {
        let Some(total) = eq.dissolved_total_molal(&comp.name) else {
            continue;
        };
        let (part, charge) = match &comp.kind {
            ComponentKind::Family(f) => {
                let p = &system.families()[*f].protolyte;
                let n = p.proton_count();
                (
                    Constituent::Form {
                        protolyte: p.clone(),
                        protons: n,
                    },
                    p.charge_most_protonated(),
                )
            }
            ComponentKind::Ion(ion) => (Constituent::Ion(ion.clone()), ion.charge()),
            ComponentKind::Proton => continue,
        };
        let mut parts = vec![(part, 1)];
        if charge > 0 {
            parts.push((Constituent::Hydroxide, charge.unsigned_abs()));
        } else if charge < 0 {
            parts.push((Constituent::Proton, charge.unsigned_abs()));
        }
        let reagent = Reagent::new(&format!("{} (dissolved)", comp.name), None, parts)?;
        closed.add(&reagent, Amount::molal(total.max(0.0)))?;
    }
    Ok(closed)
}

fn write_solve_table(out: &mut impl Write, r: &SolveResult) -> io::Result<()> {
    if let Some(n) = &r.name {
        writeln!(out, "{n}")?;
    }
    let model = match r.activity {
        document::ActivityDoc::Ideal => "ideal (no activity correction)",
        document::ActivityDoc::Davies => "Davies",
        document::ActivityDoc::ExtendedDebyeHuckel => "extended Debye–Hückel",
        document::ActivityDoc::Sit => "SIT (specific ion interaction theory)",
    };
    // The convention is named only when it is not the model's own γ(H⁺).
    let convention = match r.ph_convention.as_deref() {
        Some("bates-guggenheim") => ", pH convention: Bates–Guggenheim",
        Some(_) | None => "",
    };
    writeln!(
        out,
        "conditions        {:.2} °C, activity model: {model}{convention}",
        r.temperature_celsius
    )?;
    writeln!(out, "pH                {:.4}", r.ph)?;
    writeln!(out, "p[H] (molal)      {:.4}", r.p_h_molal)?;
    writeln!(out, "pOH               {:.4}", r.poh)?;
    writeln!(out, "ionic strength    {:.6} mol/kg", r.ionic_strength_mol_per_kg)?;
    writeln!(
        out,
        "solver            {} path, {} iterations, largest residual {:.1e}",
        r.path, r.iterations, r.residuals.max_relative
    )?;
    writeln!(out)?;
    writeln!(
        out,
        "{:<22} {:>6} {:>12} {:>12} {:>8} {:>12}",
        "species", "charge", "mol/kg", "mol/L", "γ", "activity"
    )?;
    for s in &r.species {
        writeln!(
            out,
            "{:<22} {:>+6} {:>12.4e} {:>12.4e} {:>8.4} {:>12.4e}",
            s.name, s.charge, s.mol_per_kg, s.mol_per_l, s.gamma, s.activity
        )?;
    }
    if !r.families.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "{:<22} {:>12} {:>10}  alpha fractions (0, 1, 2… protons bound)",
            "family", "total mol/kg", "mean H+"
        )?;
        for f in &r.families {
            let fr: Vec<String> = f.fractions.iter().map(|a| format!("{a:.4}")).collect();
            let cx = if f.complexed_fraction > 0.0 {
                format!("  complexed {:.4}", f.complexed_fraction)
            } else {
                String::new()
            };
            writeln!(
                out,
                "{:<22} {:>12.4e} {:>10.4}  {}{cx}",
                f.name,
                f.total_mol_per_kg,
                f.mean_bound_protons,
                fr.join("  ")
            )?;
        }
    }
    write_phase_tables(out, r)?;
    for w in &r.warnings {
        writeln!(out, "warning: {w}")?;
    }
    Ok(())
}

/// Alkalinity, DIC, the acid or base a fixed pH took, the gases and the saturation state of
/// the solids of a solve.
fn write_phase_tables(out: &mut impl Write, r: &SolveResult) -> io::Result<()> {
    if r.total_alkalinity_eq_per_kg != 0.0 || r.dic_mol_per_kg > 0.0 {
        writeln!(out)?;
        writeln!(
            out,
            "total alkalinity  {:.4} meq/kg (carbonate alkalinity {:.4} meq/kg; end point near pH 4.5)",
            1e3 * r.total_alkalinity_eq_per_kg,
            1e3 * r.carbonate_alkalinity_eq_per_kg
        )?;
        writeln!(out, "DIC               {:.4} mmol/kg", 1e3 * r.dic_mol_per_kg)?;
    }
    if let Some(u) = r.proton_uptake_mol_per_kg {
        let what = if u >= 0.0 { "acid (H+)" } else { "base (OH-)" };
        writeln!(
            out,
            "acid or base      {:.4e} mol/kg of {what} added to hold the constraints",
            u.abs()
        )?;
    }
    if let Some(c) = &r.charge_balance_ion {
        let what = if c.added_mol_per_kg >= 0.0 { "added" } else { "removed" };
        writeln!(
            out,
            "charge balance    closed on {}: {:.4e} mol/kg {what}",
            c.ion,
            c.added_mol_per_kg.abs()
        )?;
    }
    if let Some(b) = &r.ion_balance {
        let verdict = match b.within_acceptance {
            Some(true) => "within the Standard Methods 1030 E limit",
            Some(false) => "outside the Standard Methods 1030 E limit",
            None => "no Standard Methods 1030 E limit at this anion sum",
        };
        writeln!(
            out,
            "ion balance       {:+.2} % as entered (cations {:.4} meq/kg, anions {:.4} meq/kg; {verdict})",
            b.error_percent, b.cations_meq_per_kg, b.anions_meq_per_kg
        )?;
    }
    if !r.gases.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "{:<22} {:>14} {:>14}  exchange with the gas phase",
            "gas", "p / atm", "p / µatm"
        )?;
        for g in &r.gases {
            let (atm, uatm) = match g.partial_pressure_atm {
                Some(p) => (format!("{p:.4e}"), format!("{:.4}", p * 1e6)),
                None => ("-".into(), "-".into()),
            };
            let exchange = if g.fixed {
                let verb = if g.taken_up_mol_per_kg >= 0.0 {
                    "taken up"
                } else {
                    "given off"
                };
                format!("fixed (open system): {verb} {:.4e} mol/kg", g.taken_up_mol_per_kg.abs())
            } else {
                "in equilibrium with the solution (closed system)".into()
            };
            writeln!(out, "{:<22} {atm:>14} {uatm:>14}  {exchange}", g.name)?;
        }
    }
    if !r.solids.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "{:<30} {:>9} {:>10} {:>10}  state",
            "solid", "SI", "log IAP", "log K"
        )?;
        let num = |v: Option<f64>, prec: usize| v.map_or_else(|| "-".to_string(), |v| format!("{v:.prec$}"));
        for s in &r.solids {
            let state = match (s.allowed, s.amount_mol_per_kg > 0.0, s.saturation_index) {
                (true, true, _) => format!("present: {:.4e} mol/kg", s.amount_mol_per_kg),
                (_, _, Some(si)) if si > 1e-6 => {
                    if s.allowed {
                        "supersaturated".to_string()
                    } else {
                        "supersaturated (not allowed to form)".to_string()
                    }
                }
                (_, _, Some(si)) if si < -1e-6 => "undersaturated".to_string(),
                (_, _, Some(_)) => "saturated".to_string(),
                (_, _, None) => "-".to_string(),
            };
            writeln!(
                out,
                "{:<30} {:>9} {:>10} {:>10}  {state}",
                s.name,
                num(s.saturation_index, 3),
                num(s.log10_iap, 3),
                num(s.log10_k, 3)
            )?;
        }
    }
    Ok(())
}

fn titrate(
    file: &Path,
    json: bool,
    endpoints: Option<&Path>,
    plot: Option<&Path>,
    out: &mut impl Write,
) -> Result<u8, Failure> {
    check_svg_name(plot)?;
    let name = display_name(file);
    let doc: TitrationDoc = document::load_expecting(file, document::TITRATION_FORMAT)?;
    doc.check_format(true).map_err(|e| e.in_file(&name))?;
    let run = document::run_titration(&doc, catalog()).map_err(|e| request_failure(&name, e))?;
    let result = &run.result;
    if json {
        write_json(out, &result)?;
    } else {
        write_titration_csv(out, result).map_err(output_failure)?;
        out.flush().map_err(output_failure)?;
        match endpoints {
            Some(p) => {
                let f = File::create(p).map_err(|e| Failure {
                    code: EXIT_OUTPUT,
                    message: format!("{}: cannot create the endpoint report: {e}", p.display()),
                })?;
                let mut w = BufWriter::new(f);
                write_endpoint_report(&mut w, result)
                    .and_then(|()| w.flush())
                    .map_err(|e| Failure {
                        code: EXIT_OUTPUT,
                        message: format!("{}: cannot write the endpoint report: {e}", p.display()),
                    })?;
            }
            None => write_endpoint_report(&mut io::stderr().lock(), result).map_err(output_failure)?,
        }
    }
    // After the result, as for `solve`.
    if let Some(p) = plot {
        out.flush().map_err(output_failure)?;
        let end = doc.end_volume_ml;
        let shown: Vec<_> = run
            .equivalence_points
            .iter()
            .filter(|e| e.volume_ml <= end)
            .cloned()
            .collect();
        let svg = titration_svg(&run.curve, &shown, &plot_options(&doc.name)).map_err(|e| plot_failure(p, e))?;
        write_svg(p, &svg).map_err(|e| plot_failure(p, e))?;
    }
    Ok(EXIT_OK)
}

/// Refuses a plot file whose name does not end in `.svg` (the only format drawn), before
/// anything is computed.
fn check_svg_name(plot: Option<&Path>) -> Result<(), Failure> {
    match plot {
        Some(p) if !p.extension().is_some_and(|e| e.eq_ignore_ascii_case("svg")) => Err(Failure {
            code: EXIT_USAGE,
            message: format!(
                "{}: plots are drawn as SVG only; give a file name ending in .svg",
                p.display()
            ),
        }),
        _ => Ok(()),
    }
}

/// The curve as pure CSV: a header and one row a point, nothing else.
fn write_titration_csv(out: &mut impl Write, r: &TitrationResult) -> io::Result<()> {
    writeln!(out, "volume_ml,ph,dph_dv_per_ml,ionic_strength_mol_per_kg")?;
    for p in &r.points {
        writeln!(
            out,
            "{:.6},{:.6},{:.6e},{:.6e}",
            // `+ 0.0` writes a negative zero as 0.
            p.volume_ml + 0.0,
            p.ph,
            p.dph_dv_per_ml + 0.0,
            p.ionic_strength_mol_per_kg
        )?;
    }
    Ok(())
}

/// The endpoints in words: the name, the equivalence points with their verdicts, the
/// half-equivalence points and the notes, one a line.
fn write_endpoint_report(out: &mut impl Write, r: &TitrationResult) -> io::Result<()> {
    if let Some(n) = &r.name {
        writeln!(out, "{n}")?;
    }
    if r.ph_convention.as_deref() == Some("bates-guggenheim") {
        writeln!(out, "pH convention: Bates–Guggenheim")?;
    }
    for n in &r.notes {
        writeln!(out, "note: {n}")?;
    }
    for (i, e) in r.equivalence_points.iter().enumerate() {
        let step = e.completed_step.as_deref().unwrap_or("strong acid/base");
        let ind = match (&e.nearest_indicator, e.nearest_indicator_error) {
            (Some(n), Some(err)) => format!("; nearest indicator {n} (titration error {:+.2} %)", err * 100.0),
            (Some(n), None) => format!("; nearest indicator {n}"),
            _ => String::new(),
        };
        writeln!(
            out,
            "equivalence point {}: {:.4} mL, pH {:.3} ({step}); steep part pH {:.2}–{:.2}; {}{ind}",
            i + 1,
            e.volume_ml,
            e.ph,
            e.steep_ph[0],
            e.steep_ph[1],
            verdict_text(&e.verdict, e.volume_ml),
        )?;
        if !e.flags.is_empty() {
            writeln!(out, "  why (rules of thumb): {}", e.flags.join("; "))?;
        }
    }
    for h in &r.half_equivalence_points {
        writeln!(
            out,
            "half-equivalence {} pKa{}: {:.4} mL, pH {:.3}, pH − pKa {:+.3} (mainly {})",
            h.family, h.step, h.volume_ml, h.ph, h.deviation, h.main_cause
        )?;
    }
    Ok(())
}

/// The verdict in words: usable or not, and the numbers it was decided from.
fn verdict_text(v: &document::VerdictResult, volume_ml: f64) -> String {
    let word = if v.usable { "usable" } else { "not usable" };
    let located = match v.locating_error_ml {
        Some(d) => format!(
            "pH ±{} locates it to ±{d:.3} mL (±{} %)",
            v.ph_window,
            significant(100.0 * d / volume_ml, 2)
        ),
        None => format!("the curve does not move ±{} pH around it", v.ph_window),
    };
    format!(
        "{word}: {located}, tolerance ±{:.3} mL (pH change {:.2} over it, slope {} pH/mL)",
        v.tolerance_ml,
        v.break_ph,
        significant(v.slope_per_ml, 3)
    )
}

/// `x` with `digits` significant digits, plain notation between 1e-3 and 1e6.
fn significant(x: f64, digits: usize) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let mag = x.abs().log10().floor() as i32;
    if !(-3..6).contains(&mag) {
        return format!("{:.*e}", digits.saturating_sub(1), x);
    }
    let decimals = (digits as i32 - 1 - mag).max(0) as usize;
    format!("{x:.decimals$}")
}

fn design(file: &Path, json: bool, out: &mut impl Write) -> Result<u8, Failure> {
    let name = display_name(file);
    let doc: DesignDoc = document::load_expecting(file, document::DESIGN_FORMAT)?;
    doc.check_format(true).map_err(|e| e.in_file(&name))?;
    let result = document::run_design(&doc, catalog()).map_err(|e| request_failure(&name, e))?;
    if json {
        write_json(out, &result)?;
    } else {
        write_design_table(out, &result).map_err(output_failure)?;
    }
    Ok(EXIT_OK)
}

/// The design as text: what to take, the check solve, the shifts.
fn write_design_table(out: &mut impl Write, result: &DesignResult) -> io::Result<()> {
    if let Some(n) = &result.name {
        writeln!(out, "{n}")?;
    }
    writeln!(
        out,
        "buffer for pH {:.3}, made up to {} mL with water",
        result.target_ph, result.final_volume_ml
    )?;
    if result.recipe.ph_convention == Some(document::PhConventionDoc::BatesGuggenheim) {
        writeln!(out, "pH convention     Bates–Guggenheim")?;
    }
    writeln!(out)?;
    writeln!(out, "{:<40} {:<9} {:>12} {:>14}", "reagent", "role", "mol/L", "take")?;
    for l in &result.lines {
        let take = match (l.grams, l.milliliters) {
            (Some(g), _) => format!("{g:.4} g"),
            (_, Some(ml)) => format!("{ml:.3} mL"),
            _ => "-".into(),
        };
        writeln!(
            out,
            "{:<40} {:<9} {:>12.6} {:>14}",
            l.reagent, l.role, l.mol_per_l, take
        )?;
    }
    writeln!(out)?;
    writeln!(
        out,
        "check solve       pH {:.4} (check − target {:+.1e}), ionic strength {:.5} mol/kg, balance residual {:.1e}",
        result.check_ph, result.ph_residual, result.ionic_strength_mol_per_kg, result.balance_residual
    )?;
    writeln!(
        out,
        "buffer capacity   {:.5} mol/L per pH",
        result.buffer_capacity_mol_per_l
    )?;
    for s in &result.temperature_shifts {
        writeln!(
            out,
            "at {:>5.1} °C       pH {:.3} ({:+.3})",
            s.temperature_celsius, s.ph, s.shift
        )?;
    }
    let d = &result.dilution_shift;
    writeln!(
        out,
        "diluted {:.0}-fold   pH {:.3} ({:+.3})",
        d.dilution_factor, d.ph, d.shift
    )?;
    for w in &result.warnings {
        writeln!(out, "warning: {w}")?;
    }
    writeln!(
        out,
        "caution: a model result; measure the pH of what you make with a calibrated electrode."
    )
}

fn fit(file: &Path, json: bool, out: &mut impl Write) -> Result<u8, Failure> {
    let name = display_name(file);
    let doc: FitDoc = document::load_expecting(file, document::FIT_FORMAT)?;
    doc.check_format(true).map_err(|e| e.in_file(&name))?;
    let f = doc.to_fit(catalog()).map_err(|e| e.in_file(&name))?;
    let report = f.run().map_err(|e| chem(&name, e))?;
    let mut result = FitResult::from(&report);
    result.name = doc.name.clone();
    if json {
        write_json(out, &result)?;
    } else {
        write_fit_table(out, &result, &doc).map_err(output_failure)?;
    }
    Ok(EXIT_OK)
}

/// The fit as text; `doc` gives the measured points beside their residuals.
fn write_fit_table(out: &mut impl Write, result: &FitResult, doc: &FitDoc) -> io::Result<()> {
    if let Some(n) = &result.name {
        writeln!(out, "{n}")?;
    }
    writeln!(
        out,
        "{:<44} {:>6} {:>14} {:>14} {:>14}",
        "unknown", "curve", "start", "estimate", "std. error"
    )?;
    for e in &result.estimates {
        let curve = e.curve.map(|c| c.to_string()).unwrap_or_else(|| "all".into());
        let se = e
            .standard_error
            .map(|s| format!("{s:.4e}"))
            .unwrap_or_else(|| "-".into());
        writeln!(
            out,
            "{:<44} {:>6} {:>14.6} {:>14.6} {:>14}",
            e.unknown, curve, e.start, e.value, se
        )?;
    }
    writeln!(out)?;
    let sd = result
        .residual_sd
        .map(|s| format!("{s:.4}"))
        .unwrap_or_else(|| "-".into());
    writeln!(
        out,
        "residual SD {sd} pH, {} degrees of freedom, {} iterations, {}",
        result.degrees_of_freedom,
        result.iterations,
        if result.converged {
            "converged"
        } else {
            "stopped on the iteration budget"
        }
    )?;
    for w in &result.warnings {
        writeln!(out, "warning: {w}")?;
    }
    writeln!(out)?;
    writeln!(out, "curve,point,volume_ml,measured_ph,residual_ph")?;
    for (k, (c, res)) in doc.curves.iter().zip(&result.residuals).enumerate() {
        for (i, (m, r)) in c.measured.iter().zip(res).enumerate() {
            writeln!(out, "{},{},{},{},{:+.5}", k + 1, i + 1, m.volume_ml, m.ph, r)?;
        }
    }
    Ok(())
}

fn calibrate(file: &Path, json: bool, out: &mut impl Write) -> Result<u8, Failure> {
    let name = display_name(file);
    let doc: document::CalibrationDoc = document::load_expecting(file, document::CALIBRATION_FORMAT)?;
    doc.check_format(true).map_err(|e| e.in_file(&name))?;
    let cal = doc.to_calibration().map_err(|e| e.in_file(&name))?;
    let mut r = document::CalibrationResult::from(&cal);
    r.name = doc.name.clone();
    if json {
        write_json(out, &r)?;
    } else {
        write_calibration(out, &r).map_err(output_failure)?;
    }
    Ok(EXIT_OK)
}

fn write_calibration(out: &mut impl Write, r: &document::CalibrationResult) -> io::Result<()> {
    if let Some(n) = &r.name {
        writeln!(out, "{n}")?;
    }
    let se = |x: Option<f64>, unit: &str| {
        x.map(|s| format!(" ± {s:.2} {unit} (standard error)"))
            .unwrap_or_default()
    };
    writeln!(
        out,
        "slope      {:.2} mV/pH = {:.2} % of the Nernst slope ({:.3} mV/pH at {} °C){}",
        r.slope_mv_per_ph,
        r.slope_percent,
        r.nernst_slope_mv_per_ph,
        r.temperature_celsius,
        se(r.slope_standard_error_percent, "%")
    )?;
    writeln!(
        out,
        "offset     {:+.2} mV at pH 7{}",
        r.offset_mv,
        se(r.offset_standard_error_mv, "mV")
    )?;
    let res: Vec<String> = r.residuals_mv.iter().map(|x| format!("{x:+.2}")).collect();
    writeln!(out, "residuals  {} mV", res.join(", "))?;
    for w in &r.warnings {
        writeln!(out, "warning: {w}")?;
    }
    Ok(())
}

fn analyze(file: &Path, json: bool, plot: Option<&Path>, out: &mut impl Write) -> Result<u8, Failure> {
    check_svg_name(plot)?;
    let name = display_name(file);
    let doc: document::MeasuredDoc = document::load_expecting(file, document::MEASURED_FORMAT)?;
    doc.check_format(true).map_err(|e| e.in_file(&name))?;
    let base = if file == Path::new("-") {
        PathBuf::from(".")
    } else {
        file.parent().map(Path::to_path_buf).unwrap_or_default()
    };
    let data_path = base.join(&doc.data.file);
    let text = read_data_file(&data_path)?;
    let r = doc.analyze(&text, catalog()).map_err(|e| match e {
        // An error in the data names the data file; any other names the request.
        DocumentError::Read { .. } => Failure {
            code: EXIT_BAD_INPUT,
            message: e.in_file(&data_path.display().to_string()).to_string(),
        },
        other => Failure {
            code: EXIT_BAD_INPUT,
            message: other.in_file(&name).to_string(),
        },
    })?;
    if json {
        write_json(out, &r)?;
    } else {
        write_measured(out, &r).map_err(output_failure)?;
    }
    if let Some(p) = plot {
        out.flush().map_err(output_failure)?;
        let pts: Vec<(f64, f64)> = r.points.iter().map(|p| (p[0], p[1])).collect();
        // The model's pH at each point: measured − residual.
        let model: Option<Vec<f64>> = r.fit.as_ref().and_then(|f| {
            f.residuals
                .first()
                .filter(|res| res.len() == pts.len())
                .map(|res| pts.iter().zip(res).map(|(p, e)| p.1 - e).collect())
        });
        let mut marks: Vec<(String, f64)> = r
            .derivative_endpoints
            .iter()
            .map(|e| ("derivative".to_string(), e.volume_ml))
            .collect();
        if let Some(g) = &r.gran_before {
            marks.push(("Gran before".into(), g.endpoint_ml));
        }
        if let Some(g) = &r.gran_after {
            marks.push(("Gran after".into(), g.endpoint_ml));
        }
        let svg = protolyte::plot::measured_svg(&pts, model.as_deref(), &marks, &plot_options(&doc.name))
            .map_err(|e| plot_failure(p, e))?;
        write_svg(p, &svg).map_err(|e| plot_failure(p, e))?;
    }
    Ok(EXIT_OK)
}

/// The text of a measured-data file, at most 16 MiB.
fn read_data_file(path: &Path) -> Result<String, Failure> {
    use std::io::Read;
    const LIMIT: u64 = 16 << 20;
    let bad = |m: String| Failure {
        code: EXIT_BAD_INPUT,
        message: format!("{}: {m}", path.display()),
    };
    let f = File::open(path).map_err(|e| bad(format!("cannot read the data file: {e}")))?;
    let mut bytes = Vec::new();
    f.take(LIMIT + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| bad(format!("cannot read the data file: {e}")))?;
    if bytes.len() as u64 > LIMIT {
        return Err(bad("the data file is longer than 16 MiB".into()));
    }
    String::from_utf8(bytes).map_err(|e| bad(format!("the data file is not UTF-8 text ({e})")))
}

fn write_measured(out: &mut impl Write, r: &document::MeasuredResult) -> io::Result<()> {
    if let Some(n) = &r.name {
        writeln!(out, "{n}")?;
    }
    if let Some(c) = &r.calibration {
        writeln!(
            out,
            "calibration        slope {:.2} % of Nernst, offset {:+.2} mV at pH 7 ({} °C)",
            c.slope_percent, c.offset_mv, c.temperature_celsius
        )?;
    }
    writeln!(out, "points             {}", r.points.len())?;
    writeln!(out, "smoothing          {}", r.smoothing)?;
    for (i, e) in r.derivative_endpoints.iter().enumerate() {
        writeln!(
            out,
            "derivative EP{}     {:.3} mL (second derivative zero), pH {:.2}, largest dpH/dV {:.3} per mL at {:.3} mL",
            i + 1,
            e.volume_ml,
            e.ph,
            e.slope_per_ml,
            e.first_derivative_volume_ml
        )?;
    }
    for (label, g) in [("Gran before", &r.gran_before), ("Gran after ", &r.gran_after)] {
        if let Some(g) = g {
            writeln!(
                out,
                "{label}        {:.4} ± {:.4} mL (standard error), {} on {:.3}–{:.3} mL ({} points, r² {:.5}; window chosen automatically)",
                g.endpoint_ml,
                g.endpoint_standard_error_ml,
                g.function,
                g.window_ml[0],
                g.window_ml[1],
                g.points,
                g.r_squared
            )?;
        }
    }
    writeln!(
        out,
        "reported from      {}: endpoint {:.4} mL",
        r.reported_method, r.endpoint_ml
    )?;
    writeln!(out)?;
    writeln!(out, "{} (expanded uncertainty, k = 2)", r.analyte)?;
    let v = |x: &document::ValueResult| format!("{:.5} ± {:.5}", x.value, x.expanded_uncertainty);
    writeln!(out, "  {} mol/L", v(&r.mol_per_l))?;
    writeln!(out, "  {} g/L", v(&r.g_per_l))?;
    writeln!(out, "  {} g/100 mL", v(&r.g_per_100_ml))?;
    if let Some(p) = &r.percent_w_w {
        writeln!(out, "  {} % w/w", v(p))?;
    }
    writeln!(
        out,
        "  relative standard uncertainty {:.3} %",
        100.0 * r.relative_standard_uncertainty
    )?;
    writeln!(out)?;
    writeln!(
        out,
        "{:<24} {:>12} {:>12} {:>9} {:>7}  basis",
        "uncertainty budget", "value", "std. unc.", "relative", "share"
    )?;
    for b in &r.budget {
        writeln!(
            out,
            "{:<24} {:>12.6} {:>12.3e} {:>8.3}% {:>6.1}%  {}",
            b.source,
            b.value,
            b.standard_uncertainty,
            100.0 * b.relative,
            100.0 * b.share,
            b.basis
        )?;
    }
    if let Some(f) = &r.fit {
        writeln!(out)?;
        writeln!(
            out,
            "model fit on the same data (residual SD {} pH)",
            f.residual_sd.map(|s| format!("{s:.4}")).unwrap_or_else(|| "-".into())
        )?;
        for e in &f.estimates {
            let se = e
                .standard_error
                .map(|s| format!("{s:.4e}"))
                .unwrap_or_else(|| "-".into());
            writeln!(out, "  {:<44} {:>14.6} ± {se}", e.unknown, e.value)?;
        }
    }
    for w in &r.warnings {
        writeln!(out, "warning: {w}")?;
    }
    writeln!(
        out,
        "caution: report a result only under the laboratory's validated procedure."
    )
}

fn run_batch(file: &Path, output: Option<&Path>, full: bool, quiet: bool) -> Result<u8, Failure> {
    let name = display_name(file);
    let unreadable = |e: io::Error| Failure {
        code: EXIT_BAD_INPUT,
        message: format!("{name}: cannot read: {e}"),
    };
    let (input, total): (Box<dyn BufRead + Send>, Option<u64>) = if file == Path::new("-") {
        (Box::new(BufReader::with_capacity(1 << 20, io::stdin())), None)
    } else {
        let f = File::open(file).map_err(unreadable)?;
        let meta = f.metadata().map_err(unreadable)?;
        if meta.is_dir() {
            return Err(Failure {
                code: EXIT_BAD_INPUT,
                message: format!("{name}: is a directory, not a JSON Lines file"),
            });
        }
        let len = Some(meta.len());
        (Box::new(BufReader::with_capacity(1 << 20, f)), len)
    };
    let sink: Box<dyn Write> = match output {
        Some(p) => Box::new(File::create(p).map_err(|e| Failure {
            code: EXIT_OUTPUT,
            message: format!("{}: cannot create: {e}", p.display()),
        })?),
        None => Box::new(io::stdout().lock()),
    };
    let sink = BufWriter::with_capacity(1 << 20, sink);
    let show = !quiet && io::stderr().is_terminal();
    let start = Instant::now();
    let progress = |bytes: u64, lines: usize| {
        if show {
            draw_bar(bytes, total, lines, start);
        }
    };
    let summary = batch::run(
        input,
        sink,
        catalog(),
        &BatchOptions {
            full,
            ..Default::default()
        },
        progress,
    )
    .map_err(|e| {
        // A read error names the input; anything else is the output's.
        if batch::is_read_error(&e) {
            unreadable(e)
        } else {
            output_failure(e)
        }
    })?;
    if show {
        let secs = start.elapsed().as_secs_f64();
        eprintln!(
            "\r{} records ({} failed) in {:.2} s, {:.0} records/s{}",
            summary.records,
            summary.failed,
            secs,
            summary.records as f64 / secs.max(1e-9),
            " ".repeat(20)
        );
    }
    if summary.failed > 0 {
        if !show {
            eprintln!(
                "protolyte: {} of {} batch lines failed (see their error records)",
                summary.failed, summary.records
            );
        }
        Ok(EXIT_BATCH_FAILURES)
    } else {
        Ok(EXIT_OK)
    }
}

fn draw_bar(bytes: u64, total: Option<u64>, lines: usize, start: Instant) {
    let rate = lines as f64 / start.elapsed().as_secs_f64().max(1e-9);
    let mut err = io::stderr().lock();
    let _ = match total {
        Some(t) if t > 0 => {
            let f = (bytes as f64 / t as f64).clamp(0.0, 1.0);
            let width = 30;
            let filled = (f * width as f64).round() as usize;
            write!(
                err,
                "\r[{}{}] {:>5.1} %  {lines} lines  {rate:.0}/s",
                "#".repeat(filled),
                "-".repeat(width - filled),
                f * 100.0
            )
        }
        _ => write!(err, "\r{lines} lines  {rate:.0}/s"),
    };
    let _ = err.flush();
}

/// A solid or a gas of the catalogue as `data` shows it.
struct PhaseData<'a> {
    entry: &'a protolyte::PhaseEntry,
    /// log₁₀ K at 25 °C: K_sp of a solid's dissolution, K_H of a gas (mol/(kg·bar)).
    log10_k: f64,
    dh_kj_per_mol: Option<f64>,
    dcp_j_per_mol_k: Option<f64>,
    equation: Option<protolyte::vant_hoff::LogKEquation>,
    /// The reaction in words: "calcite ⇌ 1 × calcium + 1 × carbonate".
    reaction: String,
    parts: Vec<String>,
}

/// The catalogue's solids and gases whose name, synonyms or formula contain `query`
/// (ignoring case and spaces), or all of them.
fn phase_data<'a>(cat: &'a Catalog, query: Option<&str>) -> Vec<PhaseData<'a>> {
    let key = |t: &str| t.to_lowercase().replace([' ', '-', '_'], "");
    let hit = |e: &protolyte::PhaseEntry| match query {
        None => true,
        Some(q) => {
            let q = key(q);
            key(&e.name).contains(&q) || e.synonyms.iter().any(|s| key(s).contains(&q)) || key(&e.formula).contains(&q)
        }
    };
    let part_words = |p: &protolyte::ComplexPart, n: i32| {
        let what = match p {
            protolyte::ComplexPart::Base(f) => format!("{} ({})", f.form_name(0), f.name()),
            protolyte::ComplexPart::Ion(i) => i.name().to_string(),
            protolyte::ComplexPart::Proton => "H+".into(),
        };
        format!("{n} × {what}")
    };
    let mut out = Vec::new();
    for e in cat.solid_entries().iter().filter(|e| hit(e)) {
        let Some(s) = cat.solids().iter().find(|s| s.name() == e.name) else {
            continue;
        };
        let parts: Vec<String> = s.parts().iter().map(|(p, n)| part_words(p, *n)).collect();
        out.push(PhaseData {
            entry: e,
            log10_k: s.log10_k(),
            dh_kj_per_mol: s.dh_kj_per_mol(),
            dcp_j_per_mol_k: s.dcp_j_per_mol_k(),
            equation: s.log_k_equation(),
            reaction: format!("{} ⇌ {}", s.name(), parts.join(" + ")),
            parts,
        });
    }
    for e in cat.gas_entries().iter().filter(|e| hit(e)) {
        let Some(g) = cat.gases().iter().find(|g| g.name() == e.name) else {
            continue;
        };
        let form = g.family().form_name(g.protons());
        out.push(PhaseData {
            entry: e,
            log10_k: g.log10_kh(),
            dh_kj_per_mol: g.dh_kj_per_mol(),
            dcp_j_per_mol_k: None,
            equation: g.log_k_equation(),
            reaction: format!("{} ⇌ {form}(aq)", g.name()),
            parts: vec![format!("1 × {form} ({})", g.family().name())],
        });
    }
    out
}

fn data(query: Option<&str>, json: bool, out: &mut impl Write) -> Result<u8, Failure> {
    let cat = catalog();
    let entries: Vec<&protolyte::DataInfo> = match query {
        Some(q) => cat.search(q),
        None => cat.entries().iter().collect(),
    };
    let phases = phase_data(cat, query);
    if json {
        let v: Vec<serde_json::Value> = entries
            .iter()
            .map(|e| {
                let mut v = serde_json::json!({
                    "kind": e.kind.name(),
                    "name": e.name,
                    "synonyms": e.synonyms,
                    "formula": e.formula,
                    "charge": e.charge,
                    "molar_mass_g_per_mol": e.molar_mass_g_per_mol,
                    "ion_size_angstrom": e.ion_size_angstrom,
                    "summary": e.summary,
                    "source": e.source,
                    "from_memory": e.from_memory,
                    "origin": e.origin,
                });
                let fields = match e.kind {
                    DataKind::Protolyte => serde_json::json!({
                        "steps": e.steps.iter().enumerate().map(|(k, s)| serde_json::json!({
                            "pka": s.pka,
                            "dh_kj_per_mol": s.dh_kj_per_mol,
                            "dcp_j_per_mol_k": s.dcp_j_per_mol_k,
                            "log_k_equation": equation_json(e.log_k_equations.get(k).copied().flatten()),
                        })).collect::<Vec<_>>(),
                        "forms": e.forms.iter().map(|f| serde_json::json!({
                            "name": f.name,
                            "protons": f.protons,
                            "charge": f.charge,
                            "ion_size_angstrom": f.ion_size_angstrom,
                        })).collect::<Vec<_>>(),
                    }),
                    DataKind::Complex => serde_json::json!({
                        "log10_beta": e.log10_beta,
                        "dh_kj_per_mol": e.dh_kj_per_mol,
                        "dcp_j_per_mol_k": e.dcp_j_per_mol_k,
                        "log_k_equation": equation_json(e.log_k_equations.first().copied().flatten()),
                        "parts": e.parts,
                    }),
                    DataKind::Reagent => serde_json::json!({ "parts": e.parts }),
                    DataKind::Ion => serde_json::json!({}),
                };
                if let (Some(v), serde_json::Value::Object(extra)) = (v.as_object_mut(), fields) {
                    v.extend(extra);
                }
                v
            })
            .chain(phases.iter().map(|p| {
                let e = p.entry;
                let k_name = if e.kind == "gas" { "log10_kh" } else { "log10_k" };
                let mut v = serde_json::json!({
                    "kind": e.kind,
                    "name": e.name,
                    "synonyms": e.synonyms,
                    "formula": e.formula,
                    "summary": e.summary,
                    "dh_kj_per_mol": p.dh_kj_per_mol,
                    "dcp_j_per_mol_k": p.dcp_j_per_mol_k,
                    "log_k_equation": equation_json(p.equation),
                    "reaction": p.reaction,
                    "parts": p.parts,
                    "source": e.source,
                    "from_memory": e.from_memory,
                    "origin": e.origin,
                });
                if let Some(o) = v.as_object_mut() {
                    o.insert(k_name.into(), serde_json::json!(p.log10_k));
                }
                v
            }))
            .collect();
        write_json(out, &v)?;
        return Ok(EXIT_OK);
    }
    let w = |out: &mut dyn Write| -> io::Result<()> {
        for e in &entries {
            writeln!(out, "{:<9} {}  [{}]", e.kind.name(), e.name, e.formula)?;
            writeln!(out, "          {}", e.summary)?;
            for (k, s) in e.steps.iter().enumerate() {
                let mut line = format!("          step {}: pKa {}", k + 1, s.pka);
                if let Some(h) = s.dh_kj_per_mol {
                    line += &format!(", ΔH° {h} kJ/mol");
                }
                if let Some(c) = s.dcp_j_per_mol_k {
                    line += &format!(", ΔCp° {c} J/(mol·K)");
                }
                if let Some(q) = e.log_k_equations.get(k).copied().flatten() {
                    line += &format!(", {}", equation_text(q));
                }
                writeln!(out, "{line}")?;
            }
            if e.kind == DataKind::Complex
                && let Some(q) = e.log_k_equations.first().copied().flatten()
            {
                writeln!(out, "          {}", equation_text(q))?;
            }
            if e.forms.iter().any(|f| f.ion_size_angstrom.is_some()) {
                let sizes: Vec<String> = e
                    .forms
                    .iter()
                    .map(|f| match f.ion_size_angstrom {
                        Some(a) => format!("{} {a}", f.name),
                        None => format!("{} -", f.name),
                    })
                    .collect();
                writeln!(out, "          ion sizes (Å): {}", sizes.join(", "))?;
            } else if let Some(a) = e.ion_size_angstrom {
                writeln!(out, "          ion size {a} Å")?;
            }
            if !e.parts.is_empty() {
                writeln!(out, "          parts: {}", e.parts.join(", "))?;
            }
            write_synonyms_and_source(out, &e.synonyms, e.from_memory, &e.source)?;
        }
        for p in &phases {
            let e = p.entry;
            writeln!(out, "{:<9} {}  [{}]", e.kind, e.name, e.formula)?;
            writeln!(out, "          {}", p.reaction)?;
            let mut line = if e.kind == "gas" {
                format!("          log K_H {} (mol/(kg·bar), 25 °C)", p.log10_k)
            } else {
                format!("          log K {} (25 °C)", p.log10_k)
            };
            if let Some(h) = p.dh_kj_per_mol {
                line += &format!(", ΔH° {h} kJ/mol");
            }
            if let Some(c) = p.dcp_j_per_mol_k {
                line += &format!(", ΔCp° {c} J/(mol·K)");
            }
            writeln!(out, "{line}")?;
            if let Some(q) = p.equation {
                writeln!(out, "          {}", equation_text(q))?;
            }
            write_synonyms_and_source(out, &e.synonyms, e.from_memory, &e.source)?;
        }
        writeln!(out, "{} entries", entries.len() + phases.len())?;
        // Nothing contains the query: name the closest entry, as a misspelt name elsewhere does.
        match query
            .filter(|_| entries.is_empty() && phases.is_empty())
            .and_then(|q| cat.closest(q))
        {
            Some(e) => writeln!(out, "did you mean `{}` ({})?", e.name, e.kind.name()),
            None => Ok(()),
        }
    };
    w(out).map_err(output_failure)?;
    Ok(EXIT_OK)
}

/// A log K(T) equation as JSON: its coefficients [a, b, c, d, e] and fitted range.
fn equation_json(q: Option<protolyte::vant_hoff::LogKEquation>) -> serde_json::Value {
    match q {
        Some(q) => serde_json::json!({
            "coefficients": q.coefficients(),
            "range_celsius": [q.range().min_celsius, q.range().max_celsius],
            "applied_as": "log K(T) = log K(25 °C) + f(T) - f(298.15 K), f(T) = a + b·T + c/T + d·log10 T + e/T², T in K",
        }),
        None => serde_json::Value::Null,
    }
}

/// The `data` listing's last two lines of an entry: its synonyms, if any, and its source
/// (with a note when its numbers were entered from memory of that source).
fn write_synonyms_and_source<S: AsRef<str>>(
    out: &mut dyn Write,
    synonyms: &[S],
    from_memory: bool,
    source: &str,
) -> io::Result<()> {
    if !synonyms.is_empty() {
        let also: Vec<&str> = synonyms.iter().map(AsRef::as_ref).collect();
        writeln!(out, "          also: {}", also.join(", "))?;
    }
    let memo = if from_memory {
        " (entered from memory of the source)"
    } else {
        ""
    };
    writeln!(out, "          source: {}{memo}", source)
}

/// "log K(T) = log K(25 °C) + f(T) − f(298.15 K), f(T) = a + b·T + c/T + d·log T + e/T²
/// (0–60 °C)" with the coefficients, zero terms left out.
/// The equation as the library applies it: the change of log K from 25 °C (its value at
/// 25 °C may differ from the entry's log K by up to 0.03, a difference of units or of fits).
fn equation_text(q: protolyte::vant_hoff::LogKEquation) -> String {
    let [a, b, c, d, e] = q.coefficients();
    let mut t = format!("log K(T) = log K(25 °C) + f(T) − f(298.15 K), f(T) = {a}");
    for (v, unit) in [(b, "·T"), (c, "/T"), (d, "·log T"), (e, "/T²")] {
        if v != 0.0 {
            let sign = if v < 0.0 { '−' } else { '+' };
            t += &format!(" {sign} {}{unit}", v.abs());
        }
    }
    format!("{t} ({})", q.range())
}
