//! Thermodynamic data of equilibria and the units they are written in.
//!
//! In: quantities as text (`4.5 eV`, `115 J/(mol K)`, `1000 °C`, `1e-5 bar`)
//! and the data given for a reaction (K at a temperature, ΔH with ΔS, or K at
//! a temperature with ΔH). Out: SI-free internal values (eV, eV/K, kelvin,
//! bar) and K(T) = exp(ΔS/k)·exp(−ΔH/kT). A K known at one temperature only
//! is refused at any other, never silently reused.

use std::fmt;

/// Boltzmann constant in eV/K (CODATA; exact since the 2019 SI redefinition).
pub const BOLTZMANN_EV_PER_K: f64 = 8.617_333_262e-5;

/// One eV per particle in kJ/mol: e·N_A/1000, exact since the 2019 SI.
pub const EV_IN_KJ_PER_MOL: f64 = 96.485_332_123_310_01;

/// 0 °C in kelvin.
pub const ZERO_CELSIUS: f64 = 273.15;

/// How the equilibrium constant of one reaction is known.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Thermo {
    /// K at one temperature (kelvin) only.
    Fixed { k: f64, at: f64 },
    /// K(T) = exp(ΔS/k)·exp(−ΔH/kT). `from_k` keeps the K and temperature
    /// ΔS was derived from, when it was given that way.
    Arrhenius {
        dh_ev: f64,
        ds_ev_per_k: f64,
        from_k: Option<(f64, f64)>,
    },
}

/// K asked for at a temperature where it is not known.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NotKnownAt {
    pub known_at: f64,
    pub asked: f64,
}

impl fmt::Display for NotKnownAt {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "K is known only at {}, not at {}",
            temperature_text(self.known_at),
            temperature_text(self.asked)
        )
    }
}

impl Thermo {
    /// ΔS from K at `at` and ΔH (van 't Hoff with constant ΔH).
    pub fn from_k_and_enthalpy(k: f64, at: f64, dh_ev: f64) -> Thermo {
        let ds_ev_per_k = BOLTZMANN_EV_PER_K * k.ln() + dh_ev / at;
        Thermo::Arrhenius {
            dh_ev,
            ds_ev_per_k,
            from_k: Some((k, at)),
        }
    }

    /// ln K at `t` kelvin.
    pub fn ln_k(&self, t: f64) -> Result<f64, NotKnownAt> {
        match *self {
            Thermo::Fixed { k, at } => {
                if (t - at).abs() <= 1e-9 * at.max(1.0) {
                    Ok(k.ln())
                } else {
                    Err(NotKnownAt {
                        known_at: at,
                        asked: t,
                    })
                }
            }
            Thermo::Arrhenius {
                dh_ev, ds_ev_per_k, ..
            } => Ok(ds_ev_per_k / BOLTZMANN_EV_PER_K - dh_ev / (BOLTZMANN_EV_PER_K * t)),
        }
    }

    /// ΔH in eV when known.
    pub fn enthalpy(&self) -> Option<f64> {
        match *self {
            Thermo::Fixed { .. } => None,
            Thermo::Arrhenius { dh_ev, .. } => Some(dh_ev),
        }
    }

    /// Whether K can be evaluated at any temperature.
    pub fn temperature_dependent(&self) -> bool {
        matches!(self, Thermo::Arrhenius { .. })
    }
}

/// A quantity that could not be read, with a way forward.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnitError {
    pub message: String,
    pub help: String,
}

fn unit_error(message: String, help: &str) -> UnitError {
    UnitError {
        message,
        help: help.to_string(),
    }
}

/// Splits `4.5 eV` or `4.5eV` into the number and the unit text.
fn split_quantity(text: &str) -> Result<(f64, &str), UnitError> {
    let text = text.trim();
    let end = text
        .char_indices()
        .find(|&(i, c)| {
            !(c.is_ascii_digit()
                || c == '.'
                || c == '+'
                || c == '-'
                || ((c == 'e' || c == 'E')
                    && text[i + 1..]
                        .chars()
                        .next()
                        .is_some_and(|n| n.is_ascii_digit() || n == '-' || n == '+')))
        })
        .map_or(text.len(), |(i, _)| i);
    let (number, unit) = text.split_at(end);
    let value = parse_number(number)?;
    Ok((value, unit.trim()))
}

/// A finite decimal number such as `1e-20`, `4.5`, `-0.3`.
pub fn parse_number(text: &str) -> Result<f64, UnitError> {
    let text = text.trim();
    let looks_numeric = text
        .chars()
        .all(|c| c.is_ascii_digit() || matches!(c, '.' | '+' | '-' | 'e' | 'E'))
        && text.chars().any(|c| c.is_ascii_digit());
    match text.parse::<f64>() {
        Ok(v) if looks_numeric && v.is_finite() => Ok(v),
        Ok(_) if looks_numeric => Err(unit_error(
            format!("`{text}` is too large for a floating-point number"),
            "use a value below about 1e308",
        )),
        _ => Err(unit_error(
            format!("`{text}` is not a number"),
            "write a decimal number such as `4.5`, `1e-20` or `-0.3`",
        )),
    }
}

/// A temperature: `1273 K`, `1000 °C`, `1000 C`, `1000 degC`. Returns kelvin.
pub fn parse_temperature(text: &str) -> Result<f64, UnitError> {
    let (value, unit) = split_quantity(text)?;
    let kelvin = match unit {
        "K" => value,
        "°C" | "C" | "degC" | "℃" => value + ZERO_CELSIUS,
        "" => {
            return Err(unit_error(
                format!("the temperature `{}` has no unit", text.trim()),
                "write kelvin or degrees Celsius, e.g. `1273 K` or `1000 °C`",
            ));
        }
        other => {
            return Err(unit_error(
                format!("`{other}` is not a temperature unit"),
                "use `K` or `°C` (also written `C`)",
            ));
        }
    };
    if kelvin > 0.0 {
        Ok(kelvin)
    } else {
        Err(unit_error(
            format!("{} is not above absolute zero", text.trim()),
            "defect equilibria need a temperature above 0 K",
        ))
    }
}

/// An enthalpy: `4.5 eV`, `450 meV`, `434 kJ/mol`, `434000 J/mol`,
/// `103 kcal/mol`. Returns eV per formula event.
pub fn parse_energy(text: &str) -> Result<f64, UnitError> {
    let (value, unit) = split_quantity(text)?;
    let factor = match unit {
        "eV" => 1.0,
        "meV" => 1e-3,
        "kJ/mol" => 1.0 / EV_IN_KJ_PER_MOL,
        "J/mol" => 1e-3 / EV_IN_KJ_PER_MOL,
        "kcal/mol" => 4.184 / EV_IN_KJ_PER_MOL,
        "" => {
            return Err(unit_error(
                format!("the enthalpy `{}` has no unit", text.trim()),
                "write `eV` or `kJ/mol`, e.g. `4.5 eV`",
            ));
        }
        other => {
            return Err(unit_error(
                format!("`{other}` is not an energy unit"),
                "use `eV`, `meV`, `kJ/mol`, `J/mol` or `kcal/mol`",
            ));
        }
    };
    Ok(value * factor)
}

/// An entropy: `2.4 k` (multiples of the Boltzmann constant), `1.2e-3 eV/K`,
/// `115 J/(mol K)`. Returns eV/K.
pub fn parse_entropy(text: &str) -> Result<f64, UnitError> {
    let (value, unit) = split_quantity(text)?;
    let compact: String = unit
        .chars()
        .filter(|c| !c.is_whitespace() && !matches!(c, '·' | '*' | '⋅'))
        .collect();
    let factor = match compact.as_str() {
        "k" | "kB" | "k_B" => BOLTZMANN_EV_PER_K,
        "eV/K" => 1.0,
        "meV/K" => 1e-3,
        "J/(molK)" | "J/mol/K" | "J/K/mol" | "J/(Kmol)" => 1e-3 / EV_IN_KJ_PER_MOL,
        "" => {
            return Err(unit_error(
                format!("the entropy `{}` has no unit", text.trim()),
                "write `k` (multiples of Boltzmann's constant), `eV/K` or `J/(mol K)`",
            ));
        }
        _ => {
            return Err(unit_error(
                format!("`{unit}` is not an entropy unit"),
                "use `k`, `eV/K`, `meV/K` or `J/(mol K)`",
            ));
        }
    };
    Ok(value * factor)
}

/// A pressure: `0.21 bar`, `1 atm`, `100 Pa`, `1e-5 bar`. Returns bar.
pub fn parse_pressure(text: &str) -> Result<f64, UnitError> {
    let (value, unit) = split_quantity(text)?;
    let factor = match unit {
        "bar" => 1.0,
        "mbar" => 1e-3,
        "atm" => 1.013_25,
        "Pa" => 1e-5,
        "kPa" => 1e-2,
        "" => {
            return Err(unit_error(
                format!("the pressure `{}` has no unit", text.trim()),
                "write `bar`, `atm` or `Pa`, e.g. `0.21 bar`",
            ));
        }
        other => {
            return Err(unit_error(
                format!("`{other}` is not a pressure unit"),
                "use `bar`, `mbar`, `atm`, `Pa` or `kPa`",
            ));
        }
    };
    let bar = value * factor;
    if bar > 0.0 {
        Ok(bar)
    } else {
        Err(unit_error(
            format!("a partial pressure must be positive, not {}", text.trim()),
            "give a pressure above zero; use 1e-30 bar for 'almost none'",
        ))
    }
}

/// A number with `digits` significant digits: `2.104e-15`, `0.5`, `1273`.
pub fn sig(x: f64, digits: usize) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let exponent = x.abs().log10().floor();
    if (-3.0..5.0).contains(&exponent) {
        let decimals = (digits as i64 - 1 - exponent as i64).max(0) as usize;
        let text = format!("{x:.decimals$}");
        if text.contains('.') {
            text.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            text
        }
    } else {
        let text = format!("{x:.prec$e}", prec = digits.saturating_sub(1));
        match text.split_once('e') {
            Some((mantissa, exp)) => {
                let mantissa = if mantissa.contains('.') {
                    mantissa.trim_end_matches('0').trim_end_matches('.')
                } else {
                    mantissa
                };
                format!("{mantissa}e{exp}")
            }
            None => text,
        }
    }
}

/// `1273.15 K (1000 °C)`.
pub fn temperature_text(kelvin: f64) -> String {
    format!(
        "{} K ({} °C)",
        sig(kelvin, 6),
        sig(kelvin - ZERO_CELSIUS, 6)
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_units() {
        assert_eq!(parse_temperature("1000 °C"), Ok(1273.15));
        assert_eq!(parse_temperature("1273K"), Ok(1273.0));
        assert!(parse_temperature("1273").is_err());
        assert!(parse_temperature("-300 °C").is_err());
        assert_eq!(parse_energy("4.5 eV"), Ok(4.5));
        // source: CODATA 2018, e·N_A = 96 485.332 12 C/mol (exact since 2019)
        let kj = parse_energy("96.48533212 kJ/mol").expect("energy");
        assert!((kj - 1.0).abs() < 1e-9);
        let ds = parse_entropy("1 k").expect("entropy");
        assert_eq!(ds, BOLTZMANN_EV_PER_K);
        // source: CODATA 2018, R = 8.314 462 618 J/(mol K) = k_B N_A, so 1 k per particle
        let r = parse_entropy("8.314462618 J/(mol K)").expect("entropy");
        assert!((r / BOLTZMANN_EV_PER_K - 1.0).abs() < 1e-9);
        assert_eq!(parse_pressure("1 atm"), Ok(1.01325));
        assert!(parse_pressure("0 bar").is_err());
        assert!(parse_number("nan").is_err());
        assert!(parse_number("1e999").is_err());
    }

    #[test]
    fn fixed_k_is_refused_elsewhere() {
        let t = Thermo::Fixed {
            k: 1e-20,
            at: 1273.0,
        };
        assert!(t.ln_k(1273.0).is_ok());
        assert!(t.ln_k(1000.0).is_err());
    }

    #[test]
    fn k_and_enthalpy_reproduce_k() {
        let t = Thermo::from_k_and_enthalpy(1e-20, 1273.0, 4.5);
        let ln_k = t.ln_k(1273.0).expect("known");
        assert!((ln_k - (1e-20f64).ln()).abs() < 1e-9);
    }

    #[test]
    fn significant_digits() {
        assert_eq!(sig(2.1041e-15, 4), "2.104e-15");
        assert_eq!(sig(1273.15, 6), "1273.15");
        assert_eq!(sig(0.5, 3), "0.5");
        assert_eq!(sig(1e5, 3), "1e5");
    }
}
