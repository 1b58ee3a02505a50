//! CSV output: one row per session (bout) of every scenario, and one row per
//! follow-up week; numbers with fixed decimals.

use crate::report::ScheduleReport;

/// The column header.
pub const HEADER: [&str; 14] = [
    "scenario",
    "week",
    "phase",
    "week_start",
    "reference_mass_kg",
    "mass_source",
    "date",
    "weekday",
    "minutes",
    "met",
    "gross_kcal",
    "net_kcal",
    "relative_intensity",
    "week_end_mass_kg",
];

/// Render the schedule of every scenario as CSV.
pub fn render(report: &ScheduleReport) -> String {
    let mut w = ::csv::Writer::from_writer(Vec::new());
    w.write_record(HEADER).expect("writing to memory");
    for sc in &report.scenarios {
        for wk in &sc.weeks {
            let phase = match wk.phase {
                crate::simulate::Phase::Protocol => "protocol",
                crate::simulate::Phase::FollowUp => "follow-up",
            };
            let source = match wk.mass_source {
                crate::simulate::MassSource::Measured => "measured",
                crate::simulate::MassSource::Projected => "projected",
            };
            let common = [
                sc.name.clone(),
                wk.week.to_string(),
                phase.to_string(),
                wk.start.to_string(),
                format!("{:.3}", wk.reference_mass_kg),
                source.to_string(),
            ];
            let end = format!("{:.3}", wk.end.mass_kg);
            if wk.sessions.is_empty() {
                let mut row: Vec<String> = common.to_vec();
                row.extend(["", "", "0", "", "", "", ""].map(String::from));
                row.push(end.clone());
                w.write_record(&row).expect("writing to memory");
            }
            for s in &wk.sessions {
                let mut row: Vec<String> = common.to_vec();
                row.extend([
                    s.date.to_string(),
                    s.weekday.to_string(),
                    s.minutes.to_string(),
                    format!("{:.2}", s.met),
                    format!("{:.1}", s.gross_kcal),
                    format!("{:.1}", s.net_kcal),
                    format!("{:.2}", s.relative_intensity),
                    end.clone(),
                ]);
                w.write_record(&row).expect("writing to memory");
            }
        }
    }
    String::from_utf8(w.into_inner().expect("flushing to memory"))
        .expect("CSV of UTF-8 fields is UTF-8")
}
