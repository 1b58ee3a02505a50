//! The energy-balance right-hand side, written once: the general driver (through
//! [`Physiology::fluxes`] and the integrators) and the cohort's lane loop
//! (`simulate::fast`) both call [`Rhs::rmr`] and [`Rhs::point`].
//!
//! `rho_F dF/dt + rho_L dL/dt = EI - EE`, `EE = RMR + TEF + AE + X`, partitioned along
//! the Forbes curve: `dF/dt = (EI - EE) / (rho_F + rho_L c_F / F)`, `dL/dt = (c_F / F) dF/dt`.
//! `TEF = beta EI`, `AE = delta M - c_A X`, `EI = EI0 + diet + c_I Xbar`,
//! `dXbar/dt = (X - Xbar) / tau_I`, `RMR = k_R RMR_eq(M, L) - a_R max(0, M0 - M)`.
//!
//! The week's exercise enters as its MET-minutes `a` and minutes `b`, so that
//! `X = (a e_1 - b r) / 7` with `e_1` the gross energy of one MET-minute at the current
//! mass and `r` the resting rate per minute exercise is counted above; the cost is the
//! same whatever the number of sessions.
//!
//! Reference: docs/model.md sections 2, 3 and 5; Forbes GB 1987, Nutr Rev 45:225.

use crate::activity::acsm::ML_O2_PER_MET;
use crate::model::energy::{
    BodyState, Bout, Compensation, Fluxes, MINUTES_PER_DAY, Physiology, RestForNet,
};
use crate::model::rmr::RmrEquation;

/// The right-hand side's constants for one participant and scenario, worked out once.
#[derive(Debug, Clone, Copy)]
pub struct Rhs<'a> {
    /// The calibrated participant.
    pub ph: &'a Physiology,
    /// The scenario's compensation.
    pub comp: &'a Compensation,
    /// RMR as `k (cm M + cl L + c0)` where the equation is linear in mass and FFM.
    linear_rmr: Option<(f64, f64, f64)>,
    one_met: bool,
    /// `EI0 + diet`, kcal/day.
    pub intake0: f64,
    inv_lag: f64,
    /// `rho_L C` of the Forbes partition.
    lean_forbes: f64,
}

/// Every term of the energy balance at one state, kcal/day (derivatives per day).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Point {
    /// Exercise energy above rest, `X`.
    pub exercise: f64,
    /// Intake.
    pub intake: f64,
    /// Thermic effect of food.
    pub tef: f64,
    /// Non-exercise activity.
    pub activity: f64,
    /// Expenditure `RMR + TEF + AE + X`.
    pub expenditure: f64,
    /// dF/dt, kg/day.
    pub dfat: f64,
    /// dL/dt, kg/day.
    pub dlean: f64,
    /// dXbar/dt, kcal/day per day.
    pub dlagged: f64,
}

impl<'a> Rhs<'a> {
    /// The constants of `ph` under `comp`.
    pub fn new(ph: &'a Physiology, comp: &'a Compensation) -> Rhs<'a> {
        let c = &ph.constants;
        Rhs {
            ph,
            comp,
            linear_rmr: linear_rmr(ph),
            one_met: c.rest_for_net == RestForNet::OneMet,
            intake0: ph.intake_kcal_per_day + comp.diet_change_kcal_per_day,
            inv_lag: if comp.intake_lag_days > 0.0 {
                1.0 / comp.intake_lag_days
            } else {
                0.0
            },
            lean_forbes: c.lean_kcal_per_kg * c.forbes_constant_kg,
        }
    }

    /// RMR with adaptation of `N` states at once, kcal/day. The linear equations are
    /// evaluated from their coefficients (the same value as
    /// [`Physiology::rmr`] up to rounding), which the compiler packs into vector
    /// instructions; the others call the equation.
    #[inline(always)]
    pub fn rmr_lanes<const N: usize>(&self, fat: &[f64; N], lean: &[f64; N]) -> [f64; N] {
        let mut rmr = [0.0; N];
        match self.linear_rmr {
            Some((cm, cl, c0)) => {
                let (k, ad, m0) = (
                    self.ph.rmr_factor,
                    self.comp.rmr_adaptation_kcal_per_kg,
                    self.ph.mass0_kg,
                );
                for i in 0..N {
                    let m = fat[i] + lean[i];
                    rmr[i] = k * (cm * m + cl * lean[i] + c0) - ad * (m0 - m).max(0.0);
                }
            }
            None => {
                for i in 0..N {
                    rmr[i] = self.ph.rmr(self.comp, fat[i], lean[i]);
                }
            }
        }
        rmr
    }

    /// RMR with adaptation at one state, kcal/day.
    #[inline(always)]
    pub fn rmr(&self, fat: f64, lean: f64) -> f64 {
        self.rmr_lanes(&[fat], &[lean])[0]
    }

    /// The balance at fat `fat`, fat-free mass `lean`, lagged exercise state `lagged`
    /// and RMR `rmr` (from [`Rhs::rmr`]) with the week's MET-minutes `a` and minutes
    /// `b` per 7 days.
    #[inline(always)]
    pub fn point(&self, fat: f64, lean: f64, lagged: f64, rmr: f64, a: f64, b: f64) -> Point {
        let c = &self.ph.constants;
        let comp = self.comp;
        let m = fat + lean;
        // Multiplications by reciprocals: divisions are the slow part of the lane loop.
        let per_met_minute = ML_O2_PER_MET * m * (1.0 / 200.0);
        let rest = if self.one_met {
            per_met_minute
        } else {
            rmr * (1.0 / MINUTES_PER_DAY)
        };
        let x = (a * per_met_minute - b * rest) * (1.0 / 7.0);
        let (lagged, dlagged) = if comp.intake_lag_days > 0.0 {
            (lagged, (x - lagged) * self.inv_lag)
        } else {
            (x, 0.0)
        };
        let intake = self.intake0 + comp.intake_fraction * lagged;
        let tef = c.tef_fraction * intake;
        let activity = self.ph.activity_kcal_per_kg_day * m - comp.activity_fraction * x;
        let expenditure = rmr + tef + activity + x;
        // The Forbes partition with one division: with share s = C / F,
        // dF = E / (rho_F + rho_L s) = E F / (rho_F F + rho_L C) and dL = s dF =
        // E C / (rho_F F + rho_L C). The reciprocal depends on F alone, so it is under
        // way while the energy balance is summed. The guard against a non-positive fat
        // mass never acts in a run: the drivers stop at F < 2 kg.
        let f = fat.max(1e-6);
        let r = 1.0 / (c.fat_kcal_per_kg * f + self.lean_forbes);
        let balance = (intake - expenditure) * r;
        Point {
            exercise: x,
            intake,
            tef,
            activity,
            expenditure,
            dfat: balance * f,
            dlean: balance * c.forbes_constant_kg,
            dlagged,
        }
    }
}

impl Physiology {
    /// Every flux at `state` for a week whose bouts are `bouts` (X is their net energy
    /// at the current mass and RMR, averaged over 7 days): [`Rhs::fluxes`].
    pub fn fluxes(&self, comp: &Compensation, bouts: &[Bout], state: &BodyState) -> Fluxes {
        Rhs::new(self, comp).fluxes(bouts, state)
    }
}

impl Rhs<'_> {
    /// Every flux at `state` for a week whose bouts are `bouts` (X is their net energy
    /// at the current mass and RMR, averaged over 7 days).
    pub fn fluxes(&self, bouts: &[Bout], state: &BodyState) -> Fluxes {
        let (fat, lean) = (state.fat_kg, state.lean_kg);
        let m = fat + lean;
        let rmr = self.rmr(fat, lean);
        let (mut a, mut b) = (0.0, 0.0);
        let mut min_net = f64::INFINITY;
        for bout in bouts {
            let met = bout.intensity.met_at(m);
            min_net = min_net.min(self.ph.net_kcal_per_min(met, m, rmr));
            a += bout.minutes * met;
            b += bout.minutes;
        }
        let p = self.point(fat, lean, state.lagged_exercise_kcal_per_day, rmr, a, b);
        Fluxes {
            rmr,
            tef: p.tef,
            activity: p.activity,
            exercise: p.exercise,
            intake: p.intake,
            expenditure: p.expenditure,
            min_net_kcal_per_min: min_net,
            dfat: p.dfat,
            dlean: p.dlean,
            dlagged: p.dlagged,
        }
    }
}

/// The RMR equation as `(cm, cl, c0)` with `RMR_eq = cm M + cl L + c0` at the
/// participant's height, age and sex, where it is linear (all but
/// Livingston-Kohlstadt). The coefficients are read off the equation itself.
fn linear_rmr(ph: &Physiology) -> Option<(f64, f64, f64)> {
    let eq = ph.constants.rmr_equation;
    if eq == RmrEquation::LivingstonKohlstadt {
        return None;
    }
    let at = |m: f64, l: f64| eq.kcal_per_day(ph.sex, m, l, ph.height_cm, ph.age_years);
    let c0 = at(0.0, 0.0);
    Some((at(1.0, 0.0) - c0, at(0.0, 1.0) - c0, c0))
}
