//! `fixsight-verify frontier` end to end on two configurations, the rendered
//! scenes and the first frames of the demo sequence (a quick run; the map
//! itself runs the whole grid on every image and frame): the costs read
//! from a `targets.json` in the format `targets` writes, the front, the
//! recommendation, the files, the report's section; and bad input as a
//! message, never a panic or a replaced file.

mod common;

use common::fresh_dir;
use std::fs;
use std::path::Path;
use std::process::Command;

fn dir(name: &str) -> std::path::PathBuf {
    fresh_dir(&format!("frontier-{name}"))
}

/// `fixsight-verify --quiet frontier --out OUT ARGS`: exit code, standard
/// output and error (a panic fails the test).
fn frontier(out: &Path, args: &[&str]) -> (Option<i32>, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(["--quiet", "frontier", "--out"])
        .arg(out)
        .args(args)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    assert!(!err.contains("panicked"), "{err}");
    let out = String::from_utf8_lossy(&o.stdout).to_string();
    (o.status.code(), out, err)
}

const CHEAP: &str = "map-binomial3-sobel-l1-t32";
const DEMO: &str = "map-gauss7-sobel-l2_round-t32";

/// Costs of the two configurations (made up for the test: the front and
/// the rule are what is checked, not the figures).
fn targets_json(cheap: f64, demo: f64) -> String {
    format!(
        r#"{{"schema": 1, "targets": [
  {{"name": "cortex-m4", "triple": "thumbv7em-none-eabihf", "vectors": 1, "passed": 1, "lang": "rust",
   "kernels": [
     {{"name": "pipeline.point_job/{CHEAP}", "instr_per_px": {cheap}, "code_bytes": 5, "stack_bytes": 1}},
     {{"name": "pipeline.point_job/{DEMO}", "instr_per_px": {demo}, "code_bytes": 5, "stack_bytes": 1}}]}}]}}"#
    )
}

#[test]
fn two_configurations_on_the_rendered_scenes() {
    let d = dir("two");
    let configs = format!("{CHEAP},{DEMO}");
    let quick = [
        "--configs",
        configs.as_str(),
        "--images",
        "rendered",
        "--frames",
        "3",
    ];
    // Without targets.json: figures, no cost, no recommendation.
    let (code, out, err) = frontier(&d, &quick);
    assert_eq!(code, Some(0), "{err}");
    assert!(out.contains("not measured"), "{out}");
    assert!(out.contains(DEMO) && out.contains(CHEAP), "{out}");
    for f in ["frontier.md", "frontier.json", "frontier.png"] {
        assert!(d.join(f).is_file(), "{f}");
    }
    // A second run does not replace them.
    let before = fs::read(d.join("frontier.md")).unwrap();
    let (code, _, err) = frontier(&d, &quick);
    assert_eq!(code, Some(2));
    assert!(err.contains("--overwrite"), "{err}");
    assert_eq!(fs::read(d.join("frontier.md")).unwrap(), before);

    // With costs: the demo configuration is more accurate on these scenes
    // (its smoothing is the reference's), so with the cheap one cheaper both
    // are on the front; neither reaches the budget of 72.9.
    fs::write(d.join("targets.json"), targets_json(100.0, 300.0)).unwrap();
    let mut args = quick.to_vec();
    args.push("--overwrite");
    let (code, _, err) = frontier(&d, &args);
    assert_eq!(code, Some(0), "{err}");
    let j: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(d.join("frontier.json")).unwrap()).unwrap();
    let pts = j["points"].as_array().unwrap();
    let get = |n: &str| pts.iter().find(|p| p["name"] == n).unwrap().clone();
    let (cheap, demo) = (get(CHEAP), get(DEMO));
    assert_eq!(cheap["m4_instr_per_px"], 100.0);
    assert!(demo["f1_worst"].as_f64().unwrap() > cheap["f1_worst"].as_f64().unwrap());
    assert_eq!(
        (cheap["pareto"].as_bool(), demo["pareto"].as_bool()),
        (Some(true), Some(true))
    );
    assert_eq!(j["budget_instr_per_px"].as_f64().unwrap().round(), 73.0);
    assert!(j["recommended"].is_string(), "{j}");
    assert_eq!(demo["frames"], 3);
    // The demo configuration dominated by a cheaper, as accurate one: off
    // the front.
    fs::write(d.join("targets.json"), targets_json(300.0, 100.0)).unwrap();
    let (code, _, err) = frontier(&d, &args);
    assert_eq!(code, Some(0), "{err}");
    let j: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(d.join("frontier.json")).unwrap()).unwrap();
    let cheap = j["points"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == CHEAP)
        .unwrap()
        .clone();
    assert_eq!(cheap["pareto"].as_bool(), Some(false));
    assert_eq!(j["recommended"], DEMO);
}

#[test]
fn bad_input_is_a_message() {
    let d = dir("bad");
    for (args, want) in [
        (vec!["--frames", "0"], "--frames"),
        (vec!["--frames", "97"], "--frames"),
        (vec!["--fps", "0"], "--fps"),
        (vec!["--clock-mhz=-5"], "--clock-mhz"),
        (vec!["--configs", "map-gauss7-sobel-l3-t32"], "magnitude"),
        (
            vec!["--configs", "map-none-scharr-l1-t32"],
            "not in the grid",
        ),
        (vec!["--configs", ""], "empty"),
        (vec!["--images", "some"], "rendered"),
    ] {
        let (code, _, err) = frontier(&d, &args);
        assert_eq!(code, Some(2), "{args:?}: {err}");
        assert!(err.contains(want), "{args:?}: {err}");
    }
    let missing = d.join("nowhere");
    let (code, _, err) = frontier(
        &d,
        &["--targets", missing.to_str().unwrap(), "--configs", DEMO],
    );
    assert_eq!(code, Some(2));
    assert!(err.contains("targets.json"), "{err}");
    fs::write(d.join("targets.json"), "{ not json").unwrap();
    let (code, _, err) = frontier(&d, &["--targets", d.to_str().unwrap(), "--configs", DEMO]);
    assert_eq!(code, Some(2));
    assert!(err.contains("not a targets file"), "{err}");
    assert!(!d.join("frontier.md").exists());
}
