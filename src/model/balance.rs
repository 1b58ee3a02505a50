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

    /// Whether `self` and `other` can run side by side in [`RhsLanes`]: the same
    /// switches of the model.
    pub fn side_by_side(&self, other: &Rhs) -> bool {
        self.linear_rmr.is_some() == other.linear_rmr.is_some()
            && self.one_met == other.one_met
            && (self.comp.intake_lag_days > 0.0) == (other.comp.intake_lag_days > 0.0)
    }

    /// RMR with adaptation at one state, kcal/day ([`RhsLanes::rmr`] of one lane).
    #[inline(always)]
    pub fn rmr(&self, fat: f64, lean: f64) -> f64 {
        RhsLanes::new([*self]).rmr(&[fat], &[lean])[0]
    }

    /// The balance at fat `fat`, fat-free mass `lean`, lagged exercise state `lagged`
    /// and RMR `rmr` (from [`Rhs::rmr`]) with the week's MET-minutes `a` and minutes
    /// `b` per 7 days ([`RhsLanes::point`] of one lane).
    #[inline(always)]
    pub fn point(&self, fat: f64, lean: f64, lagged: f64, rmr: f64, a: f64, b: f64) -> Point {
        let p = RhsLanes::new([*self]).point(&[fat], &[lean], &[lagged], &[rmr], &[a], &[b]);
        Point {
            exercise: p.exercise[0],
            intake: p.intake[0],
            tef: p.tef[0],
            activity: p.activity[0],
            expenditure: p.expenditure[0],
            dfat: p.dfat[0],
            dlean: p.dlean[0],
            dlagged: p.dlagged[0],
        }
    }
}

/// The right-hand side's constants of `N` runs side by side, quantity by quantity
/// (each lane its own participant, draw and scenario): the one place the balance is
/// written ([`Rhs::point`] and [`Rhs::rmr`] are its one-lane case). Every line works
/// lane by lane, so the compiler packs the lanes into vector instructions; each
/// lane's arithmetic is that of one scalar evaluation, bit for bit. The lanes share
/// the model's constants' switches (the rest exercise is counted above, whether
/// intake is lagged, whether the RMR equation is linear); [`RhsLanes::new`] checks it.
#[derive(Debug, Clone, Copy)]
pub struct RhsLanes<'a, const N: usize> {
    /// Each lane's constants.
    pub lanes: [Rhs<'a>; N],
    linear: bool,
    one_met: bool,
    lagged: bool,
    cm: [f64; N],
    cl: [f64; N],
    c0: [f64; N],
    rmr_factor: [f64; N],
    adaptation: [f64; N],
    mass0: [f64; N],
    intake0: [f64; N],
    intake_fraction: [f64; N],
    inv_lag: [f64; N],
    tef_fraction: [f64; N],
    activity_per_kg: [f64; N],
    activity_fraction: [f64; N],
    fat_kcal_per_kg: [f64; N],
    lean_forbes: [f64; N],
    forbes_constant: [f64; N],
}

/// One constant of every lane.
#[inline(always)]
fn of<const N: usize>(lanes: &[Rhs; N], f: impl Fn(&Rhs) -> f64) -> [f64; N] {
    std::array::from_fn(|i| f(&lanes[i]))
}

/// Every term of the energy balance of [`RhsLanes`]' lanes ([`Point`] lane by lane).
#[derive(Debug, Clone, Copy)]
pub struct PointLanes<const N: usize> {
    /// Exercise energy above rest, `X`.
    pub exercise: [f64; N],
    /// Intake.
    pub intake: [f64; N],
    /// Thermic effect of food.
    pub tef: [f64; N],
    /// Non-exercise activity.
    pub activity: [f64; N],
    /// Expenditure `RMR + TEF + AE + X`.
    pub expenditure: [f64; N],
    /// dF/dt, kg/day.
    pub dfat: [f64; N],
    /// dL/dt, kg/day.
    pub dlean: [f64; N],
    /// dXbar/dt, kcal/day per day.
    pub dlagged: [f64; N],
}

impl<'a, const N: usize> RhsLanes<'a, N> {
    /// The lanes `lanes`, which must share the switches (see [`RhsLanes`]).
    #[inline(always)]
    pub fn new(lanes: [Rhs<'a>; N]) -> RhsLanes<'a, N> {
        let first = &lanes[0];
        assert!(
            lanes.iter().all(|r| r.side_by_side(first)),
            "lanes side by side share the model's switches"
        );
        let lin = |j: usize| of(&lanes, |r| r.linear_rmr.map_or(0.0, |c| [c.0, c.1, c.2][j]));
        RhsLanes {
            linear: first.linear_rmr.is_some(),
            one_met: first.one_met,
            lagged: first.comp.intake_lag_days > 0.0,
            cm: lin(0),
            cl: lin(1),
            c0: lin(2),
            rmr_factor: of(&lanes, |r| r.ph.rmr_factor),
            adaptation: of(&lanes, |r| r.comp.rmr_adaptation_kcal_per_kg),
            mass0: of(&lanes, |r| r.ph.mass0_kg),
            intake0: of(&lanes, |r| r.intake0),
            intake_fraction: of(&lanes, |r| r.comp.intake_fraction),
            inv_lag: of(&lanes, |r| r.inv_lag),
            tef_fraction: of(&lanes, |r| r.ph.constants.tef_fraction),
            activity_per_kg: of(&lanes, |r| r.ph.activity_kcal_per_kg_day),
            activity_fraction: of(&lanes, |r| r.comp.activity_fraction),
            fat_kcal_per_kg: of(&lanes, |r| r.ph.constants.fat_kcal_per_kg),
            lean_forbes: of(&lanes, |r| r.lean_forbes),
            forbes_constant: of(&lanes, |r| r.ph.constants.forbes_constant_kg),
            lanes,
        }
    }

    /// RMR with adaptation of every lane, kcal/day. The linear equations are
    /// evaluated from their coefficients (the same value as [`Physiology::rmr`] up
    /// to rounding); the others call the equation.
    #[inline(always)]
    pub fn rmr(&self, fat: &[f64; N], lean: &[f64; N]) -> [f64; N] {
        let mut rmr = [0.0; N];
        if self.linear {
            for i in 0..N {
                let m = fat[i] + lean[i];
                rmr[i] = self.rmr_factor[i] * (self.cm[i] * m + self.cl[i] * lean[i] + self.c0[i])
                    - self.adaptation[i] * (self.mass0[i] - m).max(0.0);
            }
        } else {
            for i in 0..N {
                rmr[i] = self.lanes[i].ph.rmr(self.lanes[i].comp, fat[i], lean[i]);
            }
        }
        rmr
    }

    /// The balance of every lane at fat `fat`, fat-free mass `lean`, lagged exercise
    /// state `lagged` and RMR `rmr` (from [`RhsLanes::rmr`]) with the week's
    /// MET-minutes `a` and minutes `b` per 7 days.
    #[inline(always)]
    #[allow(clippy::too_many_arguments)]
    pub fn point(
        &self,
        fat: &[f64; N],
        lean: &[f64; N],
        lagged: &[f64; N],
        rmr: &[f64; N],
        a: &[f64; N],
        b: &[f64; N],
    ) -> PointLanes<N> {
        let z = [0.0; N];
        let mut p = PointLanes {
            exercise: z,
            intake: z,
            tef: z,
            activity: z,
            expenditure: z,
            dfat: z,
            dlean: z,
            dlagged: z,
        };
        for i in 0..N {
            let m = fat[i] + lean[i];
            // Multiplications by reciprocals: divisions are the slow part of the lane loop.
            let per_met_minute = ML_O2_PER_MET * m * (1.0 / 200.0);
            let rest = if self.one_met {
                per_met_minute
            } else {
                rmr[i] * (1.0 / MINUTES_PER_DAY)
            };
            let x = (a[i] * per_met_minute - b[i] * rest) * (1.0 / 7.0);
            let (lagged, dlagged) = if self.lagged {
                (lagged[i], (x - lagged[i]) * self.inv_lag[i])
            } else {
                (x, 0.0)
            };
            let intake = self.intake0[i] + self.intake_fraction[i] * lagged;
            let tef = self.tef_fraction[i] * intake;
            let activity = self.activity_per_kg[i] * m - self.activity_fraction[i] * x;
            let expenditure = rmr[i] + tef + activity + x;
            // The Forbes partition with one division: with share s = C / F,
            // dF = E / (rho_F + rho_L s) = E F / (rho_F F + rho_L C) and dL = s dF =
            // E C / (rho_F F + rho_L C). The reciprocal depends on F alone, so it is
            // under way while the energy balance is summed. The guard against a
            // non-positive fat mass never acts in a run: the drivers stop at F < 2 kg.
            let f = fat[i].max(1e-6);
            let r = 1.0 / (self.fat_kcal_per_kg[i] * f + self.lean_forbes[i]);
            let balance = (intake - expenditure) * r;
            p.exercise[i] = x;
            p.intake[i] = intake;
            p.tef[i] = tef;
            p.activity[i] = activity;
            p.expenditure[i] = expenditure;
            p.dfat[i] = balance * f;
            p.dlean[i] = balance * self.forbes_constant[i];
            p.dlagged[i] = dlagged;
        }
        p
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
