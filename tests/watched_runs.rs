//! A run watched at its outputs (`kinetics::simulate_watching`) stops at the first output the
//! watch says enough at, and up to there is the unwatched run, bit for bit: the same integrator
//! takes the same steps. Robertson's problem (Robertson 1966, as set in Hairer & Wanner,
//! "Solving Ordinary Differential Equations II", 2nd ed., 1996, §IV.1), whose first species falls
//! from 1 to about 0.72 by 40 s.

use photoledger::file::parse_text;
use photoledger::kinetics::{self, Method, Options, Schedule, Stop};
use photoledger::model::Model;
use photoledger::network::{Overrides, build};
use std::path::Path;

mod common;

fn robertson() -> Model {
    let l = parse_text(Path::new("test.toml"), common::ROBERTSON.to_string()).expect("parses");
    Model::compile(&build(&l, &Overrides::none()).expect("builds"))
}

fn both(method: Method, schedule: Option<Schedule>) {
    let model = robertson();
    let mut opts = Options::until(40.0);
    opts.method = method;
    opts.outputs = 200;
    opts.schedule = schedule;
    let y0 = photoledger::model::rhs::Rhs::new(&model).initial_state();
    let plain = kinetics::simulate_from(&model, 0.0, &y0, &opts, &mut |_| {}).expect("integrates");
    let level = 0.9;
    let first = plain
        .states
        .iter()
        .position(|s| s[0] < level)
        .expect("falls below 0.9 by 40 s");
    let mut seen = 0;
    let watched = kinetics::simulate_watching(&model, 0.0, &y0, &opts, &mut |_| {}, &mut |_, s| {
        seen += 1;
        s[0] < level
    })
    .expect("integrates");
    assert_eq!(watched.stop, Stop::Enough(plain.times[first]), "{method:?}");
    assert_eq!(watched.times, plain.times[..=first], "{method:?}");
    assert_eq!(watched.states, plain.states[..=first], "{method:?}");
    assert_eq!(seen, first, "the watch sees every output after the start once");
    assert_eq!(watched.segments.last().map(|s| s.to), Some(plain.times[first]));
}

#[test]
fn a_watched_bdf_run_is_the_plain_run_cut_at_the_first_output_the_watch_takes() {
    both(Method::Bdf, None);
}

#[test]
fn a_watched_explicit_run_is_the_plain_run_cut_there_too() {
    both(Method::Dop853, None);
}

#[test]
fn a_watched_run_under_a_light_schedule_stops_in_the_piece_it_reached() {
    // Robertson has no light; the schedule only splits the run into pieces, each its own
    // integration, and the watch must stop the pieces after the one it fired in.
    both(Method::Bdf, Some(Schedule { period: 10.0, lit: 4.0 }));
}
