//! Weekly session sheets for the supervising trainer: one page per participant and
//! week, as one self-contained HTML file to print (or save as PDF) from a browser, or
//! as plain text for the terminal. A page holds the week's dates, the body mass the
//! minutes were computed from, every session's prescription (activity, intensity,
//! warm-up, minutes at target, cool-down, energy) with its relative targets (ACSM
//! class, RPE range, talk test, Karvonen heart-rate range), blank cells for what was
//! delivered, a weigh-in box, the closed dates with the make-up note, the screening
//! outcome and the standing cautions.
//!
//! Target heart rate `THR = HRrest + i (HRmax - HRrest)`, `i` the fraction of the
//! heart-rate reserve (computed in `activity::targets`).
//! Reference: Karvonen MJ, Kentala E, Mustala O 1957, Ann Med Exp Biol Fenn 35:307;
//! Tanaka H, Monahan KD, Seals DR 2001, J Am Coll Cardiol 37:153 (HRmax = 208 - 0.7
//! x age); Borg GA 1982, Med Sci Sports Exerc 14:377 (RPE 6-20); ACSM's Guidelines for
//! Exercise Testing and Prescription, 10th ed. (intensity classes).
//!
//! The HTML has no scripts, external stylesheets, fonts or images: one inline
//! `<style>` with system font stacks. Its layout fits the smaller of A4 and US Letter
//! in each direction (a page box of 186 x 250 mm inside 12 mm margins: A4 leaves
//! 186 x 273 mm, Letter 192 x 255 mm), so either paper prints it; the `@page` rule
//! names the paper the browser should pick.

use super::LogSummary;
use super::chart::escape;
use super::delivered::{self, DeliveredLog, Record};
use super::sessions::{PlannedSession, PlannedWeek, SessionPlan};
use super::units::Units;
use crate::activity::Intensity;
use crate::activity::targets::{HeartRateTarget, RelativeTargets};
use crate::plan::EnergyBasis;
use crate::safety::{CAUTIONS, ScreeningOutcome};
use crate::simulate::MassSource;
use chrono::NaiveDate;
use std::fmt::Write;

/// One participant's sheets: the planned sessions of one scenario, which of its weeks
/// to print, the screening outcome and the log the plan was re-planned from (if any).
/// A list of these prints several participants into one file, in the list's order.
#[derive(Debug, Clone, PartialEq)]
pub struct SheetInput {
    /// The planned sessions (every protocol week).
    pub sessions: SessionPlan,
    /// The weeks to print, one page each, in this order (`commands::sheets::sheet_weeks` checks
    /// them against the plan; a week the plan does not have prints no page).
    pub weeks: Vec<u32>,
    /// The participant's screening outcome.
    pub screening: ScreeningOutcome,
    /// The participant log the sessions were re-planned from.
    pub log: Option<LogSummary>,
    /// Display units (mass, speed, energy).
    pub units: Units,
    /// What the log says was delivered (None without a log): a re-printed week shows
    /// it beside the prescription on every date up to the log's as-of date.
    pub delivered: Option<DeliveredLog>,
}

impl SheetInput {
    /// The planned weeks to print.
    fn pages(&self) -> impl Iterator<Item = &PlannedWeek> {
        self.weeks
            .iter()
            .filter_map(|n| self.sessions.weeks.iter().find(|w| w.week == *n))
    }
}

/// The paper the HTML's `@page` rule asks for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Paper {
    /// ISO A4, 210 x 297 mm.
    A4,
    /// US Letter, 8.5 x 11 in (215.9 x 279.4 mm).
    Letter,
}

impl Paper {
    /// The CSS page size.
    fn css(self) -> &'static str {
        match self {
            Paper::A4 => "A4",
            Paper::Letter => "letter",
        }
    }
}

/// Rows of a week's table, in date order: a closed date, or the sessions of one date
/// with the same prescription (the two bouts of a split session), which share their
/// prescription cells and get a line each to record what was delivered.
enum Row<'a> {
    Sessions(Vec<&'a PlannedSession>),
    Closed(NaiveDate),
}

/// Everything a sheet prints of a session's prescription is the same.
fn same_prescription(a: &PlannedSession, b: &PlannedSession) -> bool {
    a.date == b.date
        && a.activity == b.activity
        && a.intensity == b.intensity
        && a.met == b.met
        && a.warm_up == b.warm_up
        && a.cool_down == b.cool_down
        && a.minutes == b.minutes
        && a.session_minutes == b.session_minutes
        && a.energy_kcal == b.energy_kcal
        && a.targets == b.targets
}

fn rows(w: &PlannedWeek) -> Vec<Row<'_>> {
    let mut rows: Vec<(NaiveDate, Row)> = Vec::new();
    for s in &w.sessions {
        match rows.last_mut() {
            Some((_, Row::Sessions(group))) if same_prescription(group[0], s) => group.push(s),
            _ => rows.push((s.date, Row::Sessions(vec![s]))),
        }
    }
    rows.extend(w.closed.iter().map(|d| (*d, Row::Closed(*d))));
    // Stable, so sessions keep their order within a date.
    rows.sort_by_key(|(d, _)| *d);
    rows.into_iter().map(|(_, r)| r).collect()
}

// ---------------------------------------------------------------------------
// The words, shared by both formats
// ---------------------------------------------------------------------------

/// "Mon 2027-03-01" (chrono's weekday names are English whatever the locale).
fn day(d: NaiveDate) -> String {
    d.format("%a %Y-%m-%d").to_string()
}

fn title(input: &SheetInput, w: &PlannedWeek) -> String {
    format!(
        "Session sheet: {}, week {} of {}",
        input.sessions.participant_id,
        w.week,
        input.sessions.weeks.len()
    )
}

fn dates(w: &PlannedWeek) -> String {
    format!("{} to {}", day(w.start), day(w.end))
}

fn mass_words(w: &PlannedWeek, u: Units) -> String {
    let source = match (w.mass_source, w.week) {
        (MassSource::Measured, 1) => "measured at baseline".to_string(),
        (MassSource::Measured, _) => "measured at the latest weigh-in".to_string(),
        (MassSource::Projected, _) => {
            format!("projected by the model for {}", day(w.start))
        }
    };
    format!(
        "Minutes computed for a body mass of {:.1} {} ({source}).",
        u.mass(w.reference_mass_kg),
        u.mass_label()
    )
}

fn basis_words(basis: EnergyBasis, u: Units) -> String {
    match basis {
        EnergyBasis::Gross => format!("gross {}", u.energy_label()),
        EnergyBasis::Net => format!("{} net of rest", u.energy_label()),
    }
}

fn source_words(input: &SheetInput) -> String {
    let s = &input.sessions;
    let easy = s
        .weeks
        .iter()
        .flat_map(|w| &w.sessions)
        .any(|x| x.warm_up.is_some() || x.cool_down.is_some());
    let mut t = format!(
        "Plan: {}; scenario: \"{}\"; energy: {} for the whole session{}.",
        s.plan,
        s.scenario,
        basis_words(s.basis, input.units),
        if easy {
            ", warm-up and cool-down included"
        } else {
            ""
        }
    );
    if let Some(log) = &input.log {
        let _ = write!(
            t,
            " Re-planned from the log {} up to {} ({} weigh-ins, {} session rows).",
            log.path, log.as_of, log.weigh_ins, log.sessions
        );
    }
    t
}

/// The heart-rate basis of the week's targets, said once per page.
fn heart_rate_basis(w: &PlannedWeek) -> String {
    match w.sessions.iter().find_map(|s| s.targets.heart_rate.as_ref()) {
        Some(h) => format!(
            "Heart-rate targets by the Karvonen method, HRrest + %HRR x (HRmax - HRrest): HRrest {:.0} bpm, HRmax {:.0} bpm ({}).",
            h.hr_rest_bpm, h.hr_max_bpm, h.hr_max_source
        ),
        None => "Heart-rate targets: none (the plan gives no resting heart rate); use the RPE range and the talk test.".to_string(),
    }
}

fn screening_words(s: &ScreeningOutcome) -> String {
    format!("Screening result: {}.", s.recommendation)
}

fn clearance_words(s: &ScreeningOutcome) -> Option<&'static str> {
    s.clearance_missing.then_some(
        "Medical clearance is needed for this plan and is not on file: no session before it is.",
    )
}

/// The label of one line to record a delivered session: "bout 1" with `split`,
/// "session 2" for a second session on the same date, nothing for a single session.
fn record_label(group: &[&PlannedSession], s: &PlannedSession) -> Option<String> {
    match s.bout {
        Some(b) => Some(format!("bout {b}")),
        None if group.len() > 1 => Some(format!("session {}", s.index_on_date)),
        None => None,
    }
}

/// "2 bouts, each:" above the prescription of a group.
fn group_words(group: &[&PlannedSession]) -> Option<String> {
    let n = group.len();
    (n > 1).then(|| match group[0].bout {
        Some(_) => format!("{n} bouts, each:"),
        None => format!("{n} sessions, each:"),
    })
}

/// How the plan gives the intensity, with the MET at the week's reference mass.
fn intensity_words(s: &PlannedSession, u: Units) -> String {
    let how = match &s.intensity {
        Intensity::Compendium { code, version, .. } => format!("Compendium {code} ({version})"),
        Intensity::Met { .. } => "MET stated in the plan".to_string(),
        Intensity::Walking {
            speed_kmh,
            grade_percent,
        }
        | Intensity::Running {
            speed_kmh,
            grade_percent,
        } => format!("{} at {grade_percent:.1}% grade", u.speed_text(*speed_kmh)),
        Intensity::CyclingWatts { watts } => format!("{watts:.0} W"),
        Intensity::Vo2Reserve { percent, .. } => format!("{percent:.0}% of VO2 reserve"),
    };
    format!("{how}, {:.1} MET", s.met)
}

fn warm_up_words(s: &PlannedSession) -> Option<String> {
    s.warm_up
        .map(|(m, met)| format!("warm-up {m} min at {met:.1} MET"))
}

fn target_minutes_words(s: &PlannedSession) -> String {
    format!("{} min at target", s.minutes)
}

fn cool_down_words(s: &PlannedSession) -> Option<String> {
    s.cool_down
        .map(|(m, met)| format!("cool-down {m} min at {met:.1} MET"))
}

fn total_minutes_words(s: &PlannedSession) -> Option<String> {
    (s.session_minutes != s.minutes).then(|| format!("{} min in all", s.session_minutes))
}

/// Warm-up, minutes at target, cool-down and the whole time, in session order.
fn session_parts(s: &PlannedSession) -> Vec<String> {
    warm_up_words(s)
        .into_iter()
        .chain(std::iter::once(target_minutes_words(s)))
        .chain(cool_down_words(s))
        .chain(total_minutes_words(s))
        .collect()
}

fn energy_words(s: &PlannedSession, u: Units) -> String {
    format!("{:.0} {}", u.energy(s.energy_kcal), u.energy_label())
}

fn percent_range((lo, hi): (f64, f64)) -> String {
    format!("{:.0}-{:.0}%", lo * 100.0, hi * 100.0)
}

/// "vigorous, 75% of VO2 reserve" or "moderate by MET".
fn class_words(t: &RelativeTargets) -> String {
    match t.vo2_reserve_fraction {
        Some(f) => format!("{}, {:.0}% of VO2 reserve", t.class.name(), f * 100.0),
        None => format!("{} by MET", t.class.name()),
    }
}

/// The heart-rate range and, apart, its share of the reserve.
fn heart_rate_parts(h: Option<&HeartRateTarget>) -> (String, Option<String>) {
    match h {
        Some(h) => (
            format!("HR {}-{} bpm", h.low_bpm, h.high_bpm),
            Some(format!("({} HRR)", percent_range(h.reserve))),
        ),
        None => ("HR: no target range".to_string(), None),
    }
}

fn rpe_words(t: &RelativeTargets) -> String {
    format!("RPE {}-{} (Borg 6-20)", t.rpe.0, t.rpe.1)
}

fn talk_words(t: &RelativeTargets) -> String {
    format!("talk test: {}", t.talk_test)
}

/// The targets of a session, one phrase a line.
fn target_parts(t: &RelativeTargets) -> [String; 4] {
    let (hr, reserve) = heart_rate_parts(t.heart_rate.as_ref());
    let hr = match reserve {
        Some(r) => format!("{hr} {r}"),
        None => hr,
    };
    [class_words(t), hr, rpe_words(t), talk_words(t)]
}

const CLOSED: &str = "Closed: no session.";

fn make_up_words(w: &PlannedWeek) -> Option<String> {
    w.make_up.as_ref().map(|m| format!("Make-up: {m}."))
}

fn over_max_words(w: &PlannedWeek) -> Option<String> {
    w.over_max
        .as_ref()
        .map(|o| format!("Maximum session length: {o}."))
}

fn step_down_words(w: &PlannedWeek) -> Option<String> {
    w.step_down.as_ref().map(|d| {
        format!(
            "After an absence: {d}; the dose rises back over two weeks (docs/model.md section 4)."
        )
    })
}

/// The week's notes: make-up, maximum length, step-down after an absence.
fn week_notes(w: &PlannedWeek) -> Vec<String> {
    make_up_words(w)
        .into_iter()
        .chain(over_max_words(w))
        .chain(step_down_words(w))
        .collect()
}

// ---------------------------------------------------------------------------
// HTML
// ---------------------------------------------------------------------------

/// The print style. Sizes are in mm and pt so that screen and paper agree; the page
/// box (186 x 250 mm) fits inside 12 mm margins of both A4 and Letter.
const STYLE: &str = r#"
:root { color-scheme: light; }
* { box-sizing: border-box; }
html { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
body { margin: 0; color: #111; background: #fff;
  font-family: system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, "Liberation Sans", "DejaVu Sans", sans-serif;
  font-size: 9pt; line-height: 1.25; }
.sheet { width: 186mm; min-height: 250mm; display: flex; flex-direction: column;
  break-after: page; page-break-after: always; }
.sheet:last-child { break-after: auto; page-break-after: auto; }
@media screen {
  body { background: #e4e4e4; padding: 8mm 0; }
  .sheet { background: #fff; margin: 0 auto 8mm; padding: 12mm; width: 210mm; min-height: 279mm;
    box-shadow: 0 1mm 3mm rgba(0,0,0,.25); }
}
header { display: flex; justify-content: space-between; align-items: baseline; gap: 4mm;
  border-bottom: 0.6mm solid #111; padding-bottom: 1.5mm; margin-bottom: 2mm; }
header .kind { font-size: 8pt; text-transform: uppercase; letter-spacing: 0.3mm; color: #444; }
h1 { font-size: 15pt; margin: 0; overflow-wrap: anywhere; }
header .dates { font-size: 12pt; font-weight: 600; white-space: nowrap; }
p { margin: 0 0 1mm; overflow-wrap: anywhere; }
.facts { margin-bottom: 2.5mm; }
.alert { font-weight: 700; border: 0.4mm solid #111; padding: 1mm 2mm; margin: 1mm 0 2mm; }
table { width: 100%; border-collapse: collapse; table-layout: fixed; }
th, td { border: 0.25mm solid #555; padding: 1mm 1.2mm; vertical-align: top; text-align: left; overflow-wrap: anywhere; }
th { background: #ececec; font-size: 8pt; font-weight: 600; overflow-wrap: normal; }
.sessions td { font-size: 8.5pt; }
.sessions .day { font-weight: 700; }
.sessions .day + span { white-space: nowrap; }
.sessions tbody { break-inside: avoid; page-break-inside: avoid; }
.sessions td.rec { background: #fff; height: 14mm; }
.sessions tbody.group td.rec { height: 9mm; }
.sessions td.rec .label { font-size: 7pt; color: #444; white-space: nowrap; }
.sessions th.rec { text-align: center; }
.sessions td span { display: block; }
.sessions td span.nw { display: inline; white-space: nowrap; }
.sessions .sub { color: #444; }
.sessions tr.closed td { background: #f4f4f4; }
.sessions td.rec.logged { font-weight: 600; }
.sessions td.rec.na { background: #f4f4f4; color: #666; text-align: center; }
.notes { margin-top: 1.5mm; }
.box { border: 0.4mm solid #111; margin-top: 3mm; padding: 1.5mm 2mm; }
.weigh { display: flex; gap: 6mm; align-items: flex-end; }
.weigh .blank { display: inline-block; border-bottom: 0.3mm solid #111; width: 28mm; height: 5mm; vertical-align: bottom; }
.weigh .blank.short { width: 16mm; }
.notes-box { flex: 1 1 auto; min-height: 14mm; }
h2 { font-size: 9.5pt; margin: 0 0 1mm; }
.cautions ul { margin: 0; padding-left: 4mm; }
.cautions li { margin-bottom: 0.6mm; font-size: 8pt; }
.dense .facts p, .dense .notes p { font-size: 8pt; margin-bottom: 0.5mm; }
.dense .sessions td { font-size: 7.5pt; line-height: 1.15; padding: 0.6mm 1mm; }
.dense .sessions td.rec { height: 9mm; }
.dense .sessions tbody.group td.rec { height: 6mm; }
.dense .box { margin-top: 2mm; padding: 1mm 2mm; }
.dense .notes-box { min-height: 8mm; }
.dense .cautions li { font-size: 7.5pt; margin-bottom: 0.3mm; }
"#;

/// Self-contained HTML: one page (`<section class="sheet">`) per participant and
/// week, in the order of `inputs` and of each input's weeks.
pub fn html(inputs: &[SheetInput], paper: Paper) -> String {
    let mut h = String::new();
    let title = match inputs {
        [one] => format!("Session sheets: {}", one.sessions.participant_id),
        _ => format!("Session sheets: {} participants", inputs.len()),
    };
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{}</title>\n<style>\n@page {{ size: {} portrait; margin: 12mm; }}{STYLE}</style>\n</head>\n<body>\n",
        escape(&title),
        paper.css()
    );
    for input in inputs {
        for w in input.pages() {
            html_page(&mut h, input, w);
        }
    }
    h.push_str("</body>\n</html>\n");
    h
}

/// The weekday and the date on two lines.
fn html_day(d: NaiveDate) -> String {
    format!(
        "<span class=\"day\">{}</span><span>{}</span>",
        d.format("%a"),
        d.format("%Y-%m-%d")
    )
}

/// The targets, one a line; a heart-rate range in bold, its share of the reserve kept
/// in one piece.
fn html_targets(t: &RelativeTargets) -> String {
    let hr = match heart_rate_parts(t.heart_rate.as_ref()) {
        (range, Some(reserve)) => format!(
            "<b>{}</b> <span class=\"nw\">{}</span>",
            escape(&range),
            escape(&reserve)
        ),
        (none, None) => escape(&none),
    };
    format!(
        "<span>{}</span><span>{hr}</span><span>{}</span><span>{}</span>",
        escape(&class_words(t)),
        escape(&rpe_words(t)),
        escape(&talk_words(t))
    )
}

/// The record cells of one session: minutes at target (with the line's label), the
/// setting used on equipment (in weeks with such a column), average HR, RPE and
/// initials; blank, or the log's values on a re-printed date.
fn html_record(cx: &Cx, s: &PlannedSession, label: Option<String>) -> String {
    let e = escape;
    let label = label
        .map(|l| format!("<span class=\"label\">{}</span>", e(&l)))
        .unwrap_or_default();
    let r = delivered::record(cx.log, s);
    let [m, hr, rpe] = delivered::record_values(r);
    let class = match r {
        Record::Blank => "rec",
        _ => "rec logged",
    };
    let mut t = format!("<td class=\"{class}\">{label}{}</td>", e(&m));
    if cx.setting_column {
        match delivered::setting_value(s, r, cx.mass_kg) {
            Some(v) => {
                let _ = write!(t, "<td class=\"{class}\">{}</td>", e(&v));
            }
            None => t.push_str("<td class=\"rec na\">-</td>"),
        }
    }
    let initials = match r {
        Record::Blank => "",
        _ => "log",
    };
    let _ = write!(
        t,
        "<td class=\"{class}\">{}</td><td class=\"{class}\">{}</td><td class=\"{class}\">{initials}</td>",
        e(&hr),
        e(&rpe)
    );
    t
}

/// What the record cells of a page need: the log, whether the week has a setting
/// column, and the week's reference mass (for a logged MET).
struct Cx<'a> {
    log: Option<&'a DeliveredLog>,
    setting_column: bool,
    mass_kg: f64,
}

/// One group of sessions: the prescription once, a line each to record.
fn html_sessions(h: &mut String, cx: &Cx, group: &[&PlannedSession], u: Units) {
    let e = escape;
    let s = group[0];
    let (class, span) = match group.len() {
        1 => ("", String::new()),
        n => (" class=\"group\"", format!(" rowspan=\"{n}\"")),
    };
    let mut session = String::new();
    for part in group_words(group).into_iter().chain(warm_up_words(s)) {
        let _ = write!(session, "<span>{}</span>", e(&part));
    }
    let _ = write!(
        session,
        "<span><b>{}</b></span>",
        e(&target_minutes_words(s))
    );
    for part in cool_down_words(s).into_iter().chain(total_minutes_words(s)) {
        let _ = write!(session, "<span>{}</span>", e(&part));
    }
    let energy = match group.len() {
        1 => format!("<b>{:.0}</b>", u.energy(s.energy_kcal)),
        _ => format!("<b>{:.0}</b> each", u.energy(s.energy_kcal)),
    };
    let _ = writeln!(
        h,
        "<tbody{class}><tr><td{span}>{}</td><td{span}><span><b>{}</b></span><span class=\"sub\">{}</span></td><td{span}>{session}</td><td{span}>{energy}</td><td{span}>{}</td>{}</tr>",
        html_day(s.date),
        e(&s.activity),
        e(&intensity_words(s, u)),
        html_targets(&s.targets),
        html_record(cx, s, record_label(group, s)),
    );
    for other in &group[1..] {
        let _ = writeln!(
            h,
            "<tr>{}</tr>",
            html_record(cx, other, record_label(group, other))
        );
    }
    h.push_str("</tbody>\n");
}

/// The table's columns and header: the prescription, then the record cells (with a
/// column for the setting used when a session of the week is on equipment).
fn html_table_head(h: &mut String, input: &SheetInput, w: &PlannedWeek, dense: bool) {
    let setting = delivered::setting_header(w, input.units);
    // Column widths, percent; a dense page gives the session column more, so that its
    // lines do not wrap in the smaller type. A setting column takes its room from the
    // others.
    let widths: &[&str] = match (dense, setting.is_some()) {
        (true, false) => &["10", "13", "22", "5.5", "25.5", "5.5", "6", "5.5", "7"],
        (false, false) => &["11.5", "16", "17", "5.5", "26", "5.5", "6", "5.5", "7"],
        (true, true) => &[
            "9.5", "12.5", "20", "5.5", "23", "5.5", "7", "5.5", "5.5", "6",
        ],
        (false, true) => &[
            "10.5", "15", "16", "5.5", "23", "5.5", "7", "5.5", "5.5", "6.5",
        ],
    };
    h.push_str("<table class=\"sessions\">\n<colgroup>");
    for width in widths {
        let _ = write!(h, "<col style=\"width:{width}%\">");
    }
    let setting_th = setting
        .map(|t| format!("<th class=\"rec\">{}</th>", escape(&t)))
        .unwrap_or_default();
    let _ = write!(
        h,
        "</colgroup>\n<thead><tr><th rowspan=\"2\">Date</th><th rowspan=\"2\">Activity and intensity</th><th rowspan=\"2\">Session</th><th rowspan=\"2\">{}</th><th rowspan=\"2\">Targets</th><th class=\"rec\" colspan=\"{}\">{}</th></tr>\n<tr><th class=\"rec\">min at target intensity</th>{setting_th}<th class=\"rec\">avg HR</th><th class=\"rec\">RPE</th><th class=\"rec\">initials</th></tr></thead>\n",
        input.units.energy_label(),
        if setting_th.is_empty() { 4 } else { 5 },
        escape(&delivered::header(input.delivered.as_ref(), w)),
    );
}

/// More table rows than this make a page dense (smaller type, less padding), so that
/// a week of seven days with two bouts each still fits one page.
const DENSE_ROWS: usize = 4;

fn html_page(h: &mut String, input: &SheetInput, w: &PlannedWeek) {
    let e = escape;
    let rows = rows(w);
    let dense = rows.len() > DENSE_ROWS;
    let class = if dense { "sheet dense" } else { "sheet" };
    let _ = write!(
        h,
        "<section class=\"{class}\">\n<header><div><div class=\"kind\">Session sheet</div><h1>{}, week {} of {}</h1></div><div class=\"dates\">{}</div></header>\n<div class=\"facts\">\n<p>{}</p>\n<p>{}</p>\n<p>{}</p>\n</div>\n",
        e(&input.sessions.participant_id),
        w.week,
        input.sessions.weeks.len(),
        e(&dates(w)),
        e(&mass_words(w, input.units)),
        e(&heart_rate_basis(w)),
        e(&source_words(input)),
    );
    if let Some(c) = clearance_words(&input.screening) {
        let _ = writeln!(h, "<p class=\"alert\">{}</p>", e(c));
    }
    let cx = Cx {
        log: input.delivered.as_ref(),
        setting_column: delivered::setting_header(w, input.units).is_some(),
        mass_kg: w.reference_mass_kg,
    };
    html_table_head(h, input, w, dense);
    let span = if cx.setting_column { 9 } else { 8 };
    for row in rows {
        match row {
            Row::Sessions(group) => html_sessions(h, &cx, &group, input.units),
            Row::Closed(d) => {
                let _ = writeln!(
                    h,
                    "<tbody><tr class=\"closed\"><td>{}</td><td colspan=\"{span}\">{}</td></tr></tbody>",
                    html_day(d),
                    e(CLOSED)
                );
            }
        }
    }
    h.push_str("</table>\n");
    let mut notes = week_notes(w);
    notes.extend(delivered::also_logged(input.delivered.as_ref(), w));
    if !notes.is_empty() {
        let _ = writeln!(
            h,
            "<div class=\"notes\">{}</div>",
            notes
                .iter()
                .map(|n| format!("<p>{}</p>", e(n)))
                .collect::<String>()
        );
    }
    h.push_str(
        &concat!(
            "<div class=\"box weigh\"><h2>Weigh-in</h2>",
            "<span>date <span class=\"blank\"></span></span>",
            "<span>mass <span class=\"blank short\"></span> {MASS}</span>",
            "<span>body fat, if measured <span class=\"blank short\"></span> %</span></div>\n",
            "<div class=\"box notes-box\"><h2>Notes</h2></div>\n",
        )
        .replace("{MASS}", input.units.mass_label()),
    );
    let _ = write!(
        h,
        "<div class=\"box cautions\"><h2>Screening and cautions</h2><ul>\n<li><b>{}</b></li>\n",
        e(&screening_words(&input.screening))
    );
    for c in CAUTIONS {
        let _ = writeln!(h, "<li>{}</li>", e(c));
    }
    h.push_str("</ul></div>\n</section>\n");
}

// ---------------------------------------------------------------------------
// Text
// ---------------------------------------------------------------------------

/// A blank to write on, in the text sheet.
const BLANK: &str = "________";

/// The same content as [`html`] for the terminal: one block per participant and
/// week, separated by a rule.
pub fn text(inputs: &[SheetInput]) -> String {
    let mut t = String::new();
    for input in inputs {
        for w in input.pages() {
            if !t.is_empty() {
                t.push_str(&format!("\n{}\n\n", "=".repeat(78)));
            }
            text_page(&mut t, input, w);
        }
    }
    t
}

/// One record line of the text sheet: blanks to fill in, or the log's values.
fn text_record(input: &SheetInput, w: &PlannedWeek, s: &PlannedSession) -> String {
    let r = delivered::record(input.delivered.as_ref(), s);
    match r {
        Record::Blank => {
            let setting = delivered::setting_blank(s, input.units, BLANK)
                .map(|x| format!("  {x}"))
                .unwrap_or_default();
            format!(
                "min at target intensity {BLANK}{setting}  avg HR {BLANK}  RPE {BLANK}  initials {BLANK}"
            )
        }
        _ => {
            let [m, hr, rpe] = delivered::record_values(r);
            let setting = delivered::setting_value(s, r, w.reference_mass_kg)
                .map(|x| format!("  setting {x}"))
                .unwrap_or_default();
            format!("(log) min at target intensity {m}{setting}  avg HR {hr}  RPE {rpe}")
        }
    }
}

fn text_page(t: &mut String, input: &SheetInput, w: &PlannedWeek) {
    let _ = writeln!(t, "{} ({})", title(input, w), dates(w));
    let _ = writeln!(t, "{}", mass_words(w, input.units));
    let _ = writeln!(t, "{}", heart_rate_basis(w));
    let _ = writeln!(t, "{}", source_words(input));
    if let Some(c) = clearance_words(&input.screening) {
        let _ = writeln!(t, "!! {c}");
    }
    t.push('\n');
    for row in rows(w) {
        match row {
            Row::Sessions(group) => {
                let s = group[0];
                let _ = writeln!(t, "{}  {}", day(s.date), s.activity);
                let _ = writeln!(t, "  intensity  {}", intensity_words(s, input.units));
                let each = if group.len() > 1 { " each" } else { "" };
                let session: Vec<String> = group_words(&group)
                    .into_iter()
                    .chain(std::iter::once(session_parts(s).join(", ")))
                    .collect();
                let _ = writeln!(
                    t,
                    "  session    {}; {}{each}",
                    session.join(" "),
                    energy_words(s, input.units)
                );
                let _ = writeln!(t, "  targets    {}", target_parts(&s.targets).join("; "));
                for one in &group {
                    let label = record_label(&group, one)
                        .map(|l| format!("{l}: "))
                        .unwrap_or_default();
                    let _ = writeln!(t, "  delivered  {label}{}", text_record(input, w, one));
                }
            }
            Row::Closed(d) => {
                let _ = writeln!(t, "{}  {CLOSED}", day(d));
            }
        }
    }
    let log = input.delivered.as_ref();
    for n in week_notes(w)
        .into_iter()
        .chain(delivered::also_logged(log, w))
    {
        let _ = writeln!(t, "{n}");
    }
    let _ = writeln!(
        t,
        "\nWeigh-in: date {BLANK}  mass {BLANK} {}  body fat, if measured {BLANK} %",
        input.units.mass_label()
    );
    let _ = writeln!(t, "Notes:\n");
    let _ = writeln!(t, "Screening and cautions");
    let _ = writeln!(t, "  - {}", screening_words(&input.screening));
    for c in CAUTIONS {
        let _ = writeln!(t, "  - {c}");
    }
}
