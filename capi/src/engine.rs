//! The part shared by the C library and the Python package: documents of any kind in, their
//! result documents out (as the command line writes them), a compiled recipe solved for many
//! compositions on a few threads, pH sweeps, and the error kinds both bindings report.
//!
//! This file is compiled into both crates (`capi` and, by path, `python`), so that both
//! bindings run the same code and give the same results and messages.

use std::sync::OnceLock;

use protolyte::analysis::CapacityCurve;
use protolyte::document::{self, DesignDoc, DocumentError, FitDoc, FitResult, RecipeDoc, SolveResult, TitrationDoc};
use protolyte::{Catalog, Conditions, Equilibrium, Error, Solver, System};

/// The document kinds [`run_document`] runs.
const KINDS: &str = "\"protolyte-recipe/1\", \"protolyte-titration/1\", \"protolyte-design/1\", \"protolyte-fit/1\", \"protolyte-calibration/1\", \"protolyte-measured/1\"";

/// The name a document read from memory is given in messages.
pub const DOCUMENT_NAME: &str = "<document>";

/// What kind of failure a call met.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// The text is not JSON or TOML, or a value has the wrong type.
    Syntax,
    /// A refused value, name or field, or an input over a limit.
    Input,
    /// A name that is not in the catalogue.
    UnknownName,
    /// The solver did not converge.
    NoConvergence,
    /// Another refusal by the chemistry (e.g. an ionic strength past the limit).
    Chemistry,
    /// A wrong argument from the calling language (a null pointer, a size that does not fit).
    Argument,
    /// The program failed internally (a bug).
    Internal,
}

/// A failure: its kind and a message that says what and where.
#[derive(Debug, Clone, PartialEq)]
pub struct Failure {
    /// The kind.
    pub kind: Kind,
    /// The message.
    pub message: String,
}

impl Failure {
    /// A failure of `kind` with `message`.
    pub fn new(kind: Kind, message: impl Into<String>) -> Self {
        Failure {
            kind,
            message: message.into(),
        }
    }
}

impl From<DocumentError> for Failure {
    fn from(e: DocumentError) -> Self {
        let kind = match e {
            DocumentError::Syntax { .. } => Kind::Syntax,
            _ => Kind::Input,
        };
        Failure::new(kind, e.to_string())
    }
}

impl From<Error> for Failure {
    fn from(e: Error) -> Self {
        Failure::new(kind_of(&e), e.to_string())
    }
}

/// The kind of a library error.
pub fn kind_of(e: &Error) -> Kind {
    match e {
        Error::NoConvergence { .. } => Kind::NoConvergence,
        Error::UnknownName { .. } => Kind::UnknownName,
        Error::IonicStrengthBeyondLimit { .. } => Kind::Chemistry,
        Error::OutOfDomain { what, .. } if what.contains("pH") => Kind::Chemistry,
        _ => Kind::Input,
    }
}

/// A library error raised while solving a document: a refusal of the chemistry keeps its
/// kind, and the message is prefixed by the document's name.
fn solve_failure(e: Error) -> Failure {
    Failure::new(kind_of(&e), format!("{DOCUMENT_NAME}: {e}"))
}

/// The built-in catalogue, read once.
pub fn catalog() -> &'static Catalog {
    static CATALOG: OnceLock<Catalog> = OnceLock::new();
    CATALOG.get_or_init(Catalog::builtin)
}

/// Of `labels` (species names as a result shows them, among other labels), the one `name`
/// names: the same text, else the first that `name` spells in a notation the library used
/// before (the rule of every species lookup, [`protolyte::species_name_eq`]: "CO32-" names
/// "CO3^2-", "CaHCO3^+" names "CaHCO3+").
pub fn species_label<'a>(labels: &'a [String], name: &str) -> Option<&'a str> {
    (labels.iter().find(|l| *l == name))
        .or_else(|| labels.iter().find(|l| protolyte::species_name_eq(l, name)))
        .map(String::as_str)
}

/// Reads a document (JSON or TOML) whose `format` names its kind.
fn format_of(text: &str) -> Result<String, Failure> {
    let value: serde_json::Value = document::parse(text, DOCUMENT_NAME)?;
    match value.get("format") {
        Some(serde_json::Value::String(s)) => Ok(s.clone()),
        Some(_) => Err(Failure::new(
            Kind::Input,
            format!("{DOCUMENT_NAME}: field `format`: must be a string such as \"protolyte-recipe/1\""),
        )),
        None if value.is_object() => Err(Failure::new(
            Kind::Input,
            format!("{DOCUMENT_NAME}: field `format`: missing; a document names its kind, one of {KINDS}"),
        )),
        None => Err(Failure::new(
            Kind::Syntax,
            format!("{DOCUMENT_NAME}: a document is a JSON object or a TOML table"),
        )),
    }
}

/// Runs any document (a recipe, titration, design, fit, calibration or measured-titration
/// request, told by its `format`) and
/// returns its result document as JSON: the same result the command line writes with
/// `--json`.
pub fn run_document(text: &str) -> Result<String, Failure> {
    let format = format_of(text)?;
    let value = match format.as_str() {
        document::RECIPE_FORMAT => {
            let doc: RecipeDoc = document::parse(text, DOCUMENT_NAME)?;
            let eq = solve_recipe_doc(&doc)?.1;
            to_json(&SolveResult::from_equilibrium(&eq).named(doc.name.clone()))
        }
        document::TITRATION_FORMAT => {
            let doc: TitrationDoc = document::parse(text, DOCUMENT_NAME)?;
            doc.check_format(true).map_err(|e| e.in_file(DOCUMENT_NAME))?;
            to_json(
                &document::run_titration(&doc, catalog())
                    .map_err(request_failure)?
                    .result,
            )
        }
        document::DESIGN_FORMAT => {
            let doc: DesignDoc = document::parse(text, DOCUMENT_NAME)?;
            doc.check_format(true).map_err(|e| e.in_file(DOCUMENT_NAME))?;
            to_json(&document::run_design(&doc, catalog()).map_err(request_failure)?)
        }
        document::FIT_FORMAT => {
            let doc: FitDoc = document::parse(text, DOCUMENT_NAME)?;
            doc.check_format(true).map_err(|e| e.in_file(DOCUMENT_NAME))?;
            let f = doc.to_fit(catalog()).map_err(|e| e.in_file(DOCUMENT_NAME))?;
            let report = f.run().map_err(solve_failure)?;
            let mut result = FitResult::from(&report);
            result.name = doc.name.clone();
            to_json(&result)
        }
        document::CALIBRATION_FORMAT => {
            let doc: document::CalibrationDoc = document::parse(text, DOCUMENT_NAME)?;
            doc.check_format(true).map_err(|e| e.in_file(DOCUMENT_NAME))?;
            let cal = doc.to_calibration().map_err(|e| e.in_file(DOCUMENT_NAME))?;
            let mut r = document::CalibrationResult::from(&cal);
            r.name = doc.name.clone();
            to_json(&r)
        }
        document::MEASURED_FORMAT => {
            let doc: document::MeasuredDoc = document::parse(text, DOCUMENT_NAME)?;
            doc.check_format(true).map_err(|e| e.in_file(DOCUMENT_NAME))?;
            // A document from memory has no folder: its data file is read from the working
            // directory (or an absolute path).
            let path = std::path::Path::new(&doc.data.file);
            let data = std::fs::read_to_string(path).map_err(|e| {
                Failure::new(
                    Kind::Input,
                    format!("{}: cannot read the data file: {e}", path.display()),
                )
            })?;
            let r = doc.analyze(&data, catalog()).map_err(|e| match e {
                DocumentError::Read { .. } => Failure::from(e.in_file(&path.display().to_string())),
                other => Failure::from(other.in_file(DOCUMENT_NAME)),
            })?;
            to_json(&r)
        }
        other => Err(Failure::new(
            Kind::Input,
            format!(
                "{DOCUMENT_NAME}: field `format`: unknown document kind {other:?}; expected one of {}",
                KINDS
            ),
        )),
    }?;
    Ok(value)
}

fn to_json<T: serde::Serialize>(v: &T) -> Result<String, Failure> {
    serde_json::to_string(v).map_err(|e| Failure::new(Kind::Internal, format!("result could not be written: {e}")))
}

/// A titration or design request's failure: a refused document names the document, a
/// refusal of the chemistry keeps its kind.
fn request_failure(e: document::RequestError) -> Failure {
    match e {
        document::RequestError::Input(d) => Failure::from(d.in_file(DOCUMENT_NAME)),
        document::RequestError::Chemistry(c) => solve_failure(c),
    }
}

/// Parses a recipe document (the `format` may be left out).
pub fn recipe_doc(text: &str) -> Result<RecipeDoc, Failure> {
    let doc: RecipeDoc = document::parse(text, DOCUMENT_NAME)?;
    doc.check_format(false).map_err(|e| e.in_file(DOCUMENT_NAME))?;
    Ok(doc)
}

/// Compiles and solves a recipe document.
pub fn solve_recipe_doc(doc: &RecipeDoc) -> Result<(System, Equilibrium), Failure> {
    let (recipe, conditions) = doc.to_recipe(catalog()).map_err(|e| e.in_file(DOCUMENT_NAME))?;
    let system = recipe.compile(&conditions).map_err(solve_failure)?;
    let eq = system.solve().map_err(solve_failure)?;
    Ok((system, eq))
}

/// The buffer capacity curve of a recipe document.
pub fn capacity_curve(doc: &RecipeDoc) -> Result<CapacityCurve, Failure> {
    let (recipe, conditions) = doc.to_recipe(catalog()).map_err(|e| e.in_file(DOCUMENT_NAME))?;
    CapacityCurve::new(&recipe, &conditions).map_err(solve_failure)
}

/// The outcome of one row of a many-composition solve.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// pH (under the recipe's pH convention).
    pub ph: f64,
    /// −log₁₀ m(H⁺).
    pub p_h_molal: f64,
    /// Ionic strength, mol/kg.
    pub ionic_strength_molal: f64,
    /// Largest relative residual of every equation solved.
    pub max_residual: f64,
    /// Number of warnings.
    pub warnings: u32,
    /// Every species' molality, in the system's species order (only when asked for).
    pub species_molal: Vec<f64>,
}

/// A recipe compiled once, solved for many compositions: the reagents and conditions of a
/// recipe document, with the amounts given per row.
#[derive(Clone)]
pub struct Composition {
    system: System,
    reagent_names: Vec<String>,
    /// (component, count) contributions of one unit of each reagent line.
    parts: Vec<Vec<(usize, f64)>>,
    /// The recipe's own amounts, mol/kg per component (what `solve` of the document gives).
    solver: Solver,
}

impl Composition {
    /// Compiles the reagents, complexes and conditions of `doc` (its amounts are not used).
    pub fn new(doc: &RecipeDoc) -> Result<Self, Failure> {
        let (recipe, conditions): (protolyte::Recipe, Conditions) =
            doc.to_recipe(catalog()).map_err(|e| e.in_file(DOCUMENT_NAME))?;
        let system = recipe.compile(&conditions).map_err(solve_failure)?;
        let parts = recipe
            .entries()
            .iter()
            .map(|e| system.component_counts(&e.reagent))
            .collect();
        Ok(Composition {
            reagent_names: recipe.entries().iter().map(|e| e.reagent.name().to_string()).collect(),
            system,
            parts,
            solver: Solver::default(),
        })
    }

    /// The compiled system (its components, species and conditions).
    pub fn system(&self) -> &System {
        &self.system
    }

    /// The reagent names, in the order of the amount columns.
    pub fn reagent_names(&self) -> &[String] {
        &self.reagent_names
    }

    /// The number of total columns: every component but H⁺ (component 0).
    pub fn total_columns(&self) -> usize {
        self.system.components().len() - 1
    }

    /// Component totals (mol/kg, every component but H⁺) from one row of reagent amounts in
    /// mol/L; the same sums as compiling the recipe.
    pub fn totals_from_amounts(&self, amounts_mol_per_l: &[f64], totals: &mut [f64]) -> Result<(), Failure> {
        totals.iter_mut().for_each(|t| *t = 0.0);
        let rho = self.system.water_density_kg_per_l();
        for (i, &a) in amounts_mol_per_l.iter().enumerate() {
            let name = &self.reagent_names[i];
            protolyte::Amount::molar(a)
                .validate(&format!("amount of {name} (column {i})"))
                .map_err(Failure::from)?;
            let m = a / rho;
            for &(c, n) in &self.parts[i] {
                totals[c - 1] += m * n;
            }
        }
        Ok(())
    }

    /// Solves `rows` compositions on up to `threads` threads (0: one per core; the calling
    /// thread when 1). `input` is row-major, `columns` values a row: reagent amounts in mol/L
    /// (`amounts = true`, one column per reagent line) or component totals in mol/kg (every
    /// component but H⁺). Each row gives a [`Row`] or its failure; the rows are independent
    /// (a failed row does not stop the others). Each thread solves a contiguous range of rows,
    /// each solve starting from the previous one's result.
    pub fn solve_many(
        &self,
        input: &[f64],
        amounts: bool,
        threads: usize,
        with_species: bool,
    ) -> Result<Vec<Result<Row, Failure>>, Failure> {
        let columns = if amounts {
            self.reagent_names.len()
        } else {
            self.total_columns()
        };
        if columns == 0 {
            if !input.is_empty() {
                return Err(Failure::new(Kind::Argument, "the recipe has no columns to give"));
            }
            return Ok(Vec::new());
        }
        if !input.len().is_multiple_of(columns) {
            return Err(Failure::new(
                Kind::Argument,
                format!(
                    "{} values do not make whole rows of {columns} {}",
                    input.len(),
                    if amounts { "reagent amounts" } else { "component totals" }
                ),
            ));
        }
        let rows = input.len() / columns;
        let threads = match threads {
            0 => std::thread::available_parallelism().map(|n| n.get()).unwrap_or(1),
            n => n,
        }
        .clamp(1, rows.max(1));
        let per = rows.div_ceil(threads).max(1);
        if threads == 1 {
            return Ok(self.solve_range(input, columns, amounts, with_species));
        }
        let parts: Vec<Vec<Result<Row, Failure>>> = std::thread::scope(|s| {
            let handles: Vec<_> = input
                .chunks(per * columns)
                .map(|chunk| {
                    s.spawn(move || {
                        std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                            self.solve_range(chunk, columns, amounts, with_species)
                        }))
                        .unwrap_or_else(|_| {
                            (0..chunk.len() / columns)
                                .map(|_| Err(Failure::new(Kind::Internal, "the program failed on this row (a bug)")))
                                .collect()
                        })
                    })
                })
                .collect();
            handles
                .into_iter()
                .map(|h| {
                    h.join()
                        .unwrap_or_else(|_| vec![Err(Failure::new(Kind::Internal, "a worker thread failed (a bug)"))])
                })
                .collect()
        });
        let out: Vec<Result<Row, Failure>> = parts.into_iter().flatten().collect();
        if out.len() != rows {
            return Err(Failure::new(Kind::Internal, "a worker lost rows (a bug)"));
        }
        Ok(out)
    }

    fn solve_range(
        &self,
        input: &[f64],
        columns: usize,
        amounts: bool,
        with_species: bool,
    ) -> Vec<Result<Row, Failure>> {
        let mut sys = self.system.clone();
        let mut totals = vec![0.0; self.total_columns()];
        let mut warm: Option<Equilibrium> = None;
        input
            .chunks(columns)
            .map(|row| {
                if amounts {
                    self.totals_from_amounts(row, &mut totals)?;
                } else {
                    totals.copy_from_slice(row);
                }
                for (c, &t) in totals.iter().enumerate() {
                    sys.set_total_molal(c + 1, t).map_err(|e| {
                        let name = &self.system.components()[c + 1].name;
                        Failure::new(kind_of(&e), format!("total of {name}: {e}"))
                    })?;
                }
                let eq = match &warm {
                    Some(w) => self.solver.solve_from(&sys, w),
                    None => self.solver.solve(&sys),
                }
                .map_err(Failure::from)?;
                let r = Row {
                    ph: eq.ph(),
                    p_h_molal: eq.p_h_molal(),
                    ionic_strength_molal: eq.ionic_strength_molal(),
                    max_residual: eq.residuals().max_relative(),
                    warnings: u32::try_from(eq.warnings().len()).unwrap_or(u32::MAX),
                    species_molal: if with_species {
                        eq.species().iter().map(|s| s.molal).collect()
                    } else {
                        Vec::new()
                    },
                };
                warm = Some(eq);
                Ok(r)
            })
            .collect()
    }
}

/// Buffer capacity and the strong base (mol/kg; negative: strong acid) that bring the
/// solution to each pH, on up to `threads` threads.
pub fn ph_sweep(curve: &CapacityCurve, ph: &[f64], threads: usize) -> Vec<Result<(f64, f64), Failure>> {
    let threads = match threads {
        0 => std::thread::available_parallelism().map(|n| n.get()).unwrap_or(1),
        n => n,
    }
    .clamp(1, ph.len().max(1));
    let one = |p: f64| {
        curve
            .at_ph(p)
            .map(|c| (c.strong_base_molal, c.beta_molal))
            .map_err(Failure::from)
    };
    if threads == 1 {
        return ph.iter().map(|&p| one(p)).collect();
    }
    let per = ph.len().div_ceil(threads).max(1);
    std::thread::scope(|s| {
        let handles: Vec<_> = ph
            .chunks(per)
            .map(|chunk| {
                s.spawn(move || {
                    std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                        chunk.iter().map(|&p| one(p)).collect::<Vec<_>>()
                    }))
                    .unwrap_or_else(|_| {
                        chunk
                            .iter()
                            .map(|_| Err(Failure::new(Kind::Internal, "the program failed on this pH (a bug)")))
                            .collect()
                    })
                })
            })
            .collect();
        handles
            .into_iter()
            .flat_map(|h| {
                h.join()
                    .unwrap_or_else(|_| vec![Err(Failure::new(Kind::Internal, "a worker thread failed (a bug)"))])
            })
            .collect()
    })
}
