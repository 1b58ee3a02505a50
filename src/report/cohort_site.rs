//! The cohort's staffing beyond the session-hours: the supervision model, the busiest
//! hour and whether the opening hours hold the sessions, as lines under the staffing
//! table (docs/commands.md, cohort).

use crate::study::staffing::SiteNeed;

/// The site lines under the staffing table.
pub fn site_lines(n: &SiteNeed) -> String {
    let mut out = String::new();
    let mut model = Vec::new();
    if let Some(g) = n.group_size {
        model.push(format!("{g} participants per supervisor"));
    }
    if let Some(s) = n.stations {
        model.push(format!("{s} stations"));
    }
    if !n.opening_hours.is_empty() {
        let hours: Vec<String> = n
            .opening_hours
            .iter()
            .map(|h| {
                format!(
                    "{} {}-{}",
                    crate::plan::weekday_name(h.weekday),
                    h.open.format("%H:%M"),
                    h.close.format("%H:%M")
                )
            })
            .collect();
        model.push(format!("open {}", hours.join(", ")));
    }
    if !model.is_empty() {
        out.push_str(&format!("Site: {}\n", model.join("; ")));
    }
    if let Some(h) = n.supervisor_hours {
        out.push_str(&format!(
            "Supervisor-hours at full groups: {h:.1} h in all\n"
        ));
    }
    match &n.peak {
        Some(p) => {
            let when = match &p.time {
                Some(t) => format!("at {t} (every session starts at the session time)"),
                None => "spread evenly over the opening hours".to_string(),
            };
            let sup = p
                .supervisors_needed
                .map_or(String::new(), |s| format!(", {s} supervisor(s)"));
            out.push_str(&format!(
                "Peak concurrent need: week {} {} {} {when}: {:.1} participants expected at once -> {} station(s){sup}\n",
                p.week, p.weekday, p.date, p.participants, p.stations_needed
            ));
        }
        None => out.push_str(
            "Peak concurrent need: give [calendar] session_time or [staffing] opening_hours to compute it\n",
        ),
    }
    match n.opening_hours_hold {
        Some(true) => out.push_str("The opening hours and stations hold the sessions\n"),
        Some(false) => {
            out.push_str("The opening hours or stations do NOT hold the sessions:\n");
            for p in &n.problems {
                out.push_str(&format!("  - {p}\n"));
            }
        }
        None => {}
    }
    out
}
