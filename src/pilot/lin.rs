//! First-order propagation of measurement error: an estimate is its value plus its
//! coefficient on each independent error source (in units of that source's SD), so
//! that estimates sharing a measurement carry the right correlation and a variance is
//! the sum of the squared coefficients (the delta method; e.g. Ku HH 1966, J Res Natl
//! Bur Stand 70C:263, from memory).

use std::collections::BTreeMap;

/// A value with its first-order dependence on independent unit-variance errors.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Lin {
    /// The estimate.
    pub value: f64,
    /// Coefficient on each error source (source id -> kcal/day or the estimate's unit
    /// per one SD of that source).
    grad: BTreeMap<u32, f64>,
}

impl Lin {
    /// A value known exactly.
    pub fn exact(value: f64) -> Lin {
        Lin {
            value,
            grad: BTreeMap::new(),
        }
    }

    /// A measured value with its own error source `id` and standard deviation `sd`.
    pub fn measured(value: f64, id: u32, sd: f64) -> Lin {
        let mut grad = BTreeMap::new();
        if sd > 0.0 {
            grad.insert(id, sd);
        }
        Lin { value, grad }
    }

    /// The variance.
    pub fn var(&self) -> f64 {
        self.grad.values().map(|g| g * g).sum()
    }

    /// The standard deviation.
    pub fn sd(&self) -> f64 {
        self.var().sqrt()
    }

    /// `a * self + b * other`.
    pub fn combine(&self, a: f64, other: &Lin, b: f64) -> Lin {
        let mut grad = BTreeMap::new();
        for (k, g) in &self.grad {
            *grad.entry(*k).or_insert(0.0) += a * g;
        }
        for (k, g) in &other.grad {
            *grad.entry(*k).or_insert(0.0) += b * g;
        }
        Lin {
            value: a * self.value + b * other.value,
            grad,
        }
    }

    /// `self + other`.
    pub fn add(&self, other: &Lin) -> Lin {
        self.combine(1.0, other, 1.0)
    }

    /// `self - other`.
    pub fn sub(&self, other: &Lin) -> Lin {
        self.combine(1.0, other, -1.0)
    }

    /// `a * self`.
    pub fn scale(&self, a: f64) -> Lin {
        self.combine(a, &Lin::exact(0.0), 0.0)
    }

    /// `self / other`, to first order (the delta method).
    pub fn div(&self, other: &Lin) -> Lin {
        let q = self.value / other.value;
        let mut r = self.combine(1.0 / other.value, other, -q / other.value);
        r.value = q;
        r
    }

    /// A smooth function `f` of several estimates, linearised by central differences
    /// of step `h` in each value.
    pub fn map(inputs: &[&Lin], h: f64, f: impl Fn(&[f64]) -> f64) -> Lin {
        let x: Vec<f64> = inputs.iter().map(|l| l.value).collect();
        let mut out = Lin::exact(f(&x));
        for (i, l) in inputs.iter().enumerate() {
            let mut up = x.clone();
            let mut down = x.clone();
            up[i] += h;
            down[i] -= h;
            let d = (f(&up) - f(&down)) / (2.0 * h);
            let v = out.value;
            out = out.combine(1.0, l, d);
            out.value = v;
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shared_sources_correlate() {
        let a = Lin::measured(10.0, 1, 2.0);
        let b = Lin::measured(4.0, 2, 1.0);
        // a - a has no error; a + b has variance 4 + 1.
        assert_eq!(a.sub(&a).var(), 0.0);
        assert!((a.add(&b).var() - 5.0).abs() < 1e-12);
        // delta method for a ratio: var(a/b) = (sa/b)^2 + (a sb / b^2)^2.
        let q = a.div(&b);
        assert!((q.value - 2.5).abs() < 1e-12);
        assert!((q.var() - ((2.0f64 / 4.0).powi(2) + (10.0f64 / 16.0).powi(2))).abs() < 1e-12);
        // a linear map is linearised exactly.
        let m = Lin::map(&[&a, &b], 1e-3, |x| 3.0 * x[0] - 2.0 * x[1]);
        assert!((m.value - 22.0).abs() < 1e-12);
        assert!((m.var() - (36.0 + 4.0)).abs() < 1e-9);
    }
}
