//! Default measurement precision, used where a row does not state its own. Each
//! figure is a repeat-measurement (short-term, in vivo) standard deviation or
//! coefficient of variation, named with its source (author, year, journal). Values
//! marked "from memory" could not be read in a stored copy of the source when this
//! was written: the citations are the best known, the ranges are as remembered,
//! and each default is chosen inside its range (tests/pilot_published.rs pins
//! them); a site should replace them with its own precision study
//! (docs/pilot-analysis.md, docs/references.md section 5.1).

use serde::Serialize;

/// One default with its source.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Precision {
    /// What it applies to.
    pub what: &'static str,
    /// The relative SD (coefficient of variation), as a fraction.
    pub cv: f64,
    /// Where the figure comes from.
    pub source: &'static str,
}

/// DXA whole-body fat mass, repeat scans on the same day with repositioning: CV
/// about 1-2 % across the instruments reviewed; 1.5 % (the middle) used.
pub const DXA_FAT: Precision = Precision {
    what: "DXA fat mass",
    cv: 0.015,
    source: "Toombs RJ, Ducher G, Shepherd JA, De Souza MJ 2012, Obesity 20(1):30-39 (review of the trueness and precision of DXA body composition; in vivo CV of whole-body fat mass about 1-2 %); range from memory, unconfirmed",
};

/// DXA whole-body lean (fat-free) mass: CV about 0.5-1 %; 0.8 % used.
pub const DXA_LEAN: Precision = Precision {
    what: "DXA fat-free mass",
    cv: 0.008,
    source: "Toombs RJ et al. 2012, Obesity 20(1):30-39 (in vivo CV of whole-body lean mass about 0.5-1 %); range from memory, unconfirmed",
};

/// Other methods of body composition (bioimpedance, air displacement,
/// deuterium dilution): a wider 3 % on both compartments.
pub const OTHER_COMPOSITION: Precision = Precision {
    what: "fat and fat-free mass by a method other than DXA",
    cv: 0.03,
    source: "common practice, no source (a deliberately wider figure than DXA's)",
};

/// Resting metabolic rate by indirect calorimetry, day to day in the same person:
/// CV about 3-5 %; 4 % used. Read in a published abstract: two mornings by
/// ventilated hood in 37 adults give a within-person CV of 3.8 % by calculation
/// (tests/pilot_published.rs).
pub const RMR_INDIRECT_CALORIMETRY: Precision = Precision {
    what: "RMR by indirect calorimetry (day to day)",
    cv: 0.04,
    source: "Haugen HA, Melanson EL, Tran ZV, Kearney JT, Hill JO 2003, Am J Clin Nutr 78(6) (ventilated hood, 37 adults, two mornings 1508.0 and 1511.4 kcal/day, SE 31.5 and 35.9, r 0.93: a within-person CV of 3.8 % by calculation; read in the abstract, pages from memory); Compher C, Frankenfield D, Keim N, Roth-Yousey L 2006, J Am Diet Assoc 106(6):881-903 (systematic review of best practice in measuring RMR); Roffey DM, Byrne NM, Hills AP 2006, JPEN 30(5):426-432 (day-to-day variation by ventilated hood and mouthpiece); day-to-day CV about 3-5 %, range from memory, unconfirmed",
};

/// Total energy expenditure by doubly labelled water over 1-3 weeks: precision
/// about 2-8 %; repeated in the same person months apart (free-living variation
/// included) about 8 %; 6 % used (the interval's own TEE, not a habitual one).
/// Read in published abstracts: against measured intake plus the change in body
/// composition the method differed by a CV of 6 %, and two consecutive 14-day
/// periods in 217 adults give a within-person CV of 5.3 % by calculation
/// (tests/pilot_published.rs).
pub const TEE_DOUBLY_LABELLED_WATER: Precision = Precision {
    what: "TEE by doubly labelled water",
    cv: 0.06,
    source: "Schoeller DA, van Santen E 1982, J Appl Physiol 53(4):955-959 (four adults on a measured diet for 13 days: energy expenditure by the method differed from intake plus the change in body composition by 2 % on average, CV 6 %; read in the abstract, authors and journal from memory); Redman LM, Kraus WE, Bhapkar M, et al. 2014, Am J Clin Nutr 99(1):71-78 (217 weight-stable adults, two consecutive 14-day periods 2422 +/- 404 and 2465 +/- 408 kcal/day, intraclass correlation 0.90: a within-person CV of 5.3 % by calculation; read in the abstract, year and pages from memory); Schoeller DA 1988, J Nutr 118(11):1278-1289 (precision 2-8 %); Schoeller DA, Hnilicka JM 1996, J Nutr 126(1 Suppl):348S-354S (reproducibility in free-living people); Black AE, Cole TJ 2000, Eur J Clin Nutr 54(5):386-394 (within-person CV about 8 %); those three from memory, unconfirmed",
};

/// TEE by another method (accelerometry plus an equation, heart rate): 15 %.
pub const TEE_OTHER: Precision = Precision {
    what: "TEE by a method other than doubly labelled water",
    cv: 0.15,
    source: "common practice, no source (a deliberately wide figure)",
};

/// A stated baseline intake (food records, recall): 15 %.
pub const INTAKE_REPORTED: Precision = Precision {
    what: "baseline intake stated without a TEE measurement",
    cv: 0.15,
    source: "common practice, no source (self-report is known to under-report; use a TEE where there is one)",
};

/// The defaults for body composition by `method` (DXA, or anything else): (fat,
/// fat-free).
pub fn composition(method: &str) -> (Precision, Precision) {
    if is_dxa(method) {
        (DXA_FAT, DXA_LEAN)
    } else {
        (OTHER_COMPOSITION, OTHER_COMPOSITION)
    }
}

/// The default for TEE by `method`.
pub fn tee(method: &str) -> Precision {
    let m = method.trim().to_ascii_lowercase();
    if m == "dlw" || m.contains("doubly") {
        TEE_DOUBLY_LABELLED_WATER
    } else {
        TEE_OTHER
    }
}

/// Whether a method name means DXA.
pub fn is_dxa(method: &str) -> bool {
    let m = method.trim().to_ascii_lowercase();
    m == "dxa" || m == "dexa" || m.contains("absorptiometry")
}

/// Every default, for reports.
pub const ALL: [Precision; 7] = [
    DXA_FAT,
    DXA_LEAN,
    OTHER_COMPOSITION,
    RMR_INDIRECT_CALORIMETRY,
    TEE_DOUBLY_LABELLED_WATER,
    TEE_OTHER,
    INTAKE_REPORTED,
];
