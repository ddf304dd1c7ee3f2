//! Dopant mechanisms against the field's textbook reactions.

use super::*;
use crate::check::check_reaction;
use crate::notation::{Term, parse_reaction, render_term};

fn report(host_spec: &str, dopant: &str) -> (Host, Report) {
    let host = Host::from_spec(host_spec).unwrap_or_else(|d| panic!("{host_spec}: {d:?}"));
    let d = parse_dopant(dopant, &host).unwrap_or_else(|e| panic!("{dopant}: {e:?}"));
    let r = mechanisms(&host, &d, &DopeOptions::default()).unwrap_or_else(|e| panic!("{e:?}"));
    (host, r)
}

fn sorted(terms: &[Term]) -> Vec<String> {
    let mut v: Vec<String> = terms.iter().map(|t| render_term(t, Style::Ascii)).collect();
    v.sort();
    v
}

/// The rank of the mechanism whose conventional reaction is `expected`.
fn rank_of(r: &Report, expected: &str) -> Option<usize> {
    let (want, diags) = parse_reaction(expected, 0..expected.len());
    let want = want.unwrap_or_else(|| panic!("{expected}: {diags:?}"));
    r.mechanisms
        .iter()
        .find(|m| {
            sorted(&m.reaction.left) == sorted(&want.left)
                && sorted(&m.reaction.right) == sorted(&want.right)
        })
        .map(|m| m.rank)
}

fn listing(r: &Report) -> String {
    r.mechanisms
        .iter()
        .map(|m| {
            format!(
                "{} {:.2} {}",
                m.rank,
                m.score,
                render_reaction(&m.reaction, Style::Ascii)
            )
        })
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn classic_doping_reactions_are_proposed() {
    let cases: &[(&str, &str, &str, Option<usize>, &str)] = &[
        // (host, dopant, textbook reaction, expected rank if it must lead, source)
        // source: Y.-M. Chiang, D. Birnie, W. D. Kingery, Physical Ceramics, 1997, ch. 2 (from memory)
        (
            "ZrO2",
            "CaO",
            "CaO -> Ca_Zr'' + O_O + V_O..",
            Some(1),
            "Chiang, Birnie & Kingery 1997",
        ),
        // source: D. M. Smyth, The Defect Chemistry of Metal Oxides, 2000, ch. 6 (from memory)
        (
            "ZrO2",
            "Y2O3",
            "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
            Some(1),
            "Smyth 2000",
        ),
        // source: common practice (gadolinia-doped ceria electrolytes)
        (
            "CeO2",
            "Gd2O3",
            "Gd2O3 -> 2Gd_Ce' + 3O_O + V_O..",
            Some(1),
            "common practice",
        ),
        // source: Smyth 2000, donor-doped TiO2 (from memory): electrons under reduction, Ti vacancies under oxidation
        (
            "TiO2",
            "Nb2O5",
            "Nb2O5 -> 2Nb_Ti. + 4O_O + 2e' + 1/2 O2(g)",
            None,
            "Smyth 2000",
        ),
        (
            "TiO2",
            "Nb2O5",
            "2Nb2O5 -> 4Nb_Ti. + V_Ti'''' + 10O_O",
            None,
            "Smyth 2000",
        ),
        // source: N.-H. Chan and D. M. Smyth, J. Am. Ceram. Soc. 67 (1984); Smyth 2000, ch. 10 (from memory)
        (
            "BaTiO3",
            "La2O3",
            "La2O3 + 2TiO2 -> 2La_Ba. + 2Ti_Ti + 6O_O + 2e' + 1/2 O2(g)",
            None,
            "Chan & Smyth 1984",
        ),
        (
            "BaTiO3",
            "La2O3",
            "La2O3 + 3TiO2 -> 2La_Ba. + V_Ba'' + 3Ti_Ti + 9O_O",
            None,
            "Smyth 2000",
        ),
        // source: Chiang, Birnie & Kingery 1997, ch. 2 (from memory)
        (
            "MgO",
            "Al2O3",
            "Al2O3 -> 2Al_Mg. + V_Mg'' + 3O_O",
            None,
            "Chiang, Birnie & Kingery 1997",
        ),
        (
            "NiO",
            "Li2O",
            "Li2O + 1/2 O2(g) -> 2Li_Ni' + 2O_O + 2h.",
            None,
            "Chiang, Birnie & Kingery 1997",
        ),
        // source: IUPAC, Nomenclature of Inorganic Chemistry, Recommendations 2005, IR-11.4.5 (CaCl2 in KCl; here unassociated)
        (
            "KCl",
            "CaCl2",
            "CaCl2 -> Ca_K. + V_K' + 2Cl_Cl",
            Some(1),
            "IUPAC Red Book 2005",
        ),
    ];
    for (host, dopant, expected, rank, source) in cases {
        let (_, r) = report(host, dopant);
        let got = rank_of(&r, expected);
        assert!(
            got.is_some(),
            "{host} + {dopant}: {expected} ({source}) missing from\n{}",
            listing(&r)
        );
        if let Some(want) = rank {
            assert_eq!(
                got,
                Some(*want),
                "{host} + {dopant} ({source}):\n{}",
                listing(&r)
            );
        }
    }
}

#[test]
fn lanthanum_prefers_the_barium_site_by_size() {
    // source: R. D. Shannon, Acta Cryst. A32 (1976) 751: La3+ XII 136 pm is close
    // to Ba2+ XII 161 pm, far from Ti4+ VI 60.5 pm; La is the classic A-site
    // donor in BaTiO3 (Chan & Smyth 1984, from memory).
    let (host, r) = report("BaTiO3", "La2O3");
    let first = &r.mechanisms[0];
    assert_eq!(site_name(&host, first.site), "Ba", "{}", listing(&r));
    let size = first.size.expect("size at the Ba site");
    assert!((size.dopant.pm - 136.0).abs() < 0.05 && (size.host.pm - 161.0).abs() < 0.05);
    assert!((size.mismatch + 0.1553).abs() < 0.001, "{}", size.mismatch);
    let ti = r
        .mechanisms
        .iter()
        .find(|m| site_name(&host, m.site) == "Ti")
        .expect("a Ti-site mechanism");
    assert!(ti.size.expect("size").mismatch > 0.6);
    assert_eq!(first.effective_charge, 1);
}

#[test]
fn yttria_in_zirconia_sizes_at_cn8() {
    // source: Shannon 1976, Table 1: Y3+ VIII 101.9 pm, Zr4+ VIII 84 pm
    let (_, r) = report("ZrO2", "Y2O3");
    let size = r.mechanisms[0].size.expect("size");
    assert_eq!(size.dopant.cn, 8);
    assert!((size.dopant.pm - 101.9).abs() < 0.05 && (size.host.pm - 84.0).abs() < 0.05);
    assert_eq!(r.structure.name, "fluorite");
}

#[test]
fn ranks_run_in_order_and_every_reaction_checks() {
    for (host_spec, dopant) in [
        ("ZrO2", "Y2O3"),
        ("TiO2", "Nb2O5"),
        ("BaTiO3", "La2O3"),
        ("BaTiO3", "Y2O3"),
        ("MgAl2O4", "Fe2O3"),
        ("NiO", "Li2O"),
        ("KCl", "CaCl2"),
        ("CaF2", "Y+3"),
        ("SrTiO3", "Nb+5"),
        ("V2O5", "Mo+6"),
        ("ZrO2", "V+5"),
    ] {
        let (host, r) = report(host_spec, dopant);
        assert!(!r.mechanisms.is_empty(), "{host_spec} {dopant}");
        for (i, m) in r.mechanisms.iter().enumerate() {
            assert_eq!(m.rank, i + 1);
            if i > 0 {
                assert!(r.mechanisms[i - 1].score <= m.score);
            }
            for shown in [&m.reaction, &m.integer] {
                for style in [Style::Ascii, Style::Unicode] {
                    let text = render_reaction(shown, style);
                    let (parsed, diags) = parse_reaction(&text, 0..text.len());
                    let parsed = parsed.unwrap_or_else(|| panic!("{text}: {diags:?}"));
                    let verdict = check_reaction(&parsed, Some(&host));
                    assert!(
                        verdict.ok(),
                        "{host_spec} {dopant}: {text}: {:?}",
                        verdict.diagnostics
                    );
                }
            }
        }
    }
}

#[test]
fn a_forced_site_limits_the_list() {
    let host = Host::from_spec("BaTiO3").unwrap();
    let d = parse_dopant("La2O3", &host).unwrap();
    let site = parse_site("Ti", &host).unwrap();
    let r = mechanisms(
        &host,
        &d,
        &DopeOptions {
            site: Some(site),
            coordination: vec![],
        },
    )
    .unwrap();
    assert!(!r.mechanisms.is_empty());
    assert!(r.mechanisms.iter().all(|m| m.site == site));
    for bad in ["O", "Ce", "x", "Ti:A"] {
        assert!(parse_site(bad, &host).is_err(), "{bad}");
    }
    assert_eq!(parse_site("i", &host).unwrap(), DopantSite::Interstitial);
}

#[test]
fn isovalent_dopants_need_no_compensation() {
    // source: common practice (NiO and MgO form a complete solid solution)
    let (_, r) = report("MgO", "NiO");
    assert_eq!(
        rank_of(&r, "NiO -> Ni_Mg + O_O"),
        Some(1),
        "{}",
        listing(&r)
    );
    assert_eq!(r.mechanisms[0].compensation, Compensation::None);
}

/// Every example in grammar/balance.md reads.
#[test]
fn grammar_examples_read() {
    let doc = include_str!("../../../grammar/balance.md");
    let block = |tag: &str| -> Vec<&str> {
        let start = doc
            .find(&format!("```{tag}\n"))
            .unwrap_or_else(|| panic!("no {tag} block"));
        let body = &doc[start + tag.len() + 4..];
        let end = body.find("```").expect("closed block");
        body[..end]
            .lines()
            .filter(|l| !l.trim().is_empty())
            .collect()
    };
    let host = Host::from_spec("ZrO2").unwrap();
    let dopants = block("dopant");
    assert!(dopants.len() >= 8);
    for d in dopants {
        let host = if d.starts_with("Li") {
            Host::from_spec("NiO").unwrap()
        } else if d.starts_with("Fe") {
            Host::from_spec("MgO").unwrap()
        } else if d.starts_with("Nb") {
            Host::from_spec("TiO2").unwrap()
        } else {
            host.clone()
        };
        assert!(parse_dopant(d, &host).is_ok(), "{d}");
    }
    let levels = block("level");
    assert!(levels.len() >= 6);
    for l in levels {
        assert!(level::parse_level(l).is_ok(), "{l}");
    }
}

#[test]
fn a_host_without_sites_is_refused() {
    // Zero counts are refused when the host is read, before any dopant.
    let e = Host::from_spec("Zr0O0 sites Zr +4, O -2").expect_err("no sites");
    assert_eq!(e[0].code, Code::HostFormula);
}
