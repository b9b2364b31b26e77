//! README's quoted examples are what the program prints.
//!
//! The convention (DEVELOPERS.md, "README examples"): a fenced block marked `console` holds one
//! or more examples. An example is a line `$ photoledger ARGS` (continued on the next line after a
//! trailing `\`; arguments quoted as in a shell, with "..." or '...'), then the lines it prints
//! to standard output, exactly. One line `...` in a quote stands for any number of lines, so a
//! quote can show the head and the tail of a long output. A last line `[exit N]` gives the exit
//! code (default 0). The commands run in a scratch folder holding links to the crate's
//! `networks/` and `demo-data/`, so their output folders do not land in the crate.
//!
//! After a change of output, `cargo test --test readme_examples -- --ignored` rewrites the quotes
//! from what the program prints now (keeping the number of head and tail lines around a `...`).

use std::path::{Path, PathBuf};
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_photoledger");

/// One example: where its quote sits in README (line indices) and what it expects.
#[derive(Debug)]
struct Example {
    /// The command line as written, without `$ photoledger `.
    command: String,
    /// README line index of the first quoted output line, and one past the last (the exit line
    /// excluded).
    quote: std::ops::Range<usize>,
    /// Quoted lines before a `...` (all of them when there is none).
    head: Vec<String>,
    /// Quoted lines after the `...`, if there is one.
    tail: Option<Vec<String>>,
    /// Expected exit code.
    exit: i32,
}

fn readme_path() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md")
}

/// Every example of every `console` block of `text`.
fn examples(text: &str) -> Vec<Example> {
    let lines: Vec<&str> = text.lines().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        if lines[i].trim_end() != "```console" {
            i += 1;
            continue;
        }
        i += 1;
        let end = (i..lines.len())
            .find(|&j| lines[j].starts_with("```"))
            .expect("unclosed console block in README");
        while i < end {
            let first = lines[i]
                .strip_prefix("$ photoledger ")
                .unwrap_or_else(|| panic!("README line {}: expected `$ photoledger ...`", i + 1));
            let mut command = String::from(first);
            while command.ends_with('\\') {
                command.pop();
                i += 1;
                command.push(' ');
                command.push_str(lines[i].trim());
            }
            i += 1;
            let start = i;
            while i < end && !lines[i].starts_with("$ photoledger ") {
                i += 1;
            }
            let mut quoted: Vec<String> = lines[start..i].iter().map(|s| s.to_string()).collect();
            let mut stop = i;
            let mut exit = 0;
            if let Some(n) = quoted
                .last()
                .and_then(|l| l.strip_prefix("[exit ")?.strip_suffix(']')?.parse().ok())
            {
                exit = n;
                quoted.pop();
                stop -= 1;
            }
            let (head, tail) = match quoted.iter().position(|l| l == "...") {
                Some(k) => (quoted[..k].to_vec(), Some(quoted[k + 1..].to_vec())),
                None => (quoted, None),
            };
            // A quote of `...` alone would match anything (a refresh that caught a failed run
            // writes one): every quote shows at least one line of output.
            assert!(
                !head.is_empty() || tail.as_ref().is_some_and(|t| !t.is_empty()) || exit != 0,
                "README line {}: the quote of `{}` shows no output line",
                start + 1,
                command
            );
            out.push(Example {
                command,
                quote: start..stop,
                head,
                tail,
                exit,
            });
        }
        i = end + 1;
    }
    out
}

/// Split a command line as a shell would for the plain cases README uses: spaces separate,
/// double or single quotes group.
fn split(command: &str) -> Vec<String> {
    let mut args = Vec::new();
    let mut cur = String::new();
    let mut quote: Option<char> = None;
    let mut any = false;
    for c in command.chars() {
        match (quote, c) {
            (Some(q), c) if c == q => quote = None,
            (Some(_), c) => cur.push(c),
            (None, '"' | '\'') => {
                quote = Some(c);
                any = true;
            }
            (None, c) if c.is_whitespace() => {
                if any || !cur.is_empty() {
                    args.push(std::mem::take(&mut cur));
                }
                any = false;
            }
            (None, c) => cur.push(c),
        }
    }
    assert!(quote.is_none(), "unclosed quote in {command}");
    if any || !cur.is_empty() {
        args.push(cur);
    }
    args
}

/// Run one example in a scratch folder; standard output's lines and the exit code.
fn run(ex: &Example, scratch: &Path) -> (Vec<String>, i32) {
    let o = Command::new(BIN)
        .args(split(&ex.command))
        .current_dir(scratch)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    (
        text.lines().map(str::to_string).collect(),
        o.status.code().unwrap_or(-1),
    )
}

fn scratch() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("photoledger-readme-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for d in ["networks", "demo-data"] {
        std::os::unix::fs::symlink(root.join(d), dir.join(d)).unwrap();
    }
    dir
}

/// The mismatch between a quote and what was printed, if any.
fn compare(ex: &Example, printed: &[String], code: i32) -> Option<String> {
    let mut why = Vec::new();
    if code != ex.exit {
        why.push(format!("exit {code}, README says {}", ex.exit));
    }
    let head_ok = printed.len() >= ex.head.len() && printed[..ex.head.len()] == ex.head[..];
    let ok = match &ex.tail {
        None => head_ok && printed.len() == ex.head.len(),
        Some(tail) => {
            head_ok && printed.len() >= ex.head.len() + tail.len() && printed[printed.len() - tail.len()..] == tail[..]
        }
    };
    if !ok {
        let mut quoted = ex.head.clone();
        if let Some(tail) = &ex.tail {
            quoted.push("...".into());
            quoted.extend(tail.iter().cloned());
        }
        why.push(format!(
            "README quotes:\n{}\nprinted:\n{}",
            quoted.join("\n"),
            printed.join("\n")
        ));
    }
    (!why.is_empty()).then(|| format!("$ photoledger {}\n{}", ex.command, why.join("\n")))
}

#[test]
fn readme_examples_print_what_readme_quotes() {
    let text = std::fs::read_to_string(readme_path()).unwrap();
    let exs = examples(&text);
    assert!(exs.len() >= 3, "README's console examples not found");
    let dir = scratch();
    let failures: Vec<String> = exs
        .iter()
        .filter_map(|ex| {
            let (printed, code) = run(ex, &dir);
            compare(ex, &printed, code)
        })
        .collect();
    let _ = std::fs::remove_dir_all(&dir);
    assert!(
        failures.is_empty(),
        "README examples differ from the program (refresh with `cargo test --test readme_examples -- \
         --ignored` if the new output is right):\n\n{}",
        failures.join("\n\n")
    );
}

/// Rewrite README's quotes from what the program prints now. Run it on purpose:
/// `cargo test --test readme_examples -- --ignored`, then read the diff of README.md.
#[test]
#[ignore]
fn refresh_readme_quotes() {
    let path = readme_path();
    let text = std::fs::read_to_string(&path).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let dir = scratch();
    // From the last example up, so earlier line indices stay valid.
    for ex in examples(&text).iter().rev() {
        let (printed, code) = run(ex, &dir);
        let mut quote: Vec<String> = match &ex.tail {
            None => printed.clone(),
            Some(tail) => {
                let h = ex.head.len().min(printed.len());
                let t = tail.len().min(printed.len() - h);
                let mut q = printed[..h].to_vec();
                q.push("...".into());
                q.extend_from_slice(&printed[printed.len() - t..]);
                q
            }
        };
        let had_exit = ex.quote.end < lines.len() && lines[ex.quote.end].starts_with("[exit ");
        if code != 0 {
            quote.push(format!("[exit {code}]"));
        }
        let end = ex.quote.end + usize::from(had_exit);
        lines.splice(ex.quote.start..end, quote);
    }
    let _ = std::fs::remove_dir_all(&dir);
    let mut out = lines.join("\n");
    if text.ends_with('\n') {
        out.push('\n');
    }
    std::fs::write(&path, out).unwrap();
}

#[test]
fn the_convention_is_read_as_documented() {
    let md = "x\n```console\n$ photoledger plan a.toml --target \"P > 80 %\" \\\n    --in '30 s'\nl1\n...\nl9\n[exit 5]\n$ photoledger check a.toml\nok\n```\n";
    let exs = examples(md);
    assert_eq!(exs.len(), 2);
    assert_eq!(
        split(&exs[0].command),
        ["plan", "a.toml", "--target", "P > 80 %", "--in", "30 s"]
    );
    assert_eq!(exs[0].head, ["l1"]);
    assert_eq!(exs[0].tail.as_deref(), Some(&["l9".to_string()][..]));
    assert_eq!(exs[0].exit, 5);
    let printed: Vec<String> = ["l1", "l2", "l3", "l9"].map(String::from).to_vec();
    assert!(compare(&exs[0], &printed, 5).is_none());
    assert!(compare(&exs[0], &printed, 0).is_some());
    assert!(compare(&exs[0], &printed[..3], 5).is_some());
    assert!(compare(&exs[1], &["ok".to_string()], 0).is_none());
    assert!(compare(&exs[1], &["ok".to_string(), "more".to_string()], 0).is_some());
}
