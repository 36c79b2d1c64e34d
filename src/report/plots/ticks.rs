//! Axis ranges, tick positions and tick labels.
//!
//! Charts work in *transformed* coordinates: a value `v` sits at `v` on a linear axis and at
//! `log10 v` on a logarithmic one. Ticks are chosen here so that a reader sees round numbers:
//! 1, 2, 2.5 or 5 times a power of ten on linear axes; whole decades on logarithmic axes
//! (with 2 and 5 in between when the range is under three decades).

use super::spec::Scale;

/// Tick positions of one axis, in transformed coordinates.
#[derive(Debug, Clone, PartialEq)]
pub struct Ticks {
    /// Labelled ticks (with grid lines).
    pub major: Vec<f64>,
    /// Unlabelled minor grid lines.
    pub minor: Vec<f64>,
}

/// Maps a data value to the axis' transformed coordinate (`None` where it cannot be shown:
/// not finite, or not positive on a logarithmic axis).
pub fn transform(scale: Scale, value: f64) -> Option<f64> {
    let t = match scale {
        Scale::Linear => value,
        Scale::Log => {
            if value.is_nan() || value <= 0.0 {
                return None;
            }
            value.log10()
        }
    };
    t.is_finite().then_some(t)
}

/// The data value at a transformed coordinate.
pub fn untransform(scale: Scale, t: f64) -> f64 {
    match scale {
        Scale::Linear => t,
        Scale::Log => 10f64.powf(t),
    }
}

/// The displayed range (transformed coordinates) for data spanning `low..=high`
/// (transformed), with a margin of 4 % on each side; `from_zero` pins the lower end of a
/// linear axis at 0 when the data are not negative. A degenerate range is widened.
pub fn padded_range(scale: Scale, low: f64, high: f64, from_zero: bool) -> (f64, f64) {
    let (mut low, mut high) = (low, high);
    if high - low <= f64::EPSILON * high.abs().max(low.abs()).max(1e-300) {
        let half = match scale {
            Scale::Log => 0.5,
            Scale::Linear if low == 0.0 => 1.0,
            Scale::Linear => 0.1 * low.abs(),
        };
        low -= half;
        high += half;
    }
    let pad = 0.04 * (high - low);
    let pinned = from_zero && scale == Scale::Linear && low >= 0.0;
    let low = if pinned { 0.0 } else { low - pad };
    (low, high + pad)
}

/// A "nice" step of about `span / target`: 1, 2, 2.5 or 5 times a power of ten.
pub fn nice_step(span: f64, target: usize) -> f64 {
    let raw = span / target.max(1) as f64;
    let power = 10f64.powf(raw.log10().floor());
    let mantissa = raw / power;
    let nice = if mantissa <= 1.0 {
        1.0
    } else if mantissa <= 2.0 {
        2.0
    } else if mantissa <= 2.5 {
        2.5
    } else if mantissa <= 5.0 {
        5.0
    } else {
        10.0
    };
    nice * power
}

/// Multiples of `step` inside `low..=high`.
fn multiples(low: f64, high: f64, step: f64) -> Vec<f64> {
    let first = (low / step - 1e-9).ceil() as i64;
    let last = (high / step + 1e-9).floor() as i64;
    (first..=last).map(|k| k as f64 * step).collect()
}

/// Ticks for the transformed range `low..=high`.
pub fn ticks(scale: Scale, low: f64, high: f64) -> Ticks {
    match scale {
        Scale::Linear => {
            let step = nice_step(high - low, 6);
            Ticks {
                major: multiples(low, high, step),
                minor: Vec::new(),
            }
        }
        Scale::Log => log_ticks(low, high),
    }
}

fn log_ticks(low: f64, high: f64) -> Ticks {
    let span = high - low;
    let in_range = |t: f64| t >= low - 1e-9 && t <= high + 1e-9;
    let mantissa_ticks = |mantissas: &[f64]| -> Vec<f64> {
        let mut out = Vec::new();
        for decade in (low.floor() as i64 - 1)..=(high.ceil() as i64) {
            for &m in mantissas {
                let t = decade as f64 + m.log10();
                if in_range(t) {
                    out.push(t);
                }
            }
        }
        out
    };
    if span >= 3.0 {
        let every = (span / 7.0).ceil().max(1.0);
        let decades = multiples(low, high, 1.0);
        let major: Vec<f64> = decades
            .iter()
            .copied()
            .filter(|d| (d / every).round() * every == *d)
            .collect();
        let minor = if every == 1.0 && span <= 6.0 {
            mantissa_ticks(&[2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0])
        } else {
            decades.into_iter().filter(|d| !major.contains(d)).collect()
        };
        return Ticks { major, minor };
    }
    // Up to three decades: 1, 2 and 5 (and 3, 7 on shorter ranges) are labelled too.
    let candidates: &[&[f64]] = &[&[1.0, 2.0, 5.0], &[1.0, 2.0, 3.0, 5.0, 7.0]];
    for mantissas in candidates {
        let major = mantissa_ticks(mantissas);
        if major.len() >= 3 {
            return Ticks {
                major,
                minor: mantissa_ticks(&[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]),
            };
        }
    }
    // A very short range: round numbers in value space, placed on the log axis.
    let (a, b) = (10f64.powf(low), 10f64.powf(high));
    Ticks {
        major: multiples(a, b, nice_step(b - a, 5))
            .into_iter()
            .filter(|v| *v > 0.0)
            .map(f64::log10)
            .collect(),
        minor: Vec::new(),
    }
}

const SUPERSCRIPTS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];

/// `10ⁿ` with a superscript exponent.
pub fn power_of_ten(exponent: i64) -> String {
    let mut out = String::from("10");
    if exponent < 0 {
        out.push('⁻');
    }
    for digit in exponent.unsigned_abs().to_string().chars() {
        out.push(SUPERSCRIPTS[digit.to_digit(10).unwrap_or(0) as usize]);
    }
    out
}

/// A round number as a short label: plain decimals between 10⁻³ and 10⁵, otherwise
/// `m×10ⁿ` (or `10ⁿ` for m = 1). `step` is the spacing of neighbouring ticks and sets the
/// decimals shown.
pub fn format_tick(value: f64, step: f64) -> String {
    if value == 0.0 {
        return "0".to_string();
    }
    let magnitude = value.abs();
    if (1e-3..1e5).contains(&magnitude) && step >= 1e-4 {
        let decimals = (0..=12)
            .find(|&d| {
                let scaled = step * 10f64.powi(d);
                (scaled - scaled.round()).abs() < 1e-6 * scaled.max(1.0)
            })
            .unwrap_or(12) as usize;
        let text = format!("{value:.decimals$}");
        return if text.contains('.') {
            text.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            text
        };
    }
    let exponent = magnitude.log10().floor() as i64;
    let mantissa = value / 10f64.powi(exponent as i32);
    let rounded = (mantissa * 100.0).round() / 100.0;
    if (rounded - 1.0).abs() < 1e-9 {
        power_of_ten(exponent)
    } else if (rounded + 1.0).abs() < 1e-9 {
        format!("−{}", power_of_ten(exponent))
    } else {
        let m = format!("{rounded}");
        format!("{m}×{}", power_of_ten(exponent))
    }
}

/// Label of a tick at transformed coordinate `t` among `major` ticks.
pub fn tick_label(scale: Scale, t: f64, major: &[f64]) -> String {
    match scale {
        Scale::Linear => {
            let step = major
                .windows(2)
                .map(|w| w[1] - w[0])
                .fold(f64::INFINITY, f64::min);
            let step = if step.is_finite() {
                step
            } else {
                t.abs().max(1.0)
            };
            format_tick(if t.abs() < 1e-9 * step { 0.0 } else { t }, step)
        }
        Scale::Log => {
            let value = 10f64.powf(t);
            if (t - t.round()).abs() < 1e-9 {
                let exponent = t.round() as i64;
                if (-3..5).contains(&exponent) {
                    format_tick(10f64.powi(exponent as i32), 10f64.powi(exponent as i32))
                } else {
                    power_of_ten(exponent)
                }
            } else {
                let exponent = t.floor() as i64;
                format_tick(value, 10f64.powi(exponent as i32))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn linear_ticks_are_round_and_inside() {
        let t = ticks(Scale::Linear, 0.0, 0.83);
        assert_eq!(t.major.len(), 5, "{:?}", t.major);
        assert!((t.major[1] - 0.2).abs() < 1e-12);
        let labels: Vec<String> = t
            .major
            .iter()
            .map(|&v| tick_label(Scale::Linear, v, &t.major))
            .collect();
        assert_eq!(labels, ["0", "0.2", "0.4", "0.6", "0.8"]);
        let t = ticks(Scale::Linear, 0.0, 1.04);
        let labels: Vec<String> = t
            .major
            .iter()
            .map(|&v| tick_label(Scale::Linear, v, &t.major))
            .collect();
        assert_eq!(labels, ["0", "0.2", "0.4", "0.6", "0.8", "1"]);
    }

    #[test]
    fn quarter_steps_keep_their_decimal() {
        let t = ticks(Scale::Linear, 0.0, 0.0123);
        let labels: Vec<String> = t
            .major
            .iter()
            .map(|&v| tick_label(Scale::Linear, v, &t.major))
            .collect();
        assert_eq!(
            labels,
            ["0", "0.0025", "0.005", "0.0075", "0.01", "0.0125"][..labels.len()]
        );
    }

    #[test]
    fn log_ticks_are_decades_or_125() {
        let t = ticks(Scale::Log, 0.7, 4.6);
        assert_eq!(t.major, vec![1.0, 2.0, 3.0, 4.0]);
        assert!(t.minor.len() > 8);
        let t = ticks(Scale::Log, 1.9, 3.8);
        let labels: Vec<String> = t
            .major
            .iter()
            .map(|&v| tick_label(Scale::Log, v, &t.major))
            .collect();
        assert_eq!(labels, ["100", "200", "500", "1000", "2000", "5000"]);
        let t = ticks(Scale::Log, 0.9, 1.8);
        let labels: Vec<String> = t
            .major
            .iter()
            .map(|&v| tick_label(Scale::Log, v, &t.major))
            .collect();
        assert_eq!(labels, ["10", "20", "50"]);
        let t = ticks(Scale::Log, -20.0, 20.0);
        assert!(t.major.len() <= 8 && t.major.len() >= 4, "{:?}", t.major);
        assert_eq!(tick_label(Scale::Log, -12.0, &t.major), "10⁻¹²");
        assert_eq!(tick_label(Scale::Log, 3.0, &t.major), "1000");
    }

    #[test]
    fn large_and_small_labels_use_powers() {
        assert_eq!(format_tick(2e6, 1e6), "2×10⁶");
        assert_eq!(format_tick(1e-5, 1e-5), "10⁻⁵");
        assert_eq!(format_tick(250.0, 50.0), "250");
    }

    #[test]
    fn padded_ranges_hold_the_data() {
        let (a, b) = padded_range(Scale::Linear, 0.1, 0.9, true);
        assert_eq!(a, 0.0);
        assert!(b > 0.9);
        let (a, b) = padded_range(Scale::Log, 2.0, 2.0, false);
        assert!(a < 2.0 && b > 2.0);
    }
}
