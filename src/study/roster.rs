//! The roster: one CSV row per participant, with the plan's participant keys as
//! columns (`id, sex, age_years, height_cm, mass_kg` required; `body_fat_percent,
//! rmr_kcal_per_day, intake_kcal_per_day, pal`, the screening answers and `arm`
//! optional). Every value is checked against the plan's ranges (docs/file-formats.md section 1), and each
//! participant is calibrated, so an error names the row and the column.

use super::Study;
use crate::error::{Error, InputError, Location};
use crate::model::Subject;
use crate::model::energy::{CalibrationError, calibrate};
use crate::plan::participant::{self, EMPTY_ID, Field};
use crate::plan::{Participant, Screening};

/// One roster row.
#[derive(Debug, Clone, PartialEq)]
pub struct RosterEntry {
    /// Line in the file (the header is line 1).
    pub line: usize,
    /// The participant.
    pub participant: Participant,
    /// The arm the roster assigns, if any.
    pub arm: Option<usize>,
}

/// Columns: name, required, and the participant field checked by the participant
/// rules ([`crate::plan::participant`]; None: text/bool).
const COLUMNS: [(&str, bool, Option<Field>); 14] = [
    ("id", true, None),
    ("sex", true, None),
    ("age_years", true, Some(Field::Age)),
    ("height_cm", true, Some(Field::Height)),
    ("mass_kg", true, Some(Field::Mass)),
    ("body_fat_percent", false, Some(Field::BodyFat)),
    ("rmr_kcal_per_day", false, Some(Field::Rmr)),
    ("intake_kcal_per_day", false, Some(Field::Intake)),
    ("pal", false, Some(Field::Pal)),
    ("exercises_regularly", false, None),
    ("known_disease", false, None),
    ("signs_or_symptoms", false, None),
    ("medical_clearance", false, None),
    ("arm", false, None),
];

struct Cx<'a> {
    file: &'a str,
}

impl Cx<'_> {
    fn err(&self, line: Option<usize>, column: Option<&str>, message: String) -> Error {
        Error::Input(InputError {
            location: Location {
                file: self.file.to_string(),
                line,
                column: None,
            },
            key: column.map(str::to_string),
            message,
        })
    }
}

/// Read and validate a roster for `study`.
pub fn load_roster(path: &std::path::Path, study: &Study) -> Result<Vec<RosterEntry>, Error> {
    let f = crate::input::read(path)?;
    parse_roster(&f.name, &f.raw, study)
}

/// A cell as written, trimmed, without the double quotes some tools leave around a
/// cell after spaces (the `csv` crate removes those of a properly quoted cell).
fn clean(cell: &str) -> &str {
    let c = cell.trim();
    c.strip_prefix('"')
        .and_then(|x| x.strip_suffix('"'))
        .map_or(c, str::trim)
}

/// Parse and validate roster text; `file` names it in errors.
pub fn parse_roster(file: &str, text: &str, study: &Study) -> Result<Vec<RosterEntry>, Error> {
    let cx = Cx { file };
    let text = crate::input::normalise(text);
    let (records, fault) = crate::input::csv_records(&text, true);
    let mut records = records.into_iter().filter(|r| {
        let first = r.cells.first().map_or("", |c| c.trim());
        let blank = r.cells.len() == 1 && first.is_empty();
        !(blank || first.starts_with('#'))
    });
    let Some(head) = records.next() else {
        if let Some(f) = fault {
            return Err(f.into_error(file, None));
        }
        return Err(cx.err(
            None,
            None,
            format!(
                "empty roster; the first line is the header, e.g. {}",
                required_header()
            ),
        ));
    };
    let header: Vec<String> = head.cells.iter().map(|c| clean(c).to_string()).collect();
    let index = header_index(&cx, head.line, &header)?;
    let mut out: Vec<RosterEntry> = Vec::new();
    for record in records {
        let ln = record.line;
        let cells: Vec<&str> = record.cells.iter().map(|c| clean(c)).collect();
        if cells.len() != header.len() {
            return Err(cx.err(Some(ln), None, format!("{} cells for {} columns; every row needs one cell per header column (put a value that holds a comma in double quotes)", cells.len(), header.len())));
        }
        let cell = |k: usize| index[k].map(|i| cells[i]).filter(|c| !c.is_empty());
        let entry = check_row(&cx, study, ln, &cell, &out)?;
        out.push(entry);
    }
    if let Some(f) = fault {
        let key = f.cell.and_then(|c| header.get(c).cloned());
        return Err(f.into_error(file, key));
    }
    if out.is_empty() {
        return Err(cx.err(
            None,
            None,
            "the roster has a header but no participants; add one row per participant".to_string(),
        ));
    }
    let with_arm = out.iter().filter(|e| e.arm.is_some()).count();
    if with_arm > 0 && with_arm < out.len() {
        let e = out
            .iter()
            .find(|e| e.arm.is_none())
            .expect("some row has no arm");
        return Err(cx.err(Some(e.line), Some("arm"), "empty while other rows give an arm; give every participant an arm, or leave the column empty everywhere and have the arms randomised".to_string()));
    }
    Ok(out)
}

/// The position in the header of each of [`COLUMNS`], checking the header names.
fn header_index(
    cx: &Cx,
    line: usize,
    header: &[String],
) -> Result<[Option<usize>; COLUMNS.len()], Error> {
    let mut index = [None; COLUMNS.len()];
    for (i, h) in header.iter().enumerate() {
        let Some(k) = COLUMNS.iter().position(|(n, ..)| n == h) else {
            let looks_like_data = h.parse::<f64>().is_ok();
            let hint = if looks_like_data {
                format!(
                    "the first line holds data; insert the header {} as line 1",
                    required_header()
                )
            } else {
                format!(
                    "allowed columns {}",
                    COLUMNS.iter().map(|c| c.0).collect::<Vec<_>>().join(", ")
                )
            };
            return Err(cx.err(
                Some(line),
                Some(h),
                format!("unknown column \"{h}\"; {hint}"),
            ));
        };
        if index[k].is_some() {
            return Err(cx.err(
                Some(line),
                Some(h),
                format!("column \"{h}\" appears twice in the header"),
            ));
        }
        index[k] = Some(i);
    }
    for (k, (n, required, _)) in COLUMNS.iter().enumerate() {
        if *required && index[k].is_none() {
            return Err(cx.err(
                Some(line),
                Some(n),
                format!(
                    "missing required column; the header needs {}",
                    required_header()
                ),
            ));
        }
    }
    Ok(index)
}

/// Check the cells of the row on line `ln` (`cell(k)`: the cell of column `k` of
/// [`COLUMNS`], None when empty or absent) against the participant rules; `earlier`
/// are the rows before it.
fn check_row<'c>(
    cx: &Cx,
    study: &Study,
    ln: usize,
    cell: &dyn Fn(usize) -> Option<&'c str>,
    earlier: &[RosterEntry],
) -> Result<RosterEntry, Error> {
    let num = |k: usize| -> Result<Option<f64>, Error> {
        let (n, _, field) = COLUMNS[k];
        let Some(c) = cell(k) else { return Ok(None) };
        let field = field.expect("a numeric column");
        let x: f64 = c.parse().map_err(|_| {
            cx.err(
                Some(ln),
                Some(n),
                format!("value \"{c}\" is not a number; {}", field.allowed()),
            )
        })?;
        field
            .check(x)
            .map(Some)
            .map_err(|msg| cx.err(Some(ln), Some(n), msg))
    };
    let id = cell(0).ok_or_else(|| cx.err(Some(ln), Some("id"), EMPTY_ID.to_string()))?;
    if let Some(first) = earlier.iter().find(|e| e.participant.id == id) {
        return Err(cx.err(
            Some(ln),
            Some("id"),
            format!(
                "\"{id}\" is already used on line {}; codes must be unique",
                first.line
            ),
        ));
    }
    let sex = match cell(1) {
        Some(word) => participant::sex(word).map_err(|msg| cx.err(Some(ln), Some("sex"), msg))?,
        None => {
            return Err(cx.err(
                Some(ln),
                Some("sex"),
                format!("empty; allowed {}", participant::sex_words()),
            ));
        }
    };
    let need = |k: usize| -> Result<f64, Error> {
        num(k)?.ok_or_else(|| {
            let (n, _, field) = COLUMNS[k];
            let allowed = field.expect("numeric").allowed();
            cx.err(Some(ln), Some(n), format!("empty; {allowed}"))
        })
    };
    let (age, height, mass) = (need(2)?, need(3)?, need(4)?);
    participant::check_bmi(mass, height).map_err(|msg| cx.err(Some(ln), Some("mass_kg"), msg))?;
    let flag = |k: usize| -> Result<Option<bool>, Error> {
        match cell(k) {
            None => Ok(None),
            Some("true") => Ok(Some(true)),
            Some("false") => Ok(Some(false)),
            Some(other) => Err(cx.err(
                Some(ln),
                Some(COLUMNS[k].0),
                format!("unknown value \"{other}\"; allowed true, false"),
            )),
        }
    };
    let answers = [flag(9)?, flag(10)?, flag(11)?];
    let screening = match answers {
        [Some(a), Some(b), Some(c)] => Some(Screening {
            exercises_regularly: a,
            known_disease: b,
            signs_or_symptoms: c,
            medical_clearance: flag(12)?.unwrap_or(false),
        }),
        [None, None, None] => {
            if flag(12)?.is_some() {
                return Err(cx.err(Some(ln), Some("medical_clearance"), "given without the screening answers; give exercises_regularly, known_disease and signs_or_symptoms too (true or false)".to_string()));
            }
            None
        }
        _ => {
            let missing = (9..12)
                .find(|k| answers[k - 9].is_none())
                .expect("one is missing");
            return Err(cx.err(Some(ln), Some(COLUMNS[missing].0), "empty while other screening answers are given; answer all three (true or false) or none".to_string()));
        }
    };
    let arm = cell(13).map(|a| arm_of(cx, study, ln, a)).transpose()?;
    let subject = Subject {
        sex,
        age_years: age,
        height_cm: height,
        mass_kg: mass,
        body_fat_percent: num(5)?,
        rmr_kcal_per_day: num(6)?,
        intake_kcal_per_day: num(7)?,
        pal: num(8)?,
    };
    check_calibrates(&subject, study).map_err(|(col, msg)| {
        cx.err(Some(ln), Some(col), format!("participant \"{id}\": {msg}"))
    })?;
    Ok(RosterEntry {
        line: ln,
        participant: Participant {
            id: id.to_string(),
            subject,
            screening,
            fitness: None,
        },
        arm,
    })
}

/// The arm named in the roster's `arm` column on line `ln`.
fn arm_of(cx: &Cx, study: &Study, ln: usize, a: &str) -> Result<usize, Error> {
    study.arm_index(a).ok_or_else(|| {
        cx.err(
            Some(ln),
            Some("arm"),
            format!(
                "unknown arm \"{a}\"; the study's arms are {}",
                study.arm_names()
            ),
        )
    })
}

fn required_header() -> String {
    COLUMNS
        .iter()
        .filter(|c| c.1)
        .map(|c| c.0)
        .collect::<Vec<_>>()
        .join(",")
}

/// Calibrate a participant with the study's model; on failure the column to blame
/// and what is wrong. Also every activity must cost more than rest at baseline.
pub(crate) fn check_calibrates(
    subject: &Subject,
    study: &Study,
) -> Result<(), (&'static str, String)> {
    let (baseline, physiology) = calibrate(subject, &study.constants).map_err(|e| match e {
        CalibrationError::PalTooLow { activity_kcal_per_day, pal, minimum_pal } => (
            if subject.pal.is_some() { "pal" } else { "intake_kcal_per_day" },
            format!("PAL {pal:.2} leaves {activity_kcal_per_day:.0} kcal/day for non-exercise activity after the thermic effect of food; allowed a PAL above {minimum_pal:.2}"),
        ),
        CalibrationError::EstimatedFatOutOfRange(p) => (
            "body_fat_percent",
            format!("body fat estimated from BMI (Deurenberg 1991) is {p:.1}%, outside 3 to 70%; give a measured body_fat_percent"),
        ),
    })?;
    for a in std::iter::once(&study.activity).chain(study.rotation.iter().map(|r| &r.activity)) {
        let met = a.intensity.met_at(baseline.mass_kg);
        if physiology.net_kcal_per_min(met, baseline.mass_kg, baseline.rmr_kcal_per_day) <= 0.0 {
            return Err((
                "mass_kg",
                format!(
                    "\"{}\" at {met:.2} MET costs no more than rest for this participant; the study's activity is too light",
                    a.label
                ),
            ));
        }
    }
    Ok(())
}
