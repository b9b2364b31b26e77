//! Value parsers for numeric options, so a value out of range is refused by clap with the
//! option's name and the accepted range (exit 2), before any work starts.

/// Output points of a time course: at least 2 (the start and the end), at most
/// [`MAX_POINTS`] (each point is a row of every CSV and a vertex of every plot).
pub fn points(text: &str) -> Result<usize, String> {
    let n: usize = text
        .trim()
        .parse()
        .map_err(|_| format!("\"{text}\" is not a whole number; expected 2 to {MAX_POINTS}"))?;
    if !(2..=MAX_POINTS).contains(&n) {
        return Err(format!("{n} is outside 2 to {MAX_POINTS}"));
    }
    Ok(n)
}

/// `uncertainty --samples`: a whole number from 1 to [`MAX_SAMPLES`].
pub fn samples(text: &str) -> Result<usize, String> {
    let n: usize = text
        .trim()
        .parse()
        .map_err(|_| format!("\"{text}\" is not a whole number; expected 1 to {MAX_SAMPLES}"))?;
    if !(1..=MAX_SAMPLES).contains(&n) {
        return Err(format!("{n} is outside 1 to {MAX_SAMPLES}"));
    }
    Ok(n)
}

/// The most samples one uncertainty run may ask for, all shards together (each sample's
/// values and outputs are held until the run is written: about a kilobyte each).
pub const MAX_SAMPLES: usize = 1_000_000;

/// The most output points a time course may ask for (a CSV of about 100 MB for 50 species).
pub const MAX_POINTS: usize = 1_000_000;

/// A relative tolerance of the integrator: above 0 and at most 0.1 (a looser one follows
/// nothing), at least 1e-14 (tighter than double precision carries through a step).
pub fn rtol(text: &str) -> Result<f64, String> {
    let v: f64 = text
        .trim()
        .parse()
        .map_err(|_| format!("\"{text}\" is not a number; expected 1e-14 to 0.1"))?;
    if !(1e-14..=0.1).contains(&v) {
        return Err(format!("{v:e} is outside 1e-14 to 0.1"));
    }
    Ok(v)
}

/// A duration option (`--until`, `--window`, ...): a time with its unit, above zero.
pub fn duration(flag: &str, text: &str) -> photoledger::Result<f64> {
    use photoledger::Error;
    use photoledger::units::{self, Quantity};
    let t = units::parse(text, Quantity::Time)
        .map_err(|e| Error::Usage(format!("--{flag}: {e}; expected {}", Quantity::Time.accepted())))?;
    if t > 0.0 && t.is_finite() {
        Ok(t)
    } else {
        Err(Error::Usage(format!(
            "--{flag} \"{text}\": the duration must be positive, e.g. \"2 h\""
        )))
    }
}

/// A transmission coefficient κ: in (0, 1], as in a network file's `transmission` (tunnelling
/// enters apart, through `--tunnelling`).
pub fn transmission(text: &str) -> Result<f64, String> {
    let v: f64 = text
        .trim()
        .parse()
        .map_err(|_| format!("\"{text}\" is not a number; expected a value in (0, 1]"))?;
    if !(v > 0.0 && v <= 1.0) {
        return Err(format!("{v:e} is outside (0, 1]"));
    }
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_are_enforced_with_the_range_named() {
        assert_eq!(points("200"), Ok(200));
        assert!(points("0").unwrap_err().contains("2 to 1000000"));
        assert!(points("100000000").is_err());
        assert!(points("ten").is_err());
        assert_eq!(rtol("1e-6"), Ok(1e-6));
        assert!(rtol("10").unwrap_err().contains("1e-14 to 0.1"));
        assert!(rtol("0").is_err() && rtol("-1e-6").is_err() && rtol("nan").is_err());
        assert_eq!(transmission("0.5"), Ok(0.5));
        assert!(transmission("1e308").is_err() && transmission("0").is_err() && transmission("-1").is_err());
    }
}
