//! Writing one parameter into a built network and recomputing what depends on it: rate
//! constants (the law's own, or every one after a temperature change), a light's photon bins
//! (and a sunlit light's area), and the starting energy and yields of hot ground states whose
//! energy is that of the absorbed photons. Each write checks its value first and commits only
//! when every derived number is finite, so a refused value leaves the network as it was.

use super::super::{Branching, Network, Target};
use super::{ConditionField, Key, LightField, RateAt, RateField, constant, law_at};
use crate::light::{Intensity, LightKind, LightSource};
use crate::rates::RateLaw;
use crate::rates::hot::{HotReaction, rrkm_yields};

/// Write `value` at `key` into `net`. The message says what is wrong with the value without
/// naming it or the key (the caller puts the value first, as the user wrote it or as a number).
pub(super) fn write(net: &mut Network, key: Key, value: f64) -> Result<(), String> {
    if !value.is_finite() {
        return Err("is not a finite number".into());
    }
    let positive = |what: &str| {
        if value > 0.0 {
            Ok(())
        } else {
            Err(format!("must be positive ({what})"))
        }
    };
    let non_negative = || {
        if value >= 0.0 {
            Ok(())
        } else {
            Err("is negative".to_string())
        }
    };
    let fraction = || {
        if (0.0..=1.0).contains(&value) {
            Ok(())
        } else {
            Err("is not a number in [0, 1]".to_string())
        }
    };
    match key {
        Key::Condition(f) => match f {
            ConditionField::Temperature => {
                positive("a temperature")?;
                temperature(net, value)
            }
            ConditionField::Volume => {
                positive("a volume")?;
                net.conditions.volume = value;
                Ok(())
            }
            ConditionField::PathLength => {
                positive("a path length")?;
                net.conditions.path_length = value;
                Ok(())
            }
            ConditionField::IrradiatedArea => {
                positive("an area")?;
                let mut lights = net.lights.clone();
                for l in &mut lights {
                    if let LightKind::Sun { scale, .. } = l.kind {
                        *l = rebuilt(l, LightKind::Sun { scale, area: value }, l.intensity);
                    }
                }
                commit_lights(net, lights)?;
                net.conditions.irradiated_area = Some(value);
                Ok(())
            }
            ConditionField::Background => {
                non_negative()?;
                net.conditions.background = constant(value);
                resample_lights(net);
                Ok(())
            }
        },
        Key::Initial(i) => {
            non_negative()?;
            net.species[i].initial = value;
            Ok(())
        }
        Key::Light { light, field } => {
            let l = &net.lights[light];
            let (kind, intensity) = match (field, l.kind.clone()) {
                (LightField::Power, k) => {
                    non_negative()?;
                    (k, Some(Intensity::Power(value)))
                }
                (LightField::PhotonFlux, k) => {
                    non_negative()?;
                    (k, Some(Intensity::PhotonFlux(value)))
                }
                (LightField::Wavelength, LightKind::Line { .. }) => {
                    positive("a wavelength")?;
                    (LightKind::Line { wavelength: value }, l.intensity)
                }
                (LightField::Centre, LightKind::Band { fwhm, .. }) => {
                    positive("a wavelength")?;
                    (LightKind::Band { centre: value, fwhm }, l.intensity)
                }
                (LightField::Fwhm, LightKind::Band { centre, .. }) => {
                    positive("a band width")?;
                    (LightKind::Band { centre, fwhm: value }, l.intensity)
                }
                (LightField::Scale, LightKind::Sun { area, .. }) => {
                    non_negative()?;
                    (LightKind::Sun { scale: value, area }, None)
                }
                (f, k) => return Err(format!("does not apply: {f:?} is not a field of a light of kind {k:?}")),
            };
            let mut lights = net.lights.clone();
            lights[light] = rebuilt(&lights[light], kind, intensity);
            commit_lights(net, lights)
        }
        Key::Efficiency(_) if value == 0.0 => Err("must lie in (0, 1] (an efficiency of zero is no step)".into()),
        Key::QuantumYield(i) | Key::Efficiency(i) => {
            fraction()?;
            let old = std::mem::replace(&mut net.photo[i].quantum_yield, constant(value));
            let old_lights = net.lights.clone();
            resample_lights(net);
            let result = yield_sum(net, net.photo[i].absorber).and_then(|()| hot(net));
            if result.is_err() {
                net.photo[i].quantum_yield = old;
                net.lights = old_lights;
            }
            result
        }
        Key::Fraction { transient, channel } => {
            fraction()?;
            let fixed: f64 = net.transients[transient]
                .channels
                .iter()
                .enumerate()
                .filter(|(j, _)| *j != channel)
                .filter_map(|(_, c)| c.branching.fixed_share())
                .sum::<f64>()
                + value;
            if fixed > 1.0 + 1e-9 {
                return Err(format!(
                    "would make the transient's fixed fractions sum to {fixed:.6}, above 1"
                ));
            }
            net.transients[transient].channels[channel].branching = Branching::Fraction(value);
            Ok(())
        }
        Key::Rate { at, field } => {
            let t = net.conditions.temperature;
            let (law, order, _) = law_at(net, at);
            let law = new_law(law, field, value)?;
            let k = law.rate_constant(t, order);
            if !(k.is_finite() && k >= 0.0) {
                return Err(format!("gives a rate constant of {k} at {t} K"));
            }
            put_rate(net, at, law, k);
            Ok(())
        }
    }
}

/// The law after writing `value` at `field`, as `--set` does: `k` and `barrier` replace the way
/// the rate is given (a barrier keeps κ; from frequencies it is E₀ and the modes stay), other
/// fields change a field of the form the law already has.
fn new_law(law: &RateLaw, field: RateField, value: f64) -> Result<RateLaw, String> {
    let kappa = |l: &RateLaw| match *l {
        RateLaw::EyringFree { transmission, .. } | RateLaw::EyringEnthalpy { transmission, .. } => transmission,
        _ => 1.0,
    };
    let mut law = law.clone();
    match (field, &mut law) {
        (RateField::K, _) => {
            if value <= 0.0 {
                return Err("must be positive (a rate constant)".into());
            }
            return Ok(RateLaw::Constant(value));
        }
        (RateField::Barrier, RateLaw::Frequencies { barrier, .. }) => {
            if value < 0.0 {
                return Err("is below zero: E₀ of a rate from frequencies is ≥ 0".into());
            }
            *barrier = value;
        }
        (RateField::Barrier, l) => {
            return Ok(RateLaw::EyringFree {
                barrier: value,
                transmission: kappa(l),
            });
        }
        (RateField::Prefactor, RateLaw::Arrhenius { prefactor, .. }) => {
            if value <= 0.0 {
                return Err("must be positive (a prefactor)".into());
            }
            *prefactor = value;
        }
        (RateField::Activation, RateLaw::Arrhenius { activation, .. }) => *activation = value,
        (RateField::Enthalpy, RateLaw::EyringEnthalpy { enthalpy, .. }) => *enthalpy = value,
        (RateField::Entropy, RateLaw::EyringEnthalpy { entropy, .. }) => *entropy = value,
        (
            RateField::Transmission,
            RateLaw::EyringFree { transmission, .. }
            | RateLaw::EyringEnthalpy { transmission, .. }
            | RateLaw::Frequencies { transmission, .. },
        ) => {
            if !(value > 0.0 && value <= 1.0) {
                return Err("must lie in (0, 1]".into());
            }
            *transmission = value;
        }
        (f, _) => return Err(format!("the rate is not given with `{}`", f.word())),
    }
    Ok(law)
}

/// Put `law` with its value `k` at `at`.
fn put_rate(net: &mut Network, at: RateAt, law: RateLaw, k: f64) {
    match at {
        RateAt::Thermal(i) => {
            net.thermal[i].rate = law;
            net.thermal[i].k = k;
        }
        RateAt::Channel { transient, channel } => {
            let b = &mut net.transients[transient].channels[channel].branching;
            match b {
                Branching::Rate { .. } => *b = Branching::Rate { law, k },
                Branching::Quenching { partner, .. } => {
                    *b = Branching::Quenching {
                        partner: *partner,
                        law,
                        k2: k,
                    }
                }
                _ => unreachable!("a rate key addresses a rate channel"),
            }
        }
    }
}

/// A new temperature: every rate constant again.
fn temperature(net: &mut Network, t: f64) -> Result<(), String> {
    let bad = |k: f64| !(k.is_finite() && k >= 0.0);
    let thermal: Vec<f64> = net.thermal.iter().map(|s| s.rate.rate_constant(t, s.order)).collect();
    for (s, &k) in net.thermal.iter().zip(&thermal) {
        if bad(k) {
            return Err(format!("gives \"{}\" a rate constant of {k}", s.name));
        }
    }
    let mut channels = Vec::new();
    for (ti, tr) in net.transients.iter().enumerate() {
        for (j, c) in tr.channels.iter().enumerate() {
            let (law, order) = match &c.branching {
                Branching::Rate { law, .. } => (law, 1),
                Branching::Quenching { law, .. } => (law, 2),
                _ => continue,
            };
            let k = law.rate_constant(t, order);
            if bad(k) {
                return Err(format!("gives channel {j} of \"{}\" a rate constant of {k}", tr.name));
            }
            channels.push((ti, j, k));
        }
    }
    for (s, k) in net.thermal.iter_mut().zip(thermal) {
        s.k = k;
    }
    for (ti, j, k) in channels {
        match &mut net.transients[ti].channels[j].branching {
            Branching::Rate { k: x, .. } | Branching::Quenching { k2: x, .. } => *x = k,
            _ => {}
        }
    }
    net.conditions.temperature = t;
    Ok(())
}

/// Bands resampled on the kinks of the network's spectra as they are now (a table replaced by
/// a number has none), as the builder samples them.
fn resample_lights(net: &mut Network) {
    let breaks = crate::network::build::spectral_breaks(&net.species, &net.photo, &net.conditions.background);
    for l in &mut net.lights {
        if l.breaks != breaks {
            *l = l.resampled(breaks.clone());
        }
    }
}

/// A light rebuilt with a new kind or intensity (same name, window and breaks).
fn rebuilt(l: &LightSource, kind: LightKind, intensity: Option<Intensity>) -> LightSource {
    LightSource::with_breaks(l.name.clone(), kind, intensity, l.window, l.breaks.clone())
}

/// Put new lights in, then recompute hot yields that depend on the photons; restore on error.
fn commit_lights(net: &mut Network, lights: Vec<LightSource>) -> Result<(), String> {
    if let Some(b) = lights
        .iter()
        .flat_map(|l| &l.bins)
        .find(|b| !(b.flux.is_finite() && b.wavelength.is_finite()))
    {
        return Err(format!("gives a photon flux of {} einstein/s", b.flux));
    }
    let old = std::mem::replace(&mut net.lights, lights);
    let r = hot(net);
    if r.is_err() {
        net.lights = old;
    }
    r
}

/// Quantum yields and efficiencies of one absorber's steps sum to at most 1 at every wavelength
/// the lights or the tables use.
fn yield_sum(net: &Network, absorber: usize) -> Result<(), String> {
    let mut wavelengths: Vec<f64> = net
        .lights
        .iter()
        .flat_map(|l| l.bins.iter().map(|b| b.wavelength))
        .collect();
    for p in &net.photo {
        if let crate::light::Spectrum::Table { points, .. } = &p.quantum_yield {
            wavelengths.extend(points.iter().map(|x| x.0));
        }
    }
    let steps: Vec<usize> = (0..net.photo.len())
        .filter(|&i| net.photo[i].absorber == absorber)
        .collect();
    for w in wavelengths {
        let s: f64 = steps.iter().map(|&i| net.photo[i].yield_at(w)).sum();
        if s > 1.0 + 1e-9 {
            return Err(format!(
                "would make the quantum yields and efficiencies of \"{}\" sum to {} at {} nm, above 1",
                net.species[absorber].name,
                crate::units::sig(s, 6),
                crate::units::sig(w * 1e9, 5)
            ));
        }
    }
    Ok(())
}

/// Recompute the yields of hot ground states whose starting energy is that of the absorbed
/// photons (they follow the lights and the photo steps' yields); nothing else moves them.
fn hot(net: &mut Network) -> Result<(), String> {
    let mut updates = Vec::new();
    for (ti, tr) in net.transients.iter().enumerate() {
        let Some(model) = tr.hot.as_ref().filter(|m| m.photon_energy) else {
            continue;
        };
        // Without absorbed photons (a dark run) nothing reaches the hot state: keep its yields.
        let Some(energy) = photon_energy(net, ti) else {
            continue;
        };
        let reactions: Vec<HotReaction> = model
            .channels
            .iter()
            .map(|c| HotReaction {
                ts: &c.ts,
                barrier: c.barrier,
                degeneracy: c.degeneracy,
            })
            .collect();
        let y = rrkm_yields(&model.reactant, &reactions, energy, Some(model.cooling), model.grain).map_err(|m| {
            format!(
                "leaves the yields of the hot ground state \"{}\" uncomputable: {m}",
                tr.name
            )
        })?;
        for (c, p) in model.channels.iter().zip(&y.probabilities) {
            let rate_at_start = crate::rates::rrkm::Rrkm::new(
                &model.reactant,
                &c.ts,
                c.barrier,
                c.degeneracy,
                model.grain,
                energy + model.grain,
            )
            .ok()
            .and_then(|m| m.rate(energy))
            .unwrap_or(0.0);
            updates.push((
                ti,
                c.channel,
                Branching::Hot {
                    fraction: *p,
                    barrier: c.barrier,
                    energy,
                    cooling: model.cooling,
                    rate_at_start,
                },
            ));
        }
    }
    for (ti, j, b) in updates {
        net.transients[ti].channels[j].branching = b;
    }
    Ok(())
}

/// The mean molar energy (J/mol) of the photons taken up on the way to transient `t`: every
/// photochemical step whose transient reaches `t` through channels counts, each bin weighted by
/// ε(λ)·Φ(λ)·q(λ) (optically thin), as when the network was built.
pub(crate) fn photon_energy(net: &Network, t: usize) -> Option<f64> {
    let n = net.transients.len();
    let reaches = |from: usize| {
        let mut seen = vec![false; n];
        let mut stack = vec![from];
        while let Some(j) = stack.pop() {
            if j < n && !seen[j] {
                seen[j] = true;
                stack.extend(net.transients[j].channels.iter().filter_map(|c| match c.target {
                    Target::Transient(k) => Some(k),
                    Target::Species(_) => None,
                }));
            }
        }
        seen[t]
    };
    let leading: Vec<_> = net
        .photo
        .iter()
        .filter(|s| matches!(s.outcome, super::super::PhotoOutcome::Transient(k) if reaches(k)))
        .collect();
    super::super::derived::mean_photon_energy(&net.lights, &net.species, &leading)
}
