//! `photoledger barrier`: the largest barrier crossed in a window (thermal or hot molecule),
//! verdicts on every step of a network, and k(E) tables.

use super::output::{noteln, out, outln};
use photoledger::Error;
use photoledger::barrier::{self, HotLimit};
use photoledger::file::folder::Folder;
use photoledger::file::frequencies;
use photoledger::kinetics;
use photoledger::rates::hot::{HotReaction, rrkm_yields};
use photoledger::rates::{rrkm::Rrkm, wigner::wigner};
use photoledger::report::{barrier as report, write_atomic};
use photoledger::units::display::{self, EnergyUnit};
use photoledger::units::{self, Quantity};
use std::path::PathBuf;

/// Options of `barrier`.
#[derive(clap::Args, Debug)]
pub struct BarrierArgs {
    /// A network file: verdict on every thermal step and rate channel (needs --window).
    pub file: Option<PathBuf>,
    #[command(flatten)]
    pub set: super::SetArgs,
    /// The time available, e.g. "1 h", "10 ps".
    #[arg(long, allow_hyphen_values = true, value_name = "DURATION")]
    pub window: Option<String>,
    /// Temperature for the thermal window, e.g. "298.15 K" or "25 °C".
    #[arg(long, allow_hyphen_values = true, value_name = "T")]
    pub temperature: Option<String>,
    /// Probability of crossing asked for: a fraction (0.5) or a percentage ("50 %").
    #[arg(long, default_value = "0.5", allow_hyphen_values = true)]
    pub probability: String,
    /// Transmission coefficient κ for the thermal window.
    #[arg(long, default_value_t = 1.0, value_parser = super::values::transmission, allow_negative_numbers = true)]
    pub transmission: f64,
    /// Imaginary frequency for a Wigner tunnelling factor in the thermal window, e.g. "1200 cm-1".
    #[arg(long, value_name = "FREQUENCY", allow_hyphen_values = true)]
    pub tunnelling: Option<String>,
    /// Excess energy of the hot molecule above its zero-point level, e.g. "250 kJ/mol".
    #[arg(long, allow_hyphen_values = true, value_name = "E")]
    pub energy: Option<String>,
    /// Frequency file: [reactant] and [transition state] lists in cm-1 (see README).
    #[arg(long, value_name = "FILE")]
    pub frequencies: Option<PathBuf>,
    /// A reaction of the hot molecule (repeatable): "FILE=E0", the transition state's frequency file
    /// (a plain list, or its [transition state] section; its degeneracy line is used) and the
    /// zero-point-corrected barrier, e.g. "ts-close.txt=95 kJ/mol". With --energy and --cooling:
    /// the yield of each channel before cooling and the cooled remainder.
    #[arg(long = "channel", value_name = "FILE=E0")]
    pub channels: Vec<String>,
    /// Cooling time constant of the excess energy, e.g. "10 ps".
    #[arg(long, allow_hyphen_values = true, value_name = "TIME")]
    pub cooling: Option<String>,
    /// Zero-point-corrected barrier E0 for a k(E) table, e.g. "120 kJ/mol".
    #[arg(long, allow_hyphen_values = true, value_name = "E")]
    pub barrier: Option<String>,
    /// Energy range of the k(E) table, e.g. "0 kJ/mol..200 kJ/mol".
    #[arg(long, value_name = "FROM..TO", allow_hyphen_values = true)]
    pub energy_range: Option<String>,
    /// Energy grain of the state counts, e.g. "10 cm-1".
    #[arg(long, default_value = "10 cm-1", allow_hyphen_values = true)]
    pub grain: String,
    /// Rows of the k(E) table (2 to 1,000,000).
    #[arg(long, default_value_t = 400, value_parser = super::values::points, allow_negative_numbers = true)]
    pub points: usize,
    // --out: the folder of the k(E) table and plot (default: the frequency file's name followed
    // by "-barrier"; the other questions write no files) and --json (every question).
    #[command(flatten)]
    pub output: super::Outputs,
}

fn quantity(flag: &str, text: &str, q: Quantity) -> photoledger::Result<f64> {
    let v = units::parse(text, q).map_err(|e| Error::Usage(format!("--{flag}: {e}; expected {}", q.accepted())))?;
    if !v.is_finite() {
        // A finite number whose unit takes it past the largest floating-point number.
        return Err(Error::Usage(format!(
            "--{flag} \"{text}\": too large to compute with (beyond 1.8e308 in SI units); expected {}",
            q.accepted()
        )));
    }
    Ok(v)
}

fn probability(text: &str) -> photoledger::Result<f64> {
    match units::fraction(text) {
        Ok(v) if v > 0.0 && v < 1.0 => Ok(v),
        _ => Err(Error::Usage(format!(
            "--probability \"{text}\": expected a fraction strictly between 0 and 1 (0.5) or a percentage (\"50 %\")"
        ))),
    }
}

fn need<'a>(v: &'a Option<String>, flag: &str, form: &str) -> photoledger::Result<&'a str> {
    v.as_deref()
        .ok_or_else(|| Error::Usage(format!("barrier {form} needs --{flag}; see photoledger barrier --help")))
}

pub fn run(a: &BarrierArgs) -> photoledger::Result<()> {
    let p = probability(&a.probability)?;
    if let Some(file) = &a.file {
        return network(a, file, p);
    }
    if a.barrier.is_some() || a.energy_range.is_some() {
        return k_of_e(a);
    }
    if a.energy.is_some() && !a.channels.is_empty() {
        return hot_channels(a);
    }
    if a.energy.is_some() {
        return hot(a, p);
    }
    if a.window.is_some() || a.temperature.is_some() {
        return thermal(a, p);
    }
    Err(Error::Usage(
        "barrier needs one of: --window D --temperature T (thermal); --energy E --frequencies FILE \
         (--cooling TIME or --window D) (hot molecule); FILE --window D (a network); \
         --frequencies FILE --barrier E --energy-range \"A..B\" (k(E) table)"
            .into(),
    ))
}

fn thermal(a: &BarrierArgs, p: f64) -> photoledger::Result<()> {
    let window = quantity("window", need(&a.window, "window", "(thermal)")?, Quantity::Time)?;
    let t = quantity(
        "temperature",
        need(&a.temperature, "temperature", "(thermal)")?,
        Quantity::Temperature,
    )?;
    let mut kappa = a.transmission;
    let mut note = String::new();
    if let Some(f) = &a.tunnelling {
        let nu = quantity("tunnelling", f, Quantity::MolarEnergy)?;
        let w = wigner(nu, t);
        if !w.is_finite() {
            return Err(Error::Usage(format!(
                "--tunnelling \"{f}\": the Wigner factor 1 + (hν/kT)²/24 at {t} K is not finite; \
                 the correction is meant for hν/kT of a few at most"
            )));
        }
        kappa *= w;
        note = format!(", Wigner tunnelling factor {w:.4} for {f}");
    }
    let g = barrier::thermal_window(window, t, p, kappa)?;
    let k = barrier::eyring_rate(g, t, kappa);
    if a.output.json {
        return super::print_json(&photoledger::report::barrier_json::thermal(window, t, p, kappa, g, k));
    }
    outln!(
        "largest barrier crossed with {:.0} % probability within {} at {t:.2} K",
        p * 100.0,
        report::duration(window)
    )?;
    outln!(
        "  ΔG‡ = {} (Eyring, unimolecular, κ = {kappa:.4}{note})",
        report::energy(g, EnergyUnit::default())
    )?;
    outln!(
        "  rate at that barrier {}, half-life {}",
        display::format_rate_constant(k, 1),
        report::duration(std::f64::consts::LN_2 / k)
    )?;
    Ok(())
}

fn read_pair(path: &std::path::Path) -> photoledger::Result<frequencies::FrequencyFile> {
    let f = frequencies::read(path)?;
    if f.ts.is_none() {
        return Err(Error::invalid(
            photoledger::Diagnostic::error("transition state", "the file has no [transition state] section")
                .in_file(path)
                .with_help("add [transition state] with its frequencies in cm-1, the imaginary one as -1250 or 1250i"),
        ));
    }
    let ts = f.ts.as_ref().map_or(0, |t| t.vibrations.len());
    if ts + 1 != f.reactant.vibrations.len() {
        noteln!(
            "warning: {}: the reactant has {} real frequencies and the transition state {ts}; usually the \
             transition state has one fewer (the reaction coordinate)",
            path.display(),
            f.reactant.vibrations.len()
        );
    }
    Ok(f)
}

fn hot(a: &BarrierArgs, p: f64) -> photoledger::Result<()> {
    let e = quantity(
        "energy",
        need(&a.energy, "energy", "(hot molecule)")?,
        Quantity::MolarEnergy,
    )?;
    let path = a.frequencies.as_ref().ok_or_else(|| {
        Error::Usage("barrier --energy needs --frequencies FILE (reactant and transition state)".into())
    })?;
    let grain = quantity("grain", &a.grain, Quantity::MolarEnergy)?;
    let limit = match (&a.cooling, &a.window) {
        (Some(c), _) => HotLimit::Cooling(quantity("cooling", c, Quantity::Time)?),
        (None, Some(w)) => HotLimit::Window(quantity("window", w, Quantity::Time)?),
        (None, None) => {
            return Err(Error::Usage(
                "barrier --energy needs --cooling TIME (exponential cooling) or --window DURATION (no cooling)".into(),
            ));
        }
    };
    let f = read_pair(path)?;
    // Energies are shown in the family the command line wrote --energy in.
    let family = a.energy.as_deref().and_then(EnergyUnit::of_text).unwrap_or_default();
    let ts = f.ts.clone().unwrap_or_default();
    let w = barrier::hot_window(&f.reactant, &ts, f.degeneracy, e, limit, p, grain)?;
    if a.output.json {
        let limit = match limit {
            HotLimit::Cooling(t) => ("cooling time constant", t),
            HotLimit::Window(t) => ("window at constant energy", t),
        };
        return super::print_json(&photoledger::report::barrier_json::hot(e, limit, p, &w, f.degeneracy));
    }
    let how = match limit {
        HotLimit::Cooling(t) => format!("before cooling (exponential, τ = {})", report::duration(t)),
        HotLimit::Window(t) => format!("within {} at constant energy", report::duration(t)),
    };
    outln!(
        "hot molecule with {} above its zero-point level, crossing with {:.0} % probability {how}",
        report::energy(e, family),
        p * 100.0
    )?;
    match w.barrier {
        Some(b) => {
            outln!(
                "  largest zero-point-corrected barrier E0 = {}",
                report::energy(b, family)
            )?;
            if let Some(k) = w.rate_at_barrier {
                outln!("  k(E) at that barrier {}", display::format_rate_constant(k, 1))?;
            }
        }
        None => outln!(
            "  no barrier: even E0 = 0 gives only {:.2} % (RRKM, σ = {})",
            w.probability_at_zero * 100.0,
            f.degeneracy
        )?,
    }
    outln!(
        "  RRKM with Beyer–Swinehart counts on a {} grain, σ = {}, {} reactant and {} transition-state vibrations",
        a.grain,
        f.degeneracy,
        f.reactant.vibrations.len(),
        ts.vibrations.len()
    )?;
    Ok(())
}

/// Yields of several competing reactions of a hot molecule before it cools.
fn hot_channels(a: &BarrierArgs) -> photoledger::Result<()> {
    let e = quantity(
        "energy",
        need(&a.energy, "energy", "(hot molecule)")?,
        Quantity::MolarEnergy,
    )?;
    let path = a.frequencies.as_ref().ok_or_else(|| {
        Error::Usage("barrier --channel needs --frequencies FILE (the hot molecule's own, [reactant])".into())
    })?;
    let cooling = quantity(
        "cooling",
        need(&a.cooling, "cooling", "--channel (yields before cooling)")?,
        Quantity::Time,
    )?;
    let grain = quantity("grain", &a.grain, Quantity::MolarEnergy)?;
    let text = photoledger::file::read_text(path)?;
    let (reactant, _) = frequencies::parse_role(path, &text, frequencies::Role::Reactant)?;
    let mut specs = Vec::new();
    for c in &a.channels {
        let (file, e0) = c.rsplit_once('=').ok_or_else(|| {
            Error::Usage(format!(
                "--channel \"{c}\": write FILE=E0, e.g. \"ts-close.txt=95 kJ/mol\""
            ))
        })?;
        let file = PathBuf::from(file.trim());
        let e0 = quantity("channel", e0.trim(), Quantity::MolarEnergy)?;
        if e0 < 0.0 {
            return Err(Error::Usage(format!(
                "--channel \"{c}\": the zero-point-corrected barrier must be zero or more"
            )));
        }
        let text = photoledger::file::read_text(&file)?;
        let (ts, d) = frequencies::parse_role(&file, &text, frequencies::Role::TransitionState)?;
        specs.push((file, ts, e0, d.unwrap_or(1.0)));
    }
    let reactions: Vec<HotReaction> = specs
        .iter()
        .map(|(_, ts, e0, d)| HotReaction {
            ts,
            barrier: *e0,
            degeneracy: *d,
        })
        .collect();
    let y = rrkm_yields(&reactant, &reactions, e, Some(cooling), grain)
        .map_err(|m| Error::Usage(format!("--grain/--energy: {m}")))?;
    let rows: Vec<report::HotRow> = specs
        .iter()
        .zip(&y.probabilities)
        .map(|((file, ts, e0, d), p)| report::HotRow {
            name: file.display().to_string(),
            barrier: *e0,
            degeneracy: *d,
            rate_at_start: Rrkm::new(&reactant, ts, *e0, *d, grain, e + grain)
                .ok()
                .and_then(|m| m.rate(e)),
            probability: *p,
        })
        .collect();
    if a.output.json {
        return super::print_json(&photoledger::report::barrier_json::hot_channels(
            &rows, y.cooled, e, cooling,
        ));
    }
    let family = a.energy.as_deref().and_then(EnergyUnit::of_text).unwrap_or_default();
    out!(
        "{}",
        report::hot_yields_text(&rows, y.cooled, e, cooling, &a.grain, family)
    )?;
    Ok(())
}

fn k_of_e(a: &BarrierArgs) -> photoledger::Result<()> {
    let path = a
        .frequencies
        .as_ref()
        .ok_or_else(|| Error::Usage("barrier --barrier needs --frequencies FILE".into()))?;
    let e0 = quantity(
        "barrier",
        need(&a.barrier, "barrier", "(k(E) table)")?,
        Quantity::MolarEnergy,
    )?;
    let range = need(&a.energy_range, "energy-range", "(k(E) table)")?;
    let (lo, hi) = range.split_once("..").ok_or_else(|| {
        Error::Usage(format!(
            "--energy-range \"{range}\": write FROM..TO, e.g. \"0 kJ/mol..200 kJ/mol\""
        ))
    })?;
    let lo = quantity("energy-range", lo.trim(), Quantity::MolarEnergy)?;
    let hi = quantity("energy-range", hi.trim(), Quantity::MolarEnergy)?;
    if !(hi > lo && lo >= 0.0) {
        return Err(Error::Usage(format!(
            "--energy-range \"{range}\": the range must run upwards from zero or more"
        )));
    }
    let grain = quantity("grain", &a.grain, Quantity::MolarEnergy)?;
    let f = read_pair(path)?;
    let ts = f.ts.clone().unwrap_or_default();
    let step = (hi - lo) / (a.points.max(2) - 1) as f64;
    let rrkm = Rrkm::new(&f.reactant, &ts, e0, f.degeneracy, grain, hi + step + grain)
        .map_err(|m| Error::Usage(format!("--grain/--energy-range: {m}")))?;
    let rows = barrier::k_table(&rrkm, lo, hi, a.points)?;
    let family = a.barrier.as_deref().and_then(EnergyUnit::of_text).unwrap_or_default();
    let dir = a.output.dir(path, "barrier");
    let folder = Folder::begin(&dir)?;
    write_atomic(&folder.join("k_of_e.csv"), report::k_csv(&rows).as_bytes())?;
    let title = format!("RRKM k(E), E0 = {}", a.barrier.as_deref().unwrap_or(""));
    write_atomic(
        &folder.join("k_of_e.svg"),
        report::k_svg(&rows, &title, family).as_bytes(),
    )?;
    let files = ["k_of_e.csv", "k_of_e.svg"].map(String::from);
    let json = photoledger::report::barrier_json::k_of_e(e0, &rows, &files);
    let text = serde_json::to_string_pretty(&json).map_err(|e| Error::Numerical(e.to_string()))?;
    write_atomic(&folder.join("summary.json"), text.as_bytes())?;
    folder.commit()?;
    if a.output.json {
        return outln!("{text}");
    }
    outln!(
        "k(E) for E0 = {} at {} energies from {} to {} (grain {}, σ = {}); largest frequency rounding {:.3} cm-1",
        report::energy(e0, family),
        rows.len(),
        report::energy(lo, family),
        report::energy(hi, family),
        a.grain,
        f.degeneracy,
        rrkm.reactant.rounding.max(rrkm.ts.rounding) / units::parse("1 cm-1", Quantity::MolarEnergy).unwrap_or(1.0)
    )?;
    outln!("wrote {}/ (k_of_e.csv, k_of_e.svg, summary.json)", dir.display())?;
    Ok(())
}

fn network(a: &BarrierArgs, file: &std::path::Path, p: f64) -> photoledger::Result<()> {
    let window = quantity("window", need(&a.window, "window", "FILE")?, Quantity::Time)?;
    let args = super::NetworkArgs::of(file, &a.set);
    let net = super::load(&args)?;
    super::print_warnings(&net);
    let mut rows = barrier::network_verdicts(&net, window, p, None)?;
    if rows.iter().any(|r| r.outcome() == barrier::Outcome::Undetermined) {
        // A reactant starts at 0 M: run the kinetics over the window (linear and logarithmic
        // output grids together, so both early and late peaks are seen) and judge those steps
        // at the concentrations reached.
        let model = photoledger::model::Model::compile(&net);
        let linear = kinetics::Options::until(window);
        let log = kinetics::Options {
            log_time: true,
            ..linear.clone()
        };
        let opts = kinetics::Options {
            times: kinetics::output_times(&linear, 0.0)
                .into_iter()
                .chain(kinetics::output_times(&log, 0.0))
                .collect(),
            ..linear
        };
        match kinetics::simulate(&model, &opts, &mut |_| {}) {
            Ok(tr) => rows = barrier::network_verdicts(&net, window, p, Some(&tr))?,
            Err(e) => noteln!(
                "warning: the kinetics over the window failed ({e}); steps whose reactants start at 0 M are left undetermined"
            ),
        }
    }
    let hot = barrier::hot_verdicts(&net);
    if a.output.json {
        let t = net.conditions.temperature;
        return super::print_json(&photoledger::report::barrier_json::verdicts(&rows, &hot, window, p, t));
    }
    out!(
        "{}",
        report::verdicts_text(&rows, window, p, net.conditions.temperature, net.energy_unit)
    )?;
    out!("{}", report::hot_verdicts_text(&hot, net.energy_unit))?;
    Ok(())
}
