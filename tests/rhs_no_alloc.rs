//! The compiled right-hand side must not allocate per call (the project's requirement, and
//! common practice for real-time numerical code): `Rhs::eval` and `Rhs::jac_vec` run inside
//! the integrator's inner loop, so after a warm-up they must do all their work in buffers
//! prepared by `Rhs::new`, including re-solving the transient collapse whenever a quencher
//! concentration changes.
//!
//! A counting global allocator wraps the system allocator. It only counts on a thread that
//! has switched counting on (a thread-local flag), so the test harness's other threads and
//! the other tests of this binary cannot disturb the counts.

use photoledger::Overrides;
use photoledger::model::Model;
use photoledger::model::rhs::Rhs;
use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};

struct Counting;

static ALLOCATIONS: AtomicUsize = AtomicUsize::new(0);

thread_local! {
    static COUNTING: Cell<bool> = const { Cell::new(false) };
}

fn note() {
    if COUNTING.try_with(Cell::get).unwrap_or(false) {
        ALLOCATIONS.fetch_add(1, Ordering::Relaxed);
    }
}

// SAFETY: every call is forwarded unchanged to the system allocator; the counter only reads
// a thread-local `Cell<bool>` (const-initialised, no destructor, so it never allocates).
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        note();
        unsafe { System.alloc(layout) }
    }
    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        note();
        unsafe { System.alloc_zeroed(layout) }
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        note();
        unsafe { System.realloc(ptr, layout, new_size) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) }
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

/// Allocations made by `f` on this thread.
fn allocations_in(f: impl FnOnce()) -> usize {
    // Only one counting section runs at a time per thread, but other threads of this binary
    // may count too: serialise them so the shared counter is read cleanly.
    static LOCK: std::sync::Mutex<()> = std::sync::Mutex::new(());
    let _guard = LOCK.lock().unwrap_or_else(|e| e.into_inner());
    let before = ALLOCATIONS.load(Ordering::Relaxed);
    COUNTING.with(|c| c.set(true));
    f();
    COUNTING.with(|c| c.set(false));
    ALLOCATIONS.load(Ordering::Relaxed) - before
}

fn model_from(path: &Path, text: String) -> Model {
    let loaded = photoledger::file::parse_text(path, text).unwrap_or_else(|e| panic!("{}: {e:?}", path.display()));
    let net = photoledger::network::build(&loaded, &Overrides::none())
        .unwrap_or_else(|e| panic!("{}: {e:?}", path.display()));
    Model::compile(&net)
}

/// The state at call `i`: every concentration (quenchers included) scaled differently, and
/// some photons already in the ledger.
fn state(rhs: &Rhs, i: usize, y: &mut [f64]) {
    let ns = rhs.model.n_species();
    for (j, v) in y.iter_mut().enumerate() {
        *v = if j < ns {
            let c0 = rhs.model.initial[j].max(1e-6);
            c0 * (1.0 + 0.013 * i as f64 + 0.001 * j as f64)
        } else {
            1e-7 * (i + j) as f64
        };
    }
}

/// Allocations over 100 calls of `eval`, then of `jac_vec`, after a warm-up; the state,
/// and so every quencher concentration, changes on every call.
fn counts(model: &Model) -> (usize, usize) {
    let rhs = Rhs::new(model);
    let n = rhs.layout.len();
    let mut y = vec![0.0; n];
    let mut v = vec![0.0; n];
    let mut dy = vec![0.0; n];
    let mut jv = vec![0.0; n];
    for (j, x) in v.iter_mut().enumerate() {
        *x = 1e-4 * (1.0 + (j % 7) as f64);
    }
    for i in 0..3 {
        state(&rhs, 1000 + i, &mut y);
        rhs.eval(&y, &mut dy);
        rhs.jac_vec(&y, &v, &mut jv);
    }
    let eval = allocations_in(|| {
        for i in 0..100 {
            state(&rhs, i, &mut y);
            rhs.eval(&y, &mut dy);
        }
    });
    let jac = allocations_in(|| {
        for i in 0..100 {
            state(&rhs, i, &mut y);
            v[i % n] += 1e-5;
            rhs.jac_vec(&y, &v, &mut jv);
        }
    });
    assert!(dy.iter().chain(&jv).all(|x| x.is_finite()));
    (eval, jac)
}

/// A network whose transient collapse changes with two quenchers: S1 is quenched by Q1 into
/// T1 (enhanced intersystem crossing), T1 is quenched by Q2 back to A, and T1 can also return
/// to S1, so the chain has a cycle.
const QUENCHED: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "1000 L/(mol cm)" }
[[species]]
name = "B"
[[species]]
name = "C"
[[species]]
name = "Q1"
initial = "2 mM"
[[species]]
name = "Q2"
initial = "0.5 mM"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "1 mW"
[[photo]]
absorber = "A"
excites = "S1"
[[transient]]
name = "S1"
channels = [
  { to = "B", rate = { k = "1e8 /s" } },
  { to = "A", rate = { k = "2e8 /s" } },
  { to = "T1", quencher = "Q1", rate = { k = "1e10 /(M s)" } },
]
[[transient]]
name = "T1"
channels = [
  { to = "C", rate = { k = "1e5 /s" } },
  { to = "S1", rate = { k = "1e4 /s" } },
  { to = "A", quencher = "Q2", rate = { k = "2e9 /(M s)" } },
]
[[thermal]]
equation = "C -> A"
rate = { k = "1e-3 /s" }
"#;

#[test]
fn eval_and_jac_vec_do_not_allocate() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("bundled networks")
        .map(|e| e.expect("directory entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    files.sort();
    assert!(files.len() >= 3, "bundled networks missing: {files:?}");

    let mut cases: Vec<(String, Model)> = files
        .iter()
        .map(|p| {
            let text = std::fs::read_to_string(p).expect("readable network");
            let name = p.file_name().map(|f| f.to_string_lossy().into_owned());
            (name.unwrap_or_default(), model_from(p, text))
        })
        .collect();
    cases.push((
        "two quenchers".into(),
        model_from(Path::new("t.toml"), QUENCHED.to_string()),
    ));
    let size = photoledger::bench::Size {
        species: 60,
        steps: 120,
        absorbers: 6,
    };
    cases.push((
        "generated".into(),
        model_from(Path::new("generated.toml"), photoledger::bench::large_network(size, 7)),
    ));

    // The quenched networks must really re-solve the collapse on every call, or the counts
    // below would prove nothing about it.
    let mut quenched = 0;
    for (name, m) in &cases {
        if m.collapse.quenchers.is_empty() {
            continue;
        }
        quenched += 1;
        let rhs = Rhs::new(m);
        let n = rhs.layout.len();
        let (mut y, mut d0, mut d1) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
        state(&rhs, 0, &mut y);
        rhs.eval(&y, &mut d0);
        for &q in &m.collapse.quenchers {
            y[q] *= 10.0;
        }
        rhs.eval(&y, &mut d1);
        let outcomes = rhs.layout.outcome(0)..n;
        assert!(
            outcomes.clone().any(|o| d0[o] != d1[o]),
            "{name}: outcome rates do not follow the quencher"
        );
    }
    assert!(quenched >= 2, "only {quenched} networks with a quencher");

    let mut report = Vec::new();
    for (name, m) in &cases {
        let (eval, jac) = counts(m);
        if eval != 0 || jac != 0 {
            report.push(format!("{name}: {eval} in eval, {jac} in jac_vec"));
        }
    }
    assert!(report.is_empty(), "allocations over 100 calls:\n{}", report.join("\n"));

    // The counter itself works: a deliberate allocation is seen.
    let seen = allocations_in(|| drop(std::hint::black_box(vec![1u8; 16])));
    assert!(seen >= 1, "the counting allocator saw nothing");
}
