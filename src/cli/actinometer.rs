//! `photoledger actinometer ferrioxalate ...` and `photoledger actinometer network FILE --step NAME --data CSV`.

use super::output::{out, outln};
use super::{NetworkArgs, load, print_warnings};
use photoledger::Error;
use photoledger::file::folder::Folder;
use photoledger::light::LightKind;
use photoledger::model::Model;
use photoledger::plan::actinometry::{self as act, Measured, Strength, YieldTable};
use photoledger::report::plan as rp;
use photoledger::report::write_atomic;
use photoledger::units::{self, Quantity};
use std::path::{Path, PathBuf};

/// Options of `actinometer`.
#[derive(clap::Args, Debug)]
pub struct ActinometerArgs {
    #[command(subcommand)]
    pub route: Route,
}

/// Which actinometer.
#[derive(clap::Subcommand, Debug)]
pub enum Route {
    /// Potassium ferrioxalate, read as Fe(phen)3 2+ at 510 nm (the standard procedure).
    Ferrioxalate(Box<FerrioxalateArgs>),
    /// Any photoreaction of a network with a known quantum yield: fit the photon flux to
    /// measured conversions of the step's absorber against time.
    Network(NetworkFitArgs),
}

/// Ferrioxalate inputs. Values may carry a standard uncertainty: "0.452 ± 0.004" or
/// "10.00 ± 0.02 mL" ("+-" works too).
#[derive(clap::Args, Debug)]
pub struct FerrioxalateArgs {
    /// Absorbance change at 510 nm (irradiated minus dark sample), e.g. "0.452 ± 0.004".
    #[arg(long, value_name = "ΔA")]
    pub delta_a: String,
    /// Cuvette path of the 510 nm reading.
    #[arg(long, value_name = "LENGTH", default_value = "1 cm")]
    pub path: String,
    /// Volume of actinometer solution irradiated.
    #[arg(long, value_name = "VOLUME")]
    pub irradiated: String,
    /// Aliquot taken from it for the reading.
    #[arg(long, value_name = "VOLUME")]
    pub aliquot: String,
    /// Volume the aliquot was made up to (with phenanthroline, buffer and any dilution).
    #[arg(long, value_name = "VOLUME")]
    pub total: String,
    /// Irradiation time.
    #[arg(long, allow_hyphen_values = true, value_name = "DURATION")]
    pub time: String,
    /// Wavelength of the irradiation.
    #[arg(long, allow_hyphen_values = true, value_name = "WAVELENGTH")]
    pub wavelength: String,
    /// Fraction of the incident light absorbed by the actinometer (1 for an optically thick
    /// solution), e.g. "0.98 ± 0.01".
    #[arg(long, value_name = "FRACTION", default_value = "1")]
    pub fraction_absorbed: String,
    /// Quantum-yield table: hatchard-parker (1956; 254–546 nm; the default) or lee-seliger
    /// (1964; 365/366 nm).
    #[arg(long, value_name = "TABLE", default_value = "hatchard-parker")]
    pub yield_table: String,
    /// Actinometer concentration for the table: 0.006M (UV to 436 nm) or 0.15M (436–546 nm).
    #[arg(long, value_name = "STRENGTH", default_value = "0.006M")]
    pub strength: String,
    /// Quantum yield of Fe2+ to use instead of the table, e.g. "1.21 ± 0.02".
    #[arg(long, value_name = "PHI")]
    pub quantum_yield: Option<String>,
    /// ε(510 nm) of the Fe(phen)3 2+ complex.
    #[arg(long, value_name = "EPSILON", default_value = "1.11e4 L/(mol cm)")]
    pub epsilon: String,
    /// Name of the light in the [[light]] block written.
    #[arg(long, value_name = "NAME", default_value = "calibrated lamp")]
    pub light_name: String,
    // --out: result.json and light.toml (default: ferrioxalate-actinometer/ for the ferrioxalate
    // route, NETWORK-actinometer/ for the network route).
    #[command(flatten)]
    pub output: super::Outputs,
}

/// Network-route inputs.
#[derive(clap::Args, Debug)]
pub struct NetworkFitArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// The photochemical step whose absorber's conversion was measured.
    #[arg(long, value_name = "NAME")]
    pub step: String,
    /// CSV of time and conversion, units in the header, e.g. "time (s), conversion" (a
    /// fraction) or "time (min), conversion (%)".
    #[arg(long, value_name = "CSV")]
    pub data: PathBuf,
    // --out: result.json and light.toml (default: ferrioxalate-actinometer/ for the ferrioxalate
    // route, NETWORK-actinometer/ for the network route).
    #[command(flatten)]
    pub output: super::Outputs,
}

/// Read "V", "V ± S" or "V UNIT ± S UNIT" / "V ± S UNIT" as a quantity (None: a plain number).
fn measured(text: &str, q: Option<Quantity>, field: &str) -> photoledger::Result<Measured> {
    let bad = |m: String| {
        Error::Usage(format!(
            "{field} \"{text}\": {m}; expected {}{}",
            q.map_or("a number".to_string(), |q| q.accepted()),
            ", optionally with \"± uncertainty\""
        ))
    };
    let (v, s) = match text
        .split_once('±')
        .or_else(|| text.split_once("+/-"))
        .or_else(|| text.split_once("+-"))
    {
        Some((v, s)) => (v.trim(), Some(s.trim())),
        None => (text.trim(), None),
    };
    let num = |x: &str| x.parse::<f64>().ok();
    let read = |x: &str| -> photoledger::Result<f64> {
        match q {
            None => num(x).ok_or_else(|| bad(format!("\"{x}\" is not a number"))),
            Some(q) => units::parse(x, q).map_err(|e| bad(e.problem)),
        }
    };
    let sigma = s.map(read).transpose()?.unwrap_or(0.0);
    let value = match (q, num(v), s) {
        // "10.00 ± 0.02 mL": the value borrows the uncertainty's unit.
        (Some(_), Some(x), Some(st)) => {
            let lead: String = st
                .chars()
                .take_while(|c| c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '-' | '+'))
                .collect();
            let sn = num(&lead).ok_or_else(|| bad("the uncertainty needs a number".into()))?;
            if sn == 0.0 {
                read(&format!("{x}{}", &st[lead.len()..]))?
            } else {
                x * sigma / sn
            }
        }
        _ => read(v)?,
    };
    if sigma.is_nan() || sigma < 0.0 {
        return Err(bad("the uncertainty cannot be negative".into()));
    }
    Ok(Measured { value, sigma })
}

pub fn run(a: &ActinometerArgs) -> photoledger::Result<()> {
    match &a.route {
        Route::Ferrioxalate(f) => ferrioxalate(f),
        Route::Network(n) => network(n),
    }
}

fn ferrioxalate(a: &FerrioxalateArgs) -> photoledger::Result<()> {
    let wl = units::parse(&a.wavelength, Quantity::Wavelength).map_err(|e| {
        Error::Usage(format!(
            "--wavelength: {e}; expected {}",
            Quantity::Wavelength.accepted()
        ))
    })?;
    let table = match a.yield_table.as_str() {
        "hatchard-parker" => YieldTable::HatchardParker1956,
        "lee-seliger" => YieldTable::LeeSeliger1964,
        t => {
            return Err(Error::Usage(format!(
                "--yield-table {t}: expected hatchard-parker or lee-seliger"
            )));
        }
    };
    let strength = match a.strength.replace(' ', "").as_str() {
        "0.006M" | "6mM" => Strength::Dilute,
        "0.15M" | "150mM" => Strength::Concentrated,
        s => return Err(Error::Usage(format!("--strength {s}: expected 0.006M or 0.15M"))),
    };
    let (phi, yield_note) = match &a.quantum_yield {
        Some(q) => (
            measured(q, None, "--quantum-yield")?,
            "given with --quantum-yield".to_string(),
        ),
        None => act::ferrioxalate_yield(table, strength, wl)?,
    };
    let eps = measured(&a.epsilon, Some(Quantity::MolarAbsorption), "--epsilon")?;
    let eps_note = if a.epsilon == "1.11e4 L/(mol cm)" {
        "1.11e4 L/(mol cm) (the commonly quoted value, recalled rather than checked; --epsilon to change)".to_string()
    } else {
        format!("{} (given)", a.epsilon)
    };
    let m = act::Ferrioxalate {
        delta_a: measured(&a.delta_a, None, "--delta-a")?,
        path: measured(&a.path, Some(Quantity::Length), "--path")?,
        v_irradiated: litres(measured(&a.irradiated, Some(Quantity::Volume), "--irradiated")?),
        v_aliquot: litres(measured(&a.aliquot, Some(Quantity::Volume), "--aliquot")?),
        v_total: litres(measured(&a.total, Some(Quantity::Volume), "--total")?),
        time: measured(&a.time, Some(Quantity::Time), "--time")?,
        wavelength: wl,
        fraction_absorbed: measured(&a.fraction_absorbed, None, "--fraction-absorbed")?,
        quantum_yield: phi,
        epsilon: eps,
    };
    let r = act::ferrioxalate(&m)?;
    let block = rp::light_block(
        &a.light_name,
        &LightKind::Line { wavelength: wl },
        None,
        &r.photon_flux,
        &format!(
            "photon flux entering the sample from ferrioxalate actinometry at {} nm (Φ: {yield_note})",
            units::sig(wl * 1e9, 5)
        ),
    );
    // No input file: the route names the default folder.
    let dir = a.output.dir(Path::new("ferrioxalate"), "actinometer");
    let json = serde_json::json!({
        "actinometer": "potassium ferrioxalate, Fe(phen)3 2+ read at 510 nm",
        "inputs": m,
        "quantum_yield_source": yield_note,
        "epsilon_source": eps_note,
        "result": r,
        "photon_flux_unit": "einstein/s",
        "units": {
            "inputs.delta_a": "",
            "inputs.path": "m",
            "inputs.v_irradiated": "L",
            "inputs.v_aliquot": "L",
            "inputs.v_total": "L",
            "inputs.time": "s",
            "inputs.wavelength": "m",
            "inputs.fraction_absorbed": "",
            "inputs.quantum_yield": "",
            "inputs.epsilon": units::internal_spelling(Quantity::MolarAbsorption),
            "result.moles": "mol",
            "result.photon_flux": "einstein/s",
            "result.power": "W",
            "result.contributions": "relative (fraction)",
        },
        "light_block": block,
        "cautions": rp::CAUTIONS,
    });
    let js = serde_json::to_string_pretty(&json).map_err(|e| Error::Numerical(e.to_string()))?;
    let folder = Folder::begin(&dir)?;
    write_atomic(&folder.join("result.json"), js.as_bytes())?;
    write_atomic(&folder.join("light.toml"), block.as_bytes())?;
    folder.commit()?;
    if a.output.json {
        outln!("{js}")?;
    } else {
        out!("{}", rp::ferrioxalate_text(&r, &m, &yield_note, &eps_note))?;
        outln!(
            "\nlight block for a network file (also in {}/light.toml):\n",
            dir.display()
        )?;
        out!("{block}")?;
        outln!("\n{}", photoledger::report::caution_line())?;
        outln!("wrote {}/ (result.json, light.toml)", dir.display())?;
    }
    Ok(())
}

fn litres(m: Measured) -> Measured {
    Measured {
        value: m.value * 1000.0,
        sigma: m.sigma * 1000.0,
    }
}

fn network(a: &NetworkFitArgs) -> photoledger::Result<()> {
    let net = load(&a.net)?;
    print_warnings(&net);
    let model = Model::compile(&net);
    let step = net.photo.iter().find(|p| p.name == a.step).ok_or_else(|| {
        Error::Usage(format!(
            "--step \"{}\": no photochemical step of that name; the network has {}",
            a.step,
            net.photo
                .iter()
                .map(|p| format!("\"{}\"", p.name))
                .collect::<Vec<_>>()
                .join(", ")
        ))
    })?;
    let sp = step.absorber;
    let table = photoledger::file::csv::read(&a.data).map_err(|e| Error::Usage(e.to_string()))?;
    let tu = table.units[0].clone().ok_or_else(|| {
        Error::Usage(format!(
            "{}: the time column needs a unit in its header, e.g. \"time (s)\"",
            a.data.display()
        ))
    })?;
    let tf = units::parse(&format!("1 {tu}"), Quantity::Time).map_err(|e| {
        Error::Usage(format!(
            "{}: time column unit: {e}; expected {}",
            a.data.display(),
            Quantity::Time.accepted()
        ))
    })?;
    let cf = match table.units[1].as_deref() {
        None => 1.0,
        Some("%") => 0.01,
        Some(u) => {
            return Err(Error::Usage(format!(
                "{}: the conversion column is a fraction (no unit) or in %, not \"{u}\"",
                a.data.display()
            )));
        }
    };
    let mut data = Vec::new();
    for &(t, c, line) in &table.rows {
        let (t, c) = (t * tf, c * cf);
        // The start of the irradiation (0 s, no conversion), as conversion tables usually begin:
        // it carries nothing to fit and is passed over.
        if t == 0.0 && c == 0.0 {
            continue;
        }
        if t.is_nan() || t <= 0.0 || !(0.0..1.0).contains(&c) {
            return Err(Error::Usage(format!(
                "{}:{line}: need a positive time and a conversion from 0 to below 1 (or 100 %); a first row \
                 0, 0 (the start) is allowed",
                a.data.display()
            )));
        }
        data.push((t, c));
    }
    let fit = act::fit_flux(&model, sp, &data)?;
    let origin = format!(
        "photon flux fitted to the conversion of {} by \"{}\" ({} points, {}){}",
        net.species[sp].name,
        a.step,
        fit.points,
        a.data
            .file_name()
            .map(|f| f.to_string_lossy().to_string())
            .unwrap_or_default(),
        if net.lights.len() > 1 {
            "; all sources scaled by one factor"
        } else {
            ""
        }
    );
    let mut blocks = String::new();
    for (s, src) in net.lights.iter().enumerate() {
        let q = model.source_flux(s) * fit.scale.value;
        let m = Measured {
            value: q,
            sigma: q * fit.scale.relative(),
        };
        blocks.push_str(&rp::light_block_for(src, &m, &origin));
        blocks.push('\n');
    }
    let dir = a.output.dir(&a.net.file, "actinometer");
    let json = serde_json::json!({
        "network": net.about.name,
        "step": a.step,
        "absorber": net.species[sp].name,
        "fit": fit,
        "photon_flux_unit": "einstein/s",
        "light_blocks": blocks,
        "cautions": rp::CAUTIONS,
    });
    let js = serde_json::to_string_pretty(&json).map_err(|e| Error::Numerical(e.to_string()))?;
    let folder = Folder::begin(&dir)?;
    write_atomic(&folder.join("result.json"), js.as_bytes())?;
    write_atomic(&folder.join("light.toml"), blocks.as_bytes())?;
    folder.commit()?;
    if a.output.json {
        outln!("{js}")?;
    } else {
        out!("{}", rp::network_fit_text(&fit, &net.species[sp].name, &a.step))?;
        outln!(
            "\nlight blocks to replace the network's (also in {}/light.toml):\n",
            dir.display()
        )?;
        out!("{blocks}")?;
        outln!("{}", photoledger::report::caution_line())?;
        outln!("wrote {}/ (result.json, light.toml)", dir.display())?;
    }
    Ok(())
}
