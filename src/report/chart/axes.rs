//! Axis ticks at nice numbers and their labels.

/// Axis ticks: every multiple of `step` from `min` to `max`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ticks {
    /// Axis start.
    pub min: f64,
    /// Axis end.
    pub max: f64,
    /// Distance between ticks: 1, 2 or 5 times a power of ten.
    pub step: f64,
}

impl Ticks {
    /// The tick values, the multiples of `step` within `[min, max]`.
    pub fn values(&self) -> Vec<f64> {
        let eps = 1e-9;
        let first = (self.min / self.step - eps).ceil() as i64;
        let last = (self.max / self.step + eps).floor() as i64;
        (first..=last).map(|k| k as f64 * self.step).collect()
    }

    /// Decimals that print every tick exactly.
    pub fn decimals(&self) -> usize {
        if self.step >= 1.0 {
            0
        } else {
            (-self.step.log10() - 1e-9).ceil() as usize
        }
    }
}

/// A "nice" number near `x > 0`: 1, 2, 5 or 10 times a power of ten; the nearest
/// such number when `round`, else the smallest not below `x` (Heckbert, "Nice
/// numbers for graph labels", Graphics Gems, 1990).
pub fn nice_number(x: f64, round: bool) -> f64 {
    let exp = x.log10().floor();
    let base = 10f64.powf(exp);
    let f = x / base;
    let nice = if round {
        match f {
            f if f < 1.5 => 1.0,
            f if f < 3.0 => 2.0,
            f if f < 7.0 => 5.0,
            _ => 10.0,
        }
    } else {
        match f {
            f if f <= 1.0 => 1.0,
            f if f <= 2.0 => 2.0,
            f if f <= 5.0 => 5.0,
            _ => 10.0,
        }
    };
    nice * base
}

/// Ticks covering `[lo, hi]` with about `target` ticks, the axis widened out to the
/// nearest multiples of a 1-2-5 step (Heckbert's loose labelling). Where the data
/// would fill less than two thirds of that axis, the next smaller 1-2-5 step is
/// taken instead if it keeps the tick count within `target + 4`. An empty or
/// degenerate range is widened first.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> Ticks {
    let (mut lo, mut hi) = if lo.is_finite() && hi.is_finite() && lo <= hi {
        (lo, hi)
    } else {
        (0.0, 1.0)
    };
    if hi - lo < 1e-9 * lo.abs().max(1.0) {
        let half = (lo.abs() * 0.05).max(0.5);
        lo -= half;
        hi += half;
    }
    let span = nice_number(hi - lo, false);
    let step = nice_number(span / (target.max(2) - 1) as f64, true);
    let cover = |step: f64| Ticks {
        min: (lo / step).floor() * step,
        max: (hi / step).ceil() * step,
        step,
    };
    let loose = cover(step);
    let finer = cover(smaller_nice_step(step));
    if (hi - lo) < (loose.max - loose.min) * 2.0 / 3.0 && finer.values().len() <= target + 4 {
        finer
    } else {
        loose
    }
}

/// The 1-2-5 step below `step`: 10 -> 5 -> 2 -> 1.
pub(super) fn smaller_nice_step(step: f64) -> f64 {
    let base = 10f64.powf(step.log10().floor());
    let mantissa = (step / base).round();
    match mantissa as u32 {
        1 => 0.5 * base,
        2 => base,
        _ => 2.0 * base,
    }
}

/// A coordinate with two decimals, never `-0.00`.
pub(super) fn num(v: f64) -> String {
    let s = format!("{v:.2}");
    if s == "-0.00" { "0.00".to_string() } else { s }
}

/// A tick label: fixed decimals, a true minus sign, never `-0`.
pub(super) fn tick_label(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().any(|c| c.is_ascii_digit() && c != '0') => {
            format!("\u{2212}{rest}")
        }
        Some(rest) => rest.to_string(),
        None => s,
    }
}
