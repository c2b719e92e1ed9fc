use super::golden::*;
use serde_json::json;

use crate::scene::demo_scenes;

#[test]
fn bad_vector_params_are_refused_with_a_reason() {
    let cases = golden_cases(&demo_scenes());
    let link_case = cases
        .iter()
        .find(|c| c.id == "hysteresis.link.floor")
        .unwrap();
    assert!(run_vector("hysteresis.link", &json!({"stack": 3}), &link_case.inputs).is_err());
    let classify_case = cases
        .iter()
        .find(|c| c.id == "hysteresis.classify.floor")
        .unwrap();
    assert!(run_vector(
        "hysteresis.classify",
        &json!({"low": 9, "high": 3}),
        &classify_case.inputs
    )
    .unwrap_err()
    .contains("low threshold 9 is above high threshold 3"));
    assert!(run_vector("hysteresis.nothing", &json!({}), &link_case.inputs).is_err());
}
