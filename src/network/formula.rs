//! Molecular formulas for element balance: `C6H12O6`, `Fe(C2O4)3^3-`, `H+`, `OH-`.
//!
//! Elements are a capital letter with an optional lower-case letter, followed by a count;
//! parentheses group with a multiplier; a charge is written after `^` (`^2+`, `^3-`, `^-`), or as
//! a bare trailing `+` or `-` for a single charge.

use std::collections::BTreeMap;

/// Element counts; the net charge is kept under the key `"charge"`.
pub type Composition = BTreeMap<String, f64>;

/// Parse a formula into its composition.
pub fn parse(text: &str) -> Result<Composition, String> {
    let t = text.trim();
    if t.is_empty() {
        return Err("the formula is empty".into());
    }
    let (body, charge) = split_charge(t)?;
    let chars: Vec<char> = body.chars().collect();
    let mut pos = 0;
    let mut comp = group(&chars, &mut pos, 0, t)?;
    if pos != chars.len() {
        return Err(format!("\"{t}\" has an unmatched ')'"));
    }
    if charge != 0.0 {
        comp.insert("charge".into(), charge);
    }
    Ok(comp)
}

fn split_charge(t: &str) -> Result<(&str, f64), String> {
    if let Some((body, ch)) = t.split_once('^') {
        let sign = if ch.ends_with('+') {
            1.0
        } else if ch.ends_with('-') {
            -1.0
        } else {
            return Err(format!("the charge in \"{t}\" must end in + or -, e.g. \"^2+\""));
        };
        let digits = &ch[..ch.len() - 1];
        let n = if digits.is_empty() {
            1.0
        } else {
            digits
                .parse::<u32>()
                .map_err(|_| format!("cannot read the charge in \"{t}\""))? as f64
        };
        return Ok((body, sign * n));
    }
    if let Some(b) = t.strip_suffix('+') {
        return Ok((b, 1.0));
    }
    if let Some(b) = t.strip_suffix('-') {
        return Ok((b, -1.0));
    }
    Ok((t, 0.0))
}

fn count(chars: &[char], pos: &mut usize) -> f64 {
    let start = *pos;
    while *pos < chars.len() && chars[*pos].is_ascii_digit() {
        *pos += 1;
    }
    if *pos == start {
        1.0
    } else {
        chars[start..*pos]
            .iter()
            .collect::<String>()
            .parse::<f64>()
            .unwrap_or(1.0)
    }
}

fn group(chars: &[char], pos: &mut usize, depth: usize, t: &str) -> Result<Composition, String> {
    if depth > 8 {
        return Err(format!("\"{t}\" nests parentheses too deeply"));
    }
    let mut comp = Composition::new();
    while *pos < chars.len() {
        let c = chars[*pos];
        if c == '(' {
            *pos += 1;
            let inner = group(chars, pos, depth + 1, t)?;
            if *pos >= chars.len() || chars[*pos] != ')' {
                return Err(format!("\"{t}\" has an unclosed '('"));
            }
            *pos += 1;
            let n = count(chars, pos);
            for (e, k) in inner {
                *comp.entry(e).or_default() += k * n;
            }
        } else if c == ')' {
            if depth == 0 {
                return Err(format!("\"{t}\" has an unmatched ')'"));
            }
            return Ok(comp);
        } else if c.is_ascii_uppercase() {
            let mut sym = c.to_string();
            *pos += 1;
            if *pos < chars.len() && chars[*pos].is_ascii_lowercase() {
                sym.push(chars[*pos]);
                *pos += 1;
            }
            if !ELEMENTS.contains(&sym.as_str()) {
                return Err(format!("\"{sym}\" in \"{t}\" is not an element symbol"));
            }
            let n = count(chars, pos);
            *comp.entry(sym).or_default() += n;
        } else {
            return Err(format!(
                "unexpected '{c}' in the formula \"{t}\"; write elements with counts, e.g. \"C6H12O6\""
            ));
        }
    }
    if depth > 0 {
        return Err(format!("\"{t}\" has an unclosed '('"));
    }
    Ok(comp)
}

/// Element symbols, H to Og, plus D for deuterium (common practice in labelling studies).
const ELEMENTS: &[&str] = &[
    "H", "D", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne", "Na", "Mg", "Al", "Si", "P", "S", "Cl", "Ar", "K", "Ca",
    "Sc", "Ti", "V", "Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn", "Ga", "Ge", "As", "Se", "Br", "Kr", "Rb", "Sr", "Y",
    "Zr", "Nb", "Mo", "Tc", "Ru", "Rh", "Pd", "Ag", "Cd", "In", "Sn", "Sb", "Te", "I", "Xe", "Cs", "Ba", "La", "Ce",
    "Pr", "Nd", "Pm", "Sm", "Eu", "Gd", "Tb", "Dy", "Ho", "Er", "Tm", "Yb", "Lu", "Hf", "Ta", "W", "Re", "Os", "Ir",
    "Pt", "Au", "Hg", "Tl", "Pb", "Bi", "Po", "At", "Rn", "Fr", "Ra", "Ac", "Th", "Pa", "U", "Np", "Pu", "Am", "Cm",
    "Bk", "Cf", "Es", "Fm", "Md", "No", "Lr", "Rf", "Db", "Sg", "Bh", "Hs", "Mt", "Ds", "Rg", "Cn", "Nh", "Fl", "Mc",
    "Lv", "Ts", "Og",
];

/// Σ coefficient × composition over `terms` of (composition, coefficient).
pub fn total<'a>(terms: impl IntoIterator<Item = (&'a Composition, f64)>) -> Composition {
    let mut out = Composition::new();
    for (c, n) in terms {
        for (e, k) in c {
            *out.entry(e.clone()).or_default() += k * n;
        }
    }
    out
}

/// The imbalance right − left, as "+1 O, −2 H" (empty when balanced).
pub fn imbalance(left: &Composition, right: &Composition) -> String {
    let mut keys: Vec<&String> = left.keys().chain(right.keys()).collect();
    keys.sort();
    keys.dedup();
    let mut parts = Vec::new();
    for k in keys {
        let d = right.get(k).copied().unwrap_or(0.0) - left.get(k).copied().unwrap_or(0.0);
        if d.abs() > 1e-9 {
            let sign = if d > 0.0 { "+" } else { "−" };
            parts.push(format!("{sign}{} {k}", crate::units::sig(d.abs(), 6)));
        }
    }
    parts.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_formulas() {
        let g = parse("C6H12O6").unwrap();
        assert_eq!(g["C"], 6.0);
        assert_eq!(g["H"], 12.0);
        assert_eq!(g["O"], 6.0);
        let f = parse("Fe(C2O4)3^3-").unwrap();
        assert_eq!(f["Fe"], 1.0);
        assert_eq!(f["C"], 6.0);
        assert_eq!(f["O"], 12.0);
        assert_eq!(f["charge"], -3.0);
        assert_eq!(parse("H+").unwrap()["charge"], 1.0);
        assert_eq!(parse("OH-").unwrap()["charge"], -1.0);
        assert_eq!(parse("HCN").unwrap().len(), 3);
    }

    #[test]
    fn rejects_bad_formulas() {
        assert!(parse("Xx2").unwrap_err().contains("not an element"));
        assert!(parse("C(H2").is_err());
        assert!(parse("CH2)").is_err());
        assert!(parse("c6h6").is_err());
        assert!(parse("").is_err());
        assert!(parse("Fe^3").is_err());
    }

    #[test]
    fn shows_imbalance() {
        let l = total([(&parse("H2O").unwrap(), 1.0)]);
        let r = total([(&parse("H2").unwrap(), 1.0)]);
        assert_eq!(imbalance(&l, &r), "−1 O");
        assert_eq!(imbalance(&l, &l), "");
    }
}
