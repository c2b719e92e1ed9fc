//! The README's command table matches the tool's `--help`: the same
//! subcommands, each with the same options.

use std::collections::BTreeMap;
use std::process::Command;

/// Runs the tool with `args` and returns its standard output.
fn help(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(args)
        .output()
        .expect("the tool runs");
    assert!(out.status.success(), "{args:?}: {:?}", out.status);
    String::from_utf8(out.stdout).unwrap()
}

/// The entries of a section (`Commands:` or `Options:`) of clap's help:
/// the first word of each indented line.
fn section(text: &str, title: &str) -> Vec<String> {
    let mut lines = text.lines().skip_while(|l| l.trim() != title).skip(1);
    let mut out = Vec::new();
    for l in lines.by_ref() {
        // Long help puts a blank line between entries; the section ends
        // at the first line that is not indented.
        if l.trim().is_empty() {
            continue;
        }
        if !l.starts_with(' ') {
            break;
        }
        if l.starts_with("  ") && !l.starts_with("         ") {
            let word = l.split_whitespace().find(|w| !w.ends_with(','));
            if let Some(w) = word {
                out.push(w.to_string());
            }
        }
    }
    out
}

/// `subcommand path -> options` from `--help`, leaves only (`golden` has
/// subcommands of its own), without `--help` and `--version`.
fn from_help() -> BTreeMap<String, Vec<String>> {
    let mut out = BTreeMap::new();
    let top = help(&["--help"]);
    for cmd in section(&top, "Commands:") {
        if cmd == "help" {
            continue;
        }
        let sub = help(&[&cmd, "--help"]);
        let inner: Vec<String> = section(&sub, "Commands:")
            .into_iter()
            .filter(|c| c != "help")
            .collect();
        let leaves: Vec<(String, String)> = if inner.is_empty() {
            vec![(cmd.clone(), sub)]
        } else {
            inner
                .iter()
                .map(|c| (format!("{cmd} {c}"), help(&[&cmd, c, "--help"])))
                .collect()
        };
        for (path, text) in leaves {
            let mut opts: Vec<String> = section(&text, "Options:")
                .into_iter()
                // `--quiet` is global: every command lists it, the README
                // states it once (checked below).
                .filter(|o| {
                    o.starts_with("--") && o != "--help" && o != "--version" && o != "--quiet"
                })
                .collect();
            opts.sort();
            out.insert(path, opts);
        }
    }
    out
}

/// `subcommand path -> options` from the README's table rows
/// `` | `fixsight-verify <path> [--opt X] ...` | ... | `` (the union over
/// the rows of one path).
fn from_readme() -> BTreeMap<String, Vec<String>> {
    let readme = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../README.md"))
        .expect("README.md");
    let mut out = BTreeMap::new();
    for l in readme.lines() {
        let Some(rest) = l.strip_prefix("| `fixsight-verify ") else {
            continue;
        };
        let cell = rest.split('`').next().unwrap();
        let words: Vec<&str> = cell.split_whitespace().collect();
        let path: Vec<&str> = words
            .iter()
            .take_while(|w| !w.starts_with('-') && !w.starts_with('['))
            .copied()
            .collect();
        // Rows of the same command (one per form, e.g. `run --kernel` and
        // `run --pipeline`) add up to its options.
        let opts: &mut Vec<String> = out.entry(path.join(" ")).or_default();
        opts.extend(
            words
                .iter()
                .map(|w| w.trim_start_matches('['))
                .filter(|w| w.starts_with("--"))
                .map(|w| w.trim_end_matches(']').to_string()),
        );
        opts.sort();
        opts.dedup();
    }
    out
}

/// Every command's `--help` shows a worked example of itself.
#[test]
fn every_help_has_a_worked_example() {
    for path in from_help().keys() {
        let args: Vec<&str> = path.split(' ').chain(["--help"]).collect();
        let h = help(&args);
        let example = format!("fixsight-verify {path} --");
        assert!(
            h.lines()
                .any(|l| l.contains("xample") && l.contains(&example)
                    || l.trim_start().starts_with(&example)),
            "`{path} --help` has no worked example:\n{h}"
        );
    }
}

#[test]
fn readme_command_table_matches_help() {
    let help = from_help();
    assert!(help.len() >= 5, "too few subcommands parsed: {help:?}");
    assert!(
        help["grid"].contains(&"--grid-log2".to_string()),
        "{help:?}"
    );
    assert_eq!(
        from_readme(),
        help,
        "README command table (left) vs --help (right)"
    );
}

#[test]
fn help_of_commands_with_a_drift_warning_says_it_is_no_safety_function() {
    for cmd in ["report", "run", "flash"] {
        for flag in ["-h", "--help"] {
            let h = help(&[cmd, flag]);
            assert!(
                h.contains("Not a safety function") && h.contains("ISO 3691-4"),
                "{cmd} {flag} lacks the safety note:\n{h}"
            );
        }
    }
}

/// `--quiet` is a global option: listed by the top-level help, accepted
/// before and after the command, stated in the README; a command run with
/// it writes nothing on stderr and gives the same verdict.
#[test]
fn quiet_is_global_and_documented() {
    assert!(section(&help(&["--help"]), "Options:").contains(&"--quiet".to_string()));
    let readme = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../README.md"))
        .expect("README.md");
    assert!(readme.contains("Every command takes `--quiet`"));
    let d = std::env::temp_dir().join(format!("fixsight-quiet-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    let t = r#"{"schema": 1, "targets": [{"name": "cortex-m4", "triple": "t", "vectors": 1,
        "passed": 1, "lang": "rust", "kernels": [{"name": "pipeline.point_job/b",
        "instr_per_px": 10.0, "code_bytes": 1, "stack_bytes": 1}]}]}"#;
    std::fs::write(d.join("targets.json"), t).unwrap();
    let args = [
        "--width",
        "32",
        "--height",
        "24",
        "--fps",
        "1",
        "--clock-mhz",
        "1",
    ];
    let dir = d.to_str().unwrap();
    for pre in [true, false] {
        let mut c = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"));
        if pre {
            c.arg("--quiet");
        }
        c.args(["budget", "--report", dir]).args(args);
        if !pre {
            c.arg("--quiet");
        }
        let o = c.output().unwrap();
        assert_eq!(o.status.code(), Some(0), "{o:?}");
        assert!(o.stderr.is_empty(), "{o:?}");
        assert!(String::from_utf8_lossy(&o.stdout).contains("FITS"), "{o:?}");
    }
    let _ = std::fs::remove_dir_all(&d);
}
