//! Argument parsers shared by several subcommands.

use sojourn::opacity::OpacitySpec;
use sojourn::units::LengthUnit;

/// `--opacity`: a short name, a `+`-joined sum of names, or a JSON law.
pub fn opacity(text: &str) -> Result<OpacitySpec, String> {
    OpacitySpec::parse_short(text)
}

/// A length unit, any spelling a model file accepts (`cm`, `R_sun`, `solar_radius`, ...).
pub fn length_unit(text: &str) -> Result<LengthUnit, String> {
    text.parse()
}

/// A relative tolerance strictly between 0 and 1.
pub fn tolerance(text: &str) -> Result<f64, String> {
    match text.parse::<f64>() {
        Ok(value) if value > 0.0 && value < 1.0 => Ok(value),
        _ => Err(format!(
            "{text:?}: expected a relative tolerance between 0 and 1 (0.01 is 1 %)"
        )),
    }
}

/// A mass fraction in [0, 1].
pub fn fraction(text: &str) -> Result<f64, String> {
    match text.parse::<f64>() {
        Ok(value) if (0.0..=1.0).contains(&value) => Ok(value),
        _ => Err(format!(
            "{text:?}: expected a mass fraction between 0 and 1"
        )),
    }
}

/// A finite positive number.
pub fn positive(text: &str) -> Result<f64, String> {
    match text.parse::<f64>() {
        Ok(value) if value.is_finite() && value > 0.0 => Ok(value),
        _ => Err(format!("{text:?}: expected a positive number")),
    }
}

/// A whole count of at least 1 (photons, steps), with the number spelled out in the error.
pub fn count(text: &str) -> Result<u64, String> {
    match text.parse::<u64>() {
        Ok(value) if value >= 1 => Ok(value),
        Ok(_) => Err(format!("{text:?}: expected a whole number of at least 1")),
        Err(_) => Err(format!(
            "{text:?}: expected a whole number from 1 to {}",
            u64::MAX
        )),
    }
}
