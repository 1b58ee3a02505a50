//! JSON output, keys per docs/file-formats.md section 4. Every float is rounded to 4 decimals so that the
//! bytes are stable; no number is ever NaN or infinite.

use serde::Serialize;
use serde_json::Value;

/// Decimal places kept in JSON numbers (masses keep at least three, docs/file-formats.md section 4).
pub const DECIMALS: i32 = 4;

fn round(v: &mut Value) {
    match v {
        Value::Number(n) if n.is_f64() => {
            let x = n.as_f64().unwrap_or(0.0);
            let p = 10f64.powi(DECIMALS);
            let r = (x * p).round() / p;
            // -0.0 prints as "-0.0"; keep output stable.
            let r = if r == 0.0 { 0.0 } else { r };
            *v = serde_json::Number::from_f64(r).map_or(Value::Null, Value::Number);
        }
        Value::Array(a) => a.iter_mut().for_each(round),
        Value::Object(o) => o.values_mut().for_each(round),
        _ => {}
    }
}

/// Pretty JSON with rounded numbers and a final newline.
pub fn render<T: Serialize>(report: &T) -> String {
    let mut v = serde_json::to_value(report).expect("report structs serialize");
    round(&mut v);
    let mut s = serde_json::to_string_pretty(&v).expect("a JSON value serializes");
    s.push('\n');
    s
}
