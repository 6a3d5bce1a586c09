//! One description of the calculations the bindings expose.
//!
//! Each entry of [`CALCULATIONS`] names a calculation, its scalar arguments with their units,
//! its options (a serde type with defaults, given as a JSON object whose keys are checked) and
//! how its result reads as a [`Record`] of named fields with units. The C ABI, the Python
//! package and the command-line tool run calculations through [`Plan`] and read [`Record`]s
//! and [`Columns`], so a new calculation is described once here and reaches every binding
//! without hand-written wrappers.
//!
//! ```
//! use tieline::calc::{Plan, Workspace};
//! use tieline::model::{CubicEos, CubicKind, Model};
//! use tieline::substance::DataBank;
//!
//! let bank = DataBank::embedded();
//! let model = Model::from(CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "propane"])?)?);
//! let plan = Plan::new("flash_pt", Some(r#"{"tolerance": 1e-12}"#))?;
//! let mut ws = Workspace::default();
//! let r = plan.run(&mut ws, &model, &[250.0, 2.0e6], &[0.6, 0.4])?;
//! assert_eq!(r.get_number("num_phases")?, 2.0);
//! assert!(r.get_number("vapor_fraction")? > 0.0);
//! # Ok::<(), tieline::Error>(())
//! ```

mod record;
mod sweep;

pub use record::{Column, ColumnData, Columns, Field, Record, Value};
pub use sweep::{NEAR_ARGUMENT, near_point, near_tolerance, run_points};

use crate::equilibrium::azeotrope::{Azeotrope, AzeotropeOptions, azeotrope_at_pressure, azeotrope_at_temperature};
use crate::equilibrium::nphase::{MultiphaseContext, MultiphaseOptions};
use crate::equilibrium::reaction::{
    ReactionContext, ReactionOptions, ReactionResult, ReactionSystem, ReactivePhaseResult,
};
use crate::equilibrium::{
    CriticalOptions, EnvelopeOptions, EnvelopePoint, FlashContext, FlashOptions, FlashResult, FlashSensitivities,
    PhaseEnvelope, SensitivityWork, StateFlashContext, StateFlashOptions, StateFlashResult, StateSpec, critical_point,
    phase_envelope,
};
use crate::error::{Error, Result};
use crate::model::{ExcessGibbs, FluidModel, Model};
use serde::Serialize;
use serde::de::DeserializeOwned;
use serde_json::Value as Json;

/// A scalar argument of a calculation (besides the feed amounts).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Argument {
    /// Its name (snake_case).
    pub name: &'static str,
    /// Its unit (SI).
    pub unit: &'static str,
    /// What it is.
    pub doc: &'static str,
}

/// A calculation: its name, arguments, options and how to run it.
pub struct Calculation {
    /// Its name, e.g. `"flash_pt"`.
    pub name: &'static str,
    /// One line on what it computes.
    pub summary: &'static str,
    /// The scalar arguments, in call order; the feed amounts (mol, one per component) follow.
    pub arguments: &'static [Argument],
    /// The option (a list of names) whose entries extend the feed beyond the model's
    /// components, if any: the feed then holds nc + its length amounts.
    pub feed_extension: Option<&'static str>,
    defaults: fn() -> Json,
    parse: fn(&Json) -> Result<Options>,
    run: RunFn,
}

/// How a calculation runs: its name, options, warm-start state, model, scalar arguments, feed.
type RunFn = fn(&'static str, &Options, &mut Workspace, &Model, &[f64], &[f64]) -> Result<Record>;

impl std::fmt::Debug for Calculation {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Calculation")
            .field("name", &self.name)
            .field("arguments", &self.arguments)
            .finish()
    }
}

impl Calculation {
    /// The default options as a JSON object (every key a caller may set).
    pub fn default_options(&self) -> Json {
        (self.defaults)()
    }
}

/// Parsed options of one calculation.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum Options {
    /// PT-flash options.
    Flash(FlashOptions),
    /// Phase-envelope options.
    Envelope(EnvelopeOptions),
    /// Critical-point options.
    Critical(CriticalOptions),
    /// State-function flash options.
    State(StateFlashOptions),
    /// Reaction-equilibrium options.
    Reaction(ReactionCalcOptions),
    /// A calculation without options.
    Plain(NoOptions),
    /// Multiphase-flash options.
    Multiphase(MultiphaseOptions),
    /// Azeotrope-search options.
    Azeotrope(AzeotropeOptions),
}

/// The options of a calculation that takes none: the empty JSON object.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NoOptions {}

/// Options of the reaction-equilibrium calculations: the species besides the model's
/// components, the gas model, and the minimiser's options.
#[derive(Debug, Clone, PartialEq, Default, Serialize, serde::Deserialize)]
#[serde(default)]
pub struct ReactionCalcOptions {
    /// Species that may form besides the model's components (names or aliases in the species
    /// data, e.g. "OH", "NO", "graphite", "liquid water"). The feed lists the model's
    /// components first, then these, in order (mol).
    pub extra_species: Vec<String>,
    /// Fugacity coefficients of the gas from the model (a real gas; the extra species must
    /// then all be condensed) rather than an ideal gas.
    pub real_gas: bool,
    /// Options of the minimiser.
    #[serde(flatten)]
    pub solver: ReactionOptions,
}

/// Reusable solver state for running calculations one after another on one thread: warm
/// starts carry from one call to the next of the same calculation (as in a simulator's time
/// loop or along a sweep). Create one per thread.
#[derive(Debug, Default)]
pub struct Workspace {
    flash: FlashContext,
    sensitivity: SensitivityWork,
    derivatives: FlashSensitivities,
    state: StateFlashContext,
    /// The reaction system of the last reaction calculation, keyed by its species, and its
    /// warm-start context.
    reaction: Option<(Vec<String>, ReactionSystem, ReactionContext)>,
    /// Excess-property storage of the activity-coefficient calculations.
    excess: crate::model::ExcessDerivs,
    /// Warm-start state of the multiphase flash.
    multiphase: MultiphaseContext,
}

impl Workspace {
    /// Forgets every previous solution, so the next call starts cold.
    pub fn reset(&mut self) {
        self.flash.reset();
        self.state.reset();
        self.multiphase.reset();
        if let Some((_, _, c)) = &mut self.reaction {
            c.reset();
        }
    }
}

/// A calculation with its options parsed and checked, ready to run many times.
#[derive(Debug, Clone)]
pub struct Plan {
    calc: &'static Calculation,
    options: Options,
}

impl Plan {
    /// The calculation `name` with options from a JSON object (`None` or `"{}"` for the
    /// defaults). Unknown calculation names and option keys are [`Error::InvalidInput`]s that
    /// list the known ones; ill-typed or out-of-range values likewise.
    pub fn new(name: &str, options_json: Option<&str>) -> Result<Plan> {
        let value = match options_json.map(str::trim) {
            None | Some("") => None,
            Some(text) => Some(
                serde_json::from_str::<Json>(text)
                    .map_err(|e| Error::invalid("options", format!("not valid JSON (a JSON object of option names and values; NaN and infinities are not JSON): {e}")))?,
            ),
        };
        Plan::from_value(name, value.as_ref())
    }

    /// As [`Plan::new`], with the options already parsed into a JSON value.
    pub fn from_value(name: &str, options: Option<&Json>) -> Result<Plan> {
        let calc = find(name)?;
        let empty = Json::Object(Default::default());
        let given = options.unwrap_or(&empty);
        if !given.is_object() {
            return Err(Error::invalid(
                "options",
                "a JSON object of option names and values is required",
            ));
        }
        record::check_option_keys(given, &calc.default_options(), "")?;
        let options = (calc.parse)(given)?;
        Ok(Plan { calc, options })
    }

    /// The calculation.
    pub fn calculation(&self) -> &'static Calculation {
        self.calc
    }

    /// The parsed options.
    pub fn options(&self) -> &Options {
        &self.options
    }

    /// Runs the calculation on `model` with its scalar `args` (in the order and units of
    /// [`Calculation::arguments`]) and the feed amounts `feed` (mol), using and updating the
    /// warm-start state in `ws`.
    pub fn run(&self, ws: &mut Workspace, model: &Model, args: &[f64], feed: &[f64]) -> Result<Record> {
        let want = self.calc.arguments;
        if args.len() != want.len() {
            let names: Vec<String> = want.iter().map(|a| format!("{} ({})", a.name, a.unit)).collect();
            return Err(Error::invalid(
                "arguments",
                format!(
                    "{} values given; {} takes {}: {}",
                    args.len(),
                    self.calc.name,
                    want.len(),
                    names.join(", ")
                ),
            ));
        }
        let rec = (self.calc.run)(self.calc.name, &self.options, ws, model, args, feed)?;
        rec.check_finite(feed)?;
        Ok(rec)
    }
}

/// One calculation written out as data (e.g. a test vector shared by the Rust, C and Python
/// suites, or a job in a file): which calculation, on which model, with which arguments,
/// feed and options.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Case {
    /// The calculation's name.
    pub calculation: String,
    /// The model, in the description format of [`crate::model::ModelDescription`] (components
    /// looked up in the embedded data bank) or a full model.
    pub model: Json,
    /// The scalar arguments, in the calculation's order and units.
    #[serde(default)]
    pub args: Vec<f64>,
    /// Feed amounts, mol.
    pub feed: Vec<f64>,
    /// Options (a JSON object; absent for the defaults).
    #[serde(default)]
    pub options: Option<Json>,
}

impl Case {
    /// Builds the model and runs the calculation cold.
    pub fn run(&self) -> Result<Record> {
        let model = crate::model::model_from_json(&self.model.to_string(), crate::substance::DataBank::embedded())?;
        let plan = Plan::from_value(&self.calculation, self.options.as_ref())?;
        plan.run(&mut Workspace::default(), &model, &self.args, &self.feed)
    }

    /// The outcome as JSON: the record's JSON ([`Record::to_json`]) or `{"error": <kind>}`.
    pub fn outcome_json(&self) -> Json {
        match self.run() {
            Ok(r) => r.to_json(),
            Err(e) => serde_json::json!({"error": format!("{:?}", e.kind())}),
        }
    }
}

/// Runs every case of a vectors file (`{"cases": [{"id": ..., <Case fields>}, ...]}`, as
/// tests/vectors/calculations.json) and returns `{id: outcome}` with [`Case::outcome_json`]:
/// the reference that the C and Python suites compare their own records with.
pub fn reference_outcomes(vectors_json: &str) -> Result<Json> {
    let v: Json = serde_json::from_str(vectors_json).map_err(|e| Error::Data(format!("vectors file: {e}")))?;
    let cases = v["cases"]
        .as_array()
        .ok_or_else(|| Error::Data("vectors file: a \"cases\" array is required".into()))?;
    let mut out = serde_json::Map::new();
    for c in cases {
        let id = c["id"]
            .as_str()
            .ok_or_else(|| Error::Data("vectors file: a case without an \"id\"".into()))?;
        let case: Case =
            serde_json::from_value(c.clone()).map_err(|e| Error::Data(format!("vectors file, case {id}: {e}")))?;
        out.insert(id.to_string(), case.outcome_json());
    }
    Ok(Json::Object(out))
}

/// The calculation called `name`, or an [`Error::InvalidInput`] listing those there are.
pub fn find(name: &str) -> Result<&'static Calculation> {
    CALCULATIONS.iter().find(|c| c.name == name).ok_or_else(|| {
        let names: Vec<&str> = CALCULATIONS.iter().map(|c| c.name).collect();
        Error::invalid(
            "calculation",
            format!(
                "'{name}' is not a calculation; the calculations are: {}",
                names.join(", ")
            ),
        )
    })
}

fn defaults_of<T: Serialize + Default>() -> Json {
    serde_json::to_value(T::default()).unwrap_or(Json::Null)
}

fn parse_as<T: DeserializeOwned>(v: &Json) -> Result<T> {
    serde_json::from_value(v.clone()).map_err(|e| Error::invalid("options", e.to_string()))
}

const T_ARG: Argument = Argument {
    name: "temperature",
    unit: "K",
    doc: "temperature",
};
const P_ARG: Argument = Argument {
    name: "pressure",
    unit: "Pa",
    doc: "pressure",
};
const H_ARG: Argument = Argument {
    name: "enthalpy",
    unit: "J/mol",
    doc: "molar enthalpy of the feed (the library's reference state: elements at 298.15 K, 1e5 Pa)",
};
const S_ARG: Argument = Argument {
    name: "entropy",
    unit: "J/(mol K)",
    doc: "molar entropy of the feed",
};
const V_ARG: Argument = Argument {
    name: "volume",
    unit: "m3/mol",
    doc: "volume per mol of feed",
};
const U_ARG: Argument = Argument {
    name: "internal_energy",
    unit: "J/mol",
    doc: "molar internal energy of the feed",
};

/// A reaction equilibrium (TP, HP or SP) from the arguments of its calculation.
fn reaction(name: &'static str, o: &Options, ws: &mut Workspace, m: &Model, a: &[f64], feed: &[f64]) -> Result<Record> {
    let Options::Reaction(o) = o else {
        return Err(wrong_options("reaction-equilibrium"));
    };
    let nc = m.num_components();
    // The species: the model's components, then the extra ones. The system of the last call
    // is reused (with its warm start) when they are the same, compared without allocating.
    let species = || {
        (0..nc)
            .map(|i| m.component_name(i))
            .chain(o.extra_species.iter().map(String::as_str))
    };
    let same = matches!(&ws.reaction, Some((key, _, _))
        if key.len() == nc + o.extra_species.len() && key.iter().map(String::as_str).eq(species()));
    if !same {
        let names: Vec<String> = species().map(str::to_string).collect();
        let sys = ReactionSystem::from_names(&names)?;
        let ctx = ReactionContext::new(&sys);
        ws.reaction = Some((names, sys, ctx));
    }
    let Some((_, sys, ctx)) = &mut ws.reaction else {
        return Err(Error::invalid("species", "no reaction system"));
    };
    let gas: Option<&dyn FluidModel> = if o.real_gas { Some(m) } else { None };
    if name == "reaction_tp_fluid_phases" {
        let r = ctx.equilibrate_tp_fluid_phases(sys, m, a[0], a[1], feed, &o.solver)?;
        let mut rec = Record::new(name);
        reactive_phase_fields(&mut rec, sys, &r);
        return Ok(rec);
    }
    let r = match name {
        "reaction_tp" => ctx.equilibrate_tp(sys, gas, a[0], a[1], feed, &o.solver)?,
        "reaction_hp" => ctx.equilibrate_hp(sys, gas, a[0], a[1], feed, &o.solver)?,
        "reaction_sp" => ctx.equilibrate_sp(sys, gas, a[0], a[1], feed, &o.solver)?,
        "reaction_tv" => ctx.equilibrate_tv(sys, gas, a[0], a[1], feed, &o.solver)?,
        _ => ctx.equilibrate_uv(sys, gas, a[0], a[1], feed, &o.solver)?,
    };
    let mut rec = Record::new(name);
    reaction_fields(&mut rec, sys, &r);
    Ok(rec)
}

/// The fields of a reaction equilibrium.
fn reaction_fields(rec: &mut Record, sys: &ReactionSystem, r: &ReactionResult) {
    let c = &r.certificate;
    rec.number("temperature", "K", r.temperature)
        .number("pressure", "Pa", r.pressure)
        .texts("species", sys.species().iter().map(|s| s.name.clone()).collect())
        .numbers("amounts", "mol", r.amounts.clone())
        .numbers("gas_mole_fractions", "1", r.mole_fractions.clone())
        .number("gas_amount", "mol", r.gas_amount)
        .texts("condensed", r.condensed.clone())
        .texts("elements", sys.elements().to_vec())
        .numbers("element_potentials", "J/mol", r.element_potentials.clone())
        .number("enthalpy", "J", r.enthalpy)
        .number("internal_energy", "J", r.internal_energy)
        .number("entropy", "J/K", r.entropy)
        .number("gibbs_energy", "J", r.gibbs)
        .number("cp_equilibrium", "J/K", r.cp_equilibrium)
        // NaN where c_v is not defined (no gas, so no dV/dp): absent, not a number.
        .maybe("cv_equilibrium", "J/K", Some(r.cv_equilibrium).filter(|v| !v.is_nan()))
        .number("cp_frozen", "J/K", r.cp_frozen)
        .number("volume", "m3", r.volume)
        .count("iterations", r.iterations)
        .count("temperature_iterations", r.temperature_iterations)
        .count("pressure_iterations", r.pressure_iterations)
        .maybe("certificate", "1", c.min_absent)
        .number("element_residual", "1", c.element_residual)
        .texts(
            "excluded_species",
            c.excluded.iter().map(|e| format!("{}: {}", e.name, e.reason)).collect(),
        );
}

/// The fields of a reaction equilibrium split between fluid phases.
fn reactive_phase_fields(rec: &mut Record, sys: &ReactionSystem, r: &ReactivePhaseResult) {
    rec.number("temperature", "K", r.temperature)
        .number("pressure", "Pa", r.pressure)
        .texts("species", sys.species().iter().map(|s| s.name.clone()).collect())
        .count("num_phases", r.phases.len())
        .texts("phase_kinds", r.phases.iter().map(|p| p.kind.to_string()).collect())
        .numbers("phase_amounts", "mol", r.phases.iter().map(|p| p.amount).collect())
        .table(
            "compositions",
            "1",
            r.phases.iter().map(|p| p.mole_fractions.clone()).collect(),
        )
        .numbers(
            "molar_volumes",
            "m3/mol",
            r.phases.iter().map(|p| p.molar_volume).collect(),
        )
        .numbers("amounts", "mol", r.amounts.clone())
        .texts("elements", sys.elements().to_vec())
        .numbers("element_potentials", "J/mol", r.element_potentials.clone())
        .number("gibbs_energy", "J", r.gibbs)
        .number("one_phase_min_tpd", "1", r.one_phase_min_tpd)
        .number("certificate", "1", r.min_tpd)
        .flag("stable", r.stable)
        .number("element_residual", "1", r.element_residual)
        .count("iterations", r.iterations)
        .texts(
            "excluded_species",
            r.excluded.iter().map(|e| format!("{}: {}", e.name, e.reason)).collect(),
        );
}

/// A state-function flash from the arguments of its calculation.
fn state_flash(
    name: &'static str,
    o: &Options,
    ws: &mut Workspace,
    m: &Model,
    a: &[f64],
    feed: &[f64],
) -> Result<Record> {
    let Options::State(o) = o else {
        return Err(wrong_options("state-function flash"));
    };
    let spec = match name {
        "flash_ph" => StateSpec::PressureEnthalpy {
            pressure: a[0],
            enthalpy: a[1],
        },
        "flash_ps" => StateSpec::PressureEntropy {
            pressure: a[0],
            entropy: a[1],
        },
        "flash_tv" => StateSpec::TemperatureVolume {
            temperature: a[0],
            volume: a[1],
        },
        _ => StateSpec::EnergyVolume {
            internal_energy: a[0],
            volume: a[1],
        },
    };
    let r = ws.state.flash(m, &spec, feed, o)?;
    let mut rec = Record::new(name);
    flash_fields(&mut rec, m, &r.flash);
    rec.count("outer_iterations", r.iterations)
        .count("pt_flashes", r.pt_flashes)
        .number("spec_residual", "1", r.residual);
    state_derivative_fields(&mut rec, &spec, m, r, &mut ws.sensitivity, &mut ws.derivatives);
    Ok(rec)
}

/// The derivatives of the solved state (T, p) with respect to the two specified quantities,
/// from the sensitivities of the converged flash: the inverse of the Jacobian of the
/// specified pair with respect to (T, p). Absent (with `derivatives_error`) where the
/// equilibrium has no derivatives (a pure substance split between two phases, a critical
/// point).
fn state_derivative_fields(
    rec: &mut Record,
    spec: &StateSpec,
    m: &Model,
    r: &StateFlashResult,
    work: &mut SensitivityWork,
    s: &mut FlashSensitivities,
) {
    let names: [(&'static str, &'static str); 4] = match spec {
        StateSpec::PressureEnthalpy { .. } => [
            ("d_temperature_d_pressure", "K/Pa"),
            ("d_temperature_d_enthalpy", "K mol/J"),
            ("", ""),
            ("", ""),
        ],
        StateSpec::PressureEntropy { .. } => [
            ("d_temperature_d_pressure", "K/Pa"),
            ("d_temperature_d_entropy", "K2 mol/J"),
            ("", ""),
            ("", ""),
        ],
        StateSpec::TemperatureVolume { .. } => [
            ("", ""),
            ("", ""),
            ("d_pressure_d_temperature", "Pa/K"),
            ("d_pressure_d_volume", "Pa mol/m3"),
        ],
        StateSpec::EnergyVolume { .. } => [
            ("d_temperature_d_internal_energy", "K mol/J"),
            ("d_temperature_d_volume", "K mol/m3"),
            ("d_pressure_d_internal_energy", "Pa mol/J"),
            ("d_pressure_d_volume", "Pa mol/m3"),
        ],
    };
    let jac = work.compute(m, &r.flash, s).map(|_| {
        // Per mol of feed: rows (spec1, spec2), columns (T, p).
        let n = s.total_amount;
        let (t, p) = (&s.temperature, &s.pressure);
        let pr = r.flash.pressure;
        let v = s.total_volume;
        match spec {
            StateSpec::PressureEnthalpy { .. } => [[0.0, 1.0], [t.enthalpy / n, p.enthalpy / n]],
            StateSpec::PressureEntropy { .. } => [[0.0, 1.0], [t.entropy / n, p.entropy / n]],
            StateSpec::TemperatureVolume { .. } => [[1.0, 0.0], [t.volume / n, p.volume / n]],
            StateSpec::EnergyVolume { .. } => [
                [(t.enthalpy - pr * t.volume) / n, (p.enthalpy - pr * p.volume - v) / n],
                [t.volume / n, p.volume / n],
            ],
        }
    });
    // Inverse of [[a, b], [c, d]] (d(spec)/d(T, p)) gives d(T, p)/d(spec).
    let inv = jac.and_then(|[[a, b], [c, d]]| {
        let det = a * d - b * c;
        if det.is_finite() && det != 0.0 {
            Ok([[d / det, -b / det], [-c / det, a / det]])
        } else {
            Err(Error::NoSolution(
                "the specification does not determine T and p locally".into(),
            ))
        }
    });
    let values = inv.as_ref().ok().map(|m| [m[0][0], m[0][1], m[1][0], m[1][1]]);
    for (k, (name, unit)) in names.iter().enumerate() {
        if !name.is_empty() {
            rec.maybe(name, unit, values.map(|v| v[k]));
        }
    }
    if let Err(e) = inv {
        rec.text("derivatives_error", e.to_string());
    }
}

/// A state-function flash (PH, PS, TV, UV): [`StateFlashOptions`], solved by [`state_flash`].
const fn state_calculation(name: &'static str, summary: &'static str, arguments: &'static [Argument]) -> Calculation {
    Calculation {
        name,
        summary,
        arguments,
        feed_extension: None,
        defaults: defaults_of::<StateFlashOptions>,
        parse: |v| Ok(Options::State(parse_as(v)?)),
        run: state_flash,
    }
}

/// An azeotrope at given pressure or temperature (by `name`): [`AzeotropeOptions`], solved by
/// [`azeotrope`].
const fn azeotrope_calculation(
    name: &'static str,
    summary: &'static str,
    arguments: &'static [Argument],
) -> Calculation {
    Calculation {
        name,
        summary,
        arguments,
        feed_extension: None,
        defaults: defaults_of::<AzeotropeOptions>,
        parse: |v| {
            let o: AzeotropeOptions = parse_as(v)?;
            o.validate()?;
            Ok(Options::Azeotrope(o))
        },
        run: azeotrope,
    }
}

/// A reaction equilibrium (TP, HP, SP): [`ReactionCalcOptions`], solved by [`reaction`].
const fn reaction_calculation(
    name: &'static str,
    summary: &'static str,
    arguments: &'static [Argument],
) -> Calculation {
    Calculation {
        name,
        summary,
        arguments,
        feed_extension: Some("extra_species"),
        defaults: defaults_of::<ReactionCalcOptions>,
        parse: |v| Ok(Options::Reaction(parse_as(v)?)),
        run: reaction,
    }
}

/// Every calculation the bindings expose.
pub static CALCULATIONS: &[Calculation] = &[
    Calculation {
        name: "flash_pt",
        summary: "phases of least Gibbs energy at given temperature, pressure and feed (PT flash)",
        arguments: &[T_ARG, P_ARG],
        feed_extension: None,
        defaults: defaults_of::<FlashOptions>,
        parse: |v| Ok(Options::Flash(parse_as(v)?)),
        run: |_, o, ws, m, a, feed| {
            let o = flash_options(o)?;
            let r = ws.flash.flash(m, a[0], a[1], feed, o)?;
            let mut rec = Record::new("flash_pt");
            flash_fields(&mut rec, m, r);
            Ok(rec)
        },
    },
    Calculation {
        name: "flash_sensitivities",
        summary: "a PT flash and the derivatives of its phase amounts, compositions and mixture V, H, S \
                  with respect to T, p and the feed amounts (implicit function theorem)",
        arguments: &[T_ARG, P_ARG],
        feed_extension: None,
        defaults: defaults_of::<FlashOptions>,
        parse: |v| Ok(Options::Flash(parse_as(v)?)),
        run: |_, o, ws, m, a, feed| {
            let o = flash_options(o)?;
            let r = ws.flash.flash(m, a[0], a[1], feed, o)?;
            ws.sensitivity.compute(m, r, &mut ws.derivatives)?;
            let mut rec = Record::new("flash_sensitivities");
            flash_fields(&mut rec, m, r);
            sensitivity_fields(&mut rec, &ws.derivatives);
            Ok(rec)
        },
    },
    state_calculation(
        "flash_ph",
        "the equilibrium state at given pressure and molar enthalpy (a valve, a heat exchanger)",
        &[P_ARG, H_ARG],
    ),
    state_calculation(
        "flash_ps",
        "the equilibrium state at given pressure and molar entropy (an isentropic compressor or expander)",
        &[P_ARG, S_ARG],
    ),
    state_calculation(
        "flash_tv",
        "the equilibrium state at given temperature and volume per mol of feed (a vessel at known T)",
        &[T_ARG, V_ARG],
    ),
    state_calculation(
        "flash_uv",
        "the equilibrium state at given molar internal energy and volume (a closed, rigid vessel)",
        &[U_ARG, V_ARG],
    ),
    reaction_calculation(
        "reaction_tp",
        "chemical equilibrium at given temperature and pressure: the least Gibbs energy under the \
         element balances (Gordon & McBride 1994 Lagrangian Newton); feed = the model's \
         components, then the extra species",
        &[T_ARG, P_ARG],
    ),
    reaction_calculation(
        "reaction_tp_fluid_phases",
        "chemical and phase equilibrium together at given temperature and pressure: the reacting \
         mixture's stability test and, where it fails, the split into two fluid phases of the \
         model (e.g. water or methanol condensing)",
        &[T_ARG, P_ARG],
    ),
    reaction_calculation(
        "reaction_hp",
        "chemical equilibrium at given pressure and total enthalpy (adiabatic flame temperature at \
         constant pressure)",
        &[
            P_ARG,
            Argument {
                name: "enthalpy",
                unit: "J",
                doc: "total enthalpy of the feed (e.g. of the reactants at their inlet temperature)",
            },
        ],
    ),
    reaction_calculation(
        "reaction_sp",
        "chemical equilibrium at given pressure and total entropy (isentropic expansion of \
         equilibrium products)",
        &[
            P_ARG,
            Argument {
                name: "entropy",
                unit: "J/K",
                doc: "total entropy of the mixture",
            },
        ],
    ),
    reaction_calculation(
        "reaction_tv",
        "chemical equilibrium at given temperature and total volume (a closed rigid vessel at known \
         T: the least Helmholtz energy)",
        &[
            T_ARG,
            Argument {
                name: "volume",
                unit: "m3",
                doc: "total volume of the vessel",
            },
        ],
    ),
    reaction_calculation(
        "reaction_uv",
        "chemical equilibrium at given total internal energy and volume (a constant-volume \
         explosion in a closed rigid vessel)",
        &[
            Argument {
                name: "internal_energy",
                unit: "J",
                doc: "total internal energy of the contents",
            },
            Argument {
                name: "volume",
                unit: "m3",
                doc: "total volume of the vessel",
            },
        ],
    ),
    Calculation {
        name: "flash_multiphase",
        summary: "phases of least Gibbs energy at given temperature and pressure with any number of \
                  fluid phases (a vapour and up to three liquids; liquids only with allow_vapor = \
                  false): stability-driven phase addition and removal, Newton on the Gibbs energy",
        arguments: &[T_ARG, P_ARG],
        feed_extension: None,
        defaults: defaults_of::<MultiphaseOptions>,
        parse: |v| {
            let o: MultiphaseOptions = parse_as(v)?;
            o.validate()?;
            Ok(Options::Multiphase(o))
        },
        run: |_, o, ws, m, a, feed| {
            let Options::Multiphase(o) = o else {
                return Err(wrong_options("multiphase-flash"));
            };
            let r = ws.multiphase.flash(m, a[0], a[1], feed, o)?;
            let mut rec = Record::new("flash_multiphase");
            flash_fields(&mut rec, m, r);
            Ok(rec)
        },
    },
    azeotrope_calculation(
        "azeotrope_at_pressure",
        "the azeotrope of a binary at given pressure (x = y with equal fugacities, Newton); \
         the search starts at the feed's composition and falls back to a scan of x1",
        &[P_ARG],
    ),
    azeotrope_calculation(
        "azeotrope_at_temperature",
        "the azeotrope of a binary at given temperature (x = y with equal fugacities, Newton); \
         the search starts at the feed's composition and falls back to a scan of x1",
        &[T_ARG],
    ),
    Calculation {
        name: "activity_coefficients",
        summary: "activity coefficients and excess properties of a liquid of the model's \
                  activity-coefficient model (of a γ–φ model or of a cubic's EOS/G^E mixing rule) \
                  at given temperature and composition (the feed amounts)",
        arguments: &[T_ARG],
        feed_extension: None,
        defaults: defaults_of::<NoOptions>,
        parse: |v| Ok(Options::Plain(parse_as(v)?)),
        run: |_, _o, ws, m, a, feed| {
            let act = m.activity_model().ok_or_else(|| {
                Error::invalid(
                    "model",
                    "activity_coefficients needs a model with an activity-coefficient liquid \
                     (a solution model, or a cubic with an EOS/G^E mixing rule)",
                )
            })?;
            let nc = act.num_components();
            crate::error::check::amounts(feed, nc)?;
            let out = &mut ws.excess;
            out.resize(nc);
            act.excess(a[0], feed, crate::model::Need::ALL, out)?;
            let rt = crate::substance::R * a[0];
            let mut rec = Record::new("activity_coefficients");
            rec.number("temperature", "K", a[0])
                .numbers("ln_gamma", "1", out.ln_gamma.clone())
                .numbers("gamma", "1", out.ln_gamma.iter().map(|l| l.exp()).collect())
                .numbers("d_ln_gamma_dt", "1/K", out.dt.clone())
                .table(
                    "d_ln_gamma_dn",
                    "1/mol",
                    out.dn.chunks(nc).map(<[f64]>::to_vec).collect(),
                )
                .number("excess_gibbs", "J/mol", out.g_excess * rt)
                .number("excess_enthalpy", "J/mol", out.h_excess)
                .number("excess_entropy", "J/(mol K)", out.s_excess);
            Ok(rec)
        },
    },
    Calculation {
        name: "phase_envelope",
        summary: "the bubble and dew curves of a mixture traced through its critical point, with the \
                  cricondenbar, the cricondentherm and optional quality lines (Michelsen 1980)",
        arguments: &[],
        feed_extension: None,
        defaults: defaults_of::<EnvelopeOptions>,
        parse: |v| Ok(Options::Envelope(parse_as(v)?)),
        run: |_, o, _ws, m, _a, feed| {
            let Options::Envelope(o) = o else {
                return Err(wrong_options("phase-envelope"));
            };
            let env = phase_envelope(m, feed, o)?;
            let mut rec = Record::new("phase_envelope");
            envelope_fields(&mut rec, &env);
            Ok(rec)
        },
    },
    Calculation {
        name: "critical_point",
        summary: "the critical point of a mixture of given composition (Heidemann & Khalil 1980 criteria)",
        arguments: &[],
        feed_extension: None,
        defaults: defaults_of::<CriticalOptions>,
        parse: |v| Ok(Options::Critical(parse_as(v)?)),
        run: |_, o, _ws, m, _a, feed| {
            let Options::Critical(o) = o else {
                return Err(wrong_options("critical-point"));
            };
            let c = critical_point(m, feed, o)?;
            let mut rec = Record::new("critical_point");
            rec.number("temperature", "K", c.temperature)
                .number("pressure", "Pa", c.pressure)
                .number("molar_volume", "m3/mol", c.molar_volume)
                .count("iterations", c.iterations);
            Ok(rec)
        },
    },
];

/// An azeotrope from the feed's composition as the first estimate, then from a scan of x1 if
/// that start does not converge; the record of its fields.
fn azeotrope(
    name: &'static str,
    o: &Options,
    _ws: &mut Workspace,
    m: &Model,
    a: &[f64],
    feed: &[f64],
) -> Result<Record> {
    let Options::Azeotrope(o) = o else {
        return Err(wrong_options("azeotrope"));
    };
    let solve = |g: Option<f64>, o: &AzeotropeOptions| -> Result<Azeotrope> {
        if name == "azeotrope_at_pressure" {
            azeotrope_at_pressure(m, a[0], g, o)
        } else {
            azeotrope_at_temperature(m, a[0], g, o)
        }
    };
    if m.num_components() != 2 {
        return Err(Error::invalid(
            "model",
            format!(
                "an azeotrope is located for binaries only; the model has {} components",
                m.num_components()
            ),
        ));
    }
    let ntot = crate::error::check::amounts(feed, 2)?;
    let x1 = feed[0] / ntot;
    let guess = (x1 > 0.0 && x1 < 1.0).then_some(x1);
    let az = match guess.map(|g| solve(Some(g), o)) {
        Some(Ok(az)) => az,
        _ => solve(None, o)?,
    };
    let mut rec = Record::new(name);
    rec.number("temperature", "K", az.temperature)
        .number("pressure", "Pa", az.pressure)
        .numbers("composition", "1", az.composition.to_vec())
        .numbers("ln_phi", "1", az.ln_phi.to_vec())
        .numbers("molar_volumes", "m3/mol", az.molar_volumes.to_vec())
        .number("residual", "1", az.residual)
        .count("iterations", az.iterations);
    Ok(rec)
}

fn wrong_options(what: &str) -> Error {
    Error::invalid("options", format!("{what} options are required"))
}

fn flash_options(o: &Options) -> Result<&FlashOptions> {
    match o {
        Options::Flash(f) => Ok(f),
        _ => Err(wrong_options("PT-flash")),
    }
}

/// The fields of a phase envelope: the boundary as vectors in trace order (bubble branch,
/// critical point, dew branch), the marked points, and the quality lines concatenated with the
/// vapour fraction of each point.
fn envelope_fields(rec: &mut Record, env: &PhaseEnvelope) {
    let col = |pts: &[EnvelopePoint], f: fn(&EnvelopePoint) -> f64| pts.iter().map(f).collect::<Vec<f64>>();
    let pts = &env.points;
    rec.numbers("temperature", "K", col(pts, |p| p.temperature))
        .numbers("pressure", "Pa", col(pts, |p| p.pressure))
        .numbers("vapor_fraction", "1", col(pts, |p| p.vapor_fraction))
        .table("incipient", "1", pts.iter().map(|p| p.incipient.clone()).collect())
        .numbers(
            "critical_temperature",
            "K",
            env.critical.iter().map(|c| c.temperature).collect(),
        )
        .numbers(
            "critical_pressure",
            "Pa",
            env.critical.iter().map(|c| c.pressure).collect(),
        )
        .maybe(
            "cricondenbar_temperature",
            "K",
            env.cricondenbar.as_ref().map(|p| p.temperature),
        )
        .maybe(
            "cricondenbar_pressure",
            "Pa",
            env.cricondenbar.as_ref().map(|p| p.pressure),
        )
        .maybe(
            "cricondentherm_temperature",
            "K",
            env.cricondentherm.as_ref().map(|p| p.temperature),
        )
        .maybe(
            "cricondentherm_pressure",
            "Pa",
            env.cricondentherm.as_ref().map(|p| p.pressure),
        );
    let q: Vec<&EnvelopePoint> = env.quality_lines.iter().flatten().collect();
    rec.numbers(
        "quality_line_fraction",
        "1",
        q.iter().map(|p| p.vapor_fraction).collect(),
    )
    .numbers(
        "quality_line_temperature",
        "K",
        q.iter().map(|p| p.temperature).collect(),
    )
    .numbers("quality_line_pressure", "Pa", q.iter().map(|p| p.pressure).collect());
}

/// The derivatives of a flash result (see [`FlashSensitivities`]): per T (…_dt), per p
/// (…_dp) and per feed amount (…_dn, one row per component j).
fn sensitivity_fields(rec: &mut Record, s: &FlashSensitivities) {
    let (t, p) = (&s.temperature, &s.pressure);
    rec.numbers("d_phase_amounts_dt", "mol/K", t.phase_amounts.clone())
        .table("d_compositions_dt", "1/K", t.compositions.clone())
        .number("d_volume_dt", "m3/K", t.volume)
        .number("d_enthalpy_dt", "J/K", t.enthalpy)
        .number("d_entropy_dt", "J/K2", t.entropy)
        .numbers("d_phase_amounts_dp", "mol/Pa", p.phase_amounts.clone())
        .table("d_compositions_dp", "1/Pa", p.compositions.clone())
        .number("d_volume_dp", "m3/Pa", p.volume)
        .number("d_enthalpy_dp", "J/Pa", p.enthalpy)
        .number("d_entropy_dp", "J/(K Pa)", p.entropy)
        .table(
            "d_phase_amounts_dn",
            "1",
            s.feed.iter().map(|d| d.phase_amounts.clone()).collect(),
        )
        .table(
            "d_compositions_dn",
            "1/mol",
            s.feed.iter().map(|d| d.compositions.concat()).collect(),
        )
        .numbers("d_volume_dn", "m3/mol", s.feed.iter().map(|d| d.volume).collect())
        .numbers("d_enthalpy_dn", "J/mol", s.feed.iter().map(|d| d.enthalpy).collect())
        .numbers("d_entropy_dn", "J/(mol K)", s.feed.iter().map(|d| d.entropy).collect())
        .number("cp_equilibrium", "J/(mol K)", s.equilibrium_heat_capacity())
        .number(
            "isothermal_compressibility_equilibrium",
            "1/Pa",
            s.equilibrium_isothermal_compressibility(),
        )
        .number(
            "thermal_expansion_equilibrium",
            "1/K",
            s.equilibrium_thermal_expansion(),
        )
        .number("joule_thomson_equilibrium", "K/Pa", s.equilibrium_joule_thomson());
}

/// The fields of a flash result: conditions, phases, mixture properties, diagnostics.
/// Mixture energies need the ideal-gas correlations; where they are out of range those
/// fields are absent and `properties_error` says why.
fn flash_fields(rec: &mut Record, model: &Model, r: &FlashResult) {
    let nc = model.num_components();
    rec.number("temperature", "K", r.temperature)
        .number("pressure", "Pa", r.pressure)
        .count("num_phases", r.phases.len())
        .number("vapor_fraction", "1", r.vapor_fraction())
        .texts(
            "phase_kinds",
            r.phases
                .iter()
                .map(|p| p.kind.map_or_else(|| "unknown".to_string(), |k| k.to_string()))
                .collect(),
        )
        .numbers("phase_amounts", "mol", r.phases.iter().map(|p| p.amount).collect())
        .numbers("phase_fractions", "1", r.phases.iter().map(|p| p.fraction).collect())
        .table(
            "compositions",
            "1",
            r.phases.iter().map(|p| p.composition.clone()).collect(),
        )
        .numbers(
            "molar_volumes",
            "m3/mol",
            r.phases.iter().map(|p| p.molar_volume).collect(),
        )
        .numbers("z_factors", "1", r.phases.iter().map(|p| p.z).collect());
    let (props, err) = match r.mixture_properties(model) {
        Ok(m) => (Some(m), None),
        Err(e) => (None, Some(e.to_string())),
    };
    rec.maybe("molar_volume", "m3/mol", props.map(|m| m.molar_volume))
        .maybe("enthalpy", "J/mol", props.map(|m| m.enthalpy))
        .maybe("entropy", "J/(mol K)", props.map(|m| m.entropy))
        .maybe("internal_energy", "J/mol", props.map(|m| m.internal_energy))
        .maybe("gibbs_energy", "J/mol", props.map(|m| m.gibbs))
        .maybe("helmholtz_energy", "J/mol", props.map(|m| m.helmholtz))
        .maybe("cp_frozen", "J/(mol K)", props.map(|m| m.cp_frozen))
        .maybe("mass_density", "kg/m3", props.map(|m| m.mass_density));
    if let Some(e) = err {
        rec.text("properties_error", e);
    }
    let d = &r.diagnostics;
    rec.number("residual", "1", d.residual)
        .maybe("certificate", "1", d.certificate)
        .number("reduced_gibbs", "1", d.gibbs)
        .count("stability_iterations", d.stability_iterations)
        .count("ss_iterations", d.ss_iterations)
        .count("newton_iterations", d.newton_iterations)
        .flag("warm_start", d.warm_start);
    debug_assert!(r.phases.iter().all(|p| p.composition.len() == nc));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{CubicEos, CubicKind};
    use crate::substance::DataBank;

    fn model() -> Model {
        let bank = DataBank::embedded();
        Model::from(CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane", "propane"]).unwrap()).unwrap())
    }

    // Found by the C ABI fuzzer (ffi/tests/fuzz_abi.c): a subnormal amount (5e-324 mol) gave
    // x_i = 0 and an infinite ideal-mixing entropy, so S, G and A were ±inf.
    #[test]
    fn a_subnormal_amount_gives_finite_properties() {
        let m = model();
        let n = [9.0, 5e-324];
        let st = crate::model::PhaseState::new(
            &m,
            760.314_925_040_093_7,
            41_874.255_186_636_576,
            &n,
            crate::model::RootChoice::Stable,
        )
        .unwrap();
        let p = st.properties(&m).unwrap();
        for v in [p.entropy, p.gibbs, p.helmholtz, p.enthalpy, p.cp] {
            assert!(v.is_finite(), "{p:?}");
        }
        let plan = Plan::new("flash_pt", None).unwrap();
        let rec = plan.run(&mut Workspace::default(), &m, &[630.0, 1222.0], &n).unwrap();
        assert!(rec.get_number("entropy").unwrap().is_finite());
        assert!(rec.get_number("gibbs_energy").map_or(true, f64::is_finite));
    }

    // Found by the C ABI fuzzer: a reaction at fixed (p, S) with a feed of 1e300 mol overflowed
    // the extensive results (V, U, c_v = ±inf); a record never carries a non-finite number.
    #[test]
    fn an_overflowing_record_is_no_solution() {
        let bank = DataBank::embedded();
        let m = Model::from(CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["methane"]).unwrap()).unwrap());
        let plan = Plan::new("reaction_sp", None).unwrap();
        let e = plan
            .run(&mut Workspace::default(), &m, &[12093.8, 495.233], &[1e300])
            .unwrap_err();
        assert_eq!(e.kind(), crate::error::ErrorKind::NoSolution, "{e}");
        assert!(e.to_string().contains("floating-point range"), "{e}");
        // The same calculation at 1 mol is a finite answer.
        let rec = plan.run(&mut Workspace::default(), &m, &[12093.8, 495.233], &[1.0]);
        if let Ok(rec) = rec {
            assert!(rec.check_finite(&[1.0]).is_ok());
        }
    }

    // Found by the C ABI fuzzer: a negative stability threshold made the flash certificate
    // call a phase without stationary points unstable and index its (empty) list of points,
    // a panic. A threshold outside [0, 1) is invalid input, in the flash and the stability test.
    #[test]
    fn a_negative_stability_threshold_is_invalid_input() {
        let m = model();
        let mut opts = FlashOptions::default();
        opts.stability.threshold = -0.5;
        let e = crate::equilibrium::flash_pt(&m, 333.6, 1.4e9, &[0.6, 0.4], &opts).unwrap_err();
        assert_eq!(e.kind(), crate::error::ErrorKind::InvalidInput, "{e}");
        assert!(e.to_string().contains("threshold"), "{e}");
        for bad in [f64::NAN, f64::INFINITY, 1.0] {
            opts.stability.threshold = bad;
            assert!(crate::equilibrium::flash_pt(&m, 300.0, 1e6, &[0.6, 0.4], &opts).is_err());
            let e = crate::equilibrium::stability(&m, 300.0, 1e6, &[0.6, 0.4], &opts.stability).unwrap_err();
            assert_eq!(e.kind(), crate::error::ErrorKind::InvalidInput, "{e}");
        }
        opts.stability.threshold = 0.0;
        assert!(crate::equilibrium::flash_pt(&m, 300.0, 1e6, &[0.6, 0.4], &opts).is_ok());
    }

    // Found by the C ABI fuzzer: the same solid given twice "coexisted" with itself, a
    // boundary with Δv = Δs = 0 and a NaN Clapeyron slope. It is no solution now.
    #[test]
    fn a_solid_given_twice_has_no_boundary_with_itself() {
        use crate::equilibrium::{PurePhase, PurePhases};
        use crate::model::solid::{FusionData, FusionSolid, SolidModel};
        let bank = DataBank::embedded();
        let m = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["carbon dioxide"]).unwrap()).unwrap();
        let dry_ice = FusionSolid::anchored(&m, 0, FusionData::carbon_dioxide()).unwrap();
        let set = PurePhases::new(&m, 0, vec![&dry_ice as &dyn SolidModel, &dry_ice]).unwrap();
        let at_t = set.coexistence_at_temperature(PurePhase::Solid(0), PurePhase::Solid(1), 200.0, None);
        assert!(at_t.is_err(), "a boundary of a solid with itself: {at_t:?}");
        let at_p = set.coexistence_at_pressure(PurePhase::Solid(0), PurePhase::Solid(1), 189_560.270_046_948_7, None);
        assert!(at_p.is_err(), "a boundary of a solid with itself: {at_p:?}");
        // A real boundary still reads: solid CO2 against its vapour.
        let c = set
            .coexistence_at_temperature(PurePhase::Solid(0), PurePhase::Vapor, 190.0, None)
            .unwrap();
        assert!(c.clapeyron_slope.is_finite() && c.clapeyron_slope > 0.0);
    }

    // Found by the C ABI fuzzer: fusion data with a huge negative Δcp (finite, so accepted)
    // gave the solid c_p = 1.8e308 J/(mol K) and S = -inf, G = +inf far from the triple point.
    #[test]
    fn an_overflowing_fusion_solid_is_not_evaluated() {
        use crate::equilibrium::{PurePhase, PurePhases};
        use crate::model::solid::{FusionData, FusionSolid, SolidModel};
        let bank = DataBank::embedded();
        let m = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["carbon dioxide"]).unwrap()).unwrap();
        let mut data = FusionData::carbon_dioxide();
        data.delta_cp = -f64::MAX;
        data.t_min = 0.5;
        let solid = FusionSolid::anchored(&m, 0, data).unwrap();
        let e = solid.properties(0.981_527_573_608_195_2, 1e5).unwrap_err();
        assert_eq!(e.kind(), crate::error::ErrorKind::NoSolution, "{e}");
        let set = PurePhases::new(&m, 0, vec![&solid as &dyn SolidModel]).unwrap();
        assert!(
            set.evaluate(PurePhase::Solid(0), 0.981_527_573_608_195_2, 1e5)
                .unwrap()
                .is_none()
        );
        if let Ok(st) = set.stable_phase(0.981_527_573_608_195_2, 1e5) {
            assert!(st.stable.gibbs.is_finite() && st.stable.entropy.is_finite());
        }
    }

    // Found by the C ABI fuzzer: carbon monoxide at 523 K and 3.3e-151 Pa has v ≈ 1.3e154
    // m3/mol, whose square overflows in the speed of sound (w = inf).
    #[test]
    fn properties_that_overflow_are_no_solution() {
        let bank = DataBank::embedded();
        let m = CubicEos::new(
            CubicKind::SoaveRedlichKwong,
            bank.get_many(&["carbon monoxide"]).unwrap(),
        )
        .unwrap();
        let st = crate::model::PhaseState::new(
            &m,
            522.995_351_573_276_4,
            3.323_433_851_751_250_5e-151,
            &[0.477_427_063_128_477_8],
            crate::model::RootChoice::Stable,
        )
        .unwrap();
        match st.properties(&m) {
            Ok(p) => assert!(
                p.speed_of_sound.is_finite() && p.isothermal_compressibility.is_finite(),
                "{p:?}"
            ),
            Err(e) => assert_eq!(e.kind(), crate::error::ErrorKind::NoSolution, "{e}"),
        }
    }

    // n-decane compressed to 1e12 Pa: ln φ ≈ p·b/(RT) is about 8e4, finite, while φ·x·p
    // overflows; the fugacity is an error, never inf.
    #[test]
    fn an_overflowing_fugacity_is_no_solution() {
        let bank = DataBank::embedded();
        let m = CubicEos::new(CubicKind::PengRobinson, bank.get_many(&["n-decane"]).unwrap()).unwrap();
        let st = crate::model::PhaseState::new(&m, 300.0, 1.0e12, &[1.0], crate::model::RootChoice::Stable).unwrap();
        let e = st.properties(&m).unwrap_err();
        assert_eq!(e.kind(), crate::error::ErrorKind::NoSolution, "{e}");
        assert!(e.to_string().contains("fugacity of component 0"), "{e}");
    }

    #[test]
    fn a_plan_runs_the_same_flash_as_the_solver() {
        let m = model();
        let plan = Plan::new("flash_pt", None).unwrap();
        let mut ws = Workspace::default();
        let rec = plan.run(&mut ws, &m, &[250.0, 2.0e6], &[0.6, 0.4]).unwrap();
        let direct = crate::equilibrium::flash_pt(&m, 250.0, 2.0e6, &[0.6, 0.4], &FlashOptions::default()).unwrap();
        assert_eq!(rec.get_number("vapor_fraction").unwrap(), direct.vapor_fraction());
        let (x, rows, cols) = rec.get_numbers("compositions").unwrap();
        assert_eq!((rows, cols), (2, 2));
        assert_eq!(x[0], direct.phases[0].composition[0]);
        let h = direct.mixture_properties(&m).unwrap().enthalpy;
        assert_eq!(rec.get_number("enthalpy").unwrap(), h);
    }

    #[test]
    fn bad_names_options_and_arguments_are_typed_errors() {
        let e = Plan::new("flash_tp", None).unwrap_err();
        assert!(e.to_string().contains("flash_pt"), "{e}");
        let e = Plan::new("flash_pt", Some(r#"{"tolerence": 1e-8}"#)).unwrap_err();
        assert!(e.to_string().contains("'tolerence'"), "{e}");
        let e = Plan::new("flash_pt", Some(r#"{"tolerance": "small"}"#)).unwrap_err();
        assert_eq!(e.kind(), crate::ErrorKind::InvalidInput);
        let e = Plan::new("flash_pt", Some("[1, 2]")).unwrap_err();
        assert!(e.to_string().contains("JSON object"), "{e}");
        let e = Plan::new("flash_pt", Some("{")).unwrap_err();
        assert_eq!(e.kind(), crate::ErrorKind::InvalidInput);
        let plan = Plan::new("flash_pt", None).unwrap();
        let e = plan
            .run(&mut Workspace::default(), &model(), &[250.0], &[0.5, 0.5])
            .unwrap_err();
        assert!(e.to_string().contains("temperature (K), pressure (Pa)"), "{e}");
        let plan = Plan::new("flash_pt", Some(r#"{"tolerance": -1}"#)).unwrap();
        let e = plan
            .run(&mut Workspace::default(), &model(), &[250.0, 1e6], &[0.5, 0.5])
            .unwrap_err();
        assert_eq!(e.kind(), crate::ErrorKind::InvalidInput);
    }

    #[test]
    fn every_calculation_has_checkable_defaults() {
        for c in CALCULATIONS {
            let d = c.default_options();
            assert!(d.is_object(), "{}", c.name);
            assert!(Plan::from_value(c.name, Some(&d)).is_ok(), "{}", c.name);
        }
    }
}
