//! `activities`: the built-in compendium table and the ACSM equations' valid ranges.

use crate::activity::{acsm, compendium::CompendiumEntry};
use crate::report::table::{align_numbers, new_table};
use crate::report::units::Units;
use crate::safety::CAUTIONS;

/// Render matching rows and the equations, speeds in units `u`.
pub fn render(rows: &[&CompendiumEntry], query: &str, u: Units) -> String {
    let mut out = String::new();
    if rows.is_empty() {
        out.push_str(&format!("No activity {query}.\n\n"));
    } else {
        let mut t = new_table(&["code", "MET (2011)", "MET (2000)", "group", "activity"]);
        for e in rows {
            t.add_row(vec![
                e.code.clone(),
                format!("{:.1}", e.met),
                e.met_2000.map_or("new".to_string(), |m| format!("{m:.1}")),
                e.group.clone(),
                e.label.clone(),
            ]);
        }
        align_numbers(&mut t, 1);
        for c in [3, 4] {
            if let Some(col) = t.column_mut(c) {
                col.set_cell_alignment(comfy_table::CellAlignment::Left);
            }
        }
        let noun = if rows.len() == 1 {
            "activity"
        } else {
            "activities"
        };
        out.push_str(&format!("{} {noun} {query}. MET values: Ainsworth et al. 2011 Compendium of Physical Activities, Med Sci Sports Exerc 43:1575 (labels in our words).\n{t}\n\n", rows.len()));
    }
    let mut t = new_table(&["equation", "gross VO2 [ml/kg/min]", "valid range"]);
    for (name, eq, range) in acsm::summary(|kmh| u.speed(kmh), u.speed_label()) {
        t.add_row(vec![name.to_string(), eq.to_string(), range]);
    }
    out.push_str(&format!("ACSM metabolic equations (ACSM's Guidelines for Exercise Testing and Prescription, 10th ed.); MET = VO2 / 3.5. Outside the range the tool warns.\n{t}\n\n"));
    out.push_str("Before prescribing any of these, remember:\n");
    for c in CAUTIONS {
        out.push_str(&format!("  - {c}\n"));
    }
    out
}
