//! Property tests (docs/model.md section 6, "Checks the tests make"; docs/style.md
//! habit 7): more dose never gives less loss while `c_I (1 - beta) + c_A < 1`; more
//! compensation never gives more loss; minutes fall with MET and rise as mass falls for
//! a fixed-energy (`kcal_per_session`) dose; results do not depend on the plan's key
//! order.
//!
//! Plans are built as TOML text and parsed with `dosewright::plan::parse_plan`, for
//! invented participants (pseudonymous code PT-xx). Case counts are modest (default 32
//! per property; set PROPTEST_CASES to change it).

use dosewright::model::composition::forbes_fat_at_mass;
use dosewright::model::energy::calibrate;
use dosewright::model::{Compensation, Physiology};
use dosewright::plan::{Plan, parse_plan};
use dosewright::simulate::prescription::{Reference, prescribe};
use dosewright::simulate::{Simulation, simulate};
use proptest::prelude::*;
use proptest::test_runner::TestCaseError;

/// Cases per property: PROPTEST_CASES if set, else 32.
fn config() -> ProptestConfig {
    let cases = std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(32);
    ProptestConfig {
        cases,
        ..ProptestConfig::default()
    }
}

/// Slack for "never less" comparisons of masses, kg: far below any effect of one minute
/// of exercise, far above the integrator's tolerance (docs/model.md section 6).
const MASS_SLACK_KG: f64 = 1e-9;

// --- plan text ---------------------------------------------------------------------------

/// One TOML table: its header line and its key = value lines.
#[derive(Debug, Clone)]
struct Table {
    header: String,
    lines: Vec<String>,
}

impl Table {
    fn new(header: &str, lines: Vec<String>) -> Self {
        Table {
            header: header.to_string(),
            lines,
        }
    }
}

fn render(tables: &[Table]) -> String {
    let mut s = String::new();
    for t in tables {
        s.push_str(&t.header);
        s.push('\n');
        for l in &t.lines {
            s.push_str(l);
            s.push('\n');
        }
        s.push('\n');
    }
    s
}

/// An invented participant.
#[derive(Debug, Clone)]
struct Person {
    male: bool,
    age: f64,
    height: f64,
    bmi: f64,
    body_fat: Option<f64>,
    pal: f64,
    rmr_equation: &'static str,
}

impl Person {
    fn mass(&self) -> f64 {
        let h = self.height / 100.0;
        (self.bmi * h * h * 10.0).round() / 10.0
    }
}

fn person() -> impl Strategy<Value = Person> {
    (
        any::<bool>(),
        20.0..70.0f64,
        150.0..195.0f64,
        22.0..40.0f64,
        prop::option::of(22.0..48.0f64),
        1.4..1.9f64,
        prop::sample::select(vec![
            "mifflin-st-jeor",
            "harris-benedict-revised",
            "katch-mcardle",
            "cunningham",
            "livingston-kohlstadt",
        ]),
    )
        .prop_map(
            |(male, age, height, bmi, body_fat, pal, rmr_equation)| Person {
                male,
                age: age.round(),
                height: height.round(),
                bmi,
                body_fat: body_fat.map(|b| b.round()),
                pal: (pal * 100.0).round() / 100.0,
                rmr_equation,
            },
        )
}

/// The four dose kinds, with an amount in a range that keeps every model quantity in its
/// valid range for the participants above.
#[derive(Debug, Clone, Copy)]
enum DoseKind {
    PerSession,
    PerWeek,
    PerKgWeek,
    MinutesPerWeek,
}

impl DoseKind {
    fn key(self) -> &'static str {
        match self {
            DoseKind::PerSession => "kcal_per_session",
            DoseKind::PerWeek => "kcal_per_week",
            DoseKind::PerKgWeek => "kcal_per_kg_week",
            DoseKind::MinutesPerWeek => "minutes_per_week",
        }
    }
    fn range(self) -> (f64, f64) {
        match self {
            DoseKind::PerSession => (120.0, 420.0),
            DoseKind::PerWeek => (400.0, 2000.0),
            DoseKind::PerKgWeek => (5.0, 20.0),
            DoseKind::MinutesPerWeek => (60.0, 240.0),
        }
    }
}

#[derive(Debug, Clone)]
struct Protocol {
    weeks: u32,
    follow_up: u32,
    days: &'static [&'static str],
    step: u32,
    kind: DoseKind,
    amount: f64,
    net: bool,
    current_mass: bool,
    ramp: Option<(u32, f64)>,
    activity: String,
    one_met: bool,
}

fn activity() -> impl Strategy<Value = String> {
    prop_oneof![
        (3.0..9.0f64).prop_map(|m| format!("met = {m:.2}")),
        prop::sample::select(vec!["17200", "02010", "12050", "02048", "02071", "03015"])
            .prop_map(|c| format!("compendium_code = \"{c}\"")),
        (4.0..6.5f64, 0.0..8.0f64).prop_map(|(s, g)| format!(
            "walking = {{ speed_kmh = {s:.2}, grade_percent = {g:.1} }}"
        )),
        (60.0..180.0f64).prop_map(|w| format!("cycling_watts = {w:.0}")),
    ]
}

fn protocol() -> impl Strategy<Value = Protocol> {
    (
        (4u32..16, 0u32..6),
        prop::sample::select(vec![
            &["mon", "wed", "fri"][..],
            &["tue", "thu", "sat", "sun"][..],
            &["mon", "tue", "wed", "thu", "fri"][..],
            &["mon", "wed", "thu", "fri", "sat", "sun"][..],
        ]),
        prop::sample::select(vec![1u32, 1, 2, 5]),
        prop::sample::select(vec![
            DoseKind::PerSession,
            DoseKind::PerWeek,
            DoseKind::PerKgWeek,
            DoseKind::MinutesPerWeek,
        ]),
        0.0..1.0f64,
        (any::<bool>(), any::<bool>(), any::<bool>()),
        prop::option::of((1u32..4, 0.3..1.0f64)),
        activity(),
    )
        .prop_map(
            |((weeks, follow_up), days, step, kind, u, (net, current, one_met), ramp, act)| {
                let (lo, hi) = kind.range();
                Protocol {
                    weeks,
                    follow_up,
                    days,
                    step,
                    kind,
                    amount: ((lo + u * (hi - lo)) * 10.0).round() / 10.0,
                    net,
                    current_mass: current,
                    ramp: ramp.map(|(w, s)| (w.min(weeks), (s * 100.0).round() / 100.0)),
                    activity: act,
                    one_met,
                }
            },
        )
}

/// One scenario's compensation, as plan keys.
#[derive(Debug, Clone, Copy)]
struct Comp {
    intake: f64,
    lag: f64,
    activity: f64,
    adaptation: f64,
}

fn scenario_lines(name: &str, c: &Comp) -> Vec<String> {
    vec![
        format!("name = \"{name}\""),
        format!("intake_fraction = {}", c.intake),
        format!("intake_lag_days = {}", c.lag),
        format!("activity_fraction = {}", c.activity),
        format!("rmr_adaptation_kcal_per_kg = {}", c.adaptation),
    ]
}

/// The plan as tables in canonical order.
fn tables(p: &Person, pr: &Protocol, scenarios: &[(String, Comp)]) -> Vec<Table> {
    let mut participant = vec![
        "id = \"PT-31\"".to_string(),
        format!("sex = \"{}\"", if p.male { "male" } else { "female" }),
        format!("age_years = {}", p.age),
        format!("height_cm = {:.1}", p.height),
        format!("mass_kg = {:.1}", p.mass()),
        format!("pal = {}", p.pal),
    ];
    if let Some(bf) = p.body_fat {
        participant.push(format!("body_fat_percent = {bf:.1}"));
    }
    let days: Vec<String> = pr.days.iter().map(|d| format!("\"{d}\"")).collect();
    let protocol = vec![
        "start = 2027-01-04".to_string(),
        format!("weeks = {}", pr.weeks),
        format!("follow_up_weeks = {}", pr.follow_up),
        format!("session_days = [{}]", days.join(", ")),
        format!("round_minutes_to = {}", pr.step),
    ];
    let mut dose = vec![format!("{} = {:.1}", pr.kind.key(), pr.amount)];
    if pr.net {
        dose.push("basis = \"net\"".to_string());
    }
    if pr.current_mass {
        dose.push("mass_basis = \"current\"".to_string());
    }
    let mut out = vec![
        Table::new("[participant]", participant),
        Table::new(
            "[participant.screening]",
            vec![
                "exercises_regularly = true".to_string(),
                "known_disease = false".to_string(),
                "signs_or_symptoms = false".to_string(),
                "medical_clearance = false".to_string(),
            ],
        ),
        Table::new("[protocol]", protocol),
        Table::new("[protocol.dose]", dose),
    ];
    if let Some((w, s)) = pr.ramp {
        out.push(Table::new(
            "[protocol.ramp]",
            vec![format!("weeks = {w}"), format!("start_fraction = {s}")],
        ));
    }
    out.push(Table::new(
        "[activity]",
        vec![pr.activity.clone(), "label = \"test activity\"".to_string()],
    ));
    out.push(Table::new(
        "[model]",
        vec![
            format!("rmr_equation = \"{}\"", p.rmr_equation),
            format!(
                "rest_for_net = \"{}\"",
                if pr.one_met { "one-met" } else { "own-rmr" }
            ),
            "tef_fraction = 0.1".to_string(),
        ],
    ));
    for (name, c) in scenarios {
        out.push(Table::new("[[scenario]]", scenario_lines(name, c)));
    }
    out
}

fn parse(text: &str) -> Plan {
    parse_plan("property.toml", text).unwrap_or_else(|e| panic!("plan parses: {e}\n{text}"))
}

/// Simulate, or reject the case if the model leaves its valid range (that is a correct
/// refusal, docs/model.md section 6, not a property violation).
fn run(plan: &Plan) -> Result<Simulation, TestCaseError> {
    simulate(plan).map_err(|e| TestCaseError::reject(format!("out of range: {e}")))
}

fn beta() -> f64 {
    // The plans set tef_fraction = 0.1 explicitly (docs/model.md section 3, common practice).
    0.1
}

/// Compensation with c_I (1 - beta) + c_A < 1 (at most 0.98).
fn partial_comp() -> impl Strategy<Value = Comp> {
    (
        0.0..1.0f64,
        prop::sample::select(vec![0.0, 7.0, 21.0, 42.0]),
        0.0..1.0f64,
        0.0..15.0f64,
    )
        .prop_map(|(u, lag, v, a)| {
            let intake = (1.05 * u * 100.0).round() / 100.0;
            let room = (0.98 - intake * (1.0 - beta())).min(0.4);
            Comp {
                intake,
                lag,
                activity: (v * room * 100.0).floor() / 100.0,
                adaptation: (a * 10.0).round() / 10.0,
            }
        })
}

// --- properties --------------------------------------------------------------------------

proptest! {
    #![proptest_config(config())]

    /// More dose never gives less loss while c_I (1 - beta) + c_A < 1, with no intake lag,
    /// at the end of every week, protocol and follow-up. docs/model.md section 5 with tau_I = 0: each
    /// extra kcal/day of exercise X adds X (1 - c_I (1 - beta) - c_A) > 0 to the deficit
    /// rate; along the Forbes curve the state is one-dimensional and the week's minutes
    /// never fall when the dose rises or the reference mass falls, so the heavier-dosed
    /// trajectory can never cross above the other (comparison theorem for scalar ODEs).
    #[test]
    fn more_dose_never_gives_less_loss(
        p in person(),
        pr in protocol(),
        extra in 0.0..0.6f64,
        comp in partial_comp(),
    ) {
        let comp = Comp { lag: 0.0, ..comp };
        prop_assert!(comp.intake * (1.0 - beta()) + comp.activity < 1.0);
        let more = Protocol {
            amount: ((pr.amount * (1.0 + extra)) * 10.0).round() / 10.0,
            ..pr.clone()
        };
        compare_doses(&p, &pr, &more, comp, usize::MAX)?;
    }

    /// The same with a lagged intake: while exercise goes on and the extra exercise never
    /// falls much below its largest value so far (no ramp-down; the larger dose at least
    /// twice the smaller, minutes rounded to 1), the lagged extra intake c_I Xbar stays
    /// below c_I times that largest value, so with c_I (1 - beta) + c_A <= 0.5 the extra
    /// deficit rate stays positive and the larger dose loses at least as much at the end
    /// of every protocol week. (After exercise stops the lagged intake goes on while the
    /// body relaxes towards its old state; there docs/model.md does not imply the ordering.)
    #[test]
    fn more_dose_never_gives_less_loss_with_lagged_intake(
        p in person(),
        pr in protocol(),
        extra in 1.0..2.0f64,
        comp in partial_comp(),
        lag in prop::sample::select(vec![3.0, 7.0, 21.0, 42.0]),
    ) {
        let scale = 0.5 / (comp.intake * (1.0 - beta()) + comp.activity).max(0.5);
        let comp = Comp {
            intake: (comp.intake * scale * 100.0).floor() / 100.0,
            activity: (comp.activity * scale * 100.0).floor() / 100.0,
            lag,
            ..comp
        };
        prop_assert!(comp.intake * (1.0 - beta()) + comp.activity <= 0.5 + 1e-12);
        let pr = Protocol { step: 1, ..pr };
        let more = Protocol {
            amount: ((pr.amount * (1.0 + extra)) * 10.0).round() / 10.0,
            ..pr.clone()
        };
        compare_doses(&p, &pr, &more, comp, pr.weeks as usize)?;
    }

    /// More compensation (any channel larger, the others no smaller, the same lag) never
    /// gives more loss (docs/model.md section 5: each channel only raises intake or lowers expenditure).
    #[test]
    fn more_compensation_never_gives_more_loss(
        p in person(),
        pr in protocol(),
        base in partial_comp(),
        d_intake in 0.0..0.5f64,
        d_activity in 0.0..0.2f64,
        d_adapt in 0.0..15.0f64,
        which in 0u8..4,
    ) {
        // which: 0 intake only, 1 activity only, 2 adaptation only, 3 all three.
        let more = Comp {
            intake: (base.intake + if which == 0 || which == 3 { (d_intake * 100.0).round() / 100.0 } else { 0.0 }).min(1.5),
            lag: base.lag,
            activity: (base.activity + if which == 1 || which == 3 { (d_activity * 100.0).round() / 100.0 } else { 0.0 }).min(0.55),
            adaptation: base.adaptation + if which == 2 || which == 3 { (d_adapt * 10.0).round() / 10.0 } else { 0.0 },
        };
        let sc = vec![("less".to_string(), base), ("more".to_string(), more)];
        let plan = parse(&render(&tables(&p, &pr, &sc)));
        let sim = run(&plan)?;
        let (less_w, more_w) = (&sim.scenarios[0].weeks, &sim.scenarios[1].weeks);
        for (x, y) in less_w.iter().zip(more_w) {
            prop_assert!(
                y.end.mass_kg >= x.end.mass_kg - MASS_SLACK_KG,
                "week {}: {:?} ends at {} kg, more compensation {:?} at {} kg",
                x.week, base, x.end.mass_kg, more, y.end.mass_kg
            );
        }
    }

    /// For a fixed energy per session (`kcal_per_session`) the minutes fall as the MET
    /// rises (energy per minute MET x 3.5 x M / 200, ACSM kcal/min formula, rises with
    /// the MET), on a gross or a net basis, at any reference mass.
    #[test]
    fn minutes_fall_with_met(
        p in person(),
        kcal in 120.0..420.0f64,
        met in 2.5..10.0f64,
        dmet in 0.05..4.0f64,
        net in any::<bool>(),
        one_met in any::<bool>(),
        mass_factor in 0.8..1.0f64,
    ) {
        let pr = |m: f64| Protocol {
            weeks: 4,
            follow_up: 0,
            days: &["mon", "wed", "fri"],
            step: 1,
            kind: DoseKind::PerSession,
            amount: (kcal * 10.0).round() / 10.0,
            net,
            current_mass: false,
            ramp: None,
            activity: format!("met = {m:.3}"),
            one_met,
        };
        let low = parse(&render(&tables(&p, &pr(met), &[])));
        let high = parse(&render(&tables(&p, &pr(met + dmet), &[])));
        let (b, phys) = calibrate(&low.participant.subject, &low.constants).unwrap();
        let r = reference_on_curve(&phys, b.fat_mass_kg, b.fat_free_mass_kg, b.mass_kg * mass_factor);
        let rx_low = prescribe(&low, &phys, 1, low.protocol.start, b.mass_kg, &r);
        let rx_high = prescribe(&high, &phys, 1, high.protocol.start, b.mass_kg, &r);
        prop_assume!(rx_low.kcal_per_min > 0.0);
        prop_assert!(rx_high.minutes_unrounded < rx_low.minutes_unrounded);
        prop_assert!(rx_high.minutes_per_session <= rx_low.minutes_per_session);
    }

    /// For a fixed energy per session the minutes rise as body mass falls (REFERENCES 1.3,
    /// derived: "a fixed kcal/session dose needs more minutes as mass falls"), for stated
    /// METs, walking and cycling, gross or net, with the lighter state on the Forbes curve.
    #[test]
    fn minutes_rise_as_mass_falls(
        p in person(),
        pr in protocol(),
        kcal in 120.0..420.0f64,
        heavier in 0.85..1.0f64,
        drop in 0.005..0.1f64,
    ) {
        let pr = Protocol { kind: DoseKind::PerSession, amount: (kcal * 10.0).round() / 10.0, ramp: None, ..pr };
        let plan = parse(&render(&tables(&p, &pr, &[])));
        let (b, phys) = calibrate(&plan.participant.subject, &plan.constants).unwrap();
        let m1 = b.mass_kg * heavier;
        let m2 = m1 * (1.0 - drop);
        let r1 = reference_on_curve(&phys, b.fat_mass_kg, b.fat_free_mass_kg, m1);
        let r2 = reference_on_curve(&phys, b.fat_mass_kg, b.fat_free_mass_kg, m2);
        let rx1 = prescribe(&plan, &phys, 1, plan.protocol.start, b.mass_kg, &r1);
        let rx2 = prescribe(&plan, &phys, 1, plan.protocol.start, b.mass_kg, &r2);
        prop_assume!(rx2.kcal_per_min > 0.0);
        prop_assert!(
            rx2.minutes_unrounded > rx1.minutes_unrounded,
            "{} kg: {} min; {} kg: {} min", m1, rx1.minutes_unrounded, m2, rx2.minutes_unrounded
        );
        prop_assert!(rx2.minutes_per_session >= rx1.minutes_per_session);
    }

    /// The same in a simulated protocol: as the projected reference mass falls week by
    /// week, the re-prescribed minutes of a fixed-energy dose rise.
    #[test]
    fn simulated_minutes_rise_as_projected_mass_falls(
        p in person(),
        pr in protocol(),
        kcal in 200.0..420.0f64,
    ) {
        let pr = Protocol { kind: DoseKind::PerSession, amount: (kcal * 10.0).round() / 10.0, ramp: None, weeks: 12, ..pr };
        let plan = parse(&render(&tables(&p, &pr, &[])));
        let sim = run(&plan)?;
        let weeks = &sim.scenarios[0].weeks[..12];
        for pair in weeks.windows(2) {
            let (a, b) = (&pair[0], &pair[1]);
            prop_assert!(b.reference_mass_kg < a.reference_mass_kg, "no compensation: mass falls");
            prop_assert!(b.minutes_unrounded > a.minutes_unrounded);
            prop_assert!(b.minutes_per_session >= a.minutes_per_session);
        }
    }

    /// Results do not depend on the plan's key order: the keys inside every table and
    /// the tables themselves permuted (the order of the [[scenario]] entries, which is
    /// meaningful, kept) give the same plan and the same simulation, exactly.
    #[test]
    fn results_do_not_depend_on_key_order(
        p in person(),
        pr in protocol(),
        c1 in partial_comp(),
        c2 in partial_comp(),
        seed in any::<u64>(),
    ) {
        let sc = vec![("first".to_string(), c1), ("second".to_string(), c2)];
        let canonical = tables(&p, &pr, &sc);
        let permuted = permute(&canonical, seed);
        let (ta, tb) = (render(&canonical), render(&permuted));
        let (a, b) = (parse(&ta), parse(&tb));
        prop_assert_eq!(&a, &b, "\n{}\n---\n{}", ta, tb);
        let (sa, sb) = (simulate(&a), simulate(&b));
        match (sa, sb) {
            (Ok(x), Ok(y)) => prop_assert_eq!(x, y),
            (Err(x), Err(y)) => prop_assert_eq!(x.to_string(), y.to_string()),
            (x, y) => prop_assert!(false, "one order simulates, the other not: {:?} / {:?}", x.is_ok(), y.is_ok()),
        }
    }
}

/// Simulate `lo` and `hi` doses under `comp`; over the first `weeks` weeks the larger
/// dose must end every week no heavier, and with no smaller achieved deficit.
fn compare_doses(
    p: &Person,
    lo: &Protocol,
    hi: &Protocol,
    comp: Comp,
    weeks: usize,
) -> Result<(), TestCaseError> {
    let sc = vec![("s".to_string(), comp)];
    let a = run(&parse(&render(&tables(p, lo, &sc))))?;
    let b = run(&parse(&render(&tables(p, hi, &sc))))?;
    let (wa, wb) = (&a.scenarios[0].weeks, &b.scenarios[0].weeks);
    prop_assert_eq!(wa.len(), wb.len());
    for (x, y) in wa.iter().zip(wb).take(weeks) {
        prop_assert!(
            y.end.mass_kg <= x.end.mass_kg + MASS_SLACK_KG,
            "week {}: dose {} gives {} kg, dose {} gives {} kg",
            x.week,
            lo.amount,
            x.end.mass_kg,
            hi.amount,
            y.end.mass_kg
        );
        prop_assert!(y.end.achieved_deficit_kcal >= x.end.achieved_deficit_kcal - 1e-5);
    }
    Ok(())
}

/// The reference state (mass and RMR, no adaptation) at body mass `mass_kg` on the Forbes
/// curve through the baseline (docs/model.md section 7).
fn reference_on_curve(phys: &Physiology, fat0: f64, lean0: f64, mass_kg: f64) -> Reference {
    let c = phys.constants.forbes_constant_kg;
    let fat = forbes_fat_at_mass(fat0, lean0, mass_kg, c);
    Reference {
        mass_kg,
        rmr_kcal_per_day: phys.rmr(&Compensation::default(), fat, mass_kg - fat),
    }
}

/// xorshift64* (Vigna 2016): a small deterministic generator for the permutations.
struct XorShift(u64);

impl XorShift {
    fn below(&mut self, n: usize) -> usize {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) % n as u64) as usize
    }

    /// Fisher-Yates.
    fn shuffle<T>(&mut self, v: &mut [T]) {
        for i in (1..v.len()).rev() {
            let j = self.below(i + 1);
            v.swap(i, j);
        }
    }
}

/// A deterministic permutation from `seed` (xorshift64* with Fisher-Yates): the lines of
/// every table shuffled, the tables shuffled, and the [[scenario]] tables put back in
/// their original relative order in the slots they landed in.
fn permute(tables: &[Table], seed: u64) -> Vec<Table> {
    let mut rng = XorShift(seed | 1);
    let mut out: Vec<Table> = tables.to_vec();
    for t in &mut out {
        rng.shuffle(&mut t.lines);
    }
    rng.shuffle(&mut out);
    let scenarios: Vec<Table> = out
        .iter()
        .filter(|t| t.header == "[[scenario]]")
        .cloned()
        .collect();
    let mut in_order: Vec<Table> = Vec::new();
    for original in tables.iter().filter(|t| t.header == "[[scenario]]") {
        let name = original.lines[0].clone();
        let found = scenarios
            .iter()
            .find(|t| t.lines.contains(&name))
            .expect("every scenario is still there")
            .clone();
        in_order.push(found);
    }
    let mut k = 0;
    for t in &mut out {
        if t.header == "[[scenario]]" {
            *t = in_order[k].clone();
            k += 1;
        }
    }
    out
}

#[test]
fn permutation_really_reorders() {
    // A guard for the key-order property: the permutation moves tables and keys (so the
    // property compares different texts), keeps every line, and keeps scenario order.
    let p = Person {
        male: false,
        age: 50.0,
        height: 165.0,
        bmi: 30.0,
        body_fat: Some(40.0),
        pal: 1.5,
        rmr_equation: "mifflin-st-jeor",
    };
    let pr = Protocol {
        weeks: 8,
        follow_up: 2,
        days: &["mon", "wed", "fri"],
        step: 1,
        kind: DoseKind::PerWeek,
        amount: 1200.0,
        net: true,
        current_mass: false,
        ramp: Some((3, 0.5)),
        activity: "met = 5.0".to_string(),
        one_met: false,
    };
    let c = Comp {
        intake: 0.3,
        lag: 14.0,
        activity: 0.1,
        adaptation: 2.0,
    };
    let sc = vec![("first".to_string(), c), ("second".to_string(), c)];
    let canonical = tables(&p, &pr, &sc);
    let mut moved = 0;
    for seed in 1..20u64 {
        let perm = permute(&canonical, seed);
        let (a, b) = (render(&canonical), render(&perm));
        if a != b {
            moved += 1;
        }
        let mut la: Vec<&str> = a.lines().collect();
        let mut lb: Vec<&str> = b.lines().collect();
        la.sort_unstable();
        lb.sort_unstable();
        assert_eq!(la, lb);
        let first = b.find("name = \"first\"").unwrap();
        let second = b.find("name = \"second\"").unwrap();
        assert!(first < second);
        // And the permuted text is a valid plan equal to the canonical one.
        assert_eq!(parse(&a), parse(&b));
    }
    assert!(moved >= 18);
}
