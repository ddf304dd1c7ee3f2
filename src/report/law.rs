//! Mass-action laws as text: one law as `lacuna law` and the workbench's
//! `/law` print it, and K(T) written out; with the `serde` feature, the
//! JSON shape of `lacuna law --format json`.
//!
//! In: `Law`s and their data (plain data from `crate::model`). Out: text.

use crate::model::law::Law;
use crate::model::thermo::{self, EV_IN_KJ_PER_MOL, Thermo, sig, temperature_text};
use crate::notation::Style;
use std::fmt::Write;

/// One law as `lacuna law` prints it: the reaction with where it came from
/// (`place`), the law, K(T) when there is data, the units of K and the
/// assumptions; in LaTeX an `equation` with `%` comments. Shared by the
/// `law` command and the workbench's `/law`.
pub fn write_law_text(
    out: &mut dyn std::io::Write,
    law: &Law,
    thermo: Option<&Thermo>,
    at: Option<f64>,
    host: Option<&str>,
    place: &str,
    style: Style,
) -> std::io::Result<()> {
    let name = law
        .label
        .as_deref()
        .map_or_else(String::new, |l| format!("{l}: "));
    let reaction = if style == Style::Ascii {
        &law.reaction_ascii
    } else {
        &law.reaction_unicode
    };
    if style == Style::Latex {
        writeln!(out, "% {name}{} ({place})", law.reaction_ascii)?;
        writeln!(
            out,
            "\\begin{{equation}}\n  {}\n\\end{{equation}}",
            law.text(Style::Latex)
        )?;
        if let Some(thermo) = thermo {
            writeln!(out, "% {}", k_of_t_text(law, thermo, at, Style::Ascii))?;
            if thermo.temperature_dependent() {
                writeln!(
                    out,
                    "\\begin{{equation}}\n  {}(T) = \\exp(\\Delta S/k)\\,\\exp(-\\Delta H/kT)\n\\end{{equation}}",
                    law.k_symbol(Style::Latex)
                )?;
            }
        }
        writeln!(out, "% units: {}", law.units_text(host))?;
        for a in &law.assumptions {
            writeln!(out, "% assumes: {a}")?;
        }
        return writeln!(out);
    }
    writeln!(out, "{name}{reaction}    ({place})")?;
    writeln!(out, "  {}", law.text(style))?;
    if let Some(thermo) = thermo {
        writeln!(out, "  {}", k_of_t_text(law, thermo, at, style))?;
    }
    writeln!(out, "  units: {}", law.units_text(host))?;
    for (i, a) in law.assumptions.iter().enumerate() {
        writeln!(
            out,
            "  {} {a}",
            if i == 0 { "assumes:" } else { "        " }
        )?;
    }
    writeln!(out)
}

/// K(T) written out from the thermodynamic data, with its value at `at`
/// (kelvin) when that is known.
pub fn k_of_t_text(law: &Law, thermo: &Thermo, at: Option<f64>, style: Style) -> String {
    let k = law.k_symbol(style);
    let mut out = String::new();
    match *thermo {
        Thermo::Fixed {
            k: value,
            at: known,
        } => {
            let _ = write!(
                out,
                "{k} = {} at {}; without ΔH it is not known at other temperatures",
                sig(value, 4),
                temperature_text(known)
            );
        }
        Thermo::Arrhenius {
            dh_ev,
            ds_ev_per_k,
            from_k,
        } => {
            let ds_in_k = ds_ev_per_k / thermo::BOLTZMANN_EV_PER_K;
            let (form, dh_name, ds_name) = match style {
                Style::Latex => (
                    format!("{k}(T) = \\exp(\\Delta S/k)\\,\\exp(-\\Delta H/kT)"),
                    "\\Delta H",
                    "\\Delta S",
                ),
                Style::Unicode | Style::Html | Style::Markdown => {
                    (format!("{k}(T) = exp(ΔS/k)·exp(−ΔH/kT)"), "ΔH", "ΔS")
                }
                Style::Ascii => (format!("{k}(T) = exp(dS/k) exp(-dH/kT)"), "dH", "dS"),
            };
            let _ = write!(
                out,
                "{form} with {dh_name} = {} eV ({} kJ/mol), {ds_name} = {} eV/K = {} k ({} J/(mol K))",
                sig(dh_ev, 4),
                sig(dh_ev * EV_IN_KJ_PER_MOL, 4),
                sig(ds_ev_per_k, 4),
                sig(ds_in_k, 4),
                sig(ds_ev_per_k * EV_IN_KJ_PER_MOL * 1000.0, 4),
            );
            if let Some((k0, t0)) = from_k {
                let _ = write!(
                    out,
                    "; {ds_name} follows from {k} = {} at {}",
                    sig(k0, 4),
                    temperature_text(t0)
                );
            }
        }
    }
    if let Some(t) = at {
        if let Ok(ln_k) = thermo.ln_k(t) {
            if thermo.temperature_dependent() {
                let _ = write!(
                    out,
                    "; at {}: {k} = {}",
                    temperature_text(t),
                    sig(ln_k.exp(), 4)
                );
            }
        }
    }
    out
}
