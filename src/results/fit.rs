//! The JSON of `biasline fit`: the kind and its fitted parameter keys.

use crate::document::PartKind;
use serde_json::{json, Value};
use std::collections::BTreeMap;

pub fn json(kind: PartKind, params: &BTreeMap<String, f64>) -> Value {
    json!({
        "kind": kind.word(),
        "parameters": params,
    })
}
