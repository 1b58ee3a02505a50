//! Reading one number cell of a log, with what is wrong with the text when it is
//! not a plain number (a decimal comma, a unit in the cell).

/// A finite number, or what is wrong with the text.
pub(super) fn parse_number(s: &str) -> Result<f64, String> {
    if let Ok(x) = s.parse::<f64>() {
        return if x.is_finite() {
            Ok(x)
        } else {
            Err(format!("value \"{s}\" is not a finite number"))
        };
    }
    if s.contains(',') {
        let dotted = s.replace(',', ".");
        if dotted.parse::<f64>().is_ok_and(f64::is_finite) {
            return Err(format!(
                "value \"{s}\" uses a comma as the decimal separator; write {dotted}"
            ));
        }
    }
    let head = s
        .trim_end_matches(|c: char| c.is_alphabetic() || c == ' ' || c == '%' || c == '/')
        .trim_end();
    if !head.is_empty() && head != s && head.parse::<f64>().is_ok_and(f64::is_finite) {
        return Err(format!(
            "value \"{s}\" is not a number; write the number alone ({head}), the unit is in the column name"
        ));
    }
    Err(format!("value \"{s}\" is not a number"))
}
