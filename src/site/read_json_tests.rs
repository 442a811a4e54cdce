use super::*;
use crate::core::fieldtest::FieldTestInput;
use crate::core::simulate::Scenario;
use serde_json::json;

fn test_field(v: serde_json::Value) -> String {
    read_json::<FieldTestInput>(v, "this field test").unwrap_err().field
}

fn scenario_field(v: serde_json::Value) -> String {
    read_json::<Scenario>(v, "this scenario").unwrap_err().field
}

#[test]
fn field_test_errors_name_their_field_through_the_kind_tag() {
    let bleed = |extra: serde_json::Value| {
        let mut v = json!({"kind": "bleed_down", "start_pressure_bar_g": 7, "end_pressure_bar_g": 5,
                           "duration_s": 90});
        v.as_object_mut().unwrap().extend(extra.as_object().unwrap().clone());
        v
    };
    assert_eq!(test_field(bleed(json!({"start_pressure_bar_g": "seven"}))), "start_pressure_bar_g");
    assert_eq!(test_field(bleed(json!({"bogus": "<b>x</b>"}))), "bogus");
    assert_eq!(
        test_field(json!({"kind": "bleed_down", "end_pressure_bar_g": 5, "duration_s": 9})),
        "start_pressure_bar_g"
    );
    assert_eq!(test_field(json!({"kind": "teleport"})), "kind");
    assert_eq!(test_field(json!({"start_pressure_bar_g": 7})), "kind");
    // The tag itself is not an unknown field.
    assert!(read_json::<FieldTestInput>(bleed(json!({})), "t").is_ok());
}

#[test]
fn scenario_errors_name_the_change_and_its_field() {
    let set = |c: serde_json::Value| json!({"name": "x", "changes": [c]});
    assert_eq!(
        scenario_field(set(json!({"op": "set_pressure", "target_bar_g": "high"}))),
        "changes[0].target_bar_g"
    );
    assert_eq!(
        scenario_field(set(json!({"op": "set_pressure", "target_bar_g": 6, "bogus": 1}))),
        "changes[0].bogus"
    );
    assert_eq!(scenario_field(set(json!({"op": "fly"}))), "changes[0].op");
    assert_eq!(scenario_field(json!({"name": "x", "bogus": 1})), "bogus");
    let add = json!({"op": "add", "compressor": {"tag": "N", "kind": "lubricated_screw",
        "control": "load_unload", "cooling": "air", "rated_power_kw": "fifty",
        "rated_flow_m3_min": 1, "rated_pressure_bar_g": 7}});
    assert_eq!(scenario_field(set(add.clone())), "changes[0].compressor.rated_power_kw");
    let mut extra = add;
    extra["compressor"]["rated_power_kw"] = json!(50);
    extra["compressor"]["colour"] = json!("red");
    assert_eq!(scenario_field(set(extra)), "changes[0].compressor.colour");
}
