//! `--sun-hours` and `--sun-scale`: the daily light schedule and the factor on sunlight, one
//! definition for every command that integrates under the light (`plan`, `simulate`).

use photoledger::kinetics::Schedule;
use photoledger::light::LightKind;
use photoledger::model::Model;
use photoledger::{Error, Network};

/// Options of the daily light schedule.
#[derive(clap::Args, Debug, Clone)]
pub struct DaylightArgs {
    /// Hours of light a day (all sources switch together; made for sunlight): the light is on
    /// for the first HOURS of every 24 h and off for the rest, when thermal steps run on in the
    /// dark.
    #[arg(long, value_name = "HOURS", allow_negative_numbers = true)]
    pub sun_hours: Option<f64>,
    /// Factor on every sunlight source's ASTM G173-03 spectrum (shade, depth, another atmosphere),
    /// on top of the file's scale; 0 is darkness.
    #[arg(long, value_name = "FACTOR", default_value_t = 1.0, allow_negative_numbers = true)]
    pub sun_scale: f64,
}

impl DaylightArgs {
    /// The schedule asked for (None: light on throughout).
    pub fn schedule(&self) -> photoledger::Result<Option<Schedule>> {
        match self.sun_hours {
            None => Ok(None),
            Some(h) if h > 0.0 && h <= 24.0 => Ok(Some(Schedule::daily(h))),
            Some(h) => Err(Error::Usage(format!(
                "--sun-hours {h}: must be above 0 and at most 24 (for no light at all, --sun-scale 0 or a zero power)"
            ))),
        }
    }

    /// The indices of the network's sunlight sources, with `--sun-scale` checked: a finite
    /// factor of zero or more, and given only when there is sunlight to scale.
    pub fn sun_sources(&self, net: &Network) -> photoledger::Result<Vec<usize>> {
        if !(self.sun_scale >= 0.0 && self.sun_scale.is_finite()) {
            return Err(Error::Usage(format!(
                "--sun-scale {}: must be a finite factor of zero or more",
                self.sun_scale
            )));
        }
        let sun: Vec<usize> = net
            .lights
            .iter()
            .enumerate()
            .filter(|(_, l)| matches!(l.kind, LightKind::Sun { .. }))
            .map(|(i, _)| i)
            .collect();
        if self.sun_scale != 1.0 && sun.is_empty() {
            return Err(Error::Usage(
                "--sun-scale: the network has no light of kind \"sun\"".into(),
            ));
        }
        Ok(sun)
    }

    /// `model` with its sunlight sources (`sun`, from [`Self::sun_sources`]) scaled by `--sun-scale`.
    pub fn scale_sun(&self, mut model: Model, sun: &[usize]) -> Model {
        for &s in sun {
            model = model.with_source_scale(s, self.sun_scale);
        }
        model
    }
}
