//! `tieline`: command-line access to the equilibrium engine on the embedded component data.
//!
//! Subcommands: `demo`, `flash`, `saturation`, `bubble`, `dew`, `props`, `calc` (any
//! calculation of `tieline::calc` by name), `components`.
//! Values accept unit suffixes at the edge (K or C; Pa, kPa, MPa, bar, atm) and are SI
//! otherwise. `--json` prints machine-readable output.

use clap::{Args, Parser, Subcommand};
use serde_json::json;
use tieline::equilibrium::{
    BubbleDew, FlashOptions, FlashResult, SaturationOptions, bubble_pressure, bubble_temperature, dew_pressure,
    dew_temperature, flash_pt, saturation_pressure, saturation_temperature,
};
use tieline::model::{FluidModel, Model, PhaseState, RootChoice};
use tieline::substance::DataBank;
use tieline::{Error, Result};
use tieline_examples::{
    Table, build_model, calc, model_from_file, parse_kind, parse_list, parse_pressure, parse_temperature,
};

#[derive(Parser)]
#[command(
    name = "tieline",
    version,
    about = "Phase equilibrium of real fluids by Gibbs-energy minimisation",
    after_help = "Errors: a message on stderr and exit status 2 (also for a malformed command line). \
With --json, errors are a JSON object on stdout instead, with the same exit status: \
{\"error\": {\"kind\": \"invalid_input\" | \"unknown_component\" | \"outside_validity\" | \
\"no_solution\" | \"not_converged\" | \"data\" | \"usage\", \"message\": \"...\", \
\"argument\": \"temperature\" or null}}. Numbers may be written nan, inf or 1e999; each is \
refused as not a finite number."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Args, Clone)]
struct ModelArgs {
    /// Components by name, alias or CAS number, comma-separated (e.g. methane,ethane,CO2).
    #[arg(short = 'c', long, value_delimiter = ',')]
    components: Vec<String>,
    /// Equation of state: pr, pr78, srk, or iapws95 (water only).
    #[arg(short = 'e', long, default_value = "pr")]
    equation: String,
    /// Binary interaction parameter `i,j,k0` or `i,j,k0,k1` (k_ij = k0 + k1·T), repeatable; indices from 0.
    #[arg(long = "kij")]
    kij: Vec<String>,
    /// Apply Péneloux volume translation (Rackett-based estimate).
    #[arg(long)]
    peneloux: bool,
    /// A component data file (TOML, the schema of the embedded bank) to use instead.
    #[arg(long)]
    bank: Option<String>,
    /// A JSON model description or full model file (overrides --components/--equation).
    #[arg(long)]
    model: Option<String>,
    /// Print JSON instead of tables.
    #[arg(long)]
    json: bool,
}

#[derive(Subcommand)]
enum Command {
    /// Run the demonstration: the inlet separator of an invented gas plant.
    Demo {
        /// Print JSON instead of tables.
        #[arg(long)]
        json: bool,
    },
    /// PT flash: phases, amounts, compositions and the stability certificate.
    Flash {
        #[command(flatten)]
        m: ModelArgs,
        #[command(flatten)]
        st: StateArgs,
        /// Also report the tie-line extension of a single-phase feed.
        #[arg(long)]
        negative: bool,
        /// Most fluid phases of the answer: 2, or 3 for vapour–liquid–liquid states.
        #[arg(long, default_value_t = 2)]
        phases: usize,
    },
    /// Pure-component saturation: vapour pressure at T, or boiling temperature at p.
    Saturation {
        #[command(flatten)]
        m: ModelArgs,
        /// Temperature (gives the vapour pressure).
        #[arg(short = 't', long, allow_hyphen_values = true)]
        temperature: Option<String>,
        /// Pressure (gives the boiling temperature).
        #[arg(short = 'p', long, allow_hyphen_values = true)]
        pressure: Option<String>,
    },
    /// Bubble point of a liquid: pressure at T, or temperature at p.
    Bubble(PointArgs),
    /// Dew point of a vapour: pressure at T, or temperature at p.
    Dew(PointArgs),
    /// Properties of one phase at T, p, n on a chosen root.
    Props {
        #[command(flatten)]
        m: ModelArgs,
        #[command(flatten)]
        st: StateArgs,
        /// Volume root: stable, liquid or vapor.
        #[arg(long, default_value = "stable")]
        root: String,
    },
    /// Any calculation by name (`--list` shows them with their arguments and options), e.g.
    /// `calc flash_ph -c water -e iapws95 -z 1 --arg pressure=1atm --arg enthalpy=-250000`.
    Calc {
        /// The calculation (see --list).
        #[arg(required_unless_present = "list")]
        name: Option<String>,
        #[command(flatten)]
        m: ModelArgs,
        /// Feed amounts, mol (comma-separated).
        #[arg(short = 'z', long, allow_hyphen_values = true)]
        feed: Option<String>,
        /// An argument as name=value (units: K or C; Pa, kPa, MPa, bar, atm; SI otherwise), repeatable.
        #[arg(long = "arg", allow_hyphen_values = true)]
        args: Vec<String>,
        /// An option as key=value (JSON value; nested as group.key=value), repeatable.
        #[arg(long = "option", allow_hyphen_values = true)]
        options: Vec<String>,
        /// List the calculations, their arguments and default options.
        #[arg(long)]
        list: bool,
    },
    /// List the components of the data bank.
    Components {
        /// A component data file (TOML) instead of the embedded bank.
        #[arg(long)]
        bank: Option<String>,
        /// Print JSON.
        #[arg(long)]
        json: bool,
    },
}

/// A state: temperature, pressure and amounts.
#[derive(Args)]
struct StateArgs {
    /// Temperature (K, or with unit: 25C).
    #[arg(short = 't', long, allow_hyphen_values = true)]
    temperature: String,
    /// Pressure (Pa, or with unit: 50bar, 5MPa).
    #[arg(short = 'p', long, allow_hyphen_values = true)]
    pressure: String,
    /// Feed amounts, mol (comma-separated; normalisation not required).
    #[arg(short = 'z', long, allow_hyphen_values = true)]
    feed: String,
}

impl StateArgs {
    fn parse(&self) -> Result<(f64, f64, Vec<f64>)> {
        Ok((
            parse_temperature(&self.temperature)?,
            parse_pressure(&self.pressure)?,
            parse_list("feed", &self.feed)?,
        ))
    }
}

#[derive(Args)]
struct PointArgs {
    #[command(flatten)]
    m: ModelArgs,
    /// Temperature (gives the pressure of the point).
    #[arg(short = 't', long, allow_hyphen_values = true)]
    temperature: Option<String>,
    /// Pressure (gives the temperature of the point).
    #[arg(short = 'p', long, allow_hyphen_values = true)]
    pressure: Option<String>,
    /// Amounts of the bulk phase, mol.
    #[arg(short = 'z', long, allow_hyphen_values = true)]
    feed: String,
}

fn load_bank(path: &Option<String>) -> Result<DataBank> {
    match path {
        None => Ok(DataBank::embedded().clone()),
        Some(p) => {
            let text = std::fs::read_to_string(p).map_err(|e| Error::Data(format!("{p}: {e}")))?;
            DataBank::from_toml_str(&text)
        }
    }
}

fn model(a: &ModelArgs) -> Result<Model> {
    let bank = load_bank(&a.bank)?;
    if let Some(path) = &a.model {
        return model_from_file(path, &bank);
    }
    if a.components.is_empty() {
        return Err(Error::invalid(
            "components",
            "give --components a,b,... or --model FILE",
        ));
    }
    if a.equation.eq_ignore_ascii_case("iapws95") {
        // The reference formulation for water: one component, no interaction parameters.
        if a.components.len() != 1 || bank.get(&a.components[0])?.cas != "7732-18-5" {
            return Err(Error::invalid(
                "equation",
                "iapws95 describes water alone: use -c water",
            ));
        }
        return Ok(Model::Iapws95(tieline::model::Iapws95::new()));
    }
    build_model(&bank, &a.components, parse_kind(&a.equation)?, &a.kij, a.peneloux)
}

fn g(x: f64) -> String {
    format!("{x:.6}")
}

fn e(x: f64) -> String {
    format!("{x:.6e}")
}

fn print_flash(m: &Model, r: &FlashResult) -> Result<String> {
    let mut out = format!(
        "T = {} K, p = {} Pa: {} phase(s)\n\n",
        g(r.temperature),
        e(r.pressure),
        r.phases.len()
    );
    let mut header = vec!["".to_string()];
    for ph in &r.phases {
        header.push(ph.kind.map_or("?".into(), |k| k.to_string()));
    }
    let hdr: Vec<&str> = header.iter().map(|s| s.as_str()).collect();
    let mut t = Table::new(&hdr);
    let props: Vec<_> = r
        .phases
        .iter()
        .map(|ph| ph.state(r.temperature, r.pressure).properties(m))
        .collect();
    t.row(
        std::iter::once("phase fraction".into())
            .chain(r.phases.iter().map(|p| g(p.fraction)))
            .collect(),
    );
    t.row(
        std::iter::once("amount [mol]".into())
            .chain(r.phases.iter().map(|p| e(p.amount)))
            .collect(),
    );
    for i in 0..m.num_components() {
        t.row(
            std::iter::once(format!("x {}", m.component_name(i)))
                .chain(r.phases.iter().map(|p| g(p.composition[i])))
                .collect(),
        );
    }
    t.row(
        std::iter::once("Z".into())
            .chain(r.phases.iter().map(|p| g(p.z)))
            .collect(),
    );
    t.row(
        std::iter::once("density [kg/m3]".into())
            .chain(
                props
                    .iter()
                    .map(|p| p.as_ref().map_or("-".into(), |p| g(p.mass_density))),
            )
            .collect(),
    );
    t.row(
        std::iter::once("h [J/mol]".into())
            .chain(props.iter().map(|p| p.as_ref().map_or("-".into(), |p| e(p.enthalpy))))
            .collect(),
    );
    t.row(
        std::iter::once("s [J/(mol K)]".into())
            .chain(props.iter().map(|p| p.as_ref().map_or("-".into(), |p| g(p.entropy))))
            .collect(),
    );
    t.row(
        std::iter::once("cp [J/(mol K)]".into())
            .chain(props.iter().map(|p| p.as_ref().map_or("-".into(), |p| g(p.cp))))
            .collect(),
    );
    t.row(
        std::iter::once("speed of sound [m/s]".into())
            .chain(
                props
                    .iter()
                    .map(|p| p.as_ref().map_or("-".into(), |p| g(p.speed_of_sound))),
            )
            .collect(),
    );
    out.push_str(&t.render());
    if let Some(Err(err)) = props.iter().find(|p| p.is_err()) {
        out.push_str(&format!("(energies not available: {err})\n"));
    }
    let d = &r.diagnostics;
    out.push_str(&format!(
        "\niterations: stability {}, SS {}, Newton {}; residual {:.2e}; certificate (min tangent-plane distance) {}\n",
        d.stability_iterations,
        d.ss_iterations,
        d.newton_iterations,
        d.residual,
        d.certificate.map_or("off".into(), |c| format!("{c:.3e}"))
    ));
    if let Some(tl) = &r.tie_line {
        out.push_str(&format!("tie-line extension: beta = {}\n", g(tl.beta)));
    }
    Ok(out)
}

fn print_point(m: &Model, r: &BubbleDew) -> String {
    let mut out = format!("{:?}: T = {} K, p = {} Pa\n\n", r.kind, g(r.temperature), e(r.pressure));
    let mut t = Table::new(&["component", "bulk", "incipient", "K"]);
    for i in 0..m.num_components() {
        t.row(vec![
            m.component_name(i).to_string(),
            g(r.feed[i]),
            g(r.incipient[i]),
            e(r.k_values[i]),
        ]);
    }
    out.push_str(&t.render());
    out.push_str(&format!(
        "\niterations: SS {}, Newton {}; residual {:.2e}\n",
        r.ss_iterations, r.newton_iterations, r.residual
    ));
    out
}

fn demo(json_out: bool) -> Result<String> {
    // The inlet separator of an invented gas-gathering plant ("Kestrel Flats"): a wet gas from
    // an invented field arrives at 60 bar and 12 °C. The composition is made up for the demo.
    let names = [
        "nitrogen",
        "carbon dioxide",
        "methane",
        "ethane",
        "propane",
        "isobutane",
        "n-butane",
        "isopentane",
        "n-pentane",
        "n-hexane",
        "n-heptane",
        "n-octane",
    ];
    let z = [
        0.012, 0.021, 0.762, 0.072, 0.046, 0.013, 0.019, 0.009, 0.008, 0.011, 0.015, 0.012,
    ];
    let bank = DataBank::embedded();
    let pairs = ["0,1,-0.017", "0,2,0.031", "1,2,0.12", "1,3,0.13", "1,4,0.135"].map(String::from);
    // k_ij: magnitudes typical of N2/CO2/hydrocarbon pairs with PR (common practice, no source).
    let m = build_model(
        bank,
        &names.map(String::from),
        tieline::model::CubicKind::PengRobinson,
        &pairs,
        false,
    )?;
    let (t, p) = (285.15, 60e5);
    let r = flash_pt(&m, t, p, &z, &FlashOptions::default())?;
    let dew = dew_temperature(&m, p, &z, &SaturationOptions::default());
    if json_out {
        let v = json!({"scenario": "inlet separator (invented plant and composition)", "flash": r,
                       "dew_temperature": dew.as_ref().ok()});
        return Ok(serde_json::to_string_pretty(&v).unwrap_or_default());
    }
    let mut out = String::from(
        "Inlet separator of the invented Kestrel Flats gas plant (made-up wet-gas composition),\n\
         Peng-Robinson, embedded component data.\n\n",
    );
    out.push_str(&print_flash(&m, &r)?);
    match dew {
        Ok(d) => out.push_str(&format!(
            "\ndew-point temperature of the feed at {} Pa: {} K\n",
            e(p),
            g(d.temperature)
        )),
        Err(err) => out.push_str(&format!("\ndew point of the feed at {} Pa: {err}\n", e(p))),
    }
    out.push_str("\nAn aid to engineering judgement: respect model validity ranges; codes and licensed practice govern design.\n");
    Ok(out)
}

fn run(cli: Cli) -> Result<String> {
    let sopts = SaturationOptions::default();
    match cli.command {
        Command::Demo { json } => demo(json),
        Command::Flash {
            m,
            st,
            negative,
            phases,
        } => {
            let model = model(&m)?;
            let (t, p, z) = st.parse()?;
            let opts = FlashOptions {
                negative_flash: negative,
                max_phases: phases,
                ..Default::default()
            };
            let r = flash_pt(&model, t, p, &z, &opts)?;
            if m.json {
                Ok(serde_json::to_string_pretty(&r).unwrap_or_default())
            } else {
                print_flash(&model, &r)
            }
        }
        Command::Saturation {
            m,
            temperature,
            pressure,
        } => {
            let model = model(&m)?;
            if model.num_components() != 1 {
                return Err(Error::invalid(
                    "components",
                    "saturation needs exactly one component; use bubble/dew for mixtures",
                ));
            }
            let s = match (temperature, pressure) {
                (Some(t), None) => saturation_pressure(&model, parse_temperature(&t)?, 0, &sopts)?,
                (None, Some(p)) => saturation_temperature(&model, parse_pressure(&p)?, 0, &sopts)?,
                _ => {
                    return Err(Error::invalid(
                        "saturation",
                        "give exactly one of --temperature or --pressure",
                    ));
                }
            };
            if m.json {
                return Ok(serde_json::to_string_pretty(&s).unwrap_or_default());
            }
            let mut t = Table::new(&["quantity", "value"]);
            t.row(vec!["temperature [K]".into(), g(s.temperature)]);
            t.row(vec!["pressure [Pa]".into(), e(s.pressure)]);
            t.row(vec!["liquid density [mol/m3]".into(), g(s.liquid_density)]);
            t.row(vec!["vapour density [mol/m3]".into(), g(s.vapor_density)]);
            t.row(vec![
                "enthalpy of vaporisation [J/mol]".into(),
                g(s.enthalpy_of_vaporization),
            ]);
            Ok(format!(
                "{} ({})\n\n{}",
                model.component_name(0),
                m.equation,
                t.render()
            ))
        }
        Command::Bubble(a) => point(a, true, &sopts),
        Command::Dew(a) => point(a, false, &sopts),
        Command::Props { m, st, root } => {
            let model = model(&m)?;
            let root = match root.as_str() {
                "stable" => RootChoice::Stable,
                "liquid" => RootChoice::Liquid,
                "vapor" | "vapour" => RootChoice::Vapor,
                other => {
                    return Err(Error::invalid(
                        "root",
                        format!("'{other}'; stable, liquid or vapor is allowed"),
                    ));
                }
            };
            let (t, p, n) = st.parse()?;
            let s = PhaseState::new(&model, t, p, &n, root)?;
            let pr = s.properties(&model)?;
            if m.json {
                return Ok(serde_json::to_string_pretty(&json!({"state": s, "properties": pr})).unwrap_or_default());
            }
            let mut t = Table::new(&["property", "value", "unit"]);
            for (k, v, u) in [
                ("molar volume", pr.molar_volume, "m3/mol"),
                ("mass density", pr.mass_density, "kg/m3"),
                ("Z", pr.z, "-"),
                ("enthalpy", pr.enthalpy, "J/mol"),
                ("entropy", pr.entropy, "J/(mol K)"),
                ("Gibbs energy", pr.gibbs, "J/mol"),
                ("internal energy", pr.internal_energy, "J/mol"),
                ("Helmholtz energy", pr.helmholtz, "J/mol"),
                ("cp", pr.cp, "J/(mol K)"),
                ("cv", pr.cv, "J/(mol K)"),
                ("speed of sound", pr.speed_of_sound, "m/s"),
                ("Joule-Thomson coefficient", pr.joule_thomson, "K/Pa"),
                ("isothermal compressibility", pr.isothermal_compressibility, "1/Pa"),
                ("thermal expansion", pr.thermal_expansion, "1/K"),
            ] {
                t.row(vec![k.into(), e(v), u.into()]);
            }
            Ok(format!("{} phase\n\n{}", s.kind, t.render()))
        }
        Command::Calc {
            name,
            m,
            feed,
            args,
            options,
            list,
        } => {
            if list {
                return Ok(calc::catalogue());
            }
            let name = name.unwrap_or_default();
            let c = tieline::calc::find(&name)?;
            let plan = tieline::calc::Plan::from_value(&name, calc::options(&options)?.as_ref())?;
            let a = calc::arguments(c, &args)?;
            let model = model(&m)?;
            let feed = match feed {
                Some(f) => parse_list("feed", &f)?,
                None if model.num_components() == 1 => vec![1.0],
                None => return Err(Error::invalid("feed", "give the feed amounts with -z a,b,...")),
            };
            let rec = plan.run(&mut tieline::calc::Workspace::default(), &model, &a, &feed)?;
            if m.json {
                Ok(serde_json::to_string_pretty(&rec.to_json()).unwrap_or_default())
            } else {
                Ok(calc::render(&rec))
            }
        }
        Command::Components { bank, json } => {
            let b = load_bank(&bank)?;
            if json {
                return Ok(serde_json::to_string_pretty(b.components()).unwrap_or_default());
            }
            let mut t = Table::new(&["name", "formula", "CAS", "Tc [K]", "pc [Pa]", "omega", "M [kg/mol]"]);
            for c in b.components() {
                t.row(vec![
                    c.name.clone(),
                    c.formula.clone(),
                    c.cas.clone(),
                    g(c.tc),
                    e(c.pc),
                    g(c.acentric),
                    g(c.molar_mass),
                ]);
            }
            Ok(t.render())
        }
    }
}

fn point(a: PointArgs, bubble: bool, sopts: &SaturationOptions) -> Result<String> {
    let model = model(&a.m)?;
    let z = parse_list("feed", &a.feed)?;
    let r = match (a.temperature, a.pressure, bubble) {
        (Some(t), None, true) => bubble_pressure(&model, parse_temperature(&t)?, &z, sopts)?,
        (Some(t), None, false) => dew_pressure(&model, parse_temperature(&t)?, &z, sopts)?,
        (None, Some(p), true) => bubble_temperature(&model, parse_pressure(&p)?, &z, sopts)?,
        (None, Some(p), false) => dew_temperature(&model, parse_pressure(&p)?, &z, sopts)?,
        _ => {
            return Err(Error::invalid(
                "point",
                "give exactly one of --temperature or --pressure",
            ));
        }
    };
    if a.m.json {
        Ok(serde_json::to_string_pretty(&r).unwrap_or_default())
    } else {
        Ok(print_point(&model, &r))
    }
}

/// The stable snake_case name of an error kind, as written in `--json` errors.
fn kind_name(k: tieline::ErrorKind) -> &'static str {
    use tieline::ErrorKind as K;
    match k {
        K::InvalidInput => "invalid_input",
        K::UnknownComponent => "unknown_component",
        K::OutsideValidity => "outside_validity",
        K::NoSolution => "no_solution",
        K::NotConverged => "not_converged",
        K::Data => "data",
        _ => "other",
    }
}

/// The `--json` form of an error: `{"error": {"kind", "message", "argument"}}`.
fn json_error(kind: &str, message: &str, argument: Option<&str>) -> String {
    serde_json::to_string_pretty(&json!({"error": {"kind": kind, "message": message, "argument": argument}}))
        .unwrap_or_default()
}

fn main() {
    let json_out = std::env::args().any(|a| a == "--json");
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) if json_out && e.use_stderr() => {
            let text = e.to_string();
            let first = text
                .lines()
                .next()
                .unwrap_or("")
                .trim_start_matches("error: ")
                .to_string();
            println!("{}", json_error("usage", &first, None));
            std::process::exit(2);
        }
        Err(e) => e.exit(),
    };
    match run(cli) {
        Ok(s) => print!("{s}"),
        Err(err) => {
            if json_out {
                let argument = match &err {
                    Error::InvalidInput { what, .. } => Some(what.as_str()),
                    Error::UnknownComponent { .. } => Some("components"),
                    Error::OutsideValidity { what, .. } => Some(what.as_str()),
                    _ => None,
                };
                println!("{}", json_error(kind_name(err.kind()), &err.to_string(), argument));
            } else {
                eprintln!("error: {err}");
            }
            std::process::exit(2);
        }
    }
}
