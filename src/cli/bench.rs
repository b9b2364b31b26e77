//! `photoledger bench [FILE...]`: time the kinetics on networks and on a generated large one.

use super::load;
use super::output::outln;
use photoledger::bench::{Size, large_network};
use photoledger::kinetics::{self, Method, Options};
use photoledger::model::Model;
use std::path::PathBuf;
use std::time::Instant;

/// Options of `bench`.
#[derive(clap::Args, Debug)]
pub struct BenchArgs {
    /// Network files to time (each for --until); the generated network is always added.
    pub files: Vec<PathBuf>,
    /// Overrides applied to every network file timed (not to the generated network).
    #[command(flatten)]
    pub set: super::SetArgs,
    /// Print the timings as JSON (wall times in seconds, counts as numbers) instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Simulated time for each run.
    #[arg(long, allow_hyphen_values = true, default_value = "1 h")]
    pub until: String,
    /// Species of the generated network.
    #[arg(long, default_value_t = 1000)]
    pub species: usize,
    /// Thermal steps of the generated network.
    #[arg(long, default_value_t = 5000)]
    pub steps: usize,
    /// Absorbing species of the generated network.
    #[arg(long, default_value_t = 50)]
    pub absorbers: usize,
    /// Also time the generated network with dense linear algebra.
    #[arg(long)]
    pub dense_too: bool,
    /// Instead, time the absorbing-chain analysis of a generated sparse chain of this many states.
    #[arg(long, value_name = "STATES")]
    pub chain_states: Option<usize>,
    /// Instead, write the generated network (with --species, --steps, --absorbers) to this
    /// network file, to run other commands on it (e.g. `ledger`).
    #[arg(long, value_name = "FILE")]
    pub write: Option<PathBuf>,
}

/// Time `ledger`'s analysis on a generated chain: without, then with, the photon-count distribution.
fn chain_bench(states: usize, json: bool) -> photoledger::Result<()> {
    use photoledger::chain::{Options, analyse, generated};
    let start = Instant::now();
    let c = generated(states);
    let built = start.elapsed().as_secs_f64();
    let mut pi = vec![0.0; c.states.len()];
    pi[0] = 1.0;
    let t0 = Instant::now();
    let a = analyse(
        &c,
        &pi,
        &Options {
            distribution: false,
            ..Options::default()
        },
    )?;
    let moments = t0.elapsed().as_secs_f64();
    let t1 = Instant::now();
    let d = analyse(&c, &pi, &Options::default())?;
    let full = t1.elapsed().as_secs_f64();
    let n = d.distribution.as_ref().map_or(0, |x| x.p.len());
    if json {
        return super::print_json(&serde_json::json!({
            "generated_chain": {"states": c.states.len(), "moves": c.moves.len()},
            "build_s": built,
            "moments_s": moments,
            "with_distribution_s": full,
            "distribution_points": n,
            "mean_photons": a.photons_total,
            "yields": a.yields,
        }));
    }
    outln!(
        "generated chain: {} states, {} moves (built in {built:.3} s)",
        c.states.len(),
        c.moves.len()
    )?;
    outln!("  yields, visits, photon mean and variance, mean time (one LU, four solves): {moments:.3} s")?;
    outln!(
        "  the same plus P(N = n) for n = 0..{} (second LU, one solve per n): {full:.3} s",
        n.saturating_sub(1)
    )?;
    outln!("  mean photons {:.4}, yields {:?}", a.photons_total, a.yields)?;
    Ok(())
}

struct Row {
    name: String,
    species: usize,
    reactions: usize,
    bins: usize,
    method: String,
    steps: usize,
    rhs: usize,
    jv: usize,
    setups: usize,
    kept: usize,
    jacobians: usize,
    newton: usize,
    newton_failures: usize,
    seconds: f64,
}

impl Row {
    /// The row as JSON: counts as numbers, the wall time in seconds.
    fn json(&self) -> serde_json::Value {
        serde_json::json!({
            "network": self.name,
            "species": self.species,
            "reactions": self.reactions,
            "wavelength_bins": self.bins,
            "method": self.method,
            "steps": self.steps,
            "rhs_evaluations": self.rhs,
            "jacobian_vector_products": self.jv,
            "jacobian_evaluations": self.jacobians,
            "lu_factorisations": self.setups,
            "lu_kept": self.kept,
            "newton_iterations": self.newton,
            "newton_failures": self.newton_failures,
            "wall_s": self.seconds,
        })
    }
}

fn time(name: &str, model: &Model, until: f64, sparse: Option<bool>) -> photoledger::Result<Row> {
    let mut opts = Options::until(until);
    opts.method = Method::Bdf;
    opts.sparse = sparse;
    let start = Instant::now();
    let tr = kinetics::simulate(model, &opts, &mut |_| {})?;
    let seconds = start.elapsed().as_secs_f64();
    Ok(Row {
        name: name.to_string(),
        species: model.n_species(),
        reactions: model.reactions.len(),
        bins: model.bins.len(),
        method: format!("BDF {}", if tr.sparse { "sparse" } else { "dense" }),
        steps: tr.counts.steps,
        rhs: tr.counts.rhs,
        jv: tr.counts.jacobian_products,
        setups: tr.counts.jacobian_setups,
        kept: tr.counts.lu_kept,
        jacobians: tr.counts.jacobians,
        newton: tr.counts.newton_iterations,
        newton_failures: tr.counts.newton_failures,
        seconds,
    })
}

pub fn run(a: &BenchArgs) -> photoledger::Result<()> {
    if let Some(n) = a.chain_states {
        return chain_bench(n, a.json);
    }
    let size = Size {
        species: a.species.max(2),
        steps: a.steps,
        absorbers: a.absorbers.min(a.species),
    };
    let text = large_network(size, 2026);
    if let Some(path) = &a.write {
        std::fs::write(path, &text).map_err(|source| photoledger::Error::Io {
            path: path.clone(),
            source,
        })?;
        if a.json {
            return super::print_json(&serde_json::json!({
                "file": path.display().to_string(),
                "species": size.species,
                "thermal_steps": size.steps,
                "absorbers": size.absorbers,
            }));
        }
        return outln!(
            "wrote the generated network ({} species, {} thermal steps, {} absorbers) to {}",
            size.species,
            size.steps,
            size.absorbers,
            path.display()
        );
    }
    let until = super::values::duration("until", &a.until)?;
    let mut rows = Vec::new();
    for f in &a.files {
        let net = load(&super::NetworkArgs::of(f, &a.set))?;
        let model = Model::compile(&net);
        rows.push(time(&f.display().to_string(), &model, until, None)?);
    }
    let loaded = photoledger::file::parse_text(std::path::Path::new("generated.toml"), text)?;
    let net = photoledger::network::build(&loaded, &photoledger::Overrides::none())?;
    let model = Model::compile(&net);
    let name = format!("generated {}×{}", size.species, size.steps);
    rows.push(time(&name, &model, until, Some(true))?);
    if a.dense_too {
        rows.push(time(&name, &model, until, Some(false))?);
    }
    if a.json {
        let runs: Vec<serde_json::Value> = rows.iter().map(Row::json).collect();
        return super::print_json(&serde_json::json!({ "until_s": until, "runs": runs }));
    }
    outln!(
        "{:<36} {:>8} {:>9} {:>6} {:<11} {:>7} {:>8} {:>8} {:>7} {:>7} {:>6} {:>8} {:>7} {:>10}",
        "network",
        "species",
        "reactions",
        "bins",
        "method",
        "steps",
        "RHS",
        "J·v",
        "J",
        "LU",
        "kept",
        "Newton",
        "failed",
        "wall (s)"
    )?;
    for r in rows {
        outln!(
            "{:<36} {:>8} {:>9} {:>6} {:<11} {:>7} {:>8} {:>8} {:>7} {:>7} {:>6} {:>8} {:>7} {:>10.3}",
            r.name,
            r.species,
            r.reactions,
            r.bins,
            r.method,
            r.steps,
            r.rhs,
            r.jv,
            r.jacobians,
            r.setups,
            r.kept,
            r.newton,
            r.newton_failures,
            r.seconds
        )?;
    }
    Ok(())
}
