//! Chemical equations in the trade's notation: `2 M -> D`, `A + B <=> C`.
//!
//! Sides are separated by `->` (one way) or `<=>` (both ways); terms by ` + ` with spaces
//! around the plus, so names may hold `+` and `-` (`Fe3+`, `Z-azo`); a coefficient is a
//! number followed by a space (`2 M`). The names are resolved by the caller.

/// One side's term, names unresolved.
#[derive(Debug, Clone, PartialEq)]
pub struct RawTerm {
    /// Species name as written.
    pub name: String,
    /// Coefficient (1 when not written).
    pub coefficient: f64,
}

/// A parsed equation.
#[derive(Debug, Clone, PartialEq)]
pub struct RawEquation {
    /// Left side.
    pub left: Vec<RawTerm>,
    /// Right side (may be empty: `A -> ` is not allowed, but `A -> nothing` is written `A -> 0`).
    pub right: Vec<RawTerm>,
    /// True for `<=>`.
    pub reversible: bool,
}

/// Parse one side, e.g. "2 A + B". "0" or "nothing" means an empty side.
pub fn parse_side(text: &str) -> Result<Vec<RawTerm>, String> {
    let t = text.trim();
    if t == "0" || t.eq_ignore_ascii_case("nothing") {
        return Ok(Vec::new());
    }
    if t.is_empty() {
        return Err("a side is empty (write \"0\" for no products)".into());
    }
    let mut out: Vec<RawTerm> = Vec::new();
    for part in split_plus(t) {
        let part = part.trim();
        if part.is_empty() {
            return Err(format!("\"{t}\" has an empty term (a '+' with nothing beside it)"));
        }
        let mut words = part.split_whitespace();
        let first = words.next().unwrap_or_default();
        let (coefficient, name) = match first.parse::<f64>() {
            Ok(c) => {
                let name: Vec<&str> = words.collect();
                if name.len() != 1 {
                    return Err(format!(
                        "\"{part}\" should be a coefficient and one species name, e.g. \"2 M\""
                    ));
                }
                (c, name[0].to_string())
            }
            Err(_) => {
                let rest: Vec<&str> = words.collect();
                if !rest.is_empty() {
                    return Err(format!(
                        "\"{part}\" has spaces inside a name; terms are separated by \" + \" and a coefficient comes first, e.g. \"2 M\""
                    ));
                }
                (1.0, first.to_string())
            }
        };
        if !coefficient.is_finite() || coefficient <= 0.0 {
            return Err(format!("the coefficient in \"{part}\" must be a positive number"));
        }
        if let Some(t) = out.iter_mut().find(|t| t.name == name) {
            t.coefficient += coefficient;
        } else {
            out.push(RawTerm { name, coefficient });
        }
    }
    Ok(out)
}

/// Split on '+' that stands alone between spaces.
fn split_plus(t: &str) -> Vec<&str> {
    let mut parts = Vec::new();
    let bytes = t.as_bytes();
    let mut start = 0;
    for i in 0..bytes.len() {
        if bytes[i] == b'+'
            && (i == 0 || bytes[i - 1].is_ascii_whitespace())
            && (i + 1 == bytes.len() || bytes[i + 1].is_ascii_whitespace())
        {
            parts.push(&t[start..i]);
            start = i + 1;
        }
    }
    parts.push(&t[start..]);
    parts
}

/// Parse a whole equation.
pub fn parse(text: &str) -> Result<RawEquation, String> {
    let (left, right, reversible) = if let Some((l, r)) = text.split_once("<=>") {
        (l, r, true)
    } else if let Some((l, r)) = text.split_once("->") {
        (l, r, false)
    } else {
        return Err(format!("\"{text}\" has no arrow; write \"A + B -> C\" or \"A <=> B\""));
    };
    if right.contains("->") || right.contains("<=>") {
        return Err(format!("\"{text}\" has more than one arrow"));
    }
    let left = parse_side(left)?;
    let right = parse_side(right)?;
    if left.is_empty() {
        return Err(format!("\"{text}\" has no reactants"));
    }
    Ok(RawEquation {
        left,
        right,
        reversible,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_coefficients_and_arrows() {
        let e = parse("2 M -> D").unwrap();
        assert_eq!(
            e.left,
            vec![RawTerm {
                name: "M".into(),
                coefficient: 2.0
            }]
        );
        assert!(!e.reversible);
        let e = parse("A + B <=> C").unwrap();
        assert_eq!(e.left.len(), 2);
        assert!(e.reversible);
        let e = parse("Fe3+ + e- -> Fe2+").unwrap();
        assert_eq!(e.left[0].name, "Fe3+");
        assert_eq!(e.left[1].name, "e-");
        let e = parse("A + A -> D").unwrap();
        assert_eq!(
            e.left,
            vec![RawTerm {
                name: "A".into(),
                coefficient: 2.0
            }]
        );
        let e = parse("P -> 0").unwrap();
        assert!(e.right.is_empty());
    }

    #[test]
    fn rejects_what_is_not_an_equation() {
        assert!(parse("A B").unwrap_err().contains("no arrow"));
        assert!(parse("A -> B -> C").unwrap_err().contains("more than one"));
        assert!(parse("-> B").is_err());
        assert!(parse("A + -> B").is_err());
        assert!(parse("-2 A -> B").is_err());
        assert!(parse("big molecule -> B").is_err());
        assert!(parse("2 A B -> C").is_err());
    }
}
