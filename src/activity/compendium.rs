//! The built-in activity table: codes and MET values of the 2011 Compendium of
//! Physical Activities, compiled into the binary from `compendium_2011.csv`.
//!
//! Reference: Ainsworth BE et al. 2011 Compendium of Physical Activities: a second
//! update of codes and MET values. Med Sci Sports Exerc 2011;43(8):1575-1581.

use std::sync::OnceLock;

/// The data file, compiled in. Lines starting with `#` are comments.
const TABLE_CSV: &str = include_str!("compendium_2011.csv");

/// One row of the activity table.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct CompendiumEntry {
    /// Five-digit code, a string with leading zeros (`"02010"`).
    pub code: String,
    /// MET value in force in the 2011 Compendium.
    pub met: f64,
    /// The 2000 Compendium's value for the same code, where there was one.
    pub met_2000: Option<f64>,
    /// Major group, in our words.
    pub group: String,
    /// Short description in our own words.
    pub label: String,
    /// Compendium version the MET comes from.
    pub version: u16,
    /// Short citation of the MET value.
    pub source: String,
}

#[derive(serde::Deserialize)]
struct Row {
    code: String,
    met_2011: f64,
    met_2000: Option<f64>,
    group: String,
    label: String,
    version: u16,
    source: String,
}

/// Every row of the built-in table, in file order.
pub fn table() -> &'static [CompendiumEntry] {
    static TABLE: OnceLock<Vec<CompendiumEntry>> = OnceLock::new();
    TABLE.get_or_init(|| {
        let body: String = TABLE_CSV
            .lines()
            .filter(|l| !l.starts_with('#'))
            .map(|l| format!("{l}\n"))
            .collect();
        csv::Reader::from_reader(body.as_bytes())
            .deserialize::<Row>()
            .map(|r| {
                let r = r.expect("the compiled-in activity table is valid CSV (tested)");
                CompendiumEntry {
                    code: r.code,
                    met: r.met_2011,
                    met_2000: r.met_2000,
                    group: r.group,
                    label: r.label,
                    version: r.version,
                    source: r.source,
                }
            })
            .collect()
    })
}

/// The entry for `code`, if the table has it.
pub fn lookup(code: &str) -> Option<&'static CompendiumEntry> {
    table().iter().find(|e| e.code == code)
}

/// Entries matching `text` (a code prefix, or words found in the label or group,
/// case-insensitive) and lying in the MET range `met_min..=met_max`.
pub fn search(text: Option<&str>, met_min: f64, met_max: f64) -> Vec<&'static CompendiumEntry> {
    let needle = text.map(|t| t.trim().to_lowercase());
    table()
        .iter()
        .filter(|e| e.met >= met_min && e.met <= met_max)
        .filter(|e| match &needle {
            None => true,
            Some(n) if n.is_empty() => true,
            Some(n) if n.chars().all(|c| c.is_ascii_digit()) => e.code.starts_with(n.as_str()),
            Some(n) => {
                let hay = format!("{} {}", e.label, e.group).to_lowercase();
                n.split_whitespace().all(|w| hay.contains(w))
            }
        })
        .collect()
}
