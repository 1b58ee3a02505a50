//! One energy per session (docs/model.md section 4): the warm-up and cool-down count
//! in the adherence table's prescribed energy as they do in the dose and the
//! simulation.
//!
//! Expected value: the demo plan's own dose, 12 kcal/kg/week on the baseline mass,
//! times the ramp factor of week 1, `r_1 = s = 0.5` (docs/model.md section 3,
//! `r_w = s + (1 - s)(w - 1)/R`), so 6.0 kcal/kg in week 1; minutes are rounded up to
//! whole minutes, which adds less than one minute a session (3 sessions, at most
//! 0.0175 MET kcal/kg per minute gross: ACSM 2021, Guidelines for Exercise Testing and
//! Prescription, 11th ed., the MET definition 3.5 mL/kg/min and 5 kcal/L O2).

use dosewright::log::load_log;
use dosewright::plan::load_plan;
use dosewright::simulate::observed::Observed;
use dosewright::simulate::simulate_observed;
use std::path::Path;

#[test]
fn week_1_prescribed_in_the_adherence_table_is_the_plans_weekly_dose() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let plan = load_plan(&root.join("plans/demo.toml")).expect("the demo plan loads");
    let (log, _) = load_log(&root.join("demo-data/demo-017-log.csv"), &plan, None)
        .expect("the demo log loads");
    let obs = Observed::from_log(&plan, &log, None);
    let sim = simulate_observed(&plan, Some(&obs)).expect("the demo simulates");
    let week1 = sim.scenarios[0].weeks[0]
        .adherence
        .as_ref()
        .expect("week 1 has adherence");
    assert_eq!(week1.sessions_planned, 3);
    let dose = 12.0 * 0.5;
    // The rounding allowance: 3 sessions x 1 minute x 0.0175 x MET kcal/kg/min, MET of
    // a brisk treadmill walk well under 8.
    let allowance = 3.0 * 0.0175 * 8.0;
    assert!(
        week1.dose_prescribed >= dose - 1e-9 && week1.dose_prescribed <= dose + allowance,
        "week 1 prescribed {} kcal/kg against the plan's {dose}",
        week1.dose_prescribed
    );
}
