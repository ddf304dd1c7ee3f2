//! The native (intrinsic) defect reactions of a host, generated and balanced.
//!
//! In: a `Host`. Out: one balanced reaction per family that applies to it:
//! Schottky, Frenkel on each cation sublattice, anti-Frenkel on each anion
//! sublattice, intrinsic electronic, reduction (anion vacancies and
//! electrons; cation interstitials in single-cation hosts), oxidation
//! (cation vacancies or anion interstitials, and holes), antisite exchange
//! between cation sublattices. Elemental hosts get vacancy and
//! self-interstitial formation. The species are chosen here; the
//! coefficients always come from the balancer, so every reaction balances.

use crate::balance::build::{Builder, gas, reaction};
use crate::balance::{self, Options, Status};
use crate::base::number::Q;
use crate::host::Host;
use crate::notation::{Arrow, Entity, Formula, Phase, Reaction};

/// A family of intrinsic defect reactions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Family {
    Schottky,
    /// On the cation sublattice with this index.
    Frenkel(usize),
    /// On the anion sublattice with this index.
    AntiFrenkel(usize),
    IntrinsicElectronic,
    /// Anion vacancies and electrons, the anion leaving as gas.
    ReductionVacancies(usize),
    /// Cation interstitials and electrons (single-cation hosts).
    ReductionInterstitials(usize),
    /// Cation vacancies in the host ratio and holes, the anion gas taken up.
    OxidationVacancies,
    /// Anion interstitials and holes.
    OxidationInterstitials(usize),
    /// Exchange between two cation sublattices.
    Antisite(usize, usize),
    /// Elemental host: an atom leaves its site for the surface.
    SurfaceVacancy,
    /// Elemental host: an atom leaves its site for an interstitial one.
    SelfInterstitial,
}

/// One generated reaction.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct NativeReaction {
    pub family: Family,
    /// A short name such as `Frenkel (Zr)`.
    pub name: String,
    /// Conventional form: smallest integers, gases fractional.
    pub reaction: Reaction,
}

/// The catalogue of a host, with the sublattices that had to be left out.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Catalogue {
    pub reactions: Vec<NativeReaction>,
    /// Sublattices whose formal charge is not an integer (no integer
    /// effective charge can be written for their vacancies).
    pub skipped: Vec<String>,
}

/// The intrinsic reactions of `host` as (family name, reaction) pairs.
pub fn native_reactions(host: &Host) -> Vec<(String, Reaction)> {
    catalogue(host)
        .reactions
        .into_iter()
        .map(|r| (r.name, r.reaction))
        .collect()
}

/// Builds and balances every family that applies to `host`.
pub fn catalogue(host: &Host) -> Catalogue {
    if !crate::balance::build::has_sites(host) {
        return Catalogue {
            reactions: Vec::new(),
            skipped: Vec::new(),
        };
    }
    let b = Builder::new(host, &[]);
    let zero = Q::from_integer(0);
    let integer = |i: usize| host.sublattices[i].charge.is_integer();
    let indices = 0..host.sublattices.len();
    let cations: Vec<usize> = indices
        .clone()
        .filter(|&i| host.sublattices[i].charge > zero && integer(i))
        .collect();
    let anions: Vec<usize> = indices
        .clone()
        .filter(|&i| host.sublattices[i].charge < zero && integer(i))
        .collect();
    let skipped: Vec<String> = indices
        .clone()
        .filter(|&i| !integer(i))
        .map(|i| host.sublattices[i].name())
        .collect();
    let mut candidates: Vec<(Family, String, Option<Reaction>)> = Vec::new();
    let species = |s: Option<crate::notation::Species>| s.map(Entity::Species);
    let name = |i: usize| host.sublattices[i].name();
    let all_neutral = host.sublattices.iter().all(|s| s.charge == zero);

    if all_neutral {
        // An elemental crystal: no charges, no gas exchange.
        for i in indices.clone() {
            let element = host.sublattices[i].element;
            let surface = Entity::Compound(crate::notation::Compound {
                formula: Formula {
                    atoms: vec![(element, Q::from_integer(1))],
                },
                phase: Some(Phase::Solid),
                span: 0..0,
            });
            candidates.push((
                Family::SurfaceVacancy,
                format!("vacancy ({} to the surface)", name(i)),
                pair(
                    species(b.regular(i)),
                    vec![species(b.vacancy(i)), Some(surface)],
                ),
            ));
            candidates.push((
                Family::SelfInterstitial,
                format!("self-interstitial ({})", name(i)),
                pair(
                    species(b.regular(i)),
                    vec![species(b.interstitial(element, 0)), species(b.vacancy(i))],
                ),
            ));
        }
        return finish(host, candidates, skipped);
    }

    if skipped.is_empty() {
        let right: Option<Vec<Entity>> = indices.clone().map(|i| species(b.vacancy(i))).collect();
        candidates.push((
            Family::Schottky,
            "Schottky".into(),
            right.map(|r| reaction(Vec::new(), r)),
        ));
    }
    for &i in &cations {
        let sub = &host.sublattices[i];
        let real = *sub.charge.numer();
        candidates.push((
            Family::Frenkel(i),
            format!("Frenkel ({})", name(i)),
            pair(
                species(b.regular(i)),
                vec![
                    species(b.interstitial(sub.element, real)),
                    species(b.vacancy(i)),
                ],
            ),
        ));
    }
    for &i in &anions {
        let sub = &host.sublattices[i];
        let real = *sub.charge.numer();
        candidates.push((
            Family::AntiFrenkel(i),
            format!("anti-Frenkel ({})", name(i)),
            pair(
                species(b.regular(i)),
                vec![
                    species(b.interstitial(sub.element, real)),
                    species(b.vacancy(i)),
                ],
            ),
        ));
    }
    candidates.push((
        Family::IntrinsicElectronic,
        "intrinsic electronic".into(),
        Some(reaction(
            Vec::new(),
            vec![Entity::Species(b.electron()), Entity::Species(b.hole())],
        )),
    ));
    for &i in &anions {
        let element = host.sublattices[i].element;
        candidates.push((
            Family::ReductionVacancies(i),
            format!("reduction ({} vacancies)", name(i)),
            pair(
                species(b.regular(i)),
                vec![
                    species(b.vacancy(i)),
                    Some(Entity::Species(b.electron())),
                    Some(gas(element)),
                ],
            ),
        ));
    }
    if let ([c], [a]) = (cations.as_slice(), anions.as_slice()) {
        let (c, a) = (*c, *a);
        let sub = &host.sublattices[c];
        let left: Option<Vec<Entity>> = vec![species(b.regular(c)), species(b.regular(a))]
            .into_iter()
            .collect();
        let right: Option<Vec<Entity>> = vec![
            species(b.interstitial(sub.element, *sub.charge.numer())),
            Some(Entity::Species(b.electron())),
            Some(gas(host.sublattices[a].element)),
        ]
        .into_iter()
        .collect();
        candidates.push((
            Family::ReductionInterstitials(c),
            format!("reduction ({} interstitials)", name(c)),
            left.zip(right).map(|(l, r)| reaction(l, r)),
        ));
    }
    if let [a] = anions.as_slice() {
        if !cations.is_empty() && skipped.is_empty() {
            let mut right: Vec<Option<Entity>> = vec![species(b.regular(*a))];
            right.extend(cations.iter().map(|&c| species(b.vacancy(c))));
            right.push(Some(Entity::Species(b.hole())));
            let right: Option<Vec<Entity>> = right.into_iter().collect();
            candidates.push((
                Family::OxidationVacancies,
                "oxidation (cation vacancies)".into(),
                right.map(|r| reaction(vec![gas(host.sublattices[*a].element)], r)),
            ));
        }
    }
    for &i in &anions {
        let sub = &host.sublattices[i];
        let interstitial = species(b.interstitial(sub.element, *sub.charge.numer()));
        candidates.push((
            Family::OxidationInterstitials(i),
            format!("oxidation ({} interstitials)", name(i)),
            interstitial
                .map(|x| reaction(vec![gas(sub.element)], vec![x, Entity::Species(b.hole())])),
        ));
    }
    for (n, &i) in cations.iter().enumerate() {
        for &j in &cations[n + 1..] {
            let (si, sj) = (&host.sublattices[i], &host.sublattices[j]);
            if si.element == sj.element {
                continue;
            }
            let left: Option<Vec<Entity>> = vec![species(b.regular(i)), species(b.regular(j))]
                .into_iter()
                .collect();
            let right: Option<Vec<Entity>> = vec![
                species(b.on_site(si.element, *si.charge.numer(), j)),
                species(b.on_site(sj.element, *sj.charge.numer(), i)),
            ]
            .into_iter()
            .collect();
            candidates.push((
                Family::Antisite(i, j),
                format!("antisite ({}, {})", name(i), name(j)),
                left.zip(right).map(|(l, r)| reaction(l, r)),
            ));
        }
    }
    finish(host, candidates, skipped)
}

/// A reaction with one reactant, when every species could be built.
fn pair(left: Option<Entity>, right: Vec<Option<Entity>>) -> Option<Reaction> {
    let right: Option<Vec<Entity>> = right.into_iter().collect();
    Some(reaction(vec![left?], right?))
}

/// Balances each candidate; keeps those with one balanced form in which
/// every species takes part on the side it was put on.
fn finish(
    host: &Host,
    candidates: Vec<(Family, String, Option<Reaction>)>,
    skipped: Vec<String>,
) -> Catalogue {
    let mut reactions = Vec::new();
    for (family, name, built) in candidates {
        let Some(mut built) = built else { continue };
        built.arrow = Arrow::Equilibrium;
        // One sublattice leaves the site ratio without force, so an
        // elemental host's vacancy count is set as written (one each).
        let keep_written = matches!(family, Family::SurfaceVacancy | Family::SelfInterstitial);
        if keep_written {
            for t in built.left.iter_mut().chain(built.right.iter_mut()) {
                t.coefficient_written = true;
            }
        }
        let options = Options {
            keep_written,
            explain: false,
        };
        let outcome = balance::balance(&built, Some(host), options);
        let Some(balanced) = outcome.reactions.first() else {
            continue;
        };
        let clean = outcome.status == Status::Unique
            && balanced
                .terms
                .iter()
                .all(|t| t.side == t.written && t.coefficient > Q::from_integer(0));
        if clean {
            reactions.push(NativeReaction {
                family,
                name,
                reaction: balanced.conventional.clone(),
            });
        }
    }
    Catalogue { reactions, skipped }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::check_reaction;
    use crate::notation::{Style, parse_reaction, render_reaction};

    fn texts(spec: &str) -> Vec<(String, String)> {
        let host = Host::from_spec(spec).unwrap_or_else(|d| panic!("{spec}: {d:?}"));
        native_reactions(&host)
            .into_iter()
            .map(|(name, r)| (name, render_reaction(&r, Style::Ascii)))
            .collect()
    }

    fn find<'a>(list: &'a [(String, String)], name: &str) -> &'a str {
        list.iter()
            .find(|(n, _)| n == name)
            .map(|(_, r)| r.as_str())
            .unwrap_or_else(|| panic!("{name} missing from {list:?}"))
    }

    #[test]
    fn zirconia_catalogue() {
        let list = texts("ZrO2");
        // source: Smyth 2000 and Kofstad 1972, intrinsic disorder of MO2 oxides (from memory)
        assert_eq!(find(&list, "Schottky"), "nil <=> V_Zr'''' + 2 V_O..");
        assert_eq!(
            find(&list, "Frenkel (Zr)"),
            "Zr_Zrx <=> Zr_i.... + V_Zr''''"
        );
        assert_eq!(find(&list, "anti-Frenkel (O)"), "O_Ox <=> O_i'' + V_O..");
        assert_eq!(find(&list, "intrinsic electronic"), "nil <=> e' + h.");
        assert_eq!(
            find(&list, "reduction (O vacancies)"),
            "O_Ox <=> V_O.. + 2 e' + 1/2 O2(g)"
        );
        assert_eq!(
            find(&list, "reduction (Zr interstitials)"),
            "Zr_Zrx + 2 O_Ox <=> Zr_i.... + 4 e' + O2(g)"
        );
        assert_eq!(
            find(&list, "oxidation (cation vacancies)"),
            "O2(g) <=> 2 O_Ox + V_Zr'''' + 4 h."
        );
        assert_eq!(
            find(&list, "oxidation (O interstitials)"),
            "1/2 O2(g) <=> O_i'' + 2 h."
        );
    }

    #[test]
    fn perovskite_and_spinel() {
        let list = texts("BaTiO3");
        // source: common practice (full Schottky disorder of ABO3 in its 1:1:3 ratio)
        assert_eq!(
            find(&list, "Schottky"),
            "nil <=> V_Ba'' + V_Ti'''' + 3 V_O.."
        );
        assert_eq!(
            find(&list, "oxidation (cation vacancies)"),
            "3/2 O2(g) <=> 3 O_Ox + V_Ba'' + V_Ti'''' + 6 h."
        );
        assert_eq!(
            find(&list, "antisite (Ba, Ti)"),
            "Ba_Bax + Ti_Tix <=> Ba_Ti'' + Ti_Ba.."
        );
        let list = texts("MgAl2O4");
        // source: common practice (spinel inversion)
        assert_eq!(
            find(&list, "antisite (Mg, Al)"),
            "Mg_Mgx + Al_Alx <=> Mg_Al' + Al_Mg."
        );
        assert!(list.iter().all(|(n, _)| !n.starts_with("reduction (Mg")));
    }

    #[test]
    fn halide_and_elemental_hosts() {
        let list = texts("NaCl");
        // source: common practice (Schottky pair in NaCl; a Cl2 reduction gives the F centre's precursor)
        assert_eq!(find(&list, "Schottky"), "nil <=> V_Na' + V_Cl.");
        assert_eq!(
            find(&list, "reduction (Cl vacancies)"),
            "Cl_Clx <=> V_Cl. + e' + 1/2 Cl2(g)"
        );
        let list = texts("Al");
        assert_eq!(
            find(&list, "vacancy (Al to the surface)"),
            "Al_Alx <=> V_Alx + Al(s)"
        );
        assert_eq!(list.len(), 2);
    }

    #[test]
    fn vanadium_hosts_spell_vacancies_unambiguously() {
        let list = texts("V2O5");
        assert_eq!(find(&list, "Schottky"), "nil <=> 2 Vac_V''''' + 5 Vac_O..");
        assert_eq!(
            find(&list, "Frenkel (V)"),
            "el:V_Vx <=> el:V_i..... + Vac_V'''''"
        );
    }

    #[test]
    fn fractional_charges_are_skipped_and_said() {
        let host = Host::from_spec("Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2").unwrap();
        let cat = catalogue(&host);
        assert_eq!(cat.skipped, ["Fe:B"]);
        assert!(cat.reactions.iter().all(|r| r.family != Family::Schottky));
        assert!(cat.reactions.iter().any(|r| r.name == "Frenkel (Fe:A)"));
    }

    #[test]
    fn a_host_without_sites_gives_nothing_and_does_not_crash() {
        // Zero counts are refused when the host is read, so no catalogue is asked for.
        let e = Host::from_spec("Zr0O0 sites Zr +4, O -2").expect_err("no sites");
        assert_eq!(e[0].code, crate::base::diagnostic::Code::HostFormula);
    }

    #[test]
    fn every_reaction_passes_check() {
        for spec in [
            "ZrO2",
            "CeO2",
            "TiO2",
            "MgO",
            "NiO",
            "Al2O3",
            "BaTiO3",
            "SrTiO3",
            "MgAl2O4",
            "NaCl",
            "CaF2",
            "ZnO",
            "Y2O3",
            "V2O5",
            "Al",
            "Fe3O4 sites Fe:A +3 x1, Fe:B +2 x1, Fe:C +3 x1, O -2",
        ] {
            let host = Host::from_spec(spec).unwrap();
            let list = native_reactions(&host);
            assert!(list.len() >= 2, "{spec}");
            for (name, r) in list {
                for style in [Style::Ascii, Style::Unicode] {
                    let text = render_reaction(&r, style);
                    let (parsed, diags) = parse_reaction(&text, 0..text.len());
                    let parsed =
                        parsed.unwrap_or_else(|| panic!("{spec} {name}: {text}: {diags:?}"));
                    let verdict = check_reaction(&parsed, Some(&host));
                    assert!(
                        verdict.ok(),
                        "{spec} {name}: {text}: {:?}",
                        verdict.diagnostics
                    );
                }
            }
        }
    }
}
