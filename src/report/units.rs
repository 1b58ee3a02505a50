//! Display units of the human-facing outputs: metric or US customary mass, speed and
//! height, and kcal or kJ of energy.
//!
//! The model works in kg, km/h, cm and kcal, and so do plan files, logs, JSON and CSV
//! (the machine contract). Renderers of tables, text and charts convert one way, at
//! the moment they print a number:
//!
//! `lb = kg / 0.45359237`, `mph = (km/h) / 1.609344`, `in = cm / 2.54`,
//! `kJ = kcal * 4.184`.
//!
//! Rates per kg (a dose in kcal/kg/week, an energy density in kcal/kg) stay per kg in
//! every unit system; only their energy is converted.
//!
//! Reference: NIST Special Publication 811 (2008 edition), Guide for the Use of the
//! International System of Units (SI), Appendix B.8: the avoirdupois pound, the
//! international mile and the inch are exact since the international yard and pound
//! agreement of 1959, and the thermochemical calorie is exactly 4.184 J (as in
//! ISO 80000-5).

/// Kilograms in one avoirdupois pound, exact (NIST SP 811 (2008) Appendix B.8; the
/// international yard and pound agreement of 1959).
pub const KG_PER_LB: f64 = 0.453_592_37;

/// Kilometres in one international mile, exact (NIST SP 811 (2008) Appendix B.8).
pub const KM_PER_MILE: f64 = 1.609_344;

/// Centimetres in one inch, exact (NIST SP 811 (2008) Appendix B.8).
pub const CM_PER_INCH: f64 = 2.54;

/// Kilojoules in one thermochemical kilocalorie, exact (NIST SP 811 (2008) Appendix
/// B.8; ISO 80000-5).
pub const KJ_PER_KCAL: f64 = 4.184;

/// Units of mass, speed and height.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum UnitSystem {
    /// kg, km/h, cm.
    #[default]
    Metric,
    /// US customary: lb, mph, in.
    Us,
}

/// Unit of energy.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum EnergyUnit {
    /// Thermochemical kilocalories.
    #[default]
    Kcal,
    /// Kilojoules.
    Kj,
}

/// The units human-facing output is shown in; the default is metric and kcal, the
/// units of the model and of the machine-readable outputs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Units {
    /// Mass, speed and height.
    pub system: UnitSystem,
    /// Energy.
    pub energy: EnergyUnit,
}

impl Units {
    /// Whether these are the model's own units (metric and kcal).
    pub fn is_model_units(self) -> bool {
        self == Units::default()
    }

    /// A mass given in kg, in the display unit.
    pub fn mass(self, kg: f64) -> f64 {
        match self.system {
            UnitSystem::Metric => kg,
            UnitSystem::Us => kg / KG_PER_LB,
        }
    }

    /// The mass unit's symbol.
    pub fn mass_label(self) -> &'static str {
        match self.system {
            UnitSystem::Metric => "kg",
            UnitSystem::Us => "lb",
        }
    }

    /// An energy given in kcal, in the display unit.
    pub fn energy(self, kcal: f64) -> f64 {
        match self.energy {
            EnergyUnit::Kcal => kcal,
            EnergyUnit::Kj => kcal * KJ_PER_KCAL,
        }
    }

    /// The energy unit's symbol.
    pub fn energy_label(self) -> &'static str {
        match self.energy {
            EnergyUnit::Kcal => "kcal",
            EnergyUnit::Kj => "kJ",
        }
    }

    /// A speed given in km/h, in the display unit.
    pub fn speed(self, kmh: f64) -> f64 {
        match self.system {
            UnitSystem::Metric => kmh,
            UnitSystem::Us => kmh / KM_PER_MILE,
        }
    }

    /// The speed unit's symbol.
    pub fn speed_label(self) -> &'static str {
        match self.system {
            UnitSystem::Metric => "km/h",
            UnitSystem::Us => "mph",
        }
    }

    /// A height given in cm, in the display unit.
    pub fn height(self, cm: f64) -> f64 {
        match self.system {
            UnitSystem::Metric => cm,
            UnitSystem::Us => cm / CM_PER_INCH,
        }
    }

    /// The height unit's symbol.
    pub fn height_label(self) -> &'static str {
        match self.system {
            UnitSystem::Metric => "cm",
            UnitSystem::Us => "in",
        }
    }

    /// A dose amount of the plan's dose kind (its plan key, e.g. `kcal_per_kg_week`),
    /// in the display unit: energy doses convert their energy, per-kg doses stay per
    /// kg, minutes stay minutes.
    pub fn dose(self, kind: &str, amount: f64) -> f64 {
        if kind == "minutes_per_week" {
            amount
        } else {
            self.energy(amount)
        }
    }

    /// The unit of a dose of kind `kind` as displayed, e.g. `kJ/kg/week`.
    pub fn dose_label(self, kind: &str) -> String {
        let e = self.energy_label();
        match kind {
            "kcal_per_session" => format!("{e}/session"),
            "kcal_per_week" => format!("{e}/week"),
            "kcal_per_kg_week" => format!("{e}/kg/week"),
            _ => "min/week".to_string(),
        }
    }

    /// A mass with `decimals` decimals and its unit, e.g. `229.3 lb`.
    pub fn mass_text(self, kg: f64, decimals: usize) -> String {
        format!("{:.decimals$} {}", self.mass(kg), self.mass_label())
    }

    /// An energy rate per day with `decimals` decimals and its unit, e.g. `8042 kJ/day`.
    pub fn per_day_text(self, kcal_per_day: f64, decimals: usize) -> String {
        format!(
            "{:.decimals$} {}/day",
            self.energy(kcal_per_day),
            self.energy_label()
        )
    }

    /// A speed with one decimal and its unit, e.g. `3.5 mph`.
    pub fn speed_text(self, kmh: f64) -> String {
        format!("{:.1} {}", self.speed(kmh), self.speed_label())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    const US: Units = Units {
        system: UnitSystem::Us,
        energy: EnergyUnit::Kcal,
    };
    const KJ: Units = Units {
        system: UnitSystem::Metric,
        energy: EnergyUnit::Kj,
    };

    #[test]
    fn the_default_is_metric_and_kcal_and_changes_nothing() {
        let u = Units::default();
        assert!(u.is_model_units());
        assert!(!US.is_model_units());
        assert!(!KJ.is_model_units());
        for x in [0.0, 1.0, 104.0, 2788.4, -2.6] {
            assert_eq!(u.mass(x), x);
            assert_eq!(u.energy(x), x);
            assert_eq!(u.speed(x), x);
            assert_eq!(u.height(x), x);
        }
        assert_eq!(
            (
                u.mass_label(),
                u.energy_label(),
                u.speed_label(),
                u.height_label()
            ),
            ("kg", "kcal", "km/h", "cm")
        );
    }

    #[test]
    fn a_pound_is_0_45359237_kg_exactly() {
        // NIST SP 811 (2008) Appendix B.8: 1 lb (avoirdupois) = 0.45359237 kg exactly,
        // from the international yard and pound agreement of 1959.
        assert_relative_eq!(US.mass(0.45359237), 1.0, max_relative = 1e-15);
        // The same agreement: 1 lb = 7000 grains, 1 grain = 64.79891 mg exactly.
        assert_relative_eq!(US.mass(7000.0 * 64.79891e-6), 1.0, max_relative = 1e-15);
        // 100 kg = 220.462262... lb (NIST SP 811 B.8 gives 1 kg = 2.204623 lb).
        assert_relative_eq!(US.mass(100.0), 220.462_262_184_877_6, max_relative = 1e-15);
        assert_eq!(US.mass_label(), "lb");
    }

    #[test]
    fn a_mile_is_1_609344_km_exactly() {
        // NIST SP 811 (2008) Appendix B.8: 1 mi (international) = 1.609344 km exactly.
        assert_relative_eq!(US.speed(1.609344), 1.0, max_relative = 1e-15);
        // 1 mi = 5280 ft and 1 ft = 0.3048 m exactly (the 1959 agreement).
        assert_relative_eq!(
            US.speed(5280.0 * 0.3048 / 1000.0),
            1.0,
            max_relative = 1e-15
        );
        // The demo's brisk walk: 5.6 km/h = 3.4797... mph.
        assert_relative_eq!(US.speed(5.6), 5.6 / 1.609344, max_relative = 1e-15);
        assert_eq!(US.speed_label(), "mph");
    }

    #[test]
    fn an_inch_is_2_54_cm_exactly() {
        // NIST SP 811 (2008) Appendix B.8: 1 in = 2.54 cm exactly.
        assert_relative_eq!(US.height(2.54), 1.0, max_relative = 1e-15);
        // 6 ft = 72 in = 182.88 cm exactly.
        assert_relative_eq!(US.height(182.88), 72.0, max_relative = 1e-15);
        assert_eq!(US.height_label(), "in");
    }

    #[test]
    fn a_kilocalorie_is_4_184_kj_exactly() {
        // NIST SP 811 (2008) Appendix B.8 and ISO 80000-5: the thermochemical calorie
        // is 4.184 J exactly, so 1 kcal = 4.184 kJ.
        assert_relative_eq!(KJ.energy(1.0), 4.184, max_relative = 1e-15);
        // 2000 kcal/day = 8368 kJ/day.
        assert_relative_eq!(KJ.energy(2000.0), 8368.0, max_relative = 1e-15);
        assert_eq!(KJ.energy_label(), "kJ");
        // Energy and mass are independent choices.
        assert_eq!(KJ.mass(80.0), 80.0);
        assert_eq!(US.energy(80.0), 80.0);
    }

    #[test]
    fn conversions_round_trip_within_1e_12() {
        for x in [0.001, 0.5, 30.0, 104.0, 350.0, 2788.4, 15000.0] {
            let kg = US.mass(x) * KG_PER_LB;
            assert!((kg - x).abs() <= 1e-12 * x.max(1.0), "kg -> lb -> kg: {x}");
            let kmh = US.speed(x) * KM_PER_MILE;
            assert!((kmh - x).abs() <= 1e-12 * x.max(1.0), "km/h -> mph: {x}");
            let cm = US.height(x) * CM_PER_INCH;
            assert!((cm - x).abs() <= 1e-12 * x.max(1.0), "cm -> in: {x}");
            let kcal = KJ.energy(x) / KJ_PER_KCAL;
            assert!((kcal - x).abs() <= 1e-12 * x.max(1.0), "kcal -> kJ: {x}");
        }
    }

    #[test]
    fn doses_convert_their_energy_and_stay_per_kg() {
        let both = Units {
            system: UnitSystem::Us,
            energy: EnergyUnit::Kj,
        };
        // 12 kcal/kg/week = 50.208 kJ/kg/week, still per kg in US units.
        assert_relative_eq!(
            both.dose("kcal_per_kg_week", 12.0),
            50.208,
            max_relative = 1e-15
        );
        assert_eq!(both.dose_label("kcal_per_kg_week"), "kJ/kg/week");
        assert_eq!(US.dose_label("kcal_per_kg_week"), "kcal/kg/week");
        assert_eq!(US.dose("kcal_per_kg_week", 12.0), 12.0);
        assert_relative_eq!(
            both.dose("kcal_per_session", 400.0),
            1673.6,
            max_relative = 1e-15
        );
        assert_eq!(both.dose_label("kcal_per_session"), "kJ/session");
        assert_eq!(both.dose_label("kcal_per_week"), "kJ/week");
        // Minutes are no energy.
        assert_eq!(both.dose("minutes_per_week", 150.0), 150.0);
        assert_eq!(both.dose_label("minutes_per_week"), "min/week");
        let metric = Units::default();
        for kind in [
            "kcal_per_session",
            "kcal_per_week",
            "kcal_per_kg_week",
            "minutes_per_week",
        ] {
            assert_eq!(metric.dose(kind, 7.5), 7.5);
        }
        assert_eq!(metric.dose_label("kcal_per_kg_week"), "kcal/kg/week");
    }

    #[test]
    fn texts_name_the_unit_shown() {
        assert_eq!(Units::default().mass_text(104.0, 1), "104.0 kg");
        // 104.0 / 0.45359237 = 229.28 lb.
        assert_eq!(US.mass_text(104.0, 1), "229.3 lb");
        assert_eq!(Units::default().per_day_text(1922.4, 0), "1922 kcal/day");
        // 1922.4 * 4.184 = 8043.3 kJ/day.
        assert_eq!(KJ.per_day_text(1922.4, 0), "8043 kJ/day");
        assert_eq!(Units::default().speed_text(5.6), "5.6 km/h");
        assert_eq!(US.speed_text(5.6), "3.5 mph");
    }
}
