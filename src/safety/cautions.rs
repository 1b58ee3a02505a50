//! The cautions every human-facing output carries.

/// The standing cautions, in the order reports print them. Stop signs follow common
/// practice in exercise supervision (ACSM's Guidelines for Exercise Testing and
/// Prescription list such warning signs; wording ours).
pub const CAUTIONS: [&str; 4] = [
    "Screen first: complete a pre-participation health screening (ACSM 2015) before the first session, and repeat it when health changes.",
    "Medical clearance: where the screening calls for it, obtain clearance from a physician before exercise begins or intensity rises.",
    "Stop exercising and seek help at once on chest pain or pressure, pain spreading to the arm, jaw or back, unusual breathlessness, dizziness or fainting, palpitations or an irregular pulse, confusion, or unusual fatigue; call emergency services if they do not pass quickly with rest.",
    "These projections are model estimates with real error for any one person; local clinical rules and the licensed professionals responsible for the participant decide, and override anything printed here.",
];
