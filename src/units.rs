//! Physical constants (cgs) with their sources, and the length units a model file may use.
//!
//! Everything inside sojourn works in cgs: centimetres, grams, seconds. Model files may give
//! lengths in other units; they are converted once, at load, with [`LengthUnit::to_cm`].

use serde::{Deserialize, Serialize};

/// Speed of light in vacuum, cm/s. Exact by definition (CODATA 2018).
pub const SPEED_OF_LIGHT_CM_S: f64 = 2.997_924_58e10;

/// Nominal solar radius, cm. IAU 2015 Resolution B3: R☉ = 6.957e8 m.
pub const SOLAR_RADIUS_CM: f64 = 6.957e10;

/// Nominal solar luminosity, erg/s. IAU 2015 Resolution B3: L☉ = 3.828e26 W.
pub const SOLAR_LUMINOSITY_ERG_S: f64 = 3.828e33;

/// Solar mass, g. Derived from the IAU 2015 nominal solar mass parameter
/// (GM)☉ = 1.3271244e20 m³ s⁻² (IAU 2015 Resolution B3) divided by the CODATA 2018
/// gravitational constant G = 6.67430e-11 m³ kg⁻¹ s⁻²: 1.98841e30 kg.
pub const SOLAR_MASS_G: f64 = 1.327_124_4e26 / GRAVITATIONAL_CONSTANT_CGS;

/// Newtonian constant of gravitation, cm³ g⁻¹ s⁻². CODATA 2018: 6.67430e-11 m³ kg⁻¹ s⁻².
pub const GRAVITATIONAL_CONSTANT_CGS: f64 = 6.674_30e-8;

/// Thomson cross-section, cm². CODATA 2018: 6.6524587321e-29 m².
pub const THOMSON_CROSS_SECTION_CM2: f64 = 6.652_458_732_1e-25;

/// Atomic mass constant, g. CODATA 2018: 1.66053906660e-27 kg.
pub const ATOMIC_MASS_UNIT_G: f64 = 1.660_539_066_60e-24;

/// Boltzmann constant, erg/K. Exact by definition (CODATA 2018): 1.380649e-23 J/K.
pub const BOLTZMANN_ERG_K: f64 = 1.380_649e-16;

/// Radiation density constant a = 4σ/c, erg cm⁻³ K⁻⁴. CODATA 2018 Stefan–Boltzmann constant
/// σ = 5.670374419e-8 W m⁻² K⁻⁴ (exact in the 2019 SI), a = 4σ/c.
pub const RADIATION_CONSTANT_CGS: f64 = 4.0 * 5.670_374_419e-5 / SPEED_OF_LIGHT_CM_S;

/// Julian year, s: 365.25 days of 86 400 s (IAU).
pub const JULIAN_YEAR_S: f64 = 365.25 * 86_400.0;

/// Length units: of model files (`"length_unit"`), of `sojourn import --length-unit`, of
/// the radius scale of an import mapping (`radius=r:R_sun`) and of lengths such as
/// `--total-radius 0.8R_sun`. Every place accepts every spelling of [`LengthUnit::parse`]:
/// one canonical symbol per unit ([`LengthUnit::symbol`], which reports and written files
/// use) and its common aliases.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum LengthUnit {
    /// Micrometre, 1e-4 cm.
    Um,
    /// Millimetre, 0.1 cm.
    Mm,
    /// Centimetre (the default).
    #[default]
    Cm,
    /// Metre, 100 cm.
    M,
    /// Kilometre, 1e5 cm.
    Km,
    /// Nominal solar radius (IAU 2015 B3), 6.957e10 cm.
    SolarRadius,
}

/// Every unit with its canonical symbol first, then its aliases (exact, case-sensitive
/// spellings: `m` is a metre and `M` is not a unit).
const SPELLINGS: [(LengthUnit, &[&str]); 6] = [
    (
        LengthUnit::Um,
        &["um", "µm", "μm", "micron", "micrometre", "micrometer"],
    ),
    (LengthUnit::Mm, &["mm", "millimetre", "millimeter"]),
    (LengthUnit::Cm, &["cm", "centimetre", "centimeter"]),
    (LengthUnit::M, &["m", "metre", "meter"]),
    (LengthUnit::Km, &["km", "kilometre", "kilometer"]),
    (
        LengthUnit::SolarRadius,
        &["R_sun", "solar_radius", "Rsun", "R_Sun", "R☉"],
    ),
];

impl LengthUnit {
    /// Every unit, smallest first.
    pub const ALL: [LengthUnit; 6] = [
        LengthUnit::Um,
        LengthUnit::Mm,
        LengthUnit::Cm,
        LengthUnit::M,
        LengthUnit::Km,
        LengthUnit::SolarRadius,
    ];

    /// Centimetres in one of this unit.
    pub fn to_cm(self) -> f64 {
        match self {
            LengthUnit::Um => 1e-4,
            LengthUnit::Mm => 0.1,
            LengthUnit::Cm => 1.0,
            LengthUnit::M => 100.0,
            LengthUnit::Km => 1e5,
            LengthUnit::SolarRadius => SOLAR_RADIUS_CM,
        }
    }

    /// The unit's canonical symbol: what reports print and written model files hold
    /// (`um`, `mm`, `cm`, `m`, `km`, `R_sun`).
    pub fn symbol(self) -> &'static str {
        self.spellings()[0]
    }

    /// Every spelling this unit is accepted under, the canonical symbol first.
    pub fn spellings(self) -> &'static [&'static str] {
        SPELLINGS
            .iter()
            .find(|(unit, _)| *unit == self)
            .map(|(_, spellings)| *spellings)
            .expect("every unit has spellings")
    }

    /// The unit spelled `text` (surrounding spaces ignored), or `None`.
    pub fn parse(text: &str) -> Option<Self> {
        let text = text.trim();
        SPELLINGS
            .iter()
            .find(|(_, spellings)| spellings.contains(&text))
            .map(|(unit, _)| *unit)
    }

    /// What an error message says is expected: the symbols with their aliases.
    pub fn expected() -> String {
        let units: Vec<String> = LengthUnit::ALL
            .iter()
            .map(|unit| {
                let spellings = unit.spellings();
                format!("{} (or {})", spellings[0], spellings[1..].join(", "))
            })
            .collect();
        format!("a length unit: {}", units.join("; "))
    }
}

impl std::fmt::Display for LengthUnit {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.symbol())
    }
}

impl std::str::FromStr for LengthUnit {
    type Err = String;

    /// [`LengthUnit::parse`], with a message naming the text and every accepted spelling.
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        LengthUnit::parse(text)
            .ok_or_else(|| format!("{text:?}: expected {}", LengthUnit::expected()))
    }
}

impl Serialize for LengthUnit {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(self.symbol())
    }
}

impl<'de> Deserialize<'de> for LengthUnit {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let text = String::deserialize(deserializer)?;
        text.parse().map_err(serde::de::Error::custom)
    }
}

/// Formats a duration in seconds with the unit a reader expects at that scale
/// (ps and ns for slabs, seconds to years for stars).
pub fn format_duration(seconds: f64) -> String {
    if !seconds.is_finite() {
        return format!("{seconds}");
    }
    let magnitude = seconds.abs();
    let (value, unit) = if magnitude == 0.0 {
        (0.0, "s")
    } else if magnitude < 1e-9 {
        (seconds * 1e12, "ps")
    } else if magnitude < 1e-6 {
        (seconds * 1e9, "ns")
    } else if magnitude < 1e-3 {
        (seconds * 1e6, "us")
    } else if magnitude < 1.0 {
        (seconds * 1e3, "ms")
    } else if magnitude < 3600.0 {
        (seconds, "s")
    } else if magnitude < 86_400.0 {
        (seconds / 3600.0, "h")
    } else if magnitude < JULIAN_YEAR_S {
        (seconds / 86_400.0, "d")
    } else {
        (seconds / JULIAN_YEAR_S, "yr")
    };
    format_significant(value, 4) + " " + unit
}

/// Formats a number with `digits` significant digits, switching to scientific notation
/// outside 1e-3 ..= 1e6.
pub fn format_significant(value: f64, digits: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    let magnitude = value.abs();
    if !(1e-3..1e6).contains(&magnitude) {
        return format!("{:.*e}", digits.saturating_sub(1), value);
    }
    let exponent = magnitude.log10().floor() as i64;
    let decimals = (digits as i64 - 1 - exponent).max(0) as usize;
    format!("{value:.decimals$}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solar_mass_matches_iau_derived_value() {
        // IAU 2015 B3 (GM)☉ / CODATA 2018 G = 1.98841e33 g.
        assert!((SOLAR_MASS_G / 1.98841e33 - 1.0).abs() < 1e-5);
    }

    #[test]
    fn every_spelling_parses_to_its_unit_and_round_trips_through_json() {
        for unit in LengthUnit::ALL {
            for spelling in unit.spellings() {
                assert_eq!(LengthUnit::parse(spelling), Some(unit), "{spelling}");
                let json = serde_json::to_string(spelling).unwrap();
                assert_eq!(serde_json::from_str::<LengthUnit>(&json).unwrap(), unit);
            }
            let written = serde_json::to_string(&unit).unwrap();
            assert_eq!(written, format!("\"{}\"", unit.symbol()));
        }
        assert_eq!(LengthUnit::parse(" R_sun "), Some(LengthUnit::SolarRadius));
        assert_eq!(
            LengthUnit::parse("solar_radius"),
            Some(LengthUnit::SolarRadius)
        );
        assert_eq!(LengthUnit::parse("M"), None);
        let message = "furlong".parse::<LengthUnit>().unwrap_err();
        assert!(message.contains("furlong") && message.contains("R_sun"));
        assert!(message.contains("solar_radius") && message.contains("µm"));
    }

    #[test]
    fn durations_pick_readable_units() {
        assert_eq!(format_duration(2.5e-11), "25.00 ps");
        assert_eq!(format_duration(3.0 * JULIAN_YEAR_S), "3.000 yr");
        assert_eq!(format_duration(12.0), "12.00 s");
    }
}
