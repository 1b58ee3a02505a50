//! The measurement CSV (one tidy table for every participant, read with the `csv`
//! crate) and the assembly of a participant's measurements for the analysis.
//!
//! Columns (header required, any order; unknown columns refused):
//! `participant`, `kind` (`composition`, `rmr`, `tee`), `date` (the visit, the RMR,
//! or the TEE period's first day), `last_date` (TEE), `fat_kg`, `fat_free_kg`,
//! `mass_kg` (composition; mass optional), `kcal_per_day` (RMR, TEE), `method`
//! (composition, TEE), `fat_sd_kg`, `fat_free_sd_kg`, `sd_kcal_per_day` (optional
//! precision), `note`.

use super::{Body, Delivered, PilotParticipant};
use crate::error::{Error, InputError, Location};
use crate::register::Measurement;
use chrono::NaiveDate;

/// The columns a measurement CSV may have.
pub const COLUMNS: [&str; 13] = [
    "participant",
    "kind",
    "date",
    "last_date",
    "fat_kg",
    "fat_free_kg",
    "mass_kg",
    "kcal_per_day",
    "method",
    "fat_sd_kg",
    "fat_free_sd_kg",
    "sd_kcal_per_day",
    "note",
];

/// One row of a measurement CSV (the register's type, which it imports).
pub use crate::register::ImportedMeasurement as Imported;

fn err(at: &Location, key: &str, message: String) -> Error {
    Error::Input(InputError {
        location: at.clone(),
        key: Some(key.to_string()),
        message,
    })
}

/// Parse a measurement CSV; `file` names it in messages.
pub fn parse_measurements(file: &str, text: &str) -> Result<Vec<Imported>, Error> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut rdr = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let head_at = Location {
        file: file.to_string(),
        line: Some(1),
        column: None,
    };
    let headers = rdr
        .headers()
        .map_err(|e| err(&head_at, "header", format!("cannot read the header: {e}")))?
        .clone();
    check_header(&head_at, &headers)?;
    let mut out = Vec::new();
    for rec in rdr.records() {
        let rec = rec.map_err(|e| {
            let line = e.position().map(|p| p.line() as usize);
            err(
                &Location {
                    file: file.to_string(),
                    line,
                    column: None,
                },
                "row",
                format!("cannot read the row: {e}"),
            )
        })?;
        out.push(parse_row(file, &headers, &rec)?);
    }
    Ok(out)
}

/// Refuse a header with an unknown column or without a required one.
fn check_header(head_at: &Location, headers: &csv::StringRecord) -> Result<(), Error> {
    for h in headers.iter() {
        if !COLUMNS.contains(&h) {
            return Err(err(
                head_at,
                h,
                format!("unknown column \"{h}\"; allowed {}", COLUMNS.join(", ")),
            ));
        }
    }
    for need in ["participant", "kind", "date"] {
        if !headers.iter().any(|h| h == need) {
            return Err(err(
                head_at,
                need,
                format!("the column \"{need}\" is missing"),
            ));
        }
    }
    Ok(())
}

/// One row of the CSV: its values read by `kind` and checked.
fn parse_row(
    file: &str,
    headers: &csv::StringRecord,
    rec: &csv::StringRecord,
) -> Result<Imported, Error> {
    let at = Location {
        file: file.to_string(),
        line: rec.position().map(|p| p.line() as usize),
        column: None,
    };
    let get = |k: &str| -> Option<&str> {
        headers
            .iter()
            .position(|h| h == k)
            .and_then(|i| rec.get(i))
            .filter(|v| !v.is_empty())
    };
    let code = get("participant")
        .ok_or_else(|| err(&at, "participant", "the participant code is empty".into()))?
        .to_string();
    let num = |k: &str| -> Result<Option<f64>, Error> {
        match get(k) {
            None => Ok(None),
            Some(v) => v
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .map(Some)
                .ok_or_else(|| {
                    err(
                        &at,
                        k,
                        format!("participant {code}: \"{v}\" is not a number"),
                    )
                }),
        }
    };
    let need = |k: &str, kind: &str| -> Result<f64, Error> {
        num(k)?.ok_or_else(|| {
            err(
                &at,
                k,
                format!("participant {code}: a {kind} row needs {k}"),
            )
        })
    };
    let date = |k: &str| -> Result<NaiveDate, Error> {
        let v = get(k).ok_or_else(|| err(&at, k, format!("participant {code}: {k} is empty")))?;
        NaiveDate::parse_from_str(v, "%Y-%m-%d").map_err(|_| {
            err(
                &at,
                k,
                format!("participant {code}: \"{v}\" is not a date; write YYYY-MM-DD"),
            )
        })
    };
    let method = |kind: &str| -> Result<String, Error> {
        get("method").map(str::to_string).ok_or_else(|| {
            err(
                &at,
                "method",
                format!("participant {code}: a {kind} row needs its method (e.g. DXA, DLW)"),
            )
        })
    };
    let kind = get("kind").unwrap_or("");
    let measurement = match kind {
        "composition" => Measurement::Composition {
            date: date("date")?,
            fat_kg: need("fat_kg", kind)?,
            fat_free_kg: need("fat_free_kg", kind)?,
            mass_kg: num("mass_kg")?,
            method: method(kind)?,
            fat_sd_kg: num("fat_sd_kg")?,
            fat_free_sd_kg: num("fat_free_sd_kg")?,
        },
        "rmr" => Measurement::Rmr {
            date: date("date")?,
            kcal_per_day: need("kcal_per_day", kind)?,
            sd_kcal_per_day: num("sd_kcal_per_day")?,
        },
        "tee" => Measurement::Tee {
            first: date("date")?,
            last: date("last_date")?,
            kcal_per_day: need("kcal_per_day", kind)?,
            method: method(kind)?,
            sd_kcal_per_day: num("sd_kcal_per_day")?,
        },
        other => {
            return Err(err(
                &at,
                "kind",
                format!(
                    "participant {code}: unknown kind \"{other}\"; allowed composition, rmr, tee"
                ),
            ));
        }
    };
    measurement.check(&code, &at)?;
    Ok(Imported {
        participant: code,
        measurement,
        note: get("note").unwrap_or("").to_string(),
        at,
    })
}

/// A participant for the analysis from their measurements, in the order given
/// (visits out of date order are then refused by [`super::check`]).
pub fn assemble(
    code: &str,
    arm: &str,
    body: Body,
    rows: &[(Measurement, Location)],
    sessions: Vec<Delivered>,
    protocol: Option<(NaiveDate, NaiveDate)>,
) -> PilotParticipant {
    let mut p = PilotParticipant {
        code: code.to_string(),
        arm: arm.to_string(),
        body,
        visits: vec![],
        rmr: vec![],
        tee: vec![],
        sessions,
        baseline_intake: None,
        protocol,
        constants: None,
        screening: None,
    };
    for (m, at) in rows {
        match m {
            Measurement::Composition { .. } => p.visits.push(m.visit(at)),
            Measurement::Rmr { .. } => p.rmr.push(m.rmr(at)),
            Measurement::Tee { .. } => p.tee.push(m.tee(at)),
        }
    }
    p
}
